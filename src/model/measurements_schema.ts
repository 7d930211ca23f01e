import { z } from "zod";

/**
 * What a shop measured on today's tool (the scenario's optional `measurements` block), wire
 * format, metric units in the field names: weighed short shots at known shot sizes, and
 * optionally the injection pressure at switchover of a full shot. `calibrate/` fits the model
 * to them; `checkMeasurements` there cross-checks them against the tool.
 *
 * @module
 */

const id = z.string().min(1).max(64);

export const ShortShotPartSchema = z.object({
  cavity: id.describe("cavity id"),
  mass_g: z.number().positive().max(1e5).optional().describe("weighed part mass, g"),
  fill_percent: z.number().min(0).max(100).optional().describe(
    "filled share of the part (from mass or a measured flow length), %",
  ),
}).strict().refine((p) => (p.mass_g === undefined) !== (p.fill_percent === undefined), {
  message: "give either mass_g or fill_percent for each part",
});

export const ShortShotSchema = z.object({
  id: id.optional(),
  injected_cm3: z.number().positive().max(1e5).optional().describe(
    "melt volume injected up to the stop (feed system included), cm³",
  ),
  shot_percent: z.number().gt(0).max(100).optional().describe(
    "the same as a share of the full shot (feed system + cavities), %",
  ),
  parts: z.array(ShortShotPartSchema).min(1),
}).strict().refine((s) => (s.injected_cm3 === undefined) !== (s.shot_percent === undefined), {
  message: "give either injected_cm3 or shot_percent for each short shot",
});

export const MeasurementsSchema = z.object({
  short_shots: z.array(ShortShotSchema).min(1),
  full_shot_pressure_MPa: z.number().positive().max(400).optional().describe(
    "measured injection pressure at switchover of a full shot, MPa",
  ),
}).strict();

export type Measurements = z.infer<typeof MeasurementsSchema>;
