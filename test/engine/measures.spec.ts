/**
 * Multiplet measures (src/engine/measures.ts): published worked examples, an independence
 * design, and the identities the measures obey (fast-check properties).
 */
import fc from 'fast-check';

import { analyze } from '../../src/engine/analyze';
import { fromNats } from '../../src/engine/estimators';
import { computeLattice, ILattice } from '../../src/engine/lattice';
import {
  chainAlong,
  coinformationAll,
  coinformationOf,
  computeMeasures,
  conditionalCoinformation,
  conditionalMutualInformation,
  extremalChains,
  IEntropySource,
  jointEntropy,
  mutualInformation
} from '../../src/engine/measures';
import { indexOfColumns } from '../../src/engine/multiplets';
import { codedTable, expectPolyadic, numericColumn, subsetsOf } from './helpers';

const bits = (nats: number): number => fromNats(nats, 'bits');

/** An entropy source over a coded table, with its full (or order-limited) lattice. */
function sourceOf(codes: Int32Array[], bins: number[], maxOrder = codes.length): IEntropySource & { lattice: ILattice } {
  const lattice = computeLattice({ codes, bins, maxOrder, estimator: 'plugin' });
  return { codes, bins, estimator: 'plugin', lattice };
}

/**
 * Cover & Thomas, Elements of Information Theory, 2nd ed., Example 2.2.1: p(x, y) with rows
 * y = 1 … 4 and columns x = 1 … 4, every probability a multiple of 1/32, so 32 rows reproduce it.
 */
function coverThomasRows(): { x: number[]; y: number[] } {
  const table = [
    [1 / 8, 1 / 16, 1 / 32, 1 / 32],
    [1 / 16, 1 / 8, 1 / 32, 1 / 32],
    [1 / 16, 1 / 16, 1 / 16, 1 / 16],
    [1 / 4, 0, 0, 0]
  ];
  const x: number[] = [];
  const y: number[] = [];
  table.forEach((row, yi) =>
    row.forEach((p, xi) => {
      for (let r = 0; r < p * 32; r++) {
        x.push(xi);
        y.push(yi);
      }
    })
  );
  return { x, y };
}

describe('measures', () => {
  describe('Cover & Thomas Example 2.2.1', () => {
    const { x, y } = coverThomasRows();
    const source = sourceOf([Int32Array.from(x), Int32Array.from(y)], [4, 4]);

    it('should build the 32 rows of the table', () => {
      expect(x.length).toBe(32);
    });

    it('should give H(X) = 7/4, H(Y) = 2 and H(X,Y) = 27/8 bits', () => {
      expect(bits(jointEntropy(source, [0]))).toBeCloseTo(7 / 4, 12);
      expect(bits(jointEntropy(source, [1]))).toBeCloseTo(2, 12);
      expect(bits(jointEntropy(source, [0, 1]))).toBeCloseTo(27 / 8, 12);
    });

    it('should give H(X|Y) = 11/8, H(Y|X) = 13/8 and I(X;Y) = 3/8 bits', () => {
      const hxy = jointEntropy(source, [0, 1]);
      expect(bits(hxy - jointEntropy(source, [1]))).toBeCloseTo(11 / 8, 12);
      expect(bits(hxy - jointEntropy(source, [0]))).toBeCloseTo(13 / 8, 12);
      expect(bits(mutualInformation(source, 0, 1))).toBeCloseTo(3 / 8, 12);
    });

    it('should report the same through analyze', () => {
      const result = analyze([numericColumn('X', x), numericColumn('Y', y)], { bins: 'categorical' });
      const pair = result.multiplets.find(row => row.order === 2);
      expect(pair?.entropy).toBeCloseTo(27 / 8, 12);
      expect(pair?.co_information).toBeCloseTo(3 / 8, 12);
    });
  });

  describe('XOR and copies (Rosas et al. 2019, Phys. Rev. E 100, 032305)', () => {
    it('should give a synergistic XOR triplet: I = −1, TC = 1, DTC = 2, Ω = −1 bits', () => {
      // Two fair bits and their exclusive or, the four equiprobable rows.
      const source = sourceOf([Int32Array.of(0, 0, 1, 1), Int32Array.of(0, 1, 0, 1), Int32Array.of(0, 1, 1, 0)], [2, 2, 2]);
      const measures = computeMeasures(source.lattice);
      const triplet = indexOfColumns(source.lattice.indexing, [0, 1, 2]);
      expect(bits(measures.coinformation[triplet])).toBeCloseTo(-1, 12);
      expect(bits(measures.totalCorrelation[triplet])).toBeCloseTo(1, 12);
      expect(bits(measures.dualTotalCorrelation[triplet])).toBeCloseTo(2, 12);
      expect(bits(measures.oInformation[triplet])).toBeCloseTo(-1, 12);
      expect(bits(measures.sInformation[triplet])).toBeCloseTo(3, 12);
      // Every pair is independent.
      for (const pair of [[0, 1], [0, 2], [1, 2]]) {
        expect(bits(measures.coinformation[indexOfColumns(source.lattice.indexing, pair)])).toBeCloseTo(0, 12);
      }
    });

    it('should give a redundant triplet of copies: I = +1, TC = 2, DTC = 1, Ω = +1 bits', () => {
      const bit = Int32Array.of(0, 1);
      const source = sourceOf([bit, bit.slice(), bit.slice()], [2, 2, 2]);
      const measures = computeMeasures(source.lattice);
      const triplet = indexOfColumns(source.lattice.indexing, [0, 1, 2]);
      expect(bits(measures.coinformation[triplet])).toBeCloseTo(1, 12);
      expect(bits(measures.totalCorrelation[triplet])).toBeCloseTo(2, 12);
      expect(bits(measures.dualTotalCorrelation[triplet])).toBeCloseTo(1, 12);
      expect(bits(measures.oInformation[triplet])).toBeCloseTo(1, 12);
    });
  });

  describe('independence', () => {
    it('should give co-information 0 for every multiplet of order ≥ 2 of a full factorial design', () => {
      // Five columns with 2, 3, 2, 3, 2 levels, every combination once (72 rows): the columns are
      // mutually independent, so every co-information of order ≥ 2 is exactly 0 (Bell 2003).
      const levels = [2, 3, 2, 3, 2];
      const rows = levels.reduce((a, b) => a * b, 1);
      const codes = levels.map(() => new Int32Array(rows));
      for (let r = 0; r < rows; r++) {
        let rest = r;
        levels.forEach((K, c) => {
          codes[c][r] = rest % K;
          rest = Math.floor(rest / K);
        });
      }
      const source = sourceOf(codes, levels);
      const coinformation = coinformationAll(source.lattice);
      const multiplets = subsetsOf(5).filter(members => members.length >= 2);
      expect(multiplets.length).toBe(2 ** 5 - 5 - 1);
      for (const members of multiplets) {
        expect(Math.abs(coinformation[indexOfColumns(source.lattice.indexing, members)])).toBeLessThan(1e-12);
      }
    });
  });

  describe('#coinformationAll', () => {
    it('should agree between the bitmask and the rank layout and the subset sum (property)', () => {
      fc.assert(
        fc.property(codedTable(5, 20, 3, 2), fc.integer({ min: 1, max: 4 }), (table, order) => {
          const n = table.codes.length;
          const full = sourceOf(table.codes, table.bins);
          const limited = sourceOf(table.codes, table.bins, Math.min(order, n - 1));
          const coFull = coinformationAll(full.lattice);
          const coLimited = coinformationAll(limited.lattice);
          for (const members of subsetsOf(n, limited.lattice.indexing.maxOrder)) {
            const a = coFull[indexOfColumns(full.lattice.indexing, members)];
            const b = coLimited[indexOfColumns(limited.lattice.indexing, members)];
            expect(b).toBeCloseTo(a, 11);
            expect(coinformationOf({ ...table, estimator: 'plugin' }, members)).toBeCloseTo(a, 11);
          }
        })
      );
    });
  });

  describe('properties', () => {
    it('should make mutual information symmetric and non-negative', () => {
      fc.assert(
        fc.property(codedTable(4, 30, 4, 2), table => {
          const source = sourceOf(table.codes, table.bins);
          const n = table.codes.length;
          for (let a = 0; a < n; a++) {
            for (let b = 0; b < n; b++) {
              const ab = mutualInformation(source, a, b);
              expect(ab).toBe(mutualInformation(source, b, a));
              expect(ab).toBeGreaterThanOrEqual(-1e-12);
            }
          }
          const cmi = conditionalMutualInformation(source, 0, 1, [...Array(n).keys()].slice(2));
          expect(cmi).toBeGreaterThanOrEqual(-1e-12);
        })
      );
    });

    it('should obey the chain rule I(X1;…;Xk;Y) = I(X1;…;Xk) − I(X1;…;Xk | Y)', () => {
      fc.assert(
        fc.property(codedTable(5, 30, 3, 2), table => {
          const source = sourceOf(table.codes, table.bins);
          const n = table.codes.length;
          const y = n - 1;
          const xs = [...Array(n - 1).keys()];
          const whole = coinformationOf(source, [...xs, y]);
          expect(whole).toBeCloseTo(coinformationOf(source, xs) - conditionalCoinformation(source, xs, y), 11);
        })
      );
    });

    it('should keep total and dual total correlation non-negative', () => {
      fc.assert(
        fc.property(codedTable(5, 30, 4), table => {
          const measures = computeMeasures(sourceOf(table.codes, table.bins).lattice);
          for (let i = 1; i < measures.totalCorrelation.length; i++) {
            expect(measures.totalCorrelation[i]).toBeGreaterThanOrEqual(-1e-12);
            expect(measures.dualTotalCorrelation[i]).toBeGreaterThanOrEqual(-1e-12);
          }
        })
      );
    });

    it('should recover every entropy from the co-informations by Möbius inversion', () => {
      // H(S) = Σ_{∅≠T⊆S} (−1)^{|T|+1} I(T), the inverse of the definition of I (Bell 2003).
      fc.assert(
        fc.property(codedTable(5, 30, 4), table => {
          const { lattice } = sourceOf(table.codes, table.bins);
          const co = coinformationAll(lattice);
          const n = table.codes.length;
          for (const members of subsetsOf(n)) {
            let sum = 0;
            for (const sub of subsetsOf(members.length)) {
              const value = co[indexOfColumns(lattice.indexing, sub.map(i => members[i]))];
              sum += sub.length % 2 === 1 ? value : -value;
            }
            expect(sum).toBeCloseTo(lattice.entropy[indexOfColumns(lattice.indexing, members)], 11);
          }
        })
      );
    });

    it('should not depend on the order of rows or of columns', () => {
      fc.assert(
        fc.property(codedTable(4, 25, 4, 2), fc.integer({ min: 1, max: 10_000 }), (table, seed) => {
          const n = table.codes.length;
          const rows = table.codes[0].length;
          const rowOrder = [...Array(rows).keys()].sort((a, b) => ((a * seed) % 97) - ((b * seed) % 97) || a - b);
          const columnOrder = [...Array(n).keys()].reverse();
          const reordered = columnOrder.map(c => Int32Array.from(rowOrder, r => table.codes[c][r]));
          const original = coinformationAll(sourceOf(table.codes, table.bins).lattice);
          const permutedSource = sourceOf(reordered, columnOrder.map(c => table.bins[c]));
          const permuted = coinformationAll(permutedSource.lattice);
          const originalLattice = sourceOf(table.codes, table.bins).lattice;
          for (const members of subsetsOf(n)) {
            const moved = members.map(c => columnOrder.indexOf(c));
            expect(permuted[indexOfColumns(permutedSource.lattice.indexing, moved)]).toBeCloseTo(
              original[indexOfColumns(originalLattice.indexing, members)],
              11
            );
          }
        })
      );
    });

    it('should keep the plug-in entropy within log2 of the number of possible cells', () => {
      fc.assert(
        fc.property(codedTable(5, 30, 4), table => {
          const { lattice } = sourceOf(table.codes, table.bins);
          for (const members of subsetsOf(table.codes.length)) {
            const cells = members.reduce((product, c) => product * table.bins[c], 1);
            const h = bits(lattice.entropy[indexOfColumns(lattice.indexing, members)]);
            expect(h).toBeLessThanOrEqual(Math.log2(cells) + 1e-12);
            expect(h).toBeLessThanOrEqual(Math.log2(table.codes[0].length) + 1e-12);
          }
        })
      );
    });
  });

  describe('#jointEntropy', () => {
    it('should compute multiplets beyond the lattice from the codes', () => {
      fc.assert(
        fc.property(codedTable(4, 20, 3, 3), table => {
          const n = table.codes.length;
          const full = sourceOf(table.codes, table.bins);
          const limited = sourceOf(table.codes, table.bins, 1);
          for (const members of subsetsOf(n)) {
            expect(jointEntropy(limited, members)).toBeCloseTo(jointEntropy(full, members), 12);
          }
        })
      );
    });

    it('should name a column that does not exist', () => {
      const source = sourceOf([Int32Array.of(0, 1)], [2]);
      expectPolyadic(() => jointEntropy(source, [3]), 'usage', /no column 3/);
    });
  });

  describe('#chainAlong', () => {
    it('should list I(X1), I(X1;X2), I(X1;X2;X3) along the ordering', () => {
      const source = sourceOf([Int32Array.of(0, 0, 1, 1), Int32Array.of(0, 1, 0, 1), Int32Array.of(0, 1, 1, 0)], [2, 2, 2]);
      const chain = chainAlong(source, [2, 0, 1]);
      expect(chain.columns).toEqual([2, 0, 1]);
      expect(chain.values.map(bits)).toEqual([
        expect.closeTo(1, 12),
        expect.closeTo(0, 12),
        expect.closeTo(-1, 12)
      ]);
    });

    it('should refuse a column listed twice', () => {
      const source = sourceOf([Int32Array.of(0, 1), Int32Array.of(1, 0)], [2, 2]);
      expectPolyadic(() => chainAlong(source, [0, 1, 0]), 'usage', /twice/);
    });
  });

  describe('#extremalChains', () => {
    it('should find a planted XOR triplet in the synergy chain and copies in the redundancy chain', () => {
      // Columns: 0 noise, 1 and 2 fair bits, 3 = 1 xor 2, 4 a copy of 5, 5 a fair bit. All
      // combinations of (noise, b1, b2, b5) once each: 16 rows.
      const cols: number[][] = [[], [], [], [], [], []];
      for (let r = 0; r < 16; r++) {
        const noise = r & 1;
        const b1 = (r >> 1) & 1;
        const b2 = (r >> 2) & 1;
        const b5 = (r >> 3) & 1;
        [noise, b1, b2, b1 ^ b2, b5, b5].forEach((v, c) => cols[c].push(v));
      }
      const source = sourceOf(cols.map(c => Int32Array.from(c)), [2, 2, 2, 2, 2, 2], 3);
      const { synergy, redundancy } = extremalChains(source, 3);
      expect([...synergy.columns].sort()).toEqual([1, 2, 3]);
      expect(bits(synergy.values[2])).toBeCloseTo(-1, 12);
      expect(redundancy.columns.slice(0, 2)).toEqual([4, 5]);
      expect(bits(redundancy.values[1])).toBeCloseTo(1, 12);
    });
  });
});
