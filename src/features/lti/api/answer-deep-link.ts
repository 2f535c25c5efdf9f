import { useMutation } from '@tanstack/react-query';
import { deepLinkResponseSchema, type DeepLinkChoice } from '../../../../shared/api/lti.ts';
import { api } from '../../../lib/api-client.ts';

export const answerDeepLink = ({ id, ...choice }: DeepLinkChoice & { id: string }) =>
  api.post(`/api/lti/deep-links/${encodeURIComponent(id)}`, choice, { schema: deepLinkResponseSchema });

export const useAnswerDeepLink = () => useMutation({ mutationFn: answerDeepLink });
