import assert from "node:assert/strict";
import { materialById } from "../../src/materials/library.ts";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import type { ScenarioWire } from "../../src/model/scenario_schema.ts";
import { LIBRARY_MATERIAL_IDS, simulateScenario } from "../../src/network/simulate_scenario.ts";
import { unequalBranches } from "./_scenarios.ts";

const codes = (wire: ScenarioWire) => {
  const outcome = simulateScenario(wire);
  assert.ok(outcome.ok, JSON.stringify(!outcome.ok && outcome));
  return { codes: outcome.run.warnings.map((w) => w.code), run: outcome.run };
};

/** unequalBranches on ABS with its library window written out inline (220–260 °C melt, 50–80 °C mold). */
function abs(melt: number, mold: number, meltWindow: [number, number] = [220, 260]): ScenarioWire {
  const wire = unequalBranches("full");
  const material = structuredClone(materialById("abs-general")!);
  material.melt_temperature_range_C = meltWindow;
  material.mold_temperature_range_C = [50, 80];
  wire.material = material;
  wire.process.melt_temperature_C = melt;
  wire.process.mold_temperature_C = mold;
  return wire;
}

Deno.test("a melt temperature outside the resin's window is warned, at its threshold and not inside it", () => {
  assert.ok(!codes(abs(240, 60)).codes.includes("melt_outside_window"));
  assert.ok(!codes(abs(260, 60)).codes.includes("melt_outside_window"), "the top itself is inside");
  assert.ok(codes(abs(261, 60)).codes.includes("melt_outside_window"));
  assert.ok(codes(abs(215, 60)).codes.includes("melt_outside_window"));
});

Deno.test("a mold temperature outside the resin's window is warned", () => {
  assert.ok(!codes(abs(240, 50)).codes.includes("mold_outside_window"));
  assert.ok(codes(abs(240, 45)).codes.includes("mold_outside_window"));
  assert.ok(codes(abs(240, 85)).codes.includes("mold_outside_window"));
});

Deno.test("viscous heating past the window's top is warned on the hottest feed element, never on an isothermal run", () => {
  // A window whose top sits just above the melt: the gates' heating ΔT = ΔP/(ρ·cp) crosses it.
  const { codes: hot, run } = codes(abs(240, 60, [220, 241]));
  const hottest = run.fill.elements.filter((e) => e.kind !== "cavity")
    .reduce((a, b) => (b.temperatureAtSwitchover > a.temperatureAtSwitchover ? b : a));
  assert.ok(hottest.temperatureAtSwitchover > 241 + 273.15, "the gate does heat past 241 °C");
  assert.ok(hot.includes("heating_past_window"));
  const warning = run.warnings.find((w) => w.code === "heating_past_window")!;
  assert.equal(warning.element, hottest.id);
  // A roomy window: no warning.
  assert.ok(!codes(abs(240, 60, [220, 300])).codes.includes("heating_past_window"));
  const iso = abs(240, 60, [220, 241]);
  iso.process.thermal = "isothermal";
  assert.ok(!codes(iso).codes.includes("heating_past_window"));
});

Deno.test("contradictory resin data are validation errors with their paths", () => {
  const at = (wire: ScenarioWire) => {
    const parsed = parseScenario(wire, { materialIds: LIBRARY_MATERIAL_IDS });
    assert.ok(!parsed.ok);
    return parsed.issues.map((i) => `${i.at} ${i.code}`);
  };
  const ejection = abs(240, 60);
  const m = ejection.material as Exclude<ScenarioWire["material"], string>;
  m.ejection_temperature_C = m.no_flow_temperature_C + 5;
  assert.ok(at(ejection).includes("material.ejection_temperature_C ejection_above_no_flow"));
  const reversed = abs(240, 60, [260, 220]);
  assert.ok(at(reversed).includes("material.melt_temperature_range_C range_reversed"));
  const cold = abs(240, 60);
  (cold.material as typeof m).no_flow_temperature_C = 245;
  assert.ok(at(cold).includes("process.melt_temperature_C melt_below_no_flow"));
});
