// The worker supervisor in-process, with real job processes (src/worker/run_job.ts).
import assert from "node:assert/strict";
import { DatabaseSync } from "node:sqlite";
import { SqliteStore } from "../../src/store/sqlite_store.ts";
import { JobWorker } from "../../src/worker/job_worker.ts";

const QUICK = new URL("../testdata/quick_two_cavity.json", import.meta.url);

/** Poll until `test` holds; a guard against hanging, not a timed assertion. */
async function until(test: () => boolean, what: string, guardMs = 60_000): Promise<void> {
  const start = Date.now();
  while (!test()) {
    if (Date.now() - start > guardMs) throw new Error(`gave up waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 20));
  }
}

async function withWorker(
  fn: (ctx: {
    store: SqliteStore;
    db: string;
    events: Record<string, unknown>[];
    worker: JobWorker;
  }) => Promise<void>,
): Promise<void> {
  const dir = await Deno.makeTempDir({ prefix: "evenfill-worker-" });
  const db = `${dir}/store.db`;
  const store = SqliteStore.open(db, { busyTimeoutMs: 20 });
  const events: Record<string, unknown>[] = [];
  const worker = new JobWorker(store, {
    id: "test-worker",
    dbPath: db,
    leaseMs: 60_000,
    idlePollMs: 20,
    supervisePollMs: 20,
    shutdownGraceMs: 0,
    enableTestJobs: true,
    log: (e) => events.push(e),
  });
  try {
    await fn({ store, db, events, worker });
  } finally {
    await worker.stop();
    store.close();
    await Deno.remove(dir, { recursive: true });
  }
}

Deno.test({
  name:
    "worker: a job process killed from outside (SIGKILL, out of memory) is retried up to max_attempts, then failed",
  sanitizeResources: false,
  sanitizeOps: false,
  async fn() {
    await withWorker(async ({ store, events, worker }) => {
      const scenario = JSON.parse(await Deno.readTextFile(QUICK));
      store.submitJob({
        id: "spin",
        kind: "test_spin",
        name: "spin",
        input: { scenario },
        time_limit_ms: 600_000,
      }, { maxQueued: 10 });
      const running = worker.run();
      for (let attempt = 1; attempt <= 3; attempt++) {
        // The test_spin job writes progress once it runs, then spins until killed.
        await until(
          () => {
            const job = store.getJob("spin")!;
            return job.attempts === attempt && job.status === "running" && job.progress !== null;
          },
          `attempt ${attempt} to run`,
        );
        const pids = events.filter((e) => e.event === "job_process_started").map((e) => e.pid);
        Deno.kill(Number(pids.at(-1)), "SIGKILL"); // as the kernel's OOM killer would
        await until(
          () => events.some((e) => e.event === "job_finished" && e.attempt === attempt),
          `attempt ${attempt} to end`,
        );
        const job = store.getJob("spin")!;
        if (attempt < 3) {
          assert.ok(
            job.status === "queued" || (job.status === "running" && job.attempts === attempt + 1),
            `attempt ${attempt} of 3 killed: run again, not ${job.status} ${
              JSON.stringify(job.error)
            }`,
          );
        }
      }
      const failed = store.getJob("spin")!;
      assert.equal(failed.status, "failed");
      assert.equal(failed.attempts, 3);
      assert.equal(failed.error?.code, "job_crashed");
      assert.match(failed.error!.message, /SIGKILL/);
      assert.match(failed.error!.message, /attempt 3 of 3/);
      await worker.stop();
      await running;
    });
  },
});

Deno.test({
  name:
    "worker: a database locked by another process does not kill the worker; it claims once the lock is gone",
  sanitizeResources: false,
  sanitizeOps: false,
  async fn() {
    await withWorker(async ({ store, db, events, worker }) => {
      const scenario = JSON.parse(await Deno.readTextFile(QUICK));
      store.submitJob({
        id: "quick",
        kind: "optimize",
        name: "quick",
        input: { scenario },
        time_limit_ms: 600_000,
      }, { maxQueued: 10 });
      const other = new DatabaseSync(db);
      other.exec("BEGIN EXCLUSIVE");
      let died: unknown;
      const running = worker.run().catch((e) => (died = e));
      try {
        await until(
          () => events.some((e) => e.event === "store_busy") || died !== undefined,
          "the worker to meet the lock",
        );
        assert.equal(died, undefined, `the worker died: ${died}`);
        assert.equal(store.getJob("quick")?.status, "queued");
      } finally {
        other.exec("ROLLBACK");
        other.close();
      }
      await until(
        () => events.some((e) => e.event === "job_started") || died !== undefined,
        "the job to start",
      );
      assert.equal(died, undefined, `the worker died: ${died}`);
      assert.ok(events.some((e) => e.event === "store_available"));
      await worker.stop();
      await running;
      assert.equal(died, undefined);
    });
  },
});
