import { postEventsResponseSchema, type PostEventsResponse, type StoredEvent } from '../../../../shared/api/attempts.ts';
import { api } from '../../../lib/api-client.ts';

/** POST /api/attempts/:id/events: idempotent by seq, so a retried batch is stored once. */
export const postEvents = (attemptId: number, events: StoredEvent[]): Promise<PostEventsResponse> =>
  api.post(`/api/attempts/${attemptId}/events`, { events }, { schema: postEventsResponseSchema });
