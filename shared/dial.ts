/**
 * The carbon pile's dial as a fraction: 0 is off, 1 is full load. The one
 * place that clamps it, moves it in steps and shows it as a percentage, for
 * the bench's dial, its actions, a recorded reading's note, the replay and
 * the replay's markers.
 */

/** The dial moves in steps this fine; finer motion sends no new event. */
export const DIAL_STEP = 0.005;

/** The dial held between off and full (a value that is not a number stays one). */
export function clampDial(dial01: number): number {
  return dial01 < 0 ? 0 : dial01 > 1 ? 1 : dial01;
}

/** The dial clamped and on its step, written with three decimals as the log stores it. */
export function quantiseDial(dial01: number): number {
  return Number((Math.round(clampDial(dial01) / DIAL_STEP) * DIAL_STEP).toFixed(3));
}

/** The dial as a whole percentage, as the bench shows it. */
export function dialPercent(dial01: number): number {
  return Math.round(dial01 * 100);
}
