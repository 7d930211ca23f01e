import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import type { Scenario, ScenarioWire } from "../../src/model/scenario_schema.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";
import { optimizeBalance } from "../../src/optimize/balance.ts";
import { currentDesign, designSpace } from "../../src/optimize/design_space.ts";
import { evaluateDesign } from "../../src/optimize/evaluate_design.ts";
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

/**
 * Feed F → R0 → S, two-way split at S (R1a, R1b), two-way splits at A and B (R2a…R2d),
 * identical pin gates and cavities. Runners only are adjustable.
 */
function symmetricTree(n: number, machineMPa: number): ScenarioWire {
  const cavity = (id: string) => ({
    id,
    volume_cm3: 50,
    projected_area_cm2: 100,
    wall_mm: 3,
    flow_length_mm: 100,
    fill_pattern: "strip" as const,
  });
  const runner = (id: string, from: string, to: string) => ({
    id,
    from,
    to,
    diameter_mm: 5,
    adjustable: true,
    min_diameter_mm: 1.5,
    max_diameter_mm: 12,
  });
  const gate = (id: string, from: string, cavityId: string) => ({
    id,
    from,
    cavity: cavityId,
    type: "pin" as const,
    diameter_mm: 2,
    land_mm: 1,
  });
  return {
    format: "evenfill.scenario/1",
    name: "symmetric tree at a pressure budget",
    material: powerLawFluid(n === 1 ? 100 : 7500, n),
    process: {
      melt_temperature_C: 230,
      mold_temperature_C: 40,
      injection: { flow_rate_cm3_s: n === 1 ? 20 : 60 },
      switchover_percent: 100,
      thermal: "isothermal",
    },
    machine: { max_injection_pressure_MPa: machineMPa, clamp_force_kN: 100000 },
    feed: { kind: "hot_drop", node: "F", length_mm: 20, diameter_mm: 8 },
    nodes: [
      { id: "F", x_mm: 0, y_mm: -30 },
      { id: "S", x_mm: 0, y_mm: 0 },
      { id: "A", x_mm: -40, y_mm: 0 },
      { id: "B", x_mm: 40, y_mm: 0 },
      { id: "A1", x_mm: -40, y_mm: 30 },
      { id: "A2", x_mm: -40, y_mm: -30 },
      { id: "B1", x_mm: 40, y_mm: 30 },
      { id: "B2", x_mm: 40, y_mm: -30 },
    ],
    runners: [
      runner("R0", "F", "S"),
      runner("R1a", "S", "A"),
      runner("R1b", "S", "B"),
      runner("R2a", "A", "A1"),
      runner("R2b", "A", "A2"),
      runner("R2c", "B", "B1"),
      runner("R2d", "B", "B2"),
    ],
    gates: [
      gate("G1", "A1", "C1"),
      gate("G2", "A2", "C2"),
      gate("G3", "B1", "C3"),
      gate(
        "G4",
        "B2",
        "C4",
      ),
    ],
    cavities: [cavity("C1"), cavity("C2"), cavity("C3"), cavity("C4")],
    goals: {
      mode: "new_tool",
      max_imbalance_percent: 1,
      max_pressure_fraction: 1,
      cutters: "continuous",
      gate_shear_limit_1_s: 1e7,
      size_rules: false,
    },
  };
}

for (const n of [1, 0.38]) {
  Deno.test(`minimum-volume symmetric tree at a pressure budget: radii step 2^(1/3) per split (n = ${n})`, async () => {
    // Minimising Σ 2^l·L_l·r_l² subject to a fixed path drop Σ c·L_l·(Q/2^l)ⁿ/r_l^(3n+1)
    // (power-law tube law) gives r_l^(3n+3) ∝ (Q/2^l)ⁿ/2^l, so r_l ∝ 2^(−l/3) for every n:
    // the branching rule D_feed = D_branch·N^(1/3) (Murray's cube law; Lee & Stevenson,
    // J. Reinforced Plastics and Composites, 1998). Budget: the start design's simulated peak
    // pressure + 25 %, so that the runners shrink until the pressure limit binds.
    const start = parse(symmetricTree(n, 400));
    const startSpace = designSpace(start);
    const first = evaluateDesign(startSpace, currentDesign(startSpace));
    assert.ok(first.ok);
    const budgetMPa = first.evaluation.feedPressurePeak / 1e6 * 1.25;
    const result = await optimizeBalance(parse(symmetricTree(n, budgetMPa)), {
      maxIterations: 60,
    });
    assert.ok(result.ok, JSON.stringify(!result.ok && result));
    const o = result.outcome;
    assert.equal(o.status, "converged", o.reason);
    const size = (id: string) => o.after.x[o.space.variables.findIndex((v) => v.element === id)];
    const level1 = (size("R1a") + size("R1b")) / 2;
    const level2 = (size("R2a") + size("R2b") + size("R2c") + size("R2d")) / 4;
    const ratio = Math.cbrt(2);
    if (Deno.env.get("EVENFILL_REPORT")) {
      console.log(`n=${n}: ${size("R0") / level1} ${level1 / level2} ${o.simulations} simulations`);
    }
    assertClose(size("R0") / level1, ratio, { rel: 0.02, what: "R0 / level-1 diameter" });
    assertClose(level1 / level2, ratio, { rel: 0.02, what: "level-1 / level-2 diameter" });
    // The budget binds (otherwise the smallest runners would win).
    assertClose(o.after.feedPressurePeak / 1e6, budgetMPa, { rel: 0.02, what: "peak vs budget" });
  });
}

Deno.test("cancel is honoured between finite-difference simulations, not only between iterations", async () => {
  const wire = JSON.parse(
    await Deno.readTextFile(new URL("../../scenarios/family_four_housing.json", import.meta.url)),
  );
  // A signal that reads as aborted from its fourth look on: deterministic, where a timer is not.
  let polls = 0;
  const signal = {
    get aborted() {
      return ++polls > 3;
    },
  } as unknown as AbortSignal;
  const result = await optimizeBalance(parse(wire), { slopes: "finite_difference", signal });
  assert.ok(result.ok, JSON.stringify(!result.ok && result));
  assert.equal(result.outcome.status, "cancelled");
  // Ten sizes would take eleven simulations for one set of slopes: it stopped inside it.
  assert.ok(result.outcome.simulations <= 4, `${result.outcome.simulations} simulations`);
});
