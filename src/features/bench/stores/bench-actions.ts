/**
 * The student's named actions on the bench. Each returns the input it means;
 * buttons, keys and drags all hand these to the one dispatcher.
 */
import type { ClampArrow, Conductor, ConnectionPoint, KeyPosition, LeadColour } from '../../../../sim/inputs.ts';
import type { BenchInput } from './bench-engine.ts';

/** The dial moves in steps this fine; finer motion sends no new event. */
export const PILE_STEP = 0.005;

export const quantiseDial = (dial01: number): number => Math.round(Math.min(1, Math.max(0, dial01)) / PILE_STEP) * PILE_STEP;

export const benchActions = {
  turnKey: (position: KeyPosition): BenchInput => ({ kind: 'key', position }),
  holdRpm: (rpm: number): BenchInput => ({ kind: 'rpm', rpm: Math.round(rpm) }),
  switchAccessory: (id: string, on: boolean): BenchInput => ({ kind: 'accessory', id, on }),
  setPile: (dial01: number): BenchInput => ({ kind: 'pile', dial01: Number(quantiseDial(dial01).toFixed(3)) }),
  clipLead: (which: LeadColour, point: ConnectionPoint | null): BenchInput => ({ kind: 'lead', which, point }),
  placeClamp: (conductor: Conductor | null, arrow: ClampArrow): BenchInput => ({ kind: 'clamp', conductor, arrow }),
  zeroClamp: (): BenchInput => ({ kind: 'clamp-zero' }),
  fitAmmeter: (inSeries: boolean): BenchInput => ({ kind: 'ammeter', inSeries }),
  replaceAmmeterFuse: (): BenchInput => ({ kind: 'ammeter-fuse' }),
  connectBplus: (connected: boolean): BenchInput => ({ kind: 'bplus-disconnect', connected }),
} as const;

export const reverseArrow = (arrow: ClampArrow): ClampArrow => (arrow === 'toward-battery' ? 'toward-alternator' : 'toward-battery');
