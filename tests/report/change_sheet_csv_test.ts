import assert from "node:assert/strict";
import { CHANGE_SHEET_COLUMNS, changeSheetCsv } from "../../src/report/change_sheet_csv.ts";
import type { Change } from "../../src/optimize/change_list.ts";

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
    steelSafe: toMm >= fromMm,
    moldHalf: "both",
    step,
    after: {
      imbalancePercent: 2.5,
      feedPressurePeak: 61.25e6,
      runnerVolume: 4.5e-6,
      feasible: true,
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
  assert.deepEqual(rows[0], [...CHANGE_SHEET_COLUMNS]);
  assert.equal(rows.length, 3);
  const col = (name: string) => CHANGE_SHEET_COLUMNS.indexOf(name as never);
  assert.deepEqual(rows.slice(1).map((r) => r[col("element")]), ["R4", "R1"]);
  // 1 in = 25.4 mm exactly (international yard and pound agreement, 1959):
  // 5 mm = 0.19685 in, 6.5 mm = 0.25591 in, to four decimals.
  assert.equal(rows[1][col("to_in")], "0.1969");
  assert.equal(rows[2][col("from_in")], "0.2559");
  assert.equal(rows[1][col("to_mm")], "5.000");
  assert.equal(rows[1][col("feed_pressure_peak_after_MPa")], "61.3");
  assert.equal(rows[1][col("steel_safe")], "yes");
});

Deno.test("change sheet CSV: a shrink is flagged as steel added, commas and quotes are quoted", () => {
  const shrink = { ...change(1, 'R"2', 6, 5), cutter: "5 mm, ball" };
  const rows = parseCsv(changeSheetCsv([shrink]));
  const col = (name: string) => CHANGE_SHEET_COLUMNS.indexOf(name as never);
  assert.equal(rows[1][col("element")], 'R"2');
  assert.equal(rows[1][col("cutter")], "5 mm, ball");
  assert.equal(rows[1][col("steel_safe")], "no (steel added: weld or insert)");
  assert.equal(rows[1].length, CHANGE_SHEET_COLUMNS.length);
});

Deno.test("change sheet CSV: no change gives the header alone", () => {
  assert.equal(changeSheetCsv([]), CHANGE_SHEET_COLUMNS.join(",") + "\r\n");
});
