import { useMutation, useQueryClient } from '@tanstack/react-query';
import { z } from 'zod';
import { signOffSchema, type CreateSignOffInput } from '../../../../shared/api/compare.ts';
import { api } from '../../../lib/api-client.ts';

const responseSchema = z.object({ signOff: signOffSchema });

export const createSignOff = (input: CreateSignOffInput) => api.post('/api/sign-offs', input, { schema: responseSchema });

export function useCreateSignOff() {
  const qc = useQueryClient();
  // Progress pages read sign-offs under the 'progress' key.
  return useMutation({ mutationFn: createSignOff, onSuccess: () => qc.invalidateQueries({ queryKey: ['progress'] }) });
}
