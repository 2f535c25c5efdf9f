import { queryOptions, useQuery } from '@tanstack/react-query';
import { assignmentListResponseSchema } from '../../../../shared/api/assignments.ts';
import { api } from '../../../lib/api-client.ts';

export const assignmentKeys = {
  all: ['assignments'] as const,
  forClass: (classId: number) => ['assignments', 'class', classId] as const,
  mine: () => ['assignments', 'mine'] as const,
};

export const getClassAssignments = (classId: number) =>
  api.get('/api/assignments', { query: { classId }, schema: assignmentListResponseSchema }).then((r) => r.assignments);

export const classAssignmentsQueryOptions = (classId: number) =>
  queryOptions({ queryKey: assignmentKeys.forClass(classId), queryFn: () => getClassAssignments(classId) });

export const useClassAssignments = (classId: number) => useQuery(classAssignmentsQueryOptions(classId));
