/**
 * The lattice walk (src/engine/lattice.ts) and multiplet indexing (src/engine/multiplets.ts),
 * checked against a naive per-multiplet histogram (test/engine/helpers.ts) that shares no code
 * with the walk.
 */
import fc from 'fast-check';

import { entropyOfCounts } from '../../src/engine/estimators';
import {
  assembleLattice,
  computeLattice,
  ILatticeInput,
  ISubtreeResult,
  jointEntropyOfCodes,
  walkSubtree
} from '../../src/engine/lattice';
import {
  checkMultipletCount,
  createIndexing,
  forEachMultiplet,
  indexOfColumns,
  largestOrderWithin,
  membersOfIndex,
  multipletCount,
  orderOfIndex,
  sliceSize,
  subtreeSize
} from '../../src/engine/multiplets';
import type { EstimatorName } from '../../src/engine/types';
import { codedTable, expectPolyadic, naiveCounts, subsetsOf } from './helpers';

const ESTIMATORS: EstimatorName[] = ['plugin', 'miller-madow', 'chao-shen', 'shrinkage'];

/** Naive entropy of one multiplet under an estimator: count tuples, then the estimator. */
function naive(codes: Int32Array[], bins: number[], members: number[], estimator: EstimatorName): number {
  const possible = members.reduce((product, c) => product * bins[c], 1);
  return entropyOfCounts(estimator, naiveCounts(codes, members), possible);
}

describe('multiplets', () => {
  describe('#multipletCount', () => {
    it('should count Σ C(n, k) exactly, beyond 2^53', () => {
      // 2^40 − 1 = 1099511627775 (all non-empty subsets of 40 columns).
      expect(multipletCount(40, 40)).toBe(1099511627775n);
      // C(10,1) + C(10,2) + C(10,3) = 10 + 45 + 120 = 175.
      expect(multipletCount(10, 3)).toBe(175n);
      expect(multipletCount(70, 70)).toBe(2n ** 70n - 1n);
    });
  });

  describe('#checkMultipletCount', () => {
    it('should refuse above the cap with the exact count and the largest order that fits', () => {
      // 40 columns: Σ_{k≤6} C(40,k) = 40 + 780 + 9880 + 91390 + 658008 + 3838380 = 4598478 ≤ 2^24,
      // and adding C(40,7) = 18643560 passes 2^24 = 16777216.
      expectPolyadic(
        () => checkMultipletCount(40, 40),
        'limit',
        /1,099,511,627,775 multiplets/,
        /16,777,216/,
        /largest maximum order that fits is 6/
      );
      expect(largestOrderWithin(40, 2 ** 24)).toBe(6);
      expect(checkMultipletCount(40, 6)).toBe(4598478);
    });

    it('should say so when not even single columns fit', () => {
      expectPolyadic(() => checkMultipletCount(5, 1, 3), 'limit', /not even single columns fit/);
    });
  });

  describe('#membersOfIndex', () => {
    it('should invert the index in both layouts', () => {
      for (const [n, m] of [
        [6, 6],
        [7, 3],
        [9, 1],
        [5, 4]
      ]) {
        const indexing = createIndexing(n, m);
        const seen = new Set<number>();
        const out = new Int32Array(m);
        let visited = 0;
        forEachMultiplet(indexing, (index, members, order) => {
          visited++;
          expect(index).toBeGreaterThan(0);
          expect(index).toBeLessThan(indexing.size);
          expect(seen.has(index)).toBe(false);
          seen.add(index);
          expect(membersOfIndex(indexing, index, out)).toBe(order);
          expect(Array.from(out.subarray(0, order))).toEqual(Array.from(members.subarray(0, order)));
          expect(orderOfIndex(indexing, index)).toBe(order);
          expect(indexOfColumns(indexing, Array.from(members.subarray(0, order)).reverse())).toBe(index);
        });
        expect(visited).toBe(Number(multipletCount(n, m)));
        expect(indexing.kind).toBe(m === n ? 'mask' : 'rank');
      }
    });

    it('should place a rank layout contiguously by order', () => {
      // 5 columns up to order 2: 1 empty + 5 singles + 10 pairs = 16 slots, pairs at 6 … 15.
      const indexing = createIndexing(5, 2);
      expect(indexing.size).toBe(16);
      expect(indexOfColumns(indexing, [0, 1])).toBe(6);
      expect(indexOfColumns(indexing, [3, 4])).toBe(15);
      expect(indexOfColumns(indexing, [0, 1, 2])).toBe(-1);
    });
  });
});

describe('lattice', () => {
  describe('#computeLattice', () => {
    it('should equal a naive histogram per multiplet, with and without the shortcuts (property)', () => {
      fc.assert(
        fc.property(
          codedTable(5, 25, 4),
          fc.constantFrom(...ESTIMATORS),
          fc.boolean(),
          fc.boolean(),
          fc.integer({ min: 1, max: 5 }),
          (table, estimator, dropSingletons, fillDistinct, order) => {
            const n = table.codes.length;
            const maxOrder = Math.min(order, n);
            const lattice = computeLattice({ ...table, maxOrder, estimator, dropSingletons, fillDistinct });
            for (const members of subsetsOf(n, maxOrder)) {
              const index = indexOfColumns(lattice.indexing, members);
              expect(lattice.entropy[index]).toBeCloseTo(naive(table.codes, table.bins, members, estimator), 12);
              expect(lattice.occupied[index]).toBe(naiveCounts(table.codes, members).length);
            }
          }
        ),
        { numRuns: 300 }
      );
    });

    it('should agree with the direct computation of one multiplet', () => {
      fc.assert(
        fc.property(codedTable(4, 30, 5), fc.constantFrom(...ESTIMATORS), (table, estimator) => {
          const n = table.codes.length;
          const lattice = computeLattice({ ...table, maxOrder: n, estimator });
          for (const members of subsetsOf(n)) {
            const direct = jointEntropyOfCodes(table.codes, table.bins, members, estimator);
            expect(lattice.entropy[indexOfColumns(lattice.indexing, members)]).toBeCloseTo(direct.entropy, 12);
          }
        })
      );
    });

    it('should take wide columns through the map fallback', () => {
      // 6000 rows; two columns of 3000 codes each used twice, so the pair's key range is
      // 3000 · 3000 = 9·10^6, above the table limit of 2^22.
      const rows = 6000;
      const a = new Int32Array(rows);
      const b = new Int32Array(rows);
      for (let i = 0; i < rows; i++) {
        a[i] = i % 3000;
        b[i] = (i * 7 + (i >= 3000 ? 1 : 0)) % 3000;
      }
      const input: ILatticeInput = { codes: [a, b], bins: [3000, 3000], maxOrder: 2, estimator: 'plugin' };
      const lattice = computeLattice(input);
      expect(lattice.entropy[indexOfColumns(lattice.indexing, [0, 1])]).toBeCloseTo(
        naive(input.codes, input.bins, [0, 1], 'plugin'),
        12
      );
    });

    it('should give the same counts on both sides of the small-range tally (1,024 keys)', () => {
      // Pairs of columns of 30 and 40 codes: key ranges 30 · 30 = 900 (four interleaved
      // tallies) and 40 · 40 = 1600 (one table), with repeated and lone rows, every estimator.
      const rows = 3000;
      for (const K of [30, 40]) {
        const a = Int32Array.from({ length: rows }, (_, i) => (i * 7) % K);
        const b = Int32Array.from({ length: rows }, (_, i) => ((i * i) >> 3) % K);
        const c = Int32Array.from({ length: rows }, (_, i) => (i >> 4) % 3);
        const codes = [a, b, c];
        const bins = [K, K, 3];
        for (const estimator of ESTIMATORS) {
          const lattice = computeLattice({ codes, bins, maxOrder: 3, estimator });
          for (const members of subsetsOf(3)) {
            const index = indexOfColumns(lattice.indexing, members);
            expect(lattice.entropy[index]).toBeCloseTo(naive(codes, bins, members, estimator), 11);
            expect(lattice.occupied[index]).toBe(naiveCounts(codes, members).length);
          }
        }
      }
    });

    it('should count every row whatever the row count modulo the unrolled loops', () => {
      // 1 … 13 rows: each remainder of the four-row loops, with repeated and lone rows.
      for (let rows = 1; rows <= 13; rows++) {
        const codes = [0, 1, 2].map(c => Int32Array.from({ length: rows }, (_, i) => ((i * (c + 2)) >> 1) % 3));
        const input: ILatticeInput = { codes, bins: [3, 3, 3], maxOrder: 3, estimator: 'chao-shen' };
        const lattice = computeLattice(input);
        for (const members of subsetsOf(3)) {
          const index = indexOfColumns(lattice.indexing, members);
          expect(lattice.entropy[index]).toBeCloseTo(naive(codes, input.bins, members, 'chao-shen'), 12);
          expect(lattice.occupied[index]).toBe(naiveCounts(codes, members).length);
        }
      }
    });

    it('should fill every superset of an all-distinct multiplet', () => {
      // Column 0 is a row identifier: every multiplet containing it has N singleton cells.
      const rows = 8;
      const id = Int32Array.from({ length: rows }, (_, i) => i);
      const flag = Int32Array.from({ length: rows }, (_, i) => i % 2);
      const other = Int32Array.from({ length: rows }, (_, i) => i % 3);
      const lattice = computeLattice({ codes: [id, flag, other], bins: [8, 2, 3], maxOrder: 3, estimator: 'plugin' });
      for (const members of [[0], [0, 1], [0, 2], [0, 1, 2]]) {
        expect(lattice.entropy[indexOfColumns(lattice.indexing, members)]).toBeCloseTo(Math.log(8), 14);
        expect(lattice.occupied[indexOfColumns(lattice.indexing, members)]).toBe(8);
      }
    });

    it('should count the leaves at the order limit four at a time as one by one', () => {
      // 9 columns, 2,000 rows: {a, b} has up to 7 leaf children of 2 … 4 codes, counted in
      // groups of four (the rest one by one); column 0 leaves some rows alone, so below it the
      // active rows are a subset (read through their row numbers), above it all rows in order.
      const rows = 2000;
      const codes = [Int32Array.from({ length: rows }, (_, i) => (i >= 400 ? i % 8 : 8 + i))];
      const bins = [rows + 8];
      for (let j = 1; j < 9; j++) {
        const K = 2 + (j % 3);
        codes.push(Int32Array.from({ length: rows }, (_, i) => ((i * (j + 3) + (i >> j)) ^ (i >> 3)) % K));
        bins.push(K);
      }
      for (const maxOrder of [2, 3]) {
        for (const estimator of ESTIMATORS) {
          const lattice = computeLattice({ codes, bins, maxOrder, estimator });
          const slices = walkSubtree({ codes, bins, maxOrder, estimator }, 0, [1, 8]);
          for (const members of subsetsOf(9, maxOrder)) {
            const index = indexOfColumns(lattice.indexing, members);
            expect(lattice.entropy[index]).toBeCloseTo(naive(codes, bins, members, estimator), 11);
            expect(lattice.occupied[index]).toBe(naiveCounts(codes, members).length);
          }
          expect(Array.from(slices.entropy)).toEqual(Array.from(walkSubtree({ codes, bins, maxOrder, estimator }, 0).entropy));
        }
      }
    });

    it('should refuse a lattice above the multiplet cap', () => {
      const codes = Array.from({ length: 40 }, () => new Int32Array(3));
      expectPolyadic(
        () => computeLattice({ codes, bins: codes.map(() => 1), maxOrder: 40, estimator: 'plugin' }),
        'limit',
        /1,099,511,627,775/
      );
    });
  });

  describe('dense tables', () => {
    /** A table with many rows per cell: columns of 1 … 4 codes, some copies of the one before. */
    const denseTable = (seed: number, columns: number, rows: number): { codes: Int32Array[]; bins: number[] } => {
      let state = seed >>> 0 || 1;
      const next = (k: number): number => {
        state = (Math.imul(state, 1103515245) + 12345) >>> 0;
        return (state >>> 8) % k;
      };
      const codes: Int32Array[] = [];
      const bins: number[] = [];
      for (let j = 0; j < columns; j++) {
        const K = 1 + next(4);
        const column = new Int32Array(rows);
        for (let i = 0; i < rows; i++) {
          column[i] = j > 0 && next(3) === 0 ? codes[j - 1][i] % K : next(K);
        }
        codes.push(column);
        bins.push(K + next(2));
      }
      return { codes, bins };
    };

    it('should give the row passes\' values bit for bit, whole, by subtree and in slices (property)', () => {
      fc.assert(
        fc.property(
          fc.integer({ min: 1, max: 2 ** 30 }),
          fc.integer({ min: 1, max: 7 }),
          fc.integer({ min: 1, max: 600 }),
          fc.integer({ min: 1, max: 7 }),
          fc.constantFrom(...ESTIMATORS),
          fc.boolean(),
          fc.boolean(),
          (seed, columns, rows, order, estimator, dropSingletons, fillDistinct) => {
            const table = denseTable(seed, columns, rows);
            const input: ILatticeInput = { ...table, maxOrder: Math.min(order, columns), estimator, dropSingletons, fillDistinct };
            const passes = computeLattice({ ...input, denseMargin: Infinity });
            const dense = computeLattice({ ...input, denseMargin: 0 });
            const parts: ISubtreeResult[] = [];
            for (let root = 0; root < columns; root++) {
              if (root + 2 < columns && input.maxOrder >= 2) {
                parts.push(walkSubtree({ ...input, denseMargin: 0 }, root, [root + 1, root + 1]));
                parts.push(walkSubtree({ ...input, denseMargin: 0 }, root, [root + 2, columns - 1]));
              } else {
                parts.push(walkSubtree({ ...input, denseMargin: 0 }, root));
              }
            }
            const split = assembleLattice(input, parts);
            for (let i = 0; i < passes.entropy.length; i++) {
              expect(Object.is(dense.entropy[i], passes.entropy[i])).toBe(true);
              expect(dense.occupied[i]).toBe(passes.occupied[i]);
              expect(Object.is(split.entropy[i], passes.entropy[i])).toBe(true);
            }
          }
        ),
        { numRuns: 200 }
      );
    });

    it('should equal a naive histogram per multiplet below a node with rows dropped', () => {
      // Column 0 has 300 codes over 900 rows: {0} drops its lone rows and walks the rest of its
      // subtree (three columns of 2 codes) through one dense table of its labels.
      const rows = 900;
      const codes = [
        Int32Array.from({ length: rows }, (_, i) => (i < 600 ? i % 300 : i)),
        Int32Array.from({ length: rows }, (_, i) => (i >> 1) & 1),
        Int32Array.from({ length: rows }, (_, i) => (i * 7) % 2),
        Int32Array.from({ length: rows }, (_, i) => ((i * i) >> 2) % 2)
      ];
      const bins = [900, 2, 2, 3];
      for (const estimator of ESTIMATORS) {
        const lattice = computeLattice({ codes, bins, maxOrder: 4, estimator, denseMargin: 0 });
        for (const members of subsetsOf(4)) {
          const index = indexOfColumns(lattice.indexing, members);
          expect(lattice.entropy[index]).toBeCloseTo(naive(codes, bins, members, estimator), 11);
          expect(lattice.occupied[index]).toBe(naiveCounts(codes, members).length);
        }
      }
    });
  });

  describe('#walkSubtree', () => {
    it('should give bit-identical results whatever the split by first column (property)', () => {
      fc.assert(
        fc.property(
          codedTable(6, 40, 4),
          fc.constantFrom(...ESTIMATORS),
          fc.integer({ min: 1, max: 6 }),
          fc.integer({ min: 0, max: 1000 }),
          (table, estimator, order, seed) => {
            const n = table.codes.length;
            const input: ILatticeInput = { ...table, maxOrder: Math.min(order, n), estimator };
            const whole = computeLattice(input);
            // Each subtree walked on its own (as separate workers would), gathered in a shuffled order.
            const parts = Array.from({ length: n }, (_, root) => walkSubtree(input, root));
            const shuffled = parts
              .map((part, i) => ({ part, key: (i * 7919 + seed) % 1009 }))
              .sort((x, y) => x.key - y.key)
              .map(x => x.part);
            const split = assembleLattice(input, shuffled);
            expect(split.entropy.length).toBe(whole.entropy.length);
            for (let i = 0; i < whole.entropy.length; i++) {
              expect(Object.is(split.entropy[i], whole.entropy[i])).toBe(true);
              expect(split.occupied[i]).toBe(whole.occupied[i]);
            }
            parts.forEach((part, root) => expect(part.entropy.length).toBe(subtreeSize(whole.indexing, root)));
          }
        ),
        { numRuns: 150 }
      );
    });

    it('should give bit-identical results when subtrees are cut into slices by second column (property)', () => {
      fc.assert(
        fc.property(
          codedTable(6, 40, 4, 2),
          fc.constantFrom(...ESTIMATORS),
          fc.integer({ min: 2, max: 6 }),
          fc.boolean(),
          fc.boolean(),
          fc.integer({ min: 0, max: 1000 }),
          (table, estimator, order, dropSingletons, fillDistinct, seed) => {
            const n = table.codes.length;
            const input: ILatticeInput = { ...table, maxOrder: Math.min(order, n), estimator, dropSingletons, fillDistinct };
            const whole = computeLattice(input);
            // Every subtree but the last (a single multiplet) in slices; alternate roots whole.
            const parts: ISubtreeResult[] = [];
            for (let root = 0; root < n; root++) {
              if (root === n - 1 || (root + seed) % 3 === 0) {
                parts.push(walkSubtree(input, root));
              } else {
                // Slices one by one, or the first alone and the rest together.
                if (seed % 2 === 0) {
                  for (let second = root + 1; second < n; second++) {
                    const slice = walkSubtree(input, root, [second, second]);
                    expect(slice.entropy.length).toBe(sliceSize(whole.indexing, root, second));
                    parts.push(slice);
                  }
                } else {
                  parts.push(walkSubtree(input, root, [root + 1, root + 1]));
                  if (root + 2 < n) {
                    parts.push(walkSubtree(input, root, [root + 2, n - 1]));
                  }
                }
              }
            }
            const shuffled = parts
              .map((part, i) => ({ part, key: (i * 7919 + seed) % 1009 }))
              .sort((x, y) => x.key - y.key)
              .map(x => x.part);
            const split = assembleLattice(input, shuffled);
            for (let i = 0; i < whole.entropy.length; i++) {
              expect(Object.is(split.entropy[i], whole.entropy[i])).toBe(true);
              expect(split.occupied[i]).toBe(whole.occupied[i]);
            }
          }
        ),
        { numRuns: 150 }
      );
    });

    it('should slice a subtree whose first column has every row alone, and a single row', () => {
      // Column 0 is a row identifier, so {0} fills its subtree; its slices must fill the same values.
      for (const rows of [1, 7]) {
        const id = Int32Array.from({ length: rows }, (_, i) => i);
        const flag = Int32Array.from({ length: rows }, (_, i) => i % 2);
        const other = Int32Array.from({ length: rows }, (_, i) => i % 3);
        for (const estimator of ESTIMATORS) {
          const input: ILatticeInput = { codes: [id, flag, other], bins: [rows, 2, 3], maxOrder: 3, estimator };
          const whole = computeLattice(input);
          const parts = [walkSubtree(input, 0, [1, 1]), walkSubtree(input, 0, [2, 2]), walkSubtree(input, 1), walkSubtree(input, 2)];
          const split = assembleLattice(input, parts);
          for (let i = 0; i < whole.entropy.length; i++) {
            expect(Object.is(split.entropy[i], whole.entropy[i])).toBe(true);
            expect(split.occupied[i]).toBe(whole.occupied[i]);
          }
        }
      }
    });

    it('should refuse slices that overlap, leave a gap, or do not exist', () => {
      const table = { codes: [0, 1, 2].map(c => Int32Array.from([0, 1, 1, c % 2])), bins: [2, 2, 2] };
      const input: ILatticeInput = { ...table, maxOrder: 3, estimator: 'plugin' };
      const rest = [walkSubtree(input, 1), walkSubtree(input, 2)];
      expectPolyadic(() => assembleLattice(input, [walkSubtree(input, 0, [2, 2]), ...rest]), 'internal', /gap at entry 0/);
      expectPolyadic(
        () => assembleLattice(input, [walkSubtree(input, 0), walkSubtree(input, 0, [2, 2]), ...rest]),
        'internal',
        /given twice or with a gap/
      );
      expectPolyadic(() => walkSubtree(input, 1, [1, 1]), 'internal', /No slices 1 … 1 of subtree 1/);
      expectPolyadic(() => walkSubtree(input, 0, [2, 1]), 'internal', /No slices 2 … 1/);
      expectPolyadic(() => walkSubtree({ ...input, maxOrder: 1 }, 0, [1, 1]), 'internal', /No slices 1 … 1 of subtree 0/);
    });
  });
});
