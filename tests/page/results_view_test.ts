import assert from "node:assert/strict";
import { simulateScenario } from "../../src/network/simulate_scenario.ts";
import { resultJson } from "../../src/report/result_json.ts";
import { formatNumber, METRIC_UNITS } from "../../src/page/display_units.ts";
import {
  cavityTableHtml,
  changeSheetHtml,
  changeSizeText,
  changeTableHtml,
  elementTableHtml,
  fillChartSvg,
  fillsAfterSwitchover,
  frontTableHtml,
  pathPressureSvg,
  pathProfiles,
  pressChartsSvg,
  shortShotTableHtml,
  summaryHtml,
  velocityPhase,
  verdictHtml,
  warningsHtml,
} from "../../src/page/results_view.ts";
import type { SimulationResult } from "../../src/page/wire.ts";
import { assertClose } from "../assert_close.ts";
import { singleLine } from "../network/_scenarios.ts";
import { change as changeOf, optimization, stepState } from "./_fixtures.ts";

const scenario = JSON.parse(
  await Deno.readTextFile(new URL("../../scenarios/family_four_housing.json", import.meta.url)),
);

function simulated(input: unknown = scenario): SimulationResult {
  const outcome = simulateScenario(input);
  if (!outcome.ok) throw new Error("demo should simulate");
  const json: SimulationResult = resultJson(outcome.run, { history: true });
  return json;
}

const units = METRIC_UNITS;

Deno.test("the report's JSON fits the page's wire types", () => {
  const r = simulated();
  assert.equal(r.cavities.length, 4);
  assert.ok((r.history ?? []).length > 2);
});

Deno.test("per-cavity table: one row per cavity with the API's raw values", () => {
  const r = simulated();
  const html = cavityTableHtml({ kind: "simulation", result: r });
  for (const c of r.cavities) {
    assert.ok(
      html.includes(
        `data-cavity="${c.id}" data-field="fill_time_s" data-which="result" data-value="${c.fill_time_s}"`,
      ),
      c.id,
    );
  }
  // the demo's tunnel gates over-shear: flagged in a way that prints (▲ via CSS class)
  assert.ok(html.includes('class="num over"'));
});

Deno.test("pressure along a path starts at the path's total and ends at zero", () => {
  const r = simulated();
  const profiles = pathProfiles(r);
  assert.equal(profiles.length, 4);
  for (const p of profiles) {
    const path = r.paths!.find((x) => x.cavity === p.cavity)!;
    // As the first cavity fills, every path runs from the feed pressure to a 0 Pa front.
    assertClose(p.points[0][1], path.total_first_full_MPa!, { rel: 1e-5 }); // JSON: 6 digits
    assertClose(p.points[p.points.length - 1][1], 0, { abs: 1e-9 });
    // distance grows by each element's length: sprue 60 mm first
    assert.equal(p.points[1][0], 60);
  }
});

Deno.test("charts and summary render for a simulation", () => {
  const r = simulated();
  const shown = { kind: "simulation" as const, result: r };
  const ctx = { scenario, units };
  assert.equal((fillChartSvg(r, { title: "x" }).match(/class="series"/g) ?? []).length, 4);
  assert.ok(pathPressureSvg(shown, ctx).includes("distance from the nozzle"));
  const press = pressChartsSvg(shown, ctx);
  assert.ok(press.includes("press limit") && press.includes("press rating"));
  assert.ok(summaryHtml(shown, ctx).includes('data-figure="clamp"'));
  assert.ok(warningsHtml(r).includes("gate_shear_over_limit"));
});

const change = changeOf();

Deno.test("change list: mm and inch side by side, cutter, steel, effect of the step", () => {
  assert.equal(changeSizeText(change, "to", units), "7 mm (0.2756 in)");
  // from_in 0.19685 is already rounded; 5 mm = 0.196850… in rounds once to 0.1969
  assert.equal(changeSizeText(change, "from", units), "5 mm (0.1969 in)");
  assert.equal(changeSizeText(change, "to", { ...units, length: "in" }), "0.2756 in (7 mm)");
  const html = changeTableHtml([
    change,
    changeOf({ step: 2, action: "add_steel", steel_safe: false }),
  ], units);
  assert.ok(html.includes('data-step="1" data-element="R4"'));
  assert.ok(html.includes("7 mm"));
  assert.ok(html.includes("ADD STEEL"));
  assert.ok(html.includes('data-field="imbalance" data-value="8.592"'));
});

Deno.test("change sheet: header, layout, changes, effect, cautions, sign-off", () => {
  const r = simulated();
  const opt = optimization(r, { reason: "imbalance within target", changes: [change] });
  const html = changeSheetHtml(opt, {
    toolName: "Four-part housing",
    date: "2026-12-02",
    layout: "<svg></svg>",
    units,
  });
  for (const text of ["Four-part housing", "2026-12-02", "<svg></svg>", "Sign-off", "Cautions"]) {
    assert.ok(html.includes(text), text);
  }
  for (const caution of r.cautions) assert.ok(html.includes(caution.slice(0, 30)));
  assert.ok(html.includes('id="sheet-changes"'));
});

Deno.test("verdict: says how many simulations the optimizer ran and where its slopes came from", () => {
  const r = simulated();
  const opt = optimization(r, { reason: "every limit met" });
  const html = verdictHtml({ ...opt, simulations: 42, slopes: "finite_difference" });
  assert.ok(html.includes("42 fill simulations"));
  assert.ok(html.includes("finite differences (one simulation per size)"));
  assert.ok(verdictHtml({ ...opt, simulations: 7, slopes: "tangent" }).includes("(tangent)"));
});

Deno.test("verdict and sheet: a search that converged but whose cutter sizes miss a goal never says 'Goals met'", () => {
  const r = simulated();
  const missed = optimization(r, {
    status: "converged",
    after_limits_met: false,
    after_violations: ["imbalance 6.55 % > 2 %", "gate G3 shear 53076 1/s > 50000 1/s"],
  });
  const sheet = changeSheetHtml(missed, { toolName: "T", date: "2026-12-03", layout: "", units });
  for (const html of [verdictHtml(missed), sheet]) {
    assert.ok(!html.includes("Goals met"), "no 'Goals met' over a design that misses");
    assert.ok(html.includes("Goals not met in cutter sizes"));
    assert.ok(
      html.includes("imbalance 6.55 % &gt; 2 %") || html.includes("imbalance 6.55 % > 2 %"),
    );
  }
  // Met in cutter sizes: the plain word.
  const met = optimization(r, { status: "converged", after_limits_met: true });
  assert.ok(verdictHtml(met).includes("Goals met"));
});

Deno.test("path distances come with the result: a radial cavity adds its gate-to-rim radius", () => {
  // A centre-gated disk of volume V and wall H holding r_g² + V/(πH) = R² (disk geometry):
  // 20 cm³ at 2 mm with a 1 mm gate radius reaches R = √(1 + 20000/(2π)) mm = 56.43 mm.
  const outcome = simulateScenario(
    singleLine({ feed: "hot_drop", gate: "pin", cavity: "radial" }),
  );
  assert.ok(outcome.ok);
  const r = resultJson(outcome.run) as SimulationResult;
  const [profile] = pathProfiles(r);
  const rim = Math.sqrt(1 + 20000 / (2 * Math.PI));
  const hot = 40, runner = 50, land = 1; // hot drop, runner and gate lengths of the scenario
  assertClose(profile.points.at(-1)![0], hot + runner + land + (rim - 1), {
    rel: 1e-6,
    what: "distance to the rim, mm",
  });
});

Deno.test("velocity phase: the history ends on switchover; the charts mark it and stop there", () => {
  const r = simulated();
  const sw = r.switchover_time_s!;
  assert.ok(sw < r.fill_time_s!, "the demo switches over before the last cavity is full");
  const phase = velocityPhase(r);
  assert.equal(phase.at(-1)!.time_s, sw);
  assert.ok(phase.every((h) => h.time_s! <= sw));
  // the highest pressure drawn is the headline peak (peaks are taken up to switchover)
  const drawn = Math.max(...phase.map((h) => h.feed_pressure_MPa!));
  assertClose(drawn, r.feed_pressure_peak_MPa!, { rel: 1e-6, what: "MPa, 6 digits in JSON" });
  const svg = fillChartSvg(r, { title: "x", switchoverPercent: 98 });
  assert.match(svg, new RegExp(`data-mark="switchover" data-x="${sw}"`));
  // a cavity still filling at switchover ends at its fill % then, shown in its label
  const late = r.cavities.filter((c) => fillsAfterSwitchover(c, r));
  assert.ok(late.length > 0);
  for (const c of late) {
    assert.ok(svg.includes(`>${c.id} ${formatNumber(c.fill_percent_at_switchover, 3)} %<`), c.id);
  }
  const press = pressChartsSvg({ kind: "simulation", result: r }, { scenario, units });
  assert.equal((press.match(/data-mark="switchover"/g) ?? []).length, 2);
});

Deno.test("velocity phase: a switchover between two samples is interpolated onto", () => {
  const r = simulated();
  const h = r.history!;
  const k = h.findIndex((x) => x.time_s! > r.switchover_time_s!);
  const t = (h[k - 1].time_s! + h[k].time_s!) / 2;
  const phase = velocityPhase({ ...r, switchover_time_s: t });
  assert.equal(phase.length, k + 1);
  assert.equal(phase.at(-1)!.time_s, t);
  assertClose(
    phase.at(-1)!.injected_cm3!,
    (h[k - 1].injected_cm3! + h[k].injected_cm3!) / 2,
    { rel: 1e-12, what: "linear between the samples" },
  );
});

Deno.test("element table: every runner and gate with drop, shear, heating, frozen layer, freeze", () => {
  const r = simulated();
  const html = elementTableHtml(r, units, scenario.process.melt_temperature_C, {
    holdTime_s: 1,
  });
  const channels = r.elements.filter((e) => e.kind !== "cavity");
  for (const e of channels) {
    for (const field of ["pressure_drop_end_MPa", "wall_shear_rate_peak_1_s", "freeze_time_s"]) {
      assert.ok(html.includes(`data-field="${field}"`), `${e.id} ${field}`);
    }
    assert.ok(html.includes(`data-element="${e.id}"`), e.id);
  }
  // the demo's G1 freezes in 1.25 s: past a 1 s hold it is flagged, within a 2 s hold not
  const g1 = r.freeze!.entries!.find((f) => f.id === "G1")!;
  assert.ok(g1.freeze_time_s! > 1 && g1.freeze_time_s! < 2);
  const row = (h: string) =>
    h.slice(h.indexOf('data-element="G1"'), h.indexOf("</tr>", h.indexOf('data-element="G1"')));
  assert.match(row(html), /still open when the hold ends/);
  const longer = elementTableHtml(r, units, 250, { holdTime_s: 2 });
  assert.doesNotMatch(row(longer), /still open/);
  assert.match(row(longer), /seals within the hold/);
});

Deno.test("change sheet: stale marks it on screen and in print; cancelled says best design so far", () => {
  const r = simulated();
  const opt = optimization(r, {
    status: "cancelled",
    reason: "no step the linear model trusts",
    changes: [change],
  });
  const options = { toolName: "T", date: "2026-12-02", layout: "", units };
  const fresh = changeSheetHtml(opt, options);
  assert.match(fresh, /data-stale="false"/);
  assert.doesNotMatch(fresh, /Out of date/);
  const stale = changeSheetHtml(opt, { ...options, stale: true });
  assert.match(stale, /class="sheet stale"/);
  assert.match(stale, /Out of date — run again/);
  assert.match(fresh, /Cancelled — best design so far/);
  for (const field of ["Tool no.", "Press", "Resin lot", "Revision"]) {
    assert.ok(fresh.includes(field));
  }
  // optimizer words stay in the advanced fold of the verdict, not on the sheet
  assert.doesNotMatch(fresh, /linear model/);
  const verdict = verdictHtml(opt);
  assert.ok(verdict.indexOf("linear model") > verdict.indexOf("<details"));
});

// ---- the change list as the optimization JSON now gives it (actions, steps, short shots)

/** Rows of a table body as HTML strings, `<tr …>` through `</tr>`. */
const rowsOf = (html: string) => html.match(/<tr\b[^>]*>.*?<\/tr>/gs) ?? [];

const shots = (a: number, b: number): [string, number, number][] => [
  ["A1", 100, 12.345],
  ["B2", a, 10.5],
  ["C3", b, 8.25],
];

/** An existing tool's plan: step 0, R1 alone, R2+R3 cut together, G1 above today's. */
function existingPlan(r: SimulationResult) {
  const after = (imbalance: number, a: number, b: number) => stepState(imbalance, shots(a, b));
  return optimization(r, {
    changes_start: after(9.5, 93.1, 90.2),
    changes: [
      changeOf({ element: "R1", step: 1, after_step: after(6.25, 95.5, 92.75) }),
      changeOf({ element: "R2", step: 2, cut_together: true, after_step: after(3.5, 97, 96.5) }),
      changeOf({ element: "R3", step: 2, cut_together: true, after_step: after(3.5, 97, 96.5) }),
      changeOf({
        element: "G1",
        kind: "gate",
        dimension: "thickness",
        action: "add_steel",
        steel_safe: false,
        step: 3,
        above_start: true,
        above_start_reason: "no single change left keeps the imbalance at or below 9.50 %",
        after_step: after(10.75, 91.25, 89.5),
      }),
    ],
    front: [
      {
        max_changes: 1,
        changed: ["R1"],
        imbalance_percent: 6.2,
        runner_mass_g: 7.5,
        limits_met: false,
        change_cost: 1,
        chosen: false,
      },
      {
        max_changes: 2,
        changed: ["R1", "G1"],
        imbalance_percent: 2.9,
        runner_mass_g: 8.125,
        limits_met: true,
        change_cost: 2,
        chosen: true,
      },
      {
        max_changes: 4,
        changed: ["R1", "R2", "R3", "G1"],
        imbalance_percent: 1.1,
        runner_mass_g: 8.5,
        limits_met: true,
        change_cost: 4,
        chosen: false,
      },
    ],
  });
}

/** A new tool: three sizes cut as drawn, each carrying the final design. */
function newToolPlan(r: SimulationResult) {
  const final = stepState(1.5, shots(99.5, 98.75));
  return optimization(r, {
    changes: ["R1", "R2", "G1"].map((element, k) =>
      changeOf({ element, step: k + 1, action: "cut_to", steel_safe: true, after_step: final })
    ),
  });
}

Deno.test("a new tool's change list and sheet say 'cut to', never enlarge or add steel", () => {
  const opt = newToolPlan(simulated());
  const options = { toolName: "T", date: "2026-12-02", layout: "", units };
  for (
    const html of [
      changeTableHtml(opt.changes, units),
      changeTableHtml(opt.changes, units, { sheet: true }),
      changeSheetHtml(opt, options),
    ]
  ) {
    assert.equal((html.match(/data-action="cut_to"/g) ?? []).length, 3);
    assert.equal((html.match(/>cut to</g) ?? []).length >= 3, true, "'cut to' on every line");
    assert.doesNotMatch(html, /add steel|enlarge|steel-safe/i);
  }
  // the final design's figures once, not once per size
  const sheet = changeTableHtml(opt.changes, units, { sheet: true });
  assert.equal((sheet.match(/data-field="imbalance"/g) ?? []).length, 1);
  assert.match(sheet, /rowspan="3"[^>]*data-field="imbalance" data-value="1.5"/);
});

Deno.test("changes cut together: one step, one number, marked 'cut together'", () => {
  const opt = existingPlan(simulated());
  for (const sheet of [false, true]) {
    const html = changeTableHtml(opt.changes, units, { sheet, start: opt.changes_start });
    const numbers = [...html.matchAll(/data-step-number="(\d+)"/g)].map((m) => m[1]);
    assert.deepEqual(numbers, ["1", "2", "3"], `sheet ${sheet}: one number per step`);
    const step2 = rowsOf(html).filter((row) => row.includes('data-step="2"'));
    assert.equal(step2.filter((row) => row.includes("data-element")).length, 2, "both changes");
    assert.match(step2[0], /rowspan="2" data-step-number="2">2<br>.*cut together/);
    assert.doesNotMatch(step2[1], /data-step-number|cut together/);
    assert.equal((html.match(/cut together/g) ?? []).length, 1);
    // the step's imbalance once, for both of its changes
    assert.equal(step2.join("").match(/data-field="imbalance"/g)?.length, 1);
  }
});

Deno.test("a step above today's imbalance is flagged with its reason; today's tool is step 0", () => {
  const opt = existingPlan(simulated());
  const reason = opt.changes[3].above_start_reason!;
  for (const sheet of [false, true]) {
    const html = changeTableHtml(opt.changes, units, { sheet, start: opt.changes_start });
    assert.match(html, /data-field="imbalance" data-value="10.75" data-above-start="true"/);
    assert.equal((html.match(/data-above-start="true"/g) ?? []).length, 2, "the cell and a note");
    assert.ok(
      html.includes(`step 3 is above today&#39;s imbalance: ${reason}`) ||
        html.includes(`step 3 is above today's imbalance: ${reason}`),
      `sheet ${sheet}`,
    );
    const zero = rowsOf(html).find((row) => row.includes('data-step="0"'))!;
    assert.match(zero, /today's tool/);
    assert.match(zero, /data-field="imbalance" data-value="9.5"/);
  }
  const steps = changeTableHtml(opt.changes, units, { start: opt.changes_start });
  assert.doesNotMatch(steps.replace(/data-step="3"[^]*?<\/tr>/g, ""), /above today/);
});

Deno.test("short shot after each step: every cell is the JSON's fill % and mass", () => {
  const opt = existingPlan(simulated());
  const html = shortShotTableHtml(opt, units);
  const cells = [...html.matchAll(
    /data-step="(\d+)" data-cavity="([^"]+)" data-fill="([^"]+)" data-mass-g="([^"]+)">([^<]*)<span class="muted">([^<]*)</g,
  )];
  const states = [
    opt.changes_start!,
    ...opt.changes.filter((c, k, all) => k === all.length - 1 || all[k + 1].step !== c.step).map((
      c,
    ) => c.after_step),
  ];
  const expected = states.flatMap((s, k) =>
    s.short_shot.map((c) => [String([0, 1, 2, 3][k]), c.cavity, c.fill_percent, c.mass_g])
  );
  assert.equal(cells.length, expected.length, "one cell per cavity and step, step 0 included");
  cells.forEach((m, k) => {
    const [step, cavity, fill, mass] = expected[k];
    assert.deepEqual([m[1], m[2], Number(m[3]), Number(m[4])], [step, cavity, fill, mass]);
    assert.equal(m[5].trim(), `${formatNumber(fill as number, 3)} %`);
    assert.equal(m[6], `${formatNumber(mass as number, 3)} g`);
  });
  // US units: the mass in ounces (28.349523125 g per oz, the international avoirdupois ounce)
  const us = shortShotTableHtml(opt, { ...units, length: "in" });
  assert.match(
    us,
    /data-cavity="A1" data-fill="100" data-mass-g="12.345">100 % <span class="muted">0.435 oz</,
  );
  // the printed sheet: the first cavity full and the lowest, per step
  const sheet = changeTableHtml(opt.changes, units, { sheet: true, start: opt.changes_start });
  const step1 = rowsOf(sheet).find((row) => row.includes('data-step="1"'))!;
  assert.match(step1, /data-cavity="A1"[^>]*>A1 full<\/span>/);
  assert.match(step1, /data-cavity="C3" data-fill="92.75" data-mass-g="8.25">C3 92.8 % 8.25 g</);
  // a new tool: one row, the design with every size cut
  const fresh = shortShotTableHtml(newToolPlan(simulated()), units);
  assert.equal(rowsOf(fresh).filter((row) => row.includes("data-step=")).length, 1);
  assert.match(fresh, /all cut/);
});

Deno.test("fewest changes: one row per number of changes, exactly one marked as the plan taken", () => {
  const opt = existingPlan(simulated());
  const html = frontTableHtml(opt, units);
  const rows = rowsOf(html).filter((row) => row.includes("data-max-changes"));
  assert.equal(rows.length, 3);
  const chosen = rows.filter((row) => row.includes('data-chosen="true"'));
  assert.equal(chosen.length, 1);
  assert.match(chosen[0], /data-max-changes="2"/);
  assert.match(chosen[0], /R1, G1/);
  assert.equal((html.match(/plan taken/g) ?? []).length, 2, "the mark and the sentence");
  assert.match(html, /first, with the fewest changes, that meets every limit/);
  assert.match(rows[1], /data-field="runner" data-value="8.125">8.13 g/);
  assert.match(frontTableHtml(opt, { ...units, length: "in" }), /0.287 oz/);
  assert.equal(frontTableHtml(newToolPlan(simulated()), units), "", "nothing for a new tool");
});

Deno.test("no change list: the reason in plain words", () => {
  const opt = optimization(simulated(), {
    status: "cancelled",
    changes_omitted: "cancelled by request before the change plan",
  });
  const html = changeTableHtml(opt.changes, units, { omitted: opt.changes_omitted });
  assert.match(html, /No change list: the run was cancelled by request before the change plan/);
  const sheet = changeSheetHtml(opt, { toolName: "T", date: "2026-12-02", layout: "", units });
  assert.match(sheet, /No change list: the run was cancelled by request/);
  assert.match(changeTableHtml([], units), /No change proposed/);
});
