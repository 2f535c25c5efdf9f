import { useMutation, useQueryClient } from '@tanstack/react-query';
import { scenarioDetailSchema, type PatchScenarioInput } from '../../../../shared/api/scenarios.ts';
import { api } from '../../../lib/api-client.ts';
import { scenarioKeys } from './get-scenarios.ts';

export const publishScenarioVersion = ({ id, versionId }: { id: number; versionId: number }) =>
  api.post(`/api/scenarios/${id}/publish`, { versionId }, { schema: scenarioDetailSchema });

/** Restoring copies an old version into a new one; history is never rewritten. */
export const restoreScenarioVersion = ({ id, versionId }: { id: number; versionId: number }) =>
  api.post(`/api/scenarios/${id}/restore`, { versionId }, { schema: scenarioDetailSchema });

export const patchScenario = ({ id, ...input }: PatchScenarioInput & { id: number }) => api.patch(`/api/scenarios/${id}`, input, { schema: scenarioDetailSchema });

/** The export link: a plain GET the browser downloads (the session cookie goes with it). */
export const scenarioExportHref = (id: number, version?: number) => `/api/scenarios/${id}/export${version ? `?version=${version}` : ''}`;

function useDetailMutation<I>(fn: (input: I) => ReturnType<typeof publishScenarioVersion>) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: fn,
    onSuccess: (detail) => {
      qc.setQueryData(scenarioKeys.detail(detail.id), detail);
      void qc.invalidateQueries({ queryKey: scenarioKeys.lists() });
      void qc.invalidateQueries({ queryKey: scenarioKeys.practice() });
    },
  });
}

export const usePublishScenarioVersion = () => useDetailMutation(publishScenarioVersion);
export const useRestoreScenarioVersion = () => useDetailMutation(restoreScenarioVersion);
export const usePatchScenario = () => useDetailMutation(patchScenario);
