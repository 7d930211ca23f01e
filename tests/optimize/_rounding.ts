/**
 * Plain rounding of a continuous optimum and an independent judge of a design, for the
 * snapping tests: runners to the nearest cutter of the metric ball-end series, gates to the
 * nearest 0.05 mm (both common practice, no source; the series is checked in
 * `cutters_test.ts`); the judge re-simulates the sizes written back into the scenario and
 * counts the scenario's own goals it breaks.
 *
 * @module
 */
import assert from "node:assert/strict";
import { materialById } from "../../src/materials/library.ts";
import { parseScenarioText } from "../../src/model/parse_scenario.ts";
import type { Scenario } from "../../src/model/scenario_schema.ts";
import { LIBRARY_MATERIAL_IDS, runScenario } from "../../src/network/simulate_scenario.ts";
import { cutterCatalogue } from "../../src/optimize/cutters.ts";
import { applyDesign, type DesignSpace } from "../../src/optimize/design_space.ts";

export function load(url: URL): Scenario {
  const parsed = parseScenarioText(Deno.readTextFileSync(url), {
    materialIds: LIBRARY_MATERIAL_IDS,
  });
  assert.ok(parsed.ok, JSON.stringify(!parsed.ok && parsed.issues));
  return parsed.scenario;
}

/** A design re-simulated from scratch and judged against the scenario's own goals. */
export function judge(scenario: Scenario, space: DesignSpace, x: ArrayLike<number>) {
  const run = runScenario(applyDesign(space, x));
  assert.ok(run.ok, JSON.stringify(!run.ok && run));
  const fill = run.run.fill;
  const goals = scenario.goals;
  const times = fill.cavities.map((c) => c.fillTime);
  const imbalance = (Math.max(...times) - Math.min(...times)) / Math.max(...times) * 100;
  const material = typeof scenario.material === "string"
    ? materialById(scenario.material)!
    : scenario.material;
  const shearLimit = goals.gate_shear_limit_1_s ?? material.max_shear_rate_1_s;
  const pressureLimit = goals.max_pressure_fraction *
    scenario.machine.max_injection_pressure_MPa * 1e6;
  const broken = [
    ...(imbalance > goals.max_imbalance_percent ? ["imbalance"] : []),
    ...fill.cavities.filter((c) => c.gateShearRatePeak > shearLimit).map((c) => `${c.id} shear`),
    ...(fill.feedPressurePeak > pressureLimit ? ["pressure"] : []),
  ];
  return { imbalance, broken, text: `${imbalance.toFixed(3)} % [${broken.join(", ")}]` };
}

/** Runners to the nearest metric cutter, gates to the nearest 0.05 mm. */
export function plainRounding(space: DesignSpace, x: ArrayLike<number>): Float64Array {
  const catalogue = cutterCatalogue("metric");
  assert.equal(catalogue.kind, "discrete");
  if (catalogue.kind !== "discrete") throw new Error("unreachable");
  const step = 0.05e-3;
  return Float64Array.from(space.variables, (v, j) => {
    if (v.kind === "gate") return Math.round(x[j] / step) * step;
    return catalogue.cutters.map((c) => c.size).reduce((a, b) =>
      Math.abs(b - x[j]) < Math.abs(a - x[j]) ? b : a
    );
  });
}
