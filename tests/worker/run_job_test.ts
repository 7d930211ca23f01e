import assert from "node:assert/strict";
import { SqliteStore } from "../../src/store/sqlite_store.ts";
import { runJobAttempt } from "../../src/worker/run_job.ts";

const STEEL_SAFE_DEMO = new URL("../../scenarios/two_gate_frame_and_knob.json", import.meta.url);

Deno.test("job attempt: the submitted slope source reaches the optimizer and is reported in the result", async () => {
  const dir = await Deno.makeTempDir({ prefix: "evenfill-run-job-" });
  const store = SqliteStore.open(`${dir}/store.db`);
  try {
    const scenario = JSON.parse(await Deno.readTextFile(STEEL_SAFE_DEMO));
    const results: Record<string, { slopes: string; simulations: number; status: string }> = {};
    for (const slopes of ["tangent", "finite_difference"]) {
      const submitted = store.submitJob({
        id: `job-${slopes}`,
        kind: "optimize",
        name: scenario.name,
        // As a new tool, so that all seven sizes are optimized (an existing tool is changed
        // in as few sizes as it can be: fewest_changes.ts).
        input: { scenario, slopes, mode: "new_tool" },
        time_limit_ms: 120_000,
      }, { maxQueued: 10 });
      assert.ok(submitted);
      const claimed = store.claimJob("test-owner", 60_000);
      assert.ok(claimed);
      assert.equal(claimed.job.id, `job-${slopes}`);
      const written = await runJobAttempt(store, claimed.job, {
        owner: "test-owner",
        attempt: claimed.attempt,
      });
      assert.ok(written);
      const job = store.getJob(`job-${slopes}`);
      assert.equal(job?.status, "done", JSON.stringify(job?.error));
      results[slopes] = job!.result as { slopes: string; simulations: number; status: string };
    }
    assert.equal(results.tangent.slopes, "tangent");
    assert.equal(results.finite_difference.slopes, "finite_difference");
    // Seven adjustable sizes: finite differences spend at least one simulation per size.
    assert.ok(
      results.finite_difference.simulations >= results.tangent.simulations + 7,
      `${results.finite_difference.simulations} vs ${results.tangent.simulations}`,
    );
  } finally {
    store.close();
    await Deno.remove(dir, { recursive: true });
  }
});

Deno.test("job attempt: an exception thrown by the engine fails the job with its message instead of escaping", async () => {
  const dir = await Deno.makeTempDir({ prefix: "evenfill-run-job-" });
  const store = SqliteStore.open(`${dir}/store.db`);
  try {
    const scenario = JSON.parse(await Deno.readTextFile(STEEL_SAFE_DEMO));
    store.submitJob({
      id: "boom",
      kind: "optimize",
      name: scenario.name,
      input: { scenario },
      time_limit_ms: 120_000,
    }, { maxQueued: 10 });
    const claimed = store.claimJob("test-owner", 60_000)!;
    const logged: Record<string, unknown>[] = [];
    // The message the engine threw on a branch that froze off (before it became a short shot).
    const written = await runJobAttempt(store, claimed.job, {
      owner: "test-owner",
      attempt: claimed.attempt,
      optimize: () => {
        throw new RangeError("initialFlows has 15 values for 13 elements");
      },
      logError: (e) => logged.push(e),
    });
    assert.equal(written, true);
    const job = store.getJob("boom")!;
    assert.equal(job.status, "failed");
    assert.equal(job.error?.code, "optimization_failed");
    assert.match(job.error!.message, /initialFlows has 15 values for 13 elements/);
    assert.equal(logged.length, 1, "the stack is logged for developers");
    assert.match(String(logged[0].error), /RangeError/);
  } finally {
    store.close();
    await Deno.remove(dir, { recursive: true });
  }
});
