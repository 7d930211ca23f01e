/**
 * Fully developed, isothermal flow of a generalized-Newtonian melt through a straight
 * channel of uniform section: pressure drop, wall shear and the derivative the network
 * solver needs.
 *
 * @module
 */
import type { FlowCurve } from "../materials/flow_curve.ts";
import type { Section } from "./section.ts";
import { checkFlowArgs, localGradient, sectionFlowData } from "./_local_gradient.ts";

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
export function uniformChannelLaw(
  options: UniformChannelFlowOptions,
): (flowRate: number) => ChannelFlow {
  const { section, length, curve } = options;
  checkFlowArgs("uniform channel flow", 0, length);
  const data = sectionFlowData(section);
  return (flowRate) => {
    checkFlowArgs("uniform channel flow", flowRate, length);
    const local = localGradient(Math.abs(flowRate), data, curve);
    return {
      pressureDrop: Math.sign(flowRate) * local.gradient * length,
      wallShearRate: local.shearRate,
      apparentWallShearRate: local.apparent,
      wallShearStress: local.stress,
      dPressureDropDFlow: local.dGradientDFlow * length,
    };
  };
}
