/**
 * The model's own elementary functions: close to the engine's Math.*, and
 * built from IEEE-754 basic operations only, so their bits are the same on
 * every JavaScript engine.
 */
import { describe, expect, it } from 'vitest';
import { detCos, detExp, detExpm1, detLog, detLog1p, detSin, detTanh } from '../../sim/det-math';

function relativeError(a: number, b: number): number {
  return b === 0 ? Math.abs(a) : Math.abs(a - b) / Math.abs(b);
}

function* samples(count: number, lo: number, hi: number): Generator<number> {
  let s = 2463534242;
  for (let i = 0; i < count; i++) {
    s ^= s << 13;
    s ^= s >>> 17;
    s ^= s << 5;
    yield lo + ((s >>> 0) / 2 ** 32) * (hi - lo);
  }
}

describe('deterministic elementary functions', () => {
  it('agree with Math.* to within a few units in the last place', () => {
    for (const x of samples(20000, -700, 700)) expect(relativeError(detExp(x), Math.exp(x))).toBeLessThan(2e-15);
    for (const x of samples(20000, -0.3, 0.3)) expect(relativeError(detExpm1(x), Math.expm1(x))).toBeLessThan(2e-15);
    for (const e of samples(20000, -300, 300)) {
      const x = 10 ** e;
      expect(relativeError(detLog(x), Math.log(x))).toBeLessThan(2e-15);
    }
    for (const e of samples(20000, -20, 15)) {
      const x = 10 ** e;
      expect(relativeError(detLog1p(x), Math.log1p(x))).toBeLessThan(2e-15);
    }
    for (const x of samples(20000, -15, 15)) expect(relativeError(detTanh(x), Math.tanh(x))).toBeLessThan(2e-15);
    for (const x of samples(20000, -20, 20)) {
      expect(Math.abs(detSin(x) - Math.sin(x))).toBeLessThan(2e-15);
      expect(Math.abs(detCos(x) - Math.cos(x))).toBeLessThan(2e-15);
    }
  });

  it('handle the edges: overflow, underflow, zero, NaN', () => {
    expect(detExp(800)).toBe(Infinity);
    expect(detExp(-800)).toBe(0);
    expect(detExp(0)).toBe(1);
    expect(detLog(0)).toBe(-Infinity);
    expect(detLog(1)).toBe(0);
    expect(Number.isNaN(detLog(-1))).toBe(true);
    expect(detLog1p(0)).toBe(0);
    expect(detTanh(0)).toBe(0);
    expect(detTanh(50)).toBe(1);
    expect(detTanh(-50)).toBe(-1);
    expect(Number.isNaN(detExp(NaN))).toBe(true);
  });
});
