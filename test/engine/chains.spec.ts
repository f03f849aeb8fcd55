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
import type { IAnalysisResult } from '../../src/engine/types';
import { categoricalColumn, codedTable, expectPolyadic, numericColumn } from './helpers';

/** XOR of two fair bits with a noise column, every combination twice: 16 rows. */
function xorColumns(): ReturnType<typeof numericColumn>[] {
  const a: number[] = [];
  const b: number[] = [];
  const noise: number[] = [];
  for (let r = 0; r < 16; r++) {
    a.push(r & 1);
    b.push((r >> 1) & 1);
    noise.push((r >> 2) & 1);
  }
  return [
    numericColumn('a', a),
    numericColumn('b', b),
    numericColumn('c', a.map((x, i) => x ^ b[i])),
    numericColumn('noise', noise)
  ];
}

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
    it('should give the XOR chain a, b, c as 0 then −1 bit, the step being −I(a;b | c) = −1 bit', () => {
      // By hand: a and b are independent fair bits (I(a;b) = 0); given c = a xor b, either one
      // determines the other, so I(a;b | c) = H(a | c) = 1 bit, and I(a;b;c) = 0 − 1 = −1 bit.
      const result = analyze(xorColumns(), { bins: 'categorical', chains: [['a', 'b', 'c']] });
      expect(result.chains).toHaveLength(1);
      const [chain] = result.chains!;
      expect(chain.kind).toBe('ordering');
      expect(chain.columns).toEqual(['a', 'b', 'c']);
      expect(chain.values).toEqual([expect.closeTo(0, 12), expect.closeTo(-1, 12)]);
      expect(chain.steps).toEqual([expect.closeTo(-1, 12)]);
    });

    it('should grow the greedy chains from the XOR triplet and from the most redundant pair', () => {
      const columns = [...xorColumns(), numericColumn('copy_of_noise', xorColumns()[3].values as Float64Array)];
      const result = analyze(columns, { bins: 'categorical', maxOrder: 3, chains: ['greedy-synergy', 'greedy-redundancy'] });
      const [synergy, redundancy] = result.chains!;
      expect(synergy.kind).toBe('greedy-synergy');
      expect([...synergy.columns].sort()).toEqual(['a', 'b', 'c']);
      expect(synergy.values[1]).toBeCloseTo(-1, 12);
      expect(redundancy.kind).toBe('greedy-redundancy');
      expect([...redundancy.columns.slice(0, 2)].sort()).toEqual(['copy_of_noise', 'noise']);
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
      const base = analyze(xorColumns(), { bins: 'categorical', chains: [['c', 'noise', 'a']] });
      const cut = analyze(xorColumns(), { bins: 'categorical', top: 1, chains: [['c', 'noise', 'a']] });
      expect(cut.multiplets.length).toBeLessThan(base.multiplets.length);
      expect(cut.chains).toEqual(base.chains);
      const nats = analyze(xorColumns(), { bins: 'categorical', units: 'nats', chains: [['a', 'b', 'c']] });
      expect(nats.chains![0].values[1]).toBeCloseTo(-Math.LN2, 12);
      expect(analyze(xorColumns(), { bins: 'categorical' }).chains).toBeUndefined();
    });

    it('should refuse a column that is not analysed, a repeat, a single column, a chain longer than the maximum order, an unknown name', () => {
      const columns = [...xorColumns(), categoricalColumn('label', Array.from({ length: 16 }, (_v, i) => (i % 2 ? 'x' : 'y')))];
      expectPolyadic(() => analyze(columns, { chains: [['a', 'zeta']] }), 'usage', /names column 'zeta', which is not among the analysed columns/);
      expectPolyadic(() => analyze(columns, { chains: [['a', 'b', 'a']] }), 'usage', /lists column 'a' twice/);
      expectPolyadic(() => analyze(columns, { chains: [['a']] }), 'usage', /starts at a pair/);
      expectPolyadic(() => analyze(columns, { maxOrder: 2, chains: [['a', 'b', 'c']] }), 'usage', /more than the maximum order 2/);
      expectPolyadic(
        () => analyze(columns, { chains: ['greedy-sideways' as 'greedy-synergy'] }),
        'usage',
        /Unknown chain 'greedy-sideways'/
      );
    });
  });

  describe('#latticeOfResult', () => {
    it('should rebuild the walked lattice from a complete result and refuse a top-N result', () => {
      const columns = xorColumns();
      const result = analyze(columns, { bins: 'categorical', units: 'nats' });
      const rebuilt = latticeOfResult(result);
      if (typeof rebuilt === 'string') {
        throw new Error(rebuilt);
      }
      const codes = columns.map(column => Int32Array.from(column.values as ArrayLike<number>));
      const walked = computeLattice({ codes, bins: [2, 2, 2, 2], maxOrder: 4, estimator: 'plugin' });
      Array.from(walked.entropy).forEach((h, i) => expect(rebuilt.entropy[i]).toBeCloseTo(h, 12));
      expect(latticeOfResult(analyze(columns, { bins: 'categorical', top: 2 }))).toMatch(/without a top-N limit/);
    });
  });
});
