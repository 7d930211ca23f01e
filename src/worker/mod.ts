/**
 * Job execution off the request path: the {@link JobWorker} supervisor and the
 * per-attempt job process.
 *
 * @module
 */
export * from "./job_worker.ts";
export { runJobAttempt, type RunJobAttemptOptions } from "./run_job.ts";
