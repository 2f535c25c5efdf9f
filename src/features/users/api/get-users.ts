import { queryOptions, useQuery } from '@tanstack/react-query';
import { z } from 'zod';
import { userSchema } from '../../../../shared/api/users.ts';
import { api } from '../../../lib/api-client.ts';

const listSchema = z.object({ users: z.array(userSchema) });

export const usersKeys = { all: ['users'] as const, list: (q: string) => ['users', 'list', q] as const };

export const getUsers = (q = '') => api.get('/api/users', { query: { q }, schema: listSchema }).then((r) => r.users);

export const usersQueryOptions = (q = '') => queryOptions({ queryKey: usersKeys.list(q), queryFn: () => getUsers(q) });

export const useUsers = (q = '') => useQuery(usersQueryOptions(q));
