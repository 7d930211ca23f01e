/**
 * The optimization JSON (`evenfill.optimization/1`, built by
 * `report/optimization_report.ts`): before and after results, the continuous
 * optimum, the change list in order of work and the iteration history.
 *
 * @module
 */
import { z } from "zod";
import { OptimizationStatusSchema, SlopeSourceSchema } from "./enums.ts";
import { ResultSchema } from "./result.ts";

/** Wire format of an optimization. */
export const OPTIMIZATION_FORMAT = "evenfill.optimization/1";

/** Which dimension of a runner or gate a size is. */
export const DimensionSchema = z.enum(["diameter", "thickness"]);

/**
 * One SLP iteration: an entry of the optimization's history and, as it runs, a job's
 * progress.
 */
export const IterationSchema = z.object({
  iteration: z.number().int(),
  accepted: z.boolean(),
  imbalance_percent: z.number(),
  feed_pressure_peak_MPa: z.number(),
  runner_volume_cm3: z.number(),
  simulations: z.number().int().describe("simulations so far"),
});
/** {@link IterationSchema}. */
export type Iteration = z.infer<typeof IterationSchema>;

/** The tool's predicted state after a step of the change list, or today (step 0). */
export const StepStateSchema = z.object({
  imbalance_percent: z.number(),
  feed_pressure_peak_MPa: z.number(),
  runner_volume_cm3: z.number(),
  limits_met: z.boolean(),
  first_full_s: z.number().nullable().describe(
    "when the first cavity is full (null: not simulated)",
  ),
  short_shot: z.array(z.object({
    cavity: z.string(),
    fill_percent: z.number(),
    mass_g: z.number().describe("fill fraction × part mass"),
  })).describe(
    "each cavity at the instant the first cavity is full: a short shot to weigh and compare",
  ),
});
/** {@link StepStateSchema}. */
export type StepState = z.infer<typeof StepStateSchema>;

/** One entry of the change list, in order of work. */
export const ChangeSchema = z.object({
  element: z.string(),
  kind: z.enum(["runner", "gate"]),
  section: z.string().describe("the section in words, e.g. round, tunnel oval"),
  dimension: DimensionSchema,
  from_mm: z.number(),
  to_mm: z.number(),
  from_in: z.number(),
  to_in: z.number(),
  cutter: z.string(),
  action: z.enum(["cut_to", "enlarge", "add_steel"]).describe(
    "cut_to: a new tool, cut as drawn; enlarge: steel removed; add_steel: weld or insert",
  ),
  steel_safe: z.boolean().describe(
    "true: no steel is added (enlarge, or any size of a new tool); false: steel must be added",
  ),
  mold_half: z.enum(["fixed", "moving", "both"]),
  step: z.number().int().describe("order of work, from 1; changes cut together share it"),
  cut_together: z.boolean().describe("cut with the other changes of the same step"),
  above_start: z.boolean().describe("the imbalance after this step is above today's"),
  above_start_reason: z.string().nullable(),
  after_step: StepStateSchema.describe(
    "the tool simulated with this change and every one before it (a new tool: the final design)",
  ),
});
/** {@link ChangeSchema}. */
export type Change = z.infer<typeof ChangeSchema>;

/** The continuous optimum (before cutter snapping) as simulated. */
export const ContinuousSchema = z.object({
  imbalance_percent: z.number(),
  feed_pressure_peak_MPa: z.number(),
  runner_volume_cm3: z.number(),
  limits_met: z.boolean(),
  violations: z.array(z.string()),
  sizes: z.array(z.object({
    element: z.string(),
    dimension: DimensionSchema,
    size_mm: z.number(),
  })),
});
/** {@link ContinuousSchema}. */
export type Continuous = z.infer<typeof ContinuousSchema>;

/**
 * One point of an existing tool's fewest-change front: the best plan found that changes at
 * most `max_changes` sizes, balanced with continuous sizes (before cutter snapping).
 */
export const FrontPointSchema = z.object({
  max_changes: z.number().int(),
  changed: z.array(z.string()).describe("the sizes this plan changes"),
  imbalance_percent: z.number(),
  runner_mass_g: z.number(),
  limits_met: z.boolean(),
  change_cost: z.number().describe("sum of goals.change_costs over its changes"),
  chosen: z.boolean().describe("the plan the optimization went on with"),
});
/** {@link FrontPointSchema}. */
export type FrontPointJson = z.infer<typeof FrontPointSchema>;

/** `evenfill.optimization/1`. */
export const OptimizationSchema = z.object({
  format: z.literal(OPTIMIZATION_FORMAT),
  status: OptimizationStatusSchema,
  reason: z.string(),
  would_need: z.array(z.string()).describe(
    "what would make it feasible (linear model, confirm by simulation)",
  ),
  snapping: z.string().nullable().describe("how the cutter sizes were chosen"),
  simulations: z.number().int(),
  slopes: SlopeSourceSchema,
  before: ResultSchema,
  continuous: ContinuousSchema,
  after: ResultSchema,
  changes: z.array(ChangeSchema),
  changes_start: StepStateSchema.nullable().describe(
    "step 0 of the change list: today's tool (null: a new tool, or no change plan)",
  ),
  iterations: z.array(IterationSchema.extend({ trust_radius: z.number() })),
  after_limits_met: z.boolean().describe(
    "the final design (in cutter sizes) meets every limit: imbalance, gate shear, pressure, feed order",
  ),
  after_violations: z.array(z.string()).describe("the limits the final design breaks, in words"),
  changes_omitted: z.string().nullable().describe(
    "why there is no change list (stopped before it, or not asked for); null when it is there",
  ),
  front: z.array(FrontPointSchema).describe(
    "an existing tool's trade-off: for at most k changes, the best plan found (empty for a new tool)",
  ),
}).describe("evenfill.optimization/1: before/after, the change list, the iteration history");
/** {@link OptimizationSchema}: the type of `optimizationJson`'s output. */
export type OptimizationResult = z.infer<typeof OptimizationSchema>;
