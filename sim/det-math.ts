/**
 * Elementary functions built from + - * / only, so that every JavaScript
 * engine gives the same bits. ECMAScript fixes the basic operations and
 * Math.sqrt to IEEE-754, but leaves Math.exp, Math.log1p, Math.tanh, Math.sin
 * and friends "implementation-approximated": two browsers may differ in the
 * last bit, and a replay verified on the server could drift from the bench.
 * These are accurate to about 1e-16 relative (not always correctly rounded:
 * what matters here is that they are the same everywhere).
 */

const LN2_HI = 6.93147180369123816490e-1;
const LN2_LO = 1.90821492927058770002e-10;
const INV_LN2 = 1.44269504088896338700;

/**
 * One double seen as two 32-bit words, for taking an exponent apart. Typed
 * arrays use the platform's byte order, so the high word's index is found
 * once here (DataView does the same with a fixed order, but far more slowly).
 */
const wordsF64 = new Float64Array(1);
const wordsU32 = new Uint32Array(wordsF64.buffer);
const HIGH_WORD = (() => {
  wordsF64[0] = 2; // 0x40000000_00000000: only the high word is non-zero.
  return wordsU32[0] === 0 ? 1 : 0;
})();

/** 2^k for k = -1022..1023 (index k + 1022), built by exact doublings. */
const POW2 = (() => {
  const t = new Float64Array(2046);
  t[1022] = 1;
  for (let k = 1; k <= 1023; k++) t[1022 + k] = t[1022 + k - 1]! * 2;
  for (let k = -1; k >= -1022; k--) t[1022 + k] = t[1022 + k + 1]! / 2;
  return t;
})();

function pow2(k: number): number {
  return POW2[k + 1022]!;
}

/** 1/n! for the exponential's series. */
const C2 = 1 / 2;
const C3 = 1 / 6;
const C4 = 1 / 24;
const C5 = 1 / 120;
const C6 = 1 / 720;
const C7 = 1 / 5040;
const C8 = 1 / 40320;
const C9 = 1 / 362880;
const C10 = 1 / 3628800;
const C11 = 1 / 39916800;
const C12 = 1 / 479001600;
const C13 = 1 / 6227020800;
const C14 = 1 / 87178291200;

/** e^r - 1 for |r| <= 0.35 by its Taylor series (Horner), below 1e-17 relative. */
function expm1Reduced(r: number): number {
  let p = C14;
  p = C13 + r * p;
  p = C12 + r * p;
  p = C11 + r * p;
  p = C10 + r * p;
  p = C9 + r * p;
  p = C8 + r * p;
  p = C7 + r * p;
  p = C6 + r * p;
  p = C5 + r * p;
  p = C4 + r * p;
  p = C3 + r * p;
  p = C2 + r * p;
  p = 1 + r * p;
  return r * p;
}

/** e^x. */
export function detExp(x: number): number {
  if (x !== x) return x;
  if (x > 709.78) return Infinity;
  if (x < -745.2) return 0;
  const k = Math.round(x * INV_LN2);
  // Cody–Waite reduction: r = x - k ln 2 in two parts, |r| <= 0.35.
  const r = x - k * LN2_HI - k * LN2_LO;
  const sum = 1 + expm1Reduced(r);
  if (k > 1023) return sum * pow2(1023) * pow2(k - 1023);
  if (k < -1022) return sum * pow2(-1022) * pow2(k + 1022);
  return sum * pow2(k);
}

/** e^x - 1, accurate near 0. */
export function detExpm1(x: number): number {
  if (x > -0.35 && x < 0.35) return expm1Reduced(x);
  return detExp(x) - 1;
}

const SQRT_HALF = 0.7071067811865476;

/** Natural log for x > 0. */
export function detLog(x: number): number {
  if (x !== x || x < 0) return NaN;
  if (x === 0) return -Infinity;
  if (x === Infinity) return Infinity;
  let y = x;
  let e = 0;
  // Bring subnormals into the normal range first.
  if (y < 2.2250738585072014e-308) {
    y *= 18014398509481984; // 2^54
    e -= 54;
  }
  wordsF64[0] = y;
  const biased = (wordsU32[HIGH_WORD]! >>> 20) & 0x7ff;
  e += biased - 1023;
  // Mantissa in [1, 2): y times 2^-(its exponent), exact since only the
  // exponent changes (the same bits as rewriting the exponent field, without
  // a store and reload of half a double). 2^-1023 is below the table, so the
  // top binade is halved first, also exactly.
  let m = biased === 2046 ? y * 0.5 * pow2(-1022) : y * pow2(1023 - biased);
  if (m > 2 * SQRT_HALF) {
    m /= 2;
    e += 1;
  }
  // log m = 2 atanh(s), s = (m - 1)/(m + 1), |s| <= 0.1716. (Kept a loop:
  // written out, the function grows past what the compiler will inline.)
  const s = (m - 1) / (m + 1);
  const s2 = s * s;
  let term = s;
  let sum = s;
  for (let n = 3; n <= 23; n += 2) {
    term *= s2;
    sum += term / n;
  }
  return 2 * sum + e * LN2_LO + e * LN2_HI;
}

/** log(1 + x) for x > -1, accurate for small x too. */
export function detLog1p(x: number): number {
  if (x !== x) return x;
  const ax = x < 0 ? -x : x;
  if (ax < 1e-4) {
    // x - x^2/2 + x^3/3 - x^4/4 + x^5/5
    return x * (1 - x * (0.5 - x * (1 / 3 - x * (0.25 - x * 0.2))));
  }
  const u = 1 + x;
  // Correct for the rounding of 1 + x (Goldberg's trick).
  return (detLog(u) * x) / (u - 1);
}

/** Hyperbolic tangent: -expm1(-2|x|) / (2 + expm1(-2|x|)), no cancellation near 0. */
export function detTanh(x: number): number {
  if (x !== x) return x;
  const ax = x < 0 ? -x : x;
  if (ax > 20) return x < 0 ? -1 : 1;
  const m = detExpm1(-2 * ax);
  const t = -m / (2 + m);
  return x < 0 ? -t : t;
}

const HALF_PI_HI = 1.5707963267341256;
const HALF_PI_LO = 6.077100506506192e-11;
const INV_HALF_PI = 0.6366197723675814;

function sinPoly(r: number): number {
  const r2 = r * r;
  let term = r;
  let sum = r;
  for (let n = 2; n <= 20; n += 2) {
    term = (-term * r2) / (n * (n + 1));
    sum += term;
  }
  return sum;
}

function cosPoly(r: number): number {
  const r2 = r * r;
  let term = 1;
  let sum = 1;
  for (let n = 1; n <= 19; n += 2) {
    term = (-term * r2) / (n * (n + 1));
    sum += term;
  }
  return sum;
}

/** sin x for moderate |x| (the model only asks within a few turns). */
export function detSin(x: number): number {
  const k = Math.round(x * INV_HALF_PI);
  const r = x - k * HALF_PI_HI - k * HALF_PI_LO;
  switch (((k % 4) + 4) % 4) {
    case 0:
      return sinPoly(r);
    case 1:
      return cosPoly(r);
    case 2:
      return -sinPoly(r);
    default:
      return -cosPoly(r);
  }
}

/** cos x for moderate |x|. */
export function detCos(x: number): number {
  const k = Math.round(x * INV_HALF_PI);
  const r = x - k * HALF_PI_HI - k * HALF_PI_LO;
  switch (((k % 4) + 4) % 4) {
    case 0:
      return cosPoly(r);
    case 1:
      return -sinPoly(r);
    case 2:
      return -cosPoly(r);
    default:
      return sinPoly(r);
  }
}
