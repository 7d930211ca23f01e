/**
 * A job's progress, error and the events of its Server-Sent Events stream, as the
 * store keeps them and the service and the worker send them.
 *
 * @module
 */
import { z } from "zod";
import {
  JobErrorCodeSchema,
  JobKindSchema,
  JobStatusSchema,
  ModeSchema,
  SlopeSourceSchema,
} from "./enums.ts";
import { CalibrationSchema } from "./calibration.ts";
import { IterationSchema, OptimizationSchema } from "./optimization.ts";
import { WindowJobSchema } from "./window.ts";

/** Latest progress of a running calibration or process-window sweep. */
export const StageProgressSchema = z.object({
  stage: z.enum(["calibrate", "window"]),
  simulations: z.number().int().describe("simulations so far"),
  iteration: z.number().int().nullable().describe("the fit's iteration (null for a sweep)"),
  done: z.number().int().nullable().describe("points of the sweep done (null for a fit)"),
  total: z.number().int().nullable().describe("points of the sweep in all (null for a fit)"),
});
/** {@link StageProgressSchema}. */
export type StageProgress = z.infer<typeof StageProgressSchema>;

/**
 * Latest progress of a running job: an optimization's last SLP iteration, or where a
 * calibration or sweep stands (it has a `stage`).
 */
export const JobProgressSchema = z.union([IterationSchema, StageProgressSchema]);
/** {@link JobProgressSchema}. */
export type JobProgress = z.infer<typeof JobProgressSchema>;

/** A job's failure, with a stable code (one of {@link JobErrorCodeSchema}'s, or a new one). */
export const JobErrorSchema = z.object({
  code: z.union([JobErrorCodeSchema, z.string()]),
  message: z.string(),
});
/** {@link JobErrorSchema}. */
export type JobError = z.infer<typeof JobErrorSchema>;

/** The `state` event: the job's status changed. */
export const JobStateEventSchema = z.object({ status: JobStatusSchema });
/** {@link JobStateEventSchema}. */
export type JobStateEvent = z.infer<typeof JobStateEventSchema>;

/** The `end` event, after which the stream closes. */
export const JobEndEventSchema = z.object({
  status: JobStatusSchema,
  error: JobErrorSchema.nullable(),
});
/** {@link JobEndEventSchema}. */
export type JobEndEvent = z.infer<typeof JobEndEventSchema>;

/** The events of `GET /api/jobs/{id}/events`, by name: `progress` carries a {@link JobProgress}. */
export const JOB_EVENT_SCHEMAS = {
  state: JobStateEventSchema,
  progress: JobProgressSchema,
  end: JobEndEventSchema,
} as const;

/** A job as `GET /api/jobs` lists it: without its input and result. */
export const JobSummarySchema = z.object({
  id: z.string(),
  kind: JobKindSchema,
  name: z.string(),
  status: JobStatusSchema,
  attempts: z.number().int(),
  created_at: z.string(),
  started_at: z.string().nullable(),
  finished_at: z.string().nullable(),
  cancel_requested: z.boolean(),
  progress: JobProgressSchema.nullable(),
  error: JobErrorSchema.nullable(),
});
/** {@link JobSummarySchema}. */
export type JobSummary = z.infer<typeof JobSummarySchema>;

/** `GET /api/jobs`. */
export const JobListSchema = z.object({ jobs: z.array(JobSummarySchema) });

/** A job as `GET /api/jobs/{id}` returns it. */
export const JobSchema = JobSummarySchema.extend({
  mode: ModeSchema.nullable(),
  slopes: SlopeSourceSchema.nullable(),
  scenario_id: z.string().nullable(),
  time_limit_s: z.number(),
  result: z.union([OptimizationSchema, CalibrationSchema, WindowJobSchema, z.null()]).describe(
    "by kind: evenfill.optimization/1 with the before/after fill history, evenfill.calibration/1, evenfill.window/1",
  ),
});
/** {@link JobSchema}. */
export type Job = z.infer<typeof JobSchema>;
