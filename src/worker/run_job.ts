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
import type { JobError, JobOutcome, JobProgress, JobRecord, Store } from "../store/store.ts";

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

/** Options of {@link runJobAttempt}. */
export interface RunJobAttemptOptions {
  owner: string;
  attempt: number;
  /** True when the process that started this one is gone. */
  orphaned?: () => boolean;
  /** Whether the test-only job kinds may run (default: EVENFILL_ENABLE_TEST_JOBS=1). */
  enableTestJobs?: boolean;
}

class LeaseLost extends Error {}

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
    return store.finishJob(job.id, owner, attempt, outcome);
  };
  const fail = (code: string, message: string) =>
    finish({ status: "failed", error: { code, message } });

  if (job.kind === "test_spin") {
    if (!(options.enableTestJobs ?? Deno.env.get("EVENFILL_ENABLE_TEST_JOBS") === "1")) {
      return fail("test_jobs_disabled", "test_spin jobs only run when test jobs are enabled");
    }
    store.writeProgress(job.id, owner, attempt, {
      iteration: 0,
      accepted: false,
      imbalance_percent: 0,
      feed_pressure_peak_MPa: 0,
      runner_volume_cm3: 0,
      simulations: 0,
    });
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
  const result = await optimizeBalance(scenario, {
    slopes: input.slopes === "finite_difference" ? "finite_difference" : "tangent",
    onProgress: (i) => {
      const now = performance.now();
      if (now - lastWrite < PROGRESS_EVERY_MS) return;
      lastWrite = now;
      const progress: JobProgress = iterationJson(i);
      if (!store.writeProgress(job.id, owner, attempt, progress)) throw new LeaseLost();
    },
    cancelled: () => {
      if (orphaned()) throw new LeaseLost();
      return store.isCancelRequested(job.id);
    },
  });
  if (!result.ok) return fail(result.code, result.message);
  const json = optimizationJson(result.outcome, { history: true });
  if (result.outcome.status === "cancelled") {
    const error: JobError = { code: "cancelled", message: "cancelled by request" };
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
  const store = SqliteStore.open(db);
  const encoder = new TextEncoder();
  try {
    for await (const line of lines(Deno.stdin.readable)) {
      if (line.trim() === "") continue;
      const command = JSON.parse(line) as RunCommand;
      const { job: id, attempt } = command;
      let written = false;
      const job = store.getJob(id);
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
