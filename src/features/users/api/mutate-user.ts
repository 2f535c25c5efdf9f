import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { CreateUserInput, UpdateUserInput, User } from '../../../../shared/api/users.ts';
import { api } from '../../../lib/api-client.ts';
import { usersKeys } from './get-users.ts';

export const createUser = (input: CreateUserInput) => api.post<{ user: User; invited: boolean }>('/api/users', input);
export const updateUser = ({ id, ...input }: UpdateUserInput & { id: number }) => api.patch<{ user: User }>(`/api/users/${id}`, input);
export const resendInvite = (id: number) => api.post<{ message: string }>(`/api/users/${id}/invite`);

export function useCreateUser() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: createUser, onSuccess: () => qc.invalidateQueries({ queryKey: usersKeys.all }) });
}

export function useUpdateUser() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: updateUser, onSuccess: () => qc.invalidateQueries({ queryKey: usersKeys.all }) });
}

export const useResendInvite = () => useMutation({ mutationFn: resendInvite });
