import { useMutation, useQueryClient } from '@tanstack/react-query';
import { rosterCommitResponseSchema, rosterPreviewSchema } from '../../../../shared/api/classes.ts';
import { api } from '../../../lib/api-client.ts';
import { classKeys } from './get-classes.ts';

const formOf = (file: File) => {
  const form = new FormData();
  form.append('file', file);
  return form;
};

/** Checks every line and writes nothing. */
export const previewRoster = ({ classId, file }: { classId: number; file: File }) =>
  api.upload(`/api/classes/${classId}/roster/preview`, formOf(file), { schema: rosterPreviewSchema });

/** All or nothing: one bad line imports nothing. New students are e-mailed an invitation. */
export const importRoster = ({ classId, file }: { classId: number; file: File }) =>
  api.upload(`/api/classes/${classId}/roster`, formOf(file), { schema: rosterCommitResponseSchema });

export const usePreviewRoster = () => useMutation({ mutationFn: previewRoster });

export function useImportRoster() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: importRoster,
    onSuccess: (_out, input) => {
      void qc.invalidateQueries({ queryKey: classKeys.detail(input.classId) });
      void qc.invalidateQueries({ queryKey: classKeys.list() });
    },
  });
}
