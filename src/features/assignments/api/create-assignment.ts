import { useMutation, useQueryClient } from '@tanstack/react-query';
import { z } from 'zod';
import { assignmentSchema, type CreateAssignmentInput } from '../../../../shared/api/assignments.ts';
import { api } from '../../../lib/api-client.ts';
import { assignmentKeys } from './get-class-assignments.ts';

const responseSchema = z.object({ assignment: assignmentSchema });

export const createAssignment = (input: CreateAssignmentInput) => api.post('/api/assignments', input, { schema: responseSchema }).then((r) => r.assignment);

export const deleteAssignment = ({ id }: { id: number; classId: number }) => api.delete<void>(`/api/assignments/${id}`);

export function useCreateAssignment() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: createAssignment, onSuccess: (a) => qc.invalidateQueries({ queryKey: assignmentKeys.forClass(a.classId) }) });
}

export function useDeleteAssignment() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: deleteAssignment, onSuccess: (_o, input) => qc.invalidateQueries({ queryKey: assignmentKeys.forClass(input.classId) }) });
}
