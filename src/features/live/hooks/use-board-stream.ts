/**
 * The class board kept live: starts from the snapshot the stream sends, then
 * applies each `attempt` update (an attempt that ended leaves the board).
 * The browser's EventSource reconnects by itself; each reconnect begins with
 * a fresh snapshot.
 */
import { useEffect, useState } from 'react';
import { boardAttemptSchema, boardSnapshotSchema, type BoardAttempt } from '../../../../shared/api/live.ts';
import { boardStreamUrl } from '../api/get-board.ts';

export type StreamState = 'connecting' | 'live' | 'reconnecting';

export interface BoardState {
  className: string | null;
  attempts: BoardAttempt[];
  stream: StreamState;
  /** When the last update arrived (ms since epoch). */
  updatedAt: number | null;
}

export function mergeAttempt(list: readonly BoardAttempt[], a: BoardAttempt): BoardAttempt[] {
  const rest = list.filter((x) => x.attemptId !== a.attemptId);
  if (a.status !== 'running') return rest;
  return [...rest, a].sort((x, y) => x.studentName.localeCompare(y.studentName) || x.attemptId - y.attemptId);
}

export function useBoardStream(classId: number): BoardState {
  const [state, setState] = useState<BoardState>({ className: null, attempts: [], stream: 'connecting', updatedAt: null });

  useEffect(() => {
    const source = new EventSource(boardStreamUrl(classId), { withCredentials: true });
    source.addEventListener('snapshot', (e: MessageEvent<string>) => {
      const snap = boardSnapshotSchema.safeParse(JSON.parse(e.data));
      if (snap.success) setState({ className: snap.data.className, attempts: snap.data.attempts, stream: 'live', updatedAt: Date.now() });
    });
    source.addEventListener('attempt', (e: MessageEvent<string>) => {
      const a = boardAttemptSchema.safeParse(JSON.parse(e.data));
      if (a.success) setState((s) => ({ ...s, attempts: mergeAttempt(s.attempts, a.data), stream: 'live', updatedAt: Date.now() }));
    });
    source.addEventListener('error', () => setState((s) => ({ ...s, stream: 'reconnecting' })));
    return () => source.close();
  }, [classId]);

  return state;
}
