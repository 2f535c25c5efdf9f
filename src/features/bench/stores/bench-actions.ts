/**
 * The student's named actions on the bench. Each returns the input it means;
 * buttons, keys and drags all hand these to the one dispatcher.
 */
import type { ClampArrow, Conductor, ConnectionPoint, KeyPosition, LeadColour } from '../../../../sim/inputs.ts';
import { quantiseDial } from '../../../../shared/dial.ts';
import type { BenchInput } from './bench-engine.ts';


export const benchActions = {
  turnKey: (position: KeyPosition): BenchInput => ({ kind: 'key', position }),
  holdRpm: (rpm: number): BenchInput => ({ kind: 'rpm', rpm: Math.round(rpm) }),
  switchAccessory: (id: string, on: boolean): BenchInput => ({ kind: 'accessory', id, on }),
  setPile: (dial01: number): BenchInput => ({ kind: 'pile', dial01: quantiseDial(dial01) }),
  clipLead: (which: LeadColour, point: ConnectionPoint | null): BenchInput => ({ kind: 'lead', which, point }),
  placeClamp: (conductor: Conductor | null, arrow: ClampArrow): BenchInput => ({ kind: 'clamp', conductor, arrow }),
  zeroClamp: (): BenchInput => ({ kind: 'clamp-zero' }),
  fitAmmeter: (inSeries: boolean): BenchInput => ({ kind: 'ammeter', inSeries }),
  replaceAmmeterFuse: (): BenchInput => ({ kind: 'ammeter-fuse' }),
  connectBplus: (connected: boolean): BenchInput => ({ kind: 'bplus-disconnect', connected }),
} as const;

export const reverseArrow = (arrow: ClampArrow): ClampArrow => (arrow === 'toward-battery' ? 'toward-alternator' : 'toward-battery');
