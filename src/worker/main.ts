/**
 * `deno task worker`: a worker process against the store's database file. The
 * service starts its own (with `--exit-with-parent`); more can be started by
 * hand against the same file. SIGTERM / SIGINT stop it gracefully: a running
 * job gets a short grace, then goes back to the queue.
 *
 * Flags (and environment): --db (EVENFILL_DB), --lease-ms (EVENFILL_LEASE_MS),
 * --shutdown-grace-ms (EVENFILL_SHUTDOWN_GRACE_MS), --cancel-grace-ms
 * (EVENFILL_CANCEL_GRACE_MS), --enable-test-jobs
 * (EVENFILL_ENABLE_TEST_JOBS=1), --exit-with-parent.
 *
 * @module
 */
import { nanoid } from "nanoid";
import { ConfigError, loadConfig } from "../service/config.ts";
import { SqliteStore } from "../store/sqlite_store.ts";
import { JobWorker, WORKER_BUSY_TIMEOUT_MS } from "./job_worker.ts";

/** Run a worker until SIGTERM/SIGINT; returns the exit code. */
export async function main(args: readonly string[]): Promise<number> {
  const exitWithParent = args.includes("--exit-with-parent");
  let config;
  try {
    config = loadConfig(args.filter((a) => a !== "--exit-with-parent"));
  } catch (error) {
    if (error instanceof ConfigError) {
      console.error(`evenfill worker: ${error.message}`);
      return 1;
    }
    throw error;
  }
  const store = SqliteStore.open(config.dbPath, { busyTimeoutMs: WORKER_BUSY_TIMEOUT_MS });
  const parent = Deno.ppid;
  const worker = new JobWorker(store, {
    id: `worker-${Deno.pid}-${nanoid(6)}`,
    dbPath: config.dbPath,
    leaseMs: config.leaseMs,
    shutdownGraceMs: config.shutdownGraceMs,
    cancelGraceMs: config.cancelGraceMs,
    enableTestJobs: config.enableTestJobs,
    shouldStop: exitWithParent ? () => Deno.ppid !== parent : undefined,
  });
  const stop = () => void worker.stop();
  const signals: Deno.Signal[] = ["SIGTERM", "SIGINT"];
  for (const s of signals) Deno.addSignalListener(s, stop);
  try {
    await worker.run();
  } finally {
    for (const s of signals) Deno.removeSignalListener(s, stop);
    store.close();
  }
  return 0;
}

if (import.meta.main) Deno.exit(await main(Deno.args));
