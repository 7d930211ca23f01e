import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import {
  factorChoices,
  factorTableHtml,
  measurementsFromRows,
  scenarioAfterChanges,
  shotRowProblems,
  shotRowsFrom,
  windowViewHtml,
} from "../../src/page/calibration_view.ts";
import { METRIC_UNITS } from "../../src/page/display_units.ts";
import type { CalibrationResult, WindowJobResult } from "../../src/page/wire.ts";
import { change } from "./_fixtures.ts";

const US = { ...METRIC_UNITS, length: "in" as const, temperature: "F" as const };
const tool = {
  cavities: [{ id: "C1", name: "lid" }, { id: "C2" }],
  gates: [{ id: "G1", cavity: "C1" }, { id: "G2", cavity: "C2" }],
  runners: [{ id: "R1" }],
  measurements: {
    short_shots: [
      { shot_percent: 60, parts: [{ cavity: "C1", mass_g: 28.349523125 }] },
      { injected_cm3: 5, parts: [{ cavity: "C2", fill_percent: 40 }] },
    ],
  },
};

Deno.test("mass table: prefilled from the block in oz with US units, written back in g, other shots kept", () => {
  const rows = shotRowsFrom(tool, US);
  assert.equal(rows.length, 1, "only shots sized in % with masses are in the table");
  assert.equal(
    rows[0].masses.C1,
    "1",
    "28.349523125 g is one avoirdupois ounce (NIST SP 811, B.8)",
  );
  rows[0].masses.C2 = "2";
  const block = measurementsFromRows(rows, tool, US);
  assert.equal(block.short_shots.length, 2);
  assert.deepEqual(
    block.short_shots[0],
    tool.measurements.short_shots[1],
    "volume-sized shot kept",
  );
  const typed = block.short_shots[1];
  assert.equal(typed.shot_percent, 60);
  assertClose(typed.parts[1].mass_g!, 2 * 28.349523125, { rel: 1e-7 });
});

Deno.test("mass table problems: a missing shot size, a bad mass, nothing weighed", () => {
  assert.match(
    shotRowProblems([{ shotPercent: "", masses: { C1: "3" } }], tool).join(" "),
    /shot size/,
  );
  assert.match(
    shotRowProblems([{ shotPercent: "50", masses: { C1: "-1" } }], tool).join(" "),
    /above 0/,
  );
  assert.deepEqual(shotRowProblems([{ shotPercent: "", masses: {} }], tool), [
    "Weigh at least one part of one short shot.",
  ]);
  assert.deepEqual(shotRowProblems([{ shotPercent: "50", masses: { C1: "3" } }], tool), []);
});

Deno.test("factor choices: the lot, each gate, each branch, the melt; fitted factors say 'not identified' plainly", () => {
  assert.deepEqual(factorChoices(tool).map((c) => c.key), [
    "viscosity",
    "gate:G1",
    "gate:G2",
    "runner:R1",
    "melt",
  ]);
  const result = {
    factors: [
      {
        factor: { kind: "gate_size", gate: "G1" },
        name: "gate G1 size",
        nominal: 1,
        value: 0.912,
        standard_error: 0.02,
        identified: true,
        at_bound: false,
        bounds: [0.7, 1.3],
      },
      {
        factor: { kind: "melt_temperature" },
        name: "melt temperature",
        nominal: 0,
        value: 2,
        standard_error: 9,
        identified: false,
        at_bound: false,
        bounds: [-30, 30],
      },
    ],
  } as unknown as CalibrationResult;
  const html = factorTableHtml(result, US);
  assert.match(html, /× 0\.912/);
  assert.match(html, /\+3\.6 °F/, "a 2 K offset is 3.6 °F steps");
  assert.match(html, /data-identified="false"[^]*Not identified/);
});

Deno.test("after design: the change list cut into the scenario; a runner's width follows its diameter", () => {
  const scenario = {
    runners: [{ id: "R1", diameter_mm: 4, width_mm: 5 }],
    gates: [{ id: "G1", thickness_mm: 1 }],
  };
  const changes = [
    change({ element: "R1", kind: "runner", dimension: "diameter", from_mm: 4, to_mm: 5 }),
    change({ element: "G1", kind: "gate", dimension: "thickness", from_mm: 1, to_mm: 1.2 }),
  ];
  const after = scenarioAfterChanges(scenario, changes);
  assert.equal(after.runners[0].diameter_mm, 5);
  assertClose(after.runners[0].width_mm, 6.25, { rel: 1e-12 });
  assert.equal(after.gates[0].thickness_mm, 1.2);
  assert.equal(scenario.runners[0].diameter_mm, 4, "the original is untouched");
});

Deno.test("window view: a range bar per design, thousands separators, the biggest mover in words", () => {
  const design = (d: "today" | "after", lo: number, hi: number) => ({
    design: d,
    name: d,
    points: [],
    imbalance_range_percent: [lo, hi] as [number, number],
    gate_shear_range_1_s: [12000, 31500] as [number, number],
    effects: [{ factor: "rate" as const, imbalance_points: -1.5 }, {
      factor: "melt" as const,
      imbalance_points: 0.2,
    }],
    failures: [],
  });
  const result: WindowJobResult = {
    format: "evenfill.window/1",
    range: {
      melt_temperature_K: 10,
      mold_temperature_K: 10,
      injection_rate_percent: 20,
      viscosity_percent: 15,
    },
    designs: [design("today", 3, 6), design("after", 0.2, 0.9)],
    stopped_because: null,
  };
  const html = windowViewHtml(result, METRIC_UNITS);
  assert.equal((html.match(/class="range"/g) ?? []).length, 4, "two designs × two charts");
  assert.match(html, /between 12,000 and 31,500 1\/s/);
  assert.match(html, /Injection rate moves the balance most[^<]*shrinks by 1\.5 points/);
});
