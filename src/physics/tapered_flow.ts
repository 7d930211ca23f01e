/**
 * Flow through a channel whose dimensions vary linearly from entry to exit (sprue cone,
 * tunnel gate), possibly filled only over its first part.
 *
 * @module
 */
import type { FlowCurve } from "../materials/flow_curve.ts";
import type { ChannelFlow } from "./channel_flow.ts";
import { interpolateSection, type Section } from "./section.ts";
import { checkFlowArgs, localGradient, sectionFlowData } from "./_local_gradient.ts";
import { gaussLegendre } from "./_quadrature.ts";
import { newCursor } from "./_wall_shear.ts";

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
 */
export function taperedChannelLaw(
  options: TaperedChannelFlowOptions,
): (flowRate: number) => ChannelFlow {
  const { entry, exit, length, curve } = options;
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
  if (filled === 0) {
    return (flowRate) => {
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
  }

  // Substitution x = filled·expm1(u − u0)/expm1(u1 − u0), u = ln Dh at a linear Dh: the
  // integrand becomes nearly a pure exponential in u (a power law gives exactly one), so
  // Gauss–Legendre converges fast. Panels no wider than ln(PANEL_RATIO) in u.
  const d0 = sectionFlowData(entry).hydraulicDiameter;
  const d1 = sectionFlowData(interpolateSection(entry, exit, filled / length)).hydraulicDiameter;
  const span = Math.log(d1 / d0);
  const panels = Math.max(1, Math.ceil(Math.abs(span) / Math.log(PANEL_RATIO) - 1e-9));
  const scale = span === 0 ? 0 : filled / Math.expm1(span);
  const rule = gaussLegendre(POINTS_PER_PANEL);
  const xs: number[] = [];
  const ws: number[] = [];
  for (let p = 0; p < panels; p++) {
    const mid = (p + 0.5) / panels;
    const half = 0.5 / panels;
    for (let i = 0; i < POINTS_PER_PANEL; i++) {
      const t = mid + half * rule.nodes[i];
      if (span === 0) {
        xs.push(filled * t);
        ws.push(filled * half * rule.weights[i]);
      } else {
        xs.push(scale * Math.expm1(span * t));
        ws.push(scale * span * Math.exp(span * t) * half * rule.weights[i]);
      }
    }
  }
  // Walk toward the narrow end so the shared quadrature cursor only moves up in shear.
  const order = xs.map((_, i) => i);
  if (d1 > d0) order.reverse();
  const nodes = order.map((i) => ({ weight: ws[i], data: dataAt(xs[i]) }));
  return (flowRate) => {
    checkFlowArgs("tapered channel flow", flowRate, length);
    const q = Math.abs(flowRate);
    const cursor = newCursor();
    const first = localGradient(q, firstData, curve, cursor);
    const last = localGradient(q, lastData, curve, cursor);
    let best = first.shearRate >= last.shearRate ? first : last;
    let pressure = 0;
    let slope = 0;
    for (const { weight, data } of nodes) {
      const local = localGradient(q, data, curve, cursor);
      pressure += weight * local.gradient;
      slope += weight * local.dGradientDFlow;
      if (local.shearRate > best.shearRate) best = local;
    }
    return {
      pressureDrop: Math.sign(flowRate) * pressure,
      wallShearRate: best.shearRate,
      apparentWallShearRate: best.apparent,
      wallShearStress: best.stress,
      dPressureDropDFlow: slope,
    };
  };
}
