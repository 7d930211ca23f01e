/**
 * The enumerations the wire formats share: each defined once here, imported by
 * the scenario schema, the report, the store, the service, the worker and the CLI.
 *
 * @module
 */
import { z } from "zod";

/**
 * What the optimizer may do to the tool (`goals.mode` of a scenario, `mode` of a job):
 * `new_tool` free sizes within bounds, `trim` an existing tool whose runners may shrink,
 * `steel_safe` only enlarge.
 */
export const ModeSchema = z.enum(["new_tool", "trim", "steel_safe"]);
/** {@link ModeSchema}. */
export type Mode = z.infer<typeof ModeSchema>;
/** The modes, in the schema's order. */
export const MODES: readonly Mode[] = ModeSchema.options;

/**
 * Where the optimizer's slopes come from: the simulation's tangent, or one extra
 * simulation per size (`finite_difference`).
 */
export const SlopeSourceSchema = z.enum(["tangent", "finite_difference"]);
/** {@link SlopeSourceSchema}. */
export type SlopeSource = z.infer<typeof SlopeSourceSchema>;
/** The slope sources, in the schema's order. */
export const SLOPE_SOURCES: readonly SlopeSource[] = SlopeSourceSchema.options;

/** Life cycle of a job. */
export const JobStatusSchema = z.enum(["queued", "running", "done", "failed", "cancelled"]);
/** {@link JobStatusSchema}. */
export type JobStatus = z.infer<typeof JobStatusSchema>;
/** The statuses after which a job never changes again. */
export const FINAL_JOB_STATUSES: ReadonlySet<JobStatus> = new Set(["done", "failed", "cancelled"]);

/**
 * Kinds of job the workers run: `optimize` (balance the sizes), `calibrate` (fit the model to the
 * scenario's weighed short shots), `window` (sweep the process window); `test_spin` (a
 * deliberately endless job) only when test jobs are enabled.
 */
export const JobKindSchema = z.enum(["optimize", "calibrate", "window", "test_spin"]);
/** {@link JobKindSchema}. */
export type JobKind = z.infer<typeof JobKindSchema>;

/** Why an optimization stopped (`status` of `evenfill.optimization/1`). */
export const OptimizationStatusSchema = z.enum([
  "converged",
  "infeasible",
  "iteration_limit",
  "cancelled",
]);
/** {@link OptimizationStatusSchema}. */
export type OptimizationStatus = z.infer<typeof OptimizationStatusSchema>;

/**
 * The codes a failed or cancelled job's error carries (`error.code` of a job and of
 * its `end` event). The wire type stays an open string so a new code is no breaking
 * change; these are the ones written today.
 */
export const JobErrorCodeSchema = z.enum([
  // the job's input
  "invalid_scenario",
  "test_jobs_disabled",
  // the optimizer's expected failures
  "bounds_conflict",
  "no_variables",
  "simulation_failed",
  "lp_failed",
  // the calibration's expected failures
  "invalid_measurements",
  // an engine exception
  "optimization_failed",
  "calibration_failed",
  "window_failed",
  // the supervisor and the store's retry rule
  "time_limit",
  "cancelled",
  "job_crashed",
  "worker_lost",
  // the event stream of a job deleted meanwhile
  "not_found",
]);
/** {@link JobErrorCodeSchema}. */
export type JobErrorCode = z.infer<typeof JobErrorCodeSchema>;

/** How a simulation ended (`diagnostics.stopped_because` of a result). */
export const StoppedBecauseSchema = z.enum([
  "all_full",
  "short_shot",
  "step_limit",
  "solver_failure",
  "cancelled",
  "deadline",
]);
/** {@link StoppedBecauseSchema}. */
export type StoppedBecause = z.infer<typeof StoppedBecauseSchema>;

/** How loud a warning is. */
export const WarningSeveritySchema = z.enum(["warning", "caution", "info"]);
/** {@link WarningSeveritySchema}. */
export type WarningSeverity = z.infer<typeof WarningSeveritySchema>;
