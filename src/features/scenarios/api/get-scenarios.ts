import { queryOptions, useQuery } from '@tanstack/react-query';
import { scenarioListResponseSchema } from '../../../../shared/api/scenarios.ts';
import { api } from '../../../lib/api-client.ts';

export const scenarioKeys = {
  all: ['scenarios'] as const,
  list: () => ['scenarios', 'list'] as const,
  detail: (id: number) => ['scenarios', 'detail', id] as const,
  practice: () => ['scenarios', 'practice'] as const,
};

/** The whole visible library; the table searches, filters and sorts it on the client. */
export const getScenarios = () => api.get('/api/scenarios', { schema: scenarioListResponseSchema }).then((r) => r.scenarios);

export const scenariosQueryOptions = () => queryOptions({ queryKey: scenarioKeys.list(), queryFn: getScenarios });

export const useScenarios = () => useQuery(scenariosQueryOptions());
