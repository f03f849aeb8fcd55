/**
 * Entropy of a Gaussian from its covariance, in nats: H = ½ ln((2πe)^k |Σ|) (Cover & Thomas,
 * "Elements of Information Theory", 2nd ed., Theorem 8.4.1), with the analytic bias correction
 * for a covariance estimated from N rows (Ince et al. 2017, Human Brain Mapping 38:1541–1573).
 */

import { PolyadicError } from '../errors';
import { ln } from '../detmath';
import { digamma } from './special';

/** ln(2πe): the entropy of a standard normal, doubled, in nats. */
export const LN_TWO_PI_E = ln(2 * Math.PI) + 1;

/**
 * A log-determinant step below this share of the new column's variance counts as singular: the
 * new column is (up to rounding) a linear combination of the others (our tolerance, no source).
 */
export const SINGULAR_TOLERANCE = 1e-12;

/**
 * Covariance matrix (n × n, row-major) of columns of equal length, with the unbiased 1/(N − 1)
 * normalisation (numpy.cov's default). Each entry sums over the rows in row order from the two
 * columns alone, so any selection of columns gets the same bits for the same pair.
 */
export function covarianceMatrix(columns: Float64Array[]): Float64Array {
  const n = columns.length;
  const rows = n > 0 ? columns[0].length : 0;
  const centred = columns.map(column => {
    let sum = 0;
    for (let i = 0; i < rows; i++) {
      sum += column[i];
    }
    const mean = sum / rows;
    const out = new Float64Array(rows);
    for (let i = 0; i < rows; i++) {
      out[i] = column[i] - mean;
    }
    return out;
  });
  const cov = new Float64Array(n * n);
  const scale = 1 / (rows - 1);
  for (let a = 0; a < n; a++) {
    const x = centred[a];
    for (let b = a; b < n; b++) {
      const y = centred[b];
      let sum = 0;
      for (let i = 0; i < rows; i++) {
        sum += x[i] * y[i];
      }
      cov[a * n + b] = cov[b * n + a] = sum * scale;
    }
  }
  return cov;
}

/**
 * The bias of the plug-in Gaussian entropy of k dimensions from N rows, E[Ĥ] − H, in nats:
 * k/2 · (ln 2 − ln(N − 1)) + ½ Σ_{i=1..k} ψ((N − i)/2). It follows from the expected log-
 * determinant of a Wishart matrix, E ln|S| = ln|Σ| + Σ ψ((N − i)/2) + k ln(2/(N − 1)) for the
 * 1/(N − 1) sample covariance S; Ince et al. (2017) subtract exactly these terms. Written from
 * memory of that paper and checked by the 500-sample test in test/engine/copula.spec.ts.
 * Needs N > k.
 */
export function gaussianEntropyBias(k: number, rows: number): number {
  if (!(rows > k)) {
    throw new PolyadicError('internal', `The Gaussian entropy bias needs more rows (${rows}) than dimensions (${k}).`);
  }
  let psi = 0;
  for (let i = 1; i <= k; i++) {
    psi += digamma((rows - i) / 2);
  }
  return (k * (Math.LN2 - ln(rows - 1))) / 2 + psi / 2;
}

/**
 * Per order k = 0 … maxOrder, the constant that turns ½ ln|Σ| into the entropy:
 * k/2 · ln(2πe), minus the bias when `rows` is given.
 */
export function entropyOffsets(maxOrder: number, rows: number | null): Float64Array {
  const offsets = new Float64Array(maxOrder + 1);
  for (let k = 1; k <= maxOrder; k++) {
    offsets[k] = (k * LN_TWO_PI_E) / 2 - (rows === null ? 0 : gaussianEntropyBias(k, rows));
  }
  return offsets;
}

/**
 * ln|Σ| of a k × k covariance (row-major) by its Cholesky factor; −∞ when it is singular within
 * {@link SINGULAR_TOLERANCE}.
 */
export function logDeterminant(cov: ArrayLike<number>, k: number): number {
  const L = new Float64Array(k * k);
  let total = 0;
  for (let j = 0; j < k; j++) {
    for (let t = 0; t < j; t++) {
      let s = cov[j * k + t];
      for (let u = 0; u < t; u++) {
        s -= L[j * k + u] * L[t * k + u];
      }
      L[j * k + t] = s / L[t * k + t];
    }
    let d2 = cov[j * k + j];
    for (let u = 0; u < j; u++) {
      d2 -= L[j * k + u] * L[j * k + u];
    }
    if (!(d2 > SINGULAR_TOLERANCE * cov[j * k + j])) {
      return -Infinity;
    }
    L[j * k + j] = Math.sqrt(d2);
    total += ln(d2);
  }
  return total;
}

/**
 * Entropy in nats of a k-dimensional Gaussian with covariance `cov` (row-major): ½ (k ln(2πe) +
 * ln|Σ|); with `rows`, the covariance is taken as estimated from that many rows and the bias
 * ({@link gaussianEntropyBias}) is subtracted.
 */
export function gaussianEntropy(cov: ArrayLike<number>, k: number, rows?: number): number {
  const bias = rows === undefined ? 0 : gaussianEntropyBias(k, rows);
  return (k * LN_TWO_PI_E + logDeterminant(cov, k)) / 2 - bias;
}
