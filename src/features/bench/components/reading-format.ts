/**
 * How the reading strip writes numbers: the rounding of shared/meter-display.ts
 * (the same as a recorded reading's and the grader's), fixed decimals per
 * quantity so digits do not jump, a real minus sign, and a dash for "no reading".
 */

import { NO_READING, showAmps, showDraw, showRipple, showRpm, showVolts, type MeterShown } from '../../../../shared/meter-display.ts';

export { NO_READING };

const MINUS = '\u2212';

const text = (shown: MeterShown | null) => (shown ? shown.text : NO_READING);

/** DC volts: two decimals (a 0.05 V drop must be visible). */
export function formatVolts(v: number | null): string {
  return text(showVolts(v));
}

/** Amps: one decimal below 100 A, whole amps above. */
export function formatAmps(a: number | null): string {
  return text(showAmps(a));
}

/** A tachometer reads in steps of 10 and shows 0 at rest. */
export function formatRpm(rpm: number | null): string {
  return text(showRpm(rpm));
}

/** AC ripple in millivolts (the reading is volts rms). */
export function formatRippleMv(vac: number | null): string {
  return text(showRipple(vac));
}

/** Key-off draw in milliamps (the series ammeter reads amps); amps with their unit from 10 A. */
export function formatDrawMa(a: number | null): string {
  const shown = showDraw(a);
  if (!shown) return NO_READING;
  return shown.unit === 'A' ? `${shown.text} A` : shown.text;
}

/** Units as written beside each readout. */
export const UNITS = { volts: 'V', amps: 'A', rpm: 'rpm', ripple: 'mV AC', draw: 'mA' } as const;

/** Words for a screen reader ("12.41 volts"), negative spelled out. */
export function spokenReading(quantity: 'volts' | 'amps' | 'rpm' | 'ripple' | 'draw', text: string): string {
  if (text === NO_READING) return `${SPOKEN_NAMES[quantity]}: no reading`;
  const words = { volts: 'volts', amps: 'amps', rpm: 'rpm', ripple: 'millivolts AC', draw: 'milliamps' }[quantity];
  const spoken = text.replace(MINUS, 'minus ').replace(/,/g, '');
  if (quantity === 'draw' && text.endsWith(' A')) return `${SPOKEN_NAMES.draw}: ${spoken.replace(/ A$/, '')} amps`;
  return `${SPOKEN_NAMES[quantity]}: ${spoken} ${words}`;
}

const SPOKEN_NAMES = { volts: 'Voltmeter', amps: 'Clamp', rpm: 'Engine', ripple: 'Ripple', draw: 'Draw' } as const;
