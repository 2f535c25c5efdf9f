import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { Platform, PlatformInput } from '../../../../shared/api/lti.ts';
import { api } from '../../../lib/api-client.ts';
import { ltiKeys } from './get-tool-config.ts';

export const createPlatform = (input: PlatformInput) => api.post<{ platform: Platform }>('/api/lti/platforms', input);
export const updatePlatform = ({ id, ...input }: PlatformInput & { id: number }) => api.put<{ platform: Platform }>(`/api/lti/platforms/${id}`, input);
export const deletePlatform = (id: number) => api.delete<void>(`/api/lti/platforms/${id}`);

function useInvalidatingMutation<T, R>(fn: (input: T) => Promise<R>) {
  const qc = useQueryClient();
  return useMutation({ mutationFn: fn, onSuccess: () => qc.invalidateQueries({ queryKey: ltiKeys.platforms() }) });
}

export const useCreatePlatform = () => useInvalidatingMutation(createPlatform);
export const useUpdatePlatform = () => useInvalidatingMutation(updatePlatform);
export const useDeletePlatform = () => useInvalidatingMutation(deletePlatform);
