import { queryOptions, useQuery } from '@tanstack/react-query';
import { attemptBootstrapSchema } from '../../../../shared/api/attempts.ts';
import { api } from '../../../lib/api-client.ts';

export const attemptKeys = {
  all: ['attempts'] as const,
  detail: (id: number) => ['attempts', 'detail', id] as const,
};

/** GET /api/attempts/:id: the bootstrap a bench starts (or resumes) from. */
export const getAttempt = (id: number) => api.get(`/api/attempts/${id}`, { schema: attemptBootstrapSchema });

export const attemptQueryOptions = (id: number) =>
  queryOptions({ queryKey: attemptKeys.detail(id), queryFn: () => getAttempt(id), staleTime: Infinity, refetchOnMount: 'always' });

export const useAttempt = (id: number) => useQuery(attemptQueryOptions(id));
