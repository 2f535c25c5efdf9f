import { useMutation, useQueryClient } from '@tanstack/react-query';
import { attemptResultSchema, type AttemptResult, type SubmitInput } from '../../../../shared/api/attempts.ts';
import { api } from '../../../lib/api-client.ts';
import { attemptKeys } from './get-attempt.ts';

/** POST /api/attempts/:id/submit: the server re-runs the events, checks the readings and grades. */
export const submitAttempt = (attemptId: number, input: SubmitInput): Promise<AttemptResult> =>
  api.post(`/api/attempts/${attemptId}/submit`, input, { schema: attemptResultSchema });

export function useSubmitAttempt(attemptId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: SubmitInput) => submitAttempt(attemptId, input),
    onSuccess: () => qc.invalidateQueries({ queryKey: attemptKeys.all }),
  });
}
