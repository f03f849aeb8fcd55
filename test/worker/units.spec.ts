import { isContinuousEstimator } from '../../src/engine/walk';
import { latticeInput, prepareColumns } from '../../src/engine/analyze';
import { PolyadicError } from '../../src/engine/errors';
import { ESTIMATORS } from '../../src/engine/estimators';
import { computeLattice, ILatticeInput, ISubtreeResult, assembleLattice } from '../../src/engine/lattice';
import { walkLattice } from '../../src/engine/walk';
import { createIndexing, multipletCount, subtreeSize } from '../../src/engine/multiplets';
import { planUnits, unitMultiplets, walkUnit } from '../../src/worker/units';
import { firstBitDifference, makeColumns } from './helpers';

/** The lattice input of a seeded table. */
function inputOf(rows: number, count: number, maxOrder: number, seed = 3): ILatticeInput {
  const prepared = prepareColumns(makeColumns(rows, count, seed), { missing: 'category' });
  return latticeInput(prepared, { maxOrder });
}

/** Walk a lattice unit by unit, the units handed out in an order that mimics several workers finishing at random. */
function walkByUnits(input: ILatticeInput, workers: number): ISubtreeResult[] {
  const n = input.codes.length;
  const indexing = createIndexing(n, Math.min(input.maxOrder, n));
  // as the pool plans them: the Gaussian copula's units are whole subtrees
  const units = planUnits(indexing, workers, { slices: !isContinuousEstimator(input.estimator) });
  const parts: ISubtreeResult[] = [];
  // Reverse order: the parts arrive in another order than the walk's.
  for (const unit of units.slice().reverse()) {
    parts.push(...walkUnit(input, unit));
  }
  return parts;
}

describe('units', () => {
  describe('#planUnits', () => {
    it('should cover every multiplet once, largest unit first, with at most one tail at the end', () => {
      for (const [n, m] of [
        [1, 1],
        [2, 2],
        [5, 5],
        [12, 12],
        [16, 16],
        [20, 3],
        [40, 2]
      ]) {
        for (const workers of [1, 2, 3, 4]) {
          const indexing = createIndexing(n, m);
          const units = planUnits(indexing, workers);
          // Per root: whole subtrees, and per second column: slices.
          const seen = new Array<number>(n).fill(0);
          const sliced = Array.from({ length: n }, () => new Array<number>(n).fill(0));
          let total = 0;
          for (const unit of units) {
            if (unit.slices) {
              expect(unit.last).toBe(unit.first);
              for (let second = unit.slices[0]; second <= unit.slices[1]; second++) {
                sliced[unit.first][second]++;
              }
            } else {
              for (let root = unit.first; root <= unit.last; root++) {
                seen[root]++;
              }
            }
            expect(unit.multiplets).toBe(unitMultiplets(indexing, unit));
            total += unit.multiplets;
            if (unit.first < unit.last) {
              expect(unit.last).toBe(n - 1);
            }
          }
          for (let root = 0; root < n; root++) {
            const slices = sliced[root].slice(root + 1);
            const whole = seen[root] === 1 && slices.every(count => count === 0);
            const cut = seen[root] === 0 && slices.length > 0 && slices.every(count => count === 1);
            expect([n, m, workers, root, whole || cut]).toEqual([n, m, workers, root, true]);
          }
          expect(total).toBe(Number(multipletCount(n, m)));
          for (let i = 1; i < units.length; i++) {
            expect(units[i - 1].multiplets).toBeGreaterThanOrEqual(units[i].multiplets);
          }
        }
      }
    });

    it('should cut the large subtrees into runs of slices and merge the small trailing subtrees into one tail', () => {
      // 16 columns, all orders: subtree r holds 2^(15 − r) multiplets, 65535 in all; its slice
      // by second column s holds 2^(15 − s) (and {r} itself when s = r + 1). With 2 workers the
      // grain is 65535 / 16 ≈ 4096: subtrees 0, 1 and 2, above two grains, are cut (their slices
      // at s ≥ 4 together hold 4095), subtree 3 walks whole, and roots 4 … 15 (4095 multiplets)
      // form the tail.
      const units = planUnits(createIndexing(16, 16), 2);
      expect(units.map(u => [u.first, u.last, u.slices ?? null, u.multiplets])).toEqual([
        [0, 0, [1, 1], 16385],
        [1, 1, [2, 2], 8193],
        [0, 0, [2, 2], 8192],
        [2, 2, [3, 3], 4097],
        [0, 0, [3, 3], 4096],
        [1, 1, [3, 3], 4096],
        [3, 3, null, 4096],
        [0, 0, [4, 15], 4095],
        [1, 1, [4, 15], 4095],
        [2, 2, [4, 15], 4095],
        [4, 15, null, 4095]
      ]);
      // The largest unit is a quarter of the lattice and {0} (subtree 0 alone was half of it).
      expect(Math.max(...units.map(u => u.multiplets))).toBe((65535 + 1) / 4 + 1);
    });
  });

  describe('#walkUnit', () => {
    it('should give, assembled, the same lattice bit for bit as one walk, for every estimator and split', () => {
      const cases: Array<[number, number, number]> = [
        // rows, columns, maximum order: full (bitmask) layouts and order-limited (rank) ones
        [300, 9, 9],
        [300, 12, 3],
        [40, 7, 7], // few rows: many cells of one row, the drop and all-distinct shortcuts fire
        [1, 4, 4]
      ];
      for (const [rows, count, maxOrder] of cases) {
        for (const estimator of ESTIMATORS) {
          if (estimator === 'gaussian-copula' && rows <= maxOrder) {
            // refused: a covariance of k columns needs more than k rows (test/engine/copula.spec.ts)
            continue;
          }
          const input = { ...inputOf(rows, count, maxOrder), estimator };
          const whole = walkLattice(input);
          for (const workers of [1, 2, 3, 4]) {
            const split = assembleLattice(input, walkByUnits(input, workers));
            const where = `${rows}×${count} up to ${maxOrder}, ${estimator}, ${workers} workers`;
            expect([where, firstBitDifference(split.entropy, whole.entropy)]).toEqual([where, -1]);
            expect([where, firstBitDifference(split.occupied, whole.occupied)]).toEqual([where, -1]);
          }
        }
      }
    });

    it('should see a one-bit difference (the comparison itself works)', () => {
      const a = computeLattice({ ...inputOf(50, 5, 5), estimator: 'plugin' });
      const b = Float64Array.from(a.entropy);
      b[17] = b[17] + Number.EPSILON * Math.max(1, Math.abs(b[17]));
      expect(firstBitDifference(a.entropy, b)).toBe(17);
      const c = computeLattice({ ...inputOf(50, 5, 5), estimator: 'miller-madow' });
      expect(firstBitDifference(a.entropy, c.entropy)).toBeGreaterThan(0);
    });

    it('should also match with the walk shortcuts turned off', () => {
      const input = { ...inputOf(60, 8, 8), estimator: 'chao-shen' as const, dropSingletons: false, fillDistinct: false };
      const whole = computeLattice(input);
      const split = assembleLattice(input, walkByUnits(input, 3));
      expect(firstBitDifference(split.entropy, whole.entropy)).toBe(-1);
    });

    it('should refuse a unit outside the columns', () => {
      const input = inputOf(20, 4, 4);
      expect(() => walkUnit(input, { first: 2, last: 4 })).toThrow(PolyadicError);
      expect(() => walkUnit(input, { first: 3, last: 2 })).toThrow('is not within columns 0 … 3');
      expect(() => walkUnit(input, { first: 1, last: 2, slices: [2, 3] })).toThrow('not one subtree');
      expect(() => walkUnit(input, { first: 1, last: 1, slices: [1, 3] })).toThrow('No slices 1 … 3 of subtree 1');
    });
  });
});
