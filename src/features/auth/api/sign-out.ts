import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api, setCsrfToken } from '../../../lib/api-client.ts';

export async function signOut(): Promise<void> {
  await api.post('/api/auth/sign-out');
  setCsrfToken(null);
}

export function useSignOut() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: signOut, onSuccess: () => qc.clear() });
}
