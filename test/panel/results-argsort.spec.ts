/**
 * Specs of the radix argsort behind the results tables, against a comparator sort (stable by
 * ECMAScript 2019's Array.prototype.sort) on seeded keys with ties, signed zeros, infinities
 * and NaN.
 */
import fc from 'fast-check';

import { argsortByValue } from '../../src/panel/results/argsort';

/** The reference: indices sorted by a comparator, NaN last, ties in input order. */
function reference(indices: number[], values: number[], descending: boolean): number[] {
  return [...indices].sort((a, b) => {
    const x = values[a];
    const y = values[b];
    if (Number.isNaN(x) || Number.isNaN(y)) {
      return Number.isNaN(x) ? (Number.isNaN(y) ? 0 : 1) : -1;
    }
    return descending ? y - x || 0 : x - y || 0;
  });
}

describe('argsortByValue', () => {
  it('should order like a stable comparator sort, both directions', () => {
    const value = fc.oneof(
      fc.constantFrom(0, -0, 1, -1, Infinity, -Infinity, NaN, 5e-324, -5e-324, Number.MAX_VALUE),
      fc.double({ noNaN: true }),
      fc.integer({ min: -3, max: 3 })
    );
    fc.assert(
      fc.property(fc.array(value, { maxLength: 300 }), fc.boolean(), fc.boolean(), (values, descending, shuffle) => {
        let indices = values.map((_v, i) => i);
        if (shuffle) {
          indices = indices.filter(i => i % 3 !== 1).reverse();
        }
        const sorted = argsortByValue(Uint32Array.from(indices), values, descending);
        expect(Array.from(sorted)).toEqual(reference(indices, values, descending));
      }),
      { seed: 20310415, numRuns: 300 }
    );
  });

  it('should tie −0 with 0 and keep their input order', () => {
    const values = [0, -0, 0, -0];
    expect(Array.from(argsortByValue(Uint32Array.from([3, 2, 1, 0]), values))).toEqual([3, 2, 1, 0]);
  });
});
