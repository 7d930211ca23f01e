import { escapeXml } from "./chart.ts";
import {
  formatLength,
  formatVolume,
  lengthFromMm,
  lengthToMm,
  type LengthUnit,
  METRIC_UNITS,
} from "./display_units.ts";
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
  cavities: { id: string; name?: string; volume_cm3: number; x_mm?: number; y_mm?: number }[];
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
  /** Unit vector from the gate side towards the cavity (labels go beyond it). */
  dx: number;
  dy: number;
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
      // A cavity the scenario places (x_mm, y_mm) is drawn there; labels go away from its gates.
      if (typeof c.x_mm === "number" && typeof c.y_mm === "number") {
        const away = { x: c.x_mm - at.x, y: c.y_mm - at.y };
        const l = Math.hypot(away.x, away.y);
        return {
          id: c.id,
          ...(c.name ? { name: c.name } : {}),
          volume_cm3: c.volume_cm3,
          x: c.x_mm,
          y: c.y_mm,
          r,
          dx: l > 0 ? away.x / l : d.x,
          dy: l > 0 ? away.y / l : d.y,
        };
      }
      return {
        id: c.id,
        ...(c.name ? { name: c.name } : {}),
        volume_cm3: c.volume_cm3,
        x: at.x + d.x * (gap + r),
        y: at.y + d.y * (gap + r),
        r,
        dx: d.x,
        dy: d.y,
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
  /**
   * Print to a true scale within this box, mm: the drawing gets the largest scale of
   * {@link DRAWING_SCALES} that fits, its printed width (`--print-width`) and the ratio
   * written beside the scale bar.
   */
  print?: { maxWidthMm: number; maxHeightMm: number };
}

/** Drawing scales (printed : true size), the recommended ones of ISO 5455:1979, largest first. */
export const DRAWING_SCALES = [10, 5, 2, 1, 1 / 2, 1 / 5, 1 / 10, 1 / 20, 1 / 50] as const;

/** The largest recommended scale at which a `widthMm` × `heightMm` drawing fits the box. */
export function printScale(
  widthMm: number,
  heightMm: number,
  box: { maxWidthMm: number; maxHeightMm: number },
): { scale: number; ratio: string } {
  const scale =
    DRAWING_SCALES.find((k) => widthMm * k <= box.maxWidthMm && heightMm * k <= box.maxHeightMm) ??
      DRAWING_SCALES[DRAWING_SCALES.length - 1];
  return { scale, ratio: scale >= 1 ? `${scale}:1` : `1:${Math.round(1 / scale)}` };
}

/** A label to place: its lines, and the box centres to try, best first (mm, y up). */
interface Tag {
  lines: string[];
  strong: boolean;
  badge?: number;
  candidates: { x: number; y: number }[];
  /** The point the label names (a leader line joins it to a label placed away from it). */
  anchor?: { x: number; y: number };
}

/** A placed label box (centre, half sizes), mm, y up. */
interface Box {
  x: number;
  y: number;
  hw: number;
  hh: number;
}

function segmentBoxDistance(
  ax: number,
  ay: number,
  bx: number,
  by: number,
  box: Box,
): number {
  // distance from the box to the segment: sample the segment finely enough for labels
  const n = Math.max(2, Math.ceil(Math.hypot(bx - ax, by - ay) / Math.max(box.hh, 0.5)));
  let best = Infinity;
  for (let k = 0; k <= n; k++) {
    const x = ax + ((bx - ax) * k) / n, y = ay + ((by - ay) * k) / n;
    const dx = Math.max(Math.abs(x - box.x) - box.hw, 0);
    const dy = Math.max(Math.abs(y - box.y) - box.hh, 0);
    best = Math.min(best, Math.hypot(dx, dy));
  }
  return best;
}

function circleBoxOverlap(cx: number, cy: number, r: number, box: Box): boolean {
  const dx = Math.max(Math.abs(cx - box.x) - box.hw, 0);
  const dy = Math.max(Math.abs(cy - box.y) - box.hh, 0);
  return Math.hypot(dx, dy) < r;
}

/** The layout drawing as an SVG string. */
export function layoutSvg(scenario: DrawingScenario, options: LayoutSvgOptions = {}): string {
  const unit = options.lengthUnit ?? "mm";
  const changes = new Map((options.changes ?? []).map((c) => [c.element, c]));
  const sizes = new Map([...changes.values()].map((c) => [c.element, c.to_mm]));
  const geo = layoutGeometry(scenario, sizes);
  const { x0, y0, x1, y1 } = geo.bounds;
  const span = Math.max(x1 - x0, y1 - y0, 10);
  const font = span / 40;
  const f = (v: number) => (Math.round(v * 1000) / 1000).toString();
  const size = (mm: number, prefix: string) => `${prefix}${formatLength(mm, unit)}`;
  const label = (id: string, currentMm: number, prefix: string) => {
    const c = changes.get(id);
    if (!c) return `${id} ${size(currentMm, prefix)}`;
    return `${id} ${size(c.from_mm, prefix)} → ${formatLength(c.to_mm, unit)}`;
  };
  const charWidth = font * 0.6;
  const lineHeight = font * 1.25;
  const halfSize = (tag: Tag) => ({
    hw: (Math.max(...tag.lines.map((l) => l.length)) * charWidth + (tag.badge ? font * 1.9 : 0)) /
        2 + font * 0.15,
    hh: (tag.lines.length * lineHeight) / 2,
  });

  // obstacles: channels (segments with half widths), cavities, feed
  const segments = [
    ...geo.runners.map((r) => ({ ...r, half: r.width_mm / 2 })),
    ...geo.gates.map((g) => ({ ...g, half: Math.max(g.size_mm, font * 0.25) / 2 })),
  ];
  const placed: Box[] = [];
  const feedNode = geo.nodes.get(scenario.feed.node);
  const feedD = scenario.feed.kind === "sprue"
    ? scenario.feed.exit_diameter_mm ?? 5
    : scenario.feed.diameter_mm ?? 5;
  const cost = (box: Box) => {
    let c = 0;
    for (const p of placed) {
      if (Math.abs(p.x - box.x) < p.hw + box.hw && Math.abs(p.y - box.y) < p.hh + box.hh) c += 4;
    }
    for (const cav of geo.cavities) if (circleBoxOverlap(cav.x, cav.y, cav.r, box)) c += 3;
    for (const sgm of segments) {
      if (segmentBoxDistance(sgm.x1, sgm.y1, sgm.x2, sgm.y2, box) < sgm.half + font * 0.1) c += 2;
    }
    if (feedNode && circleBoxOverlap(feedNode.x, feedNode.y, feedD / 2 + font * 0.5, box)) c += 2;
    return c;
  };
  const gapMm = font * 0.12;
  const hitsLabel = (box: Box) =>
    placed.some((p) =>
      Math.abs(p.x - box.x) < p.hw + box.hw + gapMm && Math.abs(p.y - box.y) < p.hh + box.hh + gapMm
    );
  /** Boxes that leave the anchor this far away get a leader line. */
  const leaders = new Map<Box, { x: number; y: number }>();
  /**
   * Greedy placement: the first free candidate; else the cheapest candidate that touches no
   * other label; else a spiral outward from the anchor to the first box clear of every label
   * (and, if it finds one, of channels and cavities too), joined to its anchor by a leader.
   * Labels never overlap each other; channels and cavities are avoided where room allows.
   */
  const place = (tag: Tag): Box => {
    const { hw, hh } = halfSize(tag);
    let best: Box | null = null, bestCost = Infinity;
    for (const c of tag.candidates) {
      const box = { x: c.x, y: c.y, hw, hh };
      if (hitsLabel(box)) continue;
      const k = cost(box);
      if (k < bestCost) {
        best = box;
        bestCost = k;
        if (k === 0) break;
      }
    }
    if (best === null || bestCost > 0) {
      const at = tag.anchor ?? tag.candidates[0] ?? { x: 0, y: 0 };
      let spiral: Box | null = null, spiralCost = Infinity;
      for (let ring = 1; ring <= 80 && spiralCost > 0; ring++) {
        const r = ring * font * 0.8;
        const count = 12 + ring * 2;
        for (let k = 0; k < count; k++) {
          const a = (2 * Math.PI * k) / count;
          const box = {
            x: at.x + Math.cos(a) * (r + hw),
            y: at.y + Math.sin(a) * (r + hh),
            hw,
            hh,
          };
          if (hitsLabel(box)) continue;
          const c = cost(box);
          if (c < spiralCost) {
            spiral = box;
            spiralCost = c;
            if (c === 0) break;
          }
        }
      }
      if (spiral && (best === null || spiralCost < bestCost)) {
        best = spiral;
        leaders.set(spiral, at);
      }
    }
    if (best === null) {
      // nothing free within 80 rings (not seen on real tools): stack it below everything
      const low = Math.min(...placed.map((p) => p.y - p.hh), y0) - hh - font;
      best = { x: tag.anchor?.x ?? 0, y: low, hw, hh };
      leaders.set(best, tag.anchor ?? { x: best.x, y: best.y });
    }
    placed.push(best);
    return best;
  };
  const boxAttr = (box: Box) =>
    ` data-box="${f(box.x - box.hw)} ${f(-(box.y + box.hh))} ${f(box.x + box.hw)} ${
      f(-(box.y - box.hh))
    }"`;
  const tagSvg = (tag: Tag, box: Box | null) => {
    if (box === null) return "";
    const left = box.x - box.hw + font * 0.15;
    let out = `<g class="tag"${boxAttr(box)}>`;
    const anchor = leaders.get(box);
    if (anchor) {
      const ex = Math.max(box.x - box.hw, Math.min(anchor.x, box.x + box.hw));
      const ey = Math.max(box.y - box.hh, Math.min(anchor.y, box.y + box.hh));
      out += `<line class="leader" x1="${f(anchor.x)}" y1="${f(-anchor.y)}" x2="${f(ex)}" y2="${
        f(-ey)
      }"/>`;
    }
    let textX = box.x;
    if (tag.badge !== undefined) {
      const bx = left + font * 0.8;
      out += `<g class="step-badge"><circle cx="${f(bx)}" cy="${f(-box.y)}" r="${
        f(font * 0.8)
      }"/><text x="${f(bx)}" y="${
        f(-box.y)
      }" text-anchor="middle" dy="0.35em">${tag.badge}</text></g>`;
      textX = box.x + font * 0.95;
    }
    const top = box.y + box.hh - lineHeight / 2;
    tag.lines.forEach((line, k) => {
      out += `<text class="label${tag.strong && k === 0 ? " strong" : ""}" x="${f(textX)}" y="${
        f(-(top - k * lineHeight))
      }" text-anchor="middle" dy="0.35em">${escapeXml(line)}</text>`;
    });
    return out + "</g>";
  };
  /** Candidate centres beside a segment: both sides, centre then shifted along it. */
  const besideSegment = (
    ax: number,
    ay: number,
    bx: number,
    by: number,
    half: number,
    tag: Tag,
    shifts: number[],
  ) => {
    const { hw, hh } = halfSize(tag);
    const l = Math.hypot(bx - ax, by - ay) || 1;
    const tx = (bx - ax) / l, ty = (by - ay) / l;
    let nx = -ty, ny = tx;
    if (ny < 0 || (ny === 0 && nx < 0)) [nx, ny] = [-nx, -ny];
    const extent = Math.abs(nx) * hw + Math.abs(ny) * hh;
    const reach = half + font * 0.35 + extent;
    const mx = (ax + bx) / 2, my = (ay + by) / 2;
    const out: { x: number; y: number }[] = [];
    for (const ring of [0, 1, 2]) {
      const r = reach + ring * (2 * extent + font * 0.4);
      for (const s of shifts) {
        for (const side of [1, -1]) {
          out.push({ x: mx + tx * s * l + nx * side * r, y: my + ty * s * l + ny * side * r });
        }
      }
    }
    return out;
  };

  const body: string[] = [];
  const channels = { runner: [] as string[], gate: [] as string[] };
  const feedBody: string[] = [];
  const labels: string[] = [];
  // labels are placed in order of need: gates (least room), runners, cavity names, the feed
  const jobs: { priority: number; order: number; run: () => void }[] = [];
  const defer = (priority: number, run: () => void) =>
    jobs.push({ priority, order: jobs.length, run });
  // feed
  if (feedNode) {
    const text = scenario.feed.kind === "sprue"
      ? `sprue ⌀${formatLength(scenario.feed.entry_diameter_mm ?? feedD, unit)}–${
        formatLength(feedD, unit)
      }`
      : `hot drop ⌀${formatLength(feedD, unit)}`;
    const tag: Tag = { lines: [text], strong: false, candidates: [], anchor: feedNode };
    const { hw, hh } = halfSize(tag);
    const free = freeDirection(geo, scenario.feed.node);
    for (const turn of [0, 0.5, -0.5, 1, -1, 1.5, -1.5, Math.PI]) {
      const a = free + turn;
      const reach = feedD / 2 + font * 0.7;
      tag.candidates.push({
        x: feedNode.x + Math.cos(a) * (reach + hw),
        y: feedNode.y + Math.sin(a) * (reach + hh),
      });
    }
    feedBody.push(
      `<g class="feed"><circle cx="${f(feedNode.x)}" cy="${f(-feedNode.y)}" r="${f(feedD / 2)}"/>` +
        `<circle class="feed-ring" cx="${f(feedNode.x)}" cy="${f(-feedNode.y)}" r="${
          f(feedD / 2 + font * 0.5)
        }"/></g>`,
    );
    defer(3, () => labels.push(`<g class="feed-label">${tagSvg(tag, place(tag))}</g>`));
  }
  // cavities: two lines inside when they fit, else the id inside and the rest beyond
  for (const c of geo.cavities) {
    const title = `${c.id}${c.name ? ` ${c.name}` : ""}`;
    const volume = formatVolume(c.volume_cm3, { ...METRIC_UNITS, length: unit });
    const fits = (text: string) => c.r * 2 > charWidth * 1.05 * Math.max(text.length, 3);
    const inside = fits(title) && fits(volume) && c.r > font * 1.4;
    const idInside = !inside && fits(c.id) && c.r > font * 0.8;
    let text = "";
    if (inside) {
      // the two lines inside the circle: title above the centre, volume below
      const box = { x: c.x, y: c.y - font * 0.4, ...halfSize({ lines: [title, volume] } as Tag) };
      placed.push(box);
      text = `<g class="tag inside"${boxAttr(box)}><text x="${f(c.x)}" y="${
        f(-c.y)
      }" text-anchor="middle" dy="-0.2em" class="label strong">${escapeXml(title)}</text><text x="${
        f(c.x)
      }" y="${f(-c.y)}" text-anchor="middle" dy="1.0em" class="label">${
        escapeXml(volume)
      }</text></g>`;
    } else {
      if (idInside) {
        const box = { x: c.x, y: c.y, ...halfSize({ lines: [c.id] } as Tag) };
        placed.push(box);
        text = `<g class="tag inside"${boxAttr(box)}><text x="${f(c.x)}" y="${
          f(-c.y)
        }" text-anchor="middle" dy="0.35em" class="label strong">${escapeXml(c.id)}</text></g>`;
      }
      const lines = idInside ? (c.name ? [c.name, volume] : [volume]) : [title, volume];
      const tag: Tag = {
        lines,
        strong: !idInside,
        candidates: [],
        anchor: { x: c.x + c.dx * c.r, y: c.y + c.dy * c.r },
      };
      const { hw, hh } = halfSize(tag);
      for (const turn of [0, 0.6, -0.6, 1.2, -1.2, Math.PI / 2, -Math.PI / 2, 2.2, -2.2]) {
        const a = Math.atan2(c.dy, c.dx) + turn;
        const ux = Math.cos(a), uy = Math.sin(a);
        const reach = c.r + font * 0.3 + Math.abs(ux) * hw + Math.abs(uy) * hh;
        tag.candidates.push({ x: c.x + ux * reach, y: c.y + uy * reach });
      }
      defer(2, () =>
        labels.push(
          `<g class="cavity-label" data-for="${escapeXml(c.id)}">${tagSvg(tag, place(tag))}</g>`,
        ));
    }
    body.push(
      `<g class="cavity" data-id="${escapeXml(c.id)}"><circle cx="${f(c.x)}" cy="${f(-c.y)}" r="${
        f(c.r)
      }"/>${text}</g>`,
    );
  }
  // runners, then gates: channel drawn at scale, label placed where it is free
  const channel = (
    kind: "runner" | "gate",
    id: string,
    seg: { x1: number; y1: number; x2: number; y2: number },
    width: number,
    text: string,
    shifts: number[],
  ) => {
    const changed = changes.get(id);
    const tag: Tag = {
      lines: [text],
      strong: changed !== undefined,
      ...(changed ? { badge: changed.step } : {}),
      candidates: [],
      anchor: { x: (seg.x1 + seg.x2) / 2, y: (seg.y1 + seg.y2) / 2 },
    };
    tag.candidates = besideSegment(seg.x1, seg.y1, seg.x2, seg.y2, width / 2, tag, shifts);
    if (kind === "gate") {
      // a short gate: also try beside its runner node, clear of the widest runner there
      const { hw } = halfSize(tag);
      const atNode = geo.runners.filter((r) =>
        (r.x1 === seg.x1 && r.y1 === seg.y1) || (r.x2 === seg.x1 && r.y2 === seg.y1)
      );
      const clear = Math.max(width / 2, ...atNode.map((r) => r.width_mm / 2)) + font * 0.4;
      const mx = (seg.x1 + seg.x2) / 2, my = (seg.y1 + seg.y2) / 2;
      const near: { x: number; y: number }[] = [];
      for (const dy of [0, 1, -1, 2, -2]) {
        for (const side of [1, -1]) {
          near.push({ x: mx + side * (clear + hw), y: my + dy * lineHeight });
        }
      }
      tag.candidates.splice(shifts.length * 2, 0, ...near); // after the first ring
    }
    const slot = channels[kind].push("") - 1;
    defer(kind === "gate" ? 0 : 1, () => {
      const box = place(tag);
      channels[kind][slot] =
        `<g class="${kind}${changed ? " changed" : ""}" data-id="${escapeXml(id)}">` +
        (changed
          ? `<line class="halo" x1="${f(seg.x1)}" y1="${f(-seg.y1)}" x2="${f(seg.x2)}" y2="${
            f(-seg.y2)
          }" stroke-width="${f(width + font * 0.8)}"/>`
          : "") +
        `<line class="body" x1="${f(seg.x1)}" y1="${f(-seg.y1)}" x2="${f(seg.x2)}" y2="${
          f(-seg.y2)
        }" stroke-width="${f(width)}"/>` +
        tagSvg(tag, box) +
        `</g>`;
    });
  };
  for (const g of geo.gates) {
    const gate = scenario.gates.find((x) => x.id === g.id)!;
    const prefix = gate.type === "edge" ? "t " : "⌀";
    const text = gate.type === "edge" && gate.width_mm
      ? `${label(g.id, g.size_mm, prefix)} × ${formatLength(gate.width_mm, unit)}`
      : label(g.id, g.size_mm, prefix);
    channel("gate", g.id, g, Math.max(g.size_mm, font * 0.25), text, [0, -0.5, 0.5, -1.5, 1.5]);
  }
  for (const r of geo.runners) {
    channel("runner", r.id, r, r.width_mm, label(r.id, r.width_mm, "⌀"), [0, 0.3, -0.3, 0.6, -0.6]);
  }
  jobs.sort((a, b) => a.priority - b.priority || a.order - b.order).forEach((j) => j.run());
  // the view box: everything drawn, labels included, and the scale bar
  let bx0 = x0, bx1 = x1, by0 = y0, by1 = y1;
  for (const b of placed) {
    bx0 = Math.min(bx0, b.x - b.hw);
    bx1 = Math.max(bx1, b.x + b.hw);
    by0 = Math.min(by0, b.y - b.hh);
    by1 = Math.max(by1, b.y + b.hh);
  }
  const pad = font * 1.5;
  const vx0 = bx0 - pad, vx1 = bx1 + pad;
  const vy0 = -by1 - pad, vy1 = -by0 + pad + font * 3; // y flipped; room for the scale bar
  const stepMm = niceLengthStep(span / 4, unit);
  const sx = vx0 + pad, sy = vy1 - font * 1.2;
  const printed = options.print ? printScale(vx1 - vx0, vy1 - vy0, options.print) : null;
  const out: string[] = [];
  out.push(
    `<svg xmlns="http://www.w3.org/2000/svg" class="layout" ${
      options.id ? `id="${escapeXml(options.id)}" ` : ""
    }viewBox="${f(vx0)} ${f(vy0)} ${f(vx1 - vx0)} ${f(vy1 - vy0)}"${
      printed
        ? ` data-scale="${printed.ratio}" style="--print-width:${f((vx1 - vx0) * printed.scale)}mm"`
        : ""
    } role="img" aria-label="Layout drawing of the runner system">`,
    `<g font-size="${f(font)}" class="layout-body">`,
    ...body,
    ...channels.runner,
    ...channels.gate,
    ...feedBody,
    ...labels,
    `<g class="scale-bar"><path d="M${f(sx)},${f(sy - font * 0.4)}V${f(sy)}H${f(sx + stepMm)}V${
      f(sy - font * 0.4)
    }"/><text class="label" x="${f(sx + stepMm + font * 0.5)}" y="${f(sy)}">${
      formatLength(stepMm, unit).replace(/\.0+$/, "")
    } ${unit === "mm" ? "mm" : "in"}${
      printed ? ` · scale ${printed.ratio} printed at 100 %` : ""
    }</text></g>`,
    `</g></svg>`,
  );
  return out.join("");
}

/** Angle (radians, y up) of the widest gap between the runners and gates leaving a node. */
export function freeDirection(geo: DrawingGeometry, nodeId: string): number {
  const n = geo.nodes.get(nodeId);
  if (!n) return -Math.PI / 2;
  const angles: number[] = [];
  for (const r of geo.runners) {
    if (r.x1 === n.x && r.y1 === n.y) angles.push(Math.atan2(r.y2 - r.y1, r.x2 - r.x1));
    else if (r.x2 === n.x && r.y2 === n.y) angles.push(Math.atan2(r.y1 - r.y2, r.x1 - r.x2));
  }
  for (const g of geo.gates) {
    if (g.x1 === n.x && g.y1 === n.y) angles.push(Math.atan2(g.y2 - g.y1, g.x2 - g.x1));
  }
  if (angles.length === 0) return -Math.PI / 2;
  angles.sort((a, b) => a - b);
  let best = -Math.PI / 2, widest = -1;
  for (let k = 0; k < angles.length; k++) {
    const a = angles[k];
    const b = k + 1 < angles.length ? angles[k + 1] : angles[0] + 2 * Math.PI;
    // on a tie prefer the lower gap: runner labels sit above horizontal runners
    const score = b - a - 1e-3 * Math.sin((a + b) / 2);
    if (score > widest) {
      widest = score;
      best = (a + b) / 2;
    }
  }
  return best;
}

/** The drawing's key, as HTML text under it. */
export function layoutKeyText(unit: LengthUnit): string {
  return `Plan view to scale from the node coordinates; sizes in ${
    unit === "mm" ? "mm" : "inch"
  }. ⌀ diameter; t gate thickness × width. Runners at their true width; cavity circles by volume (placed beyond their gates). Changed elements: dashed outline, before → after, step number.`;
}

/** A round scale-bar length near `approxMm`, in whole steps of the chosen unit; returned in mm. */
export function niceLengthStep(approxMm: number, unit: LengthUnit): number {
  const inUnit = lengthFromMm(approxMm, unit);
  const step = niceStep(0, inUnit, 1);
  return lengthToMm(step, unit);
}
