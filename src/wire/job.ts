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
import { IterationSchema, OptimizationSchema } from "./optimization.ts";

/** Latest progress of a running optimization: its last SLP iteration. */
export const JobProgressSchema = IterationSchema;
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
  result: OptimizationSchema.nullable().describe(
    "evenfill.optimization/1 JSON with the before/after fill history",
  ),
});
/** {@link JobSchema}. */
export type Job = z.infer<typeof JobSchema>;
