/**
 * Conditioning chains of a run (src/engine/chains.ts): the chains `analyze` adds when asked,
 * against the run's own multiplets (each value is the co-information of a prefix), against the
 * chain rule computed from subset entropies of the codes, and on a hand-checked XOR example.
 */
import fc from 'fast-check';

import { analyze } from '../../src/engine/analyze';
import { latticeOfResult } from '../../src/engine/chains';
import { fromNats } from '../../src/engine/estimators';
import { computeLattice } from '../../src/engine/lattice';
import { conditionalCoinformation, type IEntropySource } from '../../src/engine/measures';
import type { IAnalysisResult, INumericColumn } from '../../src/engine/types';
import { categoricalColumn, codedTable, expectPolyadic, numericColumn, xorWithCopies } from './helpers';

/** The co-information of a set of names, read from the result's own multiplet rows. */
function coinformationIn(result: IAnalysisResult, names: string[]): number {
  const key = [...names].sort().join('\u0000');
  const row = result.multiplets.find(r => [...r.columns].sort().join('\u0000') === key);
  if (!row) {
    throw new Error(`no multiplet ${names.join(',')}`);
  }
  return row.co_information;
}

describe('conditioning chains', () => {
  describe('#analyze with chains', () => {
    it('should give the XOR chain x, y, z as 0 then −1 bit, the step being −I(x;y | z) = −1 bit', () => {
      // By hand: x and y are independent fair bits (I(x;y) = 0); given z = x xor y, either one
      // determines the other, so I(x;y | z) = H(x | z) = 1 bit, and I(x;y;z) = 0 − 1 = −1 bit.
      const result = analyze(xorWithCopies(), { bins: 'categorical', chains: [['x', 'y', 'z']] });
      expect(result.chains).toHaveLength(1);
      const [chain] = result.chains!;
      expect(chain.kind).toBe('ordering');
      expect(chain.columns).toEqual(['x', 'y', 'z']);
      expect(chain.values).toEqual([expect.closeTo(0, 12), expect.closeTo(-1, 12)]);
      expect(chain.steps).toEqual([expect.closeTo(-1, 12)]);
    });

    it('should grow the greedy chains from the XOR triplet and from the most redundant pair', () => {
      const result = analyze(xorWithCopies(), { bins: 'categorical', maxOrder: 3, chains: ['greedy-synergy', 'greedy-redundancy'] });
      const [synergy, redundancy] = result.chains!;
      expect(synergy.kind).toBe('greedy-synergy');
      expect([...synergy.columns].sort()).toEqual(['x', 'y', 'z']);
      expect(synergy.values[1]).toBeCloseTo(-1, 12);
      expect(redundancy.kind).toBe('greedy-redundancy');
      expect([...redundancy.columns.slice(0, 2)].sort()).toEqual(['c1', 'c2']);
      expect(redundancy.values[0]).toBeCloseTo(1, 12);
      expect(redundancy.columns).toHaveLength(3);
    });

    it('should give values equal to the co-information of each prefix among the run’s multiplets, for any ordering', () => {
      fc.assert(
        fc.property(codedTable(5, 40, 3, 3), fc.integer({ min: 0, max: 1000 }), (table, seed) => {
          const names = table.codes.map((_c, i) => `x${i}`);
          const columns = table.codes.map((codes, i) => numericColumn(names[i], codes));
          // a shuffled ordering of every column (the seed picks it)
          const ordering = [...names].sort((p, q) => ((names.indexOf(p) * 7919 + seed) % 13) - ((names.indexOf(q) * 7919 + seed) % 13));
          const result = analyze(columns, { bins: 'categorical', estimator: 'miller-madow', units: 'nats', chains: [ordering] });
          const chain = result.chains![0];
          chain.values.forEach((value, i) => {
            expect(value).toBeCloseTo(coinformationIn(result, ordering.slice(0, i + 2)), 12);
          });
        }),
        { numRuns: 40 }
      );
    });

    it('should give steps equal to −I(X1;…;Xk−1 | Xk) from the subset entropies of the codes', () => {
      fc.assert(
        fc.property(codedTable(5, 40, 3, 3), table => {
          const n = table.codes.length;
          const names = table.codes.map((_c, i) => `x${i}`);
          const ordering = [...names].reverse();
          const result = analyze(
            table.codes.map((codes, i) => numericColumn(names[i], codes)),
            { bins: 'categorical', chains: [ordering] }
          );
          // an entropy source over the codes with no lattice: every entropy counted afresh
          const binned = result.columns.map(column => column.bins);
          const codes = table.codes.map(c => Int32Array.from(c));
          // the categorical binning keeps each value as one code, in sorted value order
          const recoded = codes.map(c => {
            const levels = [...new Set(c)].sort((p, q) => p - q);
            return Int32Array.from(c, v => levels.indexOf(v));
          });
          const source: IEntropySource = { codes: recoded, bins: binned, estimator: 'plugin' };
          const order = ordering.map(name => names.indexOf(name));
          result.chains![0].steps.forEach((step, i) => {
            const prefix = order.slice(0, i + 2);
            const added = order[i + 2];
            expect(step).toBeCloseTo(-fromNats(conditionalCoinformation(source, prefix, [added]), 'bits'), 10);
          });
          expect(result.chains![0].values).toHaveLength(n - 1);
        }),
        { numRuns: 40 }
      );
    });

    it('should be the same with and without a top-N cut, with statistics, and in nats', () => {
      const base = analyze(xorWithCopies(), { bins: 'categorical', chains: [['z', 'c1', 'x']] });
      const cut = analyze(xorWithCopies(), { bins: 'categorical', top: 1, chains: [['z', 'c1', 'x']] });
      expect(cut.multiplets.length).toBeLessThan(base.multiplets.length);
      expect(cut.chains).toEqual(base.chains);
      const nats = analyze(xorWithCopies(), { bins: 'categorical', units: 'nats', chains: [['x', 'y', 'z']] });
      expect(nats.chains![0].values[1]).toBeCloseTo(-Math.LN2, 12);
      expect(analyze(xorWithCopies(), { bins: 'categorical' }).chains).toBeUndefined();
    });

    it('should refuse a column that is not analysed, a repeat, a single column, a chain longer than the maximum order, an unknown name', () => {
      const columns = [...xorWithCopies(), categoricalColumn('label', Array.from({ length: 16 }, (_v, i) => (i % 2 ? 'p' : 'q')))];
      expectPolyadic(() => analyze(columns, { chains: [['x', 'zeta']] }), 'usage', /names column 'zeta', which is not among the analysed columns/);
      expectPolyadic(() => analyze(columns, { chains: [['x', 'y', 'x']] }), 'usage', /lists column 'x' twice/);
      expectPolyadic(() => analyze(columns, { chains: [['x']] }), 'usage', /starts at a pair/);
      expectPolyadic(() => analyze(columns, { maxOrder: 2, chains: [['x', 'y', 'z']] }), 'usage', /more than the maximum order 2/);
      expectPolyadic(
        () => analyze(columns, { chains: ['greedy-sideways' as 'greedy-synergy'] }),
        'usage',
        /Unknown chain 'greedy-sideways'/
      );
    });
  });

  describe('#latticeOfResult', () => {
    it('should rebuild the walked lattice from a complete result and refuse a top-N result', () => {
      const columns = xorWithCopies();
      const result = analyze(columns, { bins: 'categorical', units: 'nats' });
      const rebuilt = latticeOfResult(result);
      if (typeof rebuilt === 'string') {
        throw new Error(rebuilt);
      }
      const codes = columns.map(column => Int32Array.from((column as INumericColumn).values as Float64Array));
      const walked = computeLattice({ codes, bins: [2, 2, 2, 2, 2], maxOrder: 5, estimator: 'plugin' });
      Array.from(walked.entropy).forEach((h, i) => expect(rebuilt.entropy[i]).toBeCloseTo(h, 12));
      expect(latticeOfResult(analyze(columns, { bins: 'categorical', top: 2 }))).toMatch(/without a top-N limit/);
    });
  });
});
