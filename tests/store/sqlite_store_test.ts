import assert from "node:assert/strict";
import { DatabaseSync } from "node:sqlite";
import { MIGRATIONS, SqliteStore } from "../../src/store/sqlite_store.ts";
import { StoreBusyError } from "../../src/store/store.ts";

async function withStore(fn: (store: SqliteStore, dir: string) => Promise<void> | void) {
  const dir = await Deno.makeTempDir({ prefix: "evenfill-store-" });
  const store = SqliteStore.open(`${dir}/store.db`);
  try {
    await fn(store, dir);
  } finally {
    store.close();
    await Deno.remove(dir, { recursive: true });
  }
}

const job = (id: string, extra: Partial<{ max_attempts: number }> = {}) => ({
  id,
  kind: "optimize" as const,
  name: `job ${id}`,
  input: { scenario: { name: id } },
  time_limit_ms: 60_000,
  ...extra,
});

Deno.test("store: the file is in WAL mode, migrated to the latest version once", async () => {
  await withStore((store, dir) => {
    assert.equal(store.schemaVersion(), MIGRATIONS.length);
    const raw = new DatabaseSync(`${dir}/store.db`);
    assert.equal(
      (raw.prepare("PRAGMA journal_mode").get() as { journal_mode: string }).journal_mode,
      "wal",
    );
    const versions = raw.prepare("SELECT version FROM schema_migrations ORDER BY version").all()
      .map((r) => r.version);
    assert.deepEqual(versions, MIGRATIONS.map((_, i) => i + 1));
    raw.close();
    // Reopening applies nothing twice.
    const again = SqliteStore.open(`${dir}/store.db`);
    assert.equal(again.schemaVersion(), MIGRATIONS.length);
    again.close();
  });
});

Deno.test("store: a database from a newer program is refused", async () => {
  await withStore((_store, dir) => {
    const raw = new DatabaseSync(`${dir}/store.db`);
    raw.prepare("INSERT INTO schema_migrations (version, applied_at) VALUES (?, 'future')")
      .run(MIGRATIONS.length + 1);
    raw.close();
    assert.throws(() => SqliteStore.open(`${dir}/store.db`), /newer than this program/);
  });
});

Deno.test("store: scenarios keep every revision; delete removes the history", async () => {
  await withStore((store) => {
    const head = store.createScenario("s1", "first", { name: "first", v: 1 });
    assert.equal(head.revision, 1);
    const second = store.updateScenario("s1", "second", { name: "second", v: 2 });
    assert.equal(second?.revision, 2);
    assert.equal(store.updateScenario("nope", "x", {}), undefined);
    assert.deepEqual(store.getScenario("s1")?.scenario, { name: "second", v: 2 });
    assert.deepEqual(store.listRevisions("s1")?.map((r) => [r.revision, r.name]), [
      [1, "first"],
      [2, "second"],
    ]);
    assert.deepEqual(store.getRevision("s1", 1)?.scenario, { name: "first", v: 1 });
    assert.deepEqual(store.listScenarios().map((s) => [s.id, s.revision]), [["s1", 2]]);
    assert.equal(store.deleteScenario("s1"), true);
    assert.equal(store.deleteScenario("s1"), false);
    assert.equal(store.getRevision("s1", 1), undefined);
    assert.equal(store.listRevisions("s1"), undefined);
  });
});

Deno.test("store: submit respects the queue limit; claim takes the oldest and leases it", async () => {
  await withStore((store) => {
    assert.ok(store.submitJob(job("a"), { maxQueued: 2 }));
    assert.ok(store.submitJob(job("b"), { maxQueued: 2 }));
    assert.equal(store.submitJob(job("c"), { maxQueued: 2 }), false);
    assert.deepEqual(store.countJobs(), { queued: 2, running: 0 });
    const claimed = store.claimJob("w1", 10_000, 1_000);
    assert.equal(claimed?.job.id, "a");
    assert.equal(claimed?.attempt, 1);
    assert.equal(claimed?.job.lease_owner, "w1");
    assert.equal(claimed?.job.lease_expires_ms, 11_000);
    assert.deepEqual(store.countJobs(), { queued: 1, running: 1 });
    assert.deepEqual(store.listJobs().map((j) => j.id), ["b", "a"], "most recent first");
    const summary = store.getJobSummary("a")!;
    assert.equal(summary.status, "running");
    assert.equal("input" in summary || "result" in summary, false, "summary without bodies");
    assert.equal(store.getJobSummary("zzz"), undefined);
  });
});

Deno.test("store: a lapsed lease is re-claimed with the next attempt; the old owner can no longer write", async () => {
  await withStore((store) => {
    store.submitJob(job("a"), { maxQueued: 10 });
    const first = store.claimJob("w1", 1_000, 0)!;
    assert.equal(store.claimJob("w2", 1_000, 500), undefined, "lease still held");
    const second = store.claimJob("w2", 1_000, 1_500);
    assert.equal(second?.job.id, "a");
    assert.equal(second?.attempt, 2);
    const progress = {
      iteration: 1,
      accepted: true,
      imbalance_percent: 1,
      feed_pressure_peak_MPa: 2,
      runner_volume_cm3: 3,
      simulations: 4,
    };
    assert.equal(store.writeProgress("a", "w1", first.attempt, progress), false);
    assert.equal(store.finishJob("a", "w1", first.attempt, { status: "done", result: 1 }), false);
    assert.equal(store.writeProgress("a", "w2", 2, progress), true);
    assert.equal(store.getJob("a")?.progress_seq, 1);
    assert.equal(store.finishJob("a", "w2", 2, { status: "done", result: { ok: 1 } }), true);
    const done = store.getJob("a")!;
    assert.equal(done.status, "done");
    assert.deepEqual(done.result, { ok: 1 });
    assert.equal(done.lease_owner, null);
    assert.equal(
      store.finishJob("a", "w2", 2, { status: "failed", error: { code: "x", message: "y" } }),
      false,
    );
  });
});

Deno.test("store: a job whose workers keep dying fails after max_attempts with worker_lost", async () => {
  await withStore((store) => {
    store.submitJob(job("a", { max_attempts: 2 }), { maxQueued: 10 });
    store.claimJob("w1", 100, 0);
    store.claimJob("w2", 100, 200);
    assert.equal(store.claimJob("w3", 100, 400), undefined);
    const failed = store.getJob("a")!;
    assert.equal(failed.status, "failed");
    assert.equal(failed.error?.code, "worker_lost");
    assert.equal(failed.attempts, 2);
  });
});

Deno.test("store: release puts a job back as it was; cancel of queued/running/lapsed jobs", async () => {
  await withStore((store) => {
    store.submitJob(job("a"), { maxQueued: 10 });
    store.submitJob(job("b"), { maxQueued: 10 });
    const a = store.claimJob("w1", 1_000, 0)!;
    assert.equal(store.releaseJob("a", "w1", a.attempt), true);
    const released = store.getJob("a")!;
    assert.equal(released.status, "queued");
    assert.equal(released.attempts, 0);
    assert.equal(released.lease_owner, null);

    assert.equal(store.requestCancel("b")?.status, "cancelled");
    assert.equal(store.requestCancel("zzz"), undefined);
    const again = store.claimJob("w1", 1_000, 0)!;
    assert.equal(again.job.id, "a");
    assert.equal(store.requestCancel("a")?.status, "running");
    assert.equal(store.isCancelRequested("a"), true);
    // Its worker dies: the next claim settles it as cancelled instead of re-running it.
    assert.equal(store.claimJob("w2", 1_000, 5_000), undefined);
    assert.equal(store.getJob("a")?.status, "cancelled");
  });
});

Deno.test("store: workers register heartbeats and drop out when silent", async () => {
  await withStore((store) => {
    store.heartbeatWorker("w1", 11);
    store.heartbeatWorker("w2", 12);
    assert.deepEqual(store.aliveWorkers(60_000).map((w) => w.id).sort(), ["w1", "w2"]);
    store.removeWorker("w1");
    assert.deepEqual(store.aliveWorkers(60_000).map((w) => w.pid), [12]);
  });
});

Deno.test("store: four processes claiming from one file take every job exactly once", async () => {
  await withStore(async (store, dir) => {
    const n = 200;
    for (let i = 0; i < n; i++) store.submitJob(job(`j${i}`), { maxQueued: n });
    const script = new URL("./_claim_all.ts", import.meta.url).pathname;
    const outputs = await Promise.all(
      ["p1", "p2", "p3", "p4"].map((owner) =>
        new Deno.Command(Deno.execPath(), {
          args: ["run", "--quiet", "-A", script, `${dir}/store.db`, owner],
          stdout: "piped",
          stderr: "piped",
        }).output()
      ),
    );
    const all: string[] = [];
    for (const out of outputs) {
      assert.equal(out.code, 0, new TextDecoder().decode(out.stderr));
      all.push(...JSON.parse(new TextDecoder().decode(out.stdout)));
    }
    assert.equal(all.length, n, "no job claimed twice");
    assert.equal(new Set(all).size, n, "every job claimed");
    assert.deepEqual(store.countJobs(), { queued: 0, running: 0 });
    assert.ok(store.listJobs({ limit: n }).every((j) => j.status === "done" && j.attempts === 1));
  });
});

Deno.test("store: the retry rule is one rule — a crashed job process and a lapsed lease both retry up to max_attempts", async () => {
  await withStore((store) => {
    const crash = { code: "job_crashed", message: "The job process ended (signal SIGKILL)" };
    store.submitJob(job("a"), { maxQueued: 10 });
    // Attempt 1: the job process is killed; the job goes back to the queue.
    const first = store.claimJob("w1", 1_000, 0)!;
    assert.equal(store.abandonAttempt("a", "w1", first.attempt, crash), "queued");
    const queued = store.getJob("a")!;
    assert.equal(queued.status, "queued");
    assert.equal(queued.attempts, 1, "the attempt is used up");
    assert.equal(queued.error, null);
    assert.equal(queued.lease_owner, null);
    assert.equal(store.abandonAttempt("a", "w1", first.attempt, crash), undefined, "not held");
    // Attempt 2: the worker dies; its lapsed lease counts against the same limit.
    const second = store.claimJob("w2", 1_000, 10);
    assert.equal(second?.attempt, 2);
    const third = store.claimJob("w3", 1_000, 2_000);
    assert.equal(third?.attempt, 3);
    // Attempt 3 of 3: killed again; now the job fails with the crash's reason.
    assert.equal(store.abandonAttempt("a", "w3", 3, crash), "failed");
    const failed = store.getJob("a")!;
    assert.equal(failed.status, "failed");
    assert.equal(failed.attempts, 3);
    assert.equal(failed.error?.code, "job_crashed");
    assert.match(failed.error!.message, /SIGKILL.*attempt 3 of 3/);
    assert.equal(store.claimJob("w4", 1_000, 5_000), undefined);

    // A job whose cancel was requested is cancelled, not run again.
    store.submitJob(job("b"), { maxQueued: 10 });
    const b = store.claimJob("w1", 1_000, 0)!;
    store.requestCancel("b");
    assert.equal(store.abandonAttempt("b", "w1", b.attempt, crash), "cancelled");
    assert.equal(store.getJob("b")?.error?.code, "cancelled");
  });
});

Deno.test("store: a lock held by another connection gives StoreBusyError after the busy timeout; reads go on", async () => {
  for (const begin of ["BEGIN IMMEDIATE", "BEGIN EXCLUSIVE"]) {
    const dir = await Deno.makeTempDir({ prefix: "evenfill-store-" });
    const store = SqliteStore.open(`${dir}/store.db`, { busyTimeoutMs: 20 });
    const other = new DatabaseSync(`${dir}/store.db`);
    try {
      store.submitJob(job("a"), { maxQueued: 10 });
      other.exec(begin);
      assert.throws(
        () => store.createScenario("s1", "one", { name: "one" }),
        (e: unknown) => e instanceof StoreBusyError && /locked/.test(e.message),
        begin,
      );
      assert.throws(() => store.claimJob("w", 1_000), StoreBusyError, begin);
      assert.throws(() => store.heartbeatWorker("w", 1), StoreBusyError, begin);
      // WAL: readers are not blocked by a writer's lock.
      assert.equal(store.getJob("a")?.status, "queued", begin);
      assert.deepEqual(store.listScenarios(), [], "nothing was written");
      other.exec("ROLLBACK");
      assert.equal(store.createScenario("s1", "one", { name: "one" }).revision, 1);
      assert.equal(store.claimJob("w", 1_000)?.job.id, "a");
    } finally {
      other.close();
      store.close();
      await Deno.remove(dir, { recursive: true });
    }
  }
});
