/**
 * The parts of the service's JSON the page reads (`evenfill.result/1`,
 * `evenfill.optimization/1`, `evenfill.calibration/1`, `evenfill.window/1`, jobs, issues,
 * errors): the wire module's types, imported as types only, so that no schema code (zod) ends
 * up in the page's bundle (`tests/page/wire_test.ts` checks `public/app.js` holds none). The
 * library and store listings, which have no wire schema, are declared here.
 *
 * @module
 */

export type {
  ApiError,
  CalibrationFactorJson as CalibrationFactorEntry,
  CalibrationResult,
  CavityResult,
  Change,
  ElementResult,
  FreezeResult,
  FrontPointJson as FrontPoint,
  HistorySample,
  Iteration,
  Job,
  JobProgress,
  JobStatus,
  Mode,
  OptimizationResult,
  PathResult,
  ScenarioIssue,
  SimulationResult,
  SlopeSource,
  StageProgress,
  StepState,
  Warning,
  WindowJobResult,
} from "../wire/mod.ts";

/** A library material. */
export interface MaterialEntry {
  id: string;
  name: string;
  generic?: boolean;
  source?: string;
  max_shear_rate_1_s?: number;
}

/** A demo listing. */
export interface DemoEntry {
  id: string;
  name: string;
  cavities: number;
}

/** A saved scenario listing. */
export interface SavedEntry {
  id: string;
  name: string;
  revision: number;
  updated_at: string;
}
