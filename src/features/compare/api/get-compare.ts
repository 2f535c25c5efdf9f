import { queryOptions, useQuery } from '@tanstack/react-query';
import { compareResponseSchema } from '../../../../shared/api/compare.ts';
import { api } from '../../../lib/api-client.ts';

export const compareKeys = {
  all: ['compare'] as const,
  assignment: (assignmentId: number) => ['compare', 'assignment', assignmentId] as const,
};

export const getCompare = (assignmentId: number) => api.get(`/api/compare/assignments/${assignmentId}`, { schema: compareResponseSchema });

export const compareQueryOptions = (assignmentId: number) => queryOptions({ queryKey: compareKeys.assignment(assignmentId), queryFn: () => getCompare(assignmentId) });

export const useCompare = (assignmentId: number) => useQuery(compareQueryOptions(assignmentId));

/** The grades of every submitted attempt, as a file. */
export const gradesCsvUrl = (assignmentId: number) => `/api/compare/assignments/${assignmentId}/grades.csv`;
