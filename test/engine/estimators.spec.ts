/**
 * Entropy estimators (src/engine/estimators.ts), each on a small count vector worked by hand
 * from the published formula, the working in the comments. The expected values are written as
 * the arithmetic of the working, not as the engine computes them (no shared code).
 */
import fc from 'fast-check';

import { entropyNats, entropyOfCounts, fromNats, ICountSummary } from '../../src/engine/estimators';
import { expectPolyadic } from './helpers';

describe('estimators', () => {
  describe('#entropyOfCounts', () => {
    it('should give the plug-in entropy −Σ p ln p', () => {
      // Counts [2, 1, 1], N = 4: p = 1/2, 1/4, 1/4 → H = ½ ln 2 + 2 · ¼ ln 4 = 1.5 ln 2 nats = 1.5 bits.
      const H = entropyOfCounts('plugin', [2, 1, 1]);
      expect(H).toBeCloseTo(1.5 * Math.LN2, 14);
      expect(fromNats(H, 'bits')).toBeCloseTo(1.5, 14);
    });

    it('should add (K − 1)/(2N) nats for Miller–Madow', () => {
      // Miller 1955. Counts [3, 1], N = 4, K = 2.
      // plug-in = −(3/4) ln(3/4) − (1/4) ln(1/4) = ln 4 − (3/4) ln 3 ≈ 0.5623351446 nats
      // correction = (K − 1)/(2N) = 1/8 = 0.125 nats → 0.6873351446 nats.
      const expected = Math.log(4) - 0.75 * Math.log(3) + 1 / 8;
      expect(entropyOfCounts('miller-madow', [3, 1])).toBeCloseTo(expected, 14);
      expect(entropyOfCounts('miller-madow', [3, 1])).toBeCloseTo(0.6873351446, 9);
    });

    it('should not count empty cells in K for Miller–Madow', () => {
      // Same histogram with two empty cells: K is still 2.
      expect(entropyOfCounts('miller-madow', [3, 0, 1, 0])).toBe(entropyOfCounts('miller-madow', [3, 1]));
    });

    it('should apply the coverage adjustment of Chao–Shen', () => {
      // Chao & Shen 2003. Counts [2, 1, 1]: N = 4, f1 = 2 singletons.
      // coverage C = 1 − f1/N = 1 − 2/4 = 0.5
      // cell of 2: p = C·2/4 = 0.25;  term = −0.25 ln 0.25 / (1 − 0.75⁴) = 0.34657/0.68359 ≈ 0.506986
      // cell of 1: p = C·1/4 = 0.125; term = −0.125 ln 0.125 / (1 − 0.875⁴) = 0.25993/0.41382 ≈ 0.628126
      // H = 0.506986 + 2 · 0.628126 ≈ 1.763238 nats
      const term = (p: number): number => (-p * Math.log(p)) / (1 - (1 - p) ** 4);
      const expected = term(0.25) + 2 * term(0.125);
      expect(entropyOfCounts('chao-shen', [2, 1, 1])).toBeCloseTo(expected, 13);
      expect(entropyOfCounts('chao-shen', [2, 1, 1])).toBeCloseTo(1.763238, 5);
    });

    it('should guard Chao–Shen coverage when every row is a singleton', () => {
      // Counts [1, 1, 1]: f1 = N = 3 would give C = 0; the usual guard uses f1 = N − 1 = 2
      // (common practice). C = 1/3, p = C/3 = 1/9 for each cell.
      // term = −(1/9) ln(1/9) / (1 − (8/9)³) = 0.244136/0.297668 ≈ 0.820162; H = 3 · term ≈ 2.460486
      const p = 1 / 9;
      const expected = (3 * (-p * Math.log(p))) / (1 - (8 / 9) ** 3);
      expect(entropyOfCounts('chao-shen', [1, 1, 1])).toBeCloseTo(expected, 13);
      expect(entropyOfCounts('chao-shen', [1, 1, 1])).toBeCloseTo(2.460486, 5);
    });

    it('should shrink toward the uniform over the possible cells (James–Stein)', () => {
      // Hausser & Strimmer 2009, eq. 5 and 7. Counts [3, 1, 0, 0]: N = 4, P = 4 possible cells.
      // u = (0.75, 0.25, 0, 0), target t = 1/4.
      // 1 − Σu² = 1 − (0.5625 + 0.0625) = 0.375
      // Σ(t − u)² = 0.25 + 0 + 0.0625 + 0.0625 = 0.375
      // λ = 0.375 / ((N − 1) · 0.375) = 1/3
      // θ = λt + (1 − λ)u = 1/12 + (2/3)u = (7/12, 3/12, 1/12, 1/12)  (sums to 1)
      // H = −Σ θ ln θ = (7/12)ln(12/7) + (1/4)ln 4 + 2·(1/12)ln 12 ≈ 1.0751393 nats
      const expected = (7 / 12) * Math.log(12 / 7) + 0.25 * Math.log(4) + (2 / 12) * Math.log(12);
      expect(entropyOfCounts('shrinkage', [3, 1, 0, 0])).toBeCloseTo(expected, 13);
      expect(entropyOfCounts('shrinkage', [3, 1, 0, 0])).toBeCloseTo(1.0751393, 6);
    });

    it('should give the empty cells their share of the target under shrinkage', () => {
      // The same counts with P = 4 passed explicitly and only the occupied cells listed.
      expect(entropyOfCounts('shrinkage', [3, 1], 4)).toBeCloseTo(entropyOfCounts('shrinkage', [3, 1, 0, 0]), 14);
    });

    it('should use λ = 1 for a single row under shrinkage', () => {
      // N = 1: the variance estimate divides by N − 1 = 0; λ = 1 gives the uniform: H = ln P.
      expect(entropyOfCounts('shrinkage', [1, 0, 0])).toBeCloseTo(Math.log(3), 14);
    });

    it('should agree between estimators on a sample with no singletons and all cells seen', () => {
      // Counts [5, 5]: f1 = 0 so C = 1, and each cell p = 1/2:
      // Chao–Shen = 2 · (½ ln 2) / (1 − ½¹⁰) (Horvitz–Thompson divisor), shrinkage target = u → λ = 0.
      const plugin = entropyOfCounts('plugin', [5, 5]);
      expect(plugin).toBeCloseTo(Math.LN2, 14);
      expect(entropyOfCounts('shrinkage', [5, 5])).toBeCloseTo(Math.LN2, 14);
      expect(entropyOfCounts('chao-shen', [5, 5])).toBeCloseTo(Math.LN2 / (1 - 0.5 ** 10), 14);
    });

    it('should never go below the plug-in for Miller–Madow (property)', () => {
      fc.assert(
        fc.property(fc.array(fc.integer({ min: 0, max: 20 }), { minLength: 1, maxLength: 12 }), counts => {
          fc.pre(counts.some(n => n > 0));
          expect(entropyOfCounts('miller-madow', counts)).toBeGreaterThanOrEqual(entropyOfCounts('plugin', counts));
        })
      );
    });
  });

  describe('#entropyNats', () => {
    it('should read singletons kept outside the counts buffer', () => {
      // Counts [2, 1, 1] given as the buffer [2] plus two extra singletons.
      const summary: ICountSummary = {
        total: 4,
        occupied: 3,
        singletons: 2,
        sumCountLogCount: 2 * Math.log(2),
        possibleCells: 6
      };
      const cells = { counts: [2], length: 1, extraSingletons: 2 };
      for (const estimator of ['plugin', 'miller-madow', 'chao-shen', 'shrinkage'] as const) {
        expect(entropyNats(estimator, summary, cells)).toBeCloseTo(entropyOfCounts(estimator, [2, 1, 1, 0, 0, 0]), 14);
      }
    });

    it('should refuse Chao–Shen without the counts', () => {
      const summary: ICountSummary = { total: 2, occupied: 2, singletons: 2, sumCountLogCount: 0, possibleCells: 2 };
      expectPolyadic(() => entropyNats('chao-shen', summary), 'internal', /needs the cell counts/);
    });
  });
});
