import { queryOptions, useQuery } from '@tanstack/react-query';
import { replayResponseSchema } from '../../../../shared/api/replay.ts';
import { api } from '../../../lib/api-client.ts';

export const replayKeys = {
  all: ['replay'] as const,
  attempt: (attemptId: number) => ['replay', 'attempt', attemptId] as const,
};

export const getReplay = (attemptId: number) => api.get(`/api/replay/attempts/${attemptId}`, { schema: replayResponseSchema });

export const replayQueryOptions = (attemptId: number) =>
  queryOptions({ queryKey: replayKeys.attempt(attemptId), queryFn: () => getReplay(attemptId), staleTime: 60_000 });

export const useReplay = (attemptId: number) => useQuery(replayQueryOptions(attemptId));
