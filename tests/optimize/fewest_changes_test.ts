import assert from "node:assert/strict";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import type { Scenario, ScenarioWire } from "../../src/model/scenario_schema.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";
import { optimizeBalance } from "../../src/optimize/balance.ts";
import { optimizationJson } from "../../src/report/optimization_report.ts";
import { assertClose } from "../assert_close.ts";
import { powerLawFluid } from "../network/_scenarios.ts";

/**
 * Fewest changes on an existing tool (`fewest_changes.ts`), checked on a two-branch tool
 * whose balance has a closed form. Hot drop → junction J → runner R1 (L1 = 60 mm) to A and
 * R2 (L2 = 50 mm) to B, both 6 mm; pin gates G1, G2 (1.2 mm, 2 mm land) into identical
 * cavities; isothermal power-law melt. Every runner and gate is adjustable, so a free
 * optimizer could change all four; one change suffices.
 *
 * Closed form (power-law tube, ΔP = (2KL/R)[(3n+1)Q/(πnR³)]ⁿ; Bird, Armstrong & Hassager,
 * *Dynamics of Polymeric Liquids* vol. 1): at equal branch flows (identical cavities filling
 * together) ΔP ∝ L/R^m, m = 3n + 1, and the cavities' own drops cancel. Enlarging G1 alone
 * balances when L1/Rr^m + Lg/Rg1^m = L2/Rr^m + Lg/Rg^m, i.e.
 * Rg1 = [Lg / (Lg/Rg^m − (L1 − L2)/Rr^m)]^(1/m).
 * The long branch also holds more runner volume (π·3²·10 mm³ = 0.28 cm³ against 200 cm³ of
 * cavity, 0.14 %), and the optimizer stops inside a 0.2 % band: together under the 1 %
 * tolerance on the diameter (d ln D / d ln Q ≈ n/m ≈ 0.18, so 0.34 % of flow is 0.06 %).
 */

const n = 0.38;
const L1 = 60;
const L2 = 50;
const RUNNER_MM = 6;
const GATE_MM = 1.2;
const LAND_MM = 2;

function twoBranches(mode: "trim" | "steel_safe" | "new_tool"): ScenarioWire {
  const cavity = (id: string) => ({
    id,
    volume_cm3: 200,
    projected_area_cm2: 300,
    wall_mm: 3,
    flow_length_mm: 200,
    fill_pattern: "strip" as const,
  });
  const runner = (id: string, to: string) => ({
    id,
    from: "J",
    to,
    diameter_mm: RUNNER_MM,
    adjustable: true,
    min_diameter_mm: 3,
    max_diameter_mm: 12,
  });
  const gate = (id: string, from: string, cavityId: string) => ({
    id,
    from,
    cavity: cavityId,
    type: "pin" as const,
    diameter_mm: GATE_MM,
    land_mm: LAND_MM,
    adjustable: true,
    min_diameter_mm: 0.6,
    max_diameter_mm: 2.4,
  });
  return {
    format: "evenfill.scenario/1",
    name: "two branches, one change",
    material: powerLawFluid(7500, n),
    process: {
      melt_temperature_C: 230,
      mold_temperature_C: 40,
      injection: { flow_rate_cm3_s: 100 },
      switchover_percent: 100,
      thermal: "isothermal",
    },
    machine: { max_injection_pressure_MPa: 400, clamp_force_kN: 100000 },
    feed: { kind: "hot_drop", node: "J", length_mm: 20, diameter_mm: 8 },
    nodes: [
      { id: "J", x_mm: 0, y_mm: 0 },
      { id: "A", x_mm: -L1, y_mm: 0 },
      { id: "B", x_mm: L2, y_mm: 0 },
    ],
    runners: [runner("R1", "A"), runner("R2", "B")],
    gates: [gate("G1", "A", "C1"), gate("G2", "B", "C2")],
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

function parse(wire: unknown): Scenario {
  const parsed = parseScenario(wire, { materialIds: LIBRARY_MATERIAL_IDS });
  assert.ok(parsed.ok, JSON.stringify(!parsed.ok && parsed.issues));
  return parsed.scenario;
}

Deno.test("fewest changes: one gate enlarged balances two branches, at the closed-form size", async () => {
  const result = await optimizeBalance(parse(twoBranches("trim")));
  assert.ok(result.ok, JSON.stringify(!result.ok && result));
  const o = result.outcome;
  assert.equal(o.status, "converged", o.reason);
  assert.ok(o.before.imbalancePercent > 0.2, `today is unbalanced: ${o.before.imbalancePercent} %`);
  assert.ok(o.after.imbalancePercent <= 0.2 + 1e-9, `imbalance ${o.after.imbalancePercent} %`);
  const changed = o.space.variables.filter((v, j) => Math.abs(o.after.x[j] - v.current) > 1e-9);
  // One change, and of the cheapest kind (enlarging a gate: goals.change_costs defaults).
  assert.deepEqual(changed.map((v) => v.element), ["G1"]);
  const m = 3 * n + 1;
  const Rr = RUNNER_MM / 2;
  const Rg = GATE_MM / 2;
  const Rg1 = Math.pow(LAND_MM / (LAND_MM / Rg ** m - (L1 - L2) / Rr ** m), 1 / m);
  const g1 = o.space.variables.findIndex((v) => v.element === "G1");
  assertClose(o.after.x[g1] * 1e3, 2 * Rg1, { rel: 0.01, what: "G1 diameter, mm" });
  // The change plan has that one step, an enlargement.
  assert.equal(o.changes?.steps.length, 1);
  assert.equal(o.changes?.steps[0].steelSafe, true);
});

Deno.test("fewest changes: the front is monotone and stops one past the first plan that meets the limits", async () => {
  const result = await optimizeBalance(parse(twoBranches("trim")));
  assert.ok(result.ok);
  const points = result.outcome.front?.points ?? [];
  assert.ok(points.length >= 2, `${points.length} front points`);
  const first = points.findIndex((p) => p.feasible);
  assert.equal(first, 0, "one change meets the limits");
  assert.equal(points.length, first + 2, "one more k after the first feasible");
  for (let k = 1; k < points.length; k++) {
    assert.equal(points[k].changes, points[k - 1].changes + 1);
    assert.ok(points[k].elements.length <= points[k].changes);
    // More changes never worse: feasible stays feasible, and volume never grows for it.
    if (points[k - 1].feasible) {
      assert.ok(points[k].feasible);
      assert.ok(points[k].runnerVolume <= points[k - 1].runnerVolume * (1 + 1e-9));
    } else {
      assert.ok(points[k].imbalancePercent <= points[k - 1].imbalancePercent + 1e-9);
    }
  }
  const json = optimizationJson(result.outcome);
  assert.equal(json.front.length, points.length);
  assert.equal(json.front.filter((p) => p.chosen).length, 1);
  assert.deepEqual(json.front.find((p) => p.chosen)?.changed, ["G1"]);
});

Deno.test("fewest changes: max_changes 0 on an unbalanced tool is an honest infeasible with what is needed", async () => {
  const wire = twoBranches("trim");
  wire.goals = { ...wire.goals, max_changes: 0 };
  const result = await optimizeBalance(parse(wire), { withoutChanges: true });
  assert.ok(result.ok, JSON.stringify(!result.ok && result));
  const o = result.outcome;
  assert.equal(o.status, "infeasible", o.reason);
  assert.match(o.reason, /at most 0 changes/);
  assert.ok(
    o.wouldNeed.some((w) => /1 changes would meet every limit/.test(w)),
    o.wouldNeed.join(),
  );
  // Nothing changed: the design reported is today's.
  o.space.variables.forEach((v, j) => assert.equal(o.after.x[j], v.current));
});

Deno.test("fewest changes: a new tool has no front; negative change costs are refused with their path", async () => {
  const result = await optimizeBalance(parse(twoBranches("new_tool")), {
    maxIterations: 3,
    withoutChanges: true,
  });
  assert.ok(result.ok);
  assert.equal(result.outcome.front, undefined);
  const wire = twoBranches("trim");
  wire.goals = { ...wire.goals, change_costs: { reduce_runner: -1 } };
  const parsed = parseScenario(wire, { materialIds: LIBRARY_MATERIAL_IDS });
  assert.equal(parsed.ok, false);
  assert.ok(!parsed.ok && parsed.issues.some((i) => i.at === "goals.change_costs.reduce_runner"));
});
