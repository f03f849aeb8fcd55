/**
 * Engine-independent ln and exp (src/engine/detmath.ts), checked against the platform's own
 * Math.log / Math.exp (within 1 ulp: fdlibm's documented error bound, and V8's Math functions
 * are themselves within 1 ulp) and against values fixed by definition.
 */
import fc from 'fast-check';

import { exp, expm1, ln, log1p } from '../../src/engine/detmath';

/** Distance in units of the last place between two finite doubles of the same sign. */
function ulps(a: number, b: number): number {
  const view = new DataView(new ArrayBuffer(16));
  view.setFloat64(0, a);
  view.setFloat64(8, b);
  const ia = view.getBigInt64(0);
  const ib = view.getBigInt64(8);
  const d = ia > ib ? ia - ib : ib - ia;
  return Number(d);
}

describe('detmath', () => {
  describe('#ln', () => {
    it('should give exact values where the answer is fixed by definition', () => {
      expect(ln(1)).toBe(0);
      expect(ln(2)).toBe(Math.LN2);
      expect(ln(0)).toBe(-Infinity);
      expect(ln(-0)).toBe(-Infinity);
      expect(ln(-1)).toBeNaN();
      expect(ln(NaN)).toBeNaN();
      expect(ln(Infinity)).toBe(Infinity);
    });

    it('should agree with Math.log within 1 ulp on every count up to 200,000', () => {
      let worst = 0;
      for (let n = 2; n <= 200_000; n++) {
        worst = Math.max(worst, ulps(ln(n), Math.log(n)));
      }
      expect(worst).toBeLessThanOrEqual(1);
    });

    it('should agree with Math.log within 1 ulp on random positive doubles, subnormals included', () => {
      fc.assert(
        fc.property(fc.double({ min: Number.MIN_VALUE, max: Number.MAX_VALUE, noNaN: true }), x => {
          const a = ln(x);
          const b = Math.log(x);
          return a === b || (Math.sign(a) === Math.sign(b) && ulps(a, b) <= 1);
        }),
        { numRuns: 20_000 }
      );
    });
  });

  describe('#exp', () => {
    it('should give exact values where the answer is fixed by definition', () => {
      expect(exp(0)).toBe(1);
      expect(exp(-Infinity)).toBe(0);
      expect(exp(Infinity)).toBe(Infinity);
      expect(exp(NaN)).toBeNaN();
      expect(exp(800)).toBe(Infinity);
      expect(exp(-800)).toBe(0);
    });

    it('should agree with Math.exp within 1 ulp across the normal range', () => {
      fc.assert(
        fc.property(fc.double({ min: -700, max: 700, noNaN: true }), x => ulps(exp(x), Math.exp(x)) <= 1),
        { numRuns: 20_000 }
      );
    });
  });

  describe('#log1p and #expm1', () => {
    it('should keep relative accuracy near zero, as Math.log1p and Math.expm1 do', () => {
      fc.assert(
        fc.property(fc.double({ min: -0.5, max: 0.5, noNaN: true }), x => {
          if (x === 0) {
            return log1p(x) === 0 && expm1(x) === 0;
          }
          const a = Math.abs(log1p(x) / Math.log1p(x) - 1);
          const b = Math.abs(expm1(x) / Math.expm1(x) - 1);
          return a < 4e-16 * 4 && b < 4e-16 * 4;
        }),
        { numRuns: 20_000 }
      );
      expect(log1p(1e-300)).toBe(1e-300);
      expect(expm1(-1e-300)).toBe(-1e-300);
    });
  });
});
