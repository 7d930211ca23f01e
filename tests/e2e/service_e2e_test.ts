// End to end: the real service and worker processes on 127.0.0.1 with a
// temporary database file. Every spawned process is stopped in `finally`.
import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import { cliOptimize, Proc, startService, startWorker, waitForJob } from "./_processes.ts";
import { readEvents } from "../service/_app.ts";

// deno-lint-ignore no-explicit-any
type Json = any;

const QUICK = new URL("../testdata/quick_two_cavity.json", import.meta.url).pathname;
const SLOW = new URL("../../scenarios/family_four_housing.json", import.meta.url).pathname;
const quickScenario = JSON.parse(await Deno.readTextFileSync(QUICK));
const slowScenario = JSON.parse(await Deno.readTextFileSync(SLOW));
const MEDIUM = new URL("../../scenarios/two_gate_frame_and_knob.json", import.meta.url).pathname;
const mediumScenario = JSON.parse(await Deno.readTextFileSync(MEDIUM));

let reference: Promise<Json> | undefined;
/** The CLI's answer for the quick scenario, computed once. */
const cliReference = () => (reference ??= cliOptimize(QUICK));

/** The deterministic parts of an optimization result must equal the CLI's. */
function assertSameOptimization(actual: Json, expected: Json, what: string): void {
  assert.equal(actual.format, "evenfill.optimization/1");
  assert.equal(actual.status, expected.status, `${what}: status`);
  assert.equal(actual.reason, expected.reason, `${what}: reason`);
  assert.equal(actual.simulations, expected.simulations, `${what}: simulations`);
  assert.equal(actual.iterations.length, expected.iterations.length, `${what}: iterations`);
  assert.equal(actual.changes.length, expected.changes.length, `${what}: number of changes`);
  actual.changes.forEach((c: Json, k: number) => {
    const e = expected.changes[k];
    for (const key of ["element", "dimension", "cutter", "steel_safe", "step", "mold_half"]) {
      assert.equal(c[key], e[key], `${what}: changes[${k}].${key}`);
    }
    // Same code on the same input: equal up to float printing.
    assertClose(c.from_mm, e.from_mm, { rel: 1e-12, abs: 1e-12, what: `${what}: from_mm` });
    assertClose(c.to_mm, e.to_mm, { rel: 1e-12, abs: 1e-12, what: `${what}: to_mm` });
  });
  for (const side of ["before", "after"]) {
    for (
      const key of [
        "imbalance_percent",
        "feed_pressure_peak_MPa",
        "runner_volume_cm3",
        "fill_time_s",
      ]
    ) {
      assertClose(actual[side][key], expected[side][key], {
        rel: 1e-12,
        abs: 1e-12,
        what: `${what}: ${side}.${key}`,
      });
    }
  }
}

async function post(base: string, path: string, body: unknown): Promise<Response> {
  return await fetch(`${base}${path}`, {
    method: "POST",
    headers: { "content-type": "application/json" },
    body: JSON.stringify(body),
  });
}

async function submit(base: string, scenario: unknown, kind = "optimize"): Promise<string> {
  const res = await post(base, "/api/jobs", { kind, scenario });
  const body = await res.json();
  assert.equal(res.status, 202, JSON.stringify(body));
  return body.id;
}

async function tempDb(): Promise<{ dir: string; db: string }> {
  const dir = await Deno.makeTempDir({ prefix: "evenfill-e2e-" });
  return { dir, db: `${dir}/evenfill.db` };
}

Deno.test({
  name:
    "e2e: 50 jobs at once through two workers all complete once, each equal to the CLI's result",
  sanitizeResources: false,
  sanitizeOps: false,
  async fn() {
    const expected = await cliReference();
    const { dir, db } = await tempDb();
    const service = await startService(db, ["--workers", "2"]);
    try {
      const responses = await Promise.all(
        Array.from(
          { length: 50 },
          () => post(service.base, "/api/jobs", { kind: "optimize", scenario: quickScenario }),
        ),
      );
      const ids: string[] = [];
      for (const res of responses) {
        assert.equal(res.status, 202);
        ids.push((await res.json()).id);
      }
      assert.equal(new Set(ids).size, 50, "50 distinct ids");
      for (const id of ids) {
        const job = await waitForJob(service.base, id);
        assert.equal(job.status, "done", JSON.stringify(job.error));
        assert.equal(job.attempts, 1, `job ${id} ran once`);
        assert.equal(job.error, null);
        assertSameOptimization(job.result, expected, `job ${id}`);
        assert.ok(job.result.before.history, "the result carries the fill history");
      }
      const list = (await (await fetch(`${service.base}/api/jobs?limit=1000`)).json()).jobs;
      assert.equal(list.length, 50, "no job lost or added");
      assert.deepEqual(new Set(list.map((j: Json) => j.id)), new Set(ids));
      // Each job was started exactly once across both workers.
      const starts = service.proc.events().filter((e) => e.event === "job_started");
      assert.equal(starts.length, 50);
      assert.equal(new Set(starts.map((e) => e.job)).size, 50);
      assert.equal(new Set(starts.map((e) => e.worker)).size, 2, "both workers took jobs");
      const health = await (await fetch(`${service.base}/api/health`)).json();
      assert.deepEqual(health.queue, { queued: 0, running: 0 });
      assert.equal(health.workers.alive, 2);
    } finally {
      await service.proc.stop();
      await Deno.remove(dir, { recursive: true });
    }
  },
});

Deno.test({
  name:
    "e2e: kill -9 of a worker mid-job: the lease lapses, another worker re-runs it to the same result",
  sanitizeResources: false,
  sanitizeOps: false,
  async fn() {
    const expected = await cliReference();
    const { dir, db } = await tempDb();
    const service = await startService(db, ["--workers", "0", "--lease-ms", "1500"]);
    const workers: Proc[] = [];
    try {
      const first = await startWorker(db, ["--lease-ms", "1500"]);
      workers.push(first);
      const id = await submit(service.base, quickScenario);
      const running = await waitForJob(service.base, id, (j) => j.status !== "queued");
      assert.equal(running.status, "running");
      first.kill("SIGKILL");
      await first.status;
      const second = await startWorker(db, ["--lease-ms", "1500"]);
      workers.push(second);
      const job = await waitForJob(service.base, id);
      assert.equal(job.status, "done", JSON.stringify(job.error));
      assert.equal(job.attempts, 2, "run again after the lease lapsed");
      assertSameOptimization(job.result, expected, "re-run job");
      const secondStarts = second.events().filter((e) => e.event === "job_started");
      assert.deepEqual(secondStarts.map((e) => [e.job, e.attempt]), [[id, 2]]);
    } finally {
      for (const w of workers) await w.stop();
      await service.proc.stop();
      await Deno.remove(dir, { recursive: true });
    }
  },
});

Deno.test({
  name: "e2e: after a restart, saved scenarios, jobs and results are still there",
  sanitizeResources: false,
  sanitizeOps: false,
  async fn() {
    const { dir, db } = await tempDb();
    let service = await startService(db, ["--workers", "1"]);
    try {
      const saved = await (await post(service.base, "/api/scenarios", quickScenario)).json();
      const put = await fetch(`${service.base}/api/scenarios/${saved.id}`, {
        method: "PUT",
        headers: { "content-type": "application/json" },
        body: JSON.stringify({ ...quickScenario, name: "second revision" }),
      });
      assert.equal(put.status, 200);
      const id = await submit(service.base, quickScenario);
      const before = await waitForJob(service.base, id);
      assert.equal(before.status, "done");
      const status = await service.proc.stop();
      assert.equal(status.code, 0, "graceful exit on SIGTERM");
      assert.ok(service.proc.lines.some((l) => l.includes('"event":"stopped"')));

      service = await startService(db, ["--workers", "1"]);
      const scenario = await (await fetch(`${service.base}/api/scenarios/${saved.id}`)).json();
      assert.equal(scenario.revision, 2);
      assert.equal(scenario.name, "second revision");
      const rev1 = await (await fetch(`${service.base}/api/scenarios/${saved.id}/revisions/1`))
        .json();
      assert.deepEqual(rev1.scenario, quickScenario);
      const after = await (await fetch(`${service.base}/api/jobs/${id}`)).json();
      assert.deepEqual(after, before);
      // The restarted service answers a synchronous simulation (in its simulation workers).
      const simulated = await post(service.base, "/api/simulate", quickScenario);
      assert.equal(simulated.status, 200);
      assertClose(
        (await simulated.json()).imbalance_percent,
        after.result.before.imbalance_percent,
        { rel: 1e-12, abs: 1e-12, what: "simulate = the optimization's before run" },
      );
    } finally {
      await service.proc.stop();
      await Deno.remove(dir, { recursive: true });
    }
  },
});

Deno.test({
  name:
    "e2e: an endless job is killed at its time limit and failed with the reason; cancel kills one that ignores it",
  sanitizeResources: false,
  sanitizeOps: false,
  async fn() {
    const { dir, db } = await tempDb();
    const service = await startService(db, [
      "--workers",
      "2",
      "--job-time-limit-s",
      "2.5",
      // Under the time limit, so that the ignored cancel, not the limit, ends the second spin.
      "--cancel-grace-ms",
      "1000",
      "--enable-test-jobs",
    ]);
    try {
      const spin = await submit(service.base, quickScenario, "test_spin");
      const job = await waitForJob(service.base, spin);
      assert.equal(job.status, "failed");
      assert.equal(job.error.code, "time_limit");
      assert.match(job.error.message, /time limit of 2\.5 s/);
      const finished = service.proc.events().find((e) =>
        e.event === "job_finished" && e.job === spin
      );
      assert.equal(finished?.verdict, "time_limit");

      const spinAgain = await submit(service.base, quickScenario, "test_spin");
      await waitForJob(service.base, spinAgain, (j) => j.progress !== null);
      const cancel = await post(service.base, `/api/jobs/${spinAgain}/cancel`, {});
      assert.equal(cancel.status, 202);
      const cancelled = await waitForJob(service.base, spinAgain);
      assert.equal(cancelled.status, "cancelled");
      const health = await (await fetch(`${service.base}/api/health`)).json();
      assert.deepEqual(health.queue, { queued: 0, running: 0 });
    } finally {
      await service.proc.stop();
      await Deno.remove(dir, { recursive: true });
    }
  },
});

Deno.test({
  name: "e2e: cancel stops a running optimization, whose job process writes the best design so far",
  sanitizeResources: false,
  sanitizeOps: false,
  async fn() {
    const { dir, db } = await tempDb();
    const service = await startService(db, ["--workers", "1"]);
    try {
      const id = await submit(service.base, slowScenario);
      await waitForJob(service.base, id, (j) => j.progress !== null);
      const res = await post(service.base, `/api/jobs/${id}/cancel`, {});
      assert.equal(res.status, 202);
      const job = await waitForJob(service.base, id);
      assert.equal(job.status, "cancelled");
      assert.equal(job.error.code, "cancelled");
      // The optimizer stops within a simulation step and the job process writes its best
      // design before the worker's grace runs out: never a kill, never an empty result.
      assert.notEqual(job.result, null, "a cancelled optimization keeps its best design");
      assert.equal(job.result.status, "cancelled");
      assert.equal(job.result.format, "evenfill.optimization/1");
      assert.ok(Number.isFinite(job.result.after.imbalance_percent), "the best design's imbalance");
      assert.ok(job.result.iterations.length >= 1, "at least the iteration that was reported");
      const finished = service.proc.events().find((e) =>
        e.event === "job_finished" && e.job === id
      );
      assert.equal(finished?.written_by_job_process, true, JSON.stringify(finished));
    } finally {
      await service.proc.stop();
      await Deno.remove(dir, { recursive: true });
    }
  },
});

Deno.test({
  name: "e2e: an SSE client sees queued/running, progress in order, and the final state",
  sanitizeResources: false,
  sanitizeOps: false,
  async fn() {
    const { dir, db } = await tempDb();
    const service = await startService(db, ["--workers", "0"]);
    let worker: Proc | undefined;
    try {
      const id = await submit(service.base, quickScenario);
      const res = await fetch(`${service.base}/api/jobs/${id}/events`);
      assert.equal(res.status, 200);
      assert.match(res.headers.get("content-type") ?? "", /^text\/event-stream/);
      const reading = readEvents(res);
      worker = await startWorker(db);
      const events = await reading;
      const names = events.map(([e]) => e);
      assert.deepEqual(events[0], ["state", { status: "queued" }]);
      assert.deepEqual(events[1], ["state", { status: "running" }]);
      assert.deepEqual(events.at(-2), ["state", { status: "done" }]);
      assert.deepEqual(events.at(-1), ["end", { status: "done", error: null }]);
      assert.deepEqual(
        names.slice(2, -2).filter((n) => n !== "progress"),
        [],
        "only progress in between",
      );
      const iterations = events.filter(([e]) => e === "progress").map(([, d]) => d.iteration);
      assert.ok(iterations.length >= 1, "at least one progress event");
      for (let k = 1; k < iterations.length; k++) {
        assert.ok(iterations[k] > iterations[k - 1], "in order");
      }
      for (const [, d] of events.filter(([e]) => e === "progress")) {
        assert.equal(typeof d.imbalance_percent, "number");
        assert.equal(typeof d.feed_pressure_peak_MPa, "number");
      }
    } finally {
      await worker?.stop();
      await service.proc.stop();
      await Deno.remove(dir, { recursive: true });
    }
  },
});

Deno.test({
  name:
    "e2e: SIGTERM to a worker mid-job puts the job back in the queue; another worker completes it",
  sanitizeResources: false,
  sanitizeOps: false,
  async fn() {
    const { dir, db } = await tempDb();
    const service = await startService(db, ["--workers", "0"]);
    const workers: Proc[] = [];
    try {
      const first = await startWorker(db, ["--shutdown-grace-ms", "0"]);
      workers.push(first);
      const id = await submit(service.base, mediumScenario);
      await waitForJob(service.base, id, (j) => j.progress !== null);
      const status = await first.stop();
      assert.equal(status.code, 0);
      const requeued = await (await fetch(`${service.base}/api/jobs/${id}`)).json();
      assert.equal(requeued.status, "queued", "released, not lost");
      assert.equal(requeued.attempts, 0);
      const second = await startWorker(db);
      workers.push(second);
      const job = await waitForJob(service.base, id);
      assert.equal(job.status, "done", JSON.stringify(job.error));
      assert.equal(job.attempts, 1);
    } finally {
      for (const w of workers) await w.stop();
      await service.proc.stop();
      await Deno.remove(dir, { recursive: true });
    }
  },
});

Deno.test({
  name: "e2e: off loopback the service refuses to start without a token",
  sanitizeResources: false,
  sanitizeOps: false,
  async fn() {
    const { dir, db } = await tempDb();
    try {
      // 0.0.0.0 is never bound: the check refuses before listening.
      const proc = new Proc(new URL("../../src/service/main.ts", import.meta.url).pathname, [
        "--host",
        "0.0.0.0",
        "--port",
        "0",
        "--db",
        db,
      ], { EVENFILL_TOKEN: "" });
      const status = await proc.status;
      assert.equal(status.code, 1);
      assert.ok(proc.lines.some((l) => /EVENFILL_TOKEN/.test(l)), proc.lines.join("\n"));
    } finally {
      await Deno.remove(dir, { recursive: true });
    }
  },
});

Deno.test({
  name:
    "e2e: Ctrl-C (SIGINT to the worker and its job process) puts the running job back in the queue",
  sanitizeResources: false,
  sanitizeOps: false,
  async fn() {
    const { dir, db } = await tempDb();
    const service = await startService(db, ["--workers", "0"]);
    let worker: Proc | undefined;
    try {
      worker = await startWorker(db, ["--shutdown-grace-ms", "0"]);
      const id = await submit(service.base, mediumScenario);
      await waitForJob(service.base, id, (j) => j.progress !== null);
      // A terminal's Ctrl-C reaches every process of the group; send it to both.
      const ps = await new Deno.Command("ps", {
        args: ["-o", "pid=", "--ppid", String(worker.pid)],
        stdout: "piped",
      }).output();
      const children = new TextDecoder().decode(ps.stdout).trim().split(/\s+/).map(Number);
      assert.equal(children.length, 1, "one job process");
      Deno.kill(children[0], "SIGINT");
      worker.kill("SIGINT");
      const status = await worker.status;
      assert.equal(status.code, 0);
      const job = await (await fetch(`${service.base}/api/jobs/${id}`)).json();
      assert.equal(job.status, "queued", JSON.stringify(job.error));
      assert.equal(job.attempts, 0);
    } finally {
      await worker?.stop();
      await service.proc.stop();
      await Deno.remove(dir, { recursive: true });
    }
  },
});

Deno.test({
  name: "e2e: SIGTERM exits even with a client trickling its body and another stuck in its headers",
  sanitizeResources: false,
  sanitizeOps: false,
  async fn() {
    const { dir, db } = await tempDb();
    const service = await startService(db, [
      "--workers",
      "0",
      "--shutdown-deadline-ms",
      "1000",
      "--body-timeout-ms",
      "600000",
    ]);
    const conns: Deno.Conn[] = [];
    try {
      const encoder = new TextEncoder();
      const slowBody = await Deno.connect({ hostname: "127.0.0.1", port: service.port });
      conns.push(slowBody);
      await slowBody.write(encoder.encode(
        `POST /api/scenarios HTTP/1.1\r\nHost: 127.0.0.1:${service.port}\r\n` +
          "Content-Type: application/json\r\nContent-Length: 100000\r\n\r\n{",
      ));
      const slowHeaders = await Deno.connect({ hostname: "127.0.0.1", port: service.port });
      conns.push(slowHeaders);
      await slowHeaders.write(encoder.encode(`GET /api/health HTTP/1.1\r\nHost: 127.0.0.1`));
      // The server has the first request's headers once it answers another request.
      assert.equal((await fetch(`${service.base}/api/health`).then((r) => r.json())).status, "ok");
      service.proc.kill("SIGTERM");
      // A guard against hanging (the process used to wait for these clients forever).
      let timer: ReturnType<typeof setTimeout> | undefined;
      const stuck = new Promise<"stuck">((resolve) => {
        timer = setTimeout(() => resolve("stuck"), 30_000);
      });
      const status = await Promise.race([service.proc.status, stuck]);
      clearTimeout(timer);
      assert.notEqual(status, "stuck", service.proc.lines.join("\n"));
      assert.equal((status as Deno.CommandStatus).code, 0);
      assert.ok(service.proc.lines.some((l) => l.includes('"event":"stopped"')));
    } finally {
      for (const c of conns) {
        try {
          c.close();
        } catch {
          // already closed by the server
        }
      }
      await service.proc.stop();
      await Deno.remove(dir, { recursive: true });
    }
  },
});

Deno.test({
  name:
    "e2e: on 127.0.0.1 a rebound host name and a cross-site text/plain POST are refused; the page carries its CSP",
  sanitizeResources: false,
  sanitizeOps: false,
  async fn() {
    const { dir, db } = await tempDb();
    const service = await startService(db, ["--workers", "0"]);
    try {
      // fetch() will not send a forged Host header; a browser after DNS rebinding does.
      const conn = await Deno.connect({ hostname: "127.0.0.1", port: service.port });
      await conn.write(new TextEncoder().encode(
        "GET /api/scenarios HTTP/1.1\r\nHost: rebind.evil.example:8000\r\nConnection: close\r\n\r\n",
      ));
      const answer = new TextDecoder().decode(await new Response(conn.readable).arrayBuffer());
      assert.match(answer, /^HTTP\/1\.1 403/);
      assert.match(answer, /"forbidden_host"/);
      // What a web page's form or no-preflight fetch can send.
      const form = await fetch(`${service.base}/api/jobs`, {
        method: "POST",
        headers: { "content-type": "text/plain", origin: "http://evil.example" },
        body: JSON.stringify({ kind: "optimize", scenario: quickScenario }),
      });
      assert.equal(form.status, 403);
      await form.body?.cancel();
      const plain = await fetch(`${service.base}/api/jobs`, {
        method: "POST",
        headers: { "content-type": "text/plain" },
        body: JSON.stringify({ kind: "optimize", scenario: quickScenario }),
      });
      assert.equal(plain.status, 415);
      await plain.body?.cancel();
      const jobs = await (await fetch(`${service.base}/api/jobs`)).json();
      assert.deepEqual(jobs.jobs, [], "nothing queued");
      const page = await fetch(`${service.base}/`);
      assert.match(page.headers.get("content-security-policy") ?? "", /frame-ancestors 'none'/);
      await page.body?.cancel();
    } finally {
      await service.proc.stop();
      await Deno.remove(dir, { recursive: true });
    }
  },
});
