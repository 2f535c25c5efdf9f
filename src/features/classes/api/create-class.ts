import { useMutation, useQueryClient } from '@tanstack/react-query';
import { classDetailSchema, type CreateClassInput } from '../../../../shared/api/classes.ts';
import { api } from '../../../lib/api-client.ts';
import { classKeys } from './get-classes.ts';

export const createClass = (input: CreateClassInput) => api.post('/api/classes', input, { schema: classDetailSchema });

export function useCreateClass() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: createClass, onSuccess: () => qc.invalidateQueries({ queryKey: classKeys.list() }) });
}
