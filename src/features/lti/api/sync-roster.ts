import { useMutation, useQueryClient } from '@tanstack/react-query';
import { rosterSyncResultSchema } from '../../../../shared/api/lti.ts';
import { api } from '../../../lib/api-client.ts';
import { ltiKeys } from './get-tool-config.ts';

export const syncRoster = (classId: number) => api.post(`/api/lti/classes/${classId}/roster-sync`, undefined, { schema: rosterSyncResultSchema });

/** `onSynced` lets the page refresh what else the sync changed (the class's students). */
export function useSyncRoster(classId: number, onSynced?: () => void) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: () => syncRoster(classId),
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: ltiKeys.classLink(classId) });
      onSynced?.();
    },
  });
}
