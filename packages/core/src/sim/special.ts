/**
 * Special functions the simulator needs: erf, the normal CDF and its inverse, log-factorial.
 * Internal to the sim area (not exported from the barrel).
 */

const TWO_OVER_SQRT_PI = 1.1283791670955126; // 2/sqrt(pi)
const LN_SQRT_2PI = 0.9189385332046728; // ln(sqrt(2 pi))

/**
 * Error function, absolute error below about 1e-15 everywhere.
 *
 * Method: for |x| < 3 the all-positive series erf(x) = 2x/sqrt(pi) e^(-x^2) sum_n (2x^2)^n / (1*3*...*(2n+1))
 * (Abramowitz & Stegun 7.1.6; no cancellation); beyond, erfc by its continued fraction
 * (A&S 7.1.14), evaluated with the modified Lentz algorithm (Numerical Recipes 3rd ed. §5.2; from memory).
 */
export function erf(x: number): number {
  const ax = Math.abs(x);
  if (ax < 3) {
    const x2 = x * x;
    const twoX2 = 2 * x2;
    let term = 1;
    let sum = 1;
    for (let n = 1; n < 200; n++) {
      term *= twoX2 / (2 * n + 1);
      sum += term;
      if (term < 1e-17 * sum) break;
    }
    return TWO_OVER_SQRT_PI * x * Math.exp(-x2) * sum;
  }
  const c = erfcLarge(ax);
  return x > 0 ? 1 - c : c - 1;
}

/** Complementary error function, accurate in relative terms for large positive x. */
export function erfc(x: number): number {
  if (x < 3) return 1 - erf(x);
  return erfcLarge(x);
}

// erfc(x) = exp(-x^2)/sqrt(pi) * 1/(x + (1/2)/(x + 1/(x + (3/2)/(x + 2/(x + ...))))), x >= 3.
function erfcLarge(x: number): number {
  const tiny = 1e-300;
  let f = x;
  let c = x;
  let d = 0;
  for (let n = 1; n < 300; n++) {
    const a = n / 2;
    d = x + a * d;
    d = d === 0 ? tiny : 1 / d;
    c = x + a / c;
    if (c === 0) c = tiny;
    const delta = c * d;
    f *= delta;
    if (Math.abs(delta - 1) < 1e-16) break;
  }
  return (Math.exp(-x * x) / Math.sqrt(Math.PI)) / f;
}

/** Standard normal CDF Φ(z). */
export function normalCdf(z: number): number {
  // Φ(z) = erfc(-z/√2)/2; using erfc keeps relative accuracy in the lower tail.
  return z < 0 ? 0.5 * erfc(-z * Math.SQRT1_2) : 1 - 0.5 * erfc(z * Math.SQRT1_2);
}

/** Inverse of the standard normal CDF, by bisection then Newton steps on `normalCdf` (|error| < 1e-12). */
export function normalQuantile(p: number): number {
  if (!(p > 0 && p < 1)) return p === 0 ? -Infinity : p === 1 ? Infinity : Number.NaN;
  let lo = -40;
  let hi = 40;
  for (let i = 0; i < 60; i++) {
    const mid = 0.5 * (lo + hi);
    if (normalCdf(mid) < p) lo = mid;
    else hi = mid;
  }
  let z = 0.5 * (lo + hi);
  for (let i = 0; i < 3; i++) {
    const pdf = Math.exp(-0.5 * z * z - LN_SQRT_2PI);
    if (pdf === 0) break;
    z -= (normalCdf(z) - p) / pdf;
  }
  return z;
}

const LOG_FACTORIAL_TABLE_SIZE = 256;
/** ln(k!) for k < 256, summed once at load. */
export const LOG_FACTORIAL: Float64Array = (() => {
  const t = new Float64Array(LOG_FACTORIAL_TABLE_SIZE);
  let acc = 0;
  for (let k = 1; k < LOG_FACTORIAL_TABLE_SIZE; k++) {
    acc += Math.log(k);
    t[k] = acc;
  }
  return t;
})();

/**
 * ln(k!) for integer k >= 0: table below 256, Stirling's series above
 * (ln Γ(x) = (x - 1/2) ln x - x + ln√(2π) + 1/(12x) - 1/(360x³) + 1/(1260x⁵), x = k + 1; A&S 6.1.41),
 * whose truncation error at x > 256 is below 1e-17.
 */
export function logFactorial(k: number): number {
  if (k < LOG_FACTORIAL_TABLE_SIZE) return LOG_FACTORIAL[k] ?? Number.NaN;
  return stirlingLogGamma(k + 1);
}

/** ln Γ(x) by Stirling's series; accurate to ~1e-15 relative for x >= 10. */
export function stirlingLogGamma(x: number): number {
  const inv = 1 / x;
  const inv2 = inv * inv;
  return (x - 0.5) * Math.log(x) - x + LN_SQRT_2PI + inv * (1 / 12 - inv2 * (1 / 360 - inv2 / 1260));
}

export { LOG_FACTORIAL_TABLE_SIZE };
