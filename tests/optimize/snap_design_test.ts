import assert from "node:assert/strict";
import { parseScenarioText } from "../../src/model/parse_scenario.ts";
import type { Scenario } from "../../src/model/scenario_schema.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";
import { optimizeBalance } from "../../src/optimize/balance.ts";
import { cutterCatalogue } from "../../src/optimize/cutters.ts";
import { type DesignEvaluation, evaluateDesign } from "../../src/optimize/evaluate_design.ts";
import { snapDesign } from "../../src/optimize/snap_design.ts";

function load(name: string): Scenario {
  const text = Deno.readTextFileSync(new URL(`../../scenarios/${name}.json`, import.meta.url));
  const parsed = parseScenarioText(text, { materialIds: LIBRARY_MATERIAL_IDS });
  assert.ok(parsed.ok);
  return parsed.scenario;
}

/** Limits first, then imbalance: the order a shop ranks two cuttable designs in. */
const merit = (e: DesignEvaluation) =>
  (e.feasible ? 0 : 1000 + e.violations.reduce((s, v) => s + v.excess, 0)) + e.imbalancePercent;

for (const name of ["two_gate_frame_and_knob", "hot_drop_eight_caps"]) {
  Deno.test(`snapDesign (${name}): never worse than plain rounding of the continuous optimum`, async () => {
    const scenario = load(name);
    const continuous = await optimizeBalance(scenario, { continuousOnly: true });
    assert.ok(continuous.ok);
    const { space, after } = continuous.outcome;
    const snapped = snapDesign(space, after, undefined, { merit });
    // Plain rounding, written out here: runners to the nearest catalogue cutter, gates to the
    // nearest 0.05 mm (common practice, no source), each inside its bounds.
    const catalogue = cutterCatalogue(scenario.goals.cutters);
    assert.equal(catalogue.kind, "discrete");
    if (catalogue.kind !== "discrete") return;
    const rounded = Float64Array.from(space.variables, (v, j) => {
      const x = after.x[j];
      if (v.kind === "gate") return Math.round(x / 5e-5) * 5e-5;
      return catalogue.cutters.map((c) => c.size).reduce((a, b) =>
        Math.abs(b - x) < Math.abs(a - x) ? b : a
      );
    });
    const plain = evaluateDesign(space, rounded);
    assert.ok(plain.ok);
    assert.ok(
      merit(snapped.evaluation) <= merit(plain.evaluation) + 1e-9,
      `snapped ${merit(snapped.evaluation)} vs plain rounding ${merit(plain.evaluation)}`,
    );
  });
}
