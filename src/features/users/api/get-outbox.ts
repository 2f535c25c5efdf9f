import { queryOptions, useQuery } from '@tanstack/react-query';
import { z } from 'zod';
import { api } from '../../../lib/api-client.ts';

const messageSchema = z.object({
  id: z.number(),
  to: z.string(),
  subject: z.string(),
  body: z.string(),
  status: z.string(),
  sentAt: z.string().nullable(),
  createdAt: z.string(),
});
export type OutboxMessage = z.infer<typeof messageSchema>;

export const outboxQueryOptions = () =>
  queryOptions({
    queryKey: ['outbox'],
    queryFn: () => api.get('/api/outbox', { schema: z.object({ messages: z.array(messageSchema) }) }).then((r) => r.messages),
    refetchInterval: 5_000,
  });

export const useOutbox = () => useQuery(outboxQueryOptions());
