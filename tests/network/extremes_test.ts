import assert from "node:assert/strict";
import { materialById } from "../../src/materials/library.ts";
import type { ScenarioWire } from "../../src/model/scenario_schema.ts";
import { simulateScenario } from "../../src/network/simulate_scenario.ts";
import { mulberry32 } from "../support/seeded_random.ts";

const demo = (): ScenarioWire =>
  JSON.parse(
    Deno.readTextFileSync(new URL("../../scenarios/family_four_housing.json", import.meta.url)),
  );

Deno.test("the extremes of issue 11 end as validation issues with their paths, never an exception", () => {
  const cases: [string, (w: ScenarioWire) => void, string][] = [
    ["a 1e-12 mm runner", (w) => (w.runners![0].length_mm = 1e-12), "runners[0].length_mm"],
    ["D1 of 1e308", (w) => {
      const m = structuredClone(materialById("pbt-unfilled")!);
      if (m.viscosity.model === "cross_wlf") m.viscosity.D1_Pa_s = 1e308;
      w.material = m;
    }, "material.viscosity.D1_Pa_s"],
    ["n of 1e-300", (w) => {
      const m = structuredClone(materialById("pbt-unfilled")!);
      m.viscosity.n = 1e-300;
      w.material = m;
    }, "material.viscosity.n"],
    ["a trapezoid too narrow for its draft", (w) => {
      Object.assign(w.runners![0], { shape: "trapezoid", width_mm: 1, depth_mm: 5 });
    }, "runners[0].width_mm"],
  ];
  for (const [what, change, at] of cases) {
    const wire = demo();
    change(wire);
    const outcome = simulateScenario(wire);
    assert.ok(!outcome.ok && outcome.code === "invalid_scenario", what);
    assert.ok(
      outcome.issues.some((i) => i.at === at),
      `${what}: ${JSON.stringify(outcome.issues)}`,
    );
  }
});

Deno.test("schema-valid extremes (sizes at their bounds, slow and fast fills, odd resins) never throw", () => {
  // Random corners of what the schema accepts, on the demo: each run must end as a result,
  // a validation issue or a stated simulation failure, never an exception.
  const random = mulberry32(11);
  const seen = new Map<string, number>();
  const pick = <T>(xs: readonly T[]) => xs[Math.floor(random() * xs.length)];
  for (let k = 0; k < 24; k++) {
    const wire = demo();
    // Bounds are the optimizer's; free the sizes so the schema's own ranges are what limit them.
    for (const e of [...wire.runners!, ...wire.gates] as Record<string, unknown>[]) {
      for (const key of Object.keys(e)) if (/^(min|max)_/.test(key)) delete e[key];
      e.adjustable = false;
    }
    wire.process.injection = { flow_rate_cm3_s: pick([0.5, 2, 10, 300, 3000]) };
    const r = pick(wire.runners!);
    r.diameter_mm = pick([0.5, 1, 20, 40]);
    const g = pick(wire.gates);
    if (g.type === "edge") g.thickness_mm = pick([0.05, 0.2, g.thickness_mm]);
    else g.diameter_mm = pick([0.05, 0.3, g.diameter_mm]);
    const m = structuredClone(materialById("pbt-unfilled")!);
    m.conductivity_W_mK = pick([0.05, 0.2, 1.5, 5]);
    if (m.viscosity.model === "cross_wlf") {
      m.viscosity.n = pick([0.05, 0.3, 0.95]);
      m.viscosity.D1_Pa_s = pick([1e9, 1e20, 1e40]);
    }
    wire.material = m;
    let outcome;
    try {
      outcome = simulateScenario(wire);
    } catch (error) {
      assert.fail(`case ${k} threw: ${error}`);
    }
    const kind = outcome.ok ? "ran" : outcome.code;
    seen.set(kind, (seen.get(kind) ?? 0) + 1);
    if (!outcome.ok) {
      const detail = outcome.code === "invalid_scenario"
        ? outcome.issues[0]?.message
        : outcome.message;
      assert.ok(typeof detail === "string" && detail.length > 0, `case ${k}: ${outcome.code}`);
    }
  }
  // Most of these must actually run, or the test proves nothing about the engine.
  assert.ok((seen.get("ran") ?? 0) >= 12, JSON.stringify([...seen]));
});
