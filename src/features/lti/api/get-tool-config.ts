import { queryOptions, useQuery } from '@tanstack/react-query';
import { toolConfigSchema } from '../../../../shared/api/lti.ts';
import { api } from '../../../lib/api-client.ts';

export const ltiKeys = {
  all: ['lti'] as const,
  tool: () => ['lti', 'tool'] as const,
  platforms: () => ['lti', 'platforms'] as const,
  deepLink: (id: string) => ['lti', 'deep-link', id] as const,
  grades: (assignmentId: number) => ['lti', 'grades', assignmentId] as const,
  classLink: (classId: number) => ['lti', 'class', classId] as const,
};

export const toolConfigQueryOptions = () => queryOptions({ queryKey: ltiKeys.tool(), queryFn: () => api.get('/api/lti/tool', { schema: toolConfigSchema }) });

export const useToolConfig = () => useQuery(toolConfigQueryOptions());
