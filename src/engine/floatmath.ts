/**
 * Floating-point helpers that reproduce numpy's arithmetic closely enough for the binning to give
 * the same edges as `numpy.histogram_bin_edges` and `numpy.quantile`.
 *
 * Why this file exists: a bin count such as `ceil(ptp / width)` sits exactly on an integer for
 * "nice" data (a perfect-cube row count under `rice`, a power of two under `sturges`), and there
 * one unit in the last place decides the count. So sums follow numpy's pairwise order, and the
 * few transcendental calls (log2, cube roots, powers) are correctly rounded: V8's `Math.pow` and
 * `Math.log2` are not, while the C library numpy calls is correctly rounded in all but a few
 * cases. The correctly rounded versions compute in double-double arithmetic (Dekker 1971,
 * "A floating-point technique for extending the available precision", Numer. Math. 18) and round
 * once. The starting guess of the logarithm is detmath's engine-independent `ln`.
 */

import { ln } from './detmath';

/** Rows per block of numpy's pairwise summation (`PW_BLOCKSIZE` in numpy's loops). */
const PAIRWISE_BLOCK = 128;

/** Elements per chunk when numpy sums through a casting buffer (its default buffer size). */
const CAST_BUFFER = 8192;

/**
 * Sum `n` values starting at `start` in numpy's pairwise order: eight running accumulators over
 * blocks of at most 128 values, and halving (at a multiple of eight) above that.
 */
export function pairwiseSum(values: ArrayLike<number>, start: number, n: number): number {
  if (n < 8) {
    let sum = 0;
    for (let i = 0; i < n; i++) {
      sum += values[start + i];
    }
    return sum;
  }
  if (n <= PAIRWISE_BLOCK) {
    let r0 = values[start];
    let r1 = values[start + 1];
    let r2 = values[start + 2];
    let r3 = values[start + 3];
    let r4 = values[start + 4];
    let r5 = values[start + 5];
    let r6 = values[start + 6];
    let r7 = values[start + 7];
    const whole = n - (n % 8);
    let i = 8;
    for (; i < whole; i += 8) {
      const at = start + i;
      r0 += values[at];
      r1 += values[at + 1];
      r2 += values[at + 2];
      r3 += values[at + 3];
      r4 += values[at + 4];
      r5 += values[at + 5];
      r6 += values[at + 6];
      r7 += values[at + 7];
    }
    let sum = r0 + r1 + (r2 + r3) + (r4 + r5 + (r6 + r7));
    for (; i < n; i++) {
      sum += values[start + i];
    }
    return sum;
  }
  let half = Math.floor(n / 2);
  half -= half % 8;
  return pairwiseSum(values, start, half) + pairwiseSum(values, start + half, n - half);
}

/**
 * `numpy.sum` of a float64 array. Integer arrays summed as float64 (as `numpy.mean` and
 * `numpy.std` do) pass through numpy's casting buffer, which sums in chunks of 8192: set
 * `fromIntegers` for them. Checked against numpy 2.4 on random arrays during development.
 */
export function numpySum(values: ArrayLike<number>, fromIntegers = false): number {
  const n = values.length;
  if (!fromIntegers) {
    return 0 + pairwiseSum(values, 0, n);
  }
  let sum = 0;
  for (let start = 0; start < n; start += CAST_BUFFER) {
    sum += pairwiseSum(values, start, Math.min(CAST_BUFFER, n - start));
  }
  return sum;
}

/** `numpy.mean` of the values (see {@link numpySum} for `fromIntegers`). */
export function numpyMean(values: ArrayLike<number>, fromIntegers = false): number {
  return numpySum(values, fromIntegers) / values.length;
}

/**
 * `numpy.std` (population, ddof 0): the mean, the squared deviations, their pairwise sum over n,
 * and the square root, in numpy's order. Returns the deviations too, for Doane's skewness.
 */
export function numpyStd(
  values: ArrayLike<number>,
  fromIntegers = false
): { std: number; mean: number; deviations: Float64Array } {
  const n = values.length;
  const mean = numpyMean(values, fromIntegers);
  const deviations = new Float64Array(n);
  const squares = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const d = values[i] - mean;
    deviations[i] = d;
    squares[i] = d * d;
  }
  return { std: Math.sqrt(numpySum(squares) / n), mean, deviations };
}

/**
 * `numpy.linspace(start, stop, count)` for float64: `i * step + start` with `step = (stop −
 * start) / (count − 1)`, the last value set to `stop`, and numpy's fallback `(i / div) * delta`
 * when the step underflows to zero.
 */
export function linspace(start: number, stop: number, count: number): number[] {
  const out = new Array<number>(count);
  const div = count - 1;
  const delta = stop - start;
  if (div > 0) {
    const step = delta / div;
    for (let i = 0; i < count; i++) {
      out[i] = (step === 0 ? (i / div) * delta : i * step) + start;
    }
    out[count - 1] = stop;
  } else if (count === 1) {
    out[0] = 0 * delta + start;
  }
  return out;
}

/**
 * `numpy.quantile(x, q)` with the default 'linear' method, on values already sorted ascending:
 * virtual index `(n − 1) · q`, its floor and the next index (both the last element at or past
 * the end), and numpy's two-sided interpolation `a + (b − a)·t` for t < 0.5, `b − (b − a)·(1 − t)`
 * otherwise.
 */
export function quantileSorted(sorted: ArrayLike<number>, q: number): number {
  return quantileAt(sorted.length, q, rank => sorted[rank]);
}

/**
 * The ranks (0-based, ascending order) that `numpy.quantile(x, q)` reads of n sorted values:
 * the floor of the virtual index and the next one (see {@link quantileSorted}).
 */
export function quantileRanks(n: number, q: number): [number, number] {
  const virtual = (n - 1) * q;
  if (virtual >= n - 1) {
    return [n - 1, n - 1];
  }
  if (virtual < 0) {
    return [0, 0];
  }
  const below = Math.floor(virtual);
  return [below, below + 1];
}

/**
 * {@link quantileSorted} over n values known only by rank: `valueAt(rank)` is the rank-th
 * smallest (an order statistic an engine such as DuckDB computed exactly).
 */
export function quantileAt(n: number, q: number, valueAt: (rank: number) => number): number {
  const [below, above] = quantileRanks(n, q);
  const virtual = (n - 1) * q;
  const gamma = virtual - Math.floor(virtual);
  const a = valueAt(below);
  const b = valueAt(above);
  const diff = b - a;
  return gamma >= 0.5 ? b - diff * (1 - gamma) : a + diff * gamma;
}

// ---------------------------------------------------------------------------------------------
// Double-double arithmetic: a value is hi + lo with |lo| ≤ ulp(hi) / 2.

/** A double-double number. */
interface IDD {
  hi: number;
  lo: number;
}

/** Veltkamp's splitting constant 2^27 + 1. */
const SPLITTER = 134217729;

/** ln 2 as a double-double (hi is `Math.LN2`). */
const LN2: IDD = { hi: 0.6931471805599453, lo: 2.3190468138462996e-17 };

/** Exact sum of two doubles (Knuth's TwoSum). */
function twoSum(a: number, b: number): IDD {
  const s = a + b;
  const bb = s - a;
  const e = a - (s - bb) + (b - bb);
  return { hi: s, lo: e };
}

/** Exact product of two doubles (Dekker's TwoProduct with Veltkamp splitting). */
function twoProd(a: number, b: number): IDD {
  const p = a * b;
  let t = SPLITTER * a;
  const aHi = t - (t - a);
  const aLo = a - aHi;
  t = SPLITTER * b;
  const bHi = t - (t - b);
  const bLo = b - bHi;
  const e = aHi * bHi - p + aHi * bLo + aLo * bHi + aLo * bLo;
  return { hi: p, lo: e };
}

/** Renormalise so that hi is the double nearest to hi + lo. */
function renorm(hi: number, lo: number): IDD {
  const s = hi + lo;
  return { hi: s, lo: lo - (s - hi) };
}

function ddAdd(a: IDD, b: IDD): IDD {
  const s = twoSum(a.hi, b.hi);
  const t = twoSum(a.lo, b.lo);
  let r = renorm(s.hi, s.lo + t.hi);
  r = renorm(r.hi, r.lo + t.lo);
  return r;
}

function ddMul(a: IDD, b: IDD): IDD {
  const p = twoProd(a.hi, b.hi);
  return renorm(p.hi, p.lo + (a.hi * b.lo + a.lo * b.hi));
}

function ddMulNumber(a: IDD, b: number): IDD {
  const p = twoProd(a.hi, b);
  return renorm(p.hi, p.lo + a.lo * b);
}

function ddDiv(a: IDD, b: IDD): IDD {
  const q1 = a.hi / b.hi;
  let r = ddAdd(a, ddMulNumber(b, -q1));
  const q2 = r.hi / b.hi;
  r = ddAdd(r, ddMulNumber(b, -q2));
  const q3 = r.hi / b.hi;
  return ddAdd(renorm(q1, q2), { hi: q3, lo: 0 });
}

/** e^a in double-double, for |a| well inside the double range. */
function ddExp(a: IDD): IDD {
  const k = Math.round(a.hi / LN2.hi);
  // r = (a − k·ln2) / 1024, so the series converges in a few terms; then square back ten times.
  const r0 = ddAdd(a, ddMulNumber(LN2, -k));
  const r: IDD = { hi: r0.hi / 1024, lo: r0.lo / 1024 };
  // s = e^r − 1 by Taylor series: r + r²/2! + …
  let term = r;
  let s = r;
  for (let i = 2; i <= 12; i++) {
    term = ddMulNumber(ddMul(term, r), 1 / i);
    // 1/i is inexact for most i; the error it adds is below 2^-53 of a term that is itself
    // below 2^-20 of s, far under the double-double precision needed.
    s = ddAdd(s, term);
    if (Math.abs(term.hi) < 1e-36) {
      break;
    }
  }
  // (1 + s)² − 1 = 2s + s², ten times.
  for (let i = 0; i < 10; i++) {
    s = ddAdd(ddMulNumber(s, 2), ddMul(s, s));
  }
  const one = ddAdd({ hi: 1, lo: 0 }, s);
  const scale = powerOfTwo(k);
  return { hi: one.hi * scale, lo: one.lo * scale };
}

/** 2^k exactly, for an integer k of a normal double's exponent range. */
function powerOfTwo(k: number): number {
  Private.BITS.setUint32(0, (k + 1023) << 20);
  Private.BITS.setUint32(4, 0);
  return Private.BITS.getFloat64(0);
}

/** ln x in double-double for a positive finite x: two Newton steps on e^y = x. */
function ddLog(x: number): IDD {
  let y: IDD = { hi: ln(x), lo: 0 };
  for (let step = 0; step < 2; step++) {
    const e = ddExp({ hi: -y.hi, lo: -y.lo });
    const t = ddMulNumber(e, x);
    y = ddAdd(y, ddAdd(t, { hi: -1, lo: 0 }));
  }
  return y;
}

/** log2 x, correctly rounded (but for ties far rarer than any data set will meet). */
export function log2Rounded(x: number): number {
  if (!(x > 0) || !Number.isFinite(x)) {
    return Math.log2(x);
  }
  return ddDiv(ddLog(x), LN2).hi;
}

/** a^b for a > 0, correctly rounded in the same sense as {@link log2Rounded}. */
export function powRounded(a: number, b: number): number {
  if (!(a > 0) || !Number.isFinite(a) || !Number.isFinite(b)) {
    return Math.pow(a, b);
  }
  if (b === 0 || a === 1) {
    return 1;
  }
  const exponent = ddMulNumber(ddLog(a), b);
  if (Math.abs(exponent.hi) > 700) {
    return Math.pow(a, b);
  }
  return ddExp(exponent).hi;
}

/** t³ rounded once from its exact value (numpy's `power(t, 3)`; see the file comment). */
export function cubeRounded(t: number): number {
  const square = twoProd(t, t);
  const high = twoProd(square.hi, t);
  const low = twoProd(square.lo, t);
  const tail = twoSum(high.lo, low.hi);
  return renorm(high.hi, tail.hi + (tail.lo + low.lo)).hi;
}

namespace Private {
  /** Scratch view to assemble a double from its bits. */
  export const BITS = new DataView(new ArrayBuffer(8));
}
