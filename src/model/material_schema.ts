import { z } from "zod";

/** Cross-WLF viscosity parameters, wire format (SI units named in the fields). */
export const CrossWlfSchema = z.object({
  model: z.literal("cross_wlf"),
  n: z.number().min(
    0.05,
    "n under 0.05 is not known for a polymer melt (from memory: 0.1–0.5 is usual)",
  )
    .lt(1).describe("power-law index of the shear-thinning region, 0.05 ≤ n < 1"),
  tau_star_Pa: z.number().positive().max(1e7).describe("critical shear stress τ*, Pa"),
  D1_Pa_s: z.number().positive().max(
    1e40,
    "D1 over 1e40 Pa·s is not plausible (from memory: fitted values run about 1e9–1e30)",
  ).describe("zero-shear viscosity at T*, Pa·s"),
  D2_K: z.number().positive().max(700).describe(
    "glass-transition reference temperature T* at p = 0, K",
  ),
  D3_K_per_Pa: z.number().min(0).max(1e-6).default(0).describe("pressure shift of T*, K/Pa"),
  A1: z.number().positive().max(200).describe("WLF constant A1, dimensionless"),
  A2_K: z.number().positive().max(500).describe("WLF constant Ã2 (or A2 at p = 0), K"),
  convention: z.enum(["A2_shifts_with_pressure", "A2_constant"]).default(
    "A2_shifts_with_pressure",
  ).describe(
    "A2_shifts_with_pressure: A2 = Ã2 + D3·p, so A2 + T − T* is independent of p (the common IM form); A2_constant: A2 fixed",
  ),
});

/** Power-law viscosity τ = K·γ̇ⁿ, wire format. */
export const PowerLawSchema = z.object({
  model: z.literal("power_law"),
  K_Pa_sn: z.number().positive().max(1e8).describe("consistency K, Pa·sⁿ"),
  n: z.number().min(0.05, "n under 0.05 is not known for a polymer melt (from memory)").lte(1)
    .describe("power-law index, 0.05 ≤ n ≤ 1 (n = 1 is Newtonian)"),
});

export const ViscositySchema = z.discriminatedUnion("model", [CrossWlfSchema, PowerLawSchema]);

/** A resin as the library stores it and as a scenario may give it inline. */
export const MaterialSchema = z.object({
  id: z.string().min(1).max(64),
  name: z.string().min(1).max(200),
  family: z.string().max(40).optional().describe("resin family, e.g. PBT, PP"),
  source: z.string().min(1).max(1000).describe("where the data comes from"),
  generic: z.boolean().default(false).describe(
    "true for representative library data that must be replaced by the real grade's data",
  ),
  viscosity: ViscositySchema,
  melt_density_kg_m3: z.number().min(300).max(3000),
  solid_density_kg_m3: z.number().min(300).max(3000),
  specific_heat_J_kgK: z.number().min(500).max(5000).describe("melt specific heat, J/(kg·K)"),
  conductivity_W_mK: z.number().min(0.05).max(5).describe("melt thermal conductivity, W/(m·K)"),
  no_flow_temperature_C: z.number().min(-50).max(450),
  ejection_temperature_C: z.number().min(-50).max(450),
  melt_temperature_range_C: z.tuple([z.number(), z.number()]).optional().describe(
    "recommended melt temperature window [min, max], °C",
  ),
  mold_temperature_range_C: z.tuple([z.number(), z.number()]).optional().describe(
    "recommended mold temperature window [min, max], °C",
  ),
  max_shear_rate_1_s: z.number().positive().max(1e7).describe(
    "maximum wall shear rate the resin tolerates, 1/s",
  ),
});

export type CrossWlfInput = z.infer<typeof CrossWlfSchema>;
export type PowerLawInput = z.infer<typeof PowerLawSchema>;
export type ViscosityInput = z.infer<typeof ViscositySchema>;
/** A material after schema defaults are applied. */
export type MaterialInput = z.infer<typeof MaterialSchema>;
/** A material as written (defaults may be missing). */
export type MaterialWire = z.input<typeof MaterialSchema>;
