import assert from "node:assert/strict";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";
import { designSpace } from "../../src/optimize/design_space.ts";
import { unequalBranches } from "../network/_scenarios.ts";

Deno.test("design space: a fixed feeding runner smaller than today's never makes a steel-safe tool unsolvable", () => {
  // Today's tool breaks the feed order: the fixed hot-drop-side runner R0 (4 mm) feeds the
  // adjustable R1 and R2 (5 mm). Steel-safe keeps R1 and R2 at ≥ 5 mm, so the feed-order
  // bound may not pull them below today's size (it binds only on growth past today).
  const wire = unequalBranches("isothermal");
  wire.nodes!.push({ id: "S", x_mm: 0, y_mm: -30 });
  wire.feed = { ...wire.feed, node: "S" } as typeof wire.feed;
  wire.runners!.unshift({ id: "R0", from: "S", to: "J", diameter_mm: 4 });
  wire.goals = { mode: "steel_safe", size_rules: false };
  const parsed = parseScenario(wire, { materialIds: LIBRARY_MATERIAL_IDS });
  assert.ok(parsed.ok, JSON.stringify(!parsed.ok && parsed.issues));
  const space = designSpace(parsed.scenario);
  assert.deepEqual(space.conflicts, []);
  for (const id of ["R1", "R2"]) {
    const v = space.variables.find((x) => x.element === id)!;
    assert.equal(v.lower, 5e-3, `${id} lower: today's size`);
    assert.equal(v.upper, 5e-3, `${id} upper: the feeder's order holds it at today's size`);
  }
});
