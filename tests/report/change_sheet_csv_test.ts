import assert from "node:assert/strict";
import { CHANGE_SHEET_COLUMNS, changeSheetCsv } from "../../src/report/change_sheet_csv.ts";
import { type Change, planChanges } from "../../src/optimize/change_list.ts";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";
import { currentDesign, designSpace } from "../../src/optimize/design_space.ts";
import { evaluateDesign } from "../../src/optimize/evaluate_design.ts";
import { stepStateJson } from "../../src/report/optimization_report.ts";
import { familyLayout } from "../support/family_layout.ts";

/** A change written by hand (sizes in m), not produced by the optimizer. */
function change(step: number, element: string, fromMm: number, toMm: number): Change {
  return {
    element,
    kind: "runner",
    section: "round",
    dimension: "diameter",
    from: fromMm / 1000,
    to: toMm / 1000,
    cutter: `${toMm} mm`,
    action: toMm >= fromMm ? "enlarge" : "add_steel",
    steelSafe: toMm >= fromMm,
    moldHalf: "both",
    step,
    together: false,
    aboveStart: false,
    after: {
      imbalancePercent: 2.5,
      feedPressurePeak: 61.25e6,
      runnerVolume: 4.5e-6,
      feasible: true,
      firstFullTime: 0.5,
      shortShot: [
        { cavity: "C1", fill: 1, mass: 2e-3 },
        { cavity: "C2", fill: 0.875, mass: 1.75e-3 },
      ],
    },
  };
}

/** RFC 4180 parsing, enough for the check: quoted fields with doubled quotes. */
function parseCsv(text: string): string[][] {
  const rows: string[][] = [];
  let row: string[] = [];
  let field = "";
  let quoted = false;
  for (let i = 0; i < text.length; i++) {
    const ch = text[i];
    if (quoted) {
      if (ch === '"' && text[i + 1] === '"') {
        field += '"';
        i++;
      } else if (ch === '"') quoted = false;
      else field += ch;
    } else if (ch === '"') quoted = true;
    else if (ch === ",") {
      row.push(field);
      field = "";
    } else if (ch === "\r" && text[i + 1] === "\n") {
      row.push(field);
      rows.push(row);
      row = [];
      field = "";
      i++;
    } else field += ch;
  }
  return rows;
}

Deno.test("change sheet CSV: header with units, one row per step in order, mm and inch", () => {
  const text = changeSheetCsv([change(1, "R4", 4, 5), change(2, "R1", 6.5, 7)]);
  const rows = parseCsv(text);
  assert.deepEqual(rows[0].slice(0, CHANGE_SHEET_COLUMNS.length), [...CHANGE_SHEET_COLUMNS]);
  assert.equal(rows.length, 3);
  const col = (name: string) => CHANGE_SHEET_COLUMNS.indexOf(name as never);
  assert.deepEqual(rows.slice(1).map((r) => r[col("element")]), ["R4", "R1"]);
  // 1 in = 25.4 mm exactly (international yard and pound agreement, 1959):
  // 5 mm = 0.19685 in, 6.5 mm = 0.25591 in, to four decimals.
  assert.equal(rows[1][col("to_in")], "0.1969");
  assert.equal(rows[2][col("from_in")], "0.2559");
  assert.equal(rows[1][col("to_mm")], "5.000");
  assert.equal(rows[1][col("feed_pressure_peak_after_MPa")], "61.25");
  // Each cavity's fill and short-shot mass follow the fixed columns: 0.875 → 87.50 %, 1.75 g.
  assert.deepEqual(rows[0].slice(CHANGE_SHEET_COLUMNS.length), [
    "C1_fill_percent",
    "C1_short_shot_g",
    "C2_fill_percent",
    "C2_short_shot_g",
  ]);
  assert.deepEqual(rows[1].slice(CHANGE_SHEET_COLUMNS.length), [
    "100.00",
    "2.000",
    "87.50",
    "1.750",
  ]);
  assert.equal(rows[1][col("steel_safe")], "yes");
});

Deno.test("change sheet CSV: a shrink is flagged as steel added, commas and quotes are quoted", () => {
  const shrink = { ...change(1, 'R"2', 6, 5), cutter: "5 mm, ball" };
  const rows = parseCsv(changeSheetCsv([shrink]));
  const col = (name: string) => CHANGE_SHEET_COLUMNS.indexOf(name as never);
  assert.equal(rows[1][col("element")], 'R"2');
  assert.equal(rows[1][col("cutter")], "5 mm, ball");
  assert.equal(rows[1][col("steel_safe")], "no (steel added: weld or insert)");
  assert.equal(rows[1][col("action")], "add_steel");
  assert.equal(rows[1].length, rows[0].length);
});

Deno.test("change sheet CSV: no change gives the header alone", () => {
  assert.equal(changeSheetCsv([]), CHANGE_SHEET_COLUMNS.join(",") + "\r\n");
});

Deno.test("change sheet CSV: a new tool's sizes are 'cut to', never steel added", () => {
  const shrink: Change = { ...change(1, "R2", 6, 5), action: "cut_to", steelSafe: true };
  const rows = parseCsv(changeSheetCsv([shrink]));
  const col = (name: string) => CHANGE_SHEET_COLUMNS.indexOf(name as never);
  assert.equal(rows[1][col("action")], "cut_to");
  assert.ok(!rows[1].join(",").toLowerCase().includes("steel added"));
});

Deno.test("change sheet CSV and optimization JSON agree on a trim plan, step 0 included", async () => {
  const parsed = parseScenario(familyLayout(4, { seed: 2 }), { materialIds: LIBRARY_MATERIAL_IDS });
  assert.ok(parsed.ok);
  parsed.scenario.goals.mode = "trim";
  const space = designSpace(parsed.scenario);
  const today = currentDesign(space);
  const x = today.map((v, j) => v * (j % 3 === 0 ? 0.9 : 1.05));
  const before = evaluateDesign(space, today);
  const after = evaluateDesign(space, x);
  assert.ok(before.ok && after.ok);
  const plan = await planChanges(space, before.evaluation, after.evaluation, undefined);
  assert.ok(plan.complete && plan.start);
  const rows = parseCsv(changeSheetCsv(plan.steps, { start: plan.start }));
  const header = rows[0];
  const at = (row: string[], name: string) => row[header.indexOf(name)];
  assert.equal(rows.length, 2 + plan.steps.length, "header, step 0, one row per change");
  assert.equal(at(rows[1], "step"), "0");
  const states = [plan.start, ...plan.steps.map((s) => s.after)];
  rows.slice(1).forEach((row, k) => {
    const json = stepStateJson(states[k]);
    assert.equal(Number(at(row, "imbalance_after_percent")), json.imbalance_percent);
    assert.equal(Number(at(row, "runner_volume_after_cm3")), json.runner_volume_cm3);
    assert.equal(Number(at(row, "first_full_s")), json.first_full_s);
    assert.equal(json.short_shot.length, 4);
    for (const c of json.short_shot) {
      assert.equal(Number(at(row, `${c.cavity}_fill_percent`)), c.fill_percent);
      assert.equal(Number(at(row, `${c.cavity}_short_shot_g`)), c.mass_g);
    }
    if (k > 0) assert.equal(Number(at(row, "step")), plan.steps[k - 1].step);
  });
});
