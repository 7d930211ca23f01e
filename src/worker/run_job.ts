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
import { ModeSchema, SlopeSourceSchema } from "../wire/enums.ts";
import { LIBRARY_MATERIAL_IDS } from "../network/simulate_scenario.ts";
import { optimizeBalance } from "../optimize/balance.ts";
import { calibrate } from "../calibrate/calibrate.ts";
import type { Measurements } from "../model/measurements_schema.ts";
import type { ScenarioWire } from "../model/scenario_schema.ts";
import { calibrationJson } from "../report/calibration_json.ts";
import { iterationJson, optimizationJson } from "../report/optimization_report.ts";
import { windowJobJson } from "../report/window_json.ts";
import { DEFAULT_WINDOW_RANGE, processWindow } from "../window/process_window.ts";
import type { CalibrationFactorJson, StageProgress, WindowRangeJson } from "../wire/mod.ts";
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
  const mode = ModeSchema.safeParse(input.mode);
  if (mode.success) {
    scenario.goals.mode = mode.data;
  }
  const watch = watchStop(store, job, orphaned);
  const { controller, poll } = watch;
  if (job.kind === "calibrate" || job.kind === "window") {
    return await runStudy(store, job, parsed.scenario.measurements, {
      ...options,
      watch,
      finish,
      fail,
    });
  }
  let lastWrite = -Infinity;
  const deadline = Date.now() + Math.max(0, job.time_limit_ms - TIME_LIMIT_MARGIN_MS);
  let result;
  try {
    result = await (options.optimize ?? optimizeBalance)(scenario, {
      slopes: SlopeSourceSchema.safeParse(input.slopes).data ?? "tangent",
      signal: controller.signal,
      deadline,
      onProgress: (i) => {
        poll();
        const now = performance.now();
        if (now - lastWrite < PROGRESS_EVERY_MS) return;
        lastWrite = now;
        const progress: JobProgress = iterationJson(i);
        try {
          if (!store.writeProgress(job.id, owner, attempt, progress)) watch.loseLease();
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
    if (watch.leaseLost) throw new LeaseLost();
    return fail("optimization_failed", `The optimization stopped on an engine error: ${message}`);
  } finally {
    watch.stop();
  }
  if (watch.leaseLost) throw new LeaseLost();
  if (watch.pollError) throw watch.pollError;
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

/** A job's stop signal: aborted on cancel, a lost lease or a store failure (see {@link watchStop}). */
interface StopWatch {
  controller: AbortController;
  /** Look at the cancel flag and the supervisor now (the engine calls it on progress). */
  poll(): void;
  /** The lease is gone: abort, and never write an outcome. */
  loseLease(): void;
  /** Stop the background poll. */
  stop(): void;
  readonly leaseLost: boolean;
  readonly pollError: unknown;
}

/**
 * Cancel, a lost lease and the time limit end a job's engine run through its signal and
 * deadline: a 100 ms poll of the cancel flag and of the supervisor aborts the controller
 * (and so does each progress callback, for an engine that does not yield).
 */
function watchStop(store: Store, job: JobRecord, orphaned: () => boolean): StopWatch {
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
  return {
    controller,
    poll,
    loseLease: () => {
      leaseLost = true;
      controller.abort();
    },
    stop: () => clearInterval(poller),
    get leaseLost() {
      return leaseLost;
    },
    get pollError() {
      return pollError;
    },
  };
}

/** What {@link runStudy} needs from {@link runJobAttempt}. */
interface StudyContext extends RunJobAttemptOptions {
  watch: StopWatch;
  finish: (outcome: JobOutcome) => Promise<boolean>;
  fail: (code: string, message: string) => Promise<boolean>;
}

/** The window job's ranges in the sweep's terms, the defaults filled in. */
function windowRange(given: Partial<WindowRangeJson> | undefined): WindowRangeJson {
  return {
    melt_temperature_K: given?.melt_temperature_K ?? DEFAULT_WINDOW_RANGE.meltTemperatureK,
    mold_temperature_K: given?.mold_temperature_K ?? DEFAULT_WINDOW_RANGE.moldTemperatureK,
    injection_rate_percent: given?.injection_rate_percent ??
      100 * DEFAULT_WINDOW_RANGE.injectionRateShare,
    viscosity_percent: given?.viscosity_percent ?? 100 * DEFAULT_WINDOW_RANGE.viscosityShare,
  };
}

/**
 * A calibrate or window job: the fit to the scenario's weighed short shots, or the process-window
 * sweep of today's design (and of an `after_scenario`), each simulation in turn in this process.
 * Progress after every simulation (throttled), the stop signal polled at each.
 */
async function runStudy(
  store: Store,
  job: JobRecord,
  measurements: Measurements | undefined,
  context: StudyContext,
): Promise<boolean> {
  const { owner, attempt, watch, finish, fail } = context;
  const input = (job.input ?? {}) as {
    scenario: ScenarioWire;
    after_scenario?: ScenarioWire;
    factors?: CalibrationFactorJson[];
    window?: Partial<WindowRangeJson>;
  };
  const deadline = Date.now() + Math.max(0, job.time_limit_ms - TIME_LIMIT_MARGIN_MS);
  let lastWrite = -Infinity;
  const progress = (p: StageProgress) => {
    watch.poll();
    const now = performance.now();
    if (now - lastWrite < PROGRESS_EVERY_MS) return;
    lastWrite = now;
    try {
      if (!store.writeProgress(job.id, owner, attempt, p)) watch.loseLease();
    } catch (error) {
      if (!(error instanceof StoreBusyError)) throw error;
    }
  };
  const stopped = (reason: "cancelled" | "deadline", result?: unknown) => {
    if (reason === "cancelled") {
      return finish({
        status: "cancelled",
        error: { code: "cancelled", message: "cancelled by request" },
        ...(result ? { result } : {}),
      });
    }
    const seconds = (job.time_limit_ms / 1000).toString();
    return finish({
      status: "failed",
      error: { code: "time_limit", message: `Stopped at its time limit of ${seconds} s` },
      ...(result ? { result } : {}),
    });
  };
  const signal = watch.controller.signal;
  try {
    if (job.kind === "calibrate") {
      if (!measurements) {
        return await fail("invalid_measurements", "The scenario has no measurements block");
      }
      let simulations = 0;
      const fit = calibrate(input.scenario, measurements, {
        factors: input.factors ?? [{ kind: "viscosity" }],
        signal,
        deadline,
        onProgress: (p) => {
          simulations = p.simulations;
          progress({
            stage: "calibrate",
            simulations,
            iteration: p.iteration,
            done: null,
            total: null,
          });
        },
      });
      if (watch.leaseLost) throw new LeaseLost();
      if (watch.pollError) throw watch.pollError;
      if (!fit.ok) {
        if (fit.code === "stopped") return await stopped(fit.reason);
        if (fit.code === "invalid_measurements") {
          return await fail(
            fit.code,
            fit.issues.map((i) => `${i.at}: ${i.message}`).join("; "),
          );
        }
        return await fail(fit.code, fit.message);
      }
      return await finish({ status: "done", result: calibrationJson(fit) });
    }
    const range = windowRange(input.window);
    const designs: { design: "today" | "after"; scenario: ScenarioWire }[] = [
      { design: "today", scenario: input.scenario },
    ];
    if (input.after_scenario) designs.push({ design: "after", scenario: input.after_scenario });
    const total = 17 * designs.length;
    let simulations = 0;
    const reports = [];
    for (const d of designs) {
      const report = processWindow(d.scenario, {
        meltTemperatureK: range.melt_temperature_K,
        moldTemperatureK: range.mold_temperature_K,
        injectionRateShare: range.injection_rate_percent / 100,
        viscosityShare: range.viscosity_percent / 100,
      }, {
        signal,
        deadline,
        onProgress: () => {
          simulations++;
          progress({ stage: "window", simulations, iteration: null, done: simulations, total });
        },
      });
      reports.push({ design: d.design, name: d.scenario.name, report });
      if (report.stoppedBecause) break;
    }
    if (watch.leaseLost) throw new LeaseLost();
    if (watch.pollError) throw watch.pollError;
    const json = windowJobJson(reports, range);
    if (json.stopped_because) return await stopped(json.stopped_because, json);
    return await finish({ status: "done", result: json });
  } catch (error) {
    if (error instanceof LeaseLost) throw error;
    const message = error instanceof Error ? error.message : String(error);
    (context.logError ?? ((e) => console.error(JSON.stringify(e))))({
      event: "job_engine_error",
      job: job.id,
      attempt,
      error: error instanceof Error ? (error.stack ?? message) : message,
    });
    if (watch.leaseLost) throw new LeaseLost();
    const what = job.kind === "calibrate" ? "calibration" : "process-window sweep";
    return await fail(
      job.kind === "calibrate" ? "calibration_failed" : "window_failed",
      `The ${what} stopped on an engine error: ${message}`,
    );
  } finally {
    watch.stop();
  }
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
