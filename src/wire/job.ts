/**
 * A job's progress, error and the events of its Server-Sent Events stream, as the
 * store keeps them and the service and the worker send them.
 *
 * @module
 */
import { z } from "zod";
import { JobErrorCodeSchema, JobStatusSchema } from "./enums.ts";
import { IterationSchema } from "./optimization.ts";

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
