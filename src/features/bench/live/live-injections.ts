/**
 * The running bench's end of live fault injection: listens to its attempt's
 * stream, opens each injection with the bench key and applies it through the
 * bench's dispatcher at the current sim time, so it is logged like any other
 * input (and reaches the server in the normal batch). The bench does not say
 * what arrived. An injection already in the log (a reconnect hands unlogged
 * ones out again) is skipped.
 */
import { benchInjectionSchema, type BenchInjection } from '../../../../shared/api/live.ts';
import { unsealFaults } from '../../../../shared/sealed-faults.ts';
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
  benchKey: string;
  engine: EngineLike;
  /** Made per connection; the browser's EventSource reconnects by itself. */
  open?: (url: string) => SourceLike;
  onError?: (err: unknown) => void;
}

function alreadyLogged(events: readonly InputEvent[], msg: BenchInjection): boolean {
  return events.some((e) => (msg.type === 'inject' ? e.kind === 'fault-inject' && e.fault.id === msg.faultId : e.kind === 'fault-clear' && e.faultId === msg.faultId));
}

/** Applies one injection to the bench (exported for tests). */
export async function applyInjection(engine: EngineLike, benchKey: string, msg: BenchInjection): Promise<InputEvent | null> {
  if (alreadyLogged(engine.studentEvents(), msg)) return null;
  if (msg.type === 'clear') return engine.dispatch({ kind: 'fault-clear', faultId: msg.faultId });
  const [fault] = await unsealFaults(msg.sealed, benchKey);
  if (!fault || fault.id !== msg.faultId) throw new Error('the injection did not open to its fault');
  // Re-check: another copy may have been applied while this one was opening.
  if (alreadyLogged(engine.studentEvents(), msg)) return null;
  // The model's own time, which the dispatcher stamps on the event.
  const nowMs = engine.getSnapshot().timeMs;
  // The sealed onset is a delay from now.
  return engine.dispatch({ kind: 'fault-inject', fault: { ...fault, onsetS: nowMs / 1000 + fault.onsetS } });
}

/** Starts listening; returns the function that stops. */
export function connectLiveInjections(opts: LiveInjectionOptions): () => void {
  const open = opts.open ?? ((url: string) => new EventSource(url, { withCredentials: true }));
  const source = open(liveStreamUrl(opts.attemptId));
  let chain: Promise<unknown> = Promise.resolve();
  let stopped = false;
  source.addEventListener('injection', (e) => {
    const parsed = benchInjectionSchema.safeParse(JSON.parse(e.data));
    if (!parsed.success) return;
    chain = chain
      .then(() => (stopped ? null : applyInjection(opts.engine, opts.benchKey, parsed.data)))
      .catch((err: unknown) => opts.onError?.(err));
  });
  source.addEventListener('status', (e) => {
    const data = JSON.parse(e.data) as { status?: string };
    if (data.status === 'submitted') source.close();
  });
  return () => {
    stopped = true;
    source.close();
  };
}
