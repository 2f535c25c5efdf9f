import { queryOptions, useQuery } from '@tanstack/react-query';
import { gradeSyncSchema } from '../../../../shared/api/lti.ts';
import { api } from '../../../lib/api-client.ts';
import { ltiKeys } from './get-tool-config.ts';

/** Polled while scores wait, so a retry that lands shows without a reload. */
export const gradeSyncQueryOptions = (assignmentId: number) =>
  queryOptions({
    queryKey: ltiKeys.grades(assignmentId),
    queryFn: () => api.get(`/api/lti/assignments/${assignmentId}/grades`, { schema: gradeSyncSchema }),
    refetchInterval: (q) => (q.state.data?.rows.some((r) => r.status === 'pending') ? 3_000 : false),
  });

export const useGradeSync = (assignmentId: number) => useQuery(gradeSyncQueryOptions(assignmentId));
