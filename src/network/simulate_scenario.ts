import { materialById, materialIds } from "../materials/library.ts";
import { type Material, toMaterial } from "../materials/material.ts";
import { flowCurveAt } from "../materials/viscosity.ts";
import { parseScenario } from "../model/parse_scenario.ts";
import type { ScenarioIssue } from "../wire/issue.ts";
import type { Scenario } from "../model/scenario_schema.ts";
import { cm3PerSToM3PerS, cToK } from "../model/units.ts";
import {
  CAUTIONS,
  type FillWarning,
  fillWarnings,
  type FreezeTimes,
  freezeTimes,
  thermalDataOf,
  type ThermalSettings,
} from "./assess_fill.ts";
import { buildNetwork } from "./build_network.ts";
import type { FeedNetwork } from "./feed_network.ts";
import type { FillResult } from "./fill_result.ts";
import type { FillTangentRequest } from "./fill_tangent.ts";
import { type FillProcess, type MeltModel, simulateFill } from "./simulate_fill.ts";

/** Everything one simulation of a scenario produced. SI inside. */
export interface ScenarioRun {
  scenario: Scenario;
  material: Material;
  network: FeedNetwork;
  process: FillProcess;
  fill: FillResult;
  freeze: FreezeTimes;
  warnings: FillWarning[];
  cautions: readonly string[];
  /** Part masses, kg, in cavity order. */
  partMasses: number[];
  /** Cold feed-system (sprue + runners + gates) mass per shot, kg. */
  runnerMass: number;
  /** Whole shot (parts + cold feed system), kg. */
  shotMass: number;
}

/** Outcome of {@link runScenario}: a run, or issues / a failure as data. */
export type RunOutcome =
  | { ok: true; run: ScenarioRun }
  | { ok: false; code: "invalid_scenario"; issues: ScenarioIssue[] }
  | { ok: false; code: "simulation_failed"; message: string }
  | { ok: false; code: "stopped"; reason: "cancelled" | "deadline"; message: string };

/** Options of {@link runScenario}. */
export interface RunScenarioOptions {
  /** Progress callback, injected fraction 0…1. */
  onProgress?: (fraction: number) => void;
  /** Carry the fill's tangent along these directions (`fill_tangent.ts`). */
  tangent?: FillTangentRequest;
  /** Once aborted, the fill stops after its current step and the outcome is `stopped`. */
  signal?: AbortSignal;
  /** Wall-clock instant (ms since the epoch) past which the fill stops (`stopped`, deadline). */
  deadline?: number;
  /** Sample every cavity's fill exactly at these injected volumes, m³ (`FillResult.samples`). */
  sampleVolumes?: readonly number[];
  /** The fill's step control (`SimulateFillOptions.flowChangeTolerance`); default 0.02. */
  flowChangeTolerance?: number;
}

/** The library's material ids, as the scenario parser wants them. */
export const LIBRARY_MATERIAL_IDS: ReadonlySet<string> = new Set(materialIds());

/** Validate raw JSON and run it. Never throws on bad input. */
export function simulateScenario(input: unknown, options: RunScenarioOptions = {}): RunOutcome {
  const parsed = parseScenario(input, { materialIds: LIBRARY_MATERIAL_IDS });
  if (!parsed.ok) return { ok: false, code: "invalid_scenario", issues: parsed.issues };
  return runScenario(parsed.scenario, options);
}

/**
 * Everything simulate checks before it runs, as issues with JSON paths: the schema and
 * cross-references (`parseScenario`), then the network (every cavity reachable, every section
 * a shape the physics can work with). What `validate`, save and job submit must run so that
 * a scenario they accept is one simulate accepts.
 */
export function checkScenario(
  input: unknown,
): { ok: true; scenario: Scenario } | { ok: false; issues: ScenarioIssue[] } {
  const parsed = parseScenario(input, { materialIds: LIBRARY_MATERIAL_IDS });
  if (!parsed.ok) return parsed;
  const built = buildNetwork(parsed.scenario);
  if (!built.ok) return { ok: false, issues: built.issues };
  return { ok: true, scenario: parsed.scenario };
}

/** Resolve the scenario's material (library id or inline) to the SI domain type. */
export function resolveMaterial(scenario: Scenario): Material {
  const m = scenario.material;
  if (typeof m === "string") {
    const found = materialById(m);
    if (!found) throw new RangeError(`Cannot resolve material: unknown id "${m}"`);
    return toMaterial(found);
  }
  return toMaterial(m);
}

/** The melt temperature at the feed's exit (a hot drop's tip, or the process melt), the mold's, K, and the thermal switch. */
export function thermalSettingsOf(scenario: Scenario): ThermalSettings {
  const p = scenario.process;
  const tip = scenario.feed.kind === "hot_drop" ? scenario.feed.tip_temperature_C : undefined;
  return {
    feedTemperature: cToK(tip ?? p.melt_temperature_C),
    moldTemperature: cToK(p.mold_temperature_C),
    isothermal: p.thermal === "isothermal",
  };
}

/** Fill process settings of a scenario, SI. */
export function processOf(scenario: Scenario, network: FeedNetwork): FillProcess {
  const p = scenario.process;
  const shot = network.feedSystemVolume + network.cavityVolume;
  const injectionRate = "flow_rate_cm3_s" in p.injection
    ? cm3PerSToM3PerS(p.injection.flow_rate_cm3_s)
    : shot / p.injection.fill_time_s;
  const { feedTemperature, moldTemperature, isothermal } = thermalSettingsOf(scenario);
  return {
    injectionRate,
    switchoverFraction: p.switchover_percent / 100,
    feedTemperature,
    moldTemperature,
    isothermal,
  };
}

/** The melt model the fill simulation uses, from a material. */
export function meltModelOf(material: Material): MeltModel {
  return {
    curveAt: (temperature, pressure) => flowCurveAt(material, temperature, pressure),
    meltDensity: material.meltDensity,
    specificHeat: material.specificHeat,
    diffusivity: material.thermalDiffusivity,
    noFlowTemperature: material.noFlowTemperature,
  };
}

/**
 * Simulate a validated scenario: network, fill, freeze times, warnings, masses.
 *
 * A physics routine that meets numbers outside its domain (a RangeError: a section the
 * frozen layer closes, a flow curve that overflows) ends the run as `simulation_failed`
 * with its message, never as an exception: valid input must get an answer.
 */
export function runScenario(scenario: Scenario, options: RunScenarioOptions = {}): RunOutcome {
  try {
    return runValidated(scenario, options);
  } catch (error) {
    return outOfDomain(error);
  }
}

/** A RangeError from the physics as `simulation_failed`; anything else is rethrown (a bug). */
function outOfDomain(error: unknown): { ok: false; code: "simulation_failed"; message: string } {
  if (!(error instanceof RangeError)) throw error;
  return {
    ok: false,
    code: "simulation_failed",
    message: `The simulation cannot go on with these values: ${error.message}`,
  };
}

function runValidated(scenario: Scenario, options: RunScenarioOptions): RunOutcome {
  const built = buildNetwork(scenario);
  if (!built.ok) return { ok: false, code: "invalid_scenario", issues: built.issues };
  const setup = runSetup(scenario);
  const fill = fillOfNetwork(scenario, built.network, setup, options);
  if (!fill.ok) return fill;
  return { ok: true, run: completeRun(scenario, built.network, setup, fill.process, fill.fill) };
}

/** What a run of a scenario needs besides its network, resolved once (the optimizer reuses it). */
export interface RunSetup {
  material: Material;
  melt: MeltModel;
}

/** The material and melt model of a validated scenario. */
export function runSetup(scenario: Scenario): RunSetup {
  const material = resolveMaterial(scenario);
  return { material, melt: meltModelOf(material) };
}

/** Outcome of {@link fillOfNetwork}: the fill and the process it ran, or a failure as data. */
export type NetworkFillOutcome =
  | { ok: true; fill: FillResult; process: FillProcess }
  | Extract<RunOutcome, { ok: false; code: "simulation_failed" | "stopped" }>;

/**
 * The fill of `network` under `scenario`'s process: the network may carry sizes other than
 * the scenario's own (the optimizer's designs, `optimize/sized_network.ts`), everything else
 * comes from the scenario. A RangeError from the physics becomes `simulation_failed`.
 */
export function fillOfNetwork(
  scenario: Scenario,
  network: FeedNetwork,
  setup: RunSetup,
  options: RunScenarioOptions = {},
): NetworkFillOutcome {
  const process = processOf(scenario, network);
  let fill: FillResult;
  try {
    fill = simulateFill(network, {
      melt: setup.melt,
      process,
      onProgress: options.onProgress,
      flowChangeTolerance: options.flowChangeTolerance,
      tangent: options.tangent,
      signal: options.signal,
      deadline: options.deadline,
      sampleVolumes: options.sampleVolumes,
    });
  } catch (error) {
    return outOfDomain(error);
  }
  const stop = fill.diagnostics.stoppedBecause;
  if (stop === "solver_failure") {
    return { ok: false, code: "simulation_failed", message: fill.diagnostics.message };
  }
  if (stop === "cancelled" || stop === "deadline") {
    return { ok: false, code: "stopped", reason: stop, message: fill.diagnostics.message };
  }
  return { ok: true, fill, process };
}

/**
 * Everything a report reads of a finished fill: freeze times, warnings (against `scenario`,
 * which must carry the network's sizes), part, runner and shot masses.
 */
export function completeRun(
  scenario: Scenario,
  network: FeedNetwork,
  setup: RunSetup,
  process: FillProcess,
  fill: FillResult,
): ScenarioRun {
  const material = setup.material;
  const thermal = thermalDataOf(material, process);
  const freeze = freezeTimes(network, thermal);
  const warnings = fillWarnings({ scenario, network, fill }, { thermal, freeze });
  const partMasses = network.cavities.map((c) => c.volume * material.solidDensity);
  const runnerMass = network.coldRunnerVolume * material.solidDensity;
  const shotMass = partMasses.reduce((a, b) => a + b, 0) + runnerMass;
  return {
    scenario,
    material,
    network,
    process,
    fill,
    freeze,
    warnings,
    cautions: CAUTIONS,
    partMasses,
    runnerMass,
    shotMass,
  };
}
