import { buildNetwork } from "../network/build_network.ts";
import { runScenario, type ScenarioRun } from "../network/simulate_scenario.ts";
import { applyDesign, type DesignSpace } from "./design_space.ts";

/**
 * One design judged on the full simulation: the responses the optimizer
 * constrains (fill times, gate shear, feed pressure) and its objective (cold
 * runner volume), with every limit violation named.
 *
 * @module
 */

/** A limit a design breaks, and by how much (relative to the limit). */
export interface Violation {
  code: "imbalance" | "gate_shear" | "pressure" | "ordering" | "not_filled";
  element?: string;
  /** (value − limit)/limit, > 0. */
  excess: number;
  message: string;
}

/** The simulated responses of one design. */
export interface DesignEvaluation {
  x: Float64Array;
  run: ScenarioRun;
  /** Cavity fill times, s. */
  fillTimes: number[];
  /**
   * The fill time each cavity would have if the flow split before the first cavity is
   * full held to the end: t_first / (fill fraction at t_first), s. Smooth in the sizes,
   * where the true fill times have a kink at balance (at a constant injection rate the
   * last cavity always fills at V/Q, whatever the sizes), so the optimizer steers with it.
   */
  splitFillTimes: number[];
  imbalancePercent: number;
  /** Peak true wall shear of each cavity's gates up to switchover, 1/s, in cavity order. */
  gateShear: number[];
  /**
   * The same while every cavity is still filling (the balanced split). Smooth in the
   * sizes, so the optimizer steers with it; feasibility is judged on `gateShear`.
   */
  gateShearBalanced: number[];
  gateShearLimit: number;
  feedPressurePeak: number;
  /** Allowed peak pressure = max_pressure_fraction × machine limit, Pa. */
  pressureLimit: number;
  /** Cold sprue + runner + gate volume, m³ (the objective). */
  runnerVolume: number;
  violations: Violation[];
  feasible: boolean;
}

/** Failure to simulate a design (a value, never a throw). */
export type EvaluationOutcome =
  | { ok: true; evaluation: DesignEvaluation }
  | { ok: false; message: string };

/** Cold feed-system volume of design `x`, m³, from geometry alone (no simulation). */
export function runnerVolumeOf(space: DesignSpace, x: ArrayLike<number>): number {
  const built = buildNetwork(applyDesign(space, x));
  if (!built.ok) throw new RangeError(`Cannot compute runner volume: ${built.issues[0].message}`);
  return built.network.coldRunnerVolume;
}

/** Simulate design `x` and judge it against the scenario's goals. */
export function evaluateDesign(space: DesignSpace, x: Float64Array): EvaluationOutcome {
  const scenario = applyDesign(space, x);
  const outcome = runScenario(scenario);
  if (!outcome.ok) {
    return {
      ok: false,
      message: outcome.code === "invalid_scenario"
        ? outcome.issues.map((i) => `${i.at}: ${i.message}`).join("; ")
        : outcome.message,
    };
  }
  const run = outcome.run;
  const goals = scenario.goals;
  const fill = run.fill;
  const fillTimes = fill.cavities.map((c) => c.fillTime);
  const firstFull = Math.min(...fillTimes);
  const splitFillTimes = fill.cavities.map((c) =>
    c.fillAtFirstFull > 0.05 ? firstFull / c.fillAtFirstFull : c.fillTime
  );
  const gateShear = fill.cavities.map((c) => c.gateShearRatePeak);
  const gateShearBalanced = fill.cavities.map((c) => c.gateShearRatePeakBeforeFirstFull);
  const gateShearLimit = goals.gate_shear_limit_1_s ?? run.material.maxShearRate;
  const pressureLimit = goals.max_pressure_fraction * scenario.machine.max_injection_pressure_MPa *
    1e6;
  const violations: Violation[] = [];
  if (fill.diagnostics.stoppedBecause !== "all_full") {
    violations.push({ code: "not_filled", excess: 1, message: fill.diagnostics.message });
  }
  const imbalance = fill.imbalancePercent;
  if (!(imbalance <= goals.max_imbalance_percent)) {
    violations.push({
      code: "imbalance",
      excess: Number.isFinite(imbalance) ? (imbalance - goals.max_imbalance_percent) / 100 : 1,
      message: `imbalance ${imbalance.toFixed(2)} % > ${goals.max_imbalance_percent} %`,
    });
  }
  fill.cavities.forEach((c) => {
    if (c.gateShearRatePeak > gateShearLimit) {
      violations.push({
        code: "gate_shear",
        element: c.gateAtPeak,
        excess: c.gateShearRatePeak / gateShearLimit - 1,
        message: `gate ${c.gateAtPeak} shear ${Math.round(c.gateShearRatePeak)} 1/s > ${
          Math.round(gateShearLimit)
        } 1/s`,
      });
    }
  });
  if (fill.feedPressurePeak > pressureLimit) {
    violations.push({
      code: "pressure",
      excess: fill.feedPressurePeak / pressureLimit - 1,
      message: `peak pressure ${(fill.feedPressurePeak / 1e6).toFixed(1)} MPa > ${
        (pressureLimit / 1e6).toFixed(1)
      } MPa`,
    });
  }
  for (const rule of space.ordering) {
    if (x[rule.downstream] > x[rule.upstream] * (1 + 1e-9)) {
      violations.push({
        code: "ordering",
        element: space.variables[rule.downstream].element,
        excess: x[rule.downstream] / x[rule.upstream] - 1,
        message: `runner ${space.variables[rule.downstream].element} is larger than the runner ${
          space.variables[rule.upstream].element
        } that feeds it`,
      });
    }
  }
  return {
    ok: true,
    evaluation: {
      x: Float64Array.from(x),
      run,
      fillTimes,
      splitFillTimes,
      imbalancePercent: imbalance,
      gateShear,
      gateShearBalanced,
      gateShearLimit,
      feedPressurePeak: fill.feedPressurePeak,
      pressureLimit,
      runnerVolume: run.network.coldRunnerVolume,
      violations,
      feasible: violations.length === 0,
    },
  };
}
