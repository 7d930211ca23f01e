import assert from "node:assert/strict";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";
import { optimizeBalance } from "../../src/optimize/balance.ts";
import { changeSheetCsv } from "../../src/report/change_sheet_csv.ts";
import { optimizationJson, optimizationText } from "../../src/report/optimization_report.ts";
import { OptimizationSchema } from "../../src/wire/optimization.ts";

/**
 * The four-part family demo is a new tool: its change sheet, in every format, says what
 * to cut to and never asks for steel to be added.
 */
Deno.test("new-tool demo through the optimizer: text, CSV and JSON say 'cut to', never add steel", async () => {
  const url = new URL("../../scenarios/family_four_housing.json", import.meta.url);
  const parsed = parseScenario(JSON.parse(await Deno.readTextFile(url)), {
    materialIds: LIBRARY_MATERIAL_IDS,
  });
  assert.ok(parsed.ok);
  assert.equal(parsed.scenario.goals.mode, "new_tool");
  const result = await optimizeBalance(parsed.scenario);
  assert.ok(result.ok, !result.ok ? result.message : "");
  const o = result.outcome;
  const plan = o.changes;
  assert.ok(plan, o.changesOmitted);
  assert.ok(plan.steps.length > 0, "the demo's drawing changes");
  assert.ok(plan.steps.some((s) => s.to < s.from), "some sizes come out smaller than drawn");
  assert.equal(plan.simulations, 0);
  const json = OptimizationSchema.parse(optimizationJson(o));
  assert.equal(json.changes.length, plan.steps.length);
  for (const c of json.changes) {
    assert.equal(c.action, "cut_to");
    assert.equal(c.above_start, false);
  }
  assert.equal(json.changes_start, null, "no today's tool");
  const text = optimizationText(o);
  const csv = changeSheetCsv(plan.steps, { start: plan.start });
  for (const [what, sheet] of [["text", text], ["csv", csv]]) {
    assert.ok(!/add(ed)? steel|steel add/i.test(sheet), `${what} asks for steel`);
    assert.ok(/cut[ _]to/i.test(sheet), `${what} says cut to`);
  }
});
