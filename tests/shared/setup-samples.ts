import type { SetupSample } from '../../shared/test-setups.ts';

/**
 * A bench at rest, as the set-up tracker samples it: key off, engine
 * stopped, the leads on the battery posts, the clamp off every cable, no
 * loads, a rested battery at 12.6 V supplying its 30 mA key-off draw. Tests
 * shape their samples from it.
 */
export const QUIET_BENCH_SAMPLE: Readonly<Omit<SetupSample, 'atMs'>> = Object.freeze({
  engine: 'off',
  key: 'off',
  tachRpm: 0,
  red: 'battery-pos',
  black: 'battery-neg',
  clampOn: null,
  clampArrow: 'toward-battery',
  clampZeroAway: false,
  ammeterInSeries: false,
  modulesAwakeS: 0,
  accessoriesOn: 0,
  switchedLoadA: 0,
  pileA: 0,
  pileDial01: 0,
  batteryA: 0.03,
  outputA: 0,
  voltmeterV: 12.6,
});
