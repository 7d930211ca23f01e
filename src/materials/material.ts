/**
 * The SI domain type of a resin, converted once from the wire format
 * (`MaterialSchema`, °C and unit-named fields) at the edge.
 *
 * @module
 */
import type { MaterialInput, MaterialWire } from "../model/material_schema.ts";
import { cToK } from "../model/units.ts";
import type { ViscosityModel } from "./viscosity.ts";

/** A resin in SI units (K, kg/m³, J/(kg·K), W/(m·K), m²/s, 1/s). */
export interface Material {
  readonly id: string;
  readonly name: string;
  /** Resin family, e.g. "PBT". */
  readonly family?: string;
  /** Where the data comes from. */
  readonly source: string;
  /** True for representative library data that must be replaced by the real grade's. */
  readonly generic: boolean;
  /** Viscosity model with its parameters (and, for Cross-WLF, the pressure convention). */
  readonly viscosity: ViscosityModel;
  /** Melt density, kg/m³. */
  readonly meltDensity: number;
  /** Solid density at room temperature, kg/m³. */
  readonly solidDensity: number;
  /** Melt specific heat, J/(kg·K). */
  readonly specificHeat: number;
  /** Melt thermal conductivity, W/(m·K). */
  readonly conductivity: number;
  /** Melt thermal diffusivity α = k/(ρ_melt·cp), m²/s (see {@link thermalDiffusivity}). */
  readonly thermalDiffusivity: number;
  /** No-flow (transition) temperature, K. */
  readonly noFlowTemperature: number;
  /** Ejection temperature, K. */
  readonly ejectionTemperature: number;
  /** Recommended melt temperature window [min, max], K. */
  readonly meltTemperatureRange?: readonly [number, number];
  /** Recommended mold temperature window [min, max], K. */
  readonly moldTemperatureRange?: readonly [number, number];
  /** Maximum wall shear rate the resin tolerates, 1/s. */
  readonly maxShearRate: number;
}

/** Options of {@link thermalDiffusivity}. */
export interface ThermalDiffusivityOptions {
  /** Density, kg/m³ (> 0). */
  density: number;
  /** Specific heat, J/(kg·K) (> 0). */
  specificHeat: number;
}

/**
 * Thermal diffusivity α = k/(ρ·cp), m²/s, from conductivity k in W/(m·K).
 * Definition; Carslaw & Jaeger, *Conduction of Heat in Solids*, 2nd ed., §1.6.
 */
export function thermalDiffusivity(
  conductivity: number,
  options: ThermalDiffusivityOptions,
): number {
  const { density, specificHeat } = options;
  if (!(conductivity > 0) || !(density > 0) || !(specificHeat > 0)) {
    throw new RangeError(
      `Cannot compute thermal diffusivity: need k, ρ, cp > 0, got k=${conductivity}, ρ=${density}, cp=${specificHeat}`,
    );
  }
  return conductivity / (density * specificHeat);
}

const rangeToK = (range: readonly [number, number] | undefined) =>
  range === undefined ? undefined : [cToK(range[0]), cToK(range[1])] as const;

/**
 * Convert a wire-format material (°C, unit-named fields; schema defaults applied or not) to the
 * SI {@link Material}: temperatures to K, thermal diffusivity derived as k/(ρ_melt·cp).
 * Missing defaults follow `MaterialSchema`: D3 = 0, convention "A2_shifts_with_pressure",
 * generic = false. Expects input that passed `MaterialSchema`.
 */
export function toMaterial(input: MaterialInput | MaterialWire): Material {
  const v = input.viscosity;
  const viscosity: ViscosityModel = v.model === "power_law"
    ? { model: "power_law", consistency: v.K_Pa_sn, index: v.n }
    : {
      model: "cross_wlf",
      n: v.n,
      tauStar: v.tau_star_Pa,
      d1: v.D1_Pa_s,
      d2: v.D2_K,
      d3: v.D3_K_per_Pa ?? 0,
      a1: v.A1,
      a2: v.A2_K,
      convention: v.convention ?? "A2_shifts_with_pressure",
    };
  return {
    id: input.id,
    name: input.name,
    ...(input.family === undefined ? {} : { family: input.family }),
    source: input.source,
    generic: input.generic ?? false,
    viscosity,
    meltDensity: input.melt_density_kg_m3,
    solidDensity: input.solid_density_kg_m3,
    specificHeat: input.specific_heat_J_kgK,
    conductivity: input.conductivity_W_mK,
    thermalDiffusivity: thermalDiffusivity(input.conductivity_W_mK, {
      density: input.melt_density_kg_m3,
      specificHeat: input.specific_heat_J_kgK,
    }),
    noFlowTemperature: cToK(input.no_flow_temperature_C),
    ejectionTemperature: cToK(input.ejection_temperature_C),
    ...(input.melt_temperature_range_C === undefined
      ? {}
      : { meltTemperatureRange: rangeToK(input.melt_temperature_range_C) }),
    ...(input.mold_temperature_range_C === undefined
      ? {}
      : { moldTemperatureRange: rangeToK(input.mold_temperature_range_C) }),
    maxShearRate: input.max_shear_rate_1_s,
  };
}
