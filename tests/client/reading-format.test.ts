import { describe, expect, it } from 'vitest';
import {
  NO_READING,
  formatAmps,
  formatDrawMa,
  formatRippleMv,
  formatRpm,
  formatVolts,
  spokenReading,
} from '../../src/features/bench/components/reading-format.ts';
import { stripValues } from '../../src/features/bench/components/reading-strip.tsx';
import type { Readings } from '../../sim/instruments.ts';

describe('the reading strip’s numbers', () => {
  it('writes volts with two decimals and a true minus sign for reversed leads', () => {
    expect(formatVolts(12.6449)).toBe('12.64');
    expect(formatVolts(14.2)).toBe('14.20');
    expect(formatVolts(-12.61)).toBe('\u221212.61');
    expect(formatVolts(-0.001)).toBe('0.00');
    expect(formatVolts(null)).toBe(NO_READING);
    expect(formatVolts(Number.NaN)).toBe(NO_READING);
  });

  it('writes amps with one decimal below 100 A and whole amps above', () => {
    expect(formatAmps(4.26)).toBe('4.3');
    expect(formatAmps(99.94)).toBe('99.9');
    expect(formatAmps(148.6)).toBe('149');
    expect(formatAmps(-142.2)).toBe('\u2212142');
    expect(formatAmps(null)).toBe(NO_READING);
  });

  it('writes rpm in steps of ten with thousands grouped', () => {
    expect(formatRpm(1996)).toBe('2,000');
    expect(formatRpm(754)).toBe('750');
    expect(formatRpm(0)).toBe('0');
  });

  it('writes ripple in millivolts and draw in milliamps', () => {
    expect(formatRippleMv(0.0284)).toBe('28');
    expect(formatRippleMv(1.234)).toBe('1,234');
    expect(formatRippleMv(null)).toBe(NO_READING);
    expect(formatDrawMa(0.0254)).toBe('25');
    expect(formatDrawMa(0.4499)).toBe('450');
    expect(formatDrawMa(null)).toBe(NO_READING);
  });

  it('speaks readings in words', () => {
    expect(spokenReading('volts', '\u221212.61')).toBe('Voltmeter: minus 12.61 volts');
    expect(spokenReading('rpm', '2,000')).toBe('Engine: 2000 rpm');
    expect(spokenReading('amps', NO_READING)).toBe('Clamp: no reading');
  });

  it('fills the strip from one set of meter readings', () => {
    const r: Readings = {
      voltmeterV: 12.012,
      rippleVac: 0.031,
      rippleHz: 600,
      clampA: 151.4,
      tachRpm: 2003,
      ammeterA: null,
      pileA: 180,
      engine: 'running',
      engineStopCause: null,
      ammeterFuseBlown: false,
      ammeterOverRange: false,
      beltSquealing: false,
      batteryGassing: false,
      fusibleLinkOpen: false,
      pileTempC: 60,
      pileOverheated: false,
      pileHot: false,
      chargeWarning: false,
      batterySoc01: 0.8,
      simTimeS: 12,
    };
    expect(stripValues(r)).toEqual({ volts: '12.01', amps: '151', rpm: '2,000', ripple: '31', draw: NO_READING });
  });
});
