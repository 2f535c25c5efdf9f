import { queryOptions, useQuery } from '@tanstack/react-query';
import { z } from 'zod';
import { platformSchema } from '../../../../shared/api/lti.ts';
import { api } from '../../../lib/api-client.ts';
import { ltiKeys } from './get-tool-config.ts';

export const platformsQueryOptions = () =>
  queryOptions({
    queryKey: ltiKeys.platforms(),
    queryFn: () => api.get('/api/lti/platforms', { schema: z.object({ platforms: z.array(platformSchema) }) }).then((r) => r.platforms),
  });

export const usePlatforms = () => useQuery(platformsQueryOptions());
