import { queryOptions, useQuery } from '@tanstack/react-query';
import { classDetailSchema } from '../../../../shared/api/classes.ts';
import { api } from '../../../lib/api-client.ts';
import { classKeys } from './get-classes.ts';

export const getClass = (id: number) => api.get(`/api/classes/${id}`, { schema: classDetailSchema });

export const classQueryOptions = (id: number) => queryOptions({ queryKey: classKeys.detail(id), queryFn: () => getClass(id) });

export const useClass = (id: number) => useQuery(classQueryOptions(id));
