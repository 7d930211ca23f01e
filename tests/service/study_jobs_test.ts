/**
 * Calibrate and window jobs through the real app handler over a temporary SQLite store, each
 * run by the job process's `runJobAttempt` in this process (as a worker would).
 */
import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import { applyFactors } from "../../src/calibrate/factors.ts";
import { simulateScenario } from "../../src/network/simulate_scenario.ts";
import { runJobAttempt } from "../../src/worker/run_job.ts";
import { CalibrationSchema, WindowJobSchema } from "../../src/wire/mod.ts";
import { unequalBranches } from "../network/_scenarios.ts";
import { syntheticShots } from "../support/synthetic_shots.ts";
import { validate } from "./_json_schema.ts";
import { testApp } from "./_app.ts";

type Json = Record<string, unknown>;

/** Submit, claim and run one job; the finished job as GET /api/jobs/:id returns it. */
async function runThroughApp(app: Awaited<ReturnType<typeof testApp>>, body: unknown) {
  const res = await app.send("POST", "/api/jobs", body);
  assert.equal(res.status, 202, await res.clone().text());
  const { id } = await res.json();
  const claimed = app.store.claimJob("test-owner", 60_000);
  assert.ok(claimed && claimed.job.id === id);
  assert.ok(
    await runJobAttempt(app.store, claimed.job, { owner: "test-owner", attempt: claimed.attempt }),
  );
  const job = await (await app.request(`/api/jobs/${id}`)).json();
  const doc = await (await app.request("/api/openapi.json")).json();
  const paths = doc.paths as Record<string, Record<string, Json>>;
  const schema = ((paths["/api/jobs/{id}"].get.responses as Record<string, Json>)[200]
    .content as Record<string, { schema: Json }>)["application/json"].schema;
  assert.deepEqual(validate(job, schema, doc), [], "the job validates against the Job schema");
  return job;
}

Deno.test("calibrate job: a gate perturbed to 0.9 in the synthetic shots comes back within its standard error", async () => {
  const app = await testApp();
  try {
    const tool = unequalBranches("isothermal");
    tool.process.switchover_percent = 98;
    const factors = [{ kind: "gate_size" as const, gate: "G1" }];
    const scenario = { ...tool, measurements: syntheticShots(tool, factors, [0.9], [50, 70, 85]) };
    const job = await runThroughApp(app, { kind: "calibrate", scenario, factors });
    assert.equal(job.kind, "calibrate");
    assert.equal(job.status, "done", JSON.stringify(job.error));
    const result = CalibrationSchema.parse(job.result);
    const g1 = result.factors[0];
    assert.deepEqual(g1.factor, factors[0]);
    assert.ok(g1.identified, "three shots of two cavities pin the gate down");
    assert.ok(g1.standard_error! > 0 && g1.standard_error! < 0.05, `SE ${g1.standard_error}`);
    assert.ok(
      Math.abs(g1.value! - 0.9) <= g1.standard_error!,
      `fitted ${g1.value} ± ${g1.standard_error}, truth 0.9`,
    );
    assert.equal(result.residuals.length, 6);
    // The calibrated scenario simulates to the measured short shots' balance.
    const truth = simulateScenario(applyFactors(tool, factors, [0.9]));
    const calibrated = simulateScenario(result.calibrated);
    assert.ok(truth.ok && calibrated.ok);
    assertClose(calibrated.run.fill.imbalancePercent, truth.run.fill.imbalancePercent, {
      abs: 0.3,
      what: "imbalance of the calibrated model against the perturbed tool, % points",
    });
  } finally {
    await app.close();
  }
});

Deno.test("window job: 17 points per design, and an isothermal power-law tool's imbalance does not move with the rate (closed form)", async () => {
  const app = await testApp();
  try {
    // ΔP = K·f(Q) everywhere with one n: scaling the rate scales every flow alike, so every
    // fill time scales by the same factor and the imbalance is unchanged; K cancels from the
    // split and an isothermal model has no temperature (tests/window/process_window_test.ts).
    const today = unequalBranches("isothermal");
    const after = structuredClone(today);
    after.gates[0] = { ...after.gates[0], diameter_mm: 1.6 } as typeof after.gates[0];
    const job = await runThroughApp(app, {
      kind: "window",
      scenario: today,
      after_scenario: after,
      window: { injection_rate_percent: 30 },
    });
    assert.equal(job.status, "done", JSON.stringify(job.error));
    const result = WindowJobSchema.parse(job.result);
    assert.deepEqual(result.range, {
      melt_temperature_K: 10,
      mold_temperature_K: 10,
      injection_rate_percent: 30,
      viscosity_percent: 15,
    });
    assert.deepEqual(result.designs.map((d) => d.design), ["today", "after"]);
    for (const [k, wire] of [today, after].entries()) {
      const nominal = simulateScenario(wire);
      assert.ok(nominal.ok);
      const design = result.designs[k];
      assert.equal(design.points.length, 17);
      for (const p of design.points) {
        assertClose(p.imbalance_percent!, nominal.run.fill.imbalancePercent, {
          rel: 1e-6,
          what: `${design.design} at ${JSON.stringify(p.levels)}`,
        });
      }
      const rates = new Set(design.points.map((p) => p.levels.rate));
      assert.deepEqual([...rates].sort(), [-1, 0, 1]);
      assert.ok(design.gate_shear_range_1_s[1]! > 1.5 * design.gate_shear_range_1_s[0]!);
    }
    assert.notEqual(
      result.designs[0].imbalance_range_percent[0],
      result.designs[1].imbalance_range_percent[0],
      "the two designs were swept separately",
    );
  } finally {
    await app.close();
  }
});

Deno.test("calibrate and window submits: an unknown gate, a missing measurements block and a bad second design are 400 with JSON paths", async () => {
  const app = await testApp();
  try {
    const tool = unequalBranches("isothermal");
    const scenario = {
      ...tool,
      measurements: syntheticShots(tool, [{ kind: "viscosity" }], [1.1], [60]),
    };
    const bad = await app.send("POST", "/api/jobs", {
      kind: "calibrate",
      scenario,
      factors: [{ kind: "viscosity" }, { kind: "gate_size", gate: "G9" }],
    });
    assert.equal(bad.status, 400);
    const body = await bad.json();
    assert.equal(body.error.code, "invalid_request");
    assert.deepEqual(body.error.issues[0].path, ["factors", 1, "gate"]);
    assert.equal(body.error.issues[0].at, "factors[1].gate");
    assert.match(body.error.issues[0].message, /no gate "G9".*G1, G2/);
    assert.match(body.error.message, /factors\[1\]\.gate/);

    const unknownKind = await app.send("POST", "/api/jobs", {
      kind: "calibrate",
      scenario,
      factors: [{ kind: "gate", gate: "G1" }],
    });
    assert.equal(unknownKind.status, 400);
    assert.deepEqual((await unknownKind.json()).error.issues[0].path.slice(0, 2), ["factors", 0]);

    const noShots = await app.send("POST", "/api/jobs", { kind: "calibrate", scenario: tool });
    assert.equal(noShots.status, 400);
    assert.deepEqual((await noShots.json()).error.issues[0].path, ["measurements"]);

    const heavy = structuredClone(scenario);
    heavy.measurements.short_shots[0].parts[0] = { cavity: "C1", mass_g: 1e4 };
    const tooHeavy = await app.send("POST", "/api/jobs", { kind: "calibrate", scenario: heavy });
    assert.equal(tooHeavy.status, 400);
    assert.deepEqual(
      (await tooHeavy.json()).error.issues[0].path,
      ["measurements", "short_shots", 0, "parts", 0, "mass_g"],
    );

    const secondBad = await app.send("POST", "/api/jobs", {
      kind: "window",
      scenario: tool,
      after_scenario: { ...tool, gates: [{ ...tool.gates[0], diameter_mm: -1 }, tool.gates[1]] },
    });
    assert.equal(secondBad.status, 400);
    const issue = (await secondBad.json()).error.issues[0];
    assert.deepEqual(issue.path.slice(0, 3), ["after_scenario", "gates", 0]);

    const badRange = await app.send("POST", "/api/jobs", {
      kind: "window",
      scenario: tool,
      window: { melt_temperature_K: -5 },
    });
    assert.equal(badRange.status, 400);
    assert.deepEqual((await badRange.json()).error.issues[0].path, [
      "window",
      "melt_temperature_K",
    ]);
    assert.equal(app.store.countJobs().queued, 0, "nothing was queued");
  } finally {
    await app.close();
  }
});
