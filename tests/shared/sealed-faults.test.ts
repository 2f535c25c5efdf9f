import { describe, expect, it } from 'vitest';
import type { Fault } from '../../sim/faults.ts';
import { defaultVehicleParams } from '../../sim/params.ts';
import {
  deriveBenchKey,
  fromBase64Url,
  healthyVehicle,
  SealError,
  sealFaults,
  sealEvents,
  sealVehicle,
  toBase64Url,
  unsealFaults,
  unsealEvents,
  unsealVehicle,
} from '../../shared/sealed-faults.ts';

const faults: Fault[] = [
  { id: 'f1', kind: 'diode-open', severity01: 1, onsetS: 0 },
  { id: 'f2', kind: 'belt-slip', severity01: 0.4, onsetS: 30, intermittent: { periodS: 10, onFraction01: 0.5 } },
];

describe('sealed faults', () => {
  it('opens with the key it was sealed under and gives back the same faults', async () => {
    const key = await deriveBenchKey('a-secret-of-sixteen-plus', 7);
    const sealed = await sealFaults(faults, key);
    expect(await unsealFaults(sealed, key)).toEqual(faults);
  });

  it('reads as neither a fault kind nor a fault field', async () => {
    const key = await deriveBenchKey('a-secret-of-sixteen-plus', 7);
    const sealed = await sealFaults(faults, key);
    expect(sealed).toMatch(/^[A-Za-z0-9_-]+$/);
    for (const word of ['diode-open', 'belt-slip', 'severity01', 'onsetS', 'kind']) expect(sealed).not.toContain(word);
  });

  it('derives a 32-byte key that is the same for the same attempt and different for another', async () => {
    const a = await deriveBenchKey('a-secret-of-sixteen-plus', 7);
    expect(fromBase64Url(a)).toHaveLength(32);
    expect(await deriveBenchKey('a-secret-of-sixteen-plus', 7)).toBe(a);
    expect(await deriveBenchKey('a-secret-of-sixteen-plus', 8)).not.toBe(a);
    expect(await deriveBenchKey('another-secret-sixteen', 7)).not.toBe(a);
  });

  it('refuses another attempt key and tampered text', async () => {
    const key = await deriveBenchKey('a-secret-of-sixteen-plus', 7);
    const other = await deriveBenchKey('a-secret-of-sixteen-plus', 8);
    const sealed = await sealFaults(faults, key);
    await expect(unsealFaults(sealed, other)).rejects.toBeInstanceOf(SealError);
    const bytes = fromBase64Url(sealed);
    bytes[20] = (bytes[20] ?? 0) ^ 1;
    await expect(unsealFaults(toBase64Url(bytes), key)).rejects.toBeInstanceOf(SealError);
    await expect(unsealFaults('not*base64', key)).rejects.toBeInstanceOf(SealError);
    await expect(unsealFaults(sealed.slice(0, 10), key)).rejects.toBeInstanceOf(SealError);
  });

  it('refuses sealed content that is not a list of faults', async () => {
    const key = await deriveBenchKey('a-secret-of-sixteen-plus', 7);
    const sealed = await sealFaults([{ id: 'x', kind: 'no-such-kind', severity01: 0, onsetS: 0 } as unknown as Fault], key);
    await expect(unsealFaults(sealed, key)).rejects.toThrow(/not a list of faults/);
  });

  it('seals the same faults differently each time (fresh IV)', async () => {
    const key = await deriveBenchKey('a-secret-of-sixteen-plus', 7);
    expect(await sealFaults(faults, key)).not.toBe(await sealFaults(faults, key));
  });

  it('gives a healthy parameter set and says when the real one carries a fault', async () => {
    const clean = defaultVehicleParams();
    expect(healthyVehicle(clean, 'Car').differs).toBe(false);
    expect(healthyVehicle(clean, 'Car').healthy).toEqual({ ...clean, label: 'Car' });

    const faulted = defaultVehicleParams();
    faulted.label = 'Open diode car';
    faulted.alternator.openDiodes = [2];
    faulted.wiring.bplusExtraOhm = 0.01;
    faulted.loads.stuckDrawA = 0.4;
    const { healthy, differs } = healthyVehicle(faulted, 'Car');
    expect(differs).toBe(true);
    expect(healthy.label).toBe('Car');
    expect(healthy.alternator.openDiodes).toEqual([]);
    expect(healthy.wiring.bplusExtraOhm).toBe(0);
    expect(healthy.loads.stuckDrawA).toBe(0);
    expect(faulted.alternator.openDiodes).toEqual([2]);

    const key = await deriveBenchKey('a-secret-of-sixteen-plus', 3);
    const sealed = await sealVehicle(faulted, key);
    expect(sealed).not.toContain('openDiodes');
    expect(await unsealVehicle(sealed, key)).toEqual(faulted);
    await expect(unsealFaults(sealed, key)).rejects.toBeInstanceOf(SealError);
  });

  it('seals logged fault events and opens them for the merge by seq', async () => {
    const key = await deriveBenchKey('a-secret-of-sixteen-plus', 4);
    const events = [{ seq: 9, event: { kind: 'fault-inject' as const, atMs: 9000, fault: { id: 'live-3', kind: 'belt-slip' as const, severity01: 0.5, onsetS: 9 } } }];
    const sealed = await sealEvents(events, key);
    expect(sealed).not.toContain('belt-slip');
    expect(await unsealEvents(sealed, key)).toEqual(events);
    await expect(unsealEvents(await sealFaults(faults, key), key)).rejects.toBeInstanceOf(SealError);
  });
});
