/**
 * How the reading strip writes numbers: fixed decimals per quantity so digits
 * do not jump, a minus sign that is a real minus, and a dash for "no reading".
 */

export const NO_READING = '—';

const MINUS = '\u2212';

function fixed(value: number, decimals: number): string {
  const rounded = Number(value.toFixed(decimals));
  // -0.00 reads as 0.00.
  const v = Object.is(rounded, -0) || rounded === 0 ? 0 : rounded;
  const text = Math.abs(v).toFixed(decimals);
  return v < 0 ? `${MINUS}${text}` : text;
}

function grouped(value: number): string {
  const v = Math.round(value);
  const text = Math.abs(v).toLocaleString('en-US');
  return v < 0 ? `${MINUS}${text}` : text;
}

/** DC volts: two decimals (a 0.05 V drop must be visible). */
export function formatVolts(v: number | null): string {
  return v === null || !Number.isFinite(v) ? NO_READING : fixed(v, 2);
}

/** Amps: one decimal below 100 A, whole amps above. */
export function formatAmps(a: number | null): string {
  if (a === null || !Number.isFinite(a)) return NO_READING;
  return Math.abs(a) < 100 ? fixed(a, 1) : fixed(a, 0);
}

export function formatRpm(rpm: number | null): string {
  if (rpm === null || !Number.isFinite(rpm)) return NO_READING;
  // A tachometer reads in steps of 10 and shows 0 at rest.
  return grouped(Math.round(rpm / 10) * 10);
}

/** AC ripple in millivolts (the reading is volts rms). */
export function formatRippleMv(vac: number | null): string {
  if (vac === null || !Number.isFinite(vac)) return NO_READING;
  return grouped(Math.abs(vac) * 1000);
}

/** Key-off draw in milliamps (the series ammeter reads amps). */
export function formatDrawMa(a: number | null): string {
  if (a === null || !Number.isFinite(a)) return NO_READING;
  return Math.abs(a) < 10 ? fixed(a * 1000, 0) : `${fixed(a, 1)} A`;
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
