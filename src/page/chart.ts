/**
 * Hand-written SVG charts: scales, tick steps and line charts as plain
 * strings, so they can be tested without a browser and need no library.
 * Every series has a colour from a colour-blind-safe set (Okabe & Ito, 2008,
 * "Color Universal Design") AND its own dash pattern and marker, so a chart
 * printed in black and white still tells the lines apart.
 *
 * @module
 */

/** Okabe–Ito hues, ordered for contrast on white (the yellow is left out), each ≥ 3:1 on white. */
export const SERIES_COLOURS = [
  "#0072B2", // blue
  "#D55E00", // vermillion
  "#009E73", // bluish green
  "#CC79A7", // reddish purple
  "#B07800", // orange, darkened from #E69F00 to 3:1 on white (WCAG 2.1, 1.4.11)
  "#3C8DC5", // sky blue, darkened from #56B4E9 to 3:1 on white (WCAG 2.1, 1.4.11)
  "#000000", // black
] as const;

/** Dash patterns paired with the colours (empty = solid). */
export const SERIES_DASHES = ["", "7 3", "2 2.5", "9 3 2 3", "4 4", "12 3 2 3 2 3", "1 4"] as const;

/** Marker shapes paired with the colours. */
export const SERIES_MARKERS = [
  "circle",
  "square",
  "triangle",
  "diamond",
  "cross",
  "plus",
  "bar",
] as const;

/** The look of series number `index` (cycles: colour, dash and marker stay distinct to 7·n). */
export function seriesStyle(index: number) {
  const k = ((index % 7) + 7) % 7;
  const round = Math.floor(index / 7);
  return {
    colour: SERIES_COLOURS[k],
    dash: SERIES_DASHES[(k + round) % SERIES_DASHES.length],
    marker: SERIES_MARKERS[k],
  };
}

/** A linear map from a domain to a pixel range. */
export interface LinearScale {
  (value: number): number;
  domain: [number, number];
  range: [number, number];
}

/** Linear scale; a zero-width domain is widened so nothing divides by zero. */
export function linearScale(domain: [number, number], range: [number, number]): LinearScale {
  let [d0, d1] = domain;
  if (d1 === d0) {
    d0 -= 0.5;
    d1 += 0.5;
  }
  const f = (v: number) => range[0] + ((v - d0) / (d1 - d0)) * (range[1] - range[0]);
  return Object.assign(f, { domain: [d0, d1] as [number, number], range });
}

/** A “nice” step (1, 2, 2.5 or 5 × 10ⁿ) giving about `count` intervals over [lo, hi]. */
export function niceStep(lo: number, hi: number, count = 5): number {
  const span = Math.abs(hi - lo);
  if (!(span > 0) || !Number.isFinite(span)) return 1;
  const raw = span / Math.max(1, count);
  const power = Math.pow(10, Math.floor(Math.log10(raw)));
  const fraction = raw / power;
  const nice = fraction <= 1
    ? 1
    : fraction <= 2
    ? 2
    : fraction <= 2.5
    ? 2.5
    : fraction <= 5
    ? 5
    : 10;
  return nice * power;
}

/** Domain widened outward to whole steps, with the tick values. */
export function niceDomain(
  lo: number,
  hi: number,
  count = 5,
): { domain: [number, number]; ticks: number[]; step: number } {
  if (!Number.isFinite(lo) || !Number.isFinite(hi)) return niceDomain(0, 1, count);
  if (hi < lo) [lo, hi] = [hi, lo];
  if (hi === lo) {
    hi = lo === 0 ? 1 : lo + Math.abs(lo) * 0.1;
  }
  const step = niceStep(lo, hi, count);
  const start = Math.floor(lo / step + 1e-9) * step;
  const end = Math.ceil(hi / step - 1e-9) * step;
  const ticks: number[] = [];
  for (let k = 0; start + k * step <= end + step * 1e-9; k++) {
    ticks.push(Number((start + k * step).toPrecision(12)));
  }
  return { domain: [start, end], ticks, step };
}

/** Text of a tick value: as many decimals as the step needs. */
export function tickLabel(value: number, step: number): string {
  const decimals = Math.max(
    0,
    Math.min(
      6,
      -Math.floor(Math.log10(step) + 1e-9) + (
        Math.abs(step / Math.pow(10, Math.floor(Math.log10(step))) - 2.5) < 1e-9 ? 1 : 0
      ),
    ),
  );
  return value.toFixed(decimals);
}

/** Escape text for SVG/HTML. */
export function escapeXml(text: string): string {
  return text.replace(
    /[&<>"']/g,
    (c) => ({ "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&#39;" })[c]!,
  );
}

const fmt = (v: number) => (Math.round(v * 100) / 100).toString();

/** SVG for a marker shape centred at (x, y). */
export function markerSvg(shape: string, x: number, y: number, size: number, colour: string) {
  const s = size / 2;
  const fill = `fill="${colour}" stroke="${colour}"`;
  switch (shape) {
    case "circle":
      return `<circle cx="${fmt(x)}" cy="${fmt(y)}" r="${fmt(s)}" ${fill}/>`;
    case "square":
      return `<rect x="${fmt(x - s)}" y="${fmt(y - s)}" width="${fmt(size)}" height="${
        fmt(size)
      }" ${fill}/>`;
    case "triangle":
      return `<polygon points="${fmt(x)},${fmt(y - s * 1.2)} ${fmt(x + s * 1.1)},${
        fmt(y + s * 0.9)
      } ${fmt(x - s * 1.1)},${fmt(y + s * 0.9)}" ${fill}/>`;
    case "diamond":
      return `<polygon points="${fmt(x)},${fmt(y - s * 1.3)} ${fmt(x + s)},${fmt(y)} ${fmt(x)},${
        fmt(y + s * 1.3)
      } ${fmt(x - s)},${fmt(y)}" ${fill}/>`;
    case "cross":
      return `<path d="M${fmt(x - s)},${fmt(y - s)}L${fmt(x + s)},${fmt(y + s)}M${fmt(x - s)},${
        fmt(y + s)
      }L${fmt(x + s)},${fmt(y - s)}" stroke="${colour}" stroke-width="2" fill="none"/>`;
    case "plus":
      return `<path d="M${fmt(x - s)},${fmt(y)}L${fmt(x + s)},${fmt(y)}M${fmt(x)},${fmt(y - s)}L${
        fmt(x)
      },${fmt(y + s)}" stroke="${colour}" stroke-width="2" fill="none"/>`;
    default:
      return `<rect x="${fmt(x - s * 1.3)}" y="${fmt(y - s * 0.5)}" width="${
        fmt(s * 2.6)
      }" height="${fmt(s)}" ${fill}/>`;
  }
}

/** One line of a chart. */
export interface ChartSeries {
  label: string;
  points: [number, number][];
  /** Index into the series styles (colour, dash, marker). */
  style: number;
  /** Draw thin and grey-ish (a reference, e.g. "before"). */
  faint?: boolean;
}

/** A horizontal reference line (a limit). */
export interface ChartRule {
  y: number;
  label: string;
}

/** Options of {@link lineChart}. */
export interface LineChartOptions {
  /** Pixel width of the SVG (default 480). */
  width?: number;
  /** Pixel height of the SVG (default 280). */
  height?: number;
  title?: string;
  xLabel: string;
  yLabel: string;
  /** Fixed x domain (default: from the data). */
  xDomain?: [number, number];
  /** Fixed y domain (default: from the data and rules). */
  yDomain?: [number, number];
  rules?: ChartRule[];
  /**
   * Vertical reference lines (an instant, e.g. "first cavity full"); `at` puts the label at
   * the top or the bottom of the plot (default bottom), `mark` names it (`data-mark`).
   */
  verticals?: { x: number; label: string; at?: "top" | "bottom"; mark?: string }[];
  /** Label faint series at their ends too (default false). */
  labelFaint?: boolean;
  /** x values are whole numbers (iterations): ticks at integers only (default false). */
  integerX?: boolean;
  /** Put a marker at each point, not only at the end (default false). */
  markEveryPoint?: boolean;
  /** Labels of x ticks by value (category axes); default numeric. */
  xTickLabels?: Map<number, string>;
  /** Draw lines as steps (value holds until the next point); default false. */
  steps?: boolean;
  /** id of the SVG element. */
  id?: string;
}

/** The data's extent over all series, optionally with extra y values. */
export function extent(series: ChartSeries[], extraY: number[] = []) {
  let x0 = Infinity, x1 = -Infinity, y0 = Infinity, y1 = -Infinity;
  for (const s of series) {
    for (const [x, y] of s.points) {
      if (!Number.isFinite(x) || !Number.isFinite(y)) continue;
      x0 = Math.min(x0, x);
      x1 = Math.max(x1, x);
      y0 = Math.min(y0, y);
      y1 = Math.max(y1, y);
    }
  }
  for (const y of extraY) {
    if (!Number.isFinite(y)) continue;
    y0 = Math.min(y0, y);
    y1 = Math.max(y1, y);
  }
  if (x0 > x1) [x0, x1] = [0, 1];
  if (y0 > y1) [y0, y1] = [0, 1];
  return { x: [x0, x1] as [number, number], y: [y0, y1] as [number, number] };
}

/** A line chart as an SVG string: axes with nice ticks, rules, series with end labels. */
export function lineChart(series: ChartSeries[], options: LineChartOptions): string {
  const width = options.width ?? 480;
  const height = options.height ?? 280;
  const margin = { left: 58, right: 64, top: options.title ? 28 : 12, bottom: 44 };
  const data = extent(series, (options.rules ?? []).map((r) => r.y));
  let xd = niceDomain(...(options.xDomain ?? data.x), 6);
  if (options.integerX && xd.step < 1) {
    xd = niceDomain(xd.domain[0], Math.max(xd.domain[1], xd.domain[0] + 1), 1);
    const ticks: number[] = [];
    for (let t = Math.ceil(xd.domain[0]); t <= xd.domain[1]; t++) ticks.push(t);
    xd = { domain: xd.domain, ticks, step: 1 };
  }
  const yd = niceDomain(...(options.yDomain ?? [Math.min(0, data.y[0]), data.y[1]]), 5);
  const xs = linearScale(xd.domain, [margin.left, width - margin.right]);
  const ys = linearScale(yd.domain, [height - margin.bottom, margin.top]);
  const out: string[] = [];
  out.push(
    `<svg xmlns="http://www.w3.org/2000/svg" class="chart" ${
      options.id ? `id="${escapeXml(options.id)}" ` : ""
    }viewBox="0 0 ${width} ${height}" width="${width}" height="${height}" role="img" aria-label="${
      escapeXml(options.title ?? options.yLabel)
    }">`,
  );
  if (options.title) {
    out.push(
      `<text class="chart-title" x="${margin.left}" y="16">${escapeXml(options.title)}</text>`,
    );
  }
  // grid and ticks
  out.push(`<g class="axis">`);
  const xTicks = options.xTickLabels ? [...options.xTickLabels.keys()] : xd.ticks;
  for (const t of yd.ticks) {
    const y = fmt(ys(t));
    out.push(
      `<line class="grid" x1="${margin.left}" x2="${width - margin.right}" y1="${y}" y2="${y}"/>`,
      `<text class="tick" x="${margin.left - 6}" y="${y}" text-anchor="end" dy="0.32em">${
        tickLabel(t, yd.step)
      }</text>`,
    );
  }
  for (const t of xTicks) {
    const x = fmt(xs(t));
    const label = options.xTickLabels?.get(t) ?? tickLabel(t, xd.step);
    out.push(
      `<line class="grid" x1="${x}" x2="${x}" y1="${margin.top}" y2="${height - margin.bottom}"/>`,
      `<text class="tick" x="${x}" y="${height - margin.bottom + 14}" text-anchor="middle">${
        escapeXml(label)
      }</text>`,
    );
  }
  out.push(
    `<rect class="frame" x="${margin.left}" y="${margin.top}" width="${
      width - margin.left - margin.right
    }" height="${height - margin.top - margin.bottom}" fill="none"/>`,
    `<text class="axis-label" x="${(margin.left + width - margin.right) / 2}" y="${
      height - 6
    }" text-anchor="middle">${escapeXml(options.xLabel)}</text>`,
    `<text class="axis-label" transform="translate(14 ${
      (margin.top + height - margin.bottom) / 2
    }) rotate(-90)" text-anchor="middle">${escapeXml(options.yLabel)}</text>`,
    `</g>`,
  );
  for (const rule of options.rules ?? []) {
    if (rule.y < yd.domain[0] || rule.y > yd.domain[1]) continue;
    const y = fmt(ys(rule.y));
    out.push(
      `<g class="rule"><line x1="${margin.left}" x2="${
        width - margin.right
      }" y1="${y}" y2="${y}" stroke="#000" stroke-width="1.5" stroke-dasharray="10 3 2 3"/>` +
        `<text x="${width - margin.right - 4}" y="${y}" dy="-0.35em" text-anchor="end">${
          escapeXml(rule.label)
        }</text></g>`,
    );
  }
  for (const v of options.verticals ?? []) {
    if (!(v.x >= xd.domain[0] && v.x <= xd.domain[1])) continue;
    const x = fmt(xs(v.x));
    const labelY = v.at === "top" ? margin.top + 11 : height - margin.bottom - 4;
    out.push(
      `<g class="rule vertical"${
        v.mark ? ` data-mark="${escapeXml(v.mark)}" data-x="${v.x}"` : ""
      }><line x1="${x}" x2="${x}" y1="${margin.top}" y2="${
        height - margin.bottom
      }" stroke="#000" stroke-width="${v.mark ? 1.5 : 1}" stroke-dasharray="${
        v.mark ? "6 2 1 2" : "3 3"
      }"/>` +
        `<text x="${x}" y="${labelY}" dx="-4" text-anchor="end">${escapeXml(v.label)}</text></g>`,
    );
  }
  // series
  const ends: { y: number; label: string; colour: string }[] = [];
  series.forEach((s) => {
    const st = seriesStyle(s.style);
    const pts = s.points.filter(([x, y]) => Number.isFinite(x) && Number.isFinite(y));
    if (pts.length === 0) return;
    let d = "";
    pts.forEach(([x, y], k) => {
      if (k === 0) d += `M${fmt(xs(x))},${fmt(ys(y))}`;
      else if (options.steps) d += `H${fmt(xs(x))}V${fmt(ys(y))}`;
      else d += `L${fmt(xs(x))},${fmt(ys(y))}`;
    });
    const colour = s.faint ? "#777" : st.colour;
    out.push(
      `<g class="series${s.faint ? " faint" : ""}" data-series="${escapeXml(s.label)}">` +
        `<path d="${d}" fill="none" stroke="${colour}" stroke-width="${s.faint ? 1.2 : 2}"${
          st.dash ? ` stroke-dasharray="${st.dash}"` : ""
        }/>`,
    );
    const marked = options.markEveryPoint ? pts : [pts[pts.length - 1]];
    for (const [x, y] of marked) out.push(markerSvg(st.marker, xs(x), ys(y), 6, colour));
    out.push(`</g>`);
    if (!s.faint || options.labelFaint) {
      const [, yLast] = pts[pts.length - 1];
      ends.push({ y: ys(yLast), label: s.label, colour });
    }
  });
  // end labels, pushed apart so they do not overlap
  ends.sort((a, b) => a.y - b.y);
  for (let k = 1; k < ends.length; k++) {
    if (ends[k].y - ends[k - 1].y < 11) ends[k].y = ends[k - 1].y + 11;
  }
  const bottom = height - margin.bottom + 4;
  const overflow = ends.length ? ends[ends.length - 1].y - bottom : 0;
  if (overflow > 0) {
    for (const e of ends) e.y = Math.max(margin.top, e.y - overflow);
  }
  for (const e of ends) {
    out.push(
      `<text class="end-label" x="${width - margin.right + 6}" y="${fmt(e.y)}" dy="0.32em">${
        escapeXml(e.label)
      }</text>`,
    );
  }
  out.push(`</svg>`);
  return out.join("");
}
