import { queryOptions, useQuery } from '@tanstack/react-query';
import { myAttemptsResponseSchema } from '../../../../shared/api/attempts.ts';
import { api } from '../../../lib/api-client.ts';

export const myAttemptsKeys = { all: ['attempts'] as const, mine: ['attempts', 'mine'] as const };

/** GET /api/attempts/mine: the signed-in student's attempts, newest first. */
export const getMyAttempts = () => api.get('/api/attempts/mine', { schema: myAttemptsResponseSchema }).then((r) => r.attempts);

export const myAttemptsQueryOptions = () => queryOptions({ queryKey: myAttemptsKeys.mine, queryFn: getMyAttempts });

export const useMyAttempts = () => useQuery(myAttemptsQueryOptions());
