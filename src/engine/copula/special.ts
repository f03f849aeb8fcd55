/**
 * Two special functions the Gaussian-copula estimator needs: the standard normal quantile
 * (the copula transform) and the digamma function (the bias correction of Gaussian entropy).
 *
 * Both use only IEEE-754 arithmetic, `Math.sqrt` (correctly rounded by the standard) and
 * detmath's `ln`, so a browser and Node give the same bits, as for every other entropy.
 */

import { ln } from '../detmath';

/** AS 241 central region, |p − ½| ≤ 0.425: numerator coefficients a0 … a7 (Wichura 1988, PPND16). */
const CENTRAL_NUMERATOR = [
  3.387132872796366608, 1.3314166789178437745e2, 1.9715909503065514427e3, 1.3731693765509461125e4,
  4.5921953931549871457e4, 6.7265770927008700853e4, 3.3430575583588128105e4, 2.5090809287301226727e3
];
/** Denominator coefficients 1, b1 … b7. */
const CENTRAL_DENOMINATOR = [
  1, 4.2313330701600911252e1, 6.871870074920579083e2, 5.3941960214247511077e3, 2.1213794301586595867e4,
  3.930789580009271061e4, 2.8729085735721942674e4, 5.226495278852854561e3
];
/** Intermediate tail, r = √(−ln min(p, 1 − p)) ≤ 5: c0 … c7 and 1, d1 … d7. */
const NEAR_NUMERATOR = [
  1.42343711074968357734, 4.6303378461565452959, 5.7694972214606914055, 3.64784832476320460504,
  1.27045825245236838258, 2.4178072517745061177e-1, 2.27238449892691845833e-2, 7.7454501427834140764e-4
];
const NEAR_DENOMINATOR = [
  1, 2.05319162663775882187, 1.6763848301838038494, 6.8976733498510000455e-1, 1.4810397642748007459e-1,
  1.51986665636164571966e-2, 5.475938084995344946e-4, 1.05075007164441684324e-9
];
/** Far tail, r > 5: e0 … e7 and 1, f1 … f7. */
const FAR_NUMERATOR = [
  6.6579046435011037772, 5.4637849111641143699, 1.7848265399172913358, 2.9656057182850489123e-1,
  2.6532189526576123093e-2, 1.2426609473880784386e-3, 2.71155556874348757815e-5, 2.01033439929228813265e-7
];
const FAR_DENOMINATOR = [
  1, 5.9983220655588793769e-1, 1.3692988092273580531e-1, 1.48753612908506148525e-2, 7.868691311456132591e-4,
  1.8463183175100546818e-5, 1.4215117583164458887e-7, 2.04426310338993978564e-15
];

/** c0 + c1·x + … + c7·x⁷ by Horner's rule. */
function polynomial(coefficients: readonly number[], x: number): number {
  let value = coefficients[coefficients.length - 1];
  for (let i = coefficients.length - 2; i >= 0; i--) {
    value = value * x + coefficients[i];
  }
  return value;
}

/**
 * The standard normal quantile Φ⁻¹(p): Wichura's algorithm AS 241 (PPND16; Applied Statistics
 * 37:477–484, 1988), rational approximations in three regions with relative error about 1e-16.
 * Returns −∞ at 0, +∞ at 1 and NaN outside [0, 1]. Checked against scipy.stats.norm.ppf.
 */
export function normalQuantile(p: number): number {
  if (!(p >= 0 && p <= 1)) {
    return NaN;
  }
  if (p === 0) {
    return -Infinity;
  }
  if (p === 1) {
    return Infinity;
  }
  const q = p - 0.5;
  if (Math.abs(q) <= 0.425) {
    const r = 0.180625 - q * q;
    return (q * polynomial(CENTRAL_NUMERATOR, r)) / polynomial(CENTRAL_DENOMINATOR, r);
  }
  let r = Math.sqrt(-ln(q < 0 ? p : 1 - p));
  let value: number;
  if (r <= 5) {
    r -= 1.6;
    value = polynomial(NEAR_NUMERATOR, r) / polynomial(NEAR_DENOMINATOR, r);
  } else {
    r -= 5;
    value = polynomial(FAR_NUMERATOR, r) / polynomial(FAR_DENOMINATOR, r);
  }
  return q < 0 ? -value : value;
}

/**
 * The digamma function ψ(x) = Γ′(x)/Γ(x) for x > 0: the recurrence ψ(x) = ψ(x + 1) − 1/x up to
 * x ≥ 10, then the asymptotic series ψ(x) ~ ln x − 1/(2x) − Σ B₂ₖ/(2k·x²ᵏ) (Abramowitz & Stegun
 * 6.3.5 and 6.3.18) through x⁻¹⁴, whose first omitted term is below 1e-17 there. NaN for x ≤ 0.
 * Checked against scipy.special.psi.
 */
export function digamma(x: number): number {
  if (!(x > 0)) {
    return NaN;
  }
  let shift = 0;
  while (x < 10) {
    shift += 1 / x;
    x += 1;
  }
  const inverse = 1 / (x * x);
  // B2/2 = 1/12, B4/4 = −1/120, B6/6 = 1/252, B8/8 = −1/240, B10/10 = 1/132, B12/12 = −691/32760, B14/14 = 1/12.
  const series =
    inverse *
    (1 / 12 -
      inverse * (1 / 120 - inverse * (1 / 252 - inverse * (1 / 240 - inverse * (1 / 132 - inverse * (691 / 32760 - inverse / 12))))));
  return ln(x) - 0.5 / x - series - shift;
}
