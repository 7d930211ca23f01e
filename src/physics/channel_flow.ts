/**
 * Fully developed, isothermal flow of a generalized-Newtonian melt through a straight
 * channel of uniform section: pressure drop, wall shear and the derivative the network
 * solver needs.
 *
 * @module
 */
import type { FlowCurve } from "../materials/flow_curve.ts";
import type { Section } from "./section.ts";
import {
  APPARENT,
  checkFlowArgs,
  D_GRADIENT,
  GRADIENT,
  localGradientInto,
  type SectionFlowData,
  sectionFlowData,
  SHEAR_RATE,
  STRESS,
} from "./_local_gradient.ts";

/** Result of a channel law at one flow rate (SI). */
export interface ChannelFlow {
  /** Pressure drop, Pa, same sign as the flow (odd in Q). */
  pressureDrop: number;
  /** True (Rabinowitsch-corrected) wall shear rate, 1/s, ≥ 0 (the maximum along a taper). */
  wallShearRate: number;
  /**
   * Newtonian-equivalent wall shear rate (a + b)·8ū/Dh, 1/s: 4Q/(πR³) in a tube,
   * 6Q/(WH²) in a slit.
   */
  apparentWallShearRate: number;
  /** Wall shear stress, Pa, ≥ 0 (where the wall shear rate is reported). */
  wallShearStress: number;
  /** dΔP/dQ, Pa·s/m³, > 0 (the Q → 0 limit at Q = 0). */
  dPressureDropDFlow: number;
}

/** Pressure drop and its flow derivative of a channel law at one flow rate (SI). */
export interface ChannelResistance {
  /** Pressure drop, Pa, same sign as the flow. */
  pressureDrop: number;
  /** dΔP/dQ, Pa·s/m³, > 0. */
  dPressureDropDFlow: number;
}

/**
 * A channel law of the flow rate (m³/s, either sign), its geometry and flow curve fixed:
 * called, the full {@link ChannelFlow}; `resistance`, only ΔP and dΔP/dQ (the same numbers),
 * which is all a network solve needs and may cost less (a taper leaves out its ends).
 */
export interface ChannelLaw {
  (flowRate: number): ChannelFlow;
  resistance(flowRate: number): ChannelResistance;
  /**
   * Flows |Q|, m³/s, at which dΔP/dQ jumps, if any (`HydraulicElement.kinks`): the laws of
   * this module are smooth; the fill's law of a fresh front has two.
   */
  readonly kinks?: readonly number[];
}

/** Options of {@link uniformChannelFlow}. */
export interface UniformChannelFlowOptions {
  /** Cross-section (m). */
  section: Section;
  /** Channel length, m, > 0. */
  length: number;
  /** Melt flow curve at the channel's temperature and pressure. */
  curve: FlowCurve;
}

/**
 * Flow through a uniform channel at flow rate Q (m³/s, either sign).
 *
 * Circle and slit: the exact Weissenberg–Rabinowitsch–Mooney integrals
 * Q = (πR³/τw³)∫₀^τw τ²γ̇ dτ, τw = RΔP/(2L), and Q = (WH²/(2τw²))∫₀^τw τγ̇ dτ,
 * τw = HΔP/(2L) (Bird, Armstrong & Hassager, *Dynamics of Polymeric Liquids* vol. 1,
 * 2nd ed., §5.3; Tadmor & Gogos, *Principles of Polymer Processing*, 2nd ed., ch. 12),
 * solved to ~1e-10 relative for any FlowCurve. Other sections: the Kozicki, Chou & Tiu
 * (1966) equivalent model with constants from `kozickiConstants` (exact Newtonian fRe;
 * the power-law error is documented in tests/physics/noncircular_test.ts). Curves tagged
 * `powerLaw` use the closed form γ̇w = ((a + b·n)/n)·8ū/Dh (same results).
 *
 * At Q = 0, dΔP/dQ is the Newtonian limit with η(0); for a pure power law with n < 1 that
 * limit is infinite and the (large, finite) slope at a wall shear rate of 1e-6 1/s is
 * returned instead.
 *
 * @example
 * ```ts
 * import { newtonianCurve } from "../materials/flow_curve.ts";
 * const r = uniformChannelFlow(1e-6, {
 *   section: { kind: "circle", radius: 0.002 }, length: 0.1, curve: newtonianCurve(100),
 * });
 * // r.pressureDrop = 8·100·0.1·1e-6/(π·0.002⁴) ≈ 1.59 MPa
 * ```
 */
export function uniformChannelFlow(
  flowRate: number,
  options: UniformChannelFlowOptions,
): ChannelFlow {
  return uniformChannelLaw(options)(flowRate);
}

/**
 * {@link uniformChannelFlow} as a law of the flow rate alone, the section's data (area,
 * hydraulic diameter, Kozicki constants) prepared once. Same numbers.
 */
export function uniformChannelLaw(options: UniformChannelFlowOptions): ChannelLaw {
  return uniformGeometryLaw(uniformChannelGeometry(options), options.curve);
}

/** A uniform channel's section data prepared for any flow curve ({@link uniformChannelGeometry}). */
export interface UniformChannelGeometry {
  /** Channel length, m. */
  readonly length: number;
  /** Area, Dh and Kozicki constants of the section, with the factors derived from them. */
  readonly data: SectionFlowData;
}

/**
 * The geometry half of {@link uniformChannelLaw}: the section's area, hydraulic diameter and
 * Kozicki constants, which do not depend on the melt. Throws RangeError for a length ≤ 0 or
 * an invalid section.
 */
export function uniformChannelGeometry(
  options: Omit<UniformChannelFlowOptions, "curve">,
): UniformChannelGeometry {
  checkFlowArgs("uniform channel flow", 0, options.length);
  return { length: options.length, data: sectionFlowData(options.section) };
}

const LOCAL = new Float64Array(5);

/** {@link uniformChannelLaw} on a prepared geometry with flow curve `curve`. Same numbers. */
export function uniformGeometryLaw(
  geometry: UniformChannelGeometry,
  curve: FlowCurve,
): ChannelLaw {
  const { length, data } = geometry;
  const law = (flowRate: number): ChannelFlow => {
    checkFlowArgs("uniform channel flow", flowRate, length);
    const local = LOCAL;
    localGradientInto(Math.abs(flowRate), data, curve, undefined, local);
    return {
      pressureDrop: Math.sign(flowRate) * local[GRADIENT] * length,
      wallShearRate: local[SHEAR_RATE],
      apparentWallShearRate: local[APPARENT],
      wallShearStress: local[STRESS],
      dPressureDropDFlow: local[D_GRADIENT] * length,
    };
  };
  // The same wall solve, only the two numbers a network solve reads: the smaller result is
  // less garbage, and a fill asks for hundreds of thousands of them.
  const resistance = (flowRate: number): ChannelResistance => {
    checkFlowArgs("uniform channel flow", flowRate, length);
    const local = LOCAL;
    localGradientInto(Math.abs(flowRate), data, curve, undefined, local);
    return {
      pressureDrop: Math.sign(flowRate) * local[GRADIENT] * length,
      dPressureDropDFlow: local[D_GRADIENT] * length,
    };
  };
  law.resistance = resistance;
  return law;
}
