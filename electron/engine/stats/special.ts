/**
 * Special functions behind the parametric p-values: log-gamma, the regularised incomplete
 * beta function, and from it the tail probabilities of Student's t and Fisher's F.
 *
 * log Γ: Lanczos (1964) approximation with g = 7 and nine coefficients (the widely published
 * set; coefficients from memory, checked here against scipy through the GLM goldens).
 * I_x(a, b): the continued fraction of Numerical Recipes (Press et al. 2007, §6.4),
 * evaluated by the modified Lentz method, using I_x(a, b) = 1 − I_{1−x}(b, a) where it converges faster.
 *
 *   tTwoSidedP(2.228, 10) ≈ 0.05;  fUpperP(4.96, 1, 10) ≈ 0.05
 */

const LANCZOS = [
  0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059,
  12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7,
];

/** log Γ(x) for x > 0. */
export function logGamma(x: number): number {
  if (x < 0.5) {
    // Reflection keeps the series in its accurate range.
    return Math.log(Math.PI / Math.abs(Math.sin(Math.PI * x))) - logGamma(1 - x);
  }
  const z = x - 1;
  let s = LANCZOS[0];
  for (let k = 1; k < 9; k++) s += LANCZOS[k] / (z + k);
  const t = z + 7.5;
  return 0.5 * Math.log(2 * Math.PI) + (z + 0.5) * Math.log(t) - t + Math.log(s);
}

/** The regularised incomplete beta function I_x(a, b), a, b > 0, 0 ≤ x ≤ 1. */
export function incompleteBeta(x: number, a: number, b: number): number {
  if (!(x >= 0 && x <= 1)) return NaN;
  if (x === 0) return 0;
  if (x === 1) return 1;
  const logFront = logGamma(a + b) - logGamma(a) - logGamma(b) + a * Math.log(x) + b * Math.log1p(-x);
  if (x < (a + 1) / (a + b + 2)) return (Math.exp(logFront) * betaFraction(x, a, b)) / a;
  return 1 - (Math.exp(logFront) * betaFraction(1 - x, b, a)) / b;
}

function betaFraction(x: number, a: number, b: number): number {
  const tiny = 1e-300;
  const eps = 1e-16;
  let c = 1;
  let d = 1 - ((a + b) * x) / (a + 1);
  if (Math.abs(d) < tiny) d = tiny;
  d = 1 / d;
  let h = d;
  for (let m = 1; m <= 10000; m++) {
    const m2 = 2 * m;
    // Even step of the fraction.
    let num = (m * (b - m) * x) / ((a + m2 - 1) * (a + m2));
    d = 1 + num * d;
    if (Math.abs(d) < tiny) d = tiny;
    c = 1 + num / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    h *= d * c;
    // Odd step.
    num = (-(a + m) * (a + b + m) * x) / ((a + m2) * (a + m2 + 1));
    d = 1 + num * d;
    if (Math.abs(d) < tiny) d = tiny;
    c = 1 + num / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    const delta = d * c;
    h *= delta;
    if (Math.abs(delta - 1) < eps) break;
  }
  return h;
}

/** P(|T| ≥ |t|) for Student's t with `df` degrees of freedom. */
export function tTwoSidedP(t: number, df: number): number {
  if (Number.isNaN(t) || !(df > 0)) return NaN;
  if (!Number.isFinite(t)) return 0;
  return incompleteBeta(df / (df + t * t), df / 2, 0.5);
}

/** P(F ≥ f) for Fisher's F with (df1, df2) degrees of freedom. */
export function fUpperP(f: number, df1: number, df2: number): number {
  if (Number.isNaN(f) || !(df1 > 0) || !(df2 > 0)) return NaN;
  if (f <= 0) return 1;
  if (!Number.isFinite(f)) return 0;
  return incompleteBeta(df2 / (df2 + df1 * f), df2 / 2, df1 / 2);
}
