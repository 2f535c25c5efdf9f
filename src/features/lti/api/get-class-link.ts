import { queryOptions, useQuery } from '@tanstack/react-query';
import { classLinkSchema } from '../../../../shared/api/lti.ts';
import { api } from '../../../lib/api-client.ts';
import { ltiKeys } from './get-tool-config.ts';

export const classLinkQueryOptions = (classId: number) =>
  queryOptions({ queryKey: ltiKeys.classLink(classId), queryFn: () => api.get(`/api/lti/classes/${classId}`, { schema: classLinkSchema }) });

export const useClassLink = (classId: number) => useQuery(classLinkQueryOptions(classId));
