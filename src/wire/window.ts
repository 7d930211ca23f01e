/**
 * The process-window JSON (`window --json`, built by `report/window_json.ts`): the
 * design simulated over a 2⁴ factorial plus centre of melt, mold, rate and viscosity.
 *
 * @module
 */
import { z } from "zod";

/** A reported number: `null` when it is not finite. */
const figure = z.number().nullable();

/** The coded levels (−1, 0, +1) of one point of the sweep. */
export const WindowLevelsSchema = z.object({
  melt: z.number(),
  mold: z.number(),
  rate: z.number(),
  viscosity: z.number(),
});

/** The process-window sweep's report. */
export const WindowSchema = z.object({
  points: z.array(z.object({
    levels: WindowLevelsSchema,
    imbalance_percent: figure,
    gate_shear_peak_1_s: figure.describe("highest peak gate wall shear over the cavities"),
    feed_pressure_peak_MPa: figure,
    filled: z.boolean(),
  })),
  imbalance_range_percent: z.tuple([figure, figure]),
  gate_shear_range_1_s: z.tuple([figure, figure]),
  effects: z.array(z.object({
    factor: z.enum(["melt", "mold", "rate", "viscosity"]),
    imbalance_points: figure.describe(
      "main effect on the imbalance: high-level mean less low-level mean, percentage points",
    ),
  })),
  failures: z.array(z.object({ levels: WindowLevelsSchema, message: z.string() })),
});
/** {@link WindowSchema}: the type of `windowJson`'s output. */
export type WindowJson = z.infer<typeof WindowSchema>;

/** Wire format of a process-window job's result. */
export const WINDOW_FORMAT = "evenfill.window/1";

/** How far a sweep goes from the scenario's settings (± each), as a window job takes it. */
export const WindowRangeSchema = z.object({
  melt_temperature_K: z.number().positive().max(100).describe("melt temperature ±, K"),
  mold_temperature_K: z.number().positive().max(100).describe("mold temperature ±, K"),
  injection_rate_percent: z.number().positive().max(90).describe("injection rate ±, %"),
  viscosity_percent: z.number().positive().max(90).describe("resin-lot viscosity ±, %"),
});
/** {@link WindowRangeSchema}. */
export type WindowRangeJson = z.infer<typeof WindowRangeSchema>;

/** `evenfill.window/1`: the sweep of one or two designs (today's tool, the optimized one). */
export const WindowJobSchema = z.object({
  format: z.literal(WINDOW_FORMAT),
  range: WindowRangeSchema,
  designs: z.array(WindowSchema.extend({
    design: z.enum(["today", "after"]),
    name: z.string(),
  })),
  stopped_because: z.enum(["cancelled", "deadline"]).nullable().describe(
    "set when the sweep stopped before its last point",
  ),
}).describe("evenfill.window/1: each design's imbalance and gate shear over the process window");
/** {@link WindowJobSchema}. */
export type WindowJobResult = z.infer<typeof WindowJobSchema>;
