/**
 * The local uniform-channel law shared by the uniform, tapered and radial laws, private
 * to `physics/`.
 *
 * @module
 */
import type { FlowCurve } from "../materials/flow_curve.ts";
import { kozickiConstants } from "./noncircular.ts";
import { hydraulicDiameter, type Section, sectionArea, validateSection } from "./section.ts";
import { type IntegralCursor, wallResponseInto } from "./_wall_shear.ts";

/** Section data the channel laws need, computed once per section. */
export interface SectionFlowData {
  area: number;
  hydraulicDiameter: number;
  a: number;
  b: number;
  /** 8/(A·Dh), 1/m³: apparent shear rate per unit flow. */
  toApparent: number;
  /** 4/Dh, 1/m: pressure gradient per unit wall stress. */
  gradientPerStress: number;
  /** a + b: true-to-apparent factor of the Newtonian wall shear rate. */
  sum: number;
}

/** Area, Dh and Kozicki constants of a section, with the factors derived from them. */
export function sectionFlowData(section: Section): SectionFlowData {
  if (section.kind === "circle") {
    // sectionArea and hydraulicDiameter written out (one validation instead of three).
    validateSection(section);
    const r = section.radius;
    const area = Math.PI * r * r;
    return flowData(area, (4 * area) / (2 * Math.PI * r), 0.25, 0.75);
  }
  const { a, b } = kozickiConstants(section);
  return flowData(sectionArea(section), hydraulicDiameter(section), a, b);
}

/** {@link SectionFlowData} from its four primary values. */
export function flowData(area: number, dh: number, a: number, b: number): SectionFlowData {
  return {
    area,
    hydraulicDiameter: dh,
    a,
    b,
    toApparent: 8 / (area * dh),
    gradientPerStress: 4 / dh,
    sum: a + b,
  };
}

/** Where {@link localGradientInto} writes each quantity. */
export const GRADIENT = 0;
export const D_GRADIENT = 1;
export const SHEAR_RATE = 2;
export const STRESS = 3;
export const APPARENT = 4;

const WALL = new Float64Array(3);

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
  const out = new Float64Array(5);
  localGradientInto(flowRate, data, curve, cursor, out);
  return {
    gradient: out[GRADIENT],
    dGradientDFlow: out[D_GRADIENT],
    shearRate: out[SHEAR_RATE],
    stress: out[STRESS],
    apparent: out[APPARENT],
  };
}

/**
 * {@link localGradient} without an allocation, into `out` at the indices GRADIENT …
 * APPARENT. Same numbers. Returns true when the wall needed the exact integral (and so
 * read and wrote the cursor).
 */
export function localGradientInto(
  flowRate: number,
  data: SectionFlowData,
  curve: FlowCurve,
  cursor: IntegralCursor | undefined,
  out: Float64Array,
): boolean {
  const toApparent = data.toApparent;
  const apparent = flowRate * toApparent;
  const integral = wallResponseInto(curve, apparent, data, cursor, WALL);
  out[GRADIENT] = data.gradientPerStress * WALL[1];
  out[D_GRADIENT] = data.gradientPerStress * WALL[2] * toApparent;
  out[SHEAR_RATE] = WALL[0];
  out[STRESS] = WALL[1];
  out[APPARENT] = data.sum * apparent;
  return integral;
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
