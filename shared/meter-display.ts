/**
 * What a meter shows: the one place that rounds a meter's value and gives it
 * a unit. The bench's reading strip, a recorded reading, the grader, the
 * result page ("You recorded" / "The bench showed") and the replay all use
 * it, so the value judged against a limit is the value the student saw.
 *
 * - DC volts: two decimals (a 0.05 V drop must be visible);
 * - clamp amps: one decimal below 100 A, whole amps from 100 A;
 * - AC ripple: whole millivolts (the meter reads volts rms; shown unsigned);
 * - key-off draw: whole milliamps below 10 A, amps with one decimal above;
 * - engine speed: steps of 10 rpm.
 *
 * Units in names: V, A, Vac (rms), rpm.
 */
import type { Readings } from '../sim/instruments.ts';

/**
 * The display tick: the meters show a new value every 100 ms of sim time, from
 * 0 ms. Samples, recorded readings and test set-ups all live on this grid, on
 * the bench, in the replay and in the server's re-run.
 */
export const DISPLAY_TICK_MS = 100;

/** What a reading measures. */
export type MeterQuantity = 'voltage' | 'current' | 'ripple' | 'draw' | 'rpm';
export type MeterUnit = 'V' | 'A' | 'mV' | 'mA' | 'rpm';

/** The meters the display reads. */
export type MeterValues = Pick<Readings, 'voltmeterV' | 'rippleVac' | 'clampA' | 'ammeterA' | 'tachRpm'>;

export interface MeterShown {
  /** The number shown, as a number (rounded as the display rounds it). */
  value: number;
  unit: MeterUnit;
  /** The digits as the display writes them ("12.41", "−3.2", "1,234"). */
  text: string;
}

/** Shown for a meter that gives no reading (a lead or the clamp not connected). */
export const NO_READING = '—';

const MINUS = '\u2212';

/** x rounded to `decimals`, with -0 made 0. */
function rounded(x: number, decimals: number): number {
  const r = Number(x.toFixed(decimals));
  return r === 0 ? 0 : r;
}

function fixedText(value: number, decimals: number): string {
  const text = Math.abs(value).toFixed(decimals);
  return value < 0 ? `${MINUS}${text}` : text;
}

function groupedText(value: number): string {
  const text = groupThousands(Math.abs(value));
  return value < 0 ? `${MINUS}${text}` : text;
}

/**
 * A whole number with its digits grouped in threes by commas, as
 * `toLocaleString('en-US')` writes it ("12,345", "-1,200"), without the
 * locale machinery, which costs far more on every display tick. Anything
 * else (a fraction, a huge number) is left to toLocaleString.
 */
export function groupThousands(n: number): string {
  if (!Number.isInteger(n) || Math.abs(n) >= 1e15) return n.toLocaleString('en-US');
  const digits = String(Math.abs(n));
  let out = '';
  for (let i = 0; i < digits.length; i++) {
    if (i > 0 && (digits.length - i) % 3 === 0) out += ',';
    out += digits[i];
  }
  return n < 0 ? `-${out}` : out;
}

/** DC volts as the voltmeter shows them. */
export function showVolts(v: number | null): MeterShown | null {
  if (v === null || !Number.isFinite(v)) return null;
  const value = rounded(v, 2);
  return { value, unit: 'V', text: fixedText(value, 2) };
}

/** Amps as the clamp shows them. */
export function showAmps(a: number | null): MeterShown | null {
  if (a === null || !Number.isFinite(a)) return null;
  const decimals = Math.abs(a) < 100 ? 1 : 0;
  const value = rounded(a, decimals);
  return { value, unit: 'A', text: fixedText(value, decimals) };
}

/** AC ripple in millivolts. */
export function showRipple(vac: number | null): MeterShown | null {
  if (vac === null || !Number.isFinite(vac)) return null;
  const value = Math.round(Math.abs(vac) * 1000);
  return { value, unit: 'mV', text: groupedText(value) };
}

/** The series ammeter's key-off draw. */
export function showDraw(a: number | null): MeterShown | null {
  if (a === null || !Number.isFinite(a)) return null;
  if (Math.abs(a) < 10) {
    const value = rounded(a * 1000, 0);
    return { value, unit: 'mA', text: fixedText(value, 0) };
  }
  const value = rounded(a, 1);
  return { value, unit: 'A', text: fixedText(value, 1) };
}

/** The tachometer, in steps of 10 rpm. */
export function showRpm(rpm: number | null): MeterShown | null {
  if (rpm === null || !Number.isFinite(rpm)) return null;
  const value = Math.round(rpm / 10) * 10;
  const v = value === 0 ? 0 : value;
  return { value: v, unit: 'rpm', text: groupedText(v) };
}

/** What the meter for a quantity shows, or null when it gives no reading. */
export function meterShows(quantity: MeterQuantity, r: MeterValues): MeterShown | null {
  switch (quantity) {
    case 'voltage':
      return showVolts(r.voltmeterV);
    case 'current':
      return showAmps(r.clampA);
    case 'ripple':
      return showRipple(r.rippleVac);
    case 'draw':
      return showDraw(r.ammeterA);
    case 'rpm':
      return showRpm(r.tachRpm);
  }
}

/** A value with its unit, as the result page and the replay write it ("12.41 V", "−3.2 A", "1,234 mV"). */
export function shownWithUnit(value: number, unit: string): string {
  const decimals = unit === 'V' ? 2 : unit === 'A' ? (Math.abs(value) < 100 ? 1 : 0) : 0;
  const text = unit === 'mV' || unit === 'rpm' ? groupedText(value) : fixedText(value, decimals);
  return `${text} ${unit}`;
}

/** Two shown values are the same reading (they come from the same rounding, so equal up to the last bit). */
export function sameShown(a: { value: number; unit: string }, b: { value: number; unit: string }): boolean {
  return a.unit === b.unit && Math.abs(a.value - b.value) < 1e-9;
}
