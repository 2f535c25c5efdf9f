import { queryOptions, useQuery } from '@tanstack/react-query';
import { boardSnapshotSchema } from '../../../../shared/api/live.ts';
import { api } from '../../../lib/api-client.ts';

export const liveKeys = {
  all: ['live'] as const,
  board: (classId: number) => ['live', 'board', classId] as const,
};

export const getBoard = (classId: number) => api.get(`/api/live/classes/${classId}/board`, { schema: boardSnapshotSchema });

export const boardQueryOptions = (classId: number) => queryOptions({ queryKey: liveKeys.board(classId), queryFn: () => getBoard(classId) });

export const useBoard = (classId: number) => useQuery(boardQueryOptions(classId));

/** Where the board's live updates come from. */
export const boardStreamUrl = (classId: number) => `/api/live/classes/${classId}/stream`;
