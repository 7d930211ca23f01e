import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import type { Scenario, ScenarioWire } from "../../src/model/scenario_schema.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";
import { currentDesign, designSpace } from "../../src/optimize/design_space.ts";
import { type DesignEvaluation, evaluateDesign } from "../../src/optimize/evaluate_design.ts";
import { singleLine, unequalBranches } from "../network/_scenarios.ts";

function parse(wire: unknown): Scenario {
  const parsed = parseScenario(wire, { materialIds: LIBRARY_MATERIAL_IDS });
  assert.ok(parsed.ok, JSON.stringify(!parsed.ok && parsed.issues));
  return parsed.scenario;
}

function evaluated(scenario: Scenario, x: Float64Array, slopes = false): DesignEvaluation {
  const outcome = evaluateDesign(designSpace(scenario), x, { slopes });
  assert.ok(outcome.ok, !outcome.ok ? outcome.message : "");
  return outcome.evaluation;
}

Deno.test("tangent: feed-pressure slope of a runner is −(3n+1)·ΔP_runner/D (power-law tube law)", () => {
  // Power-law tube ΔP = (2KL/R)[(3n+1)Q/(πnR³)]ⁿ (Bird, Armstrong & Hassager, *Dynamics of
  // Polymeric Liquids* vol. 1), so ∂ΔP/∂D = −(3n+1)·ΔP/D. With one cavity, the reference instant
  // (95 % of the cavity filled) sees the same cavity front at any runner size, so only the
  // runner's own drop changes.
  for (const n of [1, 0.38]) {
    const K = n === 1 ? 300 : 7500;
    const wire = singleLine({
      feed: "hot_drop",
      gate: "pin",
      cavity: "strip",
      K,
      n,
    }) as ScenarioWire;
    Object.assign(wire.runners![0], { adjustable: true, min_diameter_mm: 3, max_diameter_mm: 9 });
    const scenario = parse(wire);
    const space = designSpace(scenario);
    const x = currentDesign(space);
    const e = evaluated(scenario, x, true);
    assert.ok(e.slopes, "slopes carried");
    const D = x[0];
    const R = D / 2;
    const L = 50e-3;
    const Q = 20e-6;
    const drop = ((2 * K * L) / R) * Math.pow(((3 * n + 1) * Q) / (Math.PI * n * R ** 3), n);
    assertClose(e.slopes.pressure[0], (-(3 * n + 1) * drop) / D, {
      rel: 0.01,
      what: `∂p/∂D at n = ${n}, Pa/m`,
    });
    // A round runner's volume πD²L/4 grows by πDL/2 per metre of diameter.
    assertClose(e.slopes.runnerVolume[0], (Math.PI * D * L) / 2, {
      rel: 1e-3,
      what: "∂V/∂D, m³/m",
    });
  }
});

for (const thermal of ["isothermal", "full"] as const) {
  Deno.test(`tangent: split fill-time slopes agree with central differences of the simulation (${thermal})`, () => {
    // A derivative check: the tangent-linear slopes against central difference quotients of the
    // full simulation, step 0.1 % (Nocedal & Wright, *Numerical Optimization*, 2nd ed., §8.1).
    const scenario = parse(unequalBranches(thermal));
    const space = designSpace(scenario);
    const x = currentDesign(space);
    const base = evaluated(scenario, x, true);
    assert.ok(base.slopes);
    const h = 1e-3;
    let worst = 0;
    let largest = 0;
    for (let j = 0; j < x.length; j++) {
      const up = Float64Array.from(x);
      const down = Float64Array.from(x);
      up[j] *= 1 + h;
      down[j] *= 1 - h;
      const a = evaluated(scenario, up);
      const b = evaluated(scenario, down);
      base.splitFillTimes.forEach((t, i) => {
        const central = (a.splitFillTimes[i] - b.splitFillTimes[i]) / (2 * h) / t;
        const tangent = (base.slopes!.fillTime[i][j] * x[j]) / t;
        if (Deno.env.get("EVENFILL_REPORT")) {
          console.log(
            `${space.variables[j].element} → t${i}: central ${central.toFixed(4)}, tangent ${
              tangent.toFixed(4)
            }`,
          );
        }
        worst = Math.max(worst, Math.abs(central - tangent));
        largest = Math.max(largest, Math.abs(central));
      });
    }
    assert.ok(largest > 0.1, `the sizes move the fill times (largest log slope ${largest})`);
    const tolerance = thermal === "isothermal" ? 0.05 : 0.25;
    assert.ok(worst <= tolerance * largest, `worst miss ${worst} of largest ${largest}`);
  });
}
