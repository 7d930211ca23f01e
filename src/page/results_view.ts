import { type ChartSeries, escapeXml as esc, lineChart, markerSvg, seriesStyle } from "./chart.ts";
import {
  type DisplayUnits,
  forceFromKn,
  formatForce,
  formatLength,
  formatMass,
  formatNumber,
  formatPressure,
  formatTemperature,
  formatTemperatureRise,
  formatVolume,
  lengthFromMm,
  METRIC_UNITS,
  pressureFromMpa,
  unitSymbol,
} from "./display_units.ts";
import type {
  CavityResult,
  Change,
  HistorySample,
  OptimizationResult,
  SimulationResult,
  SlopeSource,
  StepState,
} from "./wire.ts";

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
  process?: { switchover_percent?: number };
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

/** A table in its own horizontal scroll box, so a narrow screen never scrolls the page. */
export function scrollBox(table: string): string {
  return `<div class="table-scroll" tabindex="0">${table}</div>`;
}

/**
 * The fill history of the velocity phase: the samples up to switchover, ending exactly on it
 * (interpolated linearly between the two samples around it when none falls on it). The
 * simulation carries on past switchover at the set flow rate, which the press does not do;
 * the page draws only this part. Without a switchover time, the whole history.
 */
export function velocityPhase(result: SimulationResult): HistorySample[] {
  const history = result.history ?? [];
  const sw = result.switchover_time_s;
  if (sw === null || sw === undefined || !Number.isFinite(sw)) return history;
  const out: HistorySample[] = [];
  for (let k = 0; k < history.length; k++) {
    const h = history[k];
    const t = h.time_s ?? NaN;
    if (t <= sw * (1 + 1e-9)) {
      out.push(h);
      continue;
    }
    const prev = out[out.length - 1];
    const t0 = prev?.time_s ?? NaN;
    if (prev && Number.isFinite(t0) && t0 < sw * (1 - 1e-9) && t > t0) {
      const w = (sw - t0) / (t - t0);
      const mix = (a: number | null | undefined, b: number | null | undefined) =>
        a === null || a === undefined || b === null || b === undefined ? null : a + (b - a) * w;
      out.push({
        time_s: sw,
        injected_cm3: mix(prev.injected_cm3, h.injected_cm3),
        feed_pressure_MPa: mix(prev.feed_pressure_MPa, h.feed_pressure_MPa),
        clamp_force_kN: mix(prev.clamp_force_kN, h.clamp_force_kN),
        cavity_fill_percent: h.cavity_fill_percent.map((f, i) =>
          mix(prev.cavity_fill_percent[i], f)
        ),
      });
    }
    break;
  }
  return out;
}

/** True when a cavity fills only after switchover (its fill time is the model's continuation). */
export function fillsAfterSwitchover(c: CavityResult, result: SimulationResult): boolean {
  const sw = result.switchover_time_s;
  return typeof sw === "number" && typeof c.fill_time_s === "number" &&
    c.fill_time_s > sw * (1 + 1e-9);
}

/** Headline numbers: imbalance, pressure vs press, clamp vs press, runner share. */
export function summaryHtml(shown: Shown, ctx: RunContext): string {
  const r = primary(shown);
  const b = shown.kind === "optimization" ? shown.result.before : null;
  const u = ctx.units;
  const m = ctx.scenario.machine;
  const target = ctx.scenario.goals?.max_imbalance_percent;
  const swPercent = ctx.scenario.process?.switchover_percent ?? 98;
  const item = (
    key: string,
    label: string,
    value: string,
    before: string | null,
    note: string,
    raw: number | null | undefined,
  ) =>
    `<div class="figure" data-figure="${key}" data-value="${raw ?? ""}"><dt>${esc(label)}</dt><dd>${
      before !== null ? `<span class="before">${esc(before)} →</span> ` : ""
    }<strong>${esc(value)}</strong><small>${esc(note)}</small></dd></div>`;
  const pct = (v: number | null | undefined) => `${num(v, 3)} %`;
  const late = r.cavities.filter((c) => fillsAfterSwitchover(c, r));
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
      "Peak injection pressure (at switchover)",
      formatPressure(r.feed_pressure_peak_MPa, u),
      b ? formatPressure(b.feed_pressure_peak_MPa, u) : null,
      `press limit ${formatPressure(m.max_injection_pressure_MPa, u)} (${
        num(r.machine_pressure_share_percent, 3)
      } % used)`,
      r.feed_pressure_peak_MPa,
    ) +
    item(
      "clamp",
      "Peak clamp force (at switchover)",
      formatForce(r.clamp_force_peak_kN, u),
      b ? formatForce(b.clamp_force_peak_kN, u) : null,
      `press rating ${formatForce(m.clamp_force_kN, u)} (${num(r.clamp_share_percent, 3)} % used)`,
      r.clamp_force_peak_kN,
    ) +
    item(
      "runner",
      "Cold runner per shot",
      formatMass(r.runner_mass_g, u),
      b ? formatMass(b.runner_mass_g, u) : null,
      `${formatVolume(r.runner_volume_cm3, u)}, ${num(r.runner_share_percent, 3)} % of the ${
        formatMass(r.shot_mass_g, u, 4)
      } shot`,
      r.runner_mass_g,
    ) +
    item(
      "switchover",
      `Switchover (${swPercent} % of the shot)`,
      `${num(r.switchover_time_s, 3)} s`,
      b ? `${num(b.switchover_time_s, 3)} s` : null,
      late.length
        ? `${
          late.map((c) => `${c.id} ${num(c.fill_percent_at_switchover, 3)} %`).join(", ")
        } full then; the hold phase finishes ${late.length === 1 ? "it" : "them"}`
        : "every cavity full by then",
      r.switchover_time_s,
    ) +
    item(
      "fill-time",
      "Fill time (set rate held to the end)",
      `${num(r.fill_time_s, 3)} s`,
      b ? `${num(b.fill_time_s, 3)} s` : null,
      (late.length ? "past switchover: a model figure for balance, not a press time. " : "") +
        (r.freeze?.part_cooling_time_s
          ? `Part cooling ≈ ${num(r.freeze.part_cooling_time_s, 3)} s`
          : ""),
      r.fill_time_s,
    ) +
    `</dl>`;
}

/** The per-cavity table; with an optimization, before and after side by side. */
export function cavityTableHtml(shown: Shown, units: DisplayUnits = METRIC_UNITS): string {
  const after = primary(shown);
  const before = shown.kind === "optimization" ? shown.result.before : null;
  const beforeById = new Map((before?.cavities ?? []).map((c) => [c.id, c]));
  const which = before ? ["before", "after"] as const : ["result"] as const;
  const head2 = (label: string) =>
    before ? `<th scope="colgroup" colspan="2">${label}</th>` : `<th scope="col">${label}</th>`;
  const columns = ["fill time", "fill % at switchover", "fill % first full", "gate shear", "mass"];
  const sub = before
    ? `<tr class="sub">${
      columns.map(() => `<th scope="col">before</th><th scope="col">after</th>`).join("")
    }</tr>`
    : "";
  let anyLate = false;
  const rows = after.cavities.map((c) => {
    const bc = beforeById.get(c.id);
    const resultOf = (w: string) => w === "before" ? before! : after;
    const pair = (
      field: keyof CavityResult,
      text: (x: CavityResult, r: SimulationResult) => string,
      cls?: (x: CavityResult, r: SimulationResult) => string,
    ) =>
      which.map((w) => {
        const x = w === "before" ? bc : c;
        if (!x) return "<td>–</td>";
        const r = resultOf(w);
        return cell(x[field] as number | null, text(x, r), {
          cavity: c.id,
          field: String(field),
          which: w,
        }, cls ? cls(x, r) : "");
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
    const late = (x: CavityResult, r: SimulationResult) => {
      const isLate = fillsAfterSwitchover(x, r);
      anyLate ||= isLate;
      return isLate ? "late" : "";
    };
    return `<tr data-cavity="${esc(c.id)}"><th scope="row">${esc(c.id)}${
      c.name ? ` <span class="muted">${esc(c.name)}</span>` : ""
    }</th>` +
      pair("fill_time_s", (x) => num(x.fill_time_s, 4), late) +
      pair("fill_percent_at_switchover", (x) => num(x.fill_percent_at_switchover, 4)) +
      pair("fill_percent_at_first_full", (x) => num(x.fill_percent_at_first_full, 4)) +
      pair("gate_shear_rate_peak_1_s", shear, over) +
      pair("mass_g", (x) => formatMass(x.mass_g, units, 4)) +
      `<td class="num">${num(c.gate_shear_limit_1_s, 3)}</td></tr>`;
  }).join("");
  return scrollBox(
    `<table class="data cavities" id="cavity-table"><caption>Per cavity${
      before ? ": before → after" : ""
    }</caption><thead><tr><th scope="col" rowspan="${before ? 2 : 1}">cavity</th>${
      head2("fill time, s")
    }${head2("fill % at switchover")}${head2("fill % when the first is full")}${
      head2("gate shear peak, 1/s (share of limit)")
    }${head2("part mass")}<th scope="col" rowspan="${
      before ? 2 : 1
    }">gate shear limit, 1/s</th></tr>${sub}</thead><tbody>${rows}</tbody></table>`,
  ) +
    `<p class="note">Shear over the resin's limit is marked <span class="over-key">▲ over</span>.${
      anyLate
        ? ` <span class="late-key">‡</span> fills after switchover: the time assumes the set flow rate held on, which the press does not do; the hold phase fills the rest.`
        : ""
    }</p>`;
}

/** Text of a change's size in the chosen unit, the other beside; each rounded once from mm. */
export function changeSizeText(c: Change, side: "from" | "to", units: DisplayUnits): string {
  const mm = side === "from" ? c.from_mm : c.to_mm;
  return units.length === "mm"
    ? `${formatLength(mm, "mm")} mm (${formatLength(mm, "in")} in)`
    : `${formatLength(mm, "in")} in (${formatLength(mm, "mm")} mm)`;
}

/** What a change does to the steel, in shop words (HTML): Results, and the sheet's short form. */
const ACTION_WORDS: Record<Change["action"], { full: string; short: string }> = {
  cut_to: { full: "cut to", short: "cut to" },
  enlarge: { full: "enlarge (steel-safe)", short: "enlarge" },
  add_steel: {
    full: "<strong>ADD STEEL</strong> (weld or insert)",
    short: "<strong>ADD STEEL</strong>",
  },
};

/** One step of the order of work: the changes cut at once and the tool's state after them. */
export interface ChangeStep {
  step: number;
  changes: Change[];
  /** More than one change, cut at once. */
  together: boolean;
  after: StepState;
  above_start: boolean;
  above_start_reason: string | null;
}

/** The change list grouped into steps (consecutive changes sharing their step number). */
export function changeSteps(changes: readonly Change[]): ChangeStep[] {
  const steps: ChangeStep[] = [];
  for (const c of changes) {
    const last = steps[steps.length - 1];
    if (last && last.step === c.step) {
      last.changes.push(c);
      last.together = true;
      last.after = c.after_step;
      last.above_start ||= c.above_start;
      last.above_start_reason ??= c.above_start_reason;
    } else {
      steps.push({
        step: c.step,
        changes: [c],
        together: c.cut_together,
        after: c.after_step,
        above_start: c.above_start,
        above_start_reason: c.above_start_reason,
      });
    }
  }
  return steps;
}

/** A new tool's list: every size is cut as drawn, and every step carries the final design. */
const newTool = (changes: readonly Change[]) =>
  changes.length > 0 && changes.every((c) => c.action === "cut_to");

/** Options of {@link changeTableHtml}. */
export interface ChangeTableOptions {
  id?: string;
  /** The toolmaker's sheet: fewer, narrower columns for one printed page. */
  sheet?: boolean;
  /** Step 0: today's tool (`changes_start`; null or absent for a new tool). */
  start?: StepState | null;
  /** Why there is no change list (`changes_omitted`). */
  omitted?: string | null;
}

/** Why there is no change list, in plain words. */
export function omittedText(omitted: string | null | undefined): string {
  if (!omitted) return "No change proposed.";
  return omitted === "not asked for"
    ? "No change list: it was not asked for."
    : `No change list: the run was ${omitted}. The sizes shown are the design it reached; run again for the order of work.`;
}

/** The short-shot cells' raw values, for tests and the shop's own sheet. */
function shotAttrs(step: number, s: StepState["short_shot"][number]): string {
  return `data-step="${step}" data-cavity="${
    esc(s.cavity)
  }" data-fill="${s.fill_percent}" data-mass-g="${s.mass_g}"`;
}

/** The sheet's compact short shot: the first cavity full and the lowest, with its mass. */
function shotCompact(step: number, state: StepState, units: DisplayUnits): string {
  if (state.first_full_s === null || state.short_shot.length === 0) return "not simulated";
  const sorted = [...state.short_shot].sort((a, b) => b.fill_percent - a.fill_percent);
  const first = sorted[0], low = sorted[sorted.length - 1];
  return `<span ${shotAttrs(step, first)}>${esc(first.cavity)} full</span> · <span ${
    shotAttrs(step, low)
  }>${esc(low.cavity)} ${num(low.fill_percent, 3)} % ${
    esc(formatMass(low.mass_g, units, 3))
  }</span>`;
}

/**
 * The ordered change list, one row per change, the changes of a step cut together under one
 * step number, step 0 (today's tool) first when given. On Results: every column, in its own
 * scroll box. On the sheet (`sheet: true`): the toolmaker's columns only (step, element, now →
 * cut to, cutter, mold half and steel, imbalance and short shot after the step, a tick box),
 * narrow enough for one printed page. A new tool's sizes are "cut to", with the final design's
 * figures once. A step above today's imbalance is marked, with its reason.
 */
export function changeTableHtml(
  changes: Change[],
  units: DisplayUnits,
  options: ChangeTableOptions = {},
): string {
  const id = esc(options.id ?? "change-table");
  if (changes.length === 0) {
    return `<p class="empty" id="${id}"${options.omitted ? ` data-omitted="true"` : ""}>${
      esc(omittedText(options.omitted))
    }</p>`;
  }
  const fresh = newTool(changes);
  const steps = changeSteps(changes);
  const start = fresh ? null : options.start ?? null;
  const imbalance = (s: StepState, above: boolean) =>
    `<td class="num${
      above ? " over" : ""
    }" data-field="imbalance" data-value="${s.imbalance_percent}"${
      above ? ' data-above-start="true"' : ""
    }>${num(s.imbalance_percent, 3)} %${s.limits_met ? "" : " *"}</td>`;
  const stepCell = (s: ChangeStep, span: number) =>
    `<td class="num step" rowspan="${span}" data-step-number="${s.step}">${s.step}${
      s.together ? `<br><span class="muted small" data-field="together">cut together</span>` : ""
    }</td>`;
  const reasons = steps.filter((s) => s.above_start);
  const reasonNote = (s: ChangeStep) =>
    `step ${s.step} is above today's imbalance${
      s.above_start_reason ? `: ${s.above_start_reason}` : ""
    }`;
  if (options.sheet) {
    const other = units.length === "mm" ? "in" : "mm";
    const span = (s: ChangeStep) => (fresh ? changes.length : s.changes.length);
    const rows = steps.map((s, k) =>
      s.changes.map((c, i) =>
        `<tr data-step="${c.step}" data-element="${esc(c.element)}">` +
        (i === 0 ? stepCell(s, s.changes.length) : "") +
        `<th scope="row">${esc(c.element)} <span class="muted">${
          esc(c.dimension === "diameter" ? "⌀" : c.dimension)
        }</span></th>` +
        `<td class="num" data-field="from" data-mm="${c.from_mm}">${
          formatLength(c.from_mm, units.length)
        }</td>` +
        `<td class="num" data-field="to" data-mm="${c.to_mm}"><strong>${
          formatLength(c.to_mm, units.length)
        } ${unitSymbol(units, "length")}</strong> <span class="muted">(${
          formatLength(c.to_mm, other)
        } ${other})</span></td>` +
        `<td data-field="cutter">${esc(c.cutter)}</td>` +
        `<td>${esc(c.mold_half)}</td>` +
        `<td data-field="steel" data-action="${c.action}">${ACTION_WORDS[c.action].short}</td>` +
        (i === 0 && (!fresh || k === 0)
          ? imbalance(s.after, s.above_start).replace("<td ", `<td rowspan="${span(s)}" `) +
            `<td class="shot" rowspan="${span(s)}" data-field="short-shot">${
              shotCompact(s.step, s.after, units)
            }</td>` +
            `<td class="tick-box" rowspan="${span(s)}" aria-label="done">☐</td>`
          : "") +
        `</tr>`
      ).join("")
    ).join("");
    const zero = start
      ? `<tr data-step="0" class="start"><td class="num step">0</td><th scope="row" colspan="6">today's tool, before any cut</th>${
        imbalance(start, false)
      }<td class="shot" data-field="short-shot">${shotCompact(0, start, units)}</td><td></td></tr>`
      : "";
    const words = fresh
      ? "“cut to”: a new tool, cut as drawn; the figures are the design with every size cut."
      : "“enlarge”: steel-safe, metal is removed; ADD STEEL: weld or insert first. ▲ above today's imbalance.";
    return `<table class="data changes sheet-steps" id="${id}"><thead><tr>` +
      `<th scope="col">step</th><th scope="col">element</th><th scope="col">${
        fresh ? "drawn" : "now"
      }, ${unitSymbol(units, "length")}</th>` +
      `<th scope="col">cut to</th><th scope="col">cutter</th><th scope="col">half</th>` +
      `<th scope="col">steel</th><th scope="col">imbalance ${
        fresh ? "all cut" : "after"
      }</th><th scope="col">short shot: first full · lowest</th><th scope="col">done</th>` +
      `</tr></thead><tbody>${zero}${rows}</tbody></table>` +
      `<p class="note">* limits not yet met. ${words}</p>` +
      (reasons.length
        ? `<ul class="note step-reasons">${
          reasons.map((s) =>
            `<li data-step="${s.step}" data-above-start="true">${esc(reasonNote(s))}</li>`
          ).join("")
        }</ul>`
        : "");
  }
  const sizes = (c: Change) =>
    `<td class="num" data-field="from" data-mm="${c.from_mm}">${
      esc(changeSizeText(c, "from", units))
    }</td>` +
    `<td class="num" data-field="to" data-mm="${c.to_mm}"><strong>${
      esc(changeSizeText(c, "to", units))
    }</strong></td>`;
  const figures = (t: StepState, above: boolean, span: number) =>
    [
      imbalance(t, above),
      `<td class="num" data-field="pressure" data-value="${t.feed_pressure_peak_MPa}">${
        esc(formatPressure(t.feed_pressure_peak_MPa, units))
      }</td>`,
      `<td class="num" data-field="runner" data-value="${t.runner_volume_cm3}">${
        esc(formatVolume(t.runner_volume_cm3, units))
      }</td>`,
      `<td>${t.limits_met ? "yes" : "no"}</td>`,
    ].map((td) => td.replace("<td", `<td rowspan="${span}"`)).join("");
  const columns = 13;
  const rows = steps.map((s, k) =>
    s.changes.map((c, i) =>
      `<tr data-step="${c.step}" data-element="${esc(c.element)}">` +
      (i === 0 ? stepCell(s, s.changes.length) : "") +
      `<th scope="row">${esc(c.element)}</th>` +
      `<td>${esc(c.kind)}, ${esc(c.section)}</td>` +
      `<td>${esc(c.dimension)}</td>` + sizes(c) +
      `<td data-field="cutter">${esc(c.cutter)}</td>` +
      `<td data-field="steel" data-action="${c.action}">${ACTION_WORDS[c.action].full}</td>` +
      `<td>${esc(c.mold_half)}</td>` +
      (i === 0 && (!fresh || k === 0)
        ? figures(s.after, s.above_start, fresh ? changes.length : s.changes.length)
        : "") +
      `</tr>`
    ).join("") +
    (s.above_start
      ? `<tr class="step-note" data-step="${s.step}" data-above-start="true"><td colspan="${columns}">▲ ${
        esc(reasonNote(s))
      }</td></tr>`
      : "")
  ).join("");
  const zero = start
    ? `<tr data-step="0" class="start"><td class="num step">0</td><th scope="row" colspan="8">today's tool, before any cut</th>${
      figures(start, false, 1)
    }</tr>`
    : "";
  return scrollBox(
    `<table class="data changes" id="${id}">` +
      `<caption>${
        fresh
          ? "Sizes to cut (a new tool: the figures are the design with every size cut)"
          : "Changes in order of work (each step simulated with every step before it)"
      }</caption>` +
      `<thead><tr><th scope="col">step</th><th scope="col">element</th><th scope="col">what</th>` +
      `<th scope="col">size</th><th scope="col">${fresh ? "drawn" : "before"}</th><th scope="col">${
        fresh ? "cut to" : "after"
      }</th>` +
      `<th scope="col">cutter</th><th scope="col">steel</th><th scope="col">mold half</th>` +
      `<th scope="col">imbalance after</th><th scope="col">peak pressure after</th>` +
      `<th scope="col">runner after</th><th scope="col">limits met</th>` +
      `</tr></thead><tbody>${zero}${rows}</tbody></table>`,
  ) + `<p class="note">* limits not yet met.</p>`;
}

/**
 * The predicted short shot after each step, to weigh on the press: each cavity's fill and
 * mass at the instant the first cavity is full, one row per step (step 0: today's tool). A new
 * tool has one row, the design with every size cut.
 */
export function shortShotTableHtml(
  opt: Pick<OptimizationResult, "changes" | "changes_start">,
  units: DisplayUnits,
  id = "short-shot-table",
): string {
  const fresh = newTool(opt.changes);
  const steps = changeSteps(opt.changes);
  const rows: { step: number; label: string; state: StepState }[] = [];
  if (opt.changes_start && !fresh) {
    rows.push({ step: 0, label: "0 today", state: opt.changes_start });
  }
  if (fresh) {
    rows.push({ step: steps.at(-1)!.step, label: "all cut", state: steps.at(-1)!.after });
  } else {
    for (const s of steps) rows.push({ step: s.step, label: String(s.step), state: s.after });
  }
  const cavities = rows.find((r) => r.state.short_shot.length > 0)?.state.short_shot
    .map((s) => s.cavity) ?? [];
  if (rows.length === 0 || cavities.length === 0) return "";
  const body = rows.map((r) => {
    const byCavity = new Map(r.state.short_shot.map((s) => [s.cavity, s]));
    const lowest = Math.min(...r.state.short_shot.map((s) => s.fill_percent));
    return `<tr data-step="${r.step}"><th scope="row">${esc(r.label)}</th><td class="num">${
      r.state.first_full_s === null ? "not simulated" : `${num(r.state.first_full_s, 3)} s`
    }</td>` +
      cavities.map((cavity) => {
        const s = byCavity.get(cavity);
        if (!s) return "<td>–</td>";
        const low = r.state.short_shot.length > 1 && s.fill_percent === lowest;
        return `<td class="num${low ? " low" : ""}" ${shotAttrs(r.step, s)}>${
          num(s.fill_percent, 3)
        } % <span class="muted">${esc(formatMass(s.mass_g, units, 3))}</span></td>`;
      }).join("") + `</tr>`;
  }).join("");
  return scrollBox(
    `<table class="data short-shots" id="${
      esc(id)
    }"><caption>Short shot to weigh after each step: each cavity's fill and mass when the first cavity is full (predicted)</caption><thead><tr><th scope="col">step</th><th scope="col">first full at</th>${
      cavities.map((c) => `<th scope="col">${esc(c)}</th>`).join("")
    }</tr></thead><tbody>${body}</tbody></table>`,
  ) +
    `<p class="note">Set the shot size so that the first cavity just fills, weigh each part and compare with its row before cutting the next step.</p>`;
}

/**
 * An existing tool's fewest-changes table: for each number of sizes allowed to change, the
 * best plan found (which sizes, imbalance, runner mass, limits), the plan taken marked. Empty
 * for a new tool.
 */
export function frontTableHtml(
  opt: Pick<OptimizationResult, "front">,
  units: DisplayUnits,
): string {
  if (opt.front.length === 0) return "";
  const rows = opt.front.map((p) =>
    `<tr data-max-changes="${p.max_changes}" data-chosen="${p.chosen}"${
      p.chosen ? ' class="chosen"' : ""
    }><th scope="row">${p.max_changes === 0 ? "none" : `up to ${p.max_changes}`}</th>` +
    `<td data-field="changed">${p.changed.length ? esc(p.changed.join(", ")) : "none"}</td>` +
    cell(p.imbalance_percent, `${num(p.imbalance_percent, 3)} %`, { field: "imbalance" }) +
    cell(p.runner_mass_g, formatMass(p.runner_mass_g, units, 3), { field: "runner" }) +
    `<td data-field="limits">${p.limits_met ? "yes" : "no"}</td>` +
    `<td data-field="chosen">${p.chosen ? "<strong>◀ plan taken</strong>" : ""}</td></tr>`
  ).join("");
  const chosen = opt.front.find((p) => p.chosen);
  return scrollBox(
    `<table class="data front" id="front-table"><caption>Fewest changes: the best plan found for each number of sizes allowed to change (sizes as calculated, before rounding to cutters)</caption><thead><tr><th scope="col">sizes allowed to change</th><th scope="col">which sizes change</th><th scope="col">imbalance</th><th scope="col">runner per shot</th><th scope="col">limits met</th><th scope="col"></th></tr></thead><tbody>${rows}</tbody></table>`,
  ) +
    `<p class="note">The plan taken is the first, with the fewest changes, that meets every limit${
      chosen && !chosen.limits_met
        ? "; none here meets them all, so the one that comes closest was taken"
        : ""
    }: each size more is more work on the tool.</p>`;
}

/** The x extent (s) the fill and press charts share: up to the later switchover. */
export function chartEnd(results: (SimulationResult | null | undefined)[]): number {
  const ends = results.flatMap((r) => {
    const phase = r ? velocityPhase(r) : [];
    return phase.length ? [phase[phase.length - 1].time_s ?? 0] : [];
  });
  return Math.max(...ends, 0.001);
}

/**
 * Fill % vs time for every cavity of one result, as SVG, over the velocity phase: each line
 * ends where its cavity is full or at switchover, whichever comes first. Switchover is a
 * marked vertical; a cavity still filling then is labelled with its fill % at switchover.
 */
export function fillChartSvg(
  result: SimulationResult,
  options: {
    title: string;
    id?: string;
    xMax?: number;
    width?: number;
    switchoverPercent?: number;
  },
): string {
  const history = velocityPhase(result);
  const series: ChartSeries[] = result.cavities.map((c, k) => {
    const points: [number, number][] = [];
    for (const h of history) {
      const fill = h.cavity_fill_percent[k] ?? NaN;
      points.push([h.time_s ?? NaN, fill]);
      if (fill >= 100) break;
    }
    const last = points[points.length - 1]?.[1] ?? NaN;
    const label = last < 100 - 1e-6 && Number.isFinite(last)
      ? `${c.id} ${num(c.fill_percent_at_switchover ?? last, 3)} %`
      : c.id;
    return { label, style: k, points };
  });
  const firstFull = Math.min(
    ...result.cavities.map((c) => c.fill_time_s ?? Infinity),
  );
  const sw = result.switchover_time_s;
  const verticals: NonNullable<Parameters<typeof lineChart>[1]["verticals"]> = [];
  if (Number.isFinite(firstFull)) verticals.push({ x: firstFull, label: "first full" });
  if (typeof sw === "number") {
    verticals.push({
      x: sw,
      label: `switchover${options.switchoverPercent ? ` (${options.switchoverPercent} %)` : ""}`,
      at: "top",
      mark: "switchover",
    });
  }
  return lineChart(series, {
    verticals,
    title: options.title,
    xLabel: "time, s",
    yLabel: "cavity fill, %",
    yDomain: [0, 100],
    ...(options.xMax ? { xDomain: [0, options.xMax] as [number, number] } : {}),
    width: options.width ?? 460,
    height: 270,
    ...(options.id ? { id: options.id } : {}),
  }).replace(/^<svg /, `<svg data-switchover="${sw ?? ""}" `);
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

/**
 * Feed pressure and clamp force vs time against the press, as two SVG charts, over the
 * velocity phase (to switchover, marked): their highest points are the headline peaks.
 */
export function pressChartsSvg(shown: Shown, ctx: RunContext): string {
  const u = ctx.units;
  const after = primary(shown);
  const before = shown.kind === "optimization" ? shown.result.before : null;
  const m = ctx.scenario.machine;
  const frac = ctx.scenario.goals?.max_pressure_fraction ?? 0.8;
  const swPercent = ctx.scenario.process?.switchover_percent;
  const hist = (r: SimulationResult, f: (h: HistorySample) => number) =>
    velocityPhase(r).map((h) => [h.time_s ?? NaN, f(h)] as [number, number]);
  const p = (v: number | null | undefined) => pressureFromMpa(v ?? NaN, u.pressure);
  const k = (v: number | null | undefined) => forceFromKn(v ?? NaN, u.force);
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
    label: before ? "after" : "nozzle",
    style: 0,
    points: hist(after, (h) => p(h.feed_pressure_MPa)),
  });
  kSeries.push({
    label: before ? "after" : "clamp",
    style: 1,
    points: hist(after, (h) => k(h.clamp_force_kN)),
  });
  const xMax = chartEnd([before, after]);
  const verticals = [before, after].flatMap((r) =>
    typeof r?.switchover_time_s === "number"
      ? [{
        x: r.switchover_time_s,
        label: r === before ? "" : `switchover${swPercent ? ` (${swPercent} %)` : ""}`,
        at: "top" as const,
        mark: "switchover",
      }]
      : []
  );
  const pressure = lineChart(pSeries, {
    labelFaint: true,
    title: "Injection pressure at the nozzle, filling",
    xLabel: "time, s",
    yLabel: `pressure, ${unitSymbol(u, "pressure")}`,
    xDomain: [0, xMax],
    verticals,
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
    title: "Clamp force (cavities + runner), filling",
    xLabel: "time, s",
    yLabel: `force, ${unitSymbol(u, "force")}`,
    xDomain: [0, xMax],
    verticals,
    rules: [{ y: k(m.clamp_force_kN), label: "press rating" }],
    width: 420,
    height: 260,
    id: "clamp-chart",
  });
  return pressure + clamp;
}

/** Options of {@link elementTableHtml}. */
export interface ElementTableOptions {
  /** The press's hold (pack) time, s, to compare gate freeze times with; none: not compared. */
  holdTime_s?: number | null;
}

/**
 * Every sprue, runner and gate: pressure drop, wall shear, melt temperature rise over the
 * injection temperature, frozen layer at the end of filling (switchover) and freeze time.
 * A gate that stays open past the hold time is flagged (melt can flow back out of the part).
 */
export function elementTableHtml(
  result: SimulationResult,
  units: DisplayUnits,
  meltTemperature_C: number | null,
  options: ElementTableOptions = {},
): string {
  const freeze = new Map((result.freeze?.entries ?? []).map((f) => [f.id, f]));
  const hold = options.holdTime_s ?? null;
  const rows = result.elements.filter((e) => e.kind !== "cavity").map((e) => {
    const f = freeze.get(e.id);
    const rise = meltTemperature_C !== null && typeof e.melt_temperature_end_C === "number"
      ? e.melt_temperature_end_C - meltTemperature_C
      : null;
    const freezeTime = f?.freeze_time_s ?? null;
    const gateOpen = e.kind === "gate" && hold !== null && freezeTime !== null &&
      freezeTime > hold;
    const gateShut = e.kind === "gate" && hold !== null && freezeTime !== null &&
      freezeTime <= hold;
    return `<tr data-element="${esc(e.id)}" data-kind="${esc(e.kind)}">` +
      `<th scope="row">${esc(e.id)} <span class="muted">${esc(kindWord(e.kind))}</span></th>` +
      cell(e.pressure_drop_end_MPa, formatPressure(e.pressure_drop_end_MPa, units), {
        field: "pressure_drop_end_MPa",
      }) +
      cell(e.wall_shear_rate_peak_1_s, num(e.wall_shear_rate_peak_1_s, 3), {
        field: "wall_shear_rate_peak_1_s",
      }) +
      cell(
        rise,
        `${formatTemperatureRise(rise, units)}${
          typeof e.melt_temperature_end_C === "number"
            ? ` (${formatTemperature(e.melt_temperature_end_C, units)})`
            : ""
        }`,
        { field: "melt_temperature_rise" },
      ) +
      cell(
        e.frozen_layer_end_mm,
        `${formatLength(e.frozen_layer_end_mm, units.length)} ${unitSymbol(units, "length")}${
          e.frozen_shut ? " — frozen shut" : ""
        }`,
        { field: "frozen_layer_end_mm" },
        e.frozen_shut ? "over" : "",
      ) +
      cell(
        freezeTime,
        `${num(freezeTime, 3)} s${
          gateOpen ? " — still open when the hold ends" : gateShut ? " — seals within the hold" : ""
        }`,
        { field: "freeze_time_s" },
        gateOpen ? "over" : "",
      ) +
      `</tr>`;
  }).join("");
  return scrollBox(
    `<table class="data elements" id="element-table"><caption>Per runner and gate${
      hold !== null ? ` (hold time ${num(hold, 3)} s)` : ""
    }</caption><thead><tr><th scope="col">element</th><th scope="col">pressure drop at switchover</th>` +
      `<th scope="col">wall shear peak, 1/s</th><th scope="col">melt heating (leaving it)</th>` +
      `<th scope="col">frozen layer at switchover</th><th scope="col">freeze time</th>` +
      `</tr></thead><tbody>${rows}</tbody></table>`,
  ) +
    `<p class="note">Heating is the adiabatic upper bound; a gate should seal within the hold time, or melt can flow back out of the part (a check of the times, not of the packing).</p>`;
}

function kindWord(kind: string): string {
  return ({ feed: "sprue / drop", runner: "runner", gate: "gate" } as Record<string, string>)[
    kind
  ] ?? kind;
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
  cancelled: "Cancelled — best design so far",
};

/** What each status means for the shop, in a sentence. */
const STATUS_MEANING: Record<string, string> = {
  converged: "These sizes meet every goal set on the Scenario tab.",
  infeasible: "No sizes inside the limits meet every goal; these are the closest the search found.",
  iteration_limit:
    "The search used all its rounds; these are the best sizes it found, not a proven best.",
  cancelled: "The search was stopped before it finished; these are the best sizes it had reached.",
};

const SLOPE_WORDS: Record<SlopeSource, string> = {
  tangent: "carried by each simulation (tangent)",
  finite_difference: "by finite differences (one simulation per size)",
};

/**
 * What the sizes on the sheet do, in a headline and a sentence. "Converged" is the search's
 * word: the cutter sizes can still miss a goal the exact sizes meet, and then the page says so.
 */
export function statusVerdict(
  opt: Pick<OptimizationResult, "status" | "after_limits_met" | "after_violations">,
): { words: string; meaning: string } {
  if (opt.status === "converged" && !opt.after_limits_met) {
    return {
      words: "Goals not met in cutter sizes",
      meaning: `The exact sizes would meet every goal, but the nearest cutter sizes miss: ${
        opt.after_violations.join("; ")
      }. These are the closest cutter sizes found.`,
    };
  }
  return {
    words: STATUS_WORDS[opt.status] ?? opt.status,
    meaning: STATUS_MEANING[opt.status] ?? "",
  };
}

/**
 * The optimizer's verdict in plain words; its own account (why it stopped, cutter snapping,
 * how many simulations, where its slopes came from) sits behind an "advanced" fold.
 */
export function verdictHtml(opt: OptimizationResult): string {
  const internals = [
    `<p>${esc(opt.reason)}</p>`,
    opt.snapping ? `<p>Cutters: ${esc(opt.snapping)}</p>` : "",
    `<p>${opt.simulations} fill simulations; slopes ${SLOPE_WORDS[opt.slopes]}.</p>`,
  ].join("");
  const { words, meaning } = statusVerdict(opt);
  return `<div class="verdict" data-status="${
    esc(opt.status)
  }" data-limits-met="${opt.after_limits_met}"><p><strong>${esc(words)}</strong> — ${
    esc(meaning)
  }</p>` +
    (opt.would_need.length
      ? `<p>What would make it reachable (a first estimate; simulate to confirm):</p><ul>${
        opt.would_need.map((w) => `<li>${esc(w)}</li>`).join("")
      }</ul>`
      : "") +
    `<details class="advanced"><summary>Advanced: the optimizer's own account</summary>${internals}</details>` +
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
  /** Short check code of the scenario the result came from (printed in the revision block). */
  scenarioCode?: string;
  /** The scenario has changed since: the sheet says "out of date — run again" on every print. */
  stale?: boolean;
  /** Switchover, % of the shot (for the "at switchover" wording). */
  switchoverPercent?: number;
}

/** The stale banner of Results and the sheet. */
export function staleBannerHtml(what: string): string {
  return `<p class="stale-banner" role="alert" data-stale="true"><strong>Out of date — run again.</strong> The scenario in the editor has changed since this ${
    esc(what)
  } was made; its numbers belong to the earlier scenario.</p>`;
}

/**
 * The printable change sheet for the toolmaker: on one A4 or Letter page (landscape) for up
 * to 12 steps: revision block, layout drawing to a printed scale, ordered steps, predicted
 * effect, cautions and sign-off together.
 */
export function changeSheetHtml(opt: OptimizationResult, options: ChangeSheetOptions): string {
  const b = opt.before, a = opt.after;
  const u = options.units;
  const row = (label: string, x: string, y: string) =>
    `<tr><th scope="row">${esc(label)}</th><td class="num">${esc(x)}</td><td class="num">${
      esc(y)
    }</td></tr>`;
  const fill = (label: string, value = "") =>
    `<tr><th scope="row">${esc(label)}</th><td${value ? "" : ' class="fill-in"'}>${
      esc(value)
    }</td></tr>`;
  const at = options.switchoverPercent ? ` (at switchover, ${options.switchoverPercent} %)` : "";
  return `<article class="sheet${options.stale ? " stale" : ""}" id="sheet" data-stale="${
    options.stale ? "true" : "false"
  }">` +
    (options.stale ? staleBannerHtml("change sheet") : "") +
    `<header class="sheet-head"><div class="sheet-title"><p class="kicker">evenfill · change sheet</p><h2>${
      esc(options.toolName)
    }</h2>${
      options.scenarioLabel ? `<p class="muted">${esc(options.scenarioLabel)}</p>` : ""
    }<p class="sheet-status"><strong>${esc(statusVerdict(opt).words)}</strong> — ${
      esc(statusVerdict(opt).meaning)
    }</p></div>` +
    `<table class="rev-block" aria-label="Tool, press, resin lot and revision">` +
    fill("Tool no.") + fill("Press") + fill("Resin lot") + fill("Revision") +
    fill("Date", options.date).replace("<td>", '<td id="sheet-date">') +
    (options.scenarioCode ? fill("Scenario check", options.scenarioCode) : "") +
    fill(
      "Units",
      `${u.length === "mm" ? "mm (inch beside)" : "inch (mm beside)"}, ${
        unitSymbol(u, "pressure")
      }`,
    ) +
    `</table></header>` +
    `<div class="sheet-grid"><div class="sheet-left">` +
    `<section class="sheet-layout"><h3>Layout after the changes</h3>${options.layout}</section>` +
    `<section class="sheet-cautions"><h3>Cautions</h3>${cautionsHtml(a)}</section>` +
    `<section class="signoff"><h3>Sign-off</h3><div class="sign-lines">` +
    ["Designed by", "Checked by", "Toolmaker", "Trial shot approved"].map((who) =>
      `<div class="sign"><span class="line"></span><span>${esc(who)} — name, date</span></div>`
    ).join("") +
    `</div></section></div>` +
    `<div class="sheet-side">` +
    `<section class="sheet-steps"><h3>${
      newTool(opt.changes) ? "Sizes to cut" : "Steps in order of work"
    }</h3><p class="muted small">${
      newTool(opt.changes)
        ? "A new tool: cut every size as listed, then shoot and weigh short shots against the predicted short shot."
        : "Cut one step, shoot a short shot (the first cavity just full), weigh each part against the predicted short shot, then decide on the next. Each step was simulated with every step before it."
    }</p>${
      changeTableHtml(opt.changes, u, {
        id: "sheet-changes",
        sheet: true,
        start: opt.changes_start,
        omitted: opt.changes_omitted,
      })
    }</section>` +
    `<section class="sheet-effect"><h3>Predicted effect</h3><table class="data compact"><thead><tr><th></th><th scope="col">before</th><th scope="col">after all steps</th></tr></thead><tbody>` +
    row("fill-time imbalance", `${num(b.imbalance_percent)} %`, `${num(a.imbalance_percent)} %`) +
    row(
      `peak injection pressure${at}`,
      formatPressure(b.feed_pressure_peak_MPa, u),
      formatPressure(a.feed_pressure_peak_MPa, u),
    ) +
    row(
      `peak clamp force${at}`,
      formatForce(b.clamp_force_peak_kN, u),
      formatForce(a.clamp_force_peak_kN, u),
    ) +
    row("cold runner", formatMass(b.runner_mass_g, u), formatMass(a.runner_mass_g, u)) +
    `</tbody></table></section></div></div></article>`;
}
