/**
 * Optimal one-dimensional k-means by dynamic programming (Wang & Song 2011, "Ckmeans.1d.dp:
 * optimal k-means clustering in one dimension by dynamic programming", The R Journal 3(2)).
 *
 * In one dimension an optimal clustering is a partition of the sorted values into contiguous
 * runs, so D[l][i], the least within-cluster sum of squares of the first i+1 distinct values in
 * l+1 clusters, obeys D[l][i] = min_j D[l−1][j−1] + cost(j, i). The smallest optimal j is
 * non-decreasing in i (the cost satisfies the quadrangle inequality), so each layer is filled by
 * divide and conquer over i in O(m log m) instead of O(m²): O(k · m log m) in all for m distinct
 * values.
 */

/** An optimal partition of sorted distinct values into contiguous clusters. */
export interface IKMeansPartition {
  /** Cluster c holds distinct values `starts[c]` … `starts[c + 1] − 1`; last entry is m. */
  starts: Int32Array;
  /** Weighted within-cluster sum of squared deviations of the optimum. */
  cost: number;
}

/**
 * Partition `values` (sorted ascending, distinct), each with a positive `weights` entry (its
 * number of rows), into `k` contiguous clusters with the least weighted sum of squares.
 * `k` must lie in 1 … values.length.
 */
export function optimalKMeans1D(values: Float64Array, weights: Float64Array, k: number): IKMeansPartition {
  const m = values.length;
  const costs = new Private.RunCosts(values, weights);
  let previous = new Float64Array(m);
  let current = new Float64Array(m);
  const split = new Int32Array(k * m);
  for (let i = 0; i < m; i++) {
    previous[i] = costs.cost(0, i);
  }
  for (let layer = 1; layer < k; layer++) {
    current.fill(Infinity);
    Private.fillLayer(costs, previous, current, split, layer * m, layer, m - 1, layer, m - 1);
    [previous, current] = [current, previous];
  }
  const starts = new Int32Array(k + 1);
  starts[k] = m;
  let end = m - 1;
  for (let layer = k - 1; layer > 0; layer--) {
    const start = split[layer * m + end];
    starts[layer] = start;
    end = start - 1;
  }
  starts[0] = 0;
  return { starts, cost: previous[m - 1] };
}

namespace Private {
  /** Within-cluster sums of squares of runs of values, from prefix sums of shifted values. */
  export class RunCosts {
    constructor(values: Float64Array, weights: Float64Array) {
      const m = values.length;
      // Shifting by the weighted mean keeps the prefix sums small, so the subtraction
      // q − s²/w loses few digits.
      let total = 0;
      let sum = 0;
      for (let i = 0; i < m; i++) {
        total += weights[i];
        sum += weights[i] * values[i];
      }
      const shift = sum / total;
      this._w = new Float64Array(m + 1);
      this._s = new Float64Array(m + 1);
      this._q = new Float64Array(m + 1);
      for (let i = 0; i < m; i++) {
        const y = values[i] - shift;
        const w = weights[i];
        this._w[i + 1] = this._w[i] + w;
        this._s[i + 1] = this._s[i] + w * y;
        this._q[i + 1] = this._q[i] + w * y * y;
      }
    }

    /** Weighted sum of squared deviations from their mean of values first … last. */
    cost(first: number, last: number): number {
      const w = this._w[last + 1] - this._w[first];
      const s = this._s[last + 1] - this._s[first];
      const q = this._q[last + 1] - this._q[first];
      const c = q - (s * s) / w;
      return c > 0 ? c : 0;
    }

    private _w: Float64Array;
    private _s: Float64Array;
    private _q: Float64Array;
  }

  /**
   * Fill `current[lo … hi]` of one layer, knowing that the optimal first index of the last
   * cluster lies in `jLo … jHi` for all of them. Records the optimal index in `split`.
   */
  export function fillLayer(
    costs: RunCosts,
    previous: Float64Array,
    current: Float64Array,
    split: Int32Array,
    offset: number,
    lo: number,
    hi: number,
    jLo: number,
    jHi: number
  ): void {
    if (lo > hi) {
      return;
    }
    const mid = (lo + hi) >>> 1;
    let best = Infinity;
    let bestJ = jLo;
    const last = Math.min(mid, jHi);
    for (let j = jLo; j <= last; j++) {
      const value = previous[j - 1] + costs.cost(j, mid);
      if (value < best) {
        best = value;
        bestJ = j;
      }
    }
    current[mid] = best;
    split[offset + mid] = bestJ;
    fillLayer(costs, previous, current, split, offset, lo, mid - 1, jLo, bestJ);
    fillLayer(costs, previous, current, split, offset, mid + 1, hi, bestJ, jHi);
  }
}
