/**
 * The wall of a generalized-Newtonian channel flow in the Kozicki form, private to
 * `physics/`. For a section with geometric constants a, b (c = b/a) and the apparent
 * shear rate Γ = 8ū/Dh,
 *
 *   Γ = (1/(a·τw^c)) ∫₀^τw τ^(c−1) γ̇(τ) dτ          (Kozicki, Chou & Tiu (1966)
 *                                                     Chem. Eng. Sci. 21:665, eq. 23)
 *
 * which for c = 3, a = 1/4 is the Weissenberg–Rabinowitsch–Mooney equation of the tube
 * and for c = 2, a = 1/2 that of the slit (Bird, Armstrong & Hassager, *Dynamics of
 * Polymeric Liquids* vol. 1, 2nd ed., §5.3). Substituting τ = f(γ̇), the curve's stress,
 * removes the stress inversion:
 *
 *   Γ(γ̇w) = I(γ̇w) / (a·f(γ̇w)^c),   I(γ̇w) = ∫₀^γ̇w f(γ̇)^(c−1)·γ̇·f'(γ̇) dγ̇.
 *
 * I is evaluated in s = ln γ̇ (integrand f^(c−1)·γ̇²·f', decaying like e^((c·n+1)s)
 * toward γ̇ → 0) by composite Gauss–Legendre panels, with the tail below e^−30·γ̇w
 * closed by the local power-law estimate. Γ(γ̇w) is solved for γ̇w by Newton's method in
 * ln γ̇w (ln Γ is nearly linear in ln γ̇w with slope φ' = d ln Γ/d ln γ̇w ∈ (0, ~1.5]):
 * dI/dγ̇w comes from Leibniz's rule, and every Newton step only adds the integral over
 * the step, so a solve costs one full quadrature plus a few short ones. A cursor keeps
 * (ln γ̇w, I) between calls with the same curve and c, so a taper or a disk is integrated
 * from one full quadrature. Stops when |Δ ln γ̇w| < 1e-13; at most 60 steps. Curves
 * tagged `cross` are solved on the tabulated master curves of `_cross_master.ts` instead
 * (same results to ≲ 1e-9 relative), falling back to this integral outside their domain.
 *
 * @module
 */
import type { FlowCurve } from "../materials/flow_curve.ts";
import { compositeRule, gaussLegendre } from "./_quadrature.ts";
import { crossMasterPotential, crossMasterSolve } from "./_cross_master.ts";

/** Kozicki constants of a section: a, b (dimensionless, a > 0, b > 0). */
export interface KozickiConstants {
  readonly a: number;
  readonly b: number;
}

/** Shear rate (1/s) at which the Γ = 0 slope is taken when f'(0) is infinite (power law, n < 1). */
export const ZERO_FLOW_SHEAR_RATE = 1e-6;

/** Lower end of the full quadrature in u = ln(γ̇/γ̇w). */
const U_MIN = -30;
const FULL_BREAKS = [U_MIN, -19, -12, -7.5, -4.5, -2.4, -1, 0];
const FULL_POINTS = 8;
const FULL_RULE = compositeRule(FULL_BREAKS, FULL_POINTS);
const FULL_EXP = FULL_RULE.nodes.map((u) => Math.exp(u));
const STEP_RULE = gaussLegendre(8);
/** Longest stretch in ln γ̇ covered by one 8-point panel of an incremental step. */
const STEP_PANEL = 0.6;

/** Memory of the last (ln γ̇w, I) for one curve and one c. */
export interface IntegralCursor {
  curve: FlowCurve | null;
  c: number;
  logShear: number;
  integral: number;
}

/** A fresh, empty cursor. */
export function newCursor(): IntegralCursor {
  return { curve: null, c: NaN, logShear: NaN, integral: NaN };
}

function powerOf(f: number, exponent: number): number {
  if (exponent === 2) return f * f;
  if (exponent === 1) return f;
  return Math.pow(f, exponent);
}

/** f^(c−1)·γ̇²·f' at γ̇, the integrand of I in s = ln γ̇. */
function integrand(curve: FlowCurve, g: number, cm1: number): number {
  return powerOf(curve.stress(g), cm1) * g * g * curve.stressSlope(g);
}

/** I(γ̇w) by the full composite rule plus the power-law tail. */
function fullIntegral(curve: FlowCurve, shearRate: number, c: number): number {
  const cm1 = c - 1;
  const { weights } = FULL_RULE;
  let sum = 0;
  for (let k = 0; k < weights.length; k++) {
    sum += weights[k] * integrand(curve, shearRate * FULL_EXP[k], cm1);
  }
  const gLow = shearRate * Math.exp(U_MIN);
  const nLocal = (gLow * curve.stressSlope(gLow)) / curve.stress(gLow);
  const tail = integrand(curve, gLow, cm1) / (c * nLocal + 1);
  return sum + (Number.isFinite(tail) ? tail : 0);
}

/** ∫ over ln γ̇ from s0 to s1 of the integrand. */
function stepIntegral(curve: FlowCurve, s0: number, s1: number, c: number): number {
  const cm1 = c - 1;
  const panels = Math.max(1, Math.ceil(Math.abs(s1 - s0) / STEP_PANEL));
  const width = (s1 - s0) / panels;
  const { nodes, weights } = STEP_RULE;
  let sum = 0;
  for (let p = 0; p < panels; p++) {
    const mid = s0 + (p + 0.5) * width;
    for (let i = 0; i < nodes.length; i++) {
      sum += weights[i] * integrand(curve, Math.exp(mid + 0.5 * width * nodes[i]), cm1);
    }
  }
  return 0.5 * width * sum;
}

function failed(what: string): never {
  throw new RangeError(`Cannot solve channel wall shear: ${what}`);
}

/**
 * Wall state at a given true wall shear rate γ̇w > 0 (forward evaluation, one full
 * quadrature): the apparent shear rate Γ and φ' = d ln Γ / d ln γ̇w.
 */
export function apparentAtWall(
  curve: FlowCurve,
  shearRate: number,
  constants: KozickiConstants,
): { apparent: number; logSlope: number; stress: number; slope: number } {
  const c = constants.b / constants.a;
  const integral = fullIntegral(curve, shearRate, c);
  const stress = curve.stress(shearRate);
  const slope = curve.stressSlope(shearRate);
  const apparent = integral / (constants.a * Math.pow(stress, c));
  const h = integrand(curve, shearRate, c - 1);
  const logSlope = h / integral - (c * shearRate * slope) / stress;
  return { apparent, logSlope, stress, slope };
}

/**
 * The stress potential H(Γ) = ∫ τw d ln Γ of a section (Pa), at the wall state (γ̇w, τw)
 * solved for Γ; defined up to a constant of the curve and c, so only differences between two
 * wall states of one curve and one section shape have meaning. NaN when there is no closed
 * form: a power law has H = τw/n (τw ∝ Γⁿ, Kozicki et al. 1966 eq. 26), a Cross curve the
 * tabulated master potential τ*·K(ln(η0·γ̇w/τ*)) of `_cross_master.ts` inside its domain.
 */
export function stressPotential(
  curve: FlowCurve,
  constants: KozickiConstants,
  shearRate: number,
  stress: number,
): number {
  const law = curve.powerLaw;
  if (law) return stress / law.index;
  const cross = curve.cross;
  if (!cross || !(shearRate > 0)) return NaN;
  const s = Math.log((cross.zeroShearViscosity * shearRate) / cross.tauStar);
  return cross.tauStar * crossMasterPotential(cross.index, constants.b / constants.a, s);
}

const MASTER = new Float64Array(4);
const MASTER_WITH_LOG = new Float64Array(5);

/**
 * {@link wallResponseInto} and {@link stressPotential} at once for a Cross curve inside its
 * master tables, at apparent shear rate `apparent` > 0 (1/s): `out` gets 0–2 as
 * wallResponseInto's (the same numbers) and 3: the stress potential H, Pa, taken at the wall
 * solve's own s = ln(η0·γ̇w/τ*) instead of the logarithm of the shear rate it returned (a cone
 * asks for both at each end of every evaluation). False, `out` untouched, for any other curve
 * or outside the tables: then ask the two functions.
 */
export function crossWallPotentialInto(
  curve: FlowCurve,
  apparent: number,
  constants: KozickiConstants,
  out: Float64Array,
): boolean {
  const cross = curve.cross;
  if (!cross || curve.powerLaw || !(apparent > 0) || !Number.isFinite(apparent)) return false;
  const { a, b } = constants;
  const c = b / a;
  const { zeroShearViscosity: eta0, tauStar } = cross;
  const wall = MASTER_WITH_LOG;
  if (!crossMasterSolve(cross.index, c, (a * apparent * eta0) / tauStar, wall)) return false;
  const potential = crossMasterPotential(cross.index, c, wall[4]);
  if (!Number.isFinite(potential)) return false;
  const stress = tauStar * wall[1];
  out[0] = (tauStar / eta0) * wall[0];
  out[1] = stress;
  out[2] = (wall[2] * stress) / (apparent * wall[3]);
  out[3] = tauStar * potential;
  return true;
}

/**
 * Solve Γ(γ̇w) = `apparent` (1/s, ≥ 0) for the wall state, written into `out`: the true wall
 * shear rate γ̇w (1/s), the wall stress τw = f(γ̇w) (Pa) and dτw/dΓ (Pa·s, > 0; its Γ → 0 limit
 * at Γ = 0). `cursor`, if given, starts the exact integral when it holds the same curve and c.
 * Returns true when the exact integral was solved (the cursor, if any, then holds the new
 * state); false when a closed form or the master curve answered and the cursor was neither
 * read nor written.
 */
export function wallResponseInto(
  curve: FlowCurve,
  apparent: number,
  constants: KozickiConstants,
  cursor: IntegralCursor | undefined,
  out: Float64Array,
): boolean {
  const { a, b } = constants;
  const c = b / a;
  if (!(apparent >= 0) || !Number.isFinite(apparent)) {
    failed(`apparent shear rate must be finite and ≥ 0, got ${apparent}`);
  }
  const law = curve.powerLaw;
  if (apparent === 0) {
    const mu0 = curve.stressSlope(0);
    out[0] = 0;
    out[1] = 0;
    if (Number.isFinite(mu0) && mu0 > 0 && !(law && law.index < 1)) {
      out[2] = mu0 * (a + b);
      return false;
    }
    const at = apparentAtWall(curve, ZERO_FLOW_SHEAR_RATE, constants);
    out[2] = (at.slope * ZERO_FLOW_SHEAR_RATE) / (at.apparent * at.logSlope);
    return false;
  }
  if (law) {
    // Closed form: γ̇w = ((a + b·n)/n)·Γ (Kozicki et al. 1966, eq. 26).
    const n = law.index;
    const shearRate = ((a + b * n) / n) * apparent;
    const stress = law.consistency * Math.pow(shearRate, n);
    out[0] = shearRate;
    out[1] = stress;
    out[2] = (n * stress) / apparent;
    return false;
  }
  const cross = curve.cross;
  if (cross) {
    // Tabulated master curve (see _cross_master.ts); false outside its domain.
    const { zeroShearViscosity: eta0, tauStar } = cross;
    if (crossMasterSolve(cross.index, c, (a * apparent * eta0) / tauStar, MASTER)) {
      const stress = tauStar * MASTER[1];
      // dτw/dΓ = f'(γ̇w)·γ̇w/(Γ·φ'), f'·γ̇w = ν·τw.
      out[0] = (tauStar / eta0) * MASTER[0];
      out[1] = stress;
      out[2] = (MASTER[2] * stress) / (apparent * MASTER[3]);
      return false;
    }
  }
  const target = Math.log(a * apparent);
  // Start from the local power law at the Newtonian wall rate, refined once.
  let guess = (a + b) * apparent;
  for (let k = 0; k < 2; k++) {
    const n = Math.min(1, Math.max(0.05, (guess * curve.stressSlope(guess)) / curve.stress(guess)));
    guess = ((a + b * n) / n) * apparent;
  }
  let s = Math.log(guess);
  let integral: number;
  const reuse = cursor !== undefined && cursor.curve === curve && cursor.c === c &&
    Number.isFinite(cursor.integral) && s - cursor.logShear >= -1 && s - cursor.logShear <= 3;
  if (reuse) {
    // Going down from the cursor subtracts; limited to one unit of ln γ̇ to bound cancellation.
    s = cursor.logShear;
    integral = cursor.integral;
  } else {
    integral = fullIntegral(curve, guess, c);
  }
  for (let iter = 0; iter < 60; iter++) {
    const g = Math.exp(s);
    const stress = curve.stress(g);
    const slope = curve.stressSlope(g);
    const phi = Math.log(integral) - c * Math.log(stress) - target;
    const dphi = integrand(curve, g, c - 1) / integral - (c * g * slope) / stress;
    if (!(dphi > 0) || !Number.isFinite(phi)) {
      failed(`the flow curve is not strictly increasing near γ̇ = ${g} 1/s`);
    }
    let step = -phi / dphi;
    if (step > 3) step = 3;
    if (step < -3) step = -3;
    if (Math.abs(step) < 1e-13) {
      if (cursor) {
        cursor.curve = curve;
        cursor.c = c;
        cursor.logShear = s;
        cursor.integral = integral;
      }
      out[0] = g;
      out[1] = stress;
      out[2] = (slope * g) / (apparent * dphi);
      return true;
    }
    integral += stepIntegral(curve, s, s + step, c);
    s += step;
  }
  return failed(`Newton iteration did not converge for Γ = ${apparent} 1/s`);
}
