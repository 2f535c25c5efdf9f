import { useMutation, useQueryClient } from '@tanstack/react-query';
import { scenarioDetailSchema, type Visibility } from '../../../../shared/api/scenarios.ts';
import { api } from '../../../lib/api-client.ts';
import { scenarioKeys } from './get-scenarios.ts';

/** Uploads a scenario file; a bad one imports nothing and the error lists each bad path. */
export function importScenario({ file, visibility }: { file: File; visibility: Visibility }) {
  const form = new FormData();
  form.append('file', file);
  return api.upload(`/api/scenarios/import?visibility=${visibility}`, form, { schema: scenarioDetailSchema });
}

export function useImportScenario() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: importScenario,
    onSuccess: (detail) => {
      qc.setQueryData(scenarioKeys.detail(detail.id), detail);
      void qc.invalidateQueries({ queryKey: scenarioKeys.lists() });
    },
  });
}
