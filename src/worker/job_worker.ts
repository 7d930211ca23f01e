import type { ClaimedJob, Store } from "../store/store.ts";

/** Options of {@link JobWorker}. */
export interface JobWorkerOptions {
  /** This worker's id, the lease owner name. */
  id: string;
  /** SQLite file the job processes open (they open their own connection). */
  dbPath: string;
  /** Lease length, ms; renewed every third of it while a job runs. */
  leaseMs: number;
  /** How often an idle worker looks for a job, ms (default 200). */
  idlePollMs?: number;
  /** How often a running job is supervised (cancel, time limit, lease), ms (default 100). */
  supervisePollMs?: number;
  /** How long a job may take to honour a cancel before it is killed, ms (default 1000). */
  cancelGraceMs?: number;
  /** How long shutdown waits for a running job before killing and re-queueing it, ms (default 2000). */
  shutdownGraceMs?: number;
  /** Enable the test-only job kinds in the job processes. */
  enableTestJobs?: boolean;
  /** Stop when this returns true (e.g. the parent service is gone). */
  shouldStop?: () => boolean;
  /** Log lines (default: JSON on stdout). */
  log?: (event: Record<string, unknown>) => void;
}

const RUN_JOB = new URL("./run_job.ts", import.meta.url).pathname;
const CONFIG = new URL("../../deno.json", import.meta.url).pathname;

const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

/**
 * A worker: claims jobs from the store one at a time and runs each attempt in
 * a child process (`run_job.ts`) it can SIGKILL, so a runaway optimization
 * never blocks the worker or the service. While the child runs, the worker
 * renews the lease, kills the child at the job's time limit (job failed,
 * `time_limit`) or when a cancel is not honoured within the grace period (job
 * cancelled), and fails the job if the child dies without writing an outcome.
 * `stop()` stops claiming, gives a running job a short grace, then kills it
 * and puts it back in the queue, so no job is lost.
 */
export class JobWorker {
  readonly options: JobWorkerOptions;
  #store: Store;
  #stopping = false;
  #wake: (() => void) | undefined;
  #done: Promise<void> | undefined;
  #stopRequestedAt = 0;

  constructor(store: Store, options: JobWorkerOptions) {
    this.#store = store;
    this.options = options;
  }

  #log(event: Record<string, unknown>): void {
    (this.options.log ?? ((e) => console.log(JSON.stringify(e))))({
      worker: this.options.id,
      ...event,
    });
  }

  /** Start the claim loop; resolves when it has stopped. */
  run(): Promise<void> {
    this.#done ??= this.#loop();
    return this.#done;
  }

  /** Stop claiming; a running job gets the shutdown grace, then goes back to the queue. */
  stop(): Promise<void> {
    if (!this.#stopping) {
      this.#stopping = true;
      this.#stopRequestedAt = Date.now();
      this.#wake?.();
    }
    return this.#done ?? Promise.resolve();
  }

  async #loop(): Promise<void> {
    const { id, leaseMs } = this.options;
    let lastBeat = 0;
    this.#store.heartbeatWorker(id, Deno.pid);
    this.#log({ event: "worker_started", pid: Deno.pid });
    try {
      while (!this.#stopping) {
        if (this.options.shouldStop?.()) {
          this.#stopping = true;
          this.#stopRequestedAt = Date.now();
          break;
        }
        if (Date.now() - lastBeat > leaseMs / 3) {
          this.#store.heartbeatWorker(id, Deno.pid);
          lastBeat = Date.now();
        }
        const claimed = this.#store.claimJob(id, leaseMs);
        if (claimed) {
          await this.#supervise(claimed);
          continue;
        }
        await new Promise<void>((resolve) => {
          const timer = setTimeout(resolve, this.options.idlePollMs ?? 200);
          this.#wake = () => {
            clearTimeout(timer);
            resolve();
          };
        });
        this.#wake = undefined;
      }
    } finally {
      this.#store.removeWorker(id);
      this.#log({ event: "worker_stopped" });
    }
  }

  async #supervise({ job, attempt }: ClaimedJob): Promise<void> {
    const { id: owner, leaseMs, dbPath } = this.options;
    this.#log({ event: "job_started", job: job.id, kind: job.kind, attempt });
    const env: Record<string, string> = { NO_COLOR: "1" };
    if (this.options.enableTestJobs) env.EVENFILL_ENABLE_TEST_JOBS = "1";
    const child = new Deno.Command(Deno.execPath(), {
      args: [
        "run",
        "--quiet",
        "--config",
        CONFIG,
        "--allow-read",
        "--allow-write",
        "--allow-env",
        "--v8-flags=--max-old-space-size=1024",
        RUN_JOB,
        "--db",
        dbPath,
        "--job",
        job.id,
        "--owner",
        owner,
        "--attempt",
        String(attempt),
        "--parent",
        String(Deno.pid),
      ],
      env,
      stdin: "null",
      stdout: "inherit",
      stderr: "inherit",
    }).spawn();
    let exited: Deno.CommandStatus | undefined;
    const status = child.status.then((s) => (exited = s));
    const started = Date.now();
    let lastRenew = started;
    let cancelSeenAt: number | undefined;
    let verdict: "time_limit" | "cancelled" | "shutdown" | undefined;
    const kill = () => {
      try {
        child.kill("SIGKILL");
      } catch {
        // already gone
      }
    };
    while (exited === undefined) {
      await Promise.race([status, sleep(this.options.supervisePollMs ?? 100)]);
      if (exited !== undefined) break;
      const now = Date.now();
      if (now - lastRenew > leaseMs / 3) {
        if (!this.#store.renewLease(job.id, owner, attempt, leaseMs)) {
          // Someone else settled this attempt (e.g. the lease lapsed): stop it.
          kill();
          await status;
          this.#log({ event: "lease_lost", job: job.id, attempt });
          return;
        }
        this.#store.heartbeatWorker(owner, Deno.pid);
        lastRenew = now;
      }
      if (now - started > job.time_limit_ms) {
        verdict = "time_limit";
        kill();
        break;
      }
      if (cancelSeenAt === undefined && this.#store.isCancelRequested(job.id)) cancelSeenAt = now;
      if (cancelSeenAt !== undefined && now - cancelSeenAt > (this.options.cancelGraceMs ?? 1000)) {
        verdict = "cancelled";
        kill();
        break;
      }
      if (this.#stopping && now - this.#stopRequestedAt > (this.options.shutdownGraceMs ?? 2000)) {
        verdict = "shutdown";
        kill();
        break;
      }
    }
    const final = await status;
    const seconds = (job.time_limit_ms / 1000).toString();
    let settled = false;
    if (verdict === "time_limit") {
      settled = this.#store.finishJob(job.id, owner, attempt, {
        status: "failed",
        error: { code: "time_limit", message: `Stopped after its time limit of ${seconds} s` },
      });
    } else if (verdict === "cancelled") {
      settled = this.#store.finishJob(job.id, owner, attempt, {
        status: "cancelled",
        error: { code: "cancelled", message: "cancelled by request (the job was stopped)" },
      });
    } else if (verdict === "shutdown") {
      settled = this.#store.releaseJob(job.id, owner, attempt);
    } else if (final.code !== 0) {
      settled = this.#store.finishJob(job.id, owner, attempt, {
        status: "failed",
        error: {
          code: "job_crashed",
          message: `The job process ended unexpectedly (exit code ${final.code}${
            final.signal ? `, signal ${final.signal}` : ""
          })`,
        },
      });
    }
    this.#log({
      event: "job_finished",
      job: job.id,
      attempt,
      exit_code: final.code,
      verdict: verdict ?? "exited",
      settled_by_worker: settled,
      seconds: (Date.now() - started) / 1000,
    });
  }
}
