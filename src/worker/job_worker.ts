import { type ClaimedJob, type Store, StoreBusyError } from "../store/store.ts";
import type { RunReply } from "./run_job.ts";
import { lines } from "./lines.ts";

/** Default time a job has to honour a cancel (and write its best design) before it is killed, ms. */
export const CANCEL_GRACE_MS = 5000;

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
  /**
   * How long a job may take to honour a cancel before it is killed, ms (default
   * {@link CANCEL_GRACE_MS}): the job process stops its optimization within a simulation
   * step and writes the best design so far in this time.
   */
  cancelGraceMs?: number;
  /** How long shutdown waits for a running job before killing and re-queueing it, ms (default 2000). */
  shutdownGraceMs?: number;
  /** Jobs one job process runs before it is replaced by a fresh one (default 100). */
  jobsPerProcess?: number;
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

/** How long a worker waits for another process's database lock per statement, ms. */
export const WORKER_BUSY_TIMEOUT_MS = 1000;

/** `fn()`, or `fallback` when the database is locked by another process. */
function unlessBusy<T>(fn: () => T, fallback: T): T {
  try {
    return fn();
  } catch (error) {
    if (error instanceof StoreBusyError) return fallback;
    throw error;
  }
}

/** The worker's job process (`run_job.ts`): one command line in, one reply line out. */
class JobProcess {
  readonly status: Promise<Deno.CommandStatus>;
  #child: Deno.ChildProcess;
  #writer: WritableStreamDefaultWriter<Uint8Array>;
  #waiting: ((reply: RunReply) => void) | undefined;
  #reading: Promise<void>;

  constructor(child: Deno.ChildProcess) {
    this.#child = child;
    this.#writer = child.stdin.getWriter();
    this.#writer.closed.catch(() => {}); // a killed process closes its stdin
    this.#reading = this.#read();
    this.status = child.status.then((s) => {
      this.alive = false;
      return s;
    });
  }

  /** False once the process has ended. */
  alive = true;

  async #read(): Promise<void> {
    try {
      for await (const line of lines(this.#child.stdout)) {
        let reply: RunReply | undefined;
        try {
          reply = JSON.parse(line);
        } catch {
          console.error(line); // not a reply: stray output, keep it visible
        }
        if (reply && this.#waiting) {
          const resolve = this.#waiting;
          this.#waiting = undefined;
          resolve(reply);
        }
      }
    } catch {
      // the process was killed
    }
  }

  /** Ask for one attempt; resolves with the reply (never, if the process dies first). */
  next(job: string, attempt: number): Promise<RunReply> {
    const reply = new Promise<RunReply>((resolve) => (this.#waiting = resolve));
    this.#writer.write(new TextEncoder().encode(JSON.stringify({ job, attempt }) + "\n"))
      .catch(() => {});
    return reply;
  }

  kill(): void {
    try {
      this.#child.kill("SIGKILL");
    } catch {
      // already gone
    }
  }

  /** Let the process finish: close its stdin and wait for it. */
  async close(): Promise<void> {
    await this.#writer.close().catch(() => {});
    await this.status;
    await this.#reading;
  }
}

/**
 * A worker: claims jobs from the store one at a time and runs each attempt in
 * its job process (`run_job.ts`), a child it can SIGKILL, so a runaway
 * optimization never blocks the worker or the service. The job process is
 * reused from job to job (start-up and warm-up paid once) and replaced after a
 * kill, a crash or `jobsPerProcess` jobs. While the child runs, the worker
 * renews the lease, kills the child at the job's time limit (job failed,
 * `time_limit`) or when a cancel is not honoured within the grace period (job
 * cancelled), and hands the attempt to the store's retry rule if the child
 * dies without writing an outcome (run again until `max_attempts`, then failed).
 * A database locked by another process never stops the worker: it waits and
 * tries again.
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
  #runner: JobProcess | undefined;
  #runnerJobs = 0;

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
    let busySince: number | undefined;
    unlessBusy(() => this.#store.heartbeatWorker(id, Deno.pid), undefined);
    this.#log({ event: "worker_started", pid: Deno.pid });
    try {
      while (!this.#stopping) {
        if (this.options.shouldStop?.()) {
          this.#stopping = true;
          this.#stopRequestedAt = Date.now();
          break;
        }
        let claimed: ClaimedJob | undefined;
        try {
          if (Date.now() - lastBeat > leaseMs / 3) {
            this.#store.heartbeatWorker(id, Deno.pid);
            lastBeat = Date.now();
          }
          claimed = this.#store.claimJob(id, leaseMs);
          if (busySince !== undefined) {
            this.#log({ event: "store_available", waited_s: (Date.now() - busySince) / 1000 });
            busySince = undefined;
          }
        } catch (error) {
          if (!(error instanceof StoreBusyError)) throw error;
          // Another process holds the database's lock: wait and try again.
          if (busySince === undefined) {
            busySince = Date.now();
            this.#log({ event: "store_busy", message: error.message });
          }
        }
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
      const runner = this.#runner;
      this.#runner = undefined;
      await runner?.close();
      unlessBusy(() => this.#store.removeWorker(id), undefined);
      this.#log({ event: "worker_stopped" });
    }
  }

  async #supervise({ job, attempt }: ClaimedJob): Promise<void> {
    const { id: owner, leaseMs } = this.options;
    this.#log({ event: "job_started", job: job.id, kind: job.kind, attempt });
    if (this.#runner && !this.#runner.alive) this.#runner = undefined;
    const runner = this.#runner ??= this.#spawnRunner();
    const reply = runner.next(job.id, attempt);
    let answered: RunReply | undefined;
    let exited: Deno.CommandStatus | undefined;
    const settled = Promise.race([
      reply.then((r) => (answered = r)),
      runner.status.then((s) => (exited = s)),
    ]);
    const started = Date.now();
    let lastRenew = started;
    let cancelSeenAt: number | undefined;
    let verdict: "time_limit" | "cancelled" | "shutdown" | "lease_lost" | undefined;
    while (answered === undefined && exited === undefined) {
      await Promise.race([settled, sleep(this.options.supervisePollMs ?? 100)]);
      if (answered !== undefined || exited !== undefined) break;
      const now = Date.now();
      if (now - lastRenew > leaseMs / 3) {
        // A locked database skips this renewal (null); the next poll tries again.
        const held = unlessBusy(
          () => this.#store.renewLease(job.id, owner, attempt, leaseMs),
          null,
        );
        if (held === false) {
          // Someone else settled this attempt (e.g. the lease lapsed): stop it.
          verdict = "lease_lost";
          break;
        }
        if (held) {
          unlessBusy(() => this.#store.heartbeatWorker(owner, Deno.pid), undefined);
          lastRenew = now;
        }
      }
      if (now - started > job.time_limit_ms) {
        verdict = "time_limit";
        break;
      }
      if (
        cancelSeenAt === undefined &&
        unlessBusy(() => this.#store.isCancelRequested(job.id), false)
      ) cancelSeenAt = now;
      if (
        cancelSeenAt !== undefined &&
        now - cancelSeenAt > (this.options.cancelGraceMs ?? CANCEL_GRACE_MS)
      ) {
        verdict = "cancelled";
        break;
      }
      if (this.#stopping && now - this.#stopRequestedAt > (this.options.shutdownGraceMs ?? 2000)) {
        verdict = "shutdown";
        break;
      }
    }
    if (verdict !== undefined || exited !== undefined) {
      // The job process is stopped (or already gone); the next job gets a fresh one.
      this.#runner = undefined;
      runner.kill();
      exited = await runner.status;
    }
    const seconds = (job.time_limit_ms / 1000).toString();
    let settledByWorker: boolean | string = false;
    if (verdict === "time_limit") {
      settledByWorker = await this.#settle(() =>
        this.#store.finishJob(job.id, owner, attempt, {
          status: "failed",
          error: { code: "time_limit", message: `Stopped after its time limit of ${seconds} s` },
        })
      );
    } else if (verdict === "cancelled") {
      settledByWorker = await this.#settle(() =>
        this.#store.finishJob(job.id, owner, attempt, {
          status: "cancelled",
          error: { code: "cancelled", message: "cancelled by request (the job was stopped)" },
        })
      );
    } else if (verdict === "shutdown" || (answered === undefined && this.#stopping)) {
      // Stopping: whatever ended the job process, the job goes back to the queue.
      settledByWorker = await this.#settle(() => this.#store.releaseJob(job.id, owner, attempt));
    } else if (answered === undefined && exited !== undefined) {
      // The job process died on its own (SIGKILL from outside, out of memory, a
      // crash): the retry rule decides (run again, or failed after max_attempts).
      const status = exited;
      settledByWorker = await this.#settle(() =>
        this.#store.abandonAttempt(job.id, owner, attempt, {
          code: "job_crashed",
          message: `The job process ended unexpectedly (exit code ${status.code}${
            status.signal ? `, signal ${status.signal}` : ""
          })`,
        }) ?? false
      );
    }
    if (this.#runner !== undefined && ++this.#runnerJobs >= (this.options.jobsPerProcess ?? 100)) {
      this.#runner = undefined;
      await runner.close();
    }
    this.#log({
      event: "job_finished",
      job: job.id,
      attempt,
      verdict: verdict ?? (answered ? "answered" : "exited"),
      written_by_job_process: answered?.written ?? false,
      settled_by_worker: settledByWorker,
      exit_code: exited?.code,
      seconds: (Date.now() - started) / 1000,
    });
  }

  /**
   * A settling write, tried again while another process holds the database's
   * lock; given up once stopping and past the shutdown grace (the lease then
   * lapses and the retry rule settles the job).
   */
  async #settle<T>(write: () => T): Promise<T | false> {
    while (true) {
      try {
        return write();
      } catch (error) {
        if (!(error instanceof StoreBusyError)) throw error;
      }
      const grace = this.options.shutdownGraceMs ?? 2000;
      if (this.#stopping && Date.now() - this.#stopRequestedAt > grace) return false;
      await sleep(this.options.idlePollMs ?? 200);
    }
  }

  #spawnRunner(): JobProcess {
    this.#runnerJobs = 0;
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
        this.options.dbPath,
        "--owner",
        this.options.id,
        "--parent",
        String(Deno.pid),
      ],
      env,
      stdin: "piped",
      stdout: "piped",
      stderr: "inherit",
    }).spawn();
    this.#log({ event: "job_process_started", pid: child.pid });
    return new JobProcess(child);
  }
}
