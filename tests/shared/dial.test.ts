/**
 * The pile dial in one place: clamped between off and full, moved in steps of
 * half a percent, shown as a whole percentage. The step and the display are
 * the product's own (common practice, no source).
 */
import { describe, expect, it } from 'vitest';
import { DIAL_STEP, clampDial, dialPercent, quantiseDial } from '../../shared/dial.ts';
import { benchActions } from '../../src/features/bench/stores/bench-actions.ts';

describe('the pile dial', () => {
  it('is held between off and full', () => {
    expect(clampDial(-0.2)).toBe(0);
    expect(clampDial(0.42)).toBe(0.42);
    expect(clampDial(1.3)).toBe(1);
  });

  it('moves in steps and is written as the log stores it', () => {
    expect(DIAL_STEP).toBe(0.005);
    expect(quantiseDial(0.3349)).toBe(0.335);
    expect(quantiseDial(0.3324)).toBe(0.33);
    expect(quantiseDial(-1)).toBe(0);
    expect(quantiseDial(2)).toBe(1);
    for (let k = 0; k <= 200; k++) {
      const q = quantiseDial(k * DIAL_STEP);
      expect(q).toBe(Number((k * DIAL_STEP).toFixed(3)));
      expect(quantiseDial(q)).toBe(q);
    }
  });

  it('is the value the bench sends for the pile', () => {
    expect(benchActions.setPile(0.3349)).toEqual({ kind: 'pile', dial01: 0.335 });
    expect(benchActions.setPile(1.2)).toEqual({ kind: 'pile', dial01: 1 });
  });

  it('shows as a whole percentage', () => {
    expect(dialPercent(0)).toBe(0);
    expect(dialPercent(0.335)).toBe(34);
    expect(dialPercent(1)).toBe(100);
  });
});
