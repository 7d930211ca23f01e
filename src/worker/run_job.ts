/**
 * The job process of a worker (see `job_worker.ts`): it reads one command per
 * line on stdin (`{"job", "attempt"}`), runs that attempt — read the job from
 * the store, run it, write throttled progress, poll the cancel flag, write the
 * outcome, all conditional on still holding the job's lease — and answers one
 * line on stdout (`{"job", "attempt", "written"}`). The process is reused for
 * the next job, so start-up and warm-up are paid once; the worker SIGKILLs it
 * on time limit or an ignored cancel and starts a fresh one. If the worker
 * itself dies, this process notices (its parent changes) and exits without
 * writing an outcome.
 *
 * Usage: run_job.ts --db <file> --owner <worker id> --parent <pid>
 *
 * @module
 */
import { parseScenario } from "../model/parse_scenario.ts";
import { LIBRARY_MATERIAL_IDS } from "../network/simulate_scenario.ts";
import { optimizeBalance } from "../optimize/balance.ts";
import { iterationJson, optimizationJson } from "../report/optimization_report.ts";
import { SqliteStore } from "../store/sqlite_store.ts";
import { lines } from "./lines.ts";
import {
  type JobError,
  type JobOutcome,
  type JobProgress,
  type JobRecord,
  type Store,
  StoreBusyError,
} from "../store/store.ts";

/** Exit codes of this process. */
export const RUN_JOB_EXIT = {
  /** Stdin closed: the worker let this process go. */
  finished: 0,
  /** Bad arguments. */
  usage: 64,
  /** The worker (its parent) died. */
  leaseLost: 75,
} as const;

/** Minimum time between two progress writes, ms. */
const PROGRESS_EVERY_MS = 100;

/** How often the job process looks at its cancel flag and its supervisor while optimizing, ms. */
const CANCEL_POLL_MS = 100;

/**
 * How long before the job's time limit the optimization stops on its own, ms: time to write
 * the best design so far before the worker kills the process at the limit.
 */
export const TIME_LIMIT_MARGIN_MS = 3000;

/** Pause between two tries of a store write that found the database locked, ms. */
const BUSY_RETRY_MS = 200;

/** How long the job process waits for another process's database lock per statement, ms. */
export const JOB_PROCESS_BUSY_TIMEOUT_MS = 1000;

const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

/** Options of {@link runJobAttempt}. */
export interface RunJobAttemptOptions {
  owner: string;
  attempt: number;
  /** True when the process that started this one is gone. */
  orphaned?: () => boolean;
  /** Whether the test-only job kinds may run (default: EVENFILL_ENABLE_TEST_JOBS=1). */
  enableTestJobs?: boolean;
  /** The optimizer (default {@link optimizeBalance}); a seam for tests. */
  optimize?: typeof optimizeBalance;
  /** Where an engine exception's stack is logged (default: one JSON line on stderr). */
  logError?: (event: Record<string, unknown>) => void;
}

class LeaseLost extends Error {}

/**
 * Run a store write until it is not refused for a lock held by another
 * process; a lock held for good ends when this process is orphaned (its
 * supervisor gone: the lease lapses and the retry rule takes over).
 */
async function untilNotBusy<T>(write: () => T, orphaned: () => boolean): Promise<T> {
  while (true) {
    try {
      return write();
    } catch (error) {
      if (!(error instanceof StoreBusyError)) throw error;
    }
    if (orphaned()) throw new LeaseLost();
    await sleep(BUSY_RETRY_MS);
  }
}

/** Run one attempt of a job already claimed by `owner`; returns whether the outcome was written. */
export async function runJobAttempt(
  store: Store,
  job: JobRecord,
  options: RunJobAttemptOptions,
): Promise<boolean> {
  const { owner, attempt } = options;
  const orphaned = options.orphaned ?? (() => false);
  // A job process whose supervisor died never writes an outcome: its lease is
  // about to lapse and the job will be run again from the start.
  const finish = (outcome: JobOutcome) => {
    if (orphaned()) throw new LeaseLost();
    return untilNotBusy(() => store.finishJob(job.id, owner, attempt, outcome), orphaned);
  };
  const fail = (code: string, message: string) =>
    finish({ status: "failed", error: { code, message } });

  if (job.kind === "test_spin") {
    if (!(options.enableTestJobs ?? Deno.env.get("EVENFILL_ENABLE_TEST_JOBS") === "1")) {
      return fail("test_jobs_disabled", "test_spin jobs only run when test jobs are enabled");
    }
    await untilNotBusy(() =>
      store.writeProgress(job.id, owner, attempt, {
        iteration: 0,
        accepted: false,
        imbalance_percent: 0,
        feed_pressure_peak_MPa: 0,
        runner_volume_cm3: 0,
        simulations: 0,
      }), orphaned);
    // Deliberately endless and deaf to cancel and time limit: only the
    // supervisor's SIGKILL stops it. It does stop when orphaned.
    for (let i = 0;; i++) {
      if (i % 1_000_000 === 0 && orphaned()) throw new LeaseLost();
    }
  }

  const input = (job.input ?? {}) as { scenario?: unknown; mode?: string; slopes?: string };
  const parsed = parseScenario(input.scenario, { materialIds: LIBRARY_MATERIAL_IDS });
  if (!parsed.ok) {
    return fail("invalid_scenario", parsed.issues.map((i) => `${i.at}: ${i.message}`).join("; "));
  }
  const scenario = parsed.scenario;
  if (input.mode === "new_tool" || input.mode === "trim" || input.mode === "steel_safe") {
    scenario.goals.mode = input.mode;
  }
  let lastWrite = -Infinity;
  // Cancel, a lost lease and the time limit end the optimization through its signal and
  // deadline: it returns its best design so far, which is written (except on a lost lease).
  const controller = new AbortController();
  let leaseLost = false;
  let pollError: unknown;
  const poll = () => {
    if (controller.signal.aborted) return;
    if (orphaned()) {
      leaseLost = true;
      controller.abort();
      return;
    }
    try {
      if (store.isCancelRequested(job.id)) controller.abort();
    } catch (error) {
      if (error instanceof StoreBusyError) return; // asked again at the next poll
      pollError = error;
      controller.abort();
    }
  };
  const poller = setInterval(poll, CANCEL_POLL_MS);
  const deadline = Date.now() + Math.max(0, job.time_limit_ms - TIME_LIMIT_MARGIN_MS);
  let result;
  try {
    result = await (options.optimize ?? optimizeBalance)(scenario, {
      slopes: input.slopes === "finite_difference" ? "finite_difference" : "tangent",
      signal: controller.signal,
      deadline,
      onProgress: (i) => {
        poll();
        const now = performance.now();
        if (now - lastWrite < PROGRESS_EVERY_MS) return;
        lastWrite = now;
        const progress: JobProgress = iterationJson(i);
        try {
          if (!store.writeProgress(job.id, owner, attempt, progress)) {
            leaseLost = true;
            controller.abort();
          }
        } catch (error) {
          // Progress is best effort: a locked database skips this write, not the job.
          if (!(error instanceof StoreBusyError)) throw error;
        }
      },
    });
  } catch (error) {
    // An exception from the engine (a bug, or a failure it did not turn into a
    // value): the job fails with its message; the stack goes to the log.
    const message = error instanceof Error ? error.message : String(error);
    (options.logError ?? ((e) => console.error(JSON.stringify(e))))({
      event: "job_engine_error",
      job: job.id,
      attempt,
      error: error instanceof Error ? (error.stack ?? message) : message,
    });
    if (leaseLost) throw new LeaseLost();
    return fail("optimization_failed", `The optimization stopped on an engine error: ${message}`);
  } finally {
    clearInterval(poller);
  }
  if (leaseLost) throw new LeaseLost();
  if (pollError) throw pollError;
  if (!result.ok) return fail(result.code, result.message);
  const json = optimizationJson(result.outcome, { history: true });
  if (result.outcome.status === "cancelled") {
    if (!controller.signal.aborted) {
      // Stopped by the deadline: the time limit, with the best design so far.
      const seconds = (job.time_limit_ms / 1000).toString();
      const message = `Stopped at its time limit of ${seconds} s; the best design so far is kept`;
      return finish({ status: "failed", error: { code: "time_limit", message }, result: json });
    }
    const error: JobError = {
      code: "cancelled",
      message: "cancelled by request; the best design so far is kept",
    };
    return finish({ status: "cancelled", result: json, error });
  }
  return finish({ status: "done", result: json });
}

function flag(args: readonly string[], name: string): string | undefined {
  const i = args.indexOf(`--${name}`);
  return i >= 0 ? args[i + 1] : undefined;
}

/** A command on the job process's stdin: run this attempt. */
export interface RunCommand {
  job: string;
  attempt: number;
}

/** The job process's answer on stdout, one line per command. */
export interface RunReply {
  job: string;
  attempt: number;
  /** Whether this process wrote the attempt's outcome (false: the lease was gone). */
  written: boolean;
}

async function main(args: readonly string[]): Promise<number> {
  const db = flag(args, "db");
  const owner = flag(args, "owner");
  // The supervisor's pid comes as an argument: reading Deno.ppid at start-up
  // would miss a supervisor that died while this process was starting.
  const parent = Number(flag(args, "parent"));
  if (!db || !owner || !Number.isInteger(parent)) {
    console.error("usage: run_job.ts --db <file> --owner <worker id> --parent <pid>");
    return RUN_JOB_EXIT.usage;
  }
  const orphaned = () => Deno.ppid !== parent;
  if (orphaned()) return RUN_JOB_EXIT.leaseLost;
  // Ctrl-C in a terminal signals the whole process group. The worker decides
  // when this process ends (stdin closed, or SIGKILL), so the job it is running
  // can be put back in the queue instead of dying half-way.
  for (const signal of ["SIGINT", "SIGTERM"] as const) Deno.addSignalListener(signal, () => {});
  const store = SqliteStore.open(db, { busyTimeoutMs: JOB_PROCESS_BUSY_TIMEOUT_MS });
  const encoder = new TextEncoder();
  try {
    for await (const line of lines(Deno.stdin.readable)) {
      if (line.trim() === "") continue;
      const command = JSON.parse(line) as RunCommand;
      const { job: id, attempt } = command;
      let written = false;
      const job = await untilNotBusy(() => store.getJob(id), orphaned).catch((error) => {
        if (error instanceof LeaseLost) return undefined;
        throw error;
      });
      if (
        job && job.status === "running" && job.lease_owner === owner && job.attempts === attempt
      ) {
        try {
          written = await runJobAttempt(store, job, { owner, attempt, orphaned });
        } catch (error) {
          if (!(error instanceof LeaseLost)) throw error;
        }
      }
      if (orphaned()) return RUN_JOB_EXIT.leaseLost;
      const reply: RunReply = { job: id, attempt, written };
      await Deno.stdout.write(encoder.encode(JSON.stringify(reply) + "\n"));
    }
    return RUN_JOB_EXIT.finished;
  } finally {
    store.close();
  }
}

if (import.meta.main) Deno.exit(await main(Deno.args));
