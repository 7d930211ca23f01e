import { type ChartSeries, escapeXml as esc, lineChart, markerSvg, seriesStyle } from "./chart.ts";
import {
  type DisplayUnits,
  forceFromKn,
  formatForce,
  formatLength,
  formatNumber,
  formatPressure,
  lengthFromMm,
  pressureFromMpa,
  unitSymbol,
} from "./display_units.ts";
import type { CavityResult, ChangeEntry, OptimizationResult, SimulationResult } from "./wire.ts";

/**
 * The result views as HTML strings: summary, per-cavity table, change list,
 * charts (fill %, pressure along each path, press loads) and the printable
 * change sheet. Pure functions of the API's JSON and the unit choice. Every
 * number the tests compare carries `data-*` attributes with the API's raw value.
 *
 * @module
 */

/** What the results views need besides the result: the scenario as run. */
export interface RunContext {
  scenario: ScenarioForViews;
  units: DisplayUnits;
}

/** Scenario fields the views read (metric wire format). */
export interface ScenarioForViews {
  name: string;
  machine: { max_injection_pressure_MPa: number; clamp_force_kN: number };
  goals?: { max_pressure_fraction?: number; max_imbalance_percent?: number; mode?: string };
  feed: { node: string; length_mm: number };
  nodes: { id: string; x_mm: number; y_mm: number }[];
  runners?: { id: string; from: string; to: string; length_mm?: number }[];
  gates: { id: string; type: string; land_mm?: number; length_mm?: number }[];
  cavities: { id: string; name?: string; flow_length_mm?: number; wall_mm: number }[];
}

/** A result shown on the page: a plain simulation, or an optimization. */
export type Shown =
  | { kind: "simulation"; result: SimulationResult }
  | { kind: "optimization"; result: OptimizationResult };

/** The result whose numbers are "the answer" (after, for an optimization). */
export function primary(shown: Shown): SimulationResult {
  return shown.kind === "simulation" ? shown.result : shown.result.after;
}

const num = (v: number | null | undefined, digits = 3) => formatNumber(v, digits);

function cell(
  value: number | null | undefined,
  text: string,
  attrs: Record<string, string>,
  extraClass = "",
): string {
  const a = Object.entries(attrs).map(([k, v]) => ` data-${k}="${esc(v)}"`).join("");
  return `<td class="num${extraClass ? ` ${extraClass}` : ""}"${a} data-value="${
    value === null || value === undefined ? "" : String(value)
  }">${esc(text)}</td>`;
}

/** Headline numbers: imbalance, pressure vs press, clamp vs press, runner share. */
export function summaryHtml(shown: Shown, ctx: RunContext): string {
  const r = primary(shown);
  const b = shown.kind === "optimization" ? shown.result.before : null;
  const u = ctx.units;
  const m = ctx.scenario.machine;
  const target = ctx.scenario.goals?.max_imbalance_percent;
  const item = (
    key: string,
    label: string,
    value: string,
    before: string | null,
    note: string,
    raw: number | null,
  ) =>
    `<div class="figure" data-figure="${key}" data-value="${raw ?? ""}"><dt>${esc(label)}</dt><dd>${
      before !== null ? `<span class="before">${esc(before)} →</span> ` : ""
    }<strong>${esc(value)}</strong><small>${esc(note)}</small></dd></div>`;
  const pct = (v: number | null | undefined) => `${num(v, 3)} %`;
  return `<dl class="figures">` +
    item(
      "imbalance",
      "Fill-time imbalance",
      pct(r.imbalance_percent),
      b ? pct(b.imbalance_percent) : null,
      target !== undefined ? `target ≤ ${target} %` : "",
      r.imbalance_percent,
    ) +
    item(
      "pressure",
      "Peak injection pressure",
      formatPressure(r.feed_pressure_peak_MPa, u),
      b ? formatPressure(b.feed_pressure_peak_MPa, u) : null,
      `press limit ${formatPressure(m.max_injection_pressure_MPa, u)} (${
        num(r.machine_pressure_share_percent, 3)
      } % used)`,
      r.feed_pressure_peak_MPa,
    ) +
    item(
      "clamp",
      "Peak clamp force",
      formatForce(r.clamp_force_peak_kN, u),
      b ? formatForce(b.clamp_force_peak_kN, u) : null,
      `press rating ${formatForce(m.clamp_force_kN, u)} (${num(r.clamp_share_percent, 3)} % used)`,
      r.clamp_force_peak_kN,
    ) +
    item(
      "runner",
      "Cold runner per shot",
      `${num(r.runner_mass_g, 3)} g`,
      b ? `${num(b.runner_mass_g, 3)} g` : null,
      `${num(r.runner_volume_cm3, 3)} cm³, ${num(r.runner_share_percent, 3)} % of the ${
        num(r.shot_mass_g, 4)
      } g shot`,
      r.runner_mass_g,
    ) +
    item(
      "fill-time",
      "Fill time",
      `${num(r.fill_time_s, 3)} s`,
      b ? `${num(b.fill_time_s, 3)} s` : null,
      r.freeze?.part_cooling_time_s
        ? `part cooling ≈ ${num(r.freeze.part_cooling_time_s, 3)} s`
        : "",
      r.fill_time_s,
    ) +
    `</dl>`;
}

/** The per-cavity table; with an optimization, before and after side by side. */
export function cavityTableHtml(shown: Shown): string {
  const after = primary(shown);
  const before = shown.kind === "optimization" ? shown.result.before : null;
  const beforeById = new Map((before?.cavities ?? []).map((c) => [c.id, c]));
  const which = before ? ["before", "after"] as const : ["result"] as const;
  const head2 = (label: string) =>
    before ? `<th scope="colgroup" colspan="2">${label}</th>` : `<th scope="col">${label}</th>`;
  const sub = before
    ? `<tr class="sub">${
      ["fill time", "fill %", "gate shear", "mass"].map(() =>
        `<th scope="col">before</th><th scope="col">after</th>`
      ).join("")
    }</tr>`
    : "";
  const rows = after.cavities.map((c) => {
    const bc = beforeById.get(c.id);
    const pair = (
      field: keyof CavityResult,
      text: (x: CavityResult) => string,
      cls?: (x: CavityResult) => string,
    ) =>
      which.map((w) => {
        const x = w === "before" ? bc : c;
        if (!x) return "<td>–</td>";
        return cell(x[field] as number | null, text(x), {
          cavity: c.id,
          field: String(field),
          which: w,
        }, cls ? cls(x) : "");
      }).join("");
    const shear = (x: CavityResult) => {
      const ratio = x.gate_shear_rate_peak_1_s !== null && x.gate_shear_limit_1_s
        ? x.gate_shear_rate_peak_1_s / x.gate_shear_limit_1_s
        : null;
      return `${num(x.gate_shear_rate_peak_1_s, 3)} (${
        ratio === null ? "–" : Math.round(ratio * 100)
      } %)`;
    };
    const over = (x: CavityResult) =>
      x.gate_shear_rate_peak_1_s !== null && x.gate_shear_limit_1_s !== null &&
        x.gate_shear_rate_peak_1_s > x.gate_shear_limit_1_s
        ? "over"
        : "";
    return `<tr data-cavity="${esc(c.id)}"><th scope="row">${esc(c.id)}${
      c.name ? ` <span class="muted">${esc(c.name)}</span>` : ""
    }</th>` +
      pair("fill_time_s", (x) => num(x.fill_time_s, 4)) +
      pair("fill_percent_at_first_full", (x) => num(x.fill_percent_at_first_full, 4)) +
      pair("gate_shear_rate_peak_1_s", shear, over) +
      pair("mass_g", (x) => num(x.mass_g, 4)) +
      `<td class="num">${num(c.gate_shear_limit_1_s, 3)}</td></tr>`;
  }).join("");
  return `<table class="data cavities" id="cavity-table"><caption>Per cavity${
    before ? ": before → after" : ""
  }</caption><thead><tr><th scope="col" rowspan="${before ? 2 : 1}">cavity</th>${
    head2("fill time, s")
  }${head2("fill % when the first is full")}${head2("gate shear peak, 1/s (share of limit)")}${
    head2("part mass, g")
  }<th scope="col" rowspan="${
    before ? 2 : 1
  }">gate shear limit, 1/s</th></tr>${sub}</thead><tbody>${rows}</tbody></table>` +
    `<p class="note">Shear over the resin's limit is marked <span class="over-key">▲ over</span>.</p>`;
}

/** Text of a change's size in the chosen unit, with the other unit beside (toolroom habit). */
export function changeSizeText(c: ChangeEntry, side: "from" | "to", units: DisplayUnits): string {
  const mm = side === "from" ? c.from_mm : c.to_mm;
  const inch = side === "from" ? c.from_in : c.to_in;
  return units.length === "mm"
    ? `${formatLength(mm, "mm")} mm (${inch.toFixed(4)} in)`
    : `${inch.toFixed(4)} in (${formatLength(mm, "mm")} mm)`;
}

/** The ordered change list with before/after in mm and inch, cutter and the effect of each step. */
export function changeTableHtml(
  changes: ChangeEntry[],
  units: DisplayUnits,
  options: { id?: string; sheet?: boolean } = {},
): string {
  const caption = options.sheet
    ? ""
    : `<caption>Changes in order of work (each step simulated with every step before it)</caption>`;
  if (changes.length === 0) {
    return `<p class="empty" id="${esc(options.id ?? "change-table")}">No change proposed.</p>`;
  }
  const rows = changes.map((c) => {
    const t = c.after_step;
    return `<tr data-step="${c.step}" data-element="${esc(c.element)}">` +
      `<td class="num step">${c.step}</td>` +
      `<th scope="row">${esc(c.element)}</th>` +
      `<td>${esc(c.kind)}, ${esc(c.section)}</td>` +
      `<td>${esc(c.dimension)}</td>` +
      `<td class="num" data-field="from" data-mm="${c.from_mm}" data-in="${c.from_in}">${
        esc(changeSizeText(c, "from", units))
      }</td>` +
      `<td class="num" data-field="to" data-mm="${c.to_mm}" data-in="${c.to_in}"><strong>${
        esc(changeSizeText(c, "to", units))
      }</strong></td>` +
      `<td data-field="cutter">${esc(c.cutter)}</td>` +
      `<td data-field="steel">${
        c.steel_safe ? "enlarge (steel-safe)" : "<strong>ADD STEEL</strong> (weld or insert)"
      }</td>` +
      `<td>${esc(c.mold_half)}</td>` +
      `<td class="num" data-field="imbalance" data-value="${t.imbalance_percent}">${
        num(t.imbalance_percent, 3)
      } %</td>` +
      `<td class="num" data-field="pressure" data-value="${t.feed_pressure_peak_MPa}">${
        esc(formatPressure(t.feed_pressure_peak_MPa, units))
      }</td>` +
      `<td class="num" data-field="runner" data-value="${t.runner_volume_cm3}">${
        num(t.runner_volume_cm3, 3)
      }</td>` +
      `<td>${t.limits_met ? "yes" : "no"}</td>` +
      (options.sheet ? `<td class="tick-box" aria-label="done">☐</td>` : "") +
      `</tr>`;
  }).join("");
  return `<table class="data changes" id="${esc(options.id ?? "change-table")}">` + caption +
    `<thead><tr><th scope="col">step</th><th scope="col">element</th><th scope="col">what</th>` +
    `<th scope="col">size</th><th scope="col">before</th><th scope="col">after</th>` +
    `<th scope="col">cutter</th><th scope="col">steel</th><th scope="col">mold half</th>` +
    `<th scope="col">imbalance after</th><th scope="col">peak pressure after</th>` +
    `<th scope="col">runner after, cm³</th><th scope="col">limits met</th>` +
    (options.sheet ? `<th scope="col">done</th>` : "") +
    `</tr></thead><tbody>${rows}</tbody></table>`;
}

/** Fill % vs time for every cavity of one result, as SVG. */
export function fillChartSvg(
  result: SimulationResult,
  options: { title: string; id?: string; xMax?: number; width?: number },
): string {
  const history = result.history ?? [];
  // each line ends where its cavity is full, so the marker shows the fill moment
  const series: ChartSeries[] = result.cavities.map((c, k) => {
    const points: [number, number][] = [];
    for (const h of history) {
      const fill = h.cavity_fill_percent[k] ?? NaN;
      points.push([h.time_s ?? NaN, fill]);
      if (fill >= 100) break;
    }
    return { label: c.id, style: k, points };
  });
  const firstFull = Math.min(
    ...result.cavities.map((c) => c.fill_time_s ?? Infinity),
  );
  return lineChart(series, {
    verticals: Number.isFinite(firstFull) ? [{ x: firstFull, label: "first full" }] : [],
    title: options.title,
    xLabel: "time, s",
    yLabel: "cavity fill, %",
    yDomain: [0, 100],
    ...(options.xMax ? { xDomain: [0, options.xMax] as [number, number] } : {}),
    width: options.width ?? 460,
    height: 270,
    ...(options.id ? { id: options.id } : {}),
  });
}

/**
 * Cumulative position (mm) and pressure (MPa) along each cavity's flow path as the first
 * cavity fills, when every path still carries flow (at switchover, for results that lack it).
 */
export function pathProfiles(
  result: SimulationResult,
): { cavity: string; points: [number, number][]; ids: string[] }[] {
  return (result.paths ?? []).map((p) => {
    let x = 0;
    const firstFull = p.elements.every((e) => typeof e.pressure_drop_first_full_MPa === "number");
    const drop = (e: (typeof p.elements)[number]) =>
      (firstFull ? e.pressure_drop_first_full_MPa : e.pressure_drop_MPa) ?? 0;
    let pressure = p.elements.reduce((s, e) => s + drop(e), 0);
    const points: [number, number][] = [[0, pressure]];
    for (const e of p.elements) {
      x += e.length_mm ?? 0;
      pressure -= drop(e);
      points.push([x, Math.max(0, pressure)]);
    }
    return { cavity: p.cavity, points, ids: p.elements.map((e) => e.id) };
  });
}

/** Pressure along each flow path as the first cavity fills (after; before faint), as SVG. */
export function pathPressureSvg(shown: Shown, ctx: RunContext): string {
  const u = ctx.units;
  const after = primary(shown);
  const order = new Map(after.cavities.map((c, k) => [c.id, k]));
  const conv = (
    pts: [number, number][],
  ): [number, number][] =>
    pts.map(([x, p]) => [lengthFromMm(x, u.length), pressureFromMpa(p, u.pressure)]);
  const series: ChartSeries[] = [];
  if (shown.kind === "optimization") {
    for (const p of pathProfiles(shown.result.before)) {
      series.push({
        label: `${p.cavity} before`,
        style: order.get(p.cavity) ?? 0,
        points: conv(p.points),
        faint: true,
      });
    }
  }
  for (const p of pathProfiles(after)) {
    series.push({ label: p.cavity, style: order.get(p.cavity) ?? 0, points: conv(p.points) });
  }
  return lineChart(series, {
    title: `Pressure along each flow path as the first cavity fills${
      shown.kind === "optimization" ? " (after; before in grey)" : ""
    }`,
    xLabel: `distance from the nozzle along the path, ${unitSymbol(u, "length")}`,
    yLabel: `melt pressure, ${unitSymbol(u, "pressure")}`,
    markEveryPoint: true,
    width: 560,
    height: 280,
    id: "path-chart",
  });
}

/** Feed pressure and clamp force vs time against the press, as two SVG charts. */
export function pressChartsSvg(shown: Shown, ctx: RunContext): string {
  const u = ctx.units;
  const after = primary(shown);
  const before = shown.kind === "optimization" ? shown.result.before : null;
  const m = ctx.scenario.machine;
  const frac = ctx.scenario.goals?.max_pressure_fraction ?? 0.8;
  const hist = (
    r: SimulationResult,
    f: (h: NonNullable<SimulationResult["history"]>[number]) => number,
  ) => (r.history ?? []).map((h) => [h.time_s ?? NaN, f(h)] as [number, number]);
  const p = (v: number | null) => pressureFromMpa(v ?? NaN, u.pressure);
  const k = (v: number | null) => forceFromKn(v ?? NaN, u.force);
  const pSeries: ChartSeries[] = [];
  const kSeries: ChartSeries[] = [];
  if (before) {
    pSeries.push({
      label: "before",
      style: 6,
      points: hist(before, (h) => p(h.feed_pressure_MPa)),
      faint: true,
    });
    kSeries.push({
      label: "before",
      style: 6,
      points: hist(before, (h) => k(h.clamp_force_kN)),
      faint: true,
    });
  }
  pSeries.push({
    label: before ? "after" : "feed",
    style: 0,
    points: hist(after, (h) => p(h.feed_pressure_MPa)),
  });
  kSeries.push({
    label: before ? "after" : "clamp",
    style: 1,
    points: hist(after, (h) => k(h.clamp_force_kN)),
  });
  const pressure = lineChart(pSeries, {
    labelFaint: true,
    title: "Injection pressure at the nozzle",
    xLabel: "time, s",
    yLabel: `pressure, ${unitSymbol(u, "pressure")}`,
    rules: [
      { y: p(m.max_injection_pressure_MPa), label: "press limit" },
      { y: p(m.max_injection_pressure_MPa * frac), label: `target ${Math.round(frac * 100)} %` },
    ],
    width: 420,
    height: 260,
    id: "pressure-chart",
  });
  const clamp = lineChart(kSeries, {
    labelFaint: true,
    title: "Clamp force (cavities + runner)",
    xLabel: "time, s",
    yLabel: `force, ${unitSymbol(u, "force")}`,
    rules: [{ y: k(m.clamp_force_kN), label: "press rating" }],
    width: 420,
    height: 260,
    id: "clamp-chart",
  });
  return pressure + clamp;
}

/** Warnings (from the result) in plain words; nothing is hidden. */
export function warningsHtml(result: SimulationResult): string {
  if (result.warnings.length === 0) return `<p class="empty">No warnings.</p>`;
  return `<ul class="warnings">${
    result.warnings.map((w) =>
      `<li class="${esc(w.severity ?? "warning")}" data-code="${esc(w.code)}"><span class="sev">${
        w.severity === "info" ? "note" : "warning"
      }</span> ${esc(w.message)}</li>`
    ).join("")
  }</ul>`;
}

/** The cautions every result carries, with the press maker's limits first in mind. */
export function cautionsHtml(result: SimulationResult): string {
  return `<ul class="cautions">${result.cautions.map((c) => `<li>${esc(c)}</li>`).join("")}</ul>`;
}

/** The optimizer's stopping status in plain words. */
export const STATUS_WORDS: Record<string, string> = {
  converged: "Goals met",
  infeasible: "Goals not reachable within the limits",
  iteration_limit: "Stopped at the iteration limit",
  cancelled: "Cancelled",
};

const SLOPE_WORDS: Record<string, string> = {
  tangent: "carried by each simulation (tangent)",
  finite_difference: "by finite differences (one simulation per size)",
};

/** The optimizer's verdict: status, why it stopped, what would be needed, snapping, cost. */
export function verdictHtml(opt: OptimizationResult): string {
  return `<div class="verdict" data-status="${esc(opt.status)}"><p><strong>${
    esc(STATUS_WORDS[opt.status] ?? opt.status)
  }</strong> — ${esc(opt.reason)}</p>` +
    (opt.would_need.length
      ? `<p>What would make it reachable (a linear estimate, confirm by simulation):</p><ul>${
        opt.would_need.map((w) => `<li>${esc(w)}</li>`).join("")
      }</ul>`
      : "") +
    (opt.snapping ? `<p class="muted">Cutters: ${esc(opt.snapping)}</p>` : "") +
    (opt.simulations !== undefined
      ? `<p class="muted">${opt.simulations} fill simulations${
        opt.slopes ? `; slopes ${SLOPE_WORDS[opt.slopes] ?? esc(opt.slopes)}` : ""
      }.</p>`
      : "") +
    `</div>`;
}

/** A key of the series styles (marker + dash + colour) for cavities, for print. */
export function seriesKeyHtml(ids: string[]): string {
  return `<ul class="series-key">${
    ids.map((id, k) => {
      const s = seriesStyle(k);
      return `<li><svg width="34" height="12" aria-hidden="true"><line x1="1" y1="6" x2="26" y2="6" stroke="${s.colour}" stroke-width="2"${
        s.dash ? ` stroke-dasharray="${s.dash}"` : ""
      }/>${markerSvg(s.marker, 29, 6, 6, s.colour)}</svg>${esc(id)}</li>`;
    }).join("")
  }</ul>`;
}

/** Options of {@link changeSheetHtml}. */
export interface ChangeSheetOptions {
  toolName: string;
  /** ISO date shown in the header. */
  date: string;
  layout: string;
  units: DisplayUnits;
  scenarioLabel?: string;
}

/** The printable change sheet for the toolmaker. */
export function changeSheetHtml(opt: OptimizationResult, options: ChangeSheetOptions): string {
  const b = opt.before, a = opt.after;
  const u = options.units;
  const row = (label: string, x: string, y: string) =>
    `<tr><th scope="row">${esc(label)}</th><td class="num">${esc(x)}</td><td class="num">${
      esc(y)
    }</td></tr>`;
  return `<article class="sheet" id="sheet">` +
    `<header class="sheet-head"><div><p class="kicker">evenfill · change sheet</p><h2>${
      esc(options.toolName)
    }</h2>${
      options.scenarioLabel ? `<p class="muted">${esc(options.scenarioLabel)}</p>` : ""
    }</div><dl><dt>Date</dt><dd id="sheet-date">${esc(options.date)}</dd><dt>Status</dt><dd>${
      esc(opt.status)
    }</dd><dt>Units</dt><dd>${u.length === "mm" ? "mm (inch beside)" : "inch (mm beside)"}, ${
      esc(unitSymbol(u, "pressure"))
    }</dd></dl></header>` +
    `<section class="sheet-layout"><h3>Layout (after; changed elements dashed, with their step)</h3>${options.layout}</section>` +
    `<section><h3>Changes in order of work</h3><p class="muted">Each step was simulated with every step before it. Cut one step, shoot and weigh short shots, compare with the predicted effect, then decide on the next.</p>${
      changeTableHtml(opt.changes, u, { id: "sheet-changes", sheet: true })
    }</section>` +
    `<section class="sheet-effect"><h3>Predicted effect</h3><table class="data compact"><thead><tr><th></th><th scope="col">before</th><th scope="col">after all steps</th></tr></thead><tbody>` +
    row("fill-time imbalance", `${num(b.imbalance_percent)} %`, `${num(a.imbalance_percent)} %`) +
    row(
      "peak injection pressure",
      formatPressure(b.feed_pressure_peak_MPa, u),
      formatPressure(a.feed_pressure_peak_MPa, u),
    ) +
    row(
      "peak clamp force",
      formatForce(b.clamp_force_peak_kN, u),
      formatForce(a.clamp_force_peak_kN, u),
    ) +
    row("cold runner", `${num(b.runner_mass_g)} g`, `${num(a.runner_mass_g)} g`) +
    `</tbody></table>${verdictHtml(opt)}</section>` +
    `<section class="sheet-cautions"><h3>Cautions</h3>${cautionsHtml(a)}</section>` +
    `<section class="signoff"><h3>Sign-off</h3><div class="sign-lines">` +
    ["Designed by", "Checked by", "Toolmaker", "Trial shot approved"].map((who) =>
      `<div class="sign"><span class="line"></span><span>${esc(who)} — name, date</span></div>`
    ).join("") +
    `</div></section></article>`;
}
