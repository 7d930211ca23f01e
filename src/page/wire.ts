/**
 * The parts of the service's JSON the page reads (`evenfill.result/1`,
 * `evenfill.optimization/1`, jobs, store listings). Declared here, not
 * imported from `report/`, so the page's bundle depends on the wire format
 * only; `tests/page/results_view_test.ts` checks, when it type-checks, that the report's
 * output fits these types.
 *
 * @module
 */

/** One cavity of a result. */
export interface CavityResult {
  id: string;
  name?: string;
  fill_time_s: number | null;
  fill_percent_at_first_full: number | null;
  fill_percent_at_switchover?: number | null;
  gate?: string;
  gate_shear_rate_peak_1_s: number | null;
  gate_shear_limit_1_s: number | null;
  gate_pressure_drop_MPa?: number | null;
  inlet_pressure_at_switchover_MPa?: number | null;
  mass_g: number | null;
}

/** One element of a result. */
export interface ElementResult {
  id: string;
  kind: string;
  pressure_drop_end_MPa: number | null;
  wall_shear_rate_peak_1_s?: number | null;
  volume_cm3?: number | null;
  flow_end_cm3_s?: number | null;
  full_time_s?: number | null;
  /** Melt temperature leaving the element at switchover, °C. */
  melt_temperature_end_C?: number | null;
  /** Frozen layer at the wall at switchover, mm. */
  frozen_layer_end_mm?: number | null;
  frozen_shut?: boolean;
}

/** One freeze-time entry of a result. */
export interface FreezeEntry {
  id: string;
  kind: string;
  size_mm?: number | null;
  freeze_time_s: number | null;
  cooling_time_s?: number | null;
  formula?: string;
}

/** A warning in plain words. */
export interface ResultWarning {
  code: string;
  severity?: string;
  element?: string;
  message: string;
}

/** One sample of the fill history. */
export interface HistorySample {
  time_s: number | null;
  injected_cm3?: number | null;
  feed_pressure_MPa: number | null;
  clamp_force_kN: number | null;
  cavity_fill_percent: (number | null)[];
}

/** `evenfill.result/1`. */
export interface SimulationResult {
  format: string;
  scenario?: string;
  material?: { id: string; name: string; generic?: boolean; source?: string };
  injection_rate_cm3_s?: number | null;
  fill_time_s: number | null;
  /** When the press switches from filling to holding (the scenario's switchover %), s. */
  switchover_time_s?: number | null;
  imbalance_percent: number | null;
  feed_pressure_peak_MPa: number | null;
  feed_pressure_at_switchover_MPa?: number | null;
  machine_pressure_share_percent?: number | null;
  clamp_force_peak_kN: number | null;
  clamp_share_percent?: number | null;
  shot_mass_g: number | null;
  runner_volume_cm3: number | null;
  runner_mass_g: number | null;
  runner_share_percent?: number | null;
  cavities: CavityResult[];
  elements: ElementResult[];
  paths?: {
    cavity: string;
    elements: {
      id: string;
      /** How far melt travels through the element, mm. */
      length_mm?: number | null;
      pressure_drop_MPa: number | null;
      pressure_drop_first_full_MPa?: number | null;
    }[];
    total_MPa: number | null;
    total_first_full_MPa?: number | null;
  }[];
  feed_system_volume_cm3?: number | null;
  cavity_volume_cm3?: number | null;
  freeze?: {
    part_cooling_time_s: number | null;
    runner_cooling_time_s: number | null;
    cycle_set_by?: string;
    entries?: FreezeEntry[];
  };
  /** Solver figures; key spelling may move from camelCase to snake_case (read both). */
  diagnostics?: Record<string, unknown>;
  warnings: readonly ResultWarning[];
  cautions: readonly string[];
  history?: HistorySample[];
}

/** One entry of the change list, in order of work. */
export interface ChangeEntry {
  element: string;
  kind: string;
  section: string;
  dimension: string;
  from_mm: number;
  to_mm: number;
  from_in: number;
  to_in: number;
  cutter: string;
  steel_safe: boolean;
  mold_half: string;
  step: number;
  after_step: {
    imbalance_percent: number;
    feed_pressure_peak_MPa: number;
    runner_volume_cm3: number;
    limits_met: boolean;
  };
}

/** One optimizer iteration. */
export interface IterationEntry {
  iteration: number;
  accepted: boolean;
  imbalance_percent: number;
  feed_pressure_peak_MPa: number;
  runner_volume_cm3: number;
  simulations?: number;
}

/** `evenfill.optimization/1`. */
export interface OptimizationResult {
  format: string;
  status: string;
  reason: string;
  would_need: string[];
  snapping: string | null;
  simulations?: number;
  /** Where the optimizer's slopes came from. */
  slopes?: "tangent" | "finite_difference";
  before: SimulationResult;
  after: SimulationResult;
  changes: ChangeEntry[];
  iterations: IterationEntry[];
}

/** Live progress of a job. */
export interface JobProgress {
  iteration: number;
  accepted?: boolean;
  imbalance_percent: number;
  feed_pressure_peak_MPa: number;
  runner_volume_cm3: number;
  simulations?: number;
}

/** A job as `GET /api/jobs/:id` returns it. */
export interface Job {
  id: string;
  status: "queued" | "running" | "done" | "failed" | "cancelled";
  progress: JobProgress | null;
  result: OptimizationResult | null;
  error: unknown;
}

/** One validation issue. */
export interface Issue {
  at: string;
  path: (string | number)[];
  code: string;
  message: string;
}

/** The error body of the API. */
export interface ApiErrorBody {
  error: { code: string; message: string; issues?: Issue[] };
}

/** A library material. */
export interface MaterialEntry {
  id: string;
  name: string;
  generic?: boolean;
  source?: string;
  max_shear_rate_1_s?: number;
}

/** A demo listing. */
export interface DemoEntry {
  id: string;
  name: string;
  cavities: number;
}

/** A saved scenario listing. */
export interface SavedEntry {
  id: string;
  name: string;
  revision: number;
  updated_at: string;
}

/** A factor a calibration may fit (the `factors` of a calibrate job). */
export type CalibrationFactorEntry =
  | { kind: "viscosity" }
  | { kind: "gate_size"; gate: string }
  | { kind: "runner_size"; runner: string }
  | { kind: "melt_temperature" };

/** `evenfill.calibration/1`. */
export interface CalibrationResult {
  format: string;
  stopped_because: string;
  iterations: number;
  simulations: number;
  cost_before: number | null;
  cost_after: number | null;
  factors: {
    factor: CalibrationFactorEntry;
    name: string;
    nominal: number;
    value: number | null;
    standard_error: number | null;
    identified: boolean;
    at_bound: boolean;
    bounds: [number, number];
  }[];
  residuals: {
    shot: number;
    cavity: string;
    injected_cm3: number | null;
    measured_fill_percent: number | null;
    before_fill_percent: number | null;
    after_fill_percent: number | null;
  }[];
  pressure:
    | { measured_MPa: number | null; before_MPa: number | null; after_MPa: number | null }
    | null;
  calibrated: Record<string, unknown>;
}

/** `evenfill.window/1`: each design's sweep. */
export interface WindowJobResult {
  format: string;
  range: {
    melt_temperature_K: number;
    mold_temperature_K: number;
    injection_rate_percent: number;
    viscosity_percent: number;
  };
  designs: {
    design: "today" | "after";
    name: string;
    points: { levels: Record<string, number>; imbalance_percent: number | null }[];
    imbalance_range_percent: [number | null, number | null];
    gate_shear_range_1_s: [number | null, number | null];
    effects: { factor: string; imbalance_points: number | null }[];
    failures: { message: string }[];
  }[];
  stopped_because: string | null;
}

/** Progress of a running calibrate or window job. */
export interface StageProgress {
  stage: "calibrate" | "window";
  simulations: number;
  iteration: number | null;
  done: number | null;
  total: number | null;
}
