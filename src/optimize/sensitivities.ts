import type { DesignSpace } from "./design_space.ts";
import {
  type DesignEvaluation,
  evaluateDesign,
  runnerVolumeOf,
  simulationsOf,
} from "./evaluate_design.ts";
import { type StopOptions, type StopReason, stopReason, stopText } from "./stop.ts";

/**
 * Sensitivities of the constrained responses to each design size, by one-sided
 * finite differences on the full fill simulation (one simulation per variable).
 * Fill times are differentiated in their split form (see
 * `DesignEvaluation.splitFillTimes`), which is smooth at balance.
 *
 * Gate shear is not differentiated through its transient peak (that peak jumps
 * with the order in which fronts arrive and cavities fill); its slope is the mean
 * flow's, γ̇ ∝ (V_i/τ_i)·s^(−m): ∂ln γ̇_i/∂ln x_j = −∂ln τ_i/∂ln x_j − m·[x_j sizes a
 * gate of cavity i], m = 3 for a round section scaled as a whole (power-law tube,
 * γ̇_w = (3n+1)/(4n)·4Q/(πR³)) and m = 2 for an edge gate's depth (power-law slit,
 * γ̇_w = (2n+1)/(3n)·6Q/(WH²)); Bird, Armstrong & Hassager, *Dynamics of Polymeric
 * Liquids* vol. 1.
 * The step is a fixed fraction of the size, large enough to rise above the
 * simulation's event-placement noise (≈1e-9 relative in fill time) and small
 * enough to stay in the linear range; it points inward at a bound.
 *
 * @module
 */

/** ∂response/∂size, per variable j (sizes in m). */
export interface Sensitivities {
  /** fillTime[i][j]: split fill time (`splitFillTimes`), s per m. */
  fillTime: number[][];
  /** gateShear[i][j]: balanced-split gate shear by the mean-flow law above, (1/s) per m, cavity order. */
  gateShear: number[][];
  /**
   * pressure[j]: peak feed pressure, Pa per m, with the relative slope of the pressure at
   * the split reference instant (the peak itself jumps at balance, when the order in
   * which cavities fill changes).
   */
  pressure: number[];
  /** runnerVolume[j]: m³ per m. */
  runnerVolume: number[];
  /** Simulations spent. */
  simulations: number;
}

/** Relative finite-difference step (of the size). */
export const FD_RELATIVE_STEP = 0.01;

/** Finite-difference sensitivities around `base` (the evaluation of `base.x`). */
export function finiteDifferenceSensitivities(
  space: DesignSpace,
  base: DesignEvaluation,
  options: StopOptions = {},
): Sensitivities | { failure: string; stopped?: StopReason } {
  const n = space.variables.length;
  const cavities = base.splitFillTimes.length;
  const fillTime = Array.from({ length: cavities }, () => new Array<number>(n).fill(0));
  const gateShear = Array.from({ length: cavities }, () => new Array<number>(n).fill(0));
  const pressure = new Array<number>(n).fill(0);
  const runnerVolume = new Array<number>(n).fill(0);
  let simulations = 0;
  for (let j = 0; j < n; j++) {
    const v = space.variables[j];
    const xj = base.x[j];
    let h = FD_RELATIVE_STEP * xj;
    if (xj + h > v.upper && xj - h >= v.lower) h = -h;
    const x = Float64Array.from(base.x);
    x[j] = xj + h;
    const stop = stopReason(options);
    if (stop) return { failure: stopText(stop), stopped: stop };
    const outcome = evaluateDesign(space, x, options);
    simulations += simulationsOf(outcome);
    if (!outcome.ok) return { failure: outcome.message, stopped: outcome.stopped };
    const e = outcome.evaluation;
    for (let i = 0; i < cavities; i++) {
      fillTime[i][j] = (e.splitFillTimes[i] - base.splitFillTimes[i]) / h;
      gateShear[i][j] = meanFlowShearSlope(space, base, i, j, fillTime[i][j]);
    }
    // The reference pressure's relative slope, applied to the peak (see below).
    pressure[j] = ((e.feedPressureReference - base.feedPressureReference) / h) *
      (base.feedPressurePeak / base.feedPressureReference);
    runnerVolume[j] = (e.runnerVolume - base.runnerVolume) / h;
  }
  return { fillTime, gateShear, pressure, runnerVolume, simulations };
}

/**
 * Sensitivities from the tangent the simulation of `e` carried (`evaluateDesign` with
 * `slopes`): split fill times and reference pressure from the tangent-linear fill
 * (`network/fill_tangent.ts`), gate shear by the mean-flow law above, runner volume
 * from the volumes of the elements each size changes. No extra simulation; undefined if `e` has no slopes.
 */
export function tangentSensitivities(
  space: DesignSpace,
  e: DesignEvaluation,
): Sensitivities | undefined {
  const slopes = e.slopes;
  if (!slopes) return undefined;
  const finite = (v: number) => (Number.isFinite(v) ? v : 0);
  const fillTime = slopes.fillTime.map((row) => row.map(finite));
  return {
    fillTime,
    gateShear: fillTime.map((row, i) => row.map((g, j) => meanFlowShearSlope(space, e, i, j, g))),
    // The reference pressure's relative slope, applied to the peak (as for finite differences).
    pressure: slopes.pressure.map((g) =>
      finite(g) * (e.feedPressurePeak / e.feedPressureReference)
    ),
    runnerVolume: slopes.runnerVolume,
    simulations: 0,
  };
}

/** ∂(cold runner volume)/∂x_j from geometry alone, m³ per m. */
function runnerVolumeSlopes(space: DesignSpace, at: Float64Array): number[] {
  const base = runnerVolumeOf(space, at);
  return space.variables.map((_, j) => {
    const h = FD_RELATIVE_STEP * at[j];
    const x = Float64Array.from(at);
    x[j] += h;
    return (runnerVolumeOf(space, x) - base) / h;
  });
}

/**
 * Carry sensitivities from design `from` to design `to` without simulating: a
 * Broyden rank-one update in log measure (Broyden (1965) Math. Comp. 19:577), so
 * that the updated slopes reproduce the change the two simulations showed,
 * ln r(to) − ln r(from) = L·(ln x(to) − ln x(from)), for the split fill times and
 * the reference pressure. Gate-shear slopes follow from the fill-time slopes by the
 * mean-flow law above; runner-volume slopes are geometry and are recomputed exactly
 * at `to`, unless `known.runnerVolume` already holds them there.
 */
export function broydenSensitivities(
  space: DesignSpace,
  s: Sensitivities,
  from: DesignEvaluation,
  to: DesignEvaluation,
  known: { runnerVolume?: number[] } = {},
): Sensitivities {
  const n = space.variables.length;
  const dlx = Array.from({ length: n }, (_, j) => Math.log(to.x[j] / from.x[j]));
  const norm = dlx.reduce((sum, d) => sum + d * d, 0);
  // Log slopes at `from`, updated, then returned to absolute slopes at `to`.
  const update = (row: readonly number[], r0: number, r1: number, base: number): number[] => {
    const logRow = row.map((g, j) => (g * from.x[j]) / r0);
    if (norm > 0 && r0 > 0 && r1 > 0) {
      const miss = Math.log(r1 / r0) - logRow.reduce((sum, g, j) => sum + g * dlx[j], 0);
      for (let j = 0; j < n; j++) logRow[j] += (miss * dlx[j]) / norm;
    }
    return logRow.map((g, j) => (g * base) / to.x[j]);
  };
  const fillTime = s.fillTime.map((row, i) =>
    update(row, from.splitFillTimes[i], to.splitFillTimes[i], to.splitFillTimes[i])
  );
  const gateShear = fillTime.map((row, i) =>
    row.map((g, j) => meanFlowShearSlope(space, to, i, j, g))
  );
  const pressure = update(
    s.pressure.map((g) => (g * from.feedPressureReference) / from.feedPressurePeak),
    from.feedPressureReference,
    to.feedPressureReference,
    to.feedPressurePeak,
  );
  return {
    fillTime,
    gateShear,
    pressure,
    runnerVolume: known.runnerVolume ?? runnerVolumeSlopes(space, to.x),
    simulations: 0,
  };
}

/**
 * ∂γ̇_i/∂x_j of cavity i's balanced-split gate shear by the mean-flow law of this
 * module's header, from the split fill time's slope `fillTimeSlope` (s per m), at `e`.
 */
function meanFlowShearSlope(
  space: DesignSpace,
  e: DesignEvaluation,
  i: number,
  j: number,
  fillTimeSlope: number,
): number {
  const v = space.variables[j];
  let logSlope = -(fillTimeSlope * e.x[j]) / e.splitFillTimes[i];
  if (v.kind === "gate" && space.gateCavity[j] === i) {
    logSlope -= v.dimension === "thickness" ? 2 : 3;
  }
  return (logSlope * e.gateShearBalanced[i]) / e.x[j];
}
