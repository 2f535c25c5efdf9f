import { queryOptions, useQuery } from '@tanstack/react-query';
import { meResponseSchema, type MeResponse } from '../../../../shared/api/auth.ts';
import { api, setCsrfToken } from '../../../lib/api-client.ts';

export async function getMe(): Promise<MeResponse> {
  const me = await api.get('/api/auth/me', { schema: meResponseSchema });
  setCsrfToken(me.csrfToken);
  return me;
}

export const meQueryOptions = () => queryOptions({ queryKey: ['auth', 'me'], queryFn: getMe, staleTime: 60_000 });

export const useMe = () => useQuery(meQueryOptions());
