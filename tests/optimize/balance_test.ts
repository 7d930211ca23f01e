import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import type { Scenario, ScenarioWire } from "../../src/model/scenario_schema.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";
import { optimizeBalance } from "../../src/optimize/balance.ts";
import { powerLawFluid } from "../network/_scenarios.ts";

function parse(wire: unknown): Scenario {
  const parsed = parseScenario(wire, { materialIds: LIBRARY_MATERIAL_IDS });
  assert.ok(parsed.ok, JSON.stringify(!parsed.ok && parsed.issues));
  return parsed.scenario;
}

/** Sprue → junction J → two runners of lengths L1, L2 → identical pin gates → identical cavities. */
function twoBranches(
  n: number,
  L1: number,
  L2: number,
  mode: "new_tool" | "steel_safe",
): ScenarioWire {
  const cavity = (id: string) => ({
    id,
    volume_cm3: 200,
    projected_area_cm2: 300,
    wall_mm: 3,
    flow_length_mm: 200,
    fill_pattern: "strip" as const,
  });
  return {
    format: "evenfill.scenario/1",
    name: "two-branch balance check",
    // K = 7500 Pa·sⁿ at n = 0.38; the Newtonian check uses 100 Pa·s at a fifth of the rate,
    // so that both stay well inside the 400 MPa press.
    material: powerLawFluid(n === 1 ? 100 : 7500, n),
    process: {
      melt_temperature_C: 230,
      mold_temperature_C: 40,
      injection: { flow_rate_cm3_s: n === 1 ? 20 : 100 },
      switchover_percent: 100,
      thermal: "isothermal",
    },
    machine: { max_injection_pressure_MPa: 400, clamp_force_kN: 100000 },
    feed: { kind: "hot_drop", node: "J", length_mm: 20, diameter_mm: 6 },
    nodes: [
      { id: "J", x_mm: 0, y_mm: 0 },
      { id: "A", x_mm: -L1, y_mm: 0 },
      { id: "B", x_mm: L2, y_mm: 0 },
    ],
    runners: [
      { id: "R1", from: "J", to: "A", diameter_mm: 2.5 },
      {
        id: "R2",
        from: "J",
        to: "B",
        diameter_mm: 2.5,
        adjustable: true,
        min_diameter_mm: 1.5,
        max_diameter_mm: 6,
      },
    ],
    gates: [
      { id: "G1", from: "A", cavity: "C1", type: "pin", diameter_mm: 1.5, land_mm: 1 },
      { id: "G2", from: "B", cavity: "C2", type: "pin", diameter_mm: 1.5, land_mm: 1 },
    ],
    cavities: [cavity("C1"), cavity("C2")],
    goals: {
      mode,
      max_imbalance_percent: 0.2,
      max_pressure_fraction: 1,
      cutters: "continuous",
      gate_shear_limit_1_s: 1e7,
      size_rules: false,
    },
  };
}

for (const n of [1, 0.38]) {
  Deno.test(`balanced radius ratio of two runners equals [(L2/L1)(Q2/Q1)ⁿ]^(1/(3n+1)) (n = ${n})`, async () => {
    // Power-law tube, ΔP = (2KL/R)[(3n+1)Q/(πnR³)]ⁿ (Bird, Armstrong & Hassager vol. 1): equal drops
    // at equal flows (identical gates and cavities, Q2 = Q1) give R2/R1 = (L2/L1)^(1/(3n+1)).
    // The branch volumes differ by the runners' own volume (< 0.2 % of a branch), which shifts
    // the balanced ratio by less than the 1 % tolerance.
    const L1 = 40;
    const L2 = 120;
    const result = await optimizeBalance(parse(twoBranches(n, L1, L2, "new_tool")), {
      maxIterations: 40,
    });
    assert.ok(result.ok, JSON.stringify(!result.ok && result));
    const o = result.outcome;
    assert.equal(o.status, "converged", o.reason);
    const r2 = o.after.x[0];
    const expected = 2.5e-3 * Math.pow(L2 / L1, 1 / (3 * n + 1));
    assertClose(r2, expected, { rel: 0.01, what: "balanced R2 diameter" });
    assert.ok(o.after.imbalancePercent <= 0.2 + 1e-9, `imbalance ${o.after.imbalancePercent}`);
  });
}

Deno.test("steel-safe mode never shrinks, and reports infeasible with the change it would need", async () => {
  // R2 is already larger than the balanced size, so its (faster) cavity could only be slowed by
  // shrinking R2: not steel-safe. The answer must be "infeasible" and name R2 going down.
  const wire = twoBranches(1, 40, 120, "steel_safe");
  wire.runners![1].diameter_mm = 4.5;
  const result = await optimizeBalance(parse(wire), { maxIterations: 25 });
  assert.ok(result.ok, JSON.stringify(!result.ok && result));
  const o = result.outcome;
  assert.ok(o.after.x[0] >= 4.5e-3 * (1 - 1e-12), `steel-safe shrank R2 to ${o.after.x[0]}`);
  assert.equal(o.status, "infeasible", o.reason);
  assert.ok(
    o.wouldNeed.some((line) => line.startsWith("R2") && /not steel-safe/.test(line)),
    `explanation should name R2 shrinking: ${JSON.stringify(o.wouldNeed)}`,
  );
});
