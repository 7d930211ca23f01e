import type { ServiceConfig } from "./config.ts";

const WORKER_MAIN = new URL("../worker/main.ts", import.meta.url).pathname;
const CONFIG = new URL("../../deno.json", import.meta.url).pathname;

/**
 * The service's own worker processes (`src/worker/main.ts --exit-with-parent`)
 * on the service's database file. A worker that dies is started again after a
 * short pause; `stop()` sends SIGTERM (graceful: running jobs go back to the
 * queue) and SIGKILLs whatever is left after the grace period.
 */
export class WorkerPool {
  readonly config: ServiceConfig;
  #children = new Set<Deno.ChildProcess>();
  #stopping = false;
  #restarts = new Set<ReturnType<typeof setTimeout>>();

  constructor(config: ServiceConfig) {
    this.config = config;
  }

  /** Start `count` workers. */
  start(count: number): void {
    for (let i = 0; i < count; i++) this.#spawn();
  }

  #spawn(): void {
    if (this.#stopping) return;
    const c = this.config;
    const args = [
      "run",
      "--quiet",
      "--config",
      CONFIG,
      "--allow-read",
      "--allow-write",
      "--allow-env",
      "--allow-run",
      WORKER_MAIN,
      "--exit-with-parent",
      "--db",
      c.dbPath,
      "--lease-ms",
      String(c.leaseMs),
      "--shutdown-grace-ms",
      String(c.shutdownGraceMs),
      "--cancel-grace-ms",
      String(c.cancelGraceMs),
    ];
    if (c.enableTestJobs) args.push("--enable-test-jobs");
    const child = new Deno.Command(Deno.execPath(), {
      args,
      stdin: "null",
      stdout: "inherit",
      stderr: "inherit",
    }).spawn();
    this.#children.add(child);
    child.status.then((status) => {
      this.#children.delete(child);
      if (this.#stopping) return;
      console.error(
        JSON.stringify({
          event: "worker_exited",
          pid: child.pid,
          code: status.code,
          signal: status.signal,
        }),
      );
      const timer = setTimeout(() => {
        this.#restarts.delete(timer);
        this.#spawn();
      }, 1000);
      this.#restarts.add(timer);
    });
  }

  /** Stop every worker: SIGTERM, then SIGKILL after `graceMs` (default 5000). */
  async stop(graceMs = 5000): Promise<void> {
    this.#stopping = true;
    for (const t of this.#restarts) clearTimeout(t);
    this.#restarts.clear();
    const children = [...this.#children];
    for (const child of children) {
      try {
        child.kill("SIGTERM");
      } catch {
        // already gone
      }
    }
    const killer = setTimeout(() => {
      for (const child of children) {
        try {
          child.kill("SIGKILL");
        } catch {
          // already gone
        }
      }
    }, graceMs);
    await Promise.all(children.map((c) => c.status));
    clearTimeout(killer);
  }
}
