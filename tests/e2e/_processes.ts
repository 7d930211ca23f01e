// Real service and worker processes on 127.0.0.1 for the end-to-end tests.

import { lines } from "../../src/worker/lines.ts";

const ROOT = new URL("../../", import.meta.url);
const CONFIG = new URL("deno.json", ROOT).pathname;
const SERVICE = new URL("src/service/main.ts", ROOT).pathname;
const WORKER = new URL("src/worker/main.ts", ROOT).pathname;

/** A spawned Deno process whose output lines are collected. */
export class Proc {
  readonly child: Deno.ChildProcess;
  readonly lines: string[] = [];
  readonly status: Promise<Deno.CommandStatus>;
  #waiters: { test: (line: string) => boolean; resolve: (line: string) => void }[] = [];
  #reading: Promise<void>[];

  constructor(script: string, args: string[], env: Record<string, string> = {}) {
    this.child = new Deno.Command(Deno.execPath(), {
      args: ["run", "--quiet", "--config", CONFIG, "-A", script, ...args],
      env: { NO_COLOR: "1", ...env },
      stdin: "null",
      stdout: "piped",
      stderr: "piped",
    }).spawn();
    this.#reading = [this.#read(this.child.stdout), this.#read(this.child.stderr)];
    this.status = this.child.status.then(async (s) => {
      await Promise.all(this.#reading);
      return s;
    });
  }

  get pid(): number {
    return this.child.pid;
  }

  async #read(stream: ReadableStream<Uint8Array>): Promise<void> {
    for await (const line of lines(stream)) {
      this.lines.push(line);
      if (Deno.env.get("EVENFILL_E2E_VERBOSE")) console.error(`[${this.pid}] ${line}`);
      this.#waiters = this.#waiters.filter((w) => {
        if (!w.test(line)) return true;
        w.resolve(line);
        return false;
      });
    }
  }

  /** The first output line (past or future) that passes `test`. */
  waitForLine(test: (line: string) => boolean, what: string, timeoutMs = 60_000): Promise<string> {
    const seen = this.lines.find(test);
    if (seen !== undefined) return Promise.resolve(seen);
    return new Promise((resolve, reject) => {
      const timer = setTimeout(
        () => reject(new Error(`gave up waiting for ${what}; output:\n${this.lines.join("\n")}`)),
        timeoutMs,
      );
      this.#waiters.push({
        test,
        resolve: (line) => {
          clearTimeout(timer);
          resolve(line);
        },
      });
      this.status.then(() => {
        clearTimeout(timer);
        reject(new Error(`process exited while waiting for ${what}:\n${this.lines.join("\n")}`));
      });
    });
  }

  /** JSON log events (lines that parse as objects). */
  events(): Record<string, unknown>[] {
    const out: Record<string, unknown>[] = [];
    for (const line of this.lines) {
      if (!line.startsWith("{")) continue;
      try {
        out.push(JSON.parse(line));
      } catch {
        // not a log event
      }
    }
    return out;
  }

  kill(signal: Deno.Signal): void {
    try {
      this.child.kill(signal);
    } catch {
      // already gone
    }
  }

  /** SIGTERM, then SIGKILL if still running after `graceMs`. */
  async stop(graceMs = 15_000): Promise<Deno.CommandStatus> {
    this.kill("SIGTERM");
    const timer = setTimeout(() => this.kill("SIGKILL"), graceMs);
    const status = await this.status;
    clearTimeout(timer);
    return status;
  }
}

/** A running service and its base URL. */
export interface RunningService {
  proc: Proc;
  base: string;
  port: number;
}

/** Start `src/service/main.ts` on 127.0.0.1, port 0, on the given database file. */
export async function startService(
  db: string,
  args: string[] = [],
  env: Record<string, string> = {},
): Promise<RunningService> {
  const proc = new Proc(SERVICE, ["--host", "127.0.0.1", "--port", "0", "--db", db, ...args], env);
  const line = await proc.waitForLine(
    (l) => l.includes('"event":"listening"'),
    "the service to listen",
  );
  const { port, hostname } = JSON.parse(line);
  if (hostname !== "127.0.0.1") throw new Error(`service bound to ${hostname}`);
  return { proc, port, base: `http://127.0.0.1:${port}` };
}

/** Start a worker by hand (`src/worker/main.ts`) on the given database file. */
export async function startWorker(db: string, args: string[] = []): Promise<Proc> {
  const proc = new Proc(WORKER, ["--db", db, ...args]);
  await proc.waitForLine((l) => l.includes('"event":"worker_started"'), "the worker to start");
  return proc;
}

/** The CLI's `optimize --json` output for a scenario file. */
export async function cliOptimize(file: string): Promise<Record<string, unknown>> {
  const out = await new Deno.Command(Deno.execPath(), {
    args: [
      "run",
      "--quiet",
      "--config",
      CONFIG,
      "-A",
      new URL("src/cli.ts", ROOT).pathname,
      "optimize",
      file,
      "--json",
    ],
    stdout: "piped",
    stderr: "null",
    env: { NO_COLOR: "1" },
  }).output();
  if (out.code !== 0) throw new Error(`cli optimize exited ${out.code}`);
  return JSON.parse(new TextDecoder().decode(out.stdout));
}

const FINAL = new Set(["done", "failed", "cancelled"]);

/** Poll a job until it reaches a final state (guarded against hanging, not timed). */
export async function waitForJob(
  base: string,
  id: string,
  until: (job: Record<string, unknown>) => boolean = (job) => FINAL.has(String(job.status)),
  guardMs = 120_000,
  // deno-lint-ignore no-explicit-any
): Promise<Record<string, any>> {
  const start = Date.now();
  while (true) {
    const res = await fetch(`${base}/api/jobs/${id}`);
    const job = await res.json();
    if (until(job)) return job;
    if (Date.now() - start > guardMs) {
      throw new Error(`job ${id} stuck: ${JSON.stringify(job).slice(0, 500)}`);
    }
    await new Promise((r) => setTimeout(r, 100));
  }
}
