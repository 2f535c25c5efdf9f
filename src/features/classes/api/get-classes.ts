import { queryOptions, useQuery } from '@tanstack/react-query';
import { classListResponseSchema } from '../../../../shared/api/classes.ts';
import { api } from '../../../lib/api-client.ts';

export const classKeys = {
  all: ['classes'] as const,
  list: () => ['classes', 'list'] as const,
  detail: (id: number) => ['classes', 'detail', id] as const,
};

export const getClasses = () => api.get('/api/classes', { schema: classListResponseSchema }).then((r) => r.classes);

export const classesQueryOptions = () => queryOptions({ queryKey: classKeys.list(), queryFn: getClasses });

export const useClasses = () => useQuery(classesQueryOptions());
