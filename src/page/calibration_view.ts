/**
 * The page's trial-shot views, pure: the weighed-mass table and the measurements block it
 * writes, the factors a fit may move (in shop words), measured against predicted bars before
 * and after the fit, the fitted factors with their uncertainty, and the process-window chart.
 * SVG and HTML strings, tested without a browser (`tests/page/calibration_view_test.ts`).
 *
 * @module
 */
import { escapeXml as esc, linearScale, niceDomain, seriesStyle, tickLabel } from "./chart.ts";
import {
  type DisplayUnits,
  formatNumber,
  formatTemperatureRise,
  G_PER_OUNCE,
} from "./display_units.ts";
import type { CalibrationFactorEntry, CalibrationResult, Change, WindowJobResult } from "./wire.ts";

/** The parts of a scenario these views read. */
export interface TrialScenario {
  name?: string;
  cavities: { id: string; name?: string }[];
  gates: { id: string; cavity?: string }[];
  runners?: { id: string }[];
  measurements?: {
    short_shots: {
      shot_percent?: number;
      injected_cm3?: number;
      parts: { cavity: string; mass_g?: number; fill_percent?: number }[];
    }[];
    full_shot_pressure_MPa?: number;
  };
}

/** One short shot as the table holds it: shot size and the typed masses by cavity (display unit). */
export interface ShotRow {
  /** Shot size, % of the full shot (feed system + cavities). */
  shotPercent: string;
  /** Typed mass per cavity id, in the mass unit shown (g, or oz with US units). */
  masses: Record<string, string>;
}

/** The mass unit the table is typed in: g, or oz when US units are chosen. */
export function massUnit(units: DisplayUnits): "g" | "oz" {
  return units.length === "in" ? "oz" : "g";
}

const toGrams = (value: number, units: DisplayUnits) =>
  massUnit(units) === "oz" ? value * G_PER_OUNCE : value;
const fromGrams = (g: number, units: DisplayUnits) =>
  massUnit(units) === "oz" ? g / G_PER_OUNCE : g;

/** Shots prefilled from the scenario's measurements block (masses only), or one empty shot. */
export function shotRowsFrom(scenario: TrialScenario, units: DisplayUnits): ShotRow[] {
  const shots = (scenario.measurements?.short_shots ?? []).filter((s) =>
    s.shot_percent !== undefined
  );
  if (shots.length === 0) return [{ shotPercent: "", masses: {} }];
  return shots.map((s) => ({
    shotPercent: String(s.shot_percent),
    masses: Object.fromEntries(
      s.parts.filter((p) => p.mass_g !== undefined).map((p) => [
        p.cavity,
        String(Number(fromGrams(p.mass_g!, units).toPrecision(6))),
      ]),
    ),
  }));
}

/** A typed number, or undefined when the field is empty or not a positive number. */
function positive(text: string | undefined): number | undefined {
  if (text === undefined || text.trim() === "") return undefined;
  const v = Number(text.replace(/,/g, ""));
  return Number.isFinite(v) && v > 0 ? v : undefined;
}

/** The table's problems in plain words (empty: it can be written into the scenario). */
export function shotRowProblems(rows: readonly ShotRow[], scenario: TrialScenario): string[] {
  const problems: string[] = [];
  let weighed = 0;
  rows.forEach((row, k) => {
    const masses = scenario.cavities.filter((c) => row.masses[c.id]?.trim());
    const shot = positive(row.shotPercent);
    if (masses.length === 0 && row.shotPercent.trim() === "") return;
    if (shot === undefined || shot > 100) {
      problems.push(`Shot ${k + 1}: give the shot size as a share of the full shot, 0–100 %.`);
    }
    for (const c of masses) {
      if (positive(row.masses[c.id]) === undefined) {
        problems.push(`Shot ${k + 1}, ${c.id}: the mass must be a number above 0.`);
      }
    }
    weighed += masses.length;
  });
  if (weighed === 0) problems.push("Weigh at least one part of one short shot.");
  return problems;
}

/** The measurements block the table describes (masses in g), other shots of the block kept. */
export function measurementsFromRows(
  rows: readonly ShotRow[],
  scenario: TrialScenario,
  units: DisplayUnits,
): NonNullable<TrialScenario["measurements"]> {
  const typed = rows.flatMap((row) => {
    const shot = positive(row.shotPercent);
    const parts = scenario.cavities.flatMap((c) => {
      const m = positive(row.masses[c.id]);
      return m === undefined
        ? []
        : [{ cavity: c.id, mass_g: Number(toGrams(m, units).toPrecision(8)) }];
    });
    return shot === undefined || parts.length === 0 ? [] : [{ shot_percent: shot, parts }];
  });
  // Shots given by injected volume or fill % are not in the table: they stay as written.
  const kept = (scenario.measurements?.short_shots ?? []).filter((s) =>
    s.shot_percent === undefined || s.parts.some((p) => p.mass_g === undefined)
  );
  const pressure = scenario.measurements?.full_shot_pressure_MPa;
  return {
    short_shots: [...kept, ...typed],
    ...(pressure !== undefined ? { full_shot_pressure_MPa: pressure } : {}),
  };
}

/** The scenario with the table written into its measurements block (a new object). */
export function withMeasurements<T extends TrialScenario>(
  scenario: T,
  rows: readonly ShotRow[],
  units: DisplayUnits,
): T {
  return {
    ...structuredClone(scenario),
    measurements: measurementsFromRows(rows, scenario, units),
  };
}

/** A factor the fit may move, with its words on the page and its key (a checkbox value). */
export interface FactorChoice {
  key: string;
  label: string;
  factor: CalibrationFactorEntry;
}

/** Every factor of this tool: the resin lot, the melt, each gate, each branch. */
export function factorChoices(scenario: TrialScenario): FactorChoice[] {
  const cavityName = (id: string | undefined) => {
    const c = scenario.cavities.find((x) => x.id === id);
    return c ? ` (into ${c.id}${c.name ? ` ${c.name}` : ""})` : "";
  };
  return [
    {
      key: "viscosity",
      label: "Resin lot: how thick this lot runs",
      factor: { kind: "viscosity" },
    },
    ...scenario.gates.map((g) => ({
      key: `gate:${g.id}`,
      label: `Gate ${g.id}${cavityName(g.cavity)}: effective opening`,
      factor: { kind: "gate_size" as const, gate: g.id },
    })),
    ...(scenario.runners ?? []).map((r) => ({
      key: `runner:${r.id}`,
      label: `Branch ${r.id}: how freely it flows`,
      factor: { kind: "runner_size" as const, runner: r.id },
    })),
    {
      key: "melt",
      label: "Melt temperature: actual against set",
      factor: { kind: "melt_temperature" },
    },
  ];
}

/**
 * The horizontal axis of a bar chart: a grid line and a tick label at every tick of `xd`, and the
 * axis label centred under the plot (escaped here).
 */
function xAxis(
  xd: { ticks: number[]; step: number },
  xs: (value: number) => number,
  frame: {
    margin: { left: number; right: number; top: number; bottom: number };
    width: number;
    height: number;
  },
  label: string,
): string[] {
  const { margin, width, height } = frame;
  const out: string[] = [];
  for (const t of xd.ticks) {
    const x = xs(t).toFixed(1);
    out.push(
      `<line class="grid" x1="${x}" x2="${x}" y1="${margin.top - 4}" y2="${
        height - margin.bottom
      }"/>`,
      `<text class="tick" x="${x}" y="${height - margin.bottom + 14}" text-anchor="middle">${
        tickLabel(t, xd.step)
      }</text>`,
    );
  }
  out.push(
    `<text class="axis-label" x="${(margin.left + width - margin.right) / 2}" y="${
      height - 8
    }" text-anchor="middle">${esc(label)}</text>`,
  );
  return out;
}

/** The plain words of a fitted factor's name. */
export function factorWords(f: CalibrationFactorEntry): string {
  switch (f.kind) {
    case "viscosity":
      return "Resin lot viscosity";
    case "gate_size":
      return `Gate ${f.gate} effective opening`;
    case "runner_size":
      return `Branch ${f.runner} effective size`;
    case "melt_temperature":
      return "Melt temperature, actual against set";
  }
}

/** A fitted value as the shop reads it: "× 0.912" (a multiplier) or "+3.1 K" (the melt offset). */
export function factorValueText(
  f: CalibrationFactorEntry,
  value: number | null,
  units: DisplayUnits,
): string {
  if (value === null) return "–";
  if (f.kind === "melt_temperature") {
    return `${value >= 0 ? "+" : "−"}${formatTemperatureRise(Math.abs(value), units)}`;
  }
  return `× ${formatNumber(value, 3)}`;
}

/** The caution every fit carries. */
export const FIT_CAUTION =
  "A fit is only as good as the shots behind it: weigh several short shots of each size, all at the same settings (melt, mold, rate, switchover), after the process has settled, and trim runners off before weighing. One odd shot moves every factor.";

/** The fitted factors: value, uncertainty, and "not identified" said plainly. */
export function factorTableHtml(result: CalibrationResult, units: DisplayUnits): string {
  const rows = result.factors.map((f) => {
    const value = factorValueText(f.factor, f.value, units);
    const se = f.standard_error === null
      ? "–"
      : f.factor.kind === "melt_temperature"
      ? `± ${formatTemperatureRise(f.standard_error, units)}`
      : `± ${formatNumber(f.standard_error, 2)}`;
    const verdict = !f.identified
      ? `<strong>Not identified</strong>: these shots cannot tell it apart, so it stays near today's model. Do not read a change into it.`
      : f.at_bound
      ? `At the edge of what the fit allows: check the shots and the scenario before trusting it.`
      : `Pinned down by the shots.`;
    return `<tr data-factor="${esc(f.name)}" data-identified="${f.identified}"><th scope="row">${
      esc(factorWords(f.factor))
    }</th><td class="num">${esc(value)}</td><td class="num">${
      esc(se)
    }</td><td>${verdict}</td></tr>`;
  }).join("");
  return `<div class="table-scroll" tabindex="0"><table class="data" id="fit-factors"><caption>Fitted factors (today's model is × 1, or +0)</caption><thead><tr><th scope="col">factor</th><th scope="col">fitted</th><th scope="col">uncertainty (1 standard error)</th><th scope="col">what it means</th></tr></thead><tbody>${rows}</tbody></table></div>`;
}

/** Options of {@link fitBarsSvg}. */
export interface FitBarsOptions {
  id?: string;
  /** Pixel width (default 460; the chart shrinks to its box). */
  width?: number;
}

/**
 * Measured against predicted fill per cavity and short shot, before and after the fit: three
 * bars per part (measured solid, before hatched, after outlined), each series with its own
 * colour and fill so black-and-white print tells them apart.
 */
export function fitBarsSvg(result: CalibrationResult, options: FitBarsOptions = {}): string {
  const groups = result.residuals;
  const width = options.width ?? 460;
  const barH = 7, gap = 3, groupGap = 10;
  const margin = { left: 92, right: 16, top: 30, bottom: 40 };
  const groupH = 3 * barH + 2 * gap;
  const height = margin.top + margin.bottom + groups.length * (groupH + groupGap);
  const xd = niceDomain(0, 100, 5);
  const xs = linearScale(xd.domain, [margin.left, width - margin.right]);
  const series = [
    { key: "measured", label: "weighed", style: seriesStyle(6), fill: "solid" },
    { key: "before", label: "model before", style: seriesStyle(1), fill: "hatch" },
    { key: "after", label: "model after the fit", style: seriesStyle(0), fill: "outline" },
  ] as const;
  const id = options.id ?? "fit-bars";
  const out: string[] = [];
  out.push(
    `<svg xmlns="http://www.w3.org/2000/svg" class="chart" id="${
      esc(id)
    }" viewBox="0 0 ${width} ${height}" width="${width}" height="${height}" role="img" aria-label="Weighed fill against the model, before and after the fit">`,
    `<defs><pattern id="${
      esc(id)
    }-hatch" width="4" height="4" patternUnits="userSpaceOnUse" patternTransform="rotate(45)"><rect width="4" height="4" fill="#ffffff"/><line x1="0" y1="0" x2="0" y2="4" stroke="${
      series[1].style.colour
    }" stroke-width="2.4"/></pattern></defs>`,
    `<text class="chart-title" x="${margin.left}" y="16">Part fill: weighed against the model</text>`,
  );
  out.push(...xAxis(xd, xs, { margin, width, height }, "fill of the part, %"));
  const many = new Set(groups.map((g) => g.shot)).size > 1;
  groups.forEach((g, k) => {
    const y0 = margin.top + k * (groupH + groupGap);
    const label = many ? `${g.cavity} · shot ${g.shot + 1}` : g.cavity;
    out.push(
      `<g class="fit-group" data-cavity="${esc(g.cavity)}" data-shot="${g.shot}">`,
      `<text class="tick" x="${margin.left - 6}" y="${
        y0 + groupH / 2
      }" text-anchor="end" dy="0.32em">${esc(label)}</text>`,
    );
    series.forEach((s, j) => {
      const value = g[`${s.key}_fill_percent` as const];
      const v = Math.max(0, Math.min(100, value ?? 0));
      const y = y0 + j * (barH + gap);
      const w = Math.max(0.5, xs(v) - xs(0));
      const fill = s.fill === "solid"
        ? s.style.colour
        : s.fill === "hatch"
        ? `url(#${esc(id)}-hatch)`
        : "#ffffff";
      out.push(
        `<rect class="bar" data-series="${s.key}" data-value="${
          value === null ? "" : value.toFixed(3)
        }" x="${xs(0).toFixed(1)}" y="${y}" width="${
          w.toFixed(1)
        }" height="${barH}" fill="${fill}" stroke="${s.style.colour}" stroke-width="1.2"><title>${
          esc(`${label}, ${s.label}: ${formatNumber(value, 3)} %`)
        }</title></rect>`,
      );
    });
    out.push(`</g>`);
  });
  out.push(`</svg>`);
  return out.join("");
}

/** The key of {@link fitBarsSvg}, as HTML beside it. */
export function fitBarsKeyHtml(): string {
  return `<ul class="series-key fit-key"><li><span class="swatch solid" aria-hidden="true"></span>weighed</li><li><span class="swatch hatch" aria-hidden="true"></span>model before the fit</li><li><span class="swatch outline" aria-hidden="true"></span>model after the fit</li></ul>`;
}

/** How the fit went, in a sentence. */
export function fitSummaryText(result: CalibrationResult): string {
  const rms = (key: "before_fill_percent" | "after_fill_percent") => {
    const d = result.residuals.map((r) => (r[key] ?? NaN) - (r.measured_fill_percent ?? NaN));
    return Math.sqrt(d.reduce((s, x) => s + x * x, 0) / Math.max(1, d.length));
  };
  const how = result.stopped_because === "converged"
    ? "The fit settled"
    : result.stopped_because === "iteration_limit"
    ? "The fit used all its rounds without settling"
    : "The fit could not improve further";
  return `${how} after ${result.iterations} rounds and ${
    formatNumber(result.simulations, 3)
  } simulations. Typical gap between weighed and predicted fill: ${
    formatNumber(rms("before_fill_percent"), 2)
  } % before, ${formatNumber(rms("after_fill_percent"), 2)} % after.`;
}

/** The scenario with an optimization's changes cut into it (a new object): the "after" tool. */
export function scenarioAfterChanges<T>(scenario: T, changes: readonly Change[]): T {
  const out = structuredClone(scenario) as unknown as {
    runners?: Record<string, unknown>[];
    gates?: Record<string, unknown>[];
  };
  for (const c of changes) {
    const list = c.kind === "gate" ? out.gates : out.runners;
    const el = list?.find((e) => e.id === c.element);
    if (!el) continue;
    const key = c.dimension === "thickness" ? "thickness_mm" : "diameter_mm";
    const before = Number(el[key]);
    el[key] = c.to_mm;
    const ratio = before > 0 ? c.to_mm / before : 1;
    for (const side of ["width_mm", "depth_mm", "entry_diameter_mm"]) {
      if (key === "diameter_mm" && typeof el[side] === "number") {
        el[side] = (el[side] as number) * ratio;
      }
    }
  }
  return out as unknown as T;
}

/** The sweep's factors in shop words. */
export const WINDOW_FACTOR_WORDS: Record<string, string> = {
  melt: "melt temperature",
  mold: "mold temperature",
  rate: "injection rate",
  viscosity: "resin lot viscosity",
};

/** One horizontal range bar chart: a min–max bar per design on its own axis. */
function rangeChart(
  title: string,
  rows: { label: string; range: [number | null, number | null]; style: number }[],
  axisLabel: string,
  id: string,
  width: number,
): string {
  const margin = { left: 92, right: 20, top: 28, bottom: 40 };
  const rowH = 26;
  const height = margin.top + margin.bottom + rows.length * rowH;
  const values = rows.flatMap((r) => r.range).filter((v): v is number => v !== null);
  const hi = values.length > 0 ? Math.max(...values) : 1;
  const xd = niceDomain(0, hi > 0 ? hi : 1, 4);
  const xs = linearScale(xd.domain, [margin.left, width - margin.right]);
  const out = [
    `<svg xmlns="http://www.w3.org/2000/svg" class="chart" id="${
      esc(id)
    }" viewBox="0 0 ${width} ${height}" width="${width}" height="${height}" role="img" aria-label="${
      esc(title)
    }">`,
    `<text class="chart-title" x="${margin.left}" y="16">${esc(title)}</text>`,
  ];
  out.push(...xAxis(xd, xs, { margin, width, height }, axisLabel));
  rows.forEach((r, k) => {
    const y = margin.top + k * rowH + 6;
    const [a, b] = r.range;
    const style = seriesStyle(r.style);
    out.push(
      `<text class="tick" x="${margin.left - 6}" y="${y + 7}" text-anchor="end" dy="0.32em">${
        esc(r.label)
      }</text>`,
    );
    if (a === null || b === null) return;
    const x0 = xs(a), x1 = Math.max(xs(b), x0 + 2);
    out.push(
      `<rect class="range" data-design="${esc(r.label)}" data-low="${a}" data-high="${b}" x="${
        x0.toFixed(1)
      }" y="${y}" width="${(x1 - x0).toFixed(1)}" height="14" fill="${
        r.style === 0 ? style.colour : "#ffffff"
      }" stroke="${style.colour}" stroke-width="1.6"${
        style.dash ? ` stroke-dasharray="${style.dash}"` : ""
      }/>`,
    );
  });
  out.push(`</svg>`);
  return out.join("");
}

/** Designs' labels on the page. */
const DESIGN_WORDS: Record<string, string> = { today: "today's tool", after: "after the changes" };

/**
 * The process-window view: per design the imbalance range and the peak gate shear range over
 * the sweep (range bars), which setting moves the balance most (bars of the main effects), and
 * the same in plain words.
 */
export function windowViewHtml(result: WindowJobResult, units: DisplayUnits): string {
  const rows = result.designs.map((d, k) => ({ d, style: k === 0 ? 0 : 1 }));
  const imbalance = rangeChart(
    "Imbalance across the window",
    rows.map(({ d, style }) => ({
      label: DESIGN_WORDS[d.design] ?? d.design,
      range: d.imbalance_range_percent,
      style,
    })),
    "fill-time imbalance, %",
    "window-imbalance",
    420,
  );
  const shear = rangeChart(
    "Peak gate shear across the window",
    rows.map(({ d, style }) => ({
      label: DESIGN_WORDS[d.design] ?? d.design,
      range: d.gate_shear_range_1_s,
      style,
    })),
    "highest gate shear rate, 1/s",
    "window-shear",
    420,
  );
  const effects = effectsSvg(result);
  const r = result.range;
  const words = result.designs.map((d) => {
    const top = d.effects[0];
    const [lo, hi] = d.imbalance_range_percent;
    const [slo, shi] = d.gate_shear_range_1_s;
    const moves = top && top.imbalance_points !== null && Math.abs(top.imbalance_points) > 0.005
      ? ` ${
        capital(WINDOW_FACTOR_WORDS[top.factor] ?? top.factor)
      } moves the balance most: from its low to its high setting the imbalance ${
        top.imbalance_points > 0 ? "grows" : "shrinks"
      } by ${formatNumber(Math.abs(top.imbalance_points), 2)} points.`
      : " No setting in the window moves the balance noticeably.";
    const failed = d.failures.length > 0
      ? ` ${d.failures.length} corner${d.failures.length === 1 ? "" : "s"} could not be simulated.`
      : "";
    return `<li data-design="${esc(d.design)}"><strong>${
      esc(capital(DESIGN_WORDS[d.design] ?? d.design))
    }:</strong> imbalance between ${formatNumber(lo, 2)} % and ${
      formatNumber(hi, 2)
    } %, peak gate shear between ${formatNumber(slo, 3)} and ${
      formatNumber(shi, 3)
    } 1/s.${moves}${failed}</li>`;
  }).join("");
  return `<p class="note">Each design simulated ${
    formatNumber(17, 2)
  } times: every combination of melt temperature ± ${
    esc(formatTemperatureRise(r.melt_temperature_K, units))
  }, mold temperature ± ${
    esc(formatTemperatureRise(r.mold_temperature_K, units))
  }, injection rate ± ${formatNumber(r.injection_rate_percent, 3)} % and resin-lot viscosity ± ${
    formatNumber(r.viscosity_percent, 3)
  } %, and the set point.</p><div class="charts">${imbalance}${shear}${effects}</div><ul class="window-words">${words}</ul>`;
}

const capital = (text: string) => text.charAt(0).toUpperCase() + text.slice(1);

/** The main effects on the imbalance of the first design (and the second beside it), as bars. */
function effectsSvg(result: WindowJobResult): string {
  const factors = ["melt", "mold", "rate", "viscosity"];
  const width = 420;
  const margin = { left: 130, right: 20, top: 28, bottom: 40 };
  const designs = result.designs;
  const barH = 9;
  const groupH = designs.length * (barH + 3) + 8;
  const height = margin.top + margin.bottom + factors.length * groupH;
  const all = designs.flatMap((d) => d.effects.map((e) => Math.abs(e.imbalance_points ?? 0)));
  const xd = niceDomain(0, Math.max(0.01, ...all), 4);
  const xs = linearScale(xd.domain, [margin.left, width - margin.right]);
  const out = [
    `<svg xmlns="http://www.w3.org/2000/svg" class="chart" id="window-effects" viewBox="0 0 ${width} ${height}" width="${width}" height="${height}" role="img" aria-label="What moves the balance">`,
    `<text class="chart-title" x="${margin.left}" y="16">What moves the balance (low → high setting)</text>`,
  ];
  out.push(...xAxis(xd, xs, { margin, width, height }, "change of the imbalance, % points"));
  factors.forEach((f, k) => {
    const y0 = margin.top + k * groupH;
    out.push(
      `<text class="tick" x="${margin.left - 6}" y="${
        y0 + (groupH - 8) / 2
      }" text-anchor="end" dy="0.32em">${esc(WINDOW_FACTOR_WORDS[f])}</text>`,
    );
    designs.forEach((d, j) => {
      const e = d.effects.find((x) => x.factor === f);
      const v = Math.abs(e?.imbalance_points ?? 0);
      const style = seriesStyle(j);
      out.push(
        `<rect class="effect" data-factor="${f}" data-design="${d.design}" x="${
          xs(0).toFixed(1)
        }" y="${y0 + j * (barH + 3)}" width="${
          Math.max(0.5, xs(v) - xs(0)).toFixed(1)
        }" height="${barH}" fill="${
          j === 0 ? style.colour : "#ffffff"
        }" stroke="${style.colour}" stroke-width="1.4"${
          style.dash ? ` stroke-dasharray="${style.dash}"` : ""
        }><title>${
          esc(
            `${DESIGN_WORDS[d.design] ?? d.design}, ${WINDOW_FACTOR_WORDS[f]}: ${
              formatNumber(e?.imbalance_points, 2)
            } points`,
          )
        }</title></rect>`,
      );
    });
  });
  out.push(`</svg>`);
  return out.join("");
}
