import { describe, expect, it } from 'vitest';
import { defaultVehicleParams } from '../../sim/params.ts';
import { deriveBenchKey, sealFaults } from '../../shared/sealed-faults.ts';
import { liveFaultId, type BenchInjection } from '../../shared/api/live.ts';
import { createBenchEngine } from '../../src/features/bench/stores/bench-engine.ts';
import { applyInjection, connectLiveInjections } from '../../src/features/bench/live/live-injections.ts';

const SECRET = 'client-test-secret-0123456789';

async function injectionMessage(attemptId: number, injectionId: number, delayS: number): Promise<BenchInjection> {
  const key = await deriveBenchKey(SECRET, attemptId);
  const fault = { id: liveFaultId(injectionId), kind: 'fusible-link-open' as const, severity01: 1, onsetS: delayS, intermittent: null };
  return { type: 'inject', injectionId, faultId: fault.id, sealed: await sealFaults([fault], key) };
}

function benchAt(ms: number) {
  const logged: unknown[] = [];
  const engine = createBenchEngine({ params: defaultVehicleParams(), seed: 3, scenarioEvents: [], onEvent: (e) => logged.push(e) });
  engine.skipAhead(ms);
  return { engine, logged };
}

describe('the bench side of live injection', () => {
  it('applies an injection at the bench’s current sim time, the delay counted from then, and logs it once', async () => {
    const { engine, logged } = benchAt(12_000);
    const key = await deriveBenchKey(SECRET, 9);
    const msg = await injectionMessage(9, 31, 2.5);
    const now = engine.getSnapshot().timeMs;
    const event = await applyInjection(engine, key, msg);
    expect(event).toEqual({ kind: 'fault-inject', atMs: now, fault: { id: 'live-31', kind: 'fusible-link-open', severity01: 1, onsetS: now / 1000 + 2.5, intermittent: null } });
    // A reconnect hands out what the server has not stored yet: the bench skips what it already logged.
    expect(await applyInjection(engine, key, msg)).toBeNull();
    expect(logged).toHaveLength(1);
  });

  it('clears by fault id, once', async () => {
    const { engine, logged } = benchAt(1_000);
    const key = await deriveBenchKey(SECRET, 9);
    await applyInjection(engine, key, await injectionMessage(9, 4, 0));
    const clear: BenchInjection = { type: 'clear', injectionId: 5, faultId: 'live-4' };
    expect(await applyInjection(engine, key, clear)).toMatchObject({ kind: 'fault-clear', faultId: 'live-4' });
    expect(await applyInjection(engine, key, clear)).toBeNull();
    expect(logged.map((e) => (e as { kind: string }).kind)).toEqual(['fault-inject', 'fault-clear']);
  });

  it('refuses an injection sealed with another attempt’s key', async () => {
    const { engine, logged } = benchAt(0);
    await expect(applyInjection(engine, await deriveBenchKey(SECRET, 10), await injectionMessage(9, 1, 0))).rejects.toThrow();
    expect(logged).toEqual([]);
  });

  it('listens on its attempt’s stream and applies what arrives, in order, until stopped', async () => {
    const { engine, logged } = benchAt(5_000);
    const listeners = new Map<string, (e: MessageEvent<string>) => void>();
    let opened = '';
    let closed = false;
    const stop = connectLiveInjections({
      attemptId: 9,
      benchKey: await deriveBenchKey(SECRET, 9),
      engine,
      open: (url) => {
        opened = url;
        return { addEventListener: (type, l) => listeners.set(type, l), close: () => (closed = true) };
      },
    });
    expect(opened).toBe('/api/live/attempts/9/stream');
    const send = (type: string, data: unknown) => listeners.get(type)!(new MessageEvent(type, { data: JSON.stringify(data) }));
    send('injection', await injectionMessage(9, 1, 0));
    send('injection', await injectionMessage(9, 2, 1));
    await expect.poll(() => logged.length).toBe(2);
    expect(logged.map((e) => (e as { fault: { id: string } }).fault.id)).toEqual(['live-1', 'live-2']);
    send('status', { attemptId: 9, status: 'submitted' });
    expect(closed).toBe(true);
    stop();
  });
});
