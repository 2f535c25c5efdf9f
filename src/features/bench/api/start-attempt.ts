import { attemptBootstrapSchema, type AttemptBootstrap, type StartAttemptInput } from '../../../../shared/api/attempts.ts';
import { api } from '../../../lib/api-client.ts';

/** POST /api/attempts: a new attempt of an assignment, or a practice run of a scenario. */
export const startAttempt = (input: StartAttemptInput): Promise<AttemptBootstrap> =>
  api.post('/api/attempts', input, { schema: attemptBootstrapSchema });
