/**
 * The built-in resin library: generic, representative unfilled grades in the wire format
 * (`MaterialSchema`). These are NOT any supplier's grade; replace them with the real grade's
 * data from the supplier, or measured to ISO 11443 (capillary rheometry).
 *
 * How the Cross-WLF numbers were made (no simulation product's database was consulted):
 * D2 = the resin's glass-transition temperature (typical handbook value, from memory);
 * Ã2 = 51.6 K, the WLF "universal" C2 (Williams, Landel & Ferry (1955) JACS 77:3701);
 * A1 chosen so the local temperature sensitivity d ln η0/dT = A1·Ã2/(Ã2 + T − D2)² at the
 * reference melt temperature equals E/(R·T²) for a typical flow activation energy E (from
 * memory); D1 chosen so η0 at the reference melt temperature equals a typical zero-shear
 * viscosity (from memory); n and τ* typical of the family (from memory). D3 is a typical
 * pressure shift of Tg, 0.1–0.2 K/MPa (from memory). Thermal and processing values are
 * typical open-literature / handbook ranges, from memory.
 *
 * @module
 */
import type { MaterialWire } from "../model/material_schema.ts";

const GENERIC_NOTE =
  "Generic, representative values (typical ranges in open literature and handbooks, recalled from memory; " +
  "Cross-WLF constants constructed from Tg, a typical flow activation energy and a typical zero-shear viscosity). " +
  "Not a real grade: replace with the real grade's data from the supplier, or measured to ISO 11443.";

/** Every built-in resin, wire format. Each entry passes `MaterialSchema.parse`. */
export const MATERIALS: readonly MaterialWire[] = Object.freeze<MaterialWire[]>([
  {
    id: "pbt-unfilled",
    name: "PBT, unfilled (generic)",
    family: "PBT",
    // Tg ≈ 45 °C, E ≈ 60 kJ/mol, η0(250 °C) ≈ 500 Pa·s.
    source: GENERIC_NOTE,
    generic: true,
    viscosity: {
      model: "cross_wlf",
      n: 0.45,
      tau_star_Pa: 1.2e5,
      D1_Pa_s: 2.27e14,
      D2_K: 318.15,
      D3_K_per_Pa: 1e-7,
      A1: 33.6,
      A2_K: 51.6,
      convention: "A2_shifts_with_pressure",
    },
    melt_density_kg_m3: 1110,
    solid_density_kg_m3: 1310,
    specific_heat_J_kgK: 2000,
    conductivity_W_mK: 0.2,
    no_flow_temperature_C: 200,
    ejection_temperature_C: 140,
    melt_temperature_range_C: [240, 270],
    mold_temperature_range_C: [60, 90],
    max_shear_rate_1_s: 50000,
  },
  {
    id: "pp-homo",
    name: "PP homopolymer (generic)",
    family: "PP",
    // Tg ≈ −10 °C, E ≈ 40 kJ/mol, η0(230 °C) ≈ 3000 Pa·s.
    source: GENERIC_NOTE,
    generic: true,
    viscosity: {
      model: "cross_wlf",
      n: 0.32,
      tau_star_Pa: 4.0e4,
      D1_Pa_s: 4.63e14,
      D2_K: 263.15,
      D3_K_per_Pa: 1e-7,
      A1: 31.3,
      A2_K: 51.6,
      convention: "A2_shifts_with_pressure",
    },
    melt_density_kg_m3: 750,
    solid_density_kg_m3: 905,
    specific_heat_J_kgK: 2700,
    conductivity_W_mK: 0.17,
    no_flow_temperature_C: 135,
    ejection_temperature_C: 95,
    melt_temperature_range_C: [200, 260],
    mold_temperature_range_C: [20, 60],
    max_shear_rate_1_s: 100000,
  },
  {
    id: "abs-general",
    name: "ABS, general purpose (generic)",
    family: "ABS",
    // Tg ≈ 105 °C, E ≈ 90 kJ/mol, η0(240 °C) ≈ 15 000 Pa·s.
    source: GENERIC_NOTE,
    generic: true,
    viscosity: {
      model: "cross_wlf",
      n: 0.28,
      tau_star_Pa: 5.0e4,
      D1_Pa_s: 7.58e12,
      D2_K: 378.15,
      D3_K_per_Pa: 2e-7,
      A1: 27.7,
      A2_K: 51.6,
      convention: "A2_shifts_with_pressure",
    },
    melt_density_kg_m3: 950,
    solid_density_kg_m3: 1050,
    specific_heat_J_kgK: 2100,
    conductivity_W_mK: 0.17,
    no_flow_temperature_C: 125,
    ejection_temperature_C: 90,
    melt_temperature_range_C: [220, 260],
    mold_temperature_range_C: [50, 80],
    max_shear_rate_1_s: 50000,
  },
  {
    id: "pc-general",
    name: "PC, general purpose (generic)",
    family: "PC",
    // Tg ≈ 147 °C, E ≈ 100 kJ/mol, η0(300 °C) ≈ 1200 Pa·s.
    source: GENERIC_NOTE,
    generic: true,
    viscosity: {
      model: "cross_wlf",
      n: 0.2,
      tau_star_Pa: 4.0e5,
      D1_Pa_s: 5.31e12,
      D2_K: 420.15,
      D3_K_per_Pa: 2e-7,
      A1: 29.7,
      A2_K: 51.6,
      convention: "A2_shifts_with_pressure",
    },
    melt_density_kg_m3: 1050,
    solid_density_kg_m3: 1200,
    specific_heat_J_kgK: 1900,
    conductivity_W_mK: 0.2,
    no_flow_temperature_C: 165,
    ejection_temperature_C: 130,
    melt_temperature_range_C: [280, 320],
    mold_temperature_range_C: [80, 110],
    max_shear_rate_1_s: 40000,
  },
  {
    id: "pa66-unfilled",
    name: "PA66, unfilled, dry (generic)",
    family: "PA66",
    // Tg ≈ 55 °C (dry), E ≈ 60 kJ/mol, η0(285 °C) ≈ 300 Pa·s.
    source: GENERIC_NOTE,
    generic: true,
    viscosity: {
      model: "cross_wlf",
      n: 0.55,
      tau_star_Pa: 2.0e5,
      D1_Pa_s: 1.27e15,
      D2_K: 328.15,
      D3_K_per_Pa: 1e-7,
      A1: 35.6,
      A2_K: 51.6,
      convention: "A2_shifts_with_pressure",
    },
    melt_density_kg_m3: 970,
    solid_density_kg_m3: 1140,
    specific_heat_J_kgK: 2700,
    conductivity_W_mK: 0.22,
    no_flow_temperature_C: 245,
    ejection_temperature_C: 160,
    melt_temperature_range_C: [270, 300],
    mold_temperature_range_C: [60, 90],
    max_shear_rate_1_s: 60000,
  },
  {
    id: "pom-copolymer",
    name: "POM copolymer (generic)",
    family: "POM",
    // Tg ≈ −60 °C, E ≈ 45 kJ/mol, η0(200 °C) ≈ 1500 Pa·s.
    source: GENERIC_NOTE,
    generic: true,
    viscosity: {
      model: "cross_wlf",
      n: 0.35,
      tau_star_Pa: 8.0e4,
      D1_Pa_s: 4.62e19,
      D2_K: 213.15,
      D3_K_per_Pa: 1e-7,
      A1: 45.5,
      A2_K: 51.6,
      convention: "A2_shifts_with_pressure",
    },
    melt_density_kg_m3: 1150,
    solid_density_kg_m3: 1410,
    specific_heat_J_kgK: 2200,
    conductivity_W_mK: 0.16,
    no_flow_temperature_C: 150,
    ejection_temperature_C: 120,
    melt_temperature_range_C: [190, 220],
    mold_temperature_range_C: [60, 100],
    max_shear_rate_1_s: 40000,
  },
  {
    id: "hdpe-injection",
    name: "HDPE, injection grade (generic)",
    family: "HDPE",
    // Tg ≈ −120 °C, E ≈ 28 kJ/mol, η0(220 °C) ≈ 3000 Pa·s.
    source: GENERIC_NOTE,
    generic: true,
    viscosity: {
      model: "cross_wlf",
      n: 0.4,
      tau_star_Pa: 6.0e4,
      D1_Pa_s: 1.03e19,
      D2_K: 153.15,
      D3_K_per_Pa: 1e-7,
      A1: 41.2,
      A2_K: 51.6,
      convention: "A2_shifts_with_pressure",
    },
    melt_density_kg_m3: 760,
    solid_density_kg_m3: 955,
    specific_heat_J_kgK: 2800,
    conductivity_W_mK: 0.25,
    no_flow_temperature_C: 120,
    ejection_temperature_C: 90,
    melt_temperature_range_C: [200, 260],
    mold_temperature_range_C: [20, 60],
    max_shear_rate_1_s: 40000,
  },
]);

/** The built-in resin with this id (e.g. "pp-homo"), or undefined. */
export function materialById(id: string): MaterialWire | undefined {
  return MATERIALS.find((m) => m.id === id);
}

/** The ids of every built-in resin, in library order. */
export function materialIds(): string[] {
  return MATERIALS.map((m) => m.id);
}
