/**
 * Flow through a channel whose dimensions vary linearly from entry to exit (sprue cone,
 * tunnel gate), possibly filled only over its first part.
 *
 * @module
 */
import type { FlowCurve } from "../materials/flow_curve.ts";
import type { ChannelFlow, ChannelLaw, ChannelResistance } from "./channel_flow.ts";
import { interpolateSection, type Section } from "./section.ts";
import {
  APPARENT,
  checkFlowArgs,
  D_GRADIENT,
  GRADIENT,
  localGradient,
  localGradientInto,
  type SectionFlowData,
  sectionFlowData,
  SHEAR_RATE,
  STRESS,
} from "./_local_gradient.ts";
import { gaussLegendre } from "./_quadrature.ts";
import {
  crossWallPotentialInto,
  type IntegralCursor,
  newCursor,
  stressPotential,
} from "./_wall_shear.ts";

/** Options of {@link taperedChannelFlow}. */
export interface TaperedChannelFlowOptions {
  /** Section at x = 0 (where the melt enters), m. */
  entry: Section;
  /** Section at x = length, same kind as `entry`, m. */
  exit: Section;
  /** Length of the element, m, > 0. */
  length: number;
  /** Filled length from the entry, m, 0 ≤ filledLength ≤ length; default `length`. */
  filledLength?: number;
  /** Melt flow curve. */
  curve: FlowCurve;
}

const POINTS_PER_PANEL = 8;
const RULE = gaussLegendre(POINTS_PER_PANEL);
/**
 * Largest ratio of hydraulic diameters across one panel. With the ln Dh substitution, 5
 * keeps the error ≤ 8e-10 relative against 16-point, ratio-2 panels in x for circular
 * tapers (Cross n = 0.15…0.95 and a power law, Q = 1e-10…1e-3 m³/s; measured).
 */
const PANEL_RATIO = 5;

/**
 * Flow through a linear taper at flow rate Q (m³/s, either sign), by the lubrication
 * approximation: each slice obeys the uniform-channel law of its own section
 * (see `uniformChannelFlow`), ΔP = ∫₀^filledLength (dP/dx) dx and dΔP/dQ likewise
 * (Tadmor & Gogos, *Principles of Polymer Processing*, 2nd ed., §12.1, lubrication
 * approximation; valid for small taper angles). Integrated in u = ln Dh (x mapped by
 * x ∝ expm1(u − u0), exact for any integrand) by 8-point Gauss–Legendre panels across
 * which Dh changes by at most a factor 5 (error ≲ 1e-9 for circular tapers; sections
 * whose Kozicki constants are piecewise linear in aspect ratio integrate less exactly). The reported wall shear rate and stress are the largest along the
 * filled part (ends included). With filledLength = 0 the element has no resistance:
 * pressure drop and dΔP/dQ are 0, the wall shear is the entry's.
 */
export function taperedChannelFlow(
  flowRate: number,
  options: TaperedChannelFlowOptions,
): ChannelFlow {
  return taperedChannelLaw(options)(flowRate);
}

/**
 * {@link taperedChannelFlow} as a law of the flow rate alone: the geometry (quadrature
 * nodes and each node's section data) is prepared once, so a solver that calls the law
 * many times at one geometry pays for it once. Same numbers as {@link taperedChannelFlow}.
 * Its `resistance` integrates the quadrature nodes only (the ends serve the reported wall
 * shear alone), and the full law at the flow of the last `resistance` adds just the ends.
 */
export function taperedChannelLaw(options: TaperedChannelFlowOptions): ChannelLaw {
  return taperedGeometryLaw(taperedChannelGeometry(options), options.curve);
}

/** A taper's quadrature prepared for any flow curve ({@link taperedChannelGeometry}). */
export interface TaperedChannelGeometry {
  /** Element length, m. */
  readonly length: number;
  /** Filled length, m. */
  readonly filledLength: number;
  /** Section data at the entry and at the end of the filled part. */
  readonly first: SectionFlowData;
  readonly last: SectionFlowData;
  /** The quadrature of the filled part, built on first use (a cone's closed form needs none). */
  quadrature(): TaperQuadrature;
  /**
   * For a cone of similar sections (circle, half-round: a, b constant, A ∝ Dh²) that
   * widens or narrows enough, 4·ℓ/(3·(Dh(ℓ) − Dh(0))) in m/m = 1: the pressure drop is
   * this times the difference of the ends' stress potentials ({@link taperedGeometryLaw}).
   * NaN otherwise.
   */
  readonly potentialFactor: number;
}

/** Quadrature weights (m) and each node's section data, toward the narrow end. */
export interface TaperQuadrature {
  readonly weights: Float64Array;
  readonly nodes: readonly SectionFlowData[];
}

/**
 * Smallest |ln(Dh(ℓ)/Dh(0))| for the cone closed form: below it the difference of the two
 * ends' potentials loses digits to cancellation (their interpolation error, ~1e-10 of each,
 * over a difference ∝ the log ratio), and the quadrature, one panel there, is used instead.
 */
const MIN_CONE_LOG_RATIO = 0.05;

/**
 * The geometry half of {@link taperedChannelLaw}: quadrature nodes and weights of the filled
 * part and each node's section data (area, Dh, Kozicki constants), which do not depend on the
 * melt. Throws RangeError for a length ≤ 0 or a filled length outside [0, length].
 */
export function taperedChannelGeometry(
  options: Omit<TaperedChannelFlowOptions, "curve">,
): TaperedChannelGeometry {
  const { entry, exit, length } = options;
  checkFlowArgs("tapered channel flow", 0, length);
  const filled = options.filledLength ?? length;
  if (!(filled >= 0 && filled <= length)) {
    throw new RangeError(
      `Cannot compute tapered channel flow: filledLength must be in [0, ${length}], got ${filled}`,
    );
  }
  const dataAt = (x: number) => sectionFlowData(interpolateSection(entry, exit, x / length));
  const firstData = dataAt(0);
  const lastData = filled > 0 ? dataAt(filled) : firstData;
  let quadrature: TaperQuadrature | undefined;
  const similar = entry.kind === "circle" || entry.kind === "half_round";
  const span = filled > 0 ? Math.log(lastData.hydraulicDiameter / firstData.hydraulicDiameter) : 0;
  return {
    length,
    filledLength: filled,
    first: firstData,
    last: lastData,
    quadrature: () => quadrature ??= taperQuadrature(dataAt, filled, span),
    potentialFactor: similar && Math.abs(span) >= MIN_CONE_LOG_RATIO
      ? (4 * filled) / (3 * (lastData.hydraulicDiameter - firstData.hydraulicDiameter))
      : NaN,
  };
}

/**
 * Gauss–Legendre nodes over the filled length `filled` of a taper whose Dh changes by
 * e^span along it, with `dataAt(x)` the section data at x. Substitution
 * x = filled·expm1(u − u0)/expm1(u1 − u0), u = ln Dh at a linear Dh: the integrand becomes
 * nearly a pure exponential in u (a power law gives exactly one), so Gauss–Legendre
 * converges fast. Panels no wider than ln(PANEL_RATIO) in u.
 */
function taperQuadrature(
  dataAt: (x: number) => SectionFlowData,
  filled: number,
  span: number,
): TaperQuadrature {
  if (filled === 0) return { weights: new Float64Array(0), nodes: [] };
  const panels = Math.max(1, Math.ceil(Math.abs(span) / Math.log(PANEL_RATIO) - 1e-9));
  const scale = span === 0 ? 0 : filled / Math.expm1(span);
  const rule = RULE;
  const count = panels * POINTS_PER_PANEL;
  const weights = new Float64Array(count);
  const nodes = new Array<SectionFlowData>(count);
  // Walk toward the narrow end so the shared quadrature cursor only moves up in shear.
  const reverse = span > 0;
  let k = 0;
  for (let p = 0; p < panels; p++) {
    const mid = (p + 0.5) / panels;
    const half = 0.5 / panels;
    for (let i = 0; i < POINTS_PER_PANEL; i++, k++) {
      const t = mid + half * rule.nodes[i];
      const at = reverse ? count - 1 - k : k;
      if (span === 0) {
        nodes[at] = dataAt(filled * t);
        weights[at] = filled * half * rule.weights[i];
      } else {
        nodes[at] = dataAt(scale * Math.expm1(span * t));
        weights[at] = scale * span * Math.exp(span * t) * half * rule.weights[i];
      }
    }
  }
  return { weights, nodes };
}

/** Scratch of the taper laws (no law calls another while it evaluates). */
const LOCAL = new Float64Array(5);
const CONE_END = new Float64Array(4);
const CURSOR: IntegralCursor = newCursor();
const ENDS = new Float64Array(3);

/** {@link taperedChannelLaw} on a prepared geometry with flow curve `curve`. Same numbers. */
export function taperedGeometryLaw(
  geometry: TaperedChannelGeometry,
  curve: FlowCurve,
): ChannelLaw {
  const { length, filledLength: filled, first: firstData } = geometry;
  if (filled === 0) {
    const empty = (flowRate: number): ChannelFlow => {
      checkFlowArgs("tapered channel flow", flowRate, length);
      const first = localGradient(Math.abs(flowRate), firstData, curve, newCursor());
      return {
        pressureDrop: 0,
        wallShearRate: first.shearRate,
        apparentWallShearRate: first.apparent,
        wallShearStress: first.stress,
        dPressureDropDFlow: 0,
      };
    };
    empty.resistance = empty;
    return empty;
  }
  const cone = Number.isFinite(geometry.potentialFactor) &&
    (curve.powerLaw !== undefined || curve.cross !== undefined);
  return cone ? coneLaw(geometry, curve) : quadratureLaw(geometry, curve);
}

/**
 * A cone of similar sections: with Dh linear in x and Γ ∝ Dh⁻³, dx/Dh = −ℓ/(3·ΔDh)·d ln Γ,
 * so ΔP = ∫ 4τw/Dh dx = potentialFactor·(H(Γ₀) − H(Γ_ℓ)) with H = ∫ τw d ln Γ (the
 * lubrication integral of Tadmor & Gogos §12.1 in closed form: `stressPotential`), and
 * dΔP/dQ follows from dH/dQ = τw/Q. The ends give the wall shear as well (Γ is monotone
 * along a cone). At zero flow, or where a potential is unknown (a Cross curve outside its
 * tables), the quadrature law answers instead.
 */
function coneLaw(geometry: TaperedChannelGeometry, curve: FlowCurve): ChannelLaw {
  const { length, first: firstData, last: lastData, potentialFactor: factor } = geometry;
  const local = LOCAL;
  let fallback: ChannelLaw | undefined;
  const quadrature = () => fallback ??= quadratureLaw(geometry, curve);
  // The closed form at |Q| = `at`, kept for the next call (the full law after a resistance).
  let at = NaN;
  let pressure = 0;
  let slope = 0;
  let shear = 0;
  let apparent = 0;
  let stress = 0;
  /** The wall at one end into `local` (SHEAR_RATE, STRESS, APPARENT), its potential returned. */
  const end = (q: number, data: SectionFlowData): number => {
    const apparent = q * data.toApparent;
    if (crossWallPotentialInto(curve, apparent, data, CONE_END)) {
      local[SHEAR_RATE] = CONE_END[0];
      local[STRESS] = CONE_END[1];
      local[APPARENT] = data.sum * apparent;
      return CONE_END[3];
    }
    localGradientInto(q, data, curve, undefined, local);
    return stressPotential(curve, data, local[SHEAR_RATE], local[STRESS]);
  };
  const solve = (q: number): boolean => {
    if (q === at) return true;
    if (!(q > 0)) return false;
    const first = end(q, firstData);
    const firstShear = local[SHEAR_RATE];
    const firstApparent = local[APPARENT];
    const firstStress = local[STRESS];
    const last = end(q, lastData);
    if (!Number.isFinite(first) || !Number.isFinite(last)) return false;
    pressure = factor * (first - last);
    slope = (factor * (firstStress - local[STRESS])) / q;
    const entryHigher = firstShear >= local[SHEAR_RATE];
    shear = entryHigher ? firstShear : local[SHEAR_RATE];
    apparent = entryHigher ? firstApparent : local[APPARENT];
    stress = entryHigher ? firstStress : local[STRESS];
    at = q;
    return true;
  };
  const full = (flowRate: number): ChannelFlow => {
    checkFlowArgs("tapered channel flow", flowRate, length);
    if (!solve(Math.abs(flowRate))) return quadrature()(flowRate);
    return {
      pressureDrop: Math.sign(flowRate) * pressure,
      wallShearRate: shear,
      apparentWallShearRate: apparent,
      wallShearStress: stress,
      dPressureDropDFlow: slope,
    };
  };
  const resistance = (flowRate: number): ChannelResistance => {
    checkFlowArgs("tapered channel flow", flowRate, length);
    if (!solve(Math.abs(flowRate))) return quadrature().resistance(flowRate);
    return { pressureDrop: Math.sign(flowRate) * pressure, dPressureDropDFlow: slope };
  };
  full.resistance = resistance;
  return full;
}

/** The law of a partly or wholly filled taper by Gauss–Legendre quadrature of the local law. */
function quadratureLaw(geometry: TaperedChannelGeometry, curve: FlowCurve): ChannelLaw {
  const { length, first: firstData, last: lastData } = geometry;
  const local = LOCAL;
  const cursor = CURSOR;
  // The quadrature sums and the node of highest wall shear (first of the largest) at `sumsAt`.
  let sumsAt = NaN;
  let pressure = 0;
  let slope = 0;
  let peakShear = -Infinity;
  let peakApparent = NaN;
  let peakStress = NaN;
  /** The sums at q, the cursor as left by whatever ran before; true if a node needed the integral. */
  const integrate = (q: number): boolean => {
    let integral = false;
    const { weights, nodes: nodeData } = geometry.quadrature();
    pressure = 0;
    slope = 0;
    peakShear = -Infinity;
    for (let i = 0; i < weights.length; i++) {
      if (localGradientInto(q, nodeData[i], curve, cursor, local)) integral = true;
      pressure += weights[i] * local[GRADIENT];
      slope += weights[i] * local[D_GRADIENT];
      if (local[SHEAR_RATE] > peakShear) {
        peakShear = local[SHEAR_RATE];
        peakApparent = local[APPARENT];
        peakStress = local[STRESS];
      }
    }
    sumsAt = integral ? NaN : q;
    return integral;
  };
  /** The wall at both ends into `ends` (the one of higher shear, the entry on a tie). */
  const ends = ENDS;
  const atEnds = (q: number) => {
    localGradientInto(q, firstData, curve, cursor, local);
    const firstShear = local[SHEAR_RATE];
    const firstApparent = local[APPARENT];
    const firstStress = local[STRESS];
    localGradientInto(q, lastData, curve, cursor, local);
    if (firstShear >= local[SHEAR_RATE]) {
      ends[0] = firstShear;
      ends[1] = firstApparent;
      ends[2] = firstStress;
    } else {
      ends[0] = local[SHEAR_RATE];
      ends[1] = local[APPARENT];
      ends[2] = local[STRESS];
    }
  };
  // A fresh cursor, ends first, then the nodes: the order of taperedChannelFlow. The nodes'
  // values depend on the cursor only when one of them needs the exact integral (a curve
  // without closed form or master curve); otherwise they may be summed alone.
  const inOrder = (q: number) => {
    cursor.curve = null;
    atEnds(q);
    integrate(q);
    sumsAt = NaN;
  };
  const full = (flowRate: number): ChannelFlow => {
    checkFlowArgs("tapered channel flow", flowRate, length);
    const q = Math.abs(flowRate);
    if (q === sumsAt) {
      cursor.curve = null;
      atEnds(q);
    } else inOrder(q);
    const interior = peakShear > ends[0];
    return {
      pressureDrop: Math.sign(flowRate) * pressure,
      wallShearRate: interior ? peakShear : ends[0],
      apparentWallShearRate: interior ? peakApparent : ends[1],
      wallShearStress: interior ? peakStress : ends[2],
      dPressureDropDFlow: slope,
    };
  };
  const resistance = (flowRate: number): ChannelResistance => {
    checkFlowArgs("tapered channel flow", flowRate, length);
    const q = Math.abs(flowRate);
    cursor.curve = null;
    if (integrate(q)) inOrder(q);
    return { pressureDrop: Math.sign(flowRate) * pressure, dPressureDropDFlow: slope };
  };
  full.resistance = resistance;
  return full;
}
