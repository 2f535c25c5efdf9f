/**
 * What a meter shows, in one place: the rounding and units the reading strip,
 * a recorded reading, the grader, the result page and the replay all use.
 * The resolutions are the product's (common practice, no source): a 0.05 V
 * drop must be visible, so volts take two decimals.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { groupThousands, meterShows, sameShown, showAmps, showDraw, showRipple, showRpm, showVolts, shownWithUnit } from '../../shared/meter-display.ts';
import { formatAmps, formatDrawMa, formatRippleMv, formatRpm, formatVolts } from '../../src/features/bench/components/reading-format.ts';

describe('what a meter shows', () => {
  it('rounds each quantity to its display resolution, with its unit', () => {
    expect(showVolts(14.196)).toEqual({ value: 14.2, unit: 'V', text: '14.20' });
    expect(showVolts(-0.004)).toEqual({ value: 0, unit: 'V', text: '0.00' });
    expect(showAmps(99.94)).toEqual({ value: 99.9, unit: 'A', text: '99.9' });
    expect(showAmps(180.49)).toEqual({ value: 180, unit: 'A', text: '180' });
    expect(showAmps(-142.2)).toEqual({ value: -142, unit: 'A', text: '\u2212142' });
    expect(showRipple(0.2249)).toEqual({ value: 225, unit: 'mV', text: '225' });
    expect(showDraw(0.02549)).toEqual({ value: 25, unit: 'mA', text: '25' });
    expect(showDraw(10.54)).toEqual({ value: 10.5, unit: 'A', text: '10.5' });
    expect(showRpm(1996)).toEqual({ value: 2000, unit: 'rpm', text: '2,000' });
    expect(meterShows('current', { voltmeterV: 12, rippleVac: null, clampA: null, ammeterA: null, tachRpm: 0 })).toBeNull();
  });

  it('is what the reading strip writes, digit for digit', () => {
    fc.assert(
      fc.property(fc.double({ min: -400, max: 400, noNaN: true }), (x) => {
        expect(formatVolts(x)).toBe(showVolts(x)!.text);
        expect(formatAmps(x)).toBe(showAmps(x)!.text);
        expect(formatRpm(Math.abs(x) * 10)).toBe(showRpm(Math.abs(x) * 10)!.text);
        expect(formatRippleMv(x / 100)).toBe(showRipple(x / 100)!.text);
        const d = showDraw(x / 20)!;
        expect(formatDrawMa(x / 20)).toBe(d.unit === 'A' ? `${d.text} A` : d.text);
      }),
    );
  });

  it('judges a limit on the value shown: a drop shown as 0.20 V is at the 0.20 V limit, not over it', () => {
    const shown = showVolts(0.2049)!;
    expect(shown.value).toBe(0.2);
    expect(shown.value <= 0.2).toBe(true);
    expect(sameShown({ value: 0.2, unit: 'V' }, shown)).toBe(true);
    expect(sameShown({ value: 0.19, unit: 'V' }, shown)).toBe(false);
    expect(sameShown({ value: 200, unit: 'mV' }, shown)).toBe(false);
  });

  it('writes a value with its unit for the result page and the replay', () => {
    expect(shownWithUnit(14.2, 'V')).toBe('14.20 V');
    expect(shownWithUnit(180, 'A')).toBe('180 A');
    expect(shownWithUnit(99.9, 'A')).toBe('99.9 A');
    expect(shownWithUnit(1234, 'mV')).toBe('1,234 mV');
    expect(shownWithUnit(25, 'mA')).toBe('25 mA');
  });
});

describe('grouping digits in threes', () => {
  it('writes every whole number as toLocaleString(\'en-US\') does, and leaves fractions to it', () => {
    // The en-US convention (common practice, no source): commas every three digits, a hyphen-minus.
    expect(groupThousands(0)).toBe('0');
    expect(groupThousands(999)).toBe('999');
    expect(groupThousands(1000)).toBe('1,000');
    expect(groupThousands(-1234567)).toBe('-1,234,567');
    expect(groupThousands(1234.5)).toBe((1234.5).toLocaleString('en-US'));
    fc.assert(
      fc.property(fc.integer({ min: -1e12, max: 1e12 }).filter((n) => !Object.is(n, -0)), (n) => groupThousands(n) === n.toLocaleString('en-US')),
      { numRuns: 2000 },
    );
  });
});
