/**
 * The copula transform: each continuous column replaced by its normal scores,
 * Φ⁻¹(rank / (N + 1)), with tied values given their average rank (Ince et al. 2017, Human Brain
 * Mapping 38:1541–1573, "copula normalisation"). Only the ranks of a column enter, so the scores
 * keep every monotone dependence between columns and nothing else.
 *
 * A column travels through the engine as rank codes: code c is the c-th smallest distinct value,
 * so codes keep the order of the values and their ties. The normal scores are a function of the
 * codes alone ({@link scoresOfCodes}), which lets surrogates (codes shuffled within a column) and
 * bootstrap resamples (rows drawn with replacement, then ranked again) reuse the discrete walk's
 * plumbing unchanged.
 */

import { normalQuantile } from './special';

/** Dense rank codes of finite values: 0 for the smallest distinct value, and so on; with their count. */
export function rankCodes(values: ArrayLike<number>): { codes: Int32Array; distinct: number } {
  const n = values.length;
  const order = new Int32Array(n);
  for (let i = 0; i < n; i++) {
    order[i] = i;
  }
  // Ties keep row order (stable by index), though codes do not depend on it.
  order.sort((a, b) => values[a] - values[b] || a - b);
  const codes = new Int32Array(n);
  let distinct = 0;
  for (let t = 0; t < n; t++) {
    if (t > 0 && values[order[t]] !== values[order[t - 1]]) {
      distinct++;
    }
    codes[order[t]] = distinct;
  }
  return { codes, distinct: n > 0 ? distinct + 1 : 0 };
}

/**
 * The normal score of each code: codes with counts n_0, n_1, … get average ranks
 * r_c = n_0 + … + n_(c−1) + (n_c + 1)/2 (scipy.stats.rankdata's default, 'average'), and the
 * score Φ⁻¹(r_c / (N + 1)). Codes that no row holds get NaN (no row reads them).
 */
export function scoreTable(codes: ArrayLike<number>, bins: number): Float64Array {
  const rows = codes.length;
  const counts = new Float64Array(bins);
  for (let i = 0; i < rows; i++) {
    counts[codes[i]]++;
  }
  const table = new Float64Array(bins);
  let below = 0;
  for (let c = 0; c < bins; c++) {
    const n = counts[c];
    table[c] = n > 0 ? normalQuantile((below + (n + 1) / 2) / (rows + 1)) : NaN;
    below += n;
  }
  return table;
}

/** Average ranks 1 … N of values, ties given the mean of their ranks (scipy.stats.rankdata's default). */
export function averageRanks(values: ArrayLike<number>): Float64Array {
  const { codes, distinct } = rankCodes(values);
  const counts = new Float64Array(distinct);
  for (let i = 0; i < codes.length; i++) {
    counts[codes[i]]++;
  }
  const rankOf = new Float64Array(distinct);
  let below = 0;
  for (let c = 0; c < distinct; c++) {
    rankOf[c] = below + (counts[c] + 1) / 2;
    below += counts[c];
  }
  return Float64Array.from(codes, code => rankOf[code]);
}

/** The normal scores of a column of rank codes (see {@link scoreTable}), written into `out` when given. */
export function scoresOfCodes(codes: ArrayLike<number>, bins: number, out?: Float64Array): Float64Array {
  const table = scoreTable(codes, bins);
  const rows = codes.length;
  const scores = out ?? new Float64Array(rows);
  for (let i = 0; i < rows; i++) {
    scores[i] = table[codes[i]];
  }
  return scores;
}

/** The copula transform of finite values: Φ⁻¹(rankdata(x) / (N + 1)) with average ranks for ties. */
export function copulaNormalise(values: ArrayLike<number>): Float64Array {
  const { codes, distinct } = rankCodes(values);
  return scoresOfCodes(codes, distinct);
}
