import { useMutation } from '@tanstack/react-query';
import type { SetPasswordInput } from '../../../../shared/api/password.ts';
import { api } from '../../../lib/api-client.ts';

export const requestReset = (email: string) => api.post<{ message: string }>('/api/auth/password-reset', { email });
export const setPassword = (input: SetPasswordInput) => api.post<void>('/api/auth/set-password', input);

export const useRequestReset = () => useMutation({ mutationFn: requestReset });
export const useSetPassword = () => useMutation({ mutationFn: setPassword });
