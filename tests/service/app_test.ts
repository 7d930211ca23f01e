// In-process tests of every route through the app's handler (no sockets).
import assert from "node:assert/strict";
import { MATERIALS } from "../../src/materials/library.ts";
import { createApp } from "../../src/service/app.ts";
import { SimulatePool } from "../../src/service/simulate_pool.ts";
import type { Store } from "../../src/store/store.ts";
import { DEMO_PATH, QUICK_PATH, readEvents, readJson, testApp } from "./_app.ts";

// deno-lint-ignore no-explicit-any
type Json = any;

const JSON_TYPE = { "content-type": "application/json" };

async function errorOf(res: Response, status: number, code: string): Promise<Json> {
  assert.equal(res.status, status, `expected ${status} ${code}, got ${res.status}`);
  const body = await res.json();
  assert.equal(body.error.code, code);
  assert.equal(typeof body.error.message, "string");
  assert.ok(!/\n\s+at /.test(JSON.stringify(body)), "no stack trace");
  return body;
}

Deno.test("GET /api/health reports status, version, queue and workers", async () => {
  const app = await testApp();
  try {
    const res = await app.request("/api/health");
    assert.equal(res.status, 200);
    assert.match(res.headers.get("content-type") ?? "", /application\/json/);
    const body = await res.json();
    assert.equal(body.status, "ok");
    assert.equal(typeof body.version, "string");
    assert.equal(typeof body.uptime_s, "number");
    assert.deepEqual(body.queue, { queued: 0, running: 0 });
    assert.deepEqual(body.workers, { alive: 0 });
    app.store.heartbeatWorker("w1", 1);
    const again = await (await app.request("/api/health")).json();
    assert.equal(again.workers.alive, 1);
  } finally {
    await app.close();
  }
});

Deno.test("GET /api/materials lists the library with ids, names and shear limits", async () => {
  const app = await testApp();
  try {
    const body = await (await app.request("/api/materials")).json();
    assert.equal(body.materials.length, MATERIALS.length);
    for (const m of body.materials) {
      assert.equal(typeof m.id, "string");
      assert.equal(typeof m.name, "string");
      assert.equal(typeof m.generic, "boolean");
      assert.equal(typeof m.source, "string");
      assert.equal(typeof m.max_shear_rate_1_s, "number");
    }
  } finally {
    await app.close();
  }
});

Deno.test("GET /api/demos lists scenarios/*.json; /api/demos/:id returns the file; unknown → 404", async () => {
  const app = await testApp();
  try {
    const body = await (await app.request("/api/demos")).json();
    const ids = body.demos.map((d: Json) => d.id);
    assert.ok(ids.includes("family_four_housing"));
    const four = body.demos.find((d: Json) => d.id === "family_four_housing");
    const file = await readJson(DEMO_PATH);
    assert.equal(four.name, file.name);
    assert.equal(four.cavities, (file.cavities as unknown[]).length);
    const demo = await (await app.request("/api/demos/family_four_housing")).json();
    assert.deepEqual(demo, file);
    await errorOf(await app.request("/api/demos/nope"), 404, "not_found");
    await errorOf(await app.request("/api/demos/..%2Fdeno"), 404, "not_found");
  } finally {
    await app.close();
  }
});

Deno.test("POST /api/validate: ok, or issues with JSON paths; not JSON → 400", async () => {
  const app = await testApp();
  try {
    const wire = await readJson(DEMO_PATH);
    const good = await app.send("POST", "/api/validate", wire);
    assert.equal(good.status, 200);
    assert.deepEqual(await good.json(), { ok: true });
    const bad = structuredClone(wire) as Json;
    bad.gates[0].thickness_mm = -1;
    const res = await app.send("POST", "/api/validate", bad);
    assert.equal(res.status, 200);
    const body = await res.json();
    assert.equal(body.ok, false);
    const issue = body.issues.find((i: Json) => i.at === "gates[0].thickness_mm");
    assert.ok(issue, JSON.stringify(body.issues));
    assert.deepEqual(issue.path, ["gates", 0, "thickness_mm"]);
    await errorOf(await app.send("POST", "/api/validate", "{not json"), 400, "invalid_json");
  } finally {
    await app.close();
  }
});

Deno.test("POST /api/simulate returns evenfill.result/1, with history on ?history=1", async () => {
  const app = await testApp();
  try {
    const wire = await readJson(DEMO_PATH);
    const res = await app.send("POST", "/api/simulate", wire);
    assert.equal(res.status, 200);
    const result = await res.json();
    assert.equal(result.format, "evenfill.result/1");
    assert.equal(result.cavities.length, (wire.cavities as unknown[]).length);
    assert.equal(result.history, undefined);
    const withHistory = await (await app.send("POST", "/api/simulate?history=1", wire)).json();
    assert.ok(withHistory.history, "history present when asked");
  } finally {
    await app.close();
  }
});

Deno.test("POST /api/simulate error statuses: 400 issues, 413 body and network size, 422 time limit", async () => {
  const app = await testApp({ maxBodyBytes: 64 * 1024, simulateMaxElements: 8 });
  try {
    const wire = await readJson(DEMO_PATH) as Json;
    const bad = structuredClone(wire);
    delete bad.machine;
    const body = await errorOf(
      await app.send("POST", "/api/simulate", bad),
      400,
      "invalid_scenario",
    );
    assert.ok(body.error.issues.some((i: Json) => i.at === "machine"));
    await errorOf(await app.send("POST", "/api/simulate", "[1,"), 400, "invalid_json");
    const huge = { ...wire, notes: "x".repeat(70 * 1024) };
    await errorOf(await app.send("POST", "/api/simulate", huge), 413, "payload_too_large");
    // Without a content-length header the limit still holds (streamed body).
    const stream = new Blob([JSON.stringify(huge)]).stream();
    const streamed = await app.request("/api/simulate", {
      method: "POST",
      body: stream,
      headers: JSON_TYPE,
    });
    await errorOf(streamed, 413, "payload_too_large");
    const elements = wire.runners.length + wire.gates.length + wire.cavities.length;
    assert.ok(elements > 8);
    await errorOf(await app.send("POST", "/api/simulate", wire), 413, "scenario_too_large");
  } finally {
    await app.close();
  }
  const slow = await testApp({ simulateLimitMs: 0.001 });
  try {
    const wire = await readJson(DEMO_PATH);
    await errorOf(await slow.send("POST", "/api/simulate", wire), 422, "simulation_time_limit");
  } finally {
    await slow.close();
  }
});

Deno.test("POST /api/simulate through the simulation pool (as the service runs it) gives the same answers", async () => {
  const app = await testApp({ simulateLimitMs: 10_000 });
  const pool = new SimulatePool(2);
  try {
    const handler = createApp({ store: app.store, config: app.config, simulatePool: pool });
    const post = (body: unknown, query = "") =>
      handler(
        new Request(`http://127.0.0.1/api/simulate${query}`, {
          method: "POST",
          body: JSON.stringify(body),
          headers: JSON_TYPE,
        }),
      );
    const wire = await readJson(DEMO_PATH) as Json;
    const [viaPool, inThread] = await Promise.all([
      post(wire).then((r) => r.json()),
      app.send("POST", "/api/simulate", wire).then((r) => r.json()),
    ]);
    assert.equal(viaPool.format, "evenfill.result/1");
    assert.deepEqual(viaPool, inThread, "same engine, same numbers");
    const withHistory = await (await post(wire, "?history=1")).json();
    assert.ok(withHistory.history);
    const bad = structuredClone(wire);
    bad.gates[0].land_mm = "long";
    const invalid = await errorOf(await post(bad), 400, "invalid_scenario");
    assert.ok(invalid.error.issues.some((i: Json) => i.at === "gates[0].land_mm"));
    // Several at once queue for the two workers and all come back.
    const many = await Promise.all(Array.from({ length: 5 }, () => post(wire)));
    for (const r of many) {
      assert.equal((await r.json()).imbalance_percent, inThread.imbalance_percent);
    }
  } finally {
    pool.close();
  }
  // With every worker busy and the waiting line full, the answer is 429 + Retry-After.
  const tiny = new SimulatePool(1, { maxWaiting: 1 });
  try {
    const handler = createApp({ store: app.store, config: app.config, simulatePool: tiny });
    const wire = await Deno.readTextFile(DEMO_PATH);
    const responses = await Promise.all(
      Array.from(
        { length: 4 },
        () =>
          handler(
            new Request("http://127.0.0.1/api/simulate", {
              method: "POST",
              body: wire,
              headers: JSON_TYPE,
            }),
          ),
      ),
    );
    const statuses = responses.map((r) => r.status).sort();
    assert.deepEqual(statuses, [200, 200, 429, 429]);
    const busy = responses.find((r) => r.status === 429)!;
    assert.equal(busy.headers.get("retry-after"), "1");
    for (const r of responses) await r.body?.cancel();
  } finally {
    tiny.close();
    await app.close();
  }
  const slow = await testApp({ simulateLimitMs: 0.001 });
  const slowPool = new SimulatePool(1);
  try {
    const handler = createApp({ store: slow.store, config: slow.config, simulatePool: slowPool });
    const res = await handler(
      new Request("http://127.0.0.1/api/simulate", {
        method: "POST",
        body: await Deno.readTextFile(DEMO_PATH),
        headers: JSON_TYPE,
      }),
    );
    await errorOf(res, 422, "simulation_time_limit");
  } finally {
    slowPool.close();
    await slow.close();
  }
});

Deno.test("POST /api/simulate: a domain failure is 422 simulation_failed", async () => {
  const app = await testApp();
  try {
    // The engine reports solver failures as values; the app maps them to 422.
    const handler = createApp({
      store: app.store,
      config: app.config,
      runScenario: () => ({ ok: false, code: "simulation_failed", message: "did not converge" }),
    });
    const wire = await readJson(QUICK_PATH);
    const res = await handler(
      new Request("http://127.0.0.1/api/simulate", {
        method: "POST",
        body: JSON.stringify(wire),
        headers: JSON_TYPE,
      }),
    );
    const body = await errorOf(res, 422, "simulation_failed");
    assert.equal(body.error.message, "did not converge");
  } finally {
    await app.close();
  }
});

Deno.test("saved scenarios: create, read, list, update with revisions, delete; errors 400/404", async () => {
  const app = await testApp();
  try {
    const wire = await readJson(QUICK_PATH) as Json;
    const created = await app.send("POST", "/api/scenarios", wire);
    assert.equal(created.status, 201);
    const head = await created.json();
    assert.equal(head.name, wire.name);
    assert.equal(head.revision, 1);
    assert.equal(typeof head.updated_at, "string");
    assert.equal(created.headers.get("location"), `/api/scenarios/${head.id}`);

    const list = await (await app.request("/api/scenarios")).json();
    assert.deepEqual(list.scenarios.map((s: Json) => s.id), [head.id]);

    const got = await (await app.request(`/api/scenarios/${head.id}`)).json();
    assert.equal(got.revision, 1);
    assert.deepEqual(got.scenario, wire);

    const second = { ...wire, name: "Renamed quick scenario" };
    const put = await app.send("PUT", `/api/scenarios/${head.id}`, second);
    assert.equal(put.status, 200);
    const putHead = await put.json();
    assert.equal(putHead.revision, 2);
    assert.equal(putHead.name, "Renamed quick scenario");

    const revisions = await (await app.request(`/api/scenarios/${head.id}/revisions`)).json();
    assert.deepEqual(revisions.revisions.map((r: Json) => [r.revision, r.name]), [
      [1, wire.name],
      [2, "Renamed quick scenario"],
    ]);
    const rev1 = await (await app.request(`/api/scenarios/${head.id}/revisions/1`)).json();
    assert.equal(rev1.revision, 1);
    assert.equal(rev1.id, head.id);
    assert.deepEqual(rev1.scenario, wire);
    await errorOf(await app.request(`/api/scenarios/${head.id}/revisions/3`), 404, "not_found");
    await errorOf(await app.request(`/api/scenarios/${head.id}/revisions/x`), 404, "not_found");

    const bad = structuredClone(wire);
    bad.cavities[0].volume_cm3 = "big";
    const rejected = await errorOf(
      await app.send("PUT", `/api/scenarios/${head.id}`, bad),
      400,
      "invalid_scenario",
    );
    assert.ok(rejected.error.issues.some((i: Json) => i.at === "cavities[0].volume_cm3"));
    await errorOf(await app.send("POST", "/api/scenarios", bad), 400, "invalid_scenario");
    await errorOf(await app.send("PUT", "/api/scenarios/unknown", wire), 404, "not_found");

    const del = await app.request(`/api/scenarios/${head.id}`, { method: "DELETE" });
    assert.equal(del.status, 204);
    await errorOf(await app.request(`/api/scenarios/${head.id}`), 404, "not_found");
    await errorOf(await app.request(`/api/scenarios/${head.id}/revisions`), 404, "not_found");
    await errorOf(
      await app.request(`/api/scenarios/${head.id}`, { method: "DELETE" }),
      404,
      "not_found",
    );
    await errorOf(await app.request("/api/scenarios/%E0%A4%A"), 404, "not_found");
  } finally {
    await app.close();
  }
});

Deno.test("jobs: submit → 202 with a nanoid, read, list; invalid → 400; unknown → 404", async () => {
  const app = await testApp();
  try {
    const wire = await readJson(QUICK_PATH);
    const res = await app.send("POST", "/api/jobs", {
      kind: "optimize",
      scenario: wire,
      mode: "trim",
    });
    assert.equal(res.status, 202);
    const accepted = await res.json();
    assert.match(accepted.id, /^[A-Za-z0-9_-]{21}$/);
    assert.equal(accepted.status, "queued");
    assert.equal(typeof accepted.created_at, "string");

    const job = await (await app.request(`/api/jobs/${accepted.id}`)).json();
    assert.equal(job.id, accepted.id);
    assert.equal(job.kind, "optimize");
    assert.equal(job.name, wire.name);
    assert.equal(job.status, "queued");
    assert.equal(job.mode, "trim");
    assert.equal(job.attempts, 0);
    for (const k of ["started_at", "finished_at", "progress", "result", "error"]) {
      assert.equal(job[k], null, k);
    }
    const list = await (await app.request("/api/jobs")).json();
    assert.deepEqual(list.jobs.map((j: Json) => j.id), [accepted.id]);
    assert.equal(list.jobs[0].result, undefined, "lists carry no results");
    const health = await (await app.request("/api/health")).json();
    assert.deepEqual(health.queue, { queued: 1, running: 0 });

    const bad = structuredClone(wire) as Json;
    bad.gates[0].width_mm = 0;
    const invalid = await errorOf(
      await app.send("POST", "/api/jobs", { kind: "optimize", scenario: bad }),
      400,
      "invalid_scenario",
    );
    assert.ok(invalid.error.issues.some((i: Json) => i.at === "gates[0].width_mm"));
    const wrongKind = await errorOf(
      await app.send("POST", "/api/jobs", { kind: "paint", scenario: wire }),
      400,
      "invalid_request",
    );
    assert.ok(wrongKind.error.issues.some((i: Json) => i.at === "kind"));
    await errorOf(
      await app.send("POST", "/api/jobs", { kind: "test_spin", scenario: wire }),
      400,
      "invalid_request",
    );
    await errorOf(
      await app.send("POST", "/api/jobs", {
        kind: "optimize",
        scenario: wire,
        scenario_id: "nope",
      }),
      404,
      "not_found",
    );
    // The slope source is the user's choice, echoed on the job; anything else is refused.
    const fd = await (await app.send("POST", "/api/jobs", {
      kind: "optimize",
      scenario: wire,
      slopes: "finite_difference",
    })).json();
    assert.equal(
      (await (await app.request(`/api/jobs/${fd.id}`)).json()).slopes,
      "finite_difference",
    );
    assert.equal(job.slopes, null, "not given: the optimizer's default");
    const badSlopes = await errorOf(
      await app.send("POST", "/api/jobs", { kind: "optimize", scenario: wire, slopes: "adjoint" }),
      400,
      "invalid_request",
    );
    assert.ok(badSlopes.error.issues.some((i: Json) => i.at === "slopes"));
    await errorOf(await app.request("/api/jobs/unknown"), 404, "not_found");
    await errorOf(await app.request("/api/jobs/unknown/events"), 404, "not_found");
    await errorOf(
      await app.request("/api/jobs/unknown/cancel", { method: "POST" }),
      404,
      "not_found",
    );
  } finally {
    await app.close();
  }
});

Deno.test("jobs: a full queue answers 429 with Retry-After", async () => {
  const app = await testApp({ queueLimit: 2 });
  try {
    const scenario = await readJson(QUICK_PATH);
    for (let i = 0; i < 2; i++) {
      assert.equal(
        (await app.send("POST", "/api/jobs", { kind: "optimize", scenario })).status,
        202,
      );
    }
    const res = await app.send("POST", "/api/jobs", { kind: "optimize", scenario });
    await errorOf(res, 429, "queue_full");
    assert.ok(Number(res.headers.get("retry-after")) > 0);
  } finally {
    await app.close();
  }
});

Deno.test("jobs: cancel of a queued job cancels it at once; of a running job flags it", async () => {
  const app = await testApp();
  try {
    const scenario = await readJson(QUICK_PATH);
    const a = await (await app.send("POST", "/api/jobs", { kind: "optimize", scenario })).json();
    const b = await (await app.send("POST", "/api/jobs", { kind: "optimize", scenario })).json();
    const claimed = app.store.claimJob("test-worker", 60_000);
    assert.equal(claimed?.job.id, a.id, "oldest first");
    const cancelRunning = await app.request(`/api/jobs/${a.id}/cancel`, { method: "POST" });
    assert.equal(cancelRunning.status, 202);
    assert.deepEqual(await cancelRunning.json(), {
      id: a.id,
      status: "running",
      cancel_requested: true,
    });
    assert.equal(app.store.isCancelRequested(a.id), true);
    const cancelQueued = await (await app.request(`/api/jobs/${b.id}/cancel`, { method: "POST" }))
      .json();
    assert.equal(cancelQueued.status, "cancelled");
    const job = await (await app.request(`/api/jobs/${b.id}`)).json();
    assert.equal(job.status, "cancelled");
    assert.equal(job.error.code, "cancelled");
  } finally {
    await app.close();
  }
});

Deno.test("job events: state, progress in order, and end, then the stream closes", async () => {
  const app = await testApp();
  try {
    const scenario = await readJson(QUICK_PATH);
    const { id } = await (await app.send("POST", "/api/jobs", { kind: "optimize", scenario }))
      .json();
    const res = await app.request(`/api/jobs/${id}/events`);
    assert.equal(res.status, 200);
    assert.match(res.headers.get("content-type") ?? "", /text\/event-stream/);
    const reading = readEvents(res);
    const tick = () => new Promise((r) => setTimeout(r, 60));
    await tick();
    const { attempt } = app.store.claimJob("w", 60_000)!;
    for (let i = 1; i <= 3; i++) {
      await tick();
      app.store.writeProgress(id, "w", attempt, {
        iteration: i,
        accepted: true,
        imbalance_percent: 10 / i,
        feed_pressure_peak_MPa: 20,
        runner_volume_cm3: 2,
        simulations: 3 * i,
      });
    }
    await tick();
    app.store.finishJob(id, "w", attempt, { status: "done", result: { format: "x" } });
    const events = await reading;
    assert.deepEqual(events[0], ["state", { status: "queued" }]);
    assert.deepEqual(events[1], ["state", { status: "running" }]);
    const iterations = events.filter(([e]) => e === "progress").map(([, d]) => d.iteration);
    assert.deepEqual(iterations, [1, 2, 3]);
    assert.deepEqual(events.at(-2), ["state", { status: "done" }]);
    assert.deepEqual(events.at(-1), ["end", { status: "done", error: null }]);

    const late = await readEvents(await app.request(`/api/jobs/${id}/events`));
    assert.deepEqual(late, [["state", { status: "done" }], ["end", {
      status: "done",
      error: null,
    }]]);
  } finally {
    await app.close();
  }
});

Deno.test("GET /api/openapi.json is an OpenAPI 3.1 document covering every route", async () => {
  const app = await testApp();
  try {
    const doc = await (await app.request("/api/openapi.json")).json();
    assert.equal(doc.openapi, "3.1.0");
    for (
      const path of [
        "/api/health",
        "/api/materials",
        "/api/demos",
        "/api/demos/{id}",
        "/api/scenarios",
        "/api/scenarios/{id}",
        "/api/scenarios/{id}/revisions",
        "/api/scenarios/{id}/revisions/{rev}",
        "/api/validate",
        "/api/simulate",
        "/api/jobs",
        "/api/jobs/{id}",
        "/api/jobs/{id}/cancel",
        "/api/jobs/{id}/events",
      ]
    ) assert.ok(doc.paths[path], path);
    const job = doc.components.schemas.Job;
    for (const field of ["id", "status", "progress", "result", "error", "attempts"]) {
      assert.ok(job.properties[field], field);
    }
    assert.ok(doc.components.schemas.Scenario.properties.gates, "scenario schema embedded");
  } finally {
    await app.close();
  }
});

Deno.test("static files: index for /, content types, 404, never outside public/", async () => {
  const app = await testApp();
  try {
    const index = await app.request("/");
    assert.equal(index.status, 200);
    assert.match(index.headers.get("content-type") ?? "", /^text\/html/);
    assert.match(await index.text(), /evenfill/);
    const js = await app.request("/app.js");
    assert.match(js.headers.get("content-type") ?? "", /^text\/javascript/);
    await js.body?.cancel();
    const css = await app.request("/css/site.css");
    assert.match(css.headers.get("content-type") ?? "", /^text\/css/);
    await css.body?.cancel();
    await errorOf(await app.request("/missing.html"), 404, "not_found");
    for (
      const path of [
        "/../secret.txt",
        "/%2e%2e/secret.txt",
        "/..%2fsecret.txt",
        "/css/..%2f..%2fsecret.txt",
        "/%00",
      ]
    ) {
      const res = await app.request(path);
      assert.equal(res.status, 404, path);
      assert.doesNotMatch(await res.text(), /outside public/, path);
    }
    await Deno.symlink(`${app.dir}/secret.txt`, `${app.config.publicDir}/link.txt`);
    await errorOf(await app.request("/link.txt"), 404, "not_found");
    await errorOf(await app.request("/index.html", { method: "POST" }), 405, "method_not_allowed");
  } finally {
    await app.close();
  }
});

Deno.test("unknown API route → 404; wrong method → 405 with Allow", async () => {
  const app = await testApp();
  try {
    await errorOf(await app.request("/api/nothing"), 404, "not_found");
    await errorOf(await app.request("/api"), 404, "not_found");
    const res = await app.request("/api/health", { method: "DELETE" });
    await errorOf(res, 405, "method_not_allowed");
    assert.equal(res.headers.get("allow"), "GET");
  } finally {
    await app.close();
  }
});

Deno.test("with a token configured, writes and reads of saved scenarios and jobs need it (401 without); health, materials, demos and the page do not", async () => {
  const app = await testApp({ token: "s3cret-token" });
  try {
    const auth = { authorization: "Bearer s3cret-token" };
    const scenario = await readJson(QUICK_PATH);
    await errorOf(await app.send("POST", "/api/scenarios", scenario), 401, "unauthorized");
    await errorOf(
      await app.send("POST", "/api/jobs", { kind: "optimize", scenario }, {
        authorization: "Bearer wrong",
      }),
      401,
      "unauthorized",
    );
    const ok = await app.send("POST", "/api/scenarios", scenario, auth);
    assert.equal(ok.status, 201);
    const { id } = await ok.json();
    const job = await (await app.send("POST", "/api/jobs", { kind: "optimize", scenario }, auth))
      .json();
    // Saved designs and jobs are the shop's data: reading them needs the token too.
    for (
      const path of [
        "/api/scenarios",
        `/api/scenarios/${id}`,
        `/api/scenarios/${id}/revisions`,
        `/api/scenarios/${id}/revisions/1`,
        "/api/jobs",
        `/api/jobs/${job.id}`,
        `/api/jobs/${job.id}/events`,
      ]
    ) {
      const res = await errorOf(await app.request(path), 401, "unauthorized");
      assert.ok(res, path);
      const allowed = await app.request(path, { headers: auth });
      assert.equal(allowed.status, 200, path);
      await allowed.body?.cancel();
    }
    for (const path of ["/api/health", "/api/materials", "/api/demos", "/api/openapi.json", "/"]) {
      const res = await app.request(path);
      assert.equal(res.status, 200, path);
      await res.body?.cancel();
    }
  } finally {
    await app.close();
  }
});

Deno.test("an unexpected error is a 500 with no stack trace and is logged", async () => {
  const app = await testApp();
  const logged: unknown[] = [];
  try {
    const broken = new Proxy(app.store, {
      get(target, key) {
        if (key === "listScenarios") {
          return () => {
            throw new Error("disk on fire");
          };
        }
        const value = Reflect.get(target, key);
        return typeof value === "function" ? value.bind(target) : value;
      },
    }) as Store;
    const handler = createApp({
      store: broken,
      config: app.config,
      logError: (_m, e) => logged.push(e),
    });
    const res = await handler(new Request("http://127.0.0.1/api/scenarios"));
    const body = await errorOf(res, 500, "internal_error");
    assert.doesNotMatch(JSON.stringify(body), /disk on fire/);
    assert.equal(logged.length, 1);
  } finally {
    await app.close();
  }
});

Deno.test("simulation pool: a worker that dies is replaced, and its slot answers the next request", async () => {
  const pool = new SimulatePool(1, {
    workerUrl: new URL("./_failing_worker.ts", import.meta.url).href,
  });
  const options = { history: false, limitMs: 1000, maxElements: 100 };
  try {
    await assert.rejects(pool.run("die", options), /simulation worker failed/);
    // The replacement must take the next request on the same slot; a stuck slot never answers.
    let timer: ReturnType<typeof setTimeout> | undefined;
    const stuck = new Promise<"stuck">((resolve) => {
      timer = setTimeout(() => resolve("stuck"), 10_000);
    });
    const next = await Promise.race([pool.run("next", options), stuck]);
    clearTimeout(timer);
    assert.deepEqual(next, { ok: true, result: "next" });
  } finally {
    pool.close();
  }
});

Deno.test("job events: service shutdown closes an open stream", async () => {
  const app = await testApp();
  const shutdown = new AbortController();
  try {
    const handler = createApp({
      store: app.store,
      config: app.config,
      eventPollMs: 20,
      shutdownSignal: shutdown.signal,
    });
    const scenario = await readJson(QUICK_PATH);
    const { id } = await (await app.send("POST", "/api/jobs", { kind: "optimize", scenario }))
      .json();
    const res = await handler(new Request(`http://127.0.0.1/api/jobs/${id}/events`));
    assert.equal(res.status, 200);
    const reading = readEvents(res);
    await new Promise((r) => setTimeout(r, 60));
    shutdown.abort();
    // The job is still queued: only the shutdown can end this stream.
    let timer: ReturnType<typeof setTimeout> | undefined;
    const open = new Promise<"open">((resolve) => {
      timer = setTimeout(() => resolve("open"), 5_000);
    });
    const events = await Promise.race([reading, open]);
    clearTimeout(timer);
    assert.notEqual(events, "open", "the stream stayed open after shutdown");
    assert.deepEqual((events as [string, Json][])[0], ["state", { status: "queued" }]);
  } finally {
    await app.close();
  }
});

Deno.test("validate, save and submit refuse what simulate refuses: an unreachable cavity, an impossible section", async () => {
  const app = await testApp();
  try {
    const wire = await readJson(DEMO_PATH);
    const narrow = structuredClone(wire) as Json;
    Object.assign(narrow.runners[0], { shape: "trapezoid", width_mm: 1, depth_mm: 5 });
    const cut = structuredClone(wire) as Json;
    // The last runner leads to the last gate's node: without it that cavity is unreachable.
    cut.runners = cut.runners.slice(0, -1);
    for (
      const [what, bad] of [["narrow trapezoid", narrow], ["unreachable cavity", cut]] as const
    ) {
      const simulated = await app.send("POST", "/api/simulate", bad);
      assert.equal(simulated.status, 400, `${what}: simulate refuses`);
      await simulated.body?.cancel();
      const res = await app.send("POST", "/api/validate", bad);
      const body = await res.json();
      assert.equal(body.ok, false, `${what}: validate must refuse it too`);
      assert.ok(body.issues.length > 0);
      await errorOf(await app.send("POST", "/api/scenarios", bad), 400, "invalid_scenario");
      await errorOf(
        await app.send("POST", "/api/jobs", { kind: "optimize", scenario: bad }),
        400,
        "invalid_scenario",
      );
    }
  } finally {
    await app.close();
  }
});
