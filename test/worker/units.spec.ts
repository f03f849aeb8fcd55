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
  const units = planUnits(indexing, workers);
  const parts: ISubtreeResult[] = [];
  // Reverse order: the parts arrive in another order than the walk's.
  for (const unit of units.slice().reverse()) {
    parts.push(...walkUnit(input, unit));
  }
  return parts;
}

describe('units', () => {
  describe('#planUnits', () => {
    it('should cover every subtree once, largest unit first, with at most one tail at the end', () => {
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
          const seen = new Array<number>(n).fill(0);
          let total = 0;
          for (const unit of units) {
            for (let root = unit.first; root <= unit.last; root++) {
              seen[root]++;
            }
            expect(unit.multiplets).toBe(unitMultiplets(indexing, unit));
            total += unit.multiplets;
            if (unit.first < unit.last) {
              expect(unit.last).toBe(n - 1);
            }
          }
          expect(seen).toEqual(new Array<number>(n).fill(1));
          expect(total).toBe(Number(multipletCount(n, m)));
          for (let i = 1; i < units.length; i++) {
            expect(units[i - 1].multiplets).toBeGreaterThanOrEqual(units[i].multiplets);
          }
          // Root 0, the largest subtree, always walks alone.
          expect(units).toContainEqual({ first: 0, last: 0, multiplets: subtreeSize(indexing, 0) });
        }
      }
    });

    it('should merge the small trailing subtrees into one tail', () => {
      // 16 columns, all orders: subtree r holds 2^(15 − r) multiplets, 65535 in all. With 2
      // workers the grain is 65535 / 16 ≈ 4096, so roots 4 … 15 (4095 multiplets) form the tail.
      const units = planUnits(createIndexing(16, 16), 2);
      expect(units.map(u => [u.first, u.last, u.multiplets])).toEqual([
        [0, 0, 32768],
        [1, 1, 16384],
        [2, 2, 8192],
        [3, 3, 4096],
        [4, 15, 4095]
      ]);
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
    });
  });
});
