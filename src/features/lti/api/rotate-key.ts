import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { SigningKey } from '../../../../shared/api/lti.ts';
import { api } from '../../../lib/api-client.ts';
import { ltiKeys } from './get-tool-config.ts';

export const rotateKey = () => api.post<{ keys: SigningKey[] }>('/api/lti/keys/rotate');

export function useRotateKey() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: rotateKey, onSuccess: () => qc.invalidateQueries({ queryKey: ltiKeys.tool() }) });
}
