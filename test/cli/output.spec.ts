/**
 * The CLI's streamed output: a result written row by row from its lattice (multipletRows,
 * writeResult) is byte for byte the text of the whole result (formatResult), in JSON and CSV,
 * for every row selection and whether or not rows carry adequacy.
 */
import { analyzeCodes, latticeInput, multipletRows, prepareColumns } from '../../src/engine/analyze';
import type { IAnalyzeOptions } from '../../src/engine/types';
import { walkLattice } from '../../src/engine/walk';
import { formatResult, OUTPUT_FORMATS, writeResult } from '../../src/cli/output';
import { makeColumns } from '../worker/data';
import { categoricalColumn, numericColumn } from '../engine/helpers';

describe('output', () => {
  describe('#writeResult', () => {
    const columns = makeColumns(300, 6, 11);
    const cases: [string, IAnalyzeOptions][] = [
      ['every multiplet', { maxOrder: 6 }],
      ['order ≤ 2, nats', { maxOrder: 2, units: 'nats' }],
      ['the top 7 of each sign, with chains', { maxOrder: 4, top: 7, chains: ['greedy-synergy'] }],
      ['the Gaussian copula (no adequacy)', { maxOrder: 3, estimator: 'gaussian-copula' }]
    ];
    for (const [label, options] of cases) {
      for (const format of OUTPUT_FORMATS) {
        it(`should write the bytes of the whole result from the lattice's rows (${label}, ${format})`, () => {
          // the copula takes numeric columns only
          const data = options.estimator === 'gaussian-copula' ? columns.filter(c => c.kind === 'numeric') : columns;
          expect(data.length).toBeGreaterThanOrEqual(3);
          const prepared = prepareColumns(data, options);
          const whole = analyzeCodes(prepared, options);
          const lattice = walkLattice(latticeInput(prepared, options));
          const bare = analyzeCodes(prepared, options, lattice, undefined, false);
          expect(bare.multiplets).toEqual([]);
          const chunks: string[] = [];
          writeResult(bare, multipletRows(bare, lattice, options.top ?? null), format, text => chunks.push(text));
          expect(chunks.join('')).toBe(formatResult(whole, format));
          // rows of a full lattice of 6 columns: more than one chunk of the JSON
          if (label === 'every multiplet') {
            expect(whole.multiplets.length).toBe(63);
          }
        });
      }
    }

    it('should write many rows in several chunks, and a column named like the marker whole', () => {
      const many = makeColumns(200, 12, 5);
      const options = { maxOrder: 12 };
      const prepared = prepareColumns(many, options);
      const lattice = walkLattice(latticeInput(prepared, options));
      const whole = analyzeCodes(prepared, options, lattice);
      const bare = analyzeCodes(prepared, options, lattice, undefined, false);
      for (const format of OUTPUT_FORMATS) {
        const chunks: string[] = [];
        writeResult(bare, multipletRows(bare, lattice, null), format, text => chunks.push(text));
        expect(chunks.length).toBeGreaterThan(3);
        expect(chunks.join('')).toBe(formatResult(whole, format));
      }
      const odd = [numericColumn('polyadic-rows-8c1f5e2a', [1, 2, 1, 2]), categoricalColumn('=b', ['x', 'y', 'y', 'x'])];
      const oddPrepared = prepareColumns(odd, {});
      const oddLattice = walkLattice(latticeInput(oddPrepared, {}));
      const oddBare = analyzeCodes(oddPrepared, {}, oddLattice, undefined, false);
      for (const format of OUTPUT_FORMATS) {
        const chunks: string[] = [];
        writeResult(oddBare, multipletRows(oddBare, oddLattice, null), format, text => chunks.push(text));
        expect(chunks.join('')).toBe(formatResult(analyzeCodes(oddPrepared, {}), format));
      }
    });
  });
});
