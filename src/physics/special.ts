/**
 * Special functions for counting statistics: ln Γ(x) and the χ² distribution's upper tail (a fit's goodness of
 * fit). ln Γ by the Lanczos approximation with g = 7, n = 9 (the coefficients used by many numerical libraries;
 * relative error below 1e-15 for x > 0), the reflection formula below ½; the regularized upper incomplete gamma
 * Q(a, x) by its series for x < a + 1 and by its continued fraction (modified Lentz) otherwise (W. H. Press et al.,
 * Numerical Recipes, 3rd ed., §6.2; common practice).
 */

const LANCZOS = [
  0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059,
  12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7,
];

/** ln Γ(x) for x > 0. */
export function lnGamma(x: number): number {
  if (x < 0.5) return Math.log(Math.PI / Math.abs(Math.sin(Math.PI * x))) - lnGamma(1 - x);
  const z = x - 1;
  let a = LANCZOS[0];
  const t = z + 7.5;
  for (let i = 1; i < 9; i++) a += LANCZOS[i] / (z + i);
  return 0.5 * Math.log(2 * Math.PI) + (z + 0.5) * Math.log(t) - t + Math.log(a);
}

/** The regularized upper incomplete gamma function Q(a, x) = Γ(a, x)/Γ(a), a > 0, x ≥ 0. */
export function gammaQ(a: number, x: number): number {
  if (!(a > 0) || !(x >= 0)) return NaN;
  if (x === 0) return 1;
  const lead = -x + a * Math.log(x) - lnGamma(a);
  if (x < a + 1) {
    // P by its series Σ x^n / (a (a+1) … (a+n)), Q = 1 − P
    let ap = a, sum = 1 / a, del = sum;
    for (let n = 0; n < 10000; n++) {
      ap += 1;
      del *= x / ap;
      sum += del;
      if (Math.abs(del) < Math.abs(sum) * 1e-16) break;
    }
    return Math.max(0, 1 - sum * Math.exp(lead));
  }
  // continued fraction for Q (modified Lentz)
  const tiny = 1e-300;
  let b = x + 1 - a, c = 1 / tiny, d = 1 / b, h = d;
  for (let i = 1; i < 10000; i++) {
    const an = -i * (i - a);
    b += 2;
    d = an * d + b;
    if (Math.abs(d) < tiny) d = tiny;
    c = b + an / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    const del = d * c;
    h *= del;
    if (Math.abs(del - 1) < 1e-16) break;
  }
  return Math.exp(lead) * h;
}

/** P(χ²_k ≥ x): the probability that a χ² variable with k degrees of freedom is at least x. */
export function chiSquareSurvival(x: number, k: number): number {
  return gammaQ(k / 2, x / 2);
}
