/**
 * The calibration JSON (`evenfill.calibration/1`, built by `report/calibration_json.ts`): the
 * factors fitted to weighed short shots with their standard errors, measured against
 * predicted fill per part before and after the fit, and the calibrated scenario.
 *
 * @module
 */
import { z } from "zod";

/** Wire format of a calibration. */
export const CALIBRATION_FORMAT = "evenfill.calibration/1";

/** A reported number: `null` when it is not finite. */
const figure = z.number().nullable();

/** One unknown a calibration may fit (the `factors` of a calibrate job). */
export const CalibrationFactorSchema = z.discriminatedUnion("kind", [
  z.object({ kind: z.literal("viscosity") }).strict().describe("the resin lot's viscosity, x"),
  z.object({ kind: z.literal("gate_size"), gate: z.string().min(1).max(64) }).strict()
    .describe("a gate's effective flow size, x"),
  z.object({ kind: z.literal("runner_size"), runner: z.string().min(1).max(64) }).strict()
    .describe("a runner's effective diameter, x"),
  z.object({ kind: z.literal("melt_temperature") }).strict()
    .describe("an offset on the melt temperature, K"),
]);
/** {@link CalibrationFactorSchema}. */
export type CalibrationFactorJson = z.infer<typeof CalibrationFactorSchema>;

/** How the fit ended. */
export const CalibrationStopSchema = z.enum(["converged", "iteration_limit", "no_progress"]);

/** `evenfill.calibration/1`. */
export const CalibrationSchema = z.object({
  format: z.literal(CALIBRATION_FORMAT),
  stopped_because: CalibrationStopSchema,
  iterations: z.number().int(),
  simulations: z.number().int(),
  cost_before: figure.describe("weighted sum of squares of the data before the fit"),
  cost_after: figure.describe("the same after the fit"),
  factors: z.array(z.object({
    factor: CalibrationFactorSchema,
    name: z.string(),
    nominal: z.number().describe("today's model: 1 for a multiplier, 0 K for the offset"),
    value: figure,
    standard_error: figure.describe("approximate, from the linearised least squares"),
    identified: z.boolean().describe(
      "false: the shots cannot tell this factor apart; its value stays near today's model",
    ),
    at_bound: z.boolean(),
    bounds: z.tuple([z.number(), z.number()]),
  })),
  residuals: z.array(z.object({
    shot: z.number().int().describe("index of the short shot in measurements.short_shots"),
    cavity: z.string(),
    injected_cm3: figure,
    measured_fill_percent: figure,
    before_fill_percent: figure,
    after_fill_percent: figure,
  })),
  pressure: z.object({
    measured_MPa: figure,
    before_MPa: figure,
    after_MPa: figure,
  }).nullable(),
  calibrated: z.looseObject({ format: z.string(), name: z.string() }).describe(
    "the evenfill.scenario/1 JSON with the fitted factors applied; optimize runs on it unchanged",
  ),
}).describe("evenfill.calibration/1: fitted factors, measured against predicted, the scenario");
/** {@link CalibrationSchema}: the type of `calibrationJson`'s output. */
export type CalibrationResult = z.infer<typeof CalibrationSchema>;
