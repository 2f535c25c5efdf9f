import { queryOptions, useQuery } from '@tanstack/react-query';
import { practiceListResponseSchema } from '../../../../shared/api/scenarios.ts';
import { api } from '../../../lib/api-client.ts';
import { scenarioKeys } from './get-scenarios.ts';

export const getPracticeScenarios = () => api.get('/api/scenarios/practice', { schema: practiceListResponseSchema }).then((r) => r.scenarios);

export const practiceScenariosQueryOptions = () => queryOptions({ queryKey: scenarioKeys.practice(), queryFn: getPracticeScenarios });

export const usePracticeScenarios = () => useQuery(practiceScenariosQueryOptions());
