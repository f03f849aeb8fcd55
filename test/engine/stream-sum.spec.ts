/**
 * The streamed numpy sum equals the in-memory one to the bit, for every count and chunking:
 * numpySum itself is checked against numpy in binning-numpy.spec.ts (numpy at test time).
 */
import { unsafeUniformIntDistribution, xoroshiro128plus } from 'pure-rand';

import { StreamingNumpySum } from '../../src/engine/aggregate/stream-sum';
import { numpySum } from '../../src/engine/floatmath';

function randomValues(n: number, seed: number): Float64Array {
  const rng = xoroshiro128plus(seed);
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const a = unsafeUniformIntDistribution(0, 2 ** 30, rng);
    // values of mixed magnitude, so the order of additions shows in the last bits
    out[i] = (a / 2 ** 30 - 0.5) * 10 ** ((a % 7) - 3);
  }
  return out;
}

function streamed(values: Float64Array, fromIntegers: boolean, chunk: number): number {
  const sum = new StreamingNumpySum(values.length, fromIntegers);
  for (let start = 0; start < values.length; start += chunk) {
    sum.push(values.subarray(start, Math.min(values.length, start + chunk)));
  }
  return sum.result();
}

describe('StreamingNumpySum', () => {
  describe('#result', () => {
    it('should equal numpySum to the bit for every count up to 1,100 and several chunkings', () => {
      const values = randomValues(1100, 7);
      for (let n = 0; n <= 1100; n += n < 300 ? 1 : 37) {
        const x = values.subarray(0, n);
        for (const chunk of [1, 7, 128, 2048]) {
          expect(Object.is(streamed(x, false, chunk), numpySum(x))).toBe(true);
        }
      }
    });

    it('should follow the casting-buffer chunks of integer sums', () => {
      const values = randomValues(50_000, 11).map(v => Math.round(v * 1000));
      for (const n of [8191, 8192, 8193, 20_000, 50_000]) {
        const x = values.subarray(0, n);
        expect(Object.is(streamed(x, true, 2048), numpySum(x, true))).toBe(true);
        expect(Object.is(streamed(x, false, 1000), numpySum(x, false))).toBe(true);
      }
    });

    it('should differ from a plain left-to-right sum on these values (the check can fail)', () => {
      const x = randomValues(10_000, 3);
      let plain = 0;
      for (const v of x) {
        plain += v;
      }
      expect(streamed(x, false, 333)).not.toBe(plain);
    });

    it('should refuse a result before every value came, and values beyond the count', () => {
      const sum = new StreamingNumpySum(3);
      sum.push([1, 2]);
      expect(() => sum.result()).toThrow('2 of the 3 values');
      expect(() => sum.push([3, 4])).toThrow('More than the 3 values');
    });
  });
});
