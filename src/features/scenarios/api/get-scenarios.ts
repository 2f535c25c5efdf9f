import { queryOptions, useQuery } from '@tanstack/react-query';
import { scenarioListResponseSchema } from '../../../../shared/api/scenarios.ts';
import { api } from '../../../lib/api-client.ts';

export const scenarioKeys = {
  all: ['scenarios'] as const,
  list: (includeArchived = false) => ['scenarios', 'list', { includeArchived }] as const,
  lists: () => ['scenarios', 'list'] as const,
  detail: (id: number) => ['scenarios', 'detail', id] as const,
  practice: () => ['scenarios', 'practice'] as const,
};

/** The whole visible library; the table searches, filters and sorts it on the client. */
export const getScenarios = (includeArchived = false) =>
  api.get('/api/scenarios', { query: { includeArchived: includeArchived ? 'true' : undefined }, schema: scenarioListResponseSchema }).then((r) => r.scenarios);

export const scenariosQueryOptions = (includeArchived = false) =>
  queryOptions({ queryKey: scenarioKeys.list(includeArchived), queryFn: () => getScenarios(includeArchived) });

export const useScenarios = (includeArchived = false) => useQuery(scenariosQueryOptions(includeArchived));
