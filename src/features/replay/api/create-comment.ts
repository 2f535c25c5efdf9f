import { useMutation, useQueryClient } from '@tanstack/react-query';
import { z } from 'zod';
import { commentSchema, type CreateCommentInput } from '../../../../shared/api/replay.ts';
import { api } from '../../../lib/api-client.ts';
import { replayKeys } from './get-replay.ts';

const responseSchema = z.object({ comment: commentSchema });

export const createComment = ({ attemptId, ...input }: CreateCommentInput & { attemptId: number }) =>
  api.post(`/api/replay/attempts/${attemptId}/comments`, input, { schema: responseSchema });

export function useCreateComment(attemptId: number) {
  const qc = useQueryClient();
  return useMutation({ mutationFn: createComment, onSuccess: () => qc.invalidateQueries({ queryKey: replayKeys.attempt(attemptId) }) });
}
