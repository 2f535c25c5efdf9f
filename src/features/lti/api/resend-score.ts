import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/api-client.ts';
import { ltiKeys } from './get-tool-config.ts';

export const resendScore = ({ id }: { id: number; assignmentId: number }) => api.post<{ row: { id: number; status: string } }>(`/api/lti/scores/${id}/resend`);

export function useResendScore() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: resendScore, onSuccess: (_r, v) => qc.invalidateQueries({ queryKey: ltiKeys.grades(v.assignmentId) }) });
}
