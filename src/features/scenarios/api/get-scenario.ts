import { queryOptions, useQuery } from '@tanstack/react-query';
import { scenarioDetailSchema } from '../../../../shared/api/scenarios.ts';
import { api } from '../../../lib/api-client.ts';
import { scenarioKeys } from './get-scenarios.ts';

export const getScenario = (id: number) => api.get(`/api/scenarios/${id}`, { schema: scenarioDetailSchema });

export const scenarioQueryOptions = (id: number) => queryOptions({ queryKey: scenarioKeys.detail(id), queryFn: () => getScenario(id) });

export const useScenario = (id: number) => useQuery(scenarioQueryOptions(id));
