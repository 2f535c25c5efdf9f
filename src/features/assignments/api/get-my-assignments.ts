import { queryOptions, useQuery } from '@tanstack/react-query';
import { myAssignmentsResponseSchema } from '../../../../shared/api/assignments.ts';
import { api } from '../../../lib/api-client.ts';
import { assignmentKeys } from './get-class-assignments.ts';

export const getMyAssignments = () => api.get('/api/assignments/mine', { schema: myAssignmentsResponseSchema }).then((r) => r.assignments);

export const myAssignmentsQueryOptions = () => queryOptions({ queryKey: assignmentKeys.mine(), queryFn: getMyAssignments });

export const useMyAssignments = () => useQuery(myAssignmentsQueryOptions());
