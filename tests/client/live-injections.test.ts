/**
 * The bench's one listener for live injections: it applies the change it is
 * sent at the bench's own sim time and logs it once. Self-consistency of the
 * bench's bookkeeping (common practice, no source).
 */
import { describe, expect, it } from 'vitest';
import { defaultVehicleParams } from '../../sim/params.ts';
import { faultOps } from '../../sim/faults.ts';
import { liveFaultId, type BenchInjection } from '../../shared/api/live.ts';
import { createBenchEngine } from '../../src/features/bench/stores/bench-engine.ts';
import { applyInjection, connectLiveInjections } from '../../src/features/bench/live/live-injections.ts';

function injectionMessage(injectionId: number, delayS: number): BenchInjection {
  return {
    type: 'inject',
    injectionId,
    change: { id: liveFaultId(injectionId), onsetS: delayS, intermittent: null, ops: faultOps({ kind: 'fusible-link-open', severity01: 1 }) },
  };
}

function benchAt(ms: number) {
  const logged: unknown[] = [];
  const engine = createBenchEngine({ params: defaultVehicleParams(), seed: 3, onEvent: (e) => logged.push(e) });
  engine.skipAhead(ms);
  return { engine, logged };
}

describe('the bench side of live injection', () => {
  it('applies an injection at the bench’s current sim time, the delay counted from then, and logs it once', () => {
    const { engine, logged } = benchAt(12_000);
    const msg = injectionMessage(31, 2.5);
    const now = engine.getSnapshot().timeMs;
    const event = applyInjection(engine, msg);
    expect(event).toEqual({ kind: 'change-apply', atMs: now, change: { id: 'live-31', onsetS: now / 1000 + 2.5, intermittent: null, ops: [{ path: 'wiring.fusibleLinkOpen', op: 'set', value: true }] } });
    // A reconnect hands out what the server has not stored yet: the bench skips what it already logged.
    expect(applyInjection(engine, msg)).toBeNull();
    expect(logged).toHaveLength(1);
    engine.skipAhead(3_000);
    expect(engine.getSnapshot().readings.fusibleLinkOpen).toBe(true);
  });

  it('clears by change id, once', () => {
    const { engine, logged } = benchAt(1_000);
    applyInjection(engine, injectionMessage(4, 0));
    const clear: BenchInjection = { type: 'clear', injectionId: 5, changeId: 'live-4' };
    expect(applyInjection(engine, clear)).toMatchObject({ kind: 'change-clear', changeId: 'live-4' });
    expect(applyInjection(engine, clear)).toBeNull();
    expect(logged.map((e) => (e as { kind: string }).kind)).toEqual(['change-apply', 'change-clear']);
  });

  it('listens on its attempt’s stream and applies what arrives, in order, until stopped', async () => {
    const { engine, logged } = benchAt(5_000);
    const listeners = new Map<string, (e: MessageEvent<string>) => void>();
    let opened = '';
    let closed = false;
    let submitted = 0;
    const stop = connectLiveInjections({
      attemptId: 9,
      engine,
      onSubmitted: () => submitted++,
      open: (url) => {
        opened = url;
        return { addEventListener: (type, l) => listeners.set(type, l), close: () => (closed = true) };
      },
    });
    expect(opened).toBe('/api/live/attempts/9/stream');
    const send = (type: string, data: unknown) => listeners.get(type)!(new MessageEvent(type, { data: JSON.stringify(data) }));
    send('injection', injectionMessage(1, 0));
    send('injection', injectionMessage(2, 1));
    await expect.poll(() => logged.length).toBe(2);
    expect(logged.map((e) => (e as { change: { id: string } }).change.id)).toEqual(['live-1', 'live-2']);
    send('status', { attemptId: 9, status: 'running' });
    expect(closed).toBe(false);
    expect(submitted).toBe(0);
    // Submitted (here or on another device): the stream closes and the bench is told once; later messages change nothing.
    send('status', { attemptId: 9, status: 'submitted' });
    send('status', { attemptId: 9, status: 'submitted' });
    send('injection', injectionMessage(3, 2));
    expect(closed).toBe(true);
    expect(submitted).toBe(1);
    expect(logged).toHaveLength(2);
    stop();
  });
});
