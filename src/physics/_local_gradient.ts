/**
 * The local uniform-channel law shared by the uniform, tapered and radial laws, private
 * to `physics/`.
 *
 * @module
 */
import type { FlowCurve } from "../materials/flow_curve.ts";
import { kozickiConstants } from "./noncircular.ts";
import { hydraulicDiameter, type Section, sectionArea } from "./section.ts";
import { type IntegralCursor, wallResponse } from "./_wall_shear.ts";

/** Section data the channel laws need, computed once per section. */
export interface SectionFlowData {
  area: number;
  hydraulicDiameter: number;
  a: number;
  b: number;
}

/** Area, Dh and Kozicki constants of a section. */
export function sectionFlowData(section: Section): SectionFlowData {
  const { a, b } = kozickiConstants(section);
  return { area: sectionArea(section), hydraulicDiameter: hydraulicDiameter(section), a, b };
}

/**
 * Pressure gradient of the section at |Q| (the caller restores the sign): ΔP/L in Pa/m,
 * its Q-derivative in Pa·s/m⁴, and the wall state.
 */
export function localGradient(
  flowRate: number,
  data: SectionFlowData,
  curve: FlowCurve,
  cursor?: IntegralCursor,
): {
  gradient: number;
  dGradientDFlow: number;
  shearRate: number;
  stress: number;
  apparent: number;
} {
  const dh = data.hydraulicDiameter;
  const toApparent = 8 / (data.area * dh);
  const apparent = flowRate * toApparent;
  const wall = wallResponse(curve, apparent, data, cursor);
  return {
    gradient: (4 / dh) * wall.stress,
    dGradientDFlow: (4 / dh) * wall.dStressDApparent * toApparent,
    shearRate: wall.shearRate,
    stress: wall.stress,
    apparent: (data.a + data.b) * apparent,
  };
}

/** Throws a RangeError for a non-finite flow rate or a non-positive length. */
export function checkFlowArgs(what: string, flowRate: number, length: number): void {
  if (!Number.isFinite(flowRate)) {
    throw new RangeError(`Cannot compute ${what}: flow rate must be finite, got ${flowRate}`);
  }
  if (!(length > 0) || !Number.isFinite(length)) {
    throw new RangeError(`Cannot compute ${what}: length must be > 0, got ${length}`);
  }
}
