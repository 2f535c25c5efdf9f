/**
 * The running bench's one listener for live fault injection: listens to its
 * attempt's stream and applies each injection through the bench's
 * dispatcher at the current sim time (the change's onset counted from then),
 * so it is logged like any other input and reaches the server in the normal
 * batch. What arrives is the change to the car, never the fault's name. An
 * injection already in the log (a reconnect hands unlogged ones out again)
 * is skipped.
 */
import { benchInjectionSchema, type BenchInjection } from '../../../../shared/api/live.ts';
import type { InputEvent } from '../../../../sim/inputs.ts';
import type { BenchEngine } from '../stores/bench-engine.ts';

export const liveStreamUrl = (attemptId: number) => `/api/live/attempts/${attemptId}/stream`;

type EngineLike = Pick<BenchEngine, 'dispatch' | 'getSnapshot' | 'studentEvents'>;

interface SourceLike {
  addEventListener(type: string, listener: (e: MessageEvent<string>) => void): void;
  close(): void;
}

export interface LiveInjectionOptions {
  attemptId: number;
  engine: EngineLike;
  /** Made per connection; the browser's EventSource reconnects by itself. */
  open?: (url: string) => SourceLike;
  onError?: (err: unknown) => void;
  /** The attempt was submitted (perhaps from another device): the stream closes and this is called once. */
  onSubmitted?: () => void;
}

function alreadyLogged(events: readonly InputEvent[], msg: BenchInjection): boolean {
  return events.some((e) => (msg.type === 'inject' ? e.kind === 'change-apply' && e.change.id === msg.change.id : e.kind === 'change-clear' && e.changeId === msg.changeId));
}

/** Applies one injection to the bench (exported for tests). */
export function applyInjection(engine: EngineLike, msg: BenchInjection): InputEvent | null {
  if (alreadyLogged(engine.studentEvents(), msg)) return null;
  if (msg.type === 'clear') return engine.dispatch({ kind: 'change-clear', changeId: msg.changeId });
  // The model's own time, which the dispatcher stamps on the event; the onset sent is a delay from now.
  const nowMs = engine.getSnapshot().timeMs;
  return engine.dispatch({ kind: 'change-apply', change: { ...msg.change, onsetS: nowMs / 1000 + msg.change.onsetS } });
}

/** Starts listening; returns the function that stops. */
export function connectLiveInjections(opts: LiveInjectionOptions): () => void {
  const open = opts.open ?? ((url: string) => new EventSource(url, { withCredentials: true }));
  const source = open(liveStreamUrl(opts.attemptId));
  let stopped = false;
  source.addEventListener('injection', (e) => {
    if (stopped) return;
    try {
      const parsed = benchInjectionSchema.safeParse(JSON.parse(e.data));
      if (parsed.success) applyInjection(opts.engine, parsed.data);
    } catch (err) {
      opts.onError?.(err);
    }
  });
  source.addEventListener('status', (e) => {
    const data = JSON.parse(e.data) as { status?: string };
    if (data.status !== 'submitted' || stopped) return;
    stopped = true;
    source.close();
    opts.onSubmitted?.();
  });
  return () => {
    stopped = true;
    source.close();
  };
}
