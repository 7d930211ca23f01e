/**
 * The result JSON of one simulation (`evenfill.result/1`): the zod schema, the
 * type the report builds (`report/result_json.ts`) and the OpenAPI document
 * publishes. Units are in the field names; a number that is not finite is `null`.
 *
 * @module
 */
import { z } from "zod";
import { StoppedBecauseSchema, WarningSeveritySchema } from "./enums.ts";

/** Wire format of one simulation. */
export const RESULT_FORMAT = "evenfill.result/1";

/** A reported number: `null` when it is not finite. */
const figure = z.number().nullable();

/** Element kinds of the network: the feed (sprue or hot drop), runners, gates, cavities. */
export const ElementKindSchema = z.enum(["feed", "runner", "gate", "cavity"]);

/** A warning: a stable code, how loud, the element it concerns, plain words. */
export const WarningSchema = z.object({
  code: z.string().describe("stable machine-readable code, e.g. gate_shear_over_limit"),
  severity: WarningSeveritySchema,
  element: z.string().optional().describe("id of the element it concerns"),
  message: z.string(),
});
/** {@link WarningSchema}. */
export type Warning = z.infer<typeof WarningSchema>;

/** One cavity of a result. */
export const CavityResultSchema = z.object({
  id: z.string(),
  name: z.string(),
  fill_time_s: figure,
  fill_percent_at_first_full: figure.describe(
    "the short-shot view: fill when the first cavity is full",
  ),
  fill_percent_at_switchover: figure,
  gate: z.string().describe("the gate whose shear is reported (the highest, with several)"),
  gate_shear_rate_peak_1_s: figure,
  gate_shear_limit_1_s: figure,
  gate_pressure_drop_MPa: figure,
  inlet_pressure_at_switchover_MPa: figure,
  mass_g: figure,
});
/** {@link CavityResultSchema}. */
export type CavityResult = z.infer<typeof CavityResultSchema>;

/** One element (feed, runner, gate, cavity) of a result; `_end` is at switchover. */
export const ElementResultSchema = z.object({
  id: z.string(),
  kind: ElementKindSchema,
  pressure_drop_end_MPa: figure,
  flow_end_cm3_s: figure,
  wall_shear_rate_peak_1_s: figure,
  apparent_shear_rate_peak_1_s: figure,
  volume_cm3: figure,
  full_time_s: figure,
  melt_temperature_end_C: figure,
  frozen_layer_end_mm: figure,
  frozen_shut: z.boolean(),
});
/** {@link ElementResultSchema}. */
export type ElementResult = z.infer<typeof ElementResultSchema>;

/** One flow path, feed to cavity: each element's pressure drop along it. */
export const PathResultSchema = z.object({
  cavity: z.string(),
  elements: z.array(z.object({
    id: z.string(),
    length_mm: figure.describe("how far melt travels through the element"),
    pressure_drop_MPa: figure.describe("at switchover"),
    pressure_drop_first_full_MPa: figure.describe("as the first cavity fills (every path flowing)"),
  })),
  total_MPa: figure,
  total_first_full_MPa: figure,
});
/** {@link PathResultSchema}. */
export type PathResult = z.infer<typeof PathResultSchema>;

/** Freeze and cooling times of parts, gates, runners and sprue. */
export const FreezeResultSchema = z.object({
  part_cooling_time_s: figure,
  runner_cooling_time_s: figure,
  cycle_set_by: z.string().describe("what sets the cooling time of the cycle"),
  entries: z.array(z.object({
    id: z.string(),
    kind: z.enum(["part", "gate", "runner", "sprue"]),
    size_mm: figure.describe("governing thickness or diameter"),
    freeze_time_s: figure,
    cooling_time_s: figure,
    formula: z.enum(["plate_centre", "cylinder_centre"]),
  })),
});
/** {@link FreezeResultSchema}. */
export type FreezeResult = z.infer<typeof FreezeResultSchema>;

/** What the model assumed, in words. */
export const ModelNotesSchema = z.object({
  thermal: z.enum(["isothermal", "full"]),
  viscous_heating: z.string(),
  frozen_layer: z.string(),
  clamp_force: z.string(),
  fill_time_basis: z.string(),
  gate_shear_basis: z.string(),
});

/** How the transient solve went. */
export const DiagnosticsSchema = z.object({
  steps: z.number().int(),
  rejected_steps: z.number().int(),
  events: z.number().int(),
  network_solves: z.number().int(),
  newton_iterations_max: z.number().int(),
  worst_mass_residual: z.number(),
  worst_mass_residual_at: z.string().describe("where and when, in words"),
  mass_balance_error: z.number().describe(
    "|Σ filled volumes − injected volume| / injected volume at the end",
  ),
  stopped_because: StoppedBecauseSchema,
  message: z.string(),
});
/** {@link DiagnosticsSchema}. */
export type Diagnostics = z.infer<typeof DiagnosticsSchema>;

/** One sample of the fill history (with `?history=1` / `--history`). */
export const HistorySampleSchema = z.object({
  time_s: figure,
  injected_cm3: figure,
  feed_pressure_MPa: figure,
  clamp_force_kN: figure,
  cavity_fill_percent: z.array(figure).describe("in the order of `cavities`"),
});
/** {@link HistorySampleSchema}. */
export type HistorySample = z.infer<typeof HistorySampleSchema>;

/** `evenfill.result/1`: what every simulation reports. */
export const ResultSchema = z.object({
  format: z.literal(RESULT_FORMAT),
  scenario: z.string().describe("the scenario's name"),
  material: z.object({
    id: z.string(),
    name: z.string(),
    generic: z.boolean(),
    source: z.string(),
  }),
  injection_rate_cm3_s: figure,
  fill_time_s: figure,
  switchover_time_s: figure,
  imbalance_percent: figure.describe("(t_max − t_min) / t_max × 100 over the cavities' fill times"),
  feed_pressure_peak_MPa: figure,
  feed_pressure_at_switchover_MPa: figure,
  machine_pressure_share_percent: figure,
  clamp_force_peak_kN: figure,
  clamp_share_percent: figure,
  shot_mass_g: figure,
  runner_volume_cm3: figure.describe("sprue + runners (+ gates), cold parts only"),
  runner_mass_g: figure,
  runner_share_percent: figure,
  feed_system_volume_cm3: figure,
  cavity_volume_cm3: figure,
  cavities: z.array(CavityResultSchema),
  elements: z.array(ElementResultSchema),
  paths: z.array(PathResultSchema),
  freeze: FreezeResultSchema,
  warnings: z.array(WarningSchema),
  cautions: z.array(z.string()),
  model: ModelNotesSchema,
  diagnostics: DiagnosticsSchema,
  history: z.array(HistorySampleSchema).optional(),
}).describe("evenfill.result/1: what every simulation reports");
/** {@link ResultSchema}: the type of `resultJson`'s output. */
export type SimulationResult = z.infer<typeof ResultSchema>;
