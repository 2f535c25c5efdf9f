import { queryOptions, useQuery } from '@tanstack/react-query';
import { z } from 'zod';
import { deepLinkViewSchema } from '../../../../shared/api/lti.ts';
import { api } from '../../../lib/api-client.ts';
import { ltiKeys } from './get-tool-config.ts';

export const deepLinkQueryOptions = (id: string) =>
  queryOptions({
    queryKey: ltiKeys.deepLink(id),
    queryFn: () => api.get(`/api/lti/deep-links/${encodeURIComponent(id)}`, { schema: z.object({ request: deepLinkViewSchema }) }).then((r) => r.request),
    retry: false,
  });

export const useDeepLinkRequest = (id: string) => useQuery(deepLinkQueryOptions(id));
