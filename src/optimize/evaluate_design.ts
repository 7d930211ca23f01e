import type { FeedNetwork, NetworkElement } from "../network/feed_network.ts";
import type { FillResult, FillSample } from "../network/fill_result.ts";
import {
  completeRun,
  fillOfNetwork,
  type RunSetup,
  runSetup,
  type ScenarioRun,
} from "../network/simulate_scenario.ts";
import { applyDesign, type DesignSpace } from "./design_space.ts";
import { recordSimulation } from "./run_meter.ts";
import { sizedNetwork } from "./sized_network.ts";
import type { StopOptions, StopReason } from "./stop.ts";

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
  /** The design's network (SI, `sized_network.ts`). */
  network: FeedNetwork;
  /** The design's fill. */
  fill: FillResult;
  /**
   * Everything a report reads (freeze times, warnings, masses, the design as a scenario):
   * made on first read, since the optimizer itself needs only the fill.
   */
  readonly run: ScenarioRun;
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
  /** Slopes from the fill's tangent, when asked for (`EvaluateOptions.slopes`). */
  slopes?: DesignSlopes;
}

/** Slopes of the smooth responses carried by the simulation's tangent (`network/fill_tangent.ts`). */
export interface DesignSlopes {
  /** fillTime[i][j]: ∂(split fill time i)/∂x_j, s per m. */
  fillTime: number[][];
  /** pressure[j]: ∂(feed pressure at the split reference instant)/∂x_j, Pa per m. */
  pressure: number[];
  /** runnerVolume[j]: ∂(cold runner volume)/∂x_j from the changed elements' volumes, m³ per m. */
  runnerVolume: number[];
}

/** Options of {@link evaluateDesign}. */
export interface EvaluateOptions {
  /** Carry the tangent along every size and return `slopes` (one simulation, no finite differences). */
  slopes?: boolean;
}

/** Relative size change each tangent direction stands for (its laws are differenced at this step). */
export const TANGENT_RELATIVE_STEP = 1e-4;

/** Failure to simulate a design (a value, never a throw). */
export type EvaluationOutcome =
  | { ok: true; evaluation: DesignEvaluation }
  | {
    ok: false;
    message: string;
    /** Set when the simulation was stopped from outside (a signal or deadline), not failed. */
    stopped?: StopReason;
  };

/** Cold feed-system volume of design `x`, m³, from geometry alone (no simulation). */
export function runnerVolumeOf(space: DesignSpace, x: ArrayLike<number>): number {
  const sized = sizedNetwork(space);
  if (!sized.ok) throw new RangeError(`Cannot compute runner volume: ${sized.message}`);
  return sized.sized.at(x).coldRunnerVolume;
}

const setups = new WeakMap<DesignSpace, RunSetup>();

/** The material and melt model of a space's scenario, resolved once per space. */
function setupOf(space: DesignSpace): RunSetup {
  let setup = setups.get(space);
  if (!setup) setups.set(space, setup = runSetup(space.scenario));
  return setup;
}

/** Simulate design `x` and judge it against the scenario's goals. */
export function evaluateDesign(
  space: DesignSpace,
  x: Float64Array,
  options: EvaluateOptions & StopOptions = {},
): EvaluationOutcome {
  const start = performance.now();
  try {
    return simulateAndJudge(space, x, options);
  } finally {
    recordSimulation((performance.now() - start) / 1000);
  }
}

function simulateAndJudge(
  space: DesignSpace,
  x: Float64Array,
  options: EvaluateOptions & StopOptions,
): EvaluationOutcome {
  const sized = sizedNetwork(space);
  if (!sized.ok) return { ok: false, message: sized.message };
  const network = sized.sized.at(x);
  const directions = options.slopes
    ? space.variables.map((_, j) => sized.sized.elementsAt(j, x[j] * (1 + TANGENT_RELATIVE_STEP)))
    : undefined;
  const setup = setupOf(space);
  const scenario = space.scenario;
  const outcome = fillOfNetwork(scenario, network, setup, {
    tangent: directions ? { directions } : undefined,
    signal: options.signal,
    deadline: options.deadline,
  });
  if (!outcome.ok) {
    return outcome.code === "stopped"
      ? { ok: false, message: outcome.message, stopped: outcome.reason }
      : { ok: false, message: outcome.message };
  }
  const { fill, process } = outcome;
  const goals = scenario.goals;
  const fillTimes = fill.cavities.map((c) => c.fillTime);
  const split = splitFigures(network, fill);
  const splitFillTimes = split.times;
  const gateShear = fill.cavities.map((c) => c.gateShearRatePeak);
  const gateShearBalanced = fill.cavities.map((c) => c.gateShearRatePeakBeforeFirstFull);
  const gateShearLimit = goals.gate_shear_limit_1_s ?? setup.material.maxShearRate;
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
  const design = Float64Array.from(x);
  let run: ScenarioRun | undefined;
  return {
    ok: true,
    evaluation: {
      x: design,
      network,
      fill,
      get run() {
        return run ??= completeRun(applyDesign(space, design), network, setup, process, fill);
      },
      fillTimes,
      splitFillTimes,
      feedPressureReference: split.pressure,
      imbalancePercent: imbalance,
      gateShear,
      gateShearBalanced,
      gateShearLimit,
      feedPressurePeak: fill.feedPressurePeak,
      pressureLimit,
      runnerVolume: network.coldRunnerVolume,
      violations,
      feasible: violations.length === 0,
      slopes: directions ? slopesOf(network, fill, split, x, directions) : undefined,
    },
  };
}

/** Split fill-time and reference-pressure slopes from a run's tangent (undefined if it falls short). */
function slopesOf(
  network: FeedNetwork,
  fill: FillResult,
  split: SplitFigures,
  x: Float64Array,
  directions: readonly (readonly NetworkElement[])[],
): DesignSlopes | undefined {
  const tangent = fill.tangent;
  const reach = Math.max(split.now?.k ?? Infinity, split.earlier?.k ?? Infinity);
  if (!tangent || !split.now || !split.earlier || reach >= tangent.samples) return undefined;
  const C = network.cavities.length;
  const volumes = network.cavities.map((c) => c.volume);
  const n = tangent.directions;
  const interpolate = (at: { k: number; w: number }, pick: (sample: number) => number) =>
    (1 - at.w) * pick(at.k - 1) + at.w * pick(at.k);
  const now = split.now;
  const earlier = split.earlier;
  const fillTime = volumes.map(() => new Array<number>(n).fill(0));
  const pressure = new Array<number>(n).fill(0);
  // Time derivatives of the history at the two instants (of the interval they fall in).
  const history = fill.history;
  const rateIn = (k: number, pick: (sample: FillSample) => number) =>
    (pick(history[k]) - pick(history[k - 1])) / (history[k].time - history[k - 1].time);
  const fillRateNow = volumes.map((_, i) => rateIn(now.k, (h) => h.cavityFill[i]));
  const fillRateEarlier = volumes.map((_, i) => rateIn(earlier.k, (h) => h.cavityFill[i]));
  const pressureRate = rateIn(now.k, (h) => h.feedPressure);
  const total = volumes.reduce((a, b) => a + b, 0);
  const intake = volumes.reduce((sum, V, i) => sum + V * fillRateNow[i], 0);
  for (let j = 0; j < n; j++) {
    const h = x[j] * TANGENT_RELATIVE_STEP;
    const dNow = volumes.map((V, i) =>
      interpolate(now, (k) => tangent.cavityVolume[k][j * C + i]) / V
    );
    // The reference instant moves too: with the held volume (95 % of the cavities) or
    // with the first cavity's fill (98 % of it).
    const dRef = split.byShare
      ? -dNow.reduce((sum, d, i) => sum + d * volumes[i], 0) / total / (intake / total)
      : 0.98 * (tangent.firstFill?.[j] ?? 0);
    volumes.forEach((V, i) => {
      const rate = split.rates[i];
      if (!(rate > 0)) return;
      const fNow = dNow[i] + fillRateNow[i] * dRef;
      const fEarlier = interpolate(earlier, (k) => tangent.cavityVolume[k][j * C + i]) / V +
        fillRateEarlier[i] * SPLIT_WINDOW_START * dRef;
      const dRate = (fNow - fEarlier) / split.window -
        (rate * (1 - SPLIT_WINDOW_START) * dRef) / split.window;
      fillTime[i][j] = (dRef - fNow / rate - ((1 - split.fillNow[i]) * dRate) / (rate * rate)) / h;
    });
    pressure[j] = (interpolate(now, (k) => tangent.feedPressure[k][j]) + pressureRate * dRef) / h;
  }
  // Cold feed-system volume: every changed element that is not a hot drop.
  const runnerVolume = directions.map((changed, j) =>
    changed.reduce(
      (sum, e) => (e.heated ? sum : sum + e.volume - network.elements[e.index].volume),
      0,
    ) / (x[j] * TANGENT_RELATIVE_STEP)
  );
  return { fillTime, pressure, runnerVolume };
}

/** Share of the total cavity volume filled at the split reference instant. */
export const SPLIT_REFERENCE_SHARE = 0.95;

/** Split fill times, the reference pressure, and where in the history they were read. */
interface SplitFigures {
  times: number[];
  pressure: number;
  /** History interval (samples k − 1, k) and weight of the reference instant, and of 0.9 of it. */
  now?: { k: number; w: number };
  earlier?: { k: number; w: number };
  /** Each cavity's fill fraction at the reference instant and its intake rate (fraction per s). */
  fillNow: number[];
  rates: number[];
  /** Length of the intake window, s. */
  window: number;
  /** True when the reference instant is set by the held share, false when by the first fill. */
  byShare: boolean;
}

/**
 * Split fill times (see `DesignEvaluation.splitFillTimes`) and the feed pressure at
 * the same reference instant, from a run's fill history (linear between samples).
 */
function splitFigures(network: FeedNetwork, fill: FillResult): SplitFigures {
  const volumes = network.cavities.map((c) => c.volume);
  const total = volumes.reduce((a, b) => a + b, 0);
  const held = (f: readonly number[]) => f.reduce((sum, fi, i) => sum + fi * volumes[i], 0);
  const history = fill.history;
  const trueTimes = fill.cavities.map((c) => c.fillTime);
  // Never past the first cavity's fill (its intake stops there): at most 98 % of that time.
  const latest = 0.98 * Math.min(...trueTimes);
  const target = SPLIT_REFERENCE_SHARE * total;
  let tRef = latest;
  let byShare = false;
  for (let k = 1; k < history.length; k++) {
    const ha = held(history[k - 1].cavityFill);
    const hb = held(history[k].cavityFill);
    if (hb >= target && hb > ha) {
      const w = (target - ha) / (hb - ha);
      const tShare = history[k - 1].time + w * (history[k].time - history[k - 1].time);
      byShare = tShare < latest;
      tRef = Math.min(latest, tShare);
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
        k,
        w,
        fill: a.cavityFill.map((f, i) => f + w * (b.cavityFill[i] - f)),
        pressure: a.feedPressure + w * (b.feedPressure - a.feedPressure),
      };
    }
    return undefined;
  };
  const now = at(tRef);
  const earlier = at(SPLIT_WINDOW_START * tRef);
  const window = (1 - SPLIT_WINDOW_START) * tRef;
  if (!now || !earlier) {
    return {
      times: trueTimes,
      pressure: fill.feedPressurePeak,
      fillNow: volumes.map(() => NaN),
      rates: volumes.map(() => NaN),
      window,
      byShare,
    };
  }
  const rates = volumes.map((_, i) => (now.fill[i] - earlier.fill[i]) / window);
  return {
    times: volumes.map((_, i) =>
      rates[i] > 0 && now.fill[i] > 0.05 ? tRef + (1 - now.fill[i]) / rates[i] : trueTimes[i]
    ),
    pressure: now.pressure,
    now: { k: now.k, w: now.w },
    earlier: { k: earlier.k, w: earlier.w },
    fillNow: now.fill,
    rates,
    window,
    byShare,
  };
}

/** The intake rate behind the split fill times is the mean over [0.9·t_ref, t_ref]. */
const SPLIT_WINDOW_START = 0.9;
