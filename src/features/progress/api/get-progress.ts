import { queryOptions, useQuery } from '@tanstack/react-query';
import { progressResponseSchema } from '../../../../shared/api/compare.ts';
import { api } from '../../../lib/api-client.ts';

export const progressKeys = {
  all: ['progress'] as const,
  me: () => ['progress', 'me'] as const,
  student: (userId: number) => ['progress', 'student', userId] as const,
};

export const getMyProgress = () => api.get('/api/sign-offs/me', { schema: progressResponseSchema });
export const getStudentProgress = (userId: number) => api.get(`/api/sign-offs/students/${userId}`, { schema: progressResponseSchema });

export const myProgressQueryOptions = () => queryOptions({ queryKey: progressKeys.me(), queryFn: getMyProgress });
export const studentProgressQueryOptions = (userId: number) => queryOptions({ queryKey: progressKeys.student(userId), queryFn: () => getStudentProgress(userId) });

export const useMyProgress = () => useQuery(myProgressQueryOptions());
export const useStudentProgress = (userId: number) => useQuery(studentProgressQueryOptions(userId));

/** The class's sign-offs, as a file. */
export const signOffsCsvUrl = (classId: number) => `/api/sign-offs/classes/${classId}/sign-offs.csv`;
