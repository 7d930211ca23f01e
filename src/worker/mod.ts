/**
 * Job execution off the request path: the {@link JobWorker} supervisor and the
 * job process it runs jobs in.
 *
 * @module
 */
export * from "./job_worker.ts";
export { runJobAttempt, type RunJobAttemptOptions } from "./run_job.ts";
