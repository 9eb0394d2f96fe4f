// The regularised incomplete beta function I_x(a, b), its inverse, and the central
// Clopper-Pearson interval built from them (Biometrika 26 (1934) 404: the bounds of a binomial
// proportion are beta-distribution quantiles).
//
// I_x(a, b) = x^a (1-x)^b / (a B(a, b)) * K(x), with K the continued fraction of DLMF 8.17.22,
// which converges quickly for x < (a+1)/(a+b+2); above that the symmetry
// I_x(a, b) = 1 - I_{1-x}(b, a) is used instead (DLMF 8.17.4).
//
// The front factor is taken in logarithms, written around the beta's mean p = a/(a+b) so that
// the large terms of log B(a, b) cancel analytically instead of in floating point:
//   log(x^a (1-x)^b / B(a, b)) = a log(x/p) + b log((1-x)/q) + log(ab/(a+b))/2 - log(2 pi)/2
//                                - delta(a) - delta(b) + delta(a+b)
// with q = b/(a+b) and delta(z) = log Gamma(z) - ((z - 1/2) log z - z + log(2 pi)/2), the
// remainder of Stirling's formula (DLMF 5.11.1), small for every z >= 1. Near a quantile x/p
// is close to 1, so each term stays of the order of sqrt(a) and bins of a million events keep
// about 1e-12 relative accuracy.
//
// The inverse is bisection on [0, 1]: slower than Newton's method but it cannot leave the
// interval or oscillate, and a turn-on curve needs only two quantiles per bin.

const HALF_LOG_TWO_PI = 0.5 * Math.log(2 * Math.PI);
/** below this the Stirling series is not used directly; shifted up instead */
const STIRLING_FROM = 10;
/** guard against division by zero in the continued fraction (modified Lentz method) */
const LENTZ_FLOOR = 1e-300;
const FRACTION_TOLERANCE = 1e-16;
const FRACTION_STEPS_MAX = 1_000_000;

/**
 * Stirling remainder for z >= 10: sum of B_2k / (2k (2k-1) z^(2k-1)), k = 1..7 (DLMF 5.11.1,
 * Bernoulli numbers 1/6, -1/30, 1/42, -1/30, 5/66, -691/2730, 7/6). The next term at z = 10 is
 * below 1e-17.
 */
function stirlingSeries(z: number): number {
  const inverse = 1 / z;
  const inverse2 = inverse * inverse;
  return inverse * (1 / 12 + inverse2 * (-1 / 360 + inverse2 * (1 / 1260 + inverse2 * (-1 / 1680
    + inverse2 * (1 / 1188 + inverse2 * (-691 / 360360 + inverse2 * (1 / 156)))))));
}

/** delta(z) = log Gamma(z) - ((z - 1/2) log z - z + log(2 pi)/2), for z > 0. */
export function stirlingRemainder(z: number): number {
  if (z >= STIRLING_FROM) return stirlingSeries(z);
  // log Gamma(z) = log Gamma(z + m) - log(z (z+1) ... (z+m-1)), with z + m >= 10
  let shifted = z;
  let product = 1;
  while (shifted < STIRLING_FROM) {
    product *= shifted;
    shifted += 1;
  }
  const logGammaShifted = (shifted - 0.5) * Math.log(shifted) - shifted + HALF_LOG_TWO_PI + stirlingSeries(shifted);
  const logGamma = logGammaShifted - Math.log(product);
  return logGamma - ((z - 0.5) * Math.log(z) - z + HALF_LOG_TWO_PI);
}

/** log Gamma(z) for z > 0 */
export function logGamma(z: number): number {
  return (z - 0.5) * Math.log(z) - z + HALF_LOG_TWO_PI + stirlingRemainder(z);
}

/** log(x^a (1-x)^b / B(a, b)), for 0 < x < 1 */
function logFrontFactor(x: number, a: number, b: number): number {
  const total = a + b;
  const p = a / total;
  const q = b / total;
  // near the mean, log1p of the small difference: (1-x)/q - 1 = (p-x)/q keeps its digits when
  // p is tiny, where 1 - x would already have lost them (b = n and k = 0 in Clopper-Pearson)
  const logXOverP = x > 0.5 * p && x < 2 * p ? Math.log1p((x - p) / p) : Math.log(x / p);
  const rest = 1 - x;
  const logRestOverQ = rest > 0.5 * q && rest < 2 * q ? Math.log1p((p - x) / q) : Math.log(rest / q);
  return a * logXOverP + b * logRestOverQ + 0.5 * Math.log((a / total) * b) - HALF_LOG_TWO_PI
    - stirlingRemainder(a) - stirlingRemainder(b) + stirlingRemainder(total);
}

/** The continued fraction K(x) of DLMF 8.17.22 by the modified Lentz method. */
function betaFraction(x: number, a: number, b: number): number {
  // K = 1 / (1 + d1 / (1 + d2 / (1 + ...))), with
  //   d(2m+1) = -(a+m)(a+b+m) x / ((a+2m)(a+2m+1)),  d(2m) = m(b-m) x / ((a+2m-1)(a+2m))
  let numerator = 1;
  let denominator = 1 - ((a + b) * x) / (a + 1);
  if (Math.abs(denominator) < LENTZ_FLOOR) denominator = LENTZ_FLOOR;
  denominator = 1 / denominator;
  let value = denominator;
  for (let m = 1; m <= FRACTION_STEPS_MAX; m++) {
    const even = (m * (b - m) * x) / ((a + 2 * m - 1) * (a + 2 * m));
    denominator = 1 + even * denominator;
    if (Math.abs(denominator) < LENTZ_FLOOR) denominator = LENTZ_FLOOR;
    numerator = 1 + even / numerator;
    if (Math.abs(numerator) < LENTZ_FLOOR) numerator = LENTZ_FLOOR;
    denominator = 1 / denominator;
    value *= denominator * numerator;
    const odd = (-(a + m) * (a + b + m) * x) / ((a + 2 * m) * (a + 2 * m + 1));
    denominator = 1 + odd * denominator;
    if (Math.abs(denominator) < LENTZ_FLOOR) denominator = LENTZ_FLOOR;
    numerator = 1 + odd / numerator;
    if (Math.abs(numerator) < LENTZ_FLOOR) numerator = LENTZ_FLOOR;
    denominator = 1 / denominator;
    const step = denominator * numerator;
    value *= step;
    if (Math.abs(step - 1) <= FRACTION_TOLERANCE) break;
  }
  return value;
}

/** I_x(a, b) for a, b > 0; 0 at x <= 0, 1 at x >= 1. */
export function regularizedIncompleteBeta(x: number, a: number, b: number): number {
  if (!(a > 0 && b > 0) || Number.isNaN(x)) return NaN;
  if (x <= 0) return 0;
  if (x >= 1) return 1;
  if (x < (a + 1) / (a + b + 2)) return (Math.exp(logFrontFactor(x, a, b)) * betaFraction(x, a, b)) / a;
  const y = 1 - x;
  return 1 - (Math.exp(logFrontFactor(y, b, a)) * betaFraction(y, b, a)) / b;
}

/** The x in [0, 1] with I_x(a, b) = probability, by bisection to about 1e-15 relative. */
export function betaQuantile(probability: number, a: number, b: number): number {
  if (!(a > 0 && b > 0) || !(probability >= 0 && probability <= 1)) return NaN;
  if (probability === 0) return 0;
  if (probability === 1) return 1;
  let low = 0;
  let high = 1;
  // 1100 halvings reach the smallest subnormal; the relative stop ends far sooner
  for (let step = 0; step < 1100; step++) {
    const middle = 0.5 * (low + high);
    if (middle <= low || middle >= high) break;
    if (regularizedIncompleteBeta(middle, a, b) < probability) low = middle;
    else high = middle;
    if (high - low <= 1e-15 * high) break;
  }
  return 0.5 * (low + high);
}

/** 68.27 %: the probability within one standard deviation of a normal distribution's mean */
export const CONFIDENCE_68 = 0.6827;

/**
 * Central Clopper-Pearson interval of `passed` out of `events` (events >= 1) at `confidence`:
 * lower = B^-1(alpha/2; k, n-k+1), 0 when k = 0; upper = B^-1(1-alpha/2; k+1, n-k), 1 when k = n.
 * Writes [lower, upper] into `out` (no allocation per bin) and returns it.
 */
export function clopperPearson(passed: number, events: number, confidence: number, out: Float64Array = new Float64Array(2)): Float64Array {
  const alpha = 1 - confidence;
  out[0] = passed === 0 ? 0 : betaQuantile(alpha / 2, passed, events - passed + 1);
  out[1] = passed === events ? 1 : betaQuantile(1 - alpha / 2, passed + 1, events - passed);
  return out;
}
