/** An assignment after it is set: its changes, the students on it and one student's own terms. */
import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { z } from 'zod';
import { assignmentSchema, assignmentStudentsResponseSchema, type ExtensionInput, type UpdateAssignmentInput } from '../../../../shared/api/assignments.ts';
import { api } from '../../../lib/api-client.ts';
import { assignmentKeys } from './get-class-assignments.ts';

const responseSchema = z.object({ assignment: assignmentSchema });

export const assignmentStudentsKey = (assignmentId: number) => ['assignments', 'students', assignmentId] as const;

export const getAssignmentStudents = (assignmentId: number) =>
  api.get(`/api/assignments/${assignmentId}/students`, { schema: assignmentStudentsResponseSchema }).then((r) => r.students);

export const useAssignmentStudents = (assignmentId: number) =>
  useQuery(queryOptions({ queryKey: assignmentStudentsKey(assignmentId), queryFn: () => getAssignmentStudents(assignmentId) }));

export function useUpdateAssignment() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, ...input }: UpdateAssignmentInput & { id: number }) => api.patch(`/api/assignments/${id}`, input, { schema: responseSchema }).then((r) => r.assignment),
    onSuccess: (a) => {
      void qc.invalidateQueries({ queryKey: assignmentKeys.forClass(a.classId) });
      void qc.invalidateQueries({ queryKey: assignmentStudentsKey(a.id) });
    },
  });
}

export function useSetExtension() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ assignmentId, studentId, ...input }: ExtensionInput & { assignmentId: number; studentId: number }) =>
      api.put<void>(`/api/assignments/${assignmentId}/extensions/${studentId}`, input),
    onSuccess: (_o, input) => qc.invalidateQueries({ queryKey: assignmentStudentsKey(input.assignmentId) }),
  });
}

export function useRemoveExtension() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ assignmentId, studentId }: { assignmentId: number; studentId: number }) => api.delete<void>(`/api/assignments/${assignmentId}/extensions/${studentId}`),
    onSuccess: (_o, input) => qc.invalidateQueries({ queryKey: assignmentStudentsKey(input.assignmentId) }),
  });
}
