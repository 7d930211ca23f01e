import assert from "node:assert/strict";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";
import { optimizeBalance } from "../../src/optimize/balance.ts";
import { iterationJson, optimizationJson } from "../../src/report/optimization_report.ts";
import { componentSchemas } from "../../src/service/openapi.ts";
import { OptimizationSchema, ResultSchema } from "../../src/wire/mod.ts";
import { z } from "zod";
import { resolveRef, validate } from "./_json_schema.ts";
import { QUICK_PATH, testApp } from "./_app.ts";

type Json = Record<string, unknown>;

async function openApi(app: Awaited<ReturnType<typeof testApp>>): Promise<Json> {
  const res = await app.request("/api/openapi.json");
  assert.equal(res.status, 200);
  return await res.json();
}

/** The schema the document gives for a response body. */
function responseSchema(doc: Json, path: string, method: string, status: number): Json {
  const paths = doc.paths as Record<string, Record<string, Json>>;
  const responses = paths[path][method].responses as Record<string, Json>;
  const content = responses[status].content as Record<string, { schema: Json }>;
  return content["application/json"].schema;
}

const demos = [...Deno.readDirSync(new URL("../../scenarios/", import.meta.url))]
  .filter((e) => e.name.endsWith(".json")).map((e) => e.name).sort();

Deno.test("OpenAPI: a real result of every demo validates against the schema the document gives POST /api/simulate", async () => {
  const app = await testApp();
  try {
    const doc = await openApi(app);
    const schema = responseSchema(doc, "/api/simulate", "post", 200);
    assert.deepEqual(schema, { $ref: "#/components/schemas/Result" });
    assert.ok(demos.length >= 3);
    for (const demo of demos) {
      const scenario = await Deno.readTextFile(new URL(`../../scenarios/${demo}`, import.meta.url));
      for (const query of ["", "?history=1"]) {
        const res = await app.send("POST", `/api/simulate${query}`, scenario);
        assert.equal(res.status, 200, demo);
        const result = await res.json();
        assert.deepEqual(validate(result, schema, doc), [], `${demo}${query}`);
        assert.equal("history" in result, query !== "", demo);
        // The zod schema the document was generated from agrees.
        assert.ok(ResultSchema.strict().safeParse(result).success, demo);
      }
    }
  } finally {
    await app.close();
  }
});

Deno.test("OpenAPI: the result schema refuses a drifted result (missing, renamed, retyped, extra fields)", async () => {
  const app = await testApp();
  try {
    const doc = await openApi(app);
    const schema = responseSchema(doc, "/api/simulate", "post", 200);
    const res = await app.send("POST", "/api/simulate", await Deno.readTextFile(QUICK_PATH));
    const good = await res.json();
    assert.deepEqual(validate(good, schema, doc), []);
    const drift = (change: (r: Json) => void) => {
      const r = structuredClone(good);
      change(r);
      return validate(r, schema, doc);
    };
    assert.ok(
      drift((r) => delete r.imbalance_percent).some((e) => /missing imbalance_percent/.test(e)),
    );
    assert.ok(
      drift((r) => {
        const d = r.diagnostics as Json;
        d.networkSolves = d.network_solves;
        delete d.network_solves;
      }).length >= 2,
    );
    assert.ok(drift((r) => ((r.cavities as Json[])[0].fill_time_s = "1.2")).length > 0);
    assert.ok(drift((r) => (r.format = "evenfill.result/2")).length > 0);
    assert.ok(drift((r) => ((r.elements as Json[])[0].kind = "pipe")).length > 0);
    assert.ok(drift((r) => ((r.warnings as Json[]).push({ code: "x" }))).length > 0);
    // A non-finite number is reported as null, and null is allowed.
    assert.deepEqual(drift((r) => (r.fill_time_s = null)), []);
  } finally {
    await app.close();
  }
});

/** Every object schema reachable from `schema` without leaving `doc`'s components, with its path. */
function objectsWithoutProperties(doc: Json, name: string): string[] {
  const found: string[] = [];
  const seen = new Set<unknown>();
  const walk = (node: unknown, path: string) => {
    if (node === null || typeof node !== "object" || seen.has(node)) return;
    seen.add(node);
    const s = node as Json;
    if (typeof s.$ref === "string") {
      if (s.$ref !== "#/components/schemas/Scenario") walk(resolveRef(doc, s.$ref), s.$ref);
      return;
    }
    if (s.type === "object" && s.properties === undefined) found.push(path);
    for (const [key, value] of Object.entries(s)) {
      if (Array.isArray(value)) value.forEach((v, i) => walk(v, `${path}.${key}[${i}]`));
      else walk(value, `${path}.${key}`);
    }
  };
  walk((doc.components as Json & { schemas: Json }).schemas[name], name);
  return found;
}

Deno.test("OpenAPI: result, optimization, job, progress, event and issue bodies are typed to the field", async () => {
  const app = await testApp();
  try {
    const doc = await openApi(app);
    const schemas = (doc.components as { schemas: Record<string, Json> }).schemas;
    for (
      const name of [
        "Result",
        "Optimization",
        "Calibration",
        "Window",
        "Job",
        "JobList",
        "JobProgress",
        "JobStateEvent",
        "JobEndEvent",
        "Issue",
        "Error",
        "Validation",
      ]
    ) {
      assert.ok(schemas[name], name);
      assert.deepEqual(
        objectsWithoutProperties(doc, name),
        [],
        `${name}: objects of unknown shape`,
      );
    }
    const job = schemas.Job as { properties: Record<string, Json> };
    assert.deepEqual(job.properties.result, {
      anyOf: [
        { $ref: "#/components/schemas/Optimization" },
        { $ref: "#/components/schemas/Calibration" },
        { $ref: "#/components/schemas/Window" },
        { type: "null" },
      ],
      description:
        "by kind: evenfill.optimization/1 with the before/after fill history, evenfill.calibration/1, evenfill.window/1",
    });
    const optimization = schemas.Optimization as { properties: Record<string, Json> };
    assert.deepEqual(optimization.properties.before, { $ref: "#/components/schemas/Result" });
    const events = (doc.paths as Record<string, Record<string, Json>>)["/api/jobs/{id}/events"]
      .get.responses as Record<string, { content: Record<string, Json> }>;
    assert.deepEqual(events[200].content["text/event-stream"]["x-event-data"], {
      state: { $ref: "#/components/schemas/JobStateEvent" },
      progress: { $ref: "#/components/schemas/JobProgress" },
      end: { $ref: "#/components/schemas/JobEndEvent" },
    });
    // Generated from the zod schemas, not written beside them.
    assert.deepEqual(
      schemas.Result.properties,
      (z.toJSONSchema(ResultSchema, { target: "draft-2020-12" }) as Json).properties,
    );
    assert.deepEqual(
      Object.keys(componentSchemas()).sort(),
      Object.keys(schemas).filter((n) => n !== "Scenario").sort(),
    );
  } finally {
    await app.close();
  }
});

Deno.test("OpenAPI: a finished job, its progress and its optimization validate against the Job schema", async () => {
  const app = await testApp();
  try {
    const doc = await openApi(app);
    const wire = JSON.parse(await Deno.readTextFile(QUICK_PATH));
    const submitted = await app.send("POST", "/api/jobs", { kind: "optimize", scenario: wire });
    assert.equal(submitted.status, 202);
    const { id } = await submitted.json();
    const jobSchema = responseSchema(doc, "/api/jobs/{id}", "get", 200);
    const queued = await (await app.request(`/api/jobs/${id}`)).json();
    assert.deepEqual(validate(queued, jobSchema, doc), [], "queued");

    const parsed = parseScenario(wire, { materialIds: LIBRARY_MATERIAL_IDS });
    assert.ok(parsed.ok);
    const run = await optimizeBalance(parsed.scenario);
    assert.ok(run.ok);
    const claimed = app.store.claimJob("test-owner", 60_000);
    assert.ok(claimed && claimed.job.id === id);
    const progress = iterationJson(run.outcome.iterations.at(-1)!);
    assert.ok(app.store.writeProgress(id, "test-owner", claimed.attempt, progress));
    const running = await (await app.request(`/api/jobs/${id}`)).json();
    assert.deepEqual(validate(running, jobSchema, doc), [], "running");
    assert.deepEqual(running.progress, progress);

    const result = JSON.parse(JSON.stringify(optimizationJson(run.outcome, { history: true })));
    assert.ok(OptimizationSchema.strict().safeParse(result).success);
    assert.ok(app.store.finishJob(id, "test-owner", claimed.attempt, { status: "done", result }));
    const done = await (await app.request(`/api/jobs/${id}`)).json();
    assert.equal(done.status, "done");
    assert.deepEqual(validate(done, jobSchema, doc), [], "done");
    assert.ok(
      validate({ ...done, result: { ...done.result, status: "stuck" } }, jobSchema, doc).length > 0,
    );
    const list = await (await app.request("/api/jobs")).json();
    assert.deepEqual(validate(list, responseSchema(doc, "/api/jobs", "get", 200), doc), []);
  } finally {
    await app.close();
  }
});
