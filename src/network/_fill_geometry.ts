import { interpolateSection, type Section, sectionArea } from "../physics/mod.ts";
import type { ElementGeometry } from "./feed_network.ts";

/**
 * Volume of the first `filledLength` of a linear taper from `entry` to `exit`
 * (m³). Every dimension is linear in x, so the area is quadratic in x and
 * Simpson's rule is exact.
 */
export function taperedVolume(
  entry: Section,
  exit: Section,
  length: number,
  filledLength: number,
): number {
  const t = filledLength / length;
  const a0 = sectionArea(entry);
  const am = areaAlong(entry, exit, t / 2);
  const a1 = areaAlong(entry, exit, t);
  return (filledLength / 6) * (a0 + 4 * am + a1);
}

/**
 * `sectionArea(interpolateSection(entry, exit, t))`, the same arithmetic, without building
 * the section for the round kinds (a filling taper asks for it a dozen times per law).
 */
function areaAlong(entry: Section, exit: Section, t: number): number {
  if ((entry.kind === "circle" || entry.kind === "half_round") && exit.kind === entry.kind) {
    if (!(t >= 0 && t <= 1)) return sectionArea(interpolateSection(entry, exit, t)); // throws
    const r = entry.radius + ((exit as typeof entry).radius - entry.radius) * t;
    if (!(r > 0) || !Number.isFinite(r)) return sectionArea(interpolateSection(entry, exit, t));
    return entry.kind === "circle" ? Math.PI * r * r : 0.5 * Math.PI * r * r;
  }
  return sectionArea(interpolateSection(entry, exit, t));
}

/** Filled length of a taper holding `volume` from its entry (m), by safeguarded Newton. */
export function taperedFilledLength(
  entry: Section,
  exit: Section,
  length: number,
  volume: number,
): number {
  const total = taperedVolume(entry, exit, length, length);
  if (volume >= total) return length;
  if (volume <= 0) return 0;
  let lo = 0;
  let hi = length;
  let x = (volume / total) * length;
  for (let k = 0; k < 60; k++) {
    const f = taperedVolume(entry, exit, length, x) - volume;
    if (Math.abs(f) <= 1e-14 * total) break;
    if (f > 0) hi = x;
    else lo = x;
    const area = areaAlong(entry, exit, x / length);
    let next = x - f / area;
    if (!(next > lo && next < hi)) next = (lo + hi) / 2;
    x = next;
  }
  return x;
}

/** Volume of an element geometry, m³. */
export function geometryVolume(g: ElementGeometry): number {
  switch (g.type) {
    case "uniform":
      return sectionArea(g.section) * g.length;
    case "tapered":
      return taperedVolume(g.entry, g.exit, g.length, g.length);
    case "strip":
      return g.width * g.gap * g.flowLength;
    case "radial":
      return Math.PI * (g.maxRadius * g.maxRadius - g.gateRadius * g.gateRadius) * g.gap;
  }
}
