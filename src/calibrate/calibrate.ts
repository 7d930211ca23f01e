import type { ScenarioWire } from "../model/scenario_schema.ts";
import type { FillResult } from "../network/fill_result.ts";
import { parseScenario } from "../model/parse_scenario.ts";
import { buildNetwork } from "../network/build_network.ts";
import {
  LIBRARY_MATERIAL_IDS,
  type RunOutcome,
  simulateScenario,
} from "../network/simulate_scenario.ts";
import {
  applyFactors,
  type CalibrationFactor,
  defaultBounds,
  factorName,
  nominalValue,
} from "./factors.ts";
import { checkMeasurements, type MeasurementIssue, type Measurements } from "./measurements.ts";

/** Options of {@link calibrate}. */
export interface CalibrateOptions {
  /** The unknowns to fit (at least one). */
  factors: readonly CalibrationFactor[];
  /** Measurement noise of a part's fill fraction (or mass / full mass), 0…1. Default 0.01 (1 %). */
  fillNoise?: number;
  /** Relative noise of the measured injection pressure. Default 0.02 (2 %). */
  pressureNoise?: number;
  /**
   * Tikhonov pull toward the nominal model: the prior standard deviation of each factor
   * (same order as `factors`). Default 0.3 for viscosity, 0.1 for sizes, 10 K for temperature.
   */
  priorSpread?: readonly number[];
  /** Iteration limit of Levenberg–Marquardt. Default 30. */
  maxIterations?: number;
  /** Aborting it stops the fit before its next simulation (outcome `stopped`, reason `cancelled`). */
  signal?: AbortSignal;
  /** Epoch ms after which the fit stops before its next simulation (reason `deadline`). */
  deadline?: number;
  /** Called after every simulation: the iteration reached, simulations so far, best cost so far. */
  onProgress?: (progress: CalibrationProgress) => void;
}

/** Where a running fit stands (see {@link CalibrateOptions.onProgress}). */
export interface CalibrationProgress {
  iteration: number;
  simulations: number;
  /** Weighted sum of squares of the best point so far (data and pull rows). */
  cost: number;
}

/** One fitted factor. */
export interface FittedFactor {
  factor: CalibrationFactor;
  name: string;
  nominal: number;
  value: number;
  /** Approximate standard error: √ of the diagonal of (JᵀJ + P)⁻¹ (weighted residuals, Gaussian prior P). */
  standardError: number;
  /** Whether the data narrowed the factor to less than half its prior spread. */
  identified: boolean;
  bounds: [number, number];
  atBound: boolean;
}

/** Measured against predicted, one part of one short shot (fill fractions 0…1). */
export interface CalibrationResidual {
  shot: number;
  cavity: string;
  injectedCm3: number;
  measured: number;
  before: number;
  after: number;
}

/** What a calibration found. */
export type CalibrationOutcome =
  | {
    ok: true;
    factors: FittedFactor[];
    residuals: CalibrationResidual[];
    pressure?: { measuredMPa: number; beforeMPa: number; afterMPa: number };
    /** Weighted sum of squares (data rows only) before and after. */
    costBefore: number;
    costAfter: number;
    iterations: number;
    simulations: number;
    stoppedBecause: "converged" | "iteration_limit" | "no_progress";
    /** The scenario with the fitted factors applied: `optimize` runs on it unchanged. */
    calibrated: ScenarioWire;
  }
  | { ok: false; code: "invalid_measurements"; issues: MeasurementIssue[] }
  | { ok: false; code: "simulation_failed"; message: string }
  | { ok: false; code: "stopped"; reason: "cancelled" | "deadline"; message: string };

class CalibrationStopped extends Error {
  constructor(readonly reason: "cancelled" | "deadline") {
    super(`the fit was stopped (${reason})`);
  }
}

/** Relative fall of the cost below which an accepted step ends the fit. */
const CONVERGED_GAIN = 1e-6;

interface Prediction {
  fills: number[];
  pressure: number;
}

/**
 * Fit the chosen factors so the model reproduces weighed short shots (and, if given, the
 * measured full-shot injection pressure): weighted nonlinear least squares by
 * Levenberg–Marquardt (Levenberg (1944) Q. Appl. Math. 2:164; Marquardt (1963) J. SIAM
 * 11:431) on the fill simulation, central-difference Jacobian, bounds by projection, and a
 * Tikhonov pull toward the nominal model (rows (x − x₀)/spread, a Gaussian prior) so an
 * under-determined fit stays near it. Standard errors from (JᵀJ + P)⁻¹ with residuals
 * weighted by their noise (the linearised covariance of least squares, Bates & Watts,
 * *Nonlinear Regression Analysis and Its Applications*, 1988, §2.3). A factor the data
 * cannot move is reported as not identified instead of being given a number from noise.
 *
 * A short shot at constant injection rate is the fill state when the injected volume
 * equals the shot size: the simulation lands a step on each shot size and samples it.
 */
export function calibrate(
  wire: ScenarioWire,
  measurements: Measurements,
  options: CalibrateOptions,
): CalibrationOutcome {
  try {
    return fit(wire, measurements, options);
  } catch (error) {
    if (!(error instanceof CalibrationStopped)) throw error;
    return {
      ok: false,
      code: "stopped",
      reason: error.reason,
      message: error.reason === "cancelled"
        ? "The fit was cancelled before it finished"
        : "The fit reached its time limit before it finished",
    };
  }
}

function fit(
  wire: ScenarioWire,
  measurements: Measurements,
  options: CalibrateOptions,
): CalibrationOutcome {
  const factors = options.factors;
  const p = factors.length;
  if (p === 0) throw new RangeError("Cannot calibrate: give at least one factor");
  const fillNoise = options.fillNoise ?? 0.01;
  const pressureNoise = options.pressureNoise ?? 0.02;
  const spread = factors.map((f, k) =>
    options.priorSpread?.[k] ??
      (f.kind === "viscosity" ? 0.3 : f.kind === "melt_temperature" ? 10 : 0.1)
  );
  const x0 = Float64Array.from(factors, nominalValue);
  const bounds = factors.map(defaultBounds);
  let simulations = 0;

  // A shot size given as a share of the full shot is a share of the model's shot at x (a size
  // factor changes the feed system's volume too).
  const volumesOf = (w: ScenarioWire): number[] => {
    const parsed = parseScenario(w, { materialIds: LIBRARY_MATERIAL_IDS });
    const built = parsed.ok ? buildNetwork(parsed.scenario) : undefined;
    const shot = built?.ok ? built.network.feedSystemVolume + built.network.cavityVolume : NaN;
    return measurements.short_shots.map((s) =>
      s.injected_cm3 !== undefined ? s.injected_cm3 * 1e-6 : (s.shot_percent! / 100) * shot
    );
  };
  let iterations = 0;
  let bestCost = NaN;
  const run = (w: ScenarioWire): { outcome: RunOutcome; volumes: number[] } => {
    if (options.signal?.aborted) throw new CalibrationStopped("cancelled");
    if (options.deadline !== undefined && Date.now() > options.deadline) {
      throw new CalibrationStopped("deadline");
    }
    simulations++;
    const volumes = volumesOf(w);
    const outcome = simulateScenario(w, { sampleVolumes: volumes });
    options.onProgress?.({ iteration: iterations, simulations, cost: bestCost });
    return { outcome, volumes };
  };
  const { outcome: nominal, volumes: nominalVolumes } = run(wire);
  if (!nominal.ok) {
    return {
      ok: false,
      code: "simulation_failed",
      message: nominal.code === "invalid_scenario"
        ? nominal.issues.map((i) => `${i.at}: ${i.message}`).join("; ")
        : nominal.message,
    };
  }
  const network = nominal.run.network;
  const material = nominal.run.material;
  const shotCm3 = (network.feedSystemVolume + network.cavityVolume) * 1e6;
  const cavities = network.cavities.map((c) => ({ id: c.id, volume_cm3: c.volume * 1e6 }));
  const issues = checkMeasurements(measurements, {
    cavities,
    shotVolumeCm3: shotCm3,
    solidDensityKgM3: material.solidDensity,
  });
  if (issues.length > 0) return { ok: false, code: "invalid_measurements", issues };

  // Data rows: one per weighed part, then the pressure.
  const rows = measurements.short_shots.flatMap((shot, s) => {
    const injectedCm3 = shot.injected_cm3 ?? (shot.shot_percent! / 100) * shotCm3;
    return shot.parts.map((part) => {
      const cavity = network.cavities.findIndex((c) => c.id === part.cavity);
      const full = network.cavities[cavity].volume * material.meltDensity * 1000;
      const measured = part.fill_percent !== undefined
        ? part.fill_percent / 100
        : Math.min(1, part.mass_g! / full);
      return { shot: s, cavity, id: part.cavity, injectedCm3, measured };
    });
  });
  const pressureMPa = measurements.full_shot_pressure_MPa;

  const predictAt = (x: ArrayLike<number>): Prediction | undefined => {
    const { outcome, volumes } = run(applyFactors(wire, factors, x));
    if (!outcome.ok) return undefined;
    return predictionOf(outcome.run.fill, rows, volumes);
  };
  const residuals = (pred: Prediction, x: ArrayLike<number>): Float64Array => {
    const r = new Float64Array(rows.length + (pressureMPa !== undefined ? 1 : 0) + p);
    rows.forEach((row, i) => (r[i] = (pred.fills[i] - row.measured) / fillNoise));
    let k = rows.length;
    if (pressureMPa !== undefined) {
      r[k++] = (pred.pressure / 1e6 - pressureMPa) / (pressureNoise * pressureMPa);
    }
    for (let j = 0; j < p; j++) r[k + j] = (x[j] - x0[j]) / spread[j];
    return r;
  };
  const dataRows = rows.length + (pressureMPa !== undefined ? 1 : 0);
  const cost = (r: Float64Array, onlyData = false) => {
    let sum = 0;
    for (let i = 0; i < (onlyData ? dataRows : r.length); i++) sum += r[i] * r[i];
    return sum;
  };

  const before = predictionOf(nominal.run.fill, rows, nominalVolumes);
  let x = x0.slice();
  let pred = before;
  let r = residuals(pred, x);
  bestCost = cost(r);
  let mu = 1e-2;
  let stoppedBecause: "converged" | "iteration_limit" | "no_progress" = "iteration_limit";
  let jacobian: Float64Array[] = [];
  const clamp = (v: number, j: number) => Math.min(bounds[j][1], Math.max(bounds[j][0], v));

  const jacobianAt = (at: Float64Array): Float64Array[] | undefined => {
    const columns: Float64Array[] = [];
    for (let j = 0; j < p; j++) {
      const h = 1e-3 * Math.max(Math.abs(at[j]), factors[j].kind === "melt_temperature" ? 1 : 0.1);
      const up = at.slice();
      const down = at.slice();
      up[j] = at[j] + h;
      down[j] = at[j] - h;
      const pu = predictAt(up);
      const pd = predictAt(down);
      if (!pu || !pd) return undefined;
      const ru = residuals(pu, up);
      const rd = residuals(pd, down);
      columns.push(ru.map((v, i) => (v - rd[i]) / (2 * h)));
    }
    return columns;
  };

  for (; iterations < (options.maxIterations ?? 30); iterations++) {
    const J = jacobianAt(x);
    if (!J) {
      return { ok: false, code: "simulation_failed", message: "a Jacobian simulation failed" };
    }
    jacobian = J;
    const A = normalMatrix(J);
    const g = new Float64Array(p);
    for (let j = 0; j < p; j++) for (let i = 0; i < r.length; i++) g[j] += J[j][i] * r[i];
    let accepted = false;
    for (let tries = 0; tries < 8 && !accepted; tries++) {
      const damped = A.map((row, i) => row.map((v, j) => (i === j ? v * (1 + mu) + 1e-12 : v)));
      const step = solveSymmetric(damped, g.map((v) => -v));
      const trial = x.map((v, j) => clamp(v + step[j], j));
      const trialPred = predictAt(trial);
      const trialR = trialPred ? residuals(trialPred, trial) : undefined;
      if (trialR && cost(trialR) < cost(r)) {
        const gain = cost(r) - cost(trialR);
        x = trial;
        pred = trialPred!;
        r = trialR;
        bestCost = cost(r);
        mu = Math.max(mu / 3, 1e-9);
        accepted = true;
        if (gain <= CONVERGED_GAIN * cost(r) || cost(r) < 1e-20) stoppedBecause = "converged";
      } else mu *= 4;
    }
    if (!accepted) {
      stoppedBecause = cost(r) < 1e-16 ? "converged" : "no_progress";
      break;
    }
    if (stoppedBecause === "converged") break;
  }
  if (stoppedBecause === "converged" || stoppedBecause === "no_progress") {
    const J = jacobianAt(x);
    if (J) jacobian = J;
  }

  const covariance = invertSymmetric(normalMatrix(jacobian));
  const fitted: FittedFactor[] = factors.map((factor, j) => {
    const se = Math.sqrt(Math.max(0, covariance[j][j]));
    return {
      factor,
      name: factorName(factor),
      nominal: x0[j],
      value: x[j],
      standardError: se,
      identified: se < 0.5 * spread[j],
      bounds: bounds[j],
      atBound: x[j] <= bounds[j][0] || x[j] >= bounds[j][1],
    };
  });
  return {
    ok: true,
    factors: fitted,
    residuals: rows.map((row, i) => ({
      shot: row.shot,
      cavity: row.id,
      injectedCm3: row.injectedCm3,
      measured: row.measured,
      before: before.fills[i],
      after: pred.fills[i],
    })),
    pressure: pressureMPa !== undefined
      ? {
        measuredMPa: pressureMPa,
        beforeMPa: before.pressure / 1e6,
        afterMPa: pred.pressure / 1e6,
      }
      : undefined,
    costBefore: cost(residuals(before, x0), true),
    costAfter: cost(r, true),
    iterations,
    simulations,
    stoppedBecause,
    calibrated: calibratedScenario(wire, factors, x),
  };
}

function calibratedScenario(
  wire: ScenarioWire,
  factors: readonly CalibrationFactor[],
  x: Float64Array,
): ScenarioWire {
  const out = applyFactors(wire, factors, x);
  const summary = factors.map((f, j) => `${factorName(f)} ${x[j].toPrecision(4)}`).join(", ");
  out.name = `${wire.name} (calibrated)`.slice(0, 200);
  out.notes = `Calibrated to weighed short shots: ${summary}. ${wire.notes ?? ""}`.trim().slice(
    0,
    4000,
  );
  if (typeof out.material !== "string" && factors.some((f) => f.kind === "viscosity")) {
    out.material.id = `${out.material.id}-calibrated`.slice(0, 64);
    out.material.source = `${out.material.source}; viscosity scaled by ${
      x[factors.findIndex((f) => f.kind === "viscosity")].toPrecision(4)
    } to this tool's short shots`.slice(0, 1000);
  }
  return out;
}

/** Each row's cavity fill at its shot size (sampled exactly by the fill), and the feed pressure at switchover. */
function predictionOf(
  fill: FillResult,
  rows: readonly { cavity: number; shot: number }[],
  volumes: readonly number[],
): Prediction {
  const samples = fill.samples ?? [];
  const fills = rows.map((row) => {
    const volume = volumes[row.shot];
    const sample = samples.find((s) => Math.abs(s.injectedVolume - volume) <= 1e-9 * volume);
    if (!sample) throw new RangeError(`Cannot calibrate: no fill sample at ${volume} m³`);
    return sample.cavityFill[row.cavity];
  });
  return { fills, pressure: fill.feedPressureAtSwitchover };
}

/** JᵀJ from the columns of J. */
function normalMatrix(columns: readonly Float64Array[]): number[][] {
  return columns.map((a) =>
    columns.map((b) => {
      let s = 0;
      for (let i = 0; i < a.length; i++) s += a[i] * b[i];
      return s;
    })
  );
}

/** Solve A·x = b for a symmetric positive-definite A (Cholesky). */
function solveSymmetric(A: number[][], b: ArrayLike<number>): Float64Array {
  const n = A.length;
  const L = A.map(() => new Float64Array(n));
  for (let i = 0; i < n; i++) {
    for (let j = 0; j <= i; j++) {
      let s = A[i][j];
      for (let k = 0; k < j; k++) s -= L[i][k] * L[j][k];
      L[i][j] = i === j ? Math.sqrt(Math.max(s, 1e-300)) : s / L[j][j];
    }
  }
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let s = b[i];
    for (let k = 0; k < i; k++) s -= L[i][k] * y[k];
    y[i] = s / L[i][i];
  }
  const x = new Float64Array(n);
  for (let i = n - 1; i >= 0; i--) {
    let s = y[i];
    for (let k = i + 1; k < n; k++) s -= L[k][i] * x[k];
    x[i] = s / L[i][i];
  }
  return x;
}

function invertSymmetric(A: number[][]): number[][] {
  const n = A.length;
  const inverse: number[][] = [];
  for (let j = 0; j < n; j++) {
    const e = new Float64Array(n);
    e[j] = 1;
    inverse.push([...solveSymmetric(A, e)]);
  }
  return inverse;
}
