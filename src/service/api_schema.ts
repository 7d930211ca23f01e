/**
 * Wire schemas of the HTTP API (zod). Request bodies are validated with them;
 * the OpenAPI document is generated from them.
 *
 * @module
 */
import { z } from "zod";
import { MaterialSchema } from "../model/material_schema.ts";
import { DEFAULT_WINDOW_RANGE } from "../window/process_window.ts";
import {
  CalibrationFactorSchema,
  IssueSchema,
  JobKindSchema,
  JobStatusSchema,
  ModeSchema,
  SlopeSourceSchema,
  WindowRangeSchema,
} from "../wire/mod.ts";

export {
  CalibrationFactorSchema,
  CalibrationSchema,
  ErrorSchema,
  IssueSchema,
  JobEndEventSchema,
  JobErrorSchema,
  JobKindSchema,
  JobListSchema,
  JobProgressSchema,
  JobSchema,
  JobStateEventSchema,
  JobStatusSchema,
  JobSummarySchema,
  OptimizationSchema,
  ResultSchema,
  StageProgressSchema,
  WindowJobSchema,
  WindowRangeSchema,
} from "../wire/mod.ts";

export const HealthSchema = z.object({
  status: z.literal("ok"),
  version: z.string(),
  uptime_s: z.number(),
  queue: z.object({ queued: z.number().int(), running: z.number().int() }),
  workers: z.object({ alive: z.number().int() }),
});

export const MaterialListSchema = z.object({ materials: z.array(MaterialSchema) });

export const DemoListSchema = z.object({
  demos: z.array(z.object({
    id: z.string().describe("file stem of scenarios/*.json"),
    name: z.string(),
    cavities: z.number().int(),
  })),
});

export const ScenarioHeadSchema = z.object({
  id: z.string(),
  name: z.string(),
  revision: z.number().int(),
  created_at: z.string(),
  updated_at: z.string(),
});

export const ScenarioListSchema = z.object({ scenarios: z.array(ScenarioHeadSchema) });

/** A scenario body: the evenfill.scenario/1 JSON (see /schema/scenario.schema.json). */
export const ScenarioBodySchema = z.record(z.string(), z.unknown()).describe(
  "evenfill.scenario/1 JSON; see /schema/scenario.schema.json",
);

export const SavedScenarioSchema = ScenarioHeadSchema.extend({ scenario: ScenarioBodySchema });

export const RevisionListSchema = z.object({
  revisions: z.array(z.object({
    revision: z.number().int(),
    name: z.string(),
    created_at: z.string(),
  })),
});

export const RevisionSchema = z.object({
  id: z.string(),
  revision: z.number().int(),
  name: z.string(),
  created_at: z.string(),
  scenario: ScenarioBodySchema,
});

export const ValidationSchema = z.object({
  ok: z.boolean(),
  issues: z.array(IssueSchema).optional(),
});

export const JobSubmitSchema = z.object({
  kind: JobKindSchema,
  scenario: z.unknown().describe("evenfill.scenario/1 JSON"),
  mode: ModeSchema.optional().describe(
    "overrides goals.mode of the scenario",
  ),
  scenario_id: z.string().max(100).optional().describe("the saved scenario this job is about"),
  slopes: SlopeSourceSchema.optional().describe(
    "where the optimizer's slopes come from: the simulation's tangent (default) or one extra simulation per size",
  ),
  factors: z.array(CalibrationFactorSchema).min(1).max(64).optional().describe(
    "calibrate: the unknowns to fit to the scenario's measurements block (default: the resin lot's viscosity)",
  ),
  window: WindowRangeSchema.partial().optional().describe(
    `window: how far the sweep goes (± each; defaults ${DEFAULT_WINDOW_RANGE.meltTemperatureK} K melt, ${DEFAULT_WINDOW_RANGE.moldTemperatureK} K mold, ${
      100 * DEFAULT_WINDOW_RANGE.injectionRateShare
    } % rate, ${100 * DEFAULT_WINDOW_RANGE.viscosityShare} % viscosity)`,
  ),
  after_scenario: z.unknown().optional().describe(
    "window: a second design swept beside the scenario (the optimized tool), evenfill.scenario/1 JSON",
  ),
});

export const JobAcceptedSchema = z.object({
  id: z.string(),
  status: JobStatusSchema,
  created_at: z.string(),
});

export const CancelSchema = z.object({ id: z.string(), status: JobStatusSchema });
