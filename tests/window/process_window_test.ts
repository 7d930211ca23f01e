import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import { processWindow } from "../../src/window/process_window.ts";
import { simulateScenario } from "../../src/network/simulate_scenario.ts";
import { unequalBranches } from "../network/_scenarios.ts";

Deno.test("process window of an isothermal power-law two-branch tool: the imbalance does not move (closed form)", () => {
  // With ΔP = K·f(Q) in every element, the same n everywhere and fronts at 0 Pa, scaling the
  // injection rate by c scales every flow by c (Kirchhoff's laws stay satisfied: each ΔP
  // scales by cⁿ), so every fill time scales by 1/c and the imbalance is unchanged; K cancels
  // from the split; and an isothermal power law has no temperature in it.
  const wire = unequalBranches("isothermal");
  const nominal = simulateScenario(wire);
  assert.ok(nominal.ok);
  const report = processWindow(wire);
  assert.equal(report.points.length, 17);
  assert.equal(report.failures.length, 0);
  for (const p of report.points) {
    assertClose(p.imbalancePercent, nominal.run.fill.imbalancePercent, {
      rel: 1e-6,
      what: `imbalance at ${JSON.stringify(p.levels)}`,
    });
  }
  for (const e of report.effects) assertClose(e.imbalancePoints, 0, { abs: 1e-6, what: e.factor });
  // The gate shear does move with the rate (shear ∝ Q): the sweep is not blind.
  assert.ok(report.gateShearRange[1] > 1.3 * report.gateShearRange[0]);
});

Deno.test("process window of a thermal tool: a range per design and the factors ranked by their effect", () => {
  const wire = unequalBranches("full");
  const report = processWindow(wire, { meltTemperatureK: 15 });
  assert.equal(report.points.length + report.failures.length, 17);
  assert.ok(report.imbalanceRange[1] >= report.imbalanceRange[0]);
  const sizes = report.effects.map((e) => Math.abs(e.imbalancePoints));
  for (let k = 1; k < sizes.length; k++) assert.ok(sizes[k] <= sizes[k - 1], "ranked");
  assert.ok(sizes[0] > 0, "a thermal tool's balance moves with the process");
});
