import { z } from "zod";
import { MaterialSchema } from "./material_schema.ts";
import { MeasurementsSchema } from "./measurements_schema.ts";
import { ModeSchema } from "../wire/enums.ts";
import {
  DEFAULT_MAX_RUNNER_COOLING_RATIO,
  RUNNER_OVER_WALL_MM,
  SPRUE_EXIT_MARGIN_MM,
} from "./size_rules.ts";

/**
 * The scenario file, wire format `evenfill.scenario/1`. Units are in the field
 * names; ranges reject values no real mold has (a 500 mm gate) so a slipped
 * decimal point is caught at the door.
 *
 * @module
 */

export const SCENARIO_FORMAT = "evenfill.scenario/1";

const id = z.string().min(1).max(64).regex(
  /^[A-Za-z0-9_.:-]+$/,
  "ids use letters, digits and _ . : - only",
);
/** A dimension in mm: above 0.01 mm (below it no cutter or gauge works; common practice). */
const mm = (max: number, what: string) =>
  z.number().positive(`${what} must be > 0 mm`)
    .min(0.01, `${what} under 0.01 mm is not plausible`)
    .max(max, `${what} over ${max} mm is not plausible`);

export const InjectionSchema = z.union([
  z.object({
    flow_rate_cm3_s: z.number().positive().max(5000).describe(
      "volumetric injection rate until switchover, cm³/s",
    ),
  }).strict(),
  z.object({
    fill_time_s: z.number().positive().max(60).describe(
      "time to inject the whole shot (runners + cavities) at constant rate, s",
    ),
  }).strict(),
]);

export const ProcessSchema = z.object({
  melt_temperature_C: z.number().min(100).max(450),
  mold_temperature_C: z.number().min(-10).max(250),
  injection: InjectionSchema,
  switchover_percent: z.number().gt(50).max(100).default(98).describe(
    "velocity-to-pressure switchover, % of the total shot volume",
  ),
  thermal: z.enum(["full", "isothermal"]).default("full").describe(
    "isothermal turns off frozen layer, viscous heating and temperature dependence (verification runs)",
  ),
  hold_time_s: z.number().positive().max(600).optional().describe(
    "holding-pressure time after switchover, s: with the gate_hold size rule, every adjustable gate must stay open (not frozen) until it ends",
  ),
}).strict();

export const MachineSchema = z.object({
  max_injection_pressure_MPa: z.number().positive().max(400),
  clamp_force_kN: z.number().positive().max(100000),
}).strict();

export const SprueSchema = z.object({
  kind: z.literal("sprue"),
  node: id.describe("node at the sprue's exit, where the runners start"),
  length_mm: mm(400, "sprue length"),
  entry_diameter_mm: mm(30, "sprue entry diameter"),
  exit_diameter_mm: mm(40, "sprue exit diameter"),
}).strict();

export const HotDropSchema = z.object({
  kind: z.literal("hot_drop"),
  node: id.describe("node at the drop's tip, where the cold runner (or a gate) starts"),
  length_mm: mm(400, "hot drop length"),
  diameter_mm: mm(30, "hot drop diameter"),
  tip_temperature_C: z.number().min(100).max(450).optional().describe(
    "melt temperature at the tip, °C (default: the process melt temperature)",
  ),
}).strict();

export const FeedSchema = z.discriminatedUnion("kind", [SprueSchema, HotDropSchema]);

export const NodeSchema = z.object({
  id,
  x_mm: z.number().min(-5000).max(5000),
  y_mm: z.number().min(-5000).max(5000),
}).strict();

const sizeBounds = {
  adjustable: z.boolean().default(false),
  min_diameter_mm: mm(40, "min diameter").optional(),
  max_diameter_mm: mm(40, "max diameter").optional(),
};

export const RunnerSchema = z.object({
  id,
  from: id,
  to: id,
  shape: z.enum(["round", "half_round", "trapezoid", "parabolic"]).default("round"),
  diameter_mm: mm(40, "runner diameter").describe(
    "diameter of the round (or of the full circle for half_round); trapezoid and parabolic derive their size from it unless depth_mm/width_mm are given",
  ),
  depth_mm: mm(40, "runner depth").optional(),
  width_mm: mm(60, "runner width").optional(),
  length_mm: mm(2000, "runner length").optional().describe(
    "default: the distance between the two nodes",
  ),
  mold_half: z.enum(["fixed", "moving", "both"]).optional().describe(
    "where the runner is cut (default: both halves for round, moving half otherwise)",
  ),
  ...sizeBounds,
}).strict();

const gateCommon = {
  id,
  from: id.describe("runner node the gate leaves"),
  cavity: id,
  adjustable: z.boolean().default(false),
};

export const EdgeGateSchema = z.object({
  ...gateCommon,
  type: z.literal("edge"),
  width_mm: mm(60, "gate width"),
  thickness_mm: mm(15, "gate thickness"),
  land_mm: mm(20, "gate land"),
  min_thickness_mm: mm(15, "min gate thickness").optional(),
  max_thickness_mm: mm(15, "max gate thickness").optional(),
}).strict();

export const PinGateSchema = z.object({
  ...gateCommon,
  type: z.literal("pin"),
  diameter_mm: mm(15, "gate diameter"),
  land_mm: mm(20, "gate land"),
  min_diameter_mm: mm(15, "min gate diameter").optional(),
  max_diameter_mm: mm(15, "max gate diameter").optional(),
}).strict();

export const TunnelGateSchema = z.object({
  ...gateCommon,
  type: z.literal("tunnel"),
  section: z.enum(["round", "oval", "d"]).default("round"),
  diameter_mm: mm(15, "gate tip diameter").describe(
    "tip size: diameter (round), minor axis (oval), circle diameter (d)",
  ),
  length_mm: mm(60, "tunnel length"),
  entry_diameter_mm: mm(30, "tunnel entry diameter").optional(),
  taper_angle_deg: z.number().min(0).max(60).optional().describe(
    "included cone angle; used when entry_diameter_mm is not given (default 30°)",
  ),
  oval_ratio: z.number().min(1).max(4).default(1.5).describe(
    "oval section: major / minor axis",
  ),
  d_depth_ratio: z.number().min(0.5).max(0.99).default(0.75).describe(
    "d section: depth of the cut circle / its diameter",
  ),
  min_diameter_mm: mm(15, "min gate diameter").optional(),
  max_diameter_mm: mm(15, "max gate diameter").optional(),
}).strict();

export const GateSchema = z.discriminatedUnion("type", [
  EdgeGateSchema,
  PinGateSchema,
  TunnelGateSchema,
]);

export const CavitySchema = z.object({
  id,
  name: z.string().max(200).optional(),
  volume_cm3: z.number().positive().max(20000, "a cavity over 20 000 cm³ is not plausible"),
  projected_area_cm2: z.number().positive().max(20000),
  wall_mm: mm(30, "wall thickness"),
  flow_length_mm: mm(3000, "flow length").optional().describe(
    "strip cavities: length of the flow path from gate to last-to-fill point",
  ),
  fill_pattern: z.enum(["strip", "radial"]).default("strip"),
  gate_radius_mm: mm(100, "gate radius").optional().describe(
    "radial cavities: radius at which radial flow starts (default: the gate's half size)",
  ),
  x_mm: z.number().min(-5000).max(5000).optional().describe(
    "plan position of the cavity's centre, for the layout drawing only (default: beyond its gate)",
  ),
  y_mm: z.number().min(-5000).max(5000).optional().describe(
    "plan position of the cavity's centre, for the layout drawing only",
  ),
}).strict();

/**
 * Relative cost of one change of each kind on an existing tool. Defaults are our own common
 * practice, no source: enlarging is a cut (cheap, a gate cheapest: a short land); reducing
 * needs steel added (a weld or an insert, then a re-cut), several times dearer.
 */
export const ChangeCostsSchema = z.object({
  enlarge_gate: z.number().min(0).max(1000).default(1),
  enlarge_runner: z.number().min(0).max(1000).default(2),
  reduce_gate: z.number().min(0).max(1000).default(6),
  reduce_runner: z.number().min(0).max(1000).default(10),
}).strict();
/** {@link ChangeCostsSchema} after defaults. */
export type ChangeCosts = z.infer<typeof ChangeCostsSchema>;

/** Per-rule switches of `goals.size_rules`; a rule left out is on. */
export const SizeRulesSchema = z.object({
  runner_over_wall: z.boolean().optional().describe(
    `runner ≥ the thickest wall it feeds + ${RUNNER_OVER_WALL_MM} mm (common practice)`,
  ),
  gate_to_wall: z.boolean().optional().describe(
    "gate size within its range of the wall: edge depth 50–80 %, pin and tunnel tip 25–60 % (common practice)",
  ),
  feed_order: z.boolean().optional().describe(
    "a runner is never larger than the runner feeding it (on even with size_rules: false)",
  ),
  sprue_exit: z.boolean().optional().describe(
    `the sprue's exit is at least ${SPRUE_EXIT_MARGIN_MM} mm larger than each runner leaving it (common practice: 0.5–1 mm)`,
  ),
  runner_cooling: z.boolean().optional().describe(
    "a cold runner's cooling time is at most max_runner_cooling_ratio × the thickest part's, or the sprue's when longer (cylinder axis against plate centre line, first-term closed forms): a runner no larger than max(that size, the sprue exit)",
  ),
  gate_hold: z.boolean().optional().describe(
    "each adjustable gate freezes no sooner than process.hold_time_s, when given",
  ),
}).strict();

export const GoalsSchema = z.object({
  mode: ModeSchema.default("new_tool").describe(
    "new_tool: free sizes within bounds; trim: an existing tool, runners may shrink; steel_safe: only enlarge",
  ),
  max_imbalance_percent: z.number().min(0).max(100).default(3),
  max_pressure_fraction: z.number().gt(0).max(1).default(0.8),
  cutters: z.union([
    z.enum(["metric", "inch", "continuous"]),
    z.array(z.number().positive().max(40)).min(1).describe("shop list of cutter sizes, mm"),
  ]).default("metric"),
  gate_shear_limit_1_s: z.number().positive().max(1e7).optional().describe(
    "overrides the material's maximum shear rate",
  ),
  size_rules: z.union([z.boolean(), SizeRulesSchema]).default(true).describe(
    "the practical size rules the optimizer keeps: true all, false none but feed_order, or an object switching each by name (runner_over_wall, gate_to_wall, feed_order, sprue_exit, runner_cooling, gate_hold; one left out is on). On an existing tool (trim, steel_safe) a rule never forces a change: where today's size breaks it, the bound is today's size and a warning says so",
  ),
  max_runner_cooling_ratio: z.number().gt(0).max(100).default(DEFAULT_MAX_RUNNER_COOLING_RATIO)
    .describe(
      "runner_cooling rule: a cold runner may need at most this multiple of the thickest part's cooling time, or the sprue's when that is longer (common practice, no source), so a balance does not lengthen the cycle",
    ),
  max_changes: z.number().int().min(0).max(10000).optional().describe(
    "at most this many runners and gates changed from today's sizes (trim and steel_safe)",
  ),
  change_costs: ChangeCostsSchema.optional().describe(
    "relative cost of each kind of change, for choosing among plans that meet every limit (trim and steel_safe)",
  ),
}).strict();

export const ScenarioSchema = z.object({
  $schema: z.string().optional(),
  format: z.literal(SCENARIO_FORMAT),
  name: z.string().min(1).max(200),
  notes: z.string().max(4000).optional(),
  material: z.union([id, MaterialSchema]).describe("library id or an inline material"),
  process: ProcessSchema,
  machine: MachineSchema,
  feed: FeedSchema,
  nodes: z.array(NodeSchema).min(1).max(5000),
  runners: z.array(RunnerSchema).max(5000).default([]),
  gates: z.array(GateSchema).min(1).max(5000),
  cavities: z.array(CavitySchema).min(1).max(2000),
  goals: GoalsSchema.default({
    mode: "new_tool",
    max_imbalance_percent: 3,
    max_pressure_fraction: 0.8,
    cutters: "metric",
    size_rules: true,
    max_runner_cooling_ratio: DEFAULT_MAX_RUNNER_COOLING_RATIO,
  }),
  measurements: MeasurementsSchema.optional().describe(
    "weighed short shots (and the full-shot pressure) of today's tool, for `calibrate`",
  ),
}).strict();

/** A scenario after schema defaults are applied. */
export type Scenario = z.infer<typeof ScenarioSchema>;
/** A scenario as written in a file. */
export type ScenarioWire = z.input<typeof ScenarioSchema>;
export type Runner = z.infer<typeof RunnerSchema>;
export type Gate = z.infer<typeof GateSchema>;
export type Cavity = z.infer<typeof CavitySchema>;
export type Feed = z.infer<typeof FeedSchema>;
export type Goals = z.infer<typeof GoalsSchema>;
