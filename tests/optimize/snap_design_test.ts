import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import { parseScenarioText } from "../../src/model/parse_scenario.ts";
import type { Scenario } from "../../src/model/scenario_schema.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";
import { optimizeBalance } from "../../src/optimize/balance.ts";
import { CUTTER_MATCH_TOLERANCE, cutterCatalogue } from "../../src/optimize/cutters.ts";
import { designSpace } from "../../src/optimize/design_space.ts";
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

// A design whose continuous sizes are given (today's sizes times 1.07, off every cutter, inside
// the bounds): each snapped runner size is a catalogue cutter, each gate a whole number of
// 0.05 mm steps (common practice, no source), and the snapped design is never worse, on the
// judge it is given, than plain rounding written out here.
for (
  const [name, dir] of [["quick_two_cavity", "tests/testdata"], [
    "family_four_housing",
    "scenarios",
  ]]
) {
  Deno.test(`snapDesign (${name}): given continuous sizes, cutters only, never worse than rounding`, () => {
    const text = Deno.readTextFileSync(new URL(`../../${dir}/${name}.json`, import.meta.url));
    const parsed = parseScenarioText(text, { materialIds: LIBRARY_MATERIAL_IDS });
    assert.ok(parsed.ok);
    const space = designSpace(parsed.scenario);
    const x = Float64Array.from(
      space.variables,
      (v) => Math.min(v.upper, Math.max(v.lower, v.current * 1.07)),
    );
    const continuous = evaluateDesign(space, x);
    assert.ok(continuous.ok);
    const snapped = snapDesign(space, continuous.evaluation, undefined, { merit });

    const catalogue = cutterCatalogue(parsed.scenario.goals.cutters);
    assert.equal(catalogue.kind, "discrete");
    if (catalogue.kind !== "discrete") return;
    const sizes = catalogue.cutters.map((c) => c.size);
    space.variables.forEach((v, j) => {
      const s = snapped.evaluation.x[j];
      if (v.kind === "runner") {
        assert.ok(
          sizes.some((c) => Math.abs(c - s) <= CUTTER_MATCH_TOLERANCE),
          `${v.element}: ${s} m is no cutter`,
        );
      } else {
        const steps = s / 5e-5;
        assertClose(steps, Math.round(steps), {
          abs: 1e-6,
          what: `${v.element} on the 0.05 mm grid`,
        });
      }
    });
    assert.equal(snapped.choices.length, space.variables.length);

    // Plain rounding: runners to the nearest cutter, gates to the nearest 0.05 mm step.
    const rounded = Float64Array.from(space.variables, (v, j) => {
      if (v.kind === "gate") return Math.round(x[j] / 5e-5) * 5e-5;
      return sizes.reduce((a, b) => (Math.abs(b - x[j]) < Math.abs(a - x[j]) ? b : a));
    });
    const plain = evaluateDesign(space, rounded);
    assert.ok(plain.ok);
    assert.ok(
      merit(snapped.evaluation) <= merit(plain.evaluation) + 1e-9,
      `snapped ${merit(snapped.evaluation)} vs plain rounding ${merit(plain.evaluation)}`,
    );
  });
}
