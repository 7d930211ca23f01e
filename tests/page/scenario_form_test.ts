import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import { METRIC_UNITS } from "../../src/page/display_units.ts";
import { applyFormField, readForm } from "../../src/page/scenario_form.ts";

const scenario = JSON.parse(
  await Deno.readTextFile(new URL("../../scenarios/family_four_housing.json", import.meta.url)),
);
const fahrenheit = { ...METRIC_UNITS, temperature: "F" as const };

Deno.test("the form reads the common settings", () => {
  const f = readForm(scenario, METRIC_UNITS);
  assert.equal(f.material, "pbt-unfilled");
  assert.equal(f.meltTemperature, 250);
  assert.equal(f.injectionKind, "flow_rate_cm3_s");
  assert.equal(f.injectionValue, 30);
  assert.equal(f.mode, "new_tool");
  assert.equal(f.maxImbalancePercent, 2);
  assert.equal(f.cutters, "metric");
  assert.equal(readForm(scenario, fahrenheit).meltTemperature, 482); // 250 °C = 482 °F
});

Deno.test("form edits write metric values back and leave the rest alone", () => {
  const hot = applyFormField(scenario, "meltTemperature", "500", fahrenheit) as typeof scenario;
  assertClose(hot.process.melt_temperature_C, 260, { abs: 1e-9 }); // 500 °F = 260 °C
  assert.deepEqual(hot.runners, scenario.runners);
  assert.equal(scenario.process.melt_temperature_C, 250, "input not mutated");
  const timed = applyFormField(
    scenario,
    "injectionKind",
    "fill_time_s",
    METRIC_UNITS,
  ) as typeof scenario;
  assert.deepEqual(Object.keys(timed.process.injection), ["fill_time_s"]);
  // 30 cm³/s becomes the default 1 s fill, not a 30 s one; the same kind keeps its value.
  assert.equal((timed.process.injection as { fill_time_s: number }).fill_time_s, 1);
  const same = applyFormField(
    scenario,
    "injectionKind",
    "flow_rate_cm3_s",
    METRIC_UNITS,
  ) as typeof scenario;
  assert.equal((same.process.injection as { flow_rate_cm3_s: number }).flow_rate_cm3_s, 30);
  const mode = applyFormField(scenario, "mode", "steel_safe", METRIC_UNITS) as typeof scenario;
  assert.equal(mode.goals.mode, "steel_safe");
  const blank = applyFormField(
    scenario,
    "maxImbalancePercent",
    "",
    METRIC_UNITS,
  ) as typeof scenario;
  assert.equal(blank.goals.max_imbalance_percent, 2, "an empty field changes nothing");
});
