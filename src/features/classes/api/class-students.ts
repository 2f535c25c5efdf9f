import { useMutation, useQueryClient } from '@tanstack/react-query';
import { addStudentResponseSchema, type AddStudentInput } from '../../../../shared/api/classes.ts';
import { api } from '../../../lib/api-client.ts';
import { classKeys } from './get-classes.ts';

export const addStudent = ({ classId, ...input }: AddStudentInput & { classId: number }) =>
  api.post(`/api/classes/${classId}/students`, input, { schema: addStudentResponseSchema });

export const removeStudent = ({ classId, userId }: { classId: number; userId: number }) => api.delete<void>(`/api/classes/${classId}/students/${userId}`);

export const resendStudentInvite = ({ classId, userId }: { classId: number; userId: number }) =>
  api.post<{ message: string }>(`/api/classes/${classId}/students/${userId}/invite`);

function useClassMutation<I extends { classId: number }, O>(fn: (input: I) => Promise<O>) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: fn,
    onSuccess: (_out, input) => {
      void qc.invalidateQueries({ queryKey: classKeys.detail(input.classId) });
      void qc.invalidateQueries({ queryKey: classKeys.list() });
    },
  });
}

export const useAddStudent = () => useClassMutation(addStudent);
export const useRemoveStudent = () => useClassMutation(removeStudent);
export const useResendStudentInvite = () => useMutation({ mutationFn: resendStudentInvite });
