import type { DesignSpace } from "./design_space.ts";
import { type DesignEvaluation, evaluateDesign, runnerVolumeOf } from "./evaluate_design.ts";

/**
 * Sensitivities of the constrained responses to each design size, by one-sided
 * finite differences on the full fill simulation (one simulation per variable).
 * The step is a fixed fraction of the size, large enough to rise above the
 * simulation's event-placement noise (≈1e-9 relative in fill time) and small
 * enough to stay in the linear range; it points inward at a bound.
 *
 * @module
 */

/** ∂response/∂size, per variable j (sizes in m). */
export interface Sensitivities {
  /** fillTime[i][j]: s per m. */
  fillTime: number[][];
  /** gateShear[i][j]: balanced-split gate shear, (1/s) per m, cavity order. */
  gateShear: number[][];
  /** pressure[j]: Pa per m. */
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
): Sensitivities | { failure: string } {
  const n = space.variables.length;
  const cavities = base.fillTimes.length;
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
    const outcome = evaluateDesign(space, x);
    simulations++;
    if (!outcome.ok) return { failure: outcome.message };
    const e = outcome.evaluation;
    for (let i = 0; i < cavities; i++) {
      fillTime[i][j] = (e.fillTimes[i] - base.fillTimes[i]) / h;
      gateShear[i][j] = (e.gateShearBalanced[i] - base.gateShearBalanced[i]) / h;
    }
    pressure[j] = (e.feedPressurePeak - base.feedPressurePeak) / h;
    runnerVolume[j] = (runnerVolumeOf(space, x) - base.runnerVolume) / h;
  }
  return { fillTime, gateShear, pressure, runnerVolume, simulations };
}
