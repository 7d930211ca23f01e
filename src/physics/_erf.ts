/**
 * Error function, its complement and its inverse, to about 1e-15 relative.
 * Private to `physics/`; re-exported by `thermal.ts`.
 *
 * @module
 */

const TWO_OVER_SQRT_PI = 2 / Math.sqrt(Math.PI);
/** Below this |x| the series is used, above it the continued fraction for erfc. */
const SERIES_LIMIT = 2.5;

/**
 * erf x = (2/√π)·e^(−x²)·Σ 2ⁿx^(2n+1)/(1·3·…·(2n+1)), all terms positive (no cancellation).
 * Abramowitz & Stegun, *Handbook of Mathematical Functions* (1964), eq. 7.1.6.
 */
function erfSeries(x: number): number {
  const x2 = x * x;
  let term = x;
  let sum = x;
  for (let k = 1; k < 500; k++) {
    term *= (2 * x2) / (2 * k + 1);
    sum += term;
    if (term < sum * 1e-17) break;
  }
  return TWO_OVER_SQRT_PI * Math.exp(-x2) * sum;
}

/**
 * erfc x for x > 0 by the Laplace continued fraction
 * erfc x = (e^(−x²)/√π)·1/(x + (1/2)/(x + 1/(x + (3/2)/(x + 2/(x + …))))),
 * A&S eq. 7.1.14, evaluated with the modified Lentz method (Press et al., *Numerical Recipes*,
 * 3rd ed., §5.2).
 */
function erfcFraction(x: number): number {
  const tiny = 1e-300;
  let f = x;
  let c = x;
  let d = 0;
  for (let k = 1; k < 2000; k++) {
    const a = k / 2;
    d = x + a * d;
    d = d === 0 ? tiny : d;
    c = x + a / c;
    c = c === 0 ? tiny : c;
    d = 1 / d;
    const delta = c * d;
    f *= delta;
    if (Math.abs(delta - 1) < 1e-16) break;
  }
  return Math.exp(-x * x) / (Math.sqrt(Math.PI) * f);
}

/** The error function erf x = (2/√π)∫₀ˣ e^(−t²) dt, A&S §7.1; odd, erf(±∞) = ±1. */
export function erf(x: number): number {
  if (Number.isNaN(x)) return Number.NaN;
  const a = Math.abs(x);
  const value = a < SERIES_LIMIT ? erfSeries(a) : a > 6 ? 1 : 1 - erfcFraction(a);
  return x < 0 ? -value : value;
}

/** The complementary error function erfc x = 1 − erf x, accurate in relative terms for large x. */
export function erfc(x: number): number {
  if (Number.isNaN(x)) return Number.NaN;
  if (x < SERIES_LIMIT) return 1 - erf(x);
  if (x > 27) return 0;
  return erfcFraction(x);
}

/**
 * Inverse error function: y with erf y = x, for −1 ≤ x ≤ 1 (±1 → ±∞), accurate to ~1e-15
 * relative. Initial guess: Winitzki (2008), "A handy approximation for the error function and
 * its inverse" (a = 0.147, about 2e-3 relative, from memory); then Halley steps on
 * f(y) = erf y − x, using f'' = −2y·f', i.e. Δ = f/(f' + y·f). Near |x| = 1 the residual is
 * formed as (1 − |x|) − erfc y to keep its precision. Stops when |Δ| ≤ 1e-16·|y| (at most 8 steps).
 */
export function erfInv(x: number): number {
  if (!(x >= -1 && x <= 1)) {
    throw new RangeError(`Cannot compute erfInv: argument must be in [−1, 1], got ${x}`);
  }
  if (x === 0) return 0;
  if (x === 1) return Infinity;
  if (x === -1) return -Infinity;
  const target = Math.abs(x);
  const a = 0.147;
  const ln = Math.log((1 - target) * (1 + target));
  const b = 2 / (Math.PI * a) + ln / 2;
  let y = Math.sqrt(Math.sqrt(b * b - ln / a) - b);
  const complement = 1 - target;
  for (let k = 0; k < 8; k++) {
    const f = y > 1 ? complement - erfc(y) : erf(y) - target;
    const slope = TWO_OVER_SQRT_PI * Math.exp(-y * y);
    const step = f / (slope + y * f);
    y -= step;
    if (Math.abs(step) <= 1e-16 * y) break;
  }
  return x < 0 ? -y : y;
}
