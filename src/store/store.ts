/**
 * The persistence interface of the service and the workers: saved scenarios with
 * their revision history, and the job queue (status, lease, attempts, progress,
 * result, error). Synchronous, as embedded engines are; `SqliteStore` is the
 * shipped engine. Times are ISO 8601 strings on the wire and epoch milliseconds
 * for leases.
 *
 * @module
 */
import type { JobError, JobKind, JobProgress, JobStatus } from "../wire/mod.ts";

/** A saved scenario's head: its latest revision. */
export interface ScenarioHead {
  id: string;
  name: string;
  revision: number;
  created_at: string;
  updated_at: string;
}

/** One stored revision of a saved scenario. */
export interface ScenarioRevision {
  id: string;
  revision: number;
  name: string;
  created_at: string;
  /** The scenario JSON exactly as it was saved. */
  scenario: unknown;
}

/** The job wire types (`wire/`), for the store's users. */
export type { JobError, JobKind, JobProgress, JobStatus } from "../wire/mod.ts";

/** Everything stored about a job. */
export interface JobRecord {
  id: string;
  kind: JobKind;
  name: string;
  status: JobStatus;
  /** The job's input: `{scenario, mode?, scenario_id?}`. */
  input: unknown;
  attempts: number;
  max_attempts: number;
  /** Wall-clock limit of one attempt, ms. */
  time_limit_ms: number;
  created_at: string;
  started_at: string | null;
  finished_at: string | null;
  lease_owner: string | null;
  /** Epoch ms at which the lease lapses (null when not leased). */
  lease_expires_ms: number | null;
  cancel_requested: boolean;
  progress: JobProgress | null;
  /** Bumped on every progress write, so watchers see each change once. */
  progress_seq: number;
  result: unknown;
  error: JobError | null;
}

/** A job without its (possibly large) input and result, for lists. */
export type JobSummary = Omit<JobRecord, "input" | "result">;

/** What a submission stores. */
export interface NewJob {
  id: string;
  kind: JobKind;
  name: string;
  input: unknown;
  /** Wall-clock limit of one attempt, ms. */
  time_limit_ms: number;
  /** Attempts before a job whose workers keep dying is failed (default 3). */
  max_attempts?: number;
}

/** A claimed job: the record plus the lease the claimant now holds. */
export interface ClaimedJob {
  job: JobRecord;
  /** The attempt number this claim started (1 for the first run). */
  attempt: number;
}

/**
 * The store could not take the database's lock in time (another process holds
 * it): nothing was changed; try again shortly. The service answers 503 with
 * Retry-After, the worker and the job process wait and retry.
 */
export class StoreBusyError extends Error {
  override name = "StoreBusyError";
}

/**
 * The retry rule, in one place (`abandonAttempt`, also applied to lapsed
 * leases by `claimJob`): an attempt that ends without an outcome of its own —
 * its worker stopped renewing the lease, or its job process died (SIGKILL, out
 * of memory, a crash) — is run again from the start until the job has used
 * `max_attempts` attempts (default 3), and then fails with the last attempt's
 * error. A job whose cancel was requested is cancelled instead of run again.
 * An attempt that ends with an outcome (done; failed by the engine, by bad
 * input or at its time limit; cancelled) is final and never retried. A
 * graceful shutdown gives the attempt back (`releaseJob`) without using it up.
 */
export type AbandonedAs = "queued" | "failed" | "cancelled";

/** How a finished attempt ends. */
export type JobOutcome =
  | { status: "done"; result: unknown }
  | { status: "cancelled"; result?: unknown; error?: JobError }
  | { status: "failed"; error: JobError; result?: unknown };

/** A registered worker process, for health reporting. */
export interface WorkerRecord {
  id: string;
  pid: number;
  started_at: string;
  heartbeat_ms: number;
}

/** Saved scenarios with revision history. */
export interface ScenarioStore {
  listScenarios(): ScenarioHead[];
  /** Save a new scenario as revision 1. */
  createScenario(id: string, name: string, scenario: unknown): ScenarioHead;
  /** Append a revision; undefined when the id is unknown. */
  updateScenario(id: string, name: string, scenario: unknown): ScenarioHead | undefined;
  /** The head and its scenario JSON; undefined when unknown. */
  getScenario(id: string): (ScenarioHead & { scenario: unknown }) | undefined;
  /** Every revision, oldest first, without bodies; undefined when the id is unknown. */
  listRevisions(id: string): Omit<ScenarioRevision, "scenario" | "id">[] | undefined;
  getRevision(id: string, revision: number): ScenarioRevision | undefined;
  /** Delete a scenario and its history; false when unknown. */
  deleteScenario(id: string): boolean;
}

/** The job queue. Every state change is one atomic statement or transaction. */
export interface JobStore {
  /** Add a job unless `maxQueued` jobs are already queued; false when full. */
  submitJob(job: NewJob, options: { maxQueued: number }): JobRecord | false;
  getJob(id: string): JobRecord | undefined;
  /** The job without its input and result (cheap to poll). */
  getJobSummary(id: string): JobSummary | undefined;
  /** Most recent first. */
  listJobs(options?: { limit?: number }): JobSummary[];
  countJobs(): { queued: number; running: number };
  /**
   * Atomically claim the oldest queued job for `owner`, after settling every
   * lapsed lease (its worker died) by the retry rule ({@link AbandonedAs}).
   * Returns undefined when nothing is runnable.
   */
  claimJob(owner: string, leaseMs: number, nowMs?: number): ClaimedJob | undefined;
  /** Extend the lease; false when `owner` no longer holds this attempt. */
  renewLease(id: string, owner: string, attempt: number, leaseMs: number): boolean;
  /** Record progress; false when `owner` no longer holds this attempt. */
  writeProgress(id: string, owner: string, attempt: number, progress: JobProgress): boolean;
  /** Finish the attempt; false (and no change) when `owner` no longer holds it. */
  finishJob(id: string, owner: string, attempt: number, outcome: JobOutcome): boolean;
  /**
   * The attempt ended without an outcome (its job process died): apply the
   * retry rule ({@link AbandonedAs}) — queued again while attempts remain,
   * else failed with `error`; cancelled if a cancel was requested. Undefined
   * when `owner` no longer holds the attempt.
   */
  abandonAttempt(
    id: string,
    owner: string,
    attempt: number,
    error: JobError,
  ): AbandonedAs | undefined;
  /** Give the job back to the queue (graceful shutdown); false when not held. */
  releaseJob(id: string, owner: string, attempt: number): boolean;
  /**
   * Ask a job to stop: a queued job is cancelled at once, a running one is
   * flagged for its worker. Undefined when unknown; a finished job is returned unchanged.
   */
  requestCancel(id: string): JobRecord | undefined;
  isCancelRequested(id: string): boolean;
}

/** Worker registry, for the health endpoint. */
export interface WorkerRegistry {
  heartbeatWorker(id: string, pid: number): void;
  removeWorker(id: string): void;
  /** Workers that reported within `withinMs`. */
  aliveWorkers(withinMs: number): WorkerRecord[];
}

/**
 * The whole store. Any method may throw {@link StoreBusyError} when another
 * process holds the database's lock longer than the store's busy timeout.
 */
export interface Store extends ScenarioStore, JobStore, WorkerRegistry {
  close(): void;
}
