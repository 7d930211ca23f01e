/**
 * Melt viscosity models in SI: the seven-parameter Cross-WLF form used for
 * injection molding, and the power law. Cross (1965) J. Colloid Sci. 20:417;
 * Williams, Landel & Ferry (1955) JACS 77:3701; the injection-molding form as
 * presented in Kennedy, *Flow Analysis of Injection Molds* (Hanser).
 *
 * @module
 */
import { crossCurve, type FlowCurve, powerLawCurve } from "./flow_curve.ts";

/**
 * How the WLF denominator depends on pressure.
 * - `A2_shifts_with_pressure`: A2 = Ã2 + D3·p, so A2 + T − T* = Ã2 + T − D2 does not depend on p
 *   (the common injection-molding form).
 * - `A2_constant`: A2 = Ã2 at every pressure.
 */
export type PressureConvention = "A2_shifts_with_pressure" | "A2_constant";

/**
 * Seven-parameter Cross-WLF viscosity, SI:
 * η = η0/(1 + (η0·γ̇/τ*)^(1−n)), η0 = D1·exp(−A1(T−T*)/(A2 + T − T*)), T* = D2 + D3·p.
 */
export interface CrossWlfViscosity {
  readonly model: "cross_wlf";
  /** Power-law index of the shear-thinning region, dimensionless, 0 < n < 1. */
  readonly n: number;
  /** Critical shear stress τ* at the onset of shear thinning, Pa. */
  readonly tauStar: number;
  /** Zero-shear viscosity at T = T*, Pa·s. */
  readonly d1: number;
  /** Reference temperature T* at p = 0, K. */
  readonly d2: number;
  /** Pressure shift of T*, K/Pa (≥ 0). */
  readonly d3: number;
  /** WLF constant A1, dimensionless. */
  readonly a1: number;
  /** WLF constant Ã2 (A2 at p = 0), K. */
  readonly a2: number;
  /** Pressure convention of A2. */
  readonly convention: PressureConvention;
}

/** Power law τ = K·γ̇ⁿ, independent of temperature and pressure. */
export interface PowerLawViscosity {
  readonly model: "power_law";
  /** Consistency K, Pa·sⁿ. */
  readonly consistency: number;
  /** Power-law index n, 0 < n ≤ 1 (n = 1: Newtonian). */
  readonly index: number;
}

/** A melt viscosity model, SI. */
export type ViscosityModel = CrossWlfViscosity | PowerLawViscosity;

function checkState(what: string, temperatureK: number, pressurePa: number): void {
  if (!(temperatureK > 0) || !Number.isFinite(temperatureK)) {
    throw new RangeError(`Cannot compute ${what}: temperature must be > 0 K, got ${temperatureK}`);
  }
  if (!(pressurePa >= 0) || !Number.isFinite(pressurePa)) {
    throw new RangeError(`Cannot compute ${what}: pressure must be ≥ 0 Pa, got ${pressurePa}`);
  }
}

/**
 * Cross-WLF reference temperature T* = D2 + D3·p, K, at gauge pressure p in Pa.
 * Kennedy, *Flow Analysis of Injection Molds* (Hanser).
 */
export function transitionTemperature(viscosity: CrossWlfViscosity, pressurePa: number): number {
  return viscosity.d2 + viscosity.d3 * pressurePa;
}

/**
 * True when the Cross-WLF melt is at or below T* = D2 + D3·p (temperature in K, pressure in Pa),
 * where the WLF shift no longer describes flow; {@link zeroShearViscosity} is capped at D1 there.
 * A power-law model never freezes. Kennedy, *Flow Analysis of Injection Molds* (Hanser).
 */
export function isFrozen(viscosity: ViscosityModel, temperatureK: number, pressurePa = 0): boolean {
  checkState("frozen state", temperatureK, pressurePa);
  if (viscosity.model === "power_law") return false;
  return temperatureK <= transitionTemperature(viscosity, pressurePa);
}

/**
 * Zero-shear viscosity η0(T, p), Pa·s, temperature in K, gauge pressure in Pa (≥ 0).
 * Cross-WLF: η0 = D1·exp(−A1(T−T*)/(A2 + T − T*)) (Williams, Landel & Ferry (1955) JACS 77:3701,
 * IM form per Kennedy, *Flow Analysis of Injection Molds*). At or below T* (see {@link isFrozen})
 * the value is capped at D1, the value at T*: η0 is continuous and non-increasing in T, and a
 * frozen channel is the network's business. Power law: returns NaN (no zero-shear plateau).
 */
export function zeroShearViscosity(
  viscosity: ViscosityModel,
  temperatureK: number,
  pressurePa = 0,
): number {
  checkState("zero-shear viscosity", temperatureK, pressurePa);
  if (viscosity.model === "power_law") return Number.NaN;
  const excess = temperatureK - transitionTemperature(viscosity, pressurePa);
  if (excess <= 0) return viscosity.d1;
  const a2 = viscosity.convention === "A2_shifts_with_pressure"
    ? viscosity.a2 + viscosity.d3 * pressurePa
    : viscosity.a2;
  return viscosity.d1 * Math.exp((-viscosity.a1 * excess) / (a2 + excess));
}

/**
 * The flow curve τ(γ̇) of a material at temperature T (K) and gauge pressure p (Pa).
 * Power law → {@link powerLawCurve} (T and p ignored); Cross-WLF → {@link crossCurve} at
 * η0(T, p) from {@link zeroShearViscosity}. Cross (1965) J. Colloid Sci. 20:417.
 */
export function flowCurveAt(
  material: { readonly viscosity: ViscosityModel },
  temperatureK: number,
  pressurePa = 0,
): FlowCurve {
  const v = material.viscosity;
  checkState("flow curve", temperatureK, pressurePa);
  if (v.model === "power_law") return powerLawCurve(v.consistency, v.index);
  return crossCurve(zeroShearViscosity(v, temperatureK, pressurePa), {
    tauStar: v.tauStar,
    index: v.n,
  });
}

/** Options of {@link viscosityAt}. */
export interface ViscosityAtOptions {
  /** Melt temperature, K. Required for Cross-WLF; ignored by a power law. */
  temperature: number;
  /** Gauge pressure, Pa (≥ 0). Default 0. */
  pressure?: number;
}

/**
 * Shear viscosity η(γ̇, T, p), Pa·s, at shear rate γ̇ (1/s, ≥ 0). Cross-WLF per Cross (1965)
 * J. Colloid Sci. 20:417 with η0 from {@link zeroShearViscosity}; power law η = K·γ̇^(n−1).
 *
 * @example
 * ```ts
 * const eta = viscosityAt(material, 1000, { temperature: 503.15, pressure: 0 });
 * ```
 */
export function viscosityAt(
  material: { readonly viscosity: ViscosityModel },
  shearRate: number,
  options: ViscosityAtOptions,
): number {
  if (!(shearRate >= 0) || !Number.isFinite(shearRate)) {
    throw new RangeError(`Cannot compute viscosity: shear rate must be ≥ 0 1/s, got ${shearRate}`);
  }
  return flowCurveAt(material, options.temperature, options.pressure ?? 0).viscosity(shearRate);
}
