/**
 * Logarithm and exponential that give the same bits in every JavaScript engine.
 *
 * `Math.log` and `Math.exp` are only required to be "implementation-approximated": V8 in one
 * Chromium and V8 in one Node.js release round a few inputs differently in the last bit. A
 * record made in the browser and re-checked by `polyadic verify` in Node must reproduce to the
 * bit, so every entropy goes through these functions instead. They use only IEEE-754 double
 * arithmetic (+, −, ×, ÷ with round-to-nearest, which JavaScript guarantees and never fuses)
 * and exact bit manipulation, so their result is fixed by the input alone.
 *
 * The algorithms and coefficients are those of the freely distributable fdlibm 5.3 (Sun
 * Microsystems, 1993), `e_log.c` and `e_exp.c`: argument reduction by powers of two and
 * multiples of ln 2, then a minimax polynomial; error below 1 ulp. The coefficients below were
 * written from memory and are checked by the tests against the platform's `Math.log` and
 * `Math.exp` (agreement within 1 ulp over many inputs), which a wrong digit would break.
 */

namespace Private {
  /** Scratch memory to read and write the two 32-bit words of a double. */
  const buffer = new ArrayBuffer(8);
  export const f64 = new Float64Array(buffer);
  export const u32 = new Uint32Array(buffer);
  /** Index of the high word (sign, exponent, top of the mantissa) in `u32`. */
  export const HI = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1 ? 1 : 0;
  export const LO = 1 - HI;
}

const LN2_HI = 6.93147180369123816490e-1; // 0x3FE62E42 FEE00000
const LN2_LO = 1.90821492927058770002e-10; // 0x3DEA39EF 35793C76
const TWO54 = 1.8014398509481984e16;
const LG1 = 6.666666666666735130e-1;
const LG2 = 3.999999999940941908e-1;
const LG3 = 2.857142874366239149e-1;
const LG4 = 2.222219843214978396e-1;
const LG5 = 1.818357216161805012e-1;
const LG6 = 1.531383769920937332e-1;
const LG7 = 1.479819860511658591e-1;

/** Natural logarithm, the same bits on every engine (fdlibm `__ieee754_log`). */
export function ln(x: number): number {
  const { f64, u32, HI, LO } = Private;
  f64[0] = x;
  let hx = u32[HI] | 0;
  const lx = u32[LO];
  let k = 0;
  if (hx < 0x00100000) {
    if (((hx & 0x7fffffff) | lx) === 0) {
      return -Infinity;
    }
    if (hx < 0) {
      return NaN;
    }
    // Subnormal: scale into the normal range.
    k -= 54;
    x *= TWO54;
    f64[0] = x;
    hx = u32[HI] | 0;
  }
  if (hx >= 0x7ff00000) {
    return x + x;
  }
  k += (hx >> 20) - 1023;
  hx &= 0x000fffff;
  const i = (hx + 0x95f64) & 0x100000;
  // Normalise x to [sqrt(2)/2, sqrt(2)).
  u32[HI] = hx | (i ^ 0x3ff00000);
  x = f64[0];
  k += i >> 20;
  const f = x - 1.0;
  const dk = k;
  if ((0x000fffff & (2 + hx)) < 3) {
    // |f| < 2^-20
    if (f === 0) {
      return k === 0 ? 0 : dk * LN2_HI + dk * LN2_LO;
    }
    const R = f * f * (0.5 - 0.33333333333333333 * f);
    return k === 0 ? f - R : dk * LN2_HI - (R - dk * LN2_LO - f);
  }
  const s = f / (2.0 + f);
  const z = s * s;
  let i2 = hx - 0x6147a;
  const w = z * z;
  const j = 0x6b851 - hx;
  const t1 = w * (LG2 + w * (LG4 + w * LG6));
  const t2 = z * (LG1 + w * (LG3 + w * (LG5 + w * LG7)));
  i2 |= j;
  const R = t2 + t1;
  if (i2 > 0) {
    const hfsq = 0.5 * f * f;
    return k === 0 ? f - (hfsq - s * (hfsq + R)) : dk * LN2_HI - (hfsq - (s * (hfsq + R) + dk * LN2_LO) - f);
  }
  return k === 0 ? f - s * (f - R) : dk * LN2_HI - (s * (f - R) - dk * LN2_LO - f);
}

const INV_LN2 = 1.44269504088896338700;
const P1 = 1.66666666666666019037e-1;
const P2 = -2.77777777770155933842e-3;
const P3 = 6.61375632143793436117e-5;
const P4 = -1.65339022054652515390e-6;
const P5 = 4.13813679705723846039e-8;
const EXP_OVERFLOW = 7.09782712893383973096e2;
const EXP_UNDERFLOW = -7.45133219101941108420e2;

/** e^x, the same bits on every engine (fdlibm `__ieee754_exp`). */
export function exp(x: number): number {
  if (Number.isNaN(x)) {
    return x;
  }
  if (x > EXP_OVERFLOW) {
    return Infinity;
  }
  if (x < EXP_UNDERFLOW) {
    return 0;
  }
  const ax = Math.abs(x);
  let hi = 0;
  let lo = 0;
  let k = 0;
  if (ax > 0.5 * Math.LN2) {
    // Reduce: x = k·ln2 + r, |r| ≤ ln2/2.
    if (ax < 1.5 * Math.LN2) {
      k = x < 0 ? -1 : 1;
    } else {
      k = Math.trunc(INV_LN2 * x + (x < 0 ? -0.5 : 0.5));
    }
    hi = x - k * LN2_HI;
    lo = k * LN2_LO;
    x = hi - lo;
  } else if (ax < 3.725290298461914e-9) {
    // |x| < 2^-28: e^x rounds to 1 + x.
    return 1 + x;
  }
  const t = x * x;
  const c = x - t * (P1 + t * (P2 + t * (P3 + t * (P4 + t * P5))));
  if (k === 0) {
    return 1 - ((x * c) / (c - 2.0) - x);
  }
  const y = 1 - (lo - (x * c) / (2.0 - c) - hi);
  return scaleByPowerOfTwo(y, k);
}

/** y·2^k for y in [0.5, 2] and k of a double's exponent range, exactly where representable. */
function scaleByPowerOfTwo(y: number, k: number): number {
  // Two steps keep each factor a normal double even when k is near the range's ends.
  const half = k >> 1;
  return y * powerOfTwo(half) * powerOfTwo(k - half);
}

/** 2^k exactly, for −1022 ≤ k ≤ 1023. */
function powerOfTwo(k: number): number {
  const { f64, u32, HI, LO } = Private;
  u32[HI] = (k + 1023) << 20;
  u32[LO] = 0;
  return f64[0];
}

/**
 * ln(1 + x) for x > −1, accurate for small |x| (Goldberg 1991, "What every computer scientist
 * should know about floating-point arithmetic", Theorem 4), built on {@link ln}.
 */
export function log1p(x: number): number {
  const u = 1 + x;
  if (u === 1) {
    return x;
  }
  return (ln(u) * x) / (u - 1);
}

/** e^x − 1, accurate for small |x| (the same device as {@link log1p}), built on {@link exp}. */
export function expm1(x: number): number {
  const u = exp(x);
  if (u === 1) {
    return x;
  }
  const um1 = u - 1;
  if (um1 === -1) {
    return -1;
  }
  return (um1 * x) / ln(u);
}
