import { useMutation } from '@tanstack/react-query';
import { injectResponseSchema, type ClearInput, type InjectInput } from '../../../../shared/api/live.ts';
import { api } from '../../../lib/api-client.ts';

export const injectFault = ({ attemptId, ...input }: InjectInput & { attemptId: number }) =>
  api.post(`/api/live/attempts/${attemptId}/inject`, input, { schema: injectResponseSchema });

export const clearFault = ({ attemptId, ...input }: ClearInput & { attemptId: number }) =>
  api.post(`/api/live/attempts/${attemptId}/clear`, input, { schema: injectResponseSchema });

/** The board's stream brings the change back, so nothing is invalidated here. */
export const useInjectFault = () => useMutation({ mutationFn: injectFault });
export const useClearFault = () => useMutation({ mutationFn: clearFault });
