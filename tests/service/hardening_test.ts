// The service tried as an attacker (or an unlucky shop) would on loopback, in-process
// through the app's handler: engine exceptions, deep JSON, stuck simulation slots,
// trickled bodies, too many event streams, a locked database, cross-site requests.
import assert from "node:assert/strict";
import { DatabaseSync } from "node:sqlite";
import { createApp, jsonNestsDeeperThan, PAGE_CSP } from "../../src/service/app.ts";
import { SimulatePool } from "../../src/service/simulate_pool.ts";
import { QUICK_PATH, readJson, testApp } from "./_app.ts";

// deno-lint-ignore no-explicit-any
type Json = any;

const JSON_TYPE = { "content-type": "application/json" };
const FAILING_WORKER = new URL("./_failing_worker.ts", import.meta.url).href;
const THROWING_ENGINE_WORKER = new URL("./_throwing_engine_worker.ts", import.meta.url).href;

async function errorOf(res: Response, status: number, code: string): Promise<Json> {
  const body = await res.json();
  assert.equal(
    res.status,
    status,
    `expected ${status} ${code}, got ${res.status} ${body?.error?.code}`,
  );
  assert.equal(body.error.code, code);
  assert.equal(typeof body.error.message, "string");
  assert.ok(!/\n\s+at /.test(JSON.stringify(body)), "no stack trace");
  return body;
}

/** `promise`, or "stuck" if it has not settled after `guardMs` (a hang guard, not a timing assertion). */
async function orStuck<T>(promise: Promise<T>, guardMs = 10_000): Promise<T | "stuck"> {
  let timer: ReturnType<typeof setTimeout> | undefined;
  const stuck = new Promise<"stuck">((resolve) => {
    timer = setTimeout(() => resolve("stuck"), guardMs);
  });
  try {
    return await Promise.race([promise, stuck]);
  } finally {
    clearTimeout(timer);
  }
}

/** An object nested `depth` levels deep, and its JSON text. */
function nested(depth: number): { value: unknown; text: string } {
  const text = '{"a":'.repeat(depth - 1) + "{}" + "}".repeat(depth - 1);
  let value: Record<string, unknown> = {};
  for (let i = 1; i < depth; i++) value = { a: value };
  return { value, text };
}

// ---- 5: engine exceptions ----------------------------------------------------------

Deno.test("simulate: an exception thrown by the engine is 422 simulation_failed with its message, in the request's thread", async () => {
  const app = await testApp();
  const logged: unknown[] = [];
  try {
    const handler = createApp({
      store: app.store,
      config: app.config,
      logError: (_m, e) => logged.push(e),
      runScenario: () => {
        throw new RangeError("initialFlows has 15 values for 13 elements");
      },
    });
    const res = await handler(
      new Request("http://127.0.0.1/api/simulate", {
        method: "POST",
        body: await Deno.readTextFile(QUICK_PATH),
        headers: JSON_TYPE,
      }),
    );
    const body = await errorOf(res, 422, "simulation_failed");
    assert.match(body.error.message, /initialFlows has 15 values for 13 elements/);
    assert.equal(logged.length, 1, "the stack is logged");
    assert.match(String(logged[0]), /RangeError/);
  } finally {
    await app.close();
  }
});

Deno.test("simulate: an exception thrown by the engine in a simulation worker is 422 too, and the slot answers the next request", async () => {
  const app = await testApp();
  const pool = new SimulatePool(1, { workerUrl: THROWING_ENGINE_WORKER });
  try {
    const handler = createApp({
      store: app.store,
      config: app.config,
      simulatePool: pool,
      logError: () => {},
    });
    const wire = await Deno.readTextFile(QUICK_PATH);
    for (let i = 0; i < 2; i++) {
      const res = await orStuck(handler(
        new Request("http://127.0.0.1/api/simulate", {
          method: "POST",
          body: wire,
          headers: JSON_TYPE,
        }),
      ));
      assert.notEqual(res, "stuck");
      const body = await errorOf(res as Response, 422, "simulation_failed");
      assert.match(body.error.message, /initialFlows has 15 values/);
    }
  } finally {
    pool.close();
    await app.close();
  }
});

// ---- 8: deep JSON, stuck slots -----------------------------------------------------

Deno.test("JSON nesting depth: counted outside strings only", () => {
  assert.equal(jsonNestsDeeperThan(nested(64).text, 64), false);
  assert.equal(jsonNestsDeeperThan(nested(65).text, 64), true);
  assert.equal(jsonNestsDeeperThan(`{"a":"${"[".repeat(500)}"}`, 2), false, "brackets in a string");
  assert.equal(jsonNestsDeeperThan(`{"a":"\\"${"{".repeat(9)}"}`, 2), false, "escaped quote");
  assert.equal(jsonNestsDeeperThan("[[[1],[2]],[[3]]]", 3), false);
  assert.equal(jsonNestsDeeperThan("[[[[1]]]]", 3), true);
});

Deno.test("every endpoint that takes a body refuses JSON nested deeper than 64 levels with 400", async () => {
  const app = await testApp();
  try {
    const saved = await (await app.send("POST", "/api/scenarios", await readJson(QUICK_PATH)))
      .json();
    const deep = nested(4000).text; // ~24 KB; the attack used ~8 KB bodies of [[[[…
    const brackets = "[".repeat(4000) + "]".repeat(4000);
    for (
      const [method, path] of [
        ["POST", "/api/validate"],
        ["POST", "/api/simulate"],
        ["POST", "/api/scenarios"],
        ["PUT", `/api/scenarios/${saved.id}`],
        ["POST", "/api/jobs"],
      ]
    ) {
      for (const text of [deep, brackets]) {
        const body = await errorOf(await app.send(method, path, text), 400, "json_too_deep");
        assert.match(body.error.message, /64/, path);
      }
      // 64 levels are still read (and then judged by the schema, not refused as too deep).
      const ok = await app.send(method, path, nested(64).text);
      const answer = await ok.json();
      assert.notEqual(answer.error?.code, "json_too_deep", path);
    }
    assert.equal(app.store.listScenarios().length, 1, "nothing saved");
    assert.deepEqual(app.store.countJobs(), { queued: 0, running: 0 }, "nothing queued");
  } finally {
    await app.close();
  }
});

Deno.test("simulation pool: a body postMessage cannot copy frees its slot (was: taken forever)", async () => {
  const pool = new SimulatePool(1, { workerUrl: FAILING_WORKER });
  const options = { history: false, limitMs: 1000, maxElements: 100 };
  try {
    // Deep enough that the structured clone runs out of stack.
    const reply = await orStuck(pool.run(nested(200_000).value, options));
    assert.notEqual(reply, "stuck");
    assert.equal((reply as Json).ok, false);
    assert.equal((reply as Json).status, 400);
    const next = await orStuck(pool.run("next", options));
    assert.deepEqual(next, { ok: true, result: "next" });
    assert.deepEqual(pool.load(), { running: 0, waiting: 0 });
  } finally {
    pool.close();
  }
});

Deno.test("simulation pool: a queued request gives up with 503 when no worker comes free in time", async () => {
  const pool = new SimulatePool(1, {
    workerUrl: FAILING_WORKER,
    queueTimeoutMs: 100,
    overrunGraceMs: 60_000,
  });
  const options = { history: false, limitMs: 1000, maxElements: 100 };
  try {
    const hanging = pool.run("hang", options);
    const waiting = await orStuck(pool.run("queued", options));
    assert.notEqual(waiting, "stuck");
    assert.equal((waiting as Json).status, 503);
    assert.equal((waiting as Json).code, "simulate_busy");
    assert.deepEqual(pool.load(), { running: 1, waiting: 0 }, "the waiting line is empty again");
    pool.close();
    await assert.rejects(hanging, /closed/);
  } finally {
    pool.close();
  }
});

Deno.test("simulation pool: a worker that overruns its budget is replaced; the request gets 422 and the slot serves the next", async () => {
  const pool = new SimulatePool(1, { workerUrl: FAILING_WORKER, overrunGraceMs: 50 });
  const options = { history: false, limitMs: 50, maxElements: 100 };
  try {
    const reply = await orStuck(pool.run("hang", options));
    assert.notEqual(reply, "stuck");
    assert.equal((reply as Json).status, 422);
    assert.equal((reply as Json).code, "simulation_time_limit");
    assert.deepEqual(await orStuck(pool.run("next", options)), { ok: true, result: "next" });
  } finally {
    pool.close();
  }
});

Deno.test("simulate through the pool: deep bodies are refused and /api/simulate keeps answering", async () => {
  const app = await testApp();
  const pool = new SimulatePool(2);
  try {
    const handler = createApp({ store: app.store, config: app.config, simulatePool: pool });
    const post = (body: string) =>
      handler(
        new Request("http://127.0.0.1/api/simulate", {
          method: "POST",
          body,
          headers: JSON_TYPE,
        }),
      );
    const deep = "[".repeat(4000) + "]".repeat(4000);
    for (let i = 0; i < 3; i++) await errorOf(await post(deep), 400, "json_too_deep");
    const res = await orStuck(post(await Deno.readTextFile(QUICK_PATH)), 30_000);
    assert.notEqual(res, "stuck");
    assert.equal((res as Response).status, 200);
    assert.equal((await (res as Response).json()).format, "evenfill.result/1");
  } finally {
    pool.close();
    await app.close();
  }
});

// ---- 9: slow bodies, event stream cap, shutdown ------------------------------------

/** A body that sends `head` and then nothing, never ending (a client trickling its body). */
function trickle(head: string): ReadableStream<Uint8Array> {
  let sent = false;
  return new ReadableStream<Uint8Array>({
    pull(controller) {
      if (!sent) {
        sent = true;
        controller.enqueue(new TextEncoder().encode(head));
        return;
      }
      return new Promise<void>(() => {}); // never more
    },
  });
}

Deno.test("a body that does not arrive in time is 408 request_timeout, not a handler held forever", async () => {
  const app = await testApp({ bodyTimeoutMs: 100 });
  try {
    for (const path of ["/api/scenarios", "/api/simulate", "/api/jobs", "/api/validate"]) {
      const res = await orStuck(app.request(path, {
        method: "POST",
        body: trickle('{"name": "slow'),
        headers: JSON_TYPE,
      }));
      assert.notEqual(res, "stuck", path);
      await errorOf(res as Response, 408, "request_timeout");
    }
    assert.equal(app.store.listScenarios().length, 0);
  } finally {
    await app.close();
  }
});

Deno.test("shutdown ends a request whose body is still arriving with 503", async () => {
  const app = await testApp();
  const shutdown = new AbortController();
  try {
    const handler = createApp({
      store: app.store,
      config: app.config,
      shutdownSignal: shutdown.signal,
    });
    const pending = handler(
      new Request("http://127.0.0.1/api/scenarios", {
        method: "POST",
        body: trickle("{"),
        headers: JSON_TYPE,
      }),
    );
    await new Promise((r) => setTimeout(r, 20));
    shutdown.abort();
    const res = await orStuck(pending);
    assert.notEqual(res, "stuck");
    await errorOf(res as Response, 503, "shutting_down");
  } finally {
    await app.close();
  }
});

Deno.test("event streams beyond the cap get 503 with Retry-After; a closed one frees its place", async () => {
  const app = await testApp({ maxEventStreams: 2 });
  try {
    const scenario = await readJson(QUICK_PATH);
    const { id } = await (await app.send("POST", "/api/jobs", { kind: "optimize", scenario }))
      .json();
    const first = await app.request(`/api/jobs/${id}/events`);
    const second = await app.request(`/api/jobs/${id}/events`);
    assert.equal(first.status, 200);
    assert.equal(second.status, 200);
    const third = await app.request(`/api/jobs/${id}/events`);
    await errorOf(third, 503, "too_many_streams");
    assert.ok(Number(third.headers.get("retry-after")) > 0);
    await first.body!.cancel();
    const again = await app.request(`/api/jobs/${id}/events`);
    assert.equal(again.status, 200, "the cancelled stream's place is free");
    // A stream that ends on its own (the job finished) frees its place too.
    const { attempt } = app.store.claimJob("w", 60_000)!;
    app.store.finishJob(id, "w", attempt, { status: "done", result: {} });
    await second.text();
    await again.text();
    for (let i = 0; i < 2; i++) {
      const late = await app.request(`/api/jobs/${id}/events`);
      assert.equal(late.status, 200);
      await late.text();
    }
  } finally {
    await app.close();
  }
});

// ---- 10: a database locked by another process ---------------------------------------

for (const begin of ["BEGIN IMMEDIATE", "BEGIN EXCLUSIVE"]) {
  Deno.test(`a database lock held by another connection (${begin}) gives 503 store_busy with Retry-After; reads go on; nothing is lost`, async () => {
    const app = await testApp();
    const other = new DatabaseSync(app.config.dbPath);
    try {
      const scenario = await readJson(QUICK_PATH);
      other.exec(begin);
      const saved = await app.send("POST", "/api/scenarios", scenario);
      const busy = await errorOf(saved, 503, "store_busy");
      assert.match(busy.error.message, /try again/);
      assert.ok(Number(saved.headers.get("retry-after")) > 0);
      await errorOf(
        await app.send("POST", "/api/jobs", { kind: "optimize", scenario }),
        503,
        "store_busy",
      );
      // The event loop is free meanwhile: reads (WAL) are answered.
      const health = await app.request("/api/health");
      assert.equal(health.status, 200);
      await health.body?.cancel();
      assert.equal((await app.request("/api/scenarios")).status, 200);
      other.exec("ROLLBACK");
      assert.equal((await app.send("POST", "/api/scenarios", scenario)).status, 201);
      assert.equal(app.store.listScenarios().length, 1, "exactly the retried one");
    } finally {
      other.close();
      await app.close();
    }
  });
}

// ---- 11: cross-site requests and DNS rebinding --------------------------------------

Deno.test("bodies must be declared application/json: text/plain or none is 415 and nothing is saved", async () => {
  const app = await testApp();
  try {
    const text = await Deno.readTextFile(QUICK_PATH);
    for (
      const type of [
        "text/plain",
        "text/plain;charset=UTF-8",
        "application/x-www-form-urlencoded",
        "multipart/form-data; boundary=x",
        undefined,
      ]
    ) {
      for (const path of ["/api/scenarios", "/api/jobs", "/api/simulate", "/api/validate"]) {
        const res = await app.request(path, {
          method: "POST",
          body: new TextEncoder().encode(text),
          headers: type === undefined ? {} : { "content-type": type },
        });
        await errorOf(res, 415, "unsupported_media_type");
      }
    }
    assert.equal(app.store.listScenarios().length, 0);
    assert.deepEqual(app.store.countJobs(), { queued: 0, running: 0 });
    const ok = await app.request("/api/scenarios", {
      method: "POST",
      body: text,
      headers: { "content-type": "application/json; charset=utf-8" },
    });
    assert.equal(ok.status, 201);
  } finally {
    await app.close();
  }
});

Deno.test("writes from another origin are 403; the page's own origin and clients without Origin are served", async () => {
  const app = await testApp();
  try {
    const scenario = await readJson(QUICK_PATH);
    for (
      const origin of [
        "http://evil.example",
        "http://127.0.0.1:9999",
        "null",
        "https://127.0.0.1.evil.example",
      ]
    ) {
      await errorOf(
        await app.send("POST", "/api/scenarios", scenario, { origin }),
        403,
        "forbidden_origin",
      );
    }
    const { id } = await (await app.send("POST", "/api/jobs", { kind: "optimize", scenario }))
      .json();
    await errorOf(
      await app.request(`/api/jobs/${id}/cancel`, {
        method: "POST",
        headers: { origin: "http://evil.example" },
      }),
      403,
      "forbidden_origin",
    );
    assert.equal(app.store.getJob(id)?.status, "queued", "not cancelled");
    await errorOf(
      await app.request(`/api/scenarios/x`, { method: "DELETE", headers: { origin: "null" } }),
      403,
      "forbidden_origin",
    );
    assert.equal(app.store.listScenarios().length, 0);
    const own = await app.send("POST", "/api/scenarios", scenario, { origin: "http://127.0.0.1" });
    assert.equal(own.status, 201);
    const curl = await app.send("POST", "/api/scenarios", scenario);
    assert.equal(curl.status, 201);
  } finally {
    await app.close();
  }
});

Deno.test("bound to loopback, a request for another host name (DNS rebinding) is 403 on every path", async () => {
  const app = await testApp({ allowedHosts: ["moldshop.lan"] });
  try {
    const scenario = await readJson(QUICK_PATH);
    await app.send("POST", "/api/scenarios", scenario);
    // The URL's host is what the server saw in the Host header (or the absolute request target).
    for (const path of ["/api/scenarios", "/api/jobs", "/api/health", "/", "/app.js"]) {
      await errorOf(
        await app.handler(new Request(`http://rebind.evil.example:8000${path}`)),
        403,
        "forbidden_host",
      );
      await errorOf(
        await app.request(path, { headers: { host: "rebind.evil.example" } }),
        403,
        "forbidden_host",
      );
    }
    for (const host of ["127.0.0.1:8000", "localhost:8000", "[::1]:8000", "moldshop.lan:8000"]) {
      const res = await app.handler(new Request(`http://${host}/api/scenarios`));
      assert.equal(res.status, 200, host);
      await res.body?.cancel();
    }
  } finally {
    await app.close();
  }
  // Off loopback (a token is required there) any host name reaches the token check.
  const open = await testApp({ host: "0.0.0.0", token: "t0ken" });
  try {
    const res = await open.handler(
      new Request("http://moldshop.example:8000/api/scenarios", {
        headers: { authorization: "Bearer t0ken" },
      }),
    );
    assert.equal(res.status, 200);
    await res.body?.cancel();
  } finally {
    await open.close();
  }
});

Deno.test("security headers: API responses forbid framing, sniffing and referrers; the page has its CSP", async () => {
  const app = await testApp();
  try {
    for (const path of ["/api/health", "/api/scenarios", "/api/nothing"]) {
      const res = await app.request(path);
      const csp = res.headers.get("content-security-policy") ?? "";
      assert.match(csp, /default-src 'none'/, path);
      assert.match(csp, /frame-ancestors 'none'/, path);
      assert.equal(res.headers.get("x-content-type-options"), "nosniff", path);
      assert.equal(res.headers.get("referrer-policy"), "no-referrer", path);
      assert.equal(res.headers.get("x-frame-options"), "DENY", path);
      await res.body?.cancel();
    }
    const scenario = await readJson(QUICK_PATH);
    const { id } = await (await app.send("POST", "/api/jobs", { kind: "optimize", scenario }))
      .json();
    const events = await app.request(`/api/jobs/${id}/events`);
    assert.equal(events.headers.get("x-content-type-options"), "nosniff");
    await events.body?.cancel();
    for (const path of ["/", "/app.js", "/missing.html"]) {
      const res = await app.request(path);
      assert.equal(res.headers.get("content-security-policy"), PAGE_CSP, path);
      assert.equal(res.headers.get("x-content-type-options"), "nosniff", path);
      assert.equal(res.headers.get("referrer-policy"), "no-referrer", path);
      await res.body?.cancel();
    }
    assert.match(PAGE_CSP, /frame-ancestors 'none'/);
    assert.match(PAGE_CSP, /script-src 'self'(;|$)/, "no inline or eval'd script");
  } finally {
    await app.close();
  }
});
