import { useMutation, useQueryClient } from '@tanstack/react-query';
import { scenarioDetailSchema } from '../../../../shared/api/scenarios.ts';
import { api } from '../../../lib/api-client.ts';
import { scenarioKeys } from './get-scenarios.ts';

export const duplicateScenario = (id: number) => api.post(`/api/scenarios/${id}/duplicate`, {}, { schema: scenarioDetailSchema });

export function useDuplicateScenario() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: duplicateScenario,
    onSuccess: (detail) => {
      qc.setQueryData(scenarioKeys.detail(detail.id), detail);
      void qc.invalidateQueries({ queryKey: scenarioKeys.lists() });
    },
  });
}
