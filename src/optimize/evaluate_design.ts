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
   * The fill time each cavity would have if its intake at a reference instant held to
   * the end: t_ref + (1 − f_i)·V_i/Q_i, s, with f_i its fill fraction at t_ref and Q_i its
   * mean intake over [0.9·t_ref, t_ref]; t_ref is when the cavities together hold
   * {@link SPLIT_REFERENCE_SHARE} of their volume, or 98 % of the first cavity's fill
   * time if that comes sooner. Smooth in the sizes, where the
   * true fill times have a kink at balance (at a constant injection rate the last cavity
   * always fills at V/Q, whatever the sizes), so the optimizer steers with it.
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
  /**
   * Feed pressure at the split reference instant (see `splitFillTimes`), Pa: smooth in
   * the sizes, where the peak up to switchover jumps with the order cavities fill in.
   */
  feedPressureReference: number;
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
  const split = splitFigures(run);
  const splitFillTimes = split.times;
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
      feedPressureReference: split.pressure,
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

/** Share of the total cavity volume filled at the split reference instant. */
export const SPLIT_REFERENCE_SHARE = 0.95;

/**
 * Split fill times (see `DesignEvaluation.splitFillTimes`) and the feed pressure at
 * the same reference instant, from a run's fill history (linear between samples).
 */
function splitFigures(run: ScenarioRun): { times: number[]; pressure: number } {
  const volumes = run.network.cavities.map((c) => c.volume);
  const total = volumes.reduce((a, b) => a + b, 0);
  const held = (f: readonly number[]) => f.reduce((sum, fi, i) => sum + fi * volumes[i], 0);
  const history = run.fill.history;
  const fallback = { times: run.fill.cavities.map((c) => c.fillTime), pressure: NaN };
  // Never past the first cavity's fill (its intake stops there): at most 98 % of that time.
  const latest = 0.98 * Math.min(...fallback.times);
  const target = SPLIT_REFERENCE_SHARE * total;
  let tRef = latest;
  for (let k = 1; k < history.length; k++) {
    const ha = held(history[k - 1].cavityFill);
    const hb = held(history[k].cavityFill);
    if (hb >= target && hb > ha) {
      const w = (target - ha) / (hb - ha);
      tRef = Math.min(latest, history[k - 1].time + w * (history[k].time - history[k - 1].time));
      break;
    }
  }
  const at = (t: number) => {
    for (let k = 1; k < history.length; k++) {
      const a = history[k - 1];
      const b = history[k];
      if (b.time < t || b.time <= a.time) continue;
      const w = Math.max(0, Math.min(1, (t - a.time) / (b.time - a.time)));
      return {
        fill: a.cavityFill.map((f, i) => f + w * (b.cavityFill[i] - f)),
        pressure: a.feedPressure + w * (b.feedPressure - a.feedPressure),
      };
    }
    return undefined;
  };
  const now = at(tRef);
  const earlier = at(SPLIT_WINDOW_START * tRef);
  if (!now || !earlier) return { ...fallback, pressure: run.fill.feedPressurePeak };
  const window = (1 - SPLIT_WINDOW_START) * tRef;
  return {
    times: volumes.map((_, i) => {
      const rate = (now.fill[i] - earlier.fill[i]) / window;
      return rate > 0 && now.fill[i] > 0.05 ? tRef + (1 - now.fill[i]) / rate : fallback.times[i];
    }),
    pressure: now.pressure,
  };
}

/** The intake rate behind the split fill times is the mean over [0.9·t_ref, t_ref]. */
const SPLIT_WINDOW_START = 0.9;
