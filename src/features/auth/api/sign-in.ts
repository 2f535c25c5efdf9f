import { useMutation, useQueryClient } from '@tanstack/react-query';
import { meResponseSchema, type SignInInput } from '../../../../shared/api/auth.ts';
import { api, setCsrfToken } from '../../../lib/api-client.ts';
import { meQueryOptions } from './get-me.ts';

export async function signIn(input: SignInInput) {
  const me = await api.post('/api/auth/sign-in', input, { schema: meResponseSchema });
  setCsrfToken(me.csrfToken);
  return me;
}

export function useSignIn() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: signIn,
    onSuccess: (me) => {
      qc.clear();
      qc.setQueryData(meQueryOptions().queryKey, me);
    },
  });
}
