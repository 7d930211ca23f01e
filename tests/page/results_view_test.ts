import assert from "node:assert/strict";
import { simulateScenario } from "../../src/network/simulate_scenario.ts";
import { resultJson } from "../../src/report/result_json.ts";
import type { optimizationJson } from "../../src/report/optimization_report.ts";
import { formatNumber, METRIC_UNITS } from "../../src/page/display_units.ts";
import {
  cavityTableHtml,
  changeSheetHtml,
  changeSizeText,
  changeTableHtml,
  elementTableHtml,
  fillChartSvg,
  fillsAfterSwitchover,
  pathPressureSvg,
  pathProfiles,
  pressChartsSvg,
  summaryHtml,
  velocityPhase,
  verdictHtml,
  warningsHtml,
} from "../../src/page/results_view.ts";
import type { ChangeEntry, OptimizationResult, SimulationResult } from "../../src/page/wire.ts";
import { assertClose } from "../assert_close.ts";
import { singleLine } from "../network/_scenarios.ts";

// The page's wire types must accept what the report module produces: checked when this file
// type-checks (the result JSON by the typed assignment in `simulated` below).
type Fits<A, B> = A extends B ? true : false;
const _optimizationFits: Fits<ReturnType<typeof optimizationJson>, OptimizationResult> = true;

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

const change: ChangeEntry = {
  element: "R4",
  kind: "runner",
  section: "round",
  dimension: "diameter",
  from_mm: 5,
  to_mm: 7,
  from_in: 0.19685,
  to_in: 0.27559,
  cutter: "7 mm",
  steel_safe: true,
  mold_half: "both",
  step: 1,
  after_step: {
    imbalance_percent: 8.592,
    feed_pressure_peak_MPa: 105.83,
    runner_volume_cm3: 6.6488,
    limits_met: false,
  },
};

Deno.test("change list: mm and inch side by side, cutter, steel, effect of the step", () => {
  assert.equal(changeSizeText(change, "to", units), "7 mm (0.2756 in)");
  // from_in 0.19685 is already rounded; 5 mm = 0.196850… in rounds once to 0.1969
  assert.equal(changeSizeText(change, "from", units), "5 mm (0.1969 in)");
  assert.equal(changeSizeText(change, "to", { ...units, length: "in" }), "0.2756 in (7 mm)");
  const html = changeTableHtml([change, { ...change, step: 2, steel_safe: false }], units);
  assert.ok(html.includes('data-step="1" data-element="R4"'));
  assert.ok(html.includes("7 mm"));
  assert.ok(html.includes("ADD STEEL"));
  assert.ok(html.includes('data-field="imbalance" data-value="8.592"'));
});

Deno.test("change sheet: header, layout, changes, effect, cautions, sign-off", () => {
  const r = simulated();
  const opt: OptimizationResult = {
    format: "evenfill.optimization/1",
    status: "converged",
    reason: "imbalance within target",
    would_need: [],
    snapping: null,
    before: r,
    after: r,
    changes: [change],
    iterations: [],
  };
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
  const opt: OptimizationResult = {
    format: "evenfill.optimization/1",
    status: "converged",
    reason: "every limit met",
    would_need: [],
    snapping: null,
    before: r,
    after: r,
    changes: [],
    iterations: [],
  };
  assert.ok(!verdictHtml(opt).includes("fill simulations"), "nothing claimed when not reported");
  const html = verdictHtml({ ...opt, simulations: 42, slopes: "finite_difference" });
  assert.ok(html.includes("42 fill simulations"));
  assert.ok(html.includes("finite differences (one simulation per size)"));
  assert.ok(verdictHtml({ ...opt, simulations: 7, slopes: "tangent" }).includes("(tangent)"));
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
  const opt: OptimizationResult = {
    format: "evenfill.optimization/1",
    status: "cancelled",
    reason: "no step the linear model trusts",
    would_need: [],
    snapping: null,
    before: r,
    after: r,
    changes: [change],
    iterations: [],
  };
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
