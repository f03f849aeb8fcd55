/**
 * A lattice filled multiplet by multiplet from cell counts (what `GROUPING SETS` gives) equals
 * the walk's lattice bit for bit, for every count estimator and order, with the cells of each
 * multiplet handed over in a shuffled order.
 */
import { unsafeUniformIntDistribution, xoroshiro128plus } from 'pure-rand';

import { CellCountLattice } from '../../src/engine/aggregate/cells';
import { computeLattice } from '../../src/engine/lattice';
import type { EstimatorName } from '../../src/engine/types';

const COUNT_ESTIMATORS: EstimatorName[] = ['plugin', 'miller-madow', 'chao-shen', 'shrinkage'];

/** Seeded codes with dependence between neighbouring columns, repeats and singletons. */
function seededCodes(rows: number, bins: number[], seed: number): Int32Array[] {
  const rng = xoroshiro128plus(seed);
  const draw = (n: number): number => unsafeUniformIntDistribution(0, n - 1, rng);
  const codes = bins.map(() => new Int32Array(rows));
  for (let i = 0; i < rows; i++) {
    bins.forEach((K, c) => {
      codes[c][i] = c > 0 && draw(3) === 0 ? codes[c - 1][i] % K : draw(K);
    });
  }
  return codes;
}

/** The occupied cells' counts of one multiplet, counted directly, in a seeded shuffled order. */
function cellCounts(codes: Int32Array[], members: number[], seed: number): number[] {
  const counts = new Map<string, number>();
  for (let i = 0; i < codes[0].length; i++) {
    const key = members.map(c => codes[c][i]).join(',');
    counts.set(key, (counts.get(key) ?? 0) + 1);
  }
  const out = [...counts.values()];
  const rng = xoroshiro128plus(seed);
  for (let i = out.length - 1; i > 0; i--) {
    const j = unsafeUniformIntDistribution(0, i, rng);
    [out[i], out[j]] = [out[j], out[i]];
  }
  return out;
}

describe('CellCountLattice', () => {
  const bins = [3, 7, 2, 40, 5];
  const codes = seededCodes(600, bins, 41);

  for (const estimator of COUNT_ESTIMATORS) {
    for (const maxOrder of [1, 2, 3, 5]) {
      it(`should equal the walk bit for bit under ${estimator} up to order ${maxOrder}`, () => {
        const walked = computeLattice({ codes, bins, maxOrder, estimator });
        const counted = new CellCountLattice(bins, 600, maxOrder, estimator);
        const multiplets = counted.multiplets();
        // the multiplets in reverse, to show the order of counting does not matter
        multiplets.reverse().forEach((multiplet, k) => counted.record(multiplet, cellCounts(codes, multiplet.members, k)));
        const lattice = counted.result();
        expect(lattice.indexing).toEqual(walked.indexing);
        expect(Array.from(lattice.occupied)).toEqual(Array.from(walked.occupied));
        expect(Buffer.from(lattice.entropy.buffer).equals(Buffer.from(walked.entropy.buffer))).toBe(true);
        expect(lattice.entropy.some(h => h > 0)).toBe(true);
      });
    }
  }

  it('should refuse a lattice with a multiplet not counted, and counts that miss rows', () => {
    const counted = new CellCountLattice(bins, 600, 2, 'plugin');
    const [first, second] = counted.multiplets();
    expect(() => counted.record(first, [300, 299])).toThrow(/hold 599 rows, not 600/);
    counted.record(second, cellCounts(codes, second.members, 1));
    expect(() => counted.result()).toThrow(/was not counted/);
  });
});
