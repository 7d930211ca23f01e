import { escapeXml } from "./chart.ts";
import { formatLength, lengthFromMm, lengthToMm, type LengthUnit } from "./display_units.ts";
import { niceStep } from "./chart.ts";

/**
 * The layout drawing: the runner system in plan view from the scenario's node
 * coordinates, in millimetres (1 SVG unit = 1 mm, y up as on the tool
 * drawing). Runners are drawn at their true width, gates at their size,
 * cavities as circles whose area is proportional to their volume (a cavity has
 * no position in the scenario: it sits beyond its gate, in the direction the
 * melt arrives). Every element carries its id and size; changed elements show
 * `before → after`, a dashed outline and their step number.
 *
 * @module
 */

/** The parts of a scenario the drawing needs (the wire format, metric). */
export interface DrawingScenario {
  feed: {
    kind: "sprue" | "hot_drop";
    node: string;
    entry_diameter_mm?: number;
    exit_diameter_mm?: number;
    diameter_mm?: number;
  };
  nodes: { id: string; x_mm: number; y_mm: number }[];
  runners?: {
    id: string;
    from: string;
    to: string;
    shape?: string;
    diameter_mm: number;
    width_mm?: number;
  }[];
  gates: {
    id: string;
    from: string;
    cavity: string;
    type: string;
    diameter_mm?: number;
    thickness_mm?: number;
    width_mm?: number;
  }[];
  cavities: { id: string; name?: string; volume_cm3: number }[];
}

/** A size change to show on the drawing (from the optimization's change list). */
export interface DrawingChange {
  element: string;
  from_mm: number;
  to_mm: number;
  step: number;
}

/** A placed cavity. */
export interface PlacedCavity {
  id: string;
  name?: string;
  volume_cm3: number;
  x: number;
  y: number;
  r: number;
}

/** Geometry of the drawing in mm, y up. */
export interface DrawingGeometry {
  nodes: Map<string, { x: number; y: number }>;
  cavities: PlacedCavity[];
  /** Gate centre lines: from the runner node to the cavity's rim. */
  gates: { id: string; x1: number; y1: number; x2: number; y2: number; size_mm: number }[];
  runners: { id: string; x1: number; y1: number; x2: number; y2: number; width_mm: number }[];
  bounds: { x0: number; y0: number; x1: number; y1: number };
}

function median(values: number[]): number {
  if (values.length === 0) return NaN;
  const s = [...values].sort((a, b) => a - b);
  const m = Math.floor(s.length / 2);
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/** Drawn width of a runner, mm: its width if given, else its diameter. */
export function runnerWidthMm(r: { diameter_mm: number; width_mm?: number }): number {
  return r.width_mm ?? r.diameter_mm;
}

/** Gate size shown (thickness of an edge gate, else diameter), mm. */
export function gateSizeMm(g: DrawingScenario["gates"][number]): number {
  return g.type === "edge" ? g.thickness_mm ?? 1 : g.diameter_mm ?? 1;
}

/**
 * Place everything. Cavity radii are `k·√V`, with `k` chosen so the largest
 * is 0.45 of the median runner length and then shrunk until no two cavities
 * overlap.
 */
export function layoutGeometry(
  scenario: DrawingScenario,
  sizes: Map<string, number> = new Map(),
): DrawingGeometry {
  const nodes = new Map(scenario.nodes.map((n) => [n.id, { x: n.x_mm, y: n.y_mm }]));
  const runners = (scenario.runners ?? []).flatMap((r) => {
    const a = nodes.get(r.from), b = nodes.get(r.to);
    if (!a || !b) return [];
    const size = sizes.get(r.id);
    const width = size !== undefined && r.width_mm === undefined ? size : runnerWidthMm(r);
    return [{ id: r.id, x1: a.x, y1: a.y, x2: b.x, y2: b.y, width_mm: width }];
  });
  const lengths = runners.map((r) => Math.hypot(r.x2 - r.x1, r.y2 - r.y1)).filter((l) => l > 0);
  const xsAll = [...nodes.values()].map((n) => n.x);
  const ysAll = [...nodes.values()].map((n) => n.y);
  const spread = Math.max(
    Math.max(...xsAll) - Math.min(...xsAll),
    Math.max(...ysAll) - Math.min(...ysAll),
  );
  const typical = Number.isFinite(median(lengths)) ? median(lengths) : spread > 0 ? spread / 3 : 30;
  const centre = {
    x: xsAll.reduce((a, b) => a + b, 0) / xsAll.length,
    y: ysAll.reduce((a, b) => a + b, 0) / ysAll.length,
  };
  // the direction melt arrives at each node (sum of unit vectors of runners ending there)
  const arrival = new Map<string, { x: number; y: number }>();
  for (const r of scenario.runners ?? []) {
    const a = nodes.get(r.from), b = nodes.get(r.to);
    if (!a || !b) continue;
    const l = Math.hypot(b.x - a.x, b.y - a.y);
    if (l === 0) continue;
    const v = arrival.get(r.to) ?? { x: 0, y: 0 };
    arrival.set(r.to, { x: v.x + (b.x - a.x) / l, y: v.y + (b.y - a.y) / l });
  }
  const gap = Math.max(3, 0.15 * typical);
  const vMax = Math.max(...scenario.cavities.map((c) => c.volume_cm3), 1e-9);
  let k = (0.45 * typical) / Math.sqrt(vMax);

  const direction = (cavityId: string) => {
    const gateNodes = scenario.gates.filter((g) => g.cavity === cavityId).flatMap((g) => {
      const n = nodes.get(g.from);
      return n ? [{ id: g.from, ...n }] : [];
    });
    if (gateNodes.length === 0) return { at: centre, d: { x: 0, y: 1 } };
    const at = {
      x: gateNodes.reduce((a, n) => a + n.x, 0) / gateNodes.length,
      y: gateNodes.reduce((a, n) => a + n.y, 0) / gateNodes.length,
    };
    let d = gateNodes.reduce((acc, n) => {
      const v = arrival.get(n.id) ?? { x: 0, y: 0 };
      return { x: acc.x + v.x, y: acc.y + v.y };
    }, { x: 0, y: 0 });
    if (Math.hypot(d.x, d.y) < 1e-6) d = { x: at.x - centre.x, y: at.y - centre.y };
    if (Math.hypot(d.x, d.y) < 1e-6) d = { x: 0, y: 1 };
    const l = Math.hypot(d.x, d.y);
    return { at, d: { x: d.x / l, y: d.y / l } };
  };
  const dirs = new Map(scenario.cavities.map((c) => [c.id, direction(c.id)]));
  let placed: PlacedCavity[] = [];
  for (let attempt = 0; attempt < 30; attempt++) {
    placed = scenario.cavities.map((c) => {
      const r = k * Math.sqrt(c.volume_cm3);
      const { at, d } = dirs.get(c.id)!;
      return {
        id: c.id,
        ...(c.name ? { name: c.name } : {}),
        volume_cm3: c.volume_cm3,
        x: at.x + d.x * (gap + r),
        y: at.y + d.y * (gap + r),
        r,
      };
    });
    let overlap = false;
    for (let i = 0; i < placed.length && !overlap; i++) {
      for (let j = i + 1; j < placed.length; j++) {
        const a = placed[i], b = placed[j];
        if (Math.hypot(a.x - b.x, a.y - b.y) < (a.r + b.r) * 1.08) {
          overlap = true;
          break;
        }
      }
    }
    if (!overlap) break;
    k *= 0.85;
  }
  const cavityById = new Map(placed.map((c) => [c.id, c]));
  const gates = scenario.gates.flatMap((g) => {
    const n = nodes.get(g.from), c = cavityById.get(g.cavity);
    if (!n || !c) return [];
    const l = Math.hypot(c.x - n.x, c.y - n.y);
    const t = l > 0 ? Math.max(0, (l - c.r) / l) : 0;
    return [{
      id: g.id,
      x1: n.x,
      y1: n.y,
      x2: n.x + (c.x - n.x) * t,
      y2: n.y + (c.y - n.y) * t,
      size_mm: sizes.get(g.id) ?? gateSizeMm(g),
    }];
  });
  let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
  const grow = (x: number, y: number, pad: number) => {
    x0 = Math.min(x0, x - pad);
    x1 = Math.max(x1, x + pad);
    y0 = Math.min(y0, y - pad);
    y1 = Math.max(y1, y + pad);
  };
  for (const n of nodes.values()) grow(n.x, n.y, 4);
  for (const c of placed) grow(c.x, c.y, c.r);
  return { nodes, cavities: placed, gates, runners, bounds: { x0, y0, x1, y1 } };
}

/** Options of {@link layoutSvg}. */
export interface LayoutSvgOptions {
  /** Length unit of the size labels (default mm). */
  lengthUnit?: LengthUnit;
  /** Changes to mark (before → after). The drawing shows the after sizes. */
  changes?: DrawingChange[];
  /** id of the SVG element. */
  id?: string;
}

/** The layout drawing as an SVG string. */
export function layoutSvg(scenario: DrawingScenario, options: LayoutSvgOptions = {}): string {
  const unit = options.lengthUnit ?? "mm";
  const changes = new Map((options.changes ?? []).map((c) => [c.element, c]));
  const sizes = new Map([...changes.values()].map((c) => [c.element, c.to_mm]));
  const geo = layoutGeometry(scenario, sizes);
  const { x0, y0, x1, y1 } = geo.bounds;
  const span = Math.max(x1 - x0, y1 - y0, 10);
  const font = span / 42;
  const pad = font * 5;
  const vx0 = x0 - pad, vx1 = x1 + pad;
  const vy0 = -y1 - pad, vy1 = -y0 + pad + font * 3; // y flipped; room for the scale bar
  const w = vx1 - vx0, h = vy1 - vy0;
  const f = (v: number) => (Math.round(v * 1000) / 1000).toString();
  const size = (mm: number, prefix: string) => `${prefix}${formatLength(mm, unit)}`;
  const label = (id: string, currentMm: number, prefix: string) => {
    const c = changes.get(id);
    if (!c) return `${id} ${size(currentMm, prefix)}`;
    return `${id} ${size(c.from_mm, prefix)} → ${formatLength(c.to_mm, unit)}`;
  };
  const out: string[] = [];
  out.push(
    `<svg xmlns="http://www.w3.org/2000/svg" class="layout" ${
      options.id ? `id="${escapeXml(options.id)}" ` : ""
    }viewBox="${f(vx0)} ${f(vy0)} ${f(w)} ${
      f(h)
    }" role="img" aria-label="Layout drawing of the runner system" style="--font:${f(font)}px">`,
  );
  out.push(`<g font-size="${f(font)}" class="layout-body">`);
  // cavities
  for (const c of geo.cavities) {
    out.push(
      `<g class="cavity" data-id="${escapeXml(c.id)}"><circle cx="${f(c.x)}" cy="${f(-c.y)}" r="${
        f(c.r)
      }"/>` +
        `<text x="${f(c.x)}" y="${f(-c.y)}" text-anchor="middle" dy="-0.2em" class="label strong">${
          escapeXml(c.id)
        }${c.name ? ` ${escapeXml(c.name)}` : ""}</text>` +
        `<text x="${f(c.x)}" y="${f(-c.y)}" text-anchor="middle" dy="1.0em" class="label">${
          formatVolume(c.volume_cm3)
        } cm³</text></g>`,
    );
  }
  // runners
  for (const r of geo.runners) {
    const changed = changes.get(r.id);
    const mx = (r.x1 + r.x2) / 2, my = (r.y1 + r.y2) / 2;
    const l = Math.hypot(r.x2 - r.x1, r.y2 - r.y1) || 1;
    let nx = -(r.y2 - r.y1) / l, ny = (r.x2 - r.x1) / l;
    if (ny < 0 || (ny === 0 && nx < 0)) [nx, ny] = [-nx, -ny];
    const off = r.width_mm / 2 + font * 0.9;
    const horizontal = Math.abs(r.y2 - r.y1) < Math.abs(r.x2 - r.x1);
    out.push(
      `<g class="runner${changed ? " changed" : ""}" data-id="${escapeXml(r.id)}">` +
        (changed
          ? `<line class="halo" x1="${f(r.x1)}" y1="${f(-r.y1)}" x2="${f(r.x2)}" y2="${
            f(-r.y2)
          }" stroke-width="${f(r.width_mm + font * 0.8)}"/>`
          : "") +
        `<line class="body" x1="${f(r.x1)}" y1="${f(-r.y1)}" x2="${f(r.x2)}" y2="${
          f(-r.y2)
        }" stroke-width="${f(r.width_mm)}"/>` +
        `<text class="label${changed ? " strong" : ""}" x="${f(mx + nx * off)}" y="${
          f(-(my + ny * off))
        }" text-anchor="${horizontal ? "middle" : "start"}" dy="${horizontal ? "0" : "0.32em"}">${
          escapeXml(label(r.id, r.width_mm, "⌀"))
        }</text>` +
        (changed ? stepBadge(changed.step, mx - nx * off, -(my - ny * off), font) : "") +
        `</g>`,
    );
  }
  // gates
  for (const g of geo.gates) {
    const changed = changes.get(g.id);
    const gate = scenario.gates.find((x) => x.id === g.id)!;
    const prefix = gate.type === "edge" ? "t " : "⌀";
    const drawWidth = Math.max(g.size_mm, font * 0.25);
    const mx = (g.x1 + g.x2) / 2, my = (g.y1 + g.y2) / 2;
    const l = Math.hypot(g.x2 - g.x1, g.y2 - g.y1) || 1;
    let nx = -(g.y2 - g.y1) / l, ny = (g.x2 - g.x1) / l;
    if (nx < 0) [nx, ny] = [-nx, -ny];
    const off = drawWidth / 2 + font * 0.6;
    const text = gate.type === "edge" && gate.width_mm
      ? `${label(g.id, g.size_mm, prefix)} × ${formatLength(gate.width_mm, unit)}`
      : label(g.id, g.size_mm, prefix);
    out.push(
      `<g class="gate${changed ? " changed" : ""}" data-id="${escapeXml(g.id)}">` +
        (changed
          ? `<line class="halo" x1="${f(g.x1)}" y1="${f(-g.y1)}" x2="${f(g.x2)}" y2="${
            f(-g.y2)
          }" stroke-width="${f(drawWidth + font * 0.8)}"/>`
          : "") +
        `<line class="body" x1="${f(g.x1)}" y1="${f(-g.y1)}" x2="${f(g.x2)}" y2="${
          f(-g.y2)
        }" stroke-width="${f(drawWidth)}"/>` +
        `<text class="label${changed ? " strong" : ""}" x="${f(mx + nx * off)}" y="${
          f(-(my + ny * off))
        }" dy="0.32em">${escapeXml(text)}</text>` +
        (changed ? stepBadge(changed.step, mx - nx * off * 2, -(my - ny * off * 2), font) : "") +
        `</g>`,
    );
  }
  // feed
  const feedNode = geo.nodes.get(scenario.feed.node);
  if (feedNode) {
    const d = scenario.feed.kind === "sprue"
      ? scenario.feed.exit_diameter_mm ?? 5
      : scenario.feed.diameter_mm ?? 5;
    const text = scenario.feed.kind === "sprue"
      ? `sprue ⌀${formatLength(scenario.feed.entry_diameter_mm ?? d, unit)}–${
        formatLength(d, unit)
      }`
      : `hot drop ⌀${formatLength(d, unit)}`;
    out.push(
      `<g class="feed"><circle cx="${f(feedNode.x)}" cy="${f(-feedNode.y)}" r="${f(d / 2)}"/>` +
        `<circle class="feed-ring" cx="${f(feedNode.x)}" cy="${f(-feedNode.y)}" r="${
          f(d / 2 + font * 0.5)
        }"/>` +
        `<text class="label" x="${f(feedNode.x + d / 2 + font * 0.8)}" y="${
          f(-feedNode.y - d / 2 - font * 0.6)
        }">${escapeXml(text)}</text></g>`,
    );
  }
  // scale bar
  const stepMm = niceLengthStep(span / 4, unit);
  const bx = vx0 + pad * 0.5, by = vy1 - font * 1.6;
  out.push(
    `<g class="scale-bar"><path d="M${f(bx)},${f(by - font * 0.4)}V${f(by)}H${f(bx + stepMm)}V${
      f(by - font * 0.4)
    }"/>` +
      `<text class="label" x="${f(bx + stepMm + font * 0.5)}" y="${f(by)}">${
        formatLength(stepMm, unit)
      } ${unit === "mm" ? "mm" : "in"} · sizes in ${
        unit === "mm" ? "mm" : "inch"
      } · ⌀ diameter, t gate thickness × width</text></g>`,
  );
  out.push(`</g></svg>`);
  return out.join("");
}

function stepBadge(step: number, x: number, y: number, font: number): string {
  const f = (v: number) => (Math.round(v * 1000) / 1000).toString();
  return `<g class="step-badge"><circle cx="${f(x)}" cy="${f(y)}" r="${f(font * 0.8)}"/>` +
    `<text x="${f(x)}" y="${f(y)}" text-anchor="middle" dy="0.35em">${step}</text></g>`;
}

function formatVolume(cm3: number): string {
  return cm3 >= 100 ? cm3.toFixed(0) : cm3 >= 10 ? cm3.toFixed(1) : cm3.toFixed(2);
}

/** A round scale-bar length near `approxMm`, in whole steps of the chosen unit; returned in mm. */
export function niceLengthStep(approxMm: number, unit: LengthUnit): number {
  const inUnit = lengthFromMm(approxMm, unit);
  const step = niceStep(0, inUnit, 1);
  return lengthToMm(step, unit);
}
