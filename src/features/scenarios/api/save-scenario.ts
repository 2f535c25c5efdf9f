import { useMutation, useQueryClient } from '@tanstack/react-query';
import { scenarioDetailSchema, type CreateScenarioInput, type UpdateScenarioInput } from '../../../../shared/api/scenarios.ts';
import { api } from '../../../lib/api-client.ts';
import { scenarioKeys } from './get-scenarios.ts';

export const createScenario = (input: CreateScenarioInput) => api.post('/api/scenarios', input, { schema: scenarioDetailSchema });

/** Saving an edit makes a new immutable version. */
export const updateScenario = ({ id, ...input }: UpdateScenarioInput & { id: number }) => api.put(`/api/scenarios/${id}`, input, { schema: scenarioDetailSchema });

export function useCreateScenario() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: createScenario,
    onSuccess: (detail) => {
      qc.setQueryData(scenarioKeys.detail(detail.id), detail);
      void qc.invalidateQueries({ queryKey: scenarioKeys.lists() });
    },
  });
}

export function useUpdateScenario() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: updateScenario,
    onSuccess: (detail) => {
      qc.setQueryData(scenarioKeys.detail(detail.id), detail);
      void qc.invalidateQueries({ queryKey: scenarioKeys.lists() });
    },
  });
}
