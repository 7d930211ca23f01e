import type { FillTangent } from "./fill_tangent.ts";
import type { ElementKind } from "./feed_network.ts";

/**
 * What a fill simulation produces, in SI units. `report/` turns it into the
 * wire format (`evenfill.result/1`) with units in the field names.
 *
 * @module
 */

/** One sample of the fill history. */
export interface FillSample {
  /** s */
  time: number;
  /** Injected volume, m³. */
  injectedVolume: number;
  /** Sum of the volumes filled in every element and cavity, m³ (equals injectedVolume: mass balance). */
  filledVolume: number;
  /** Gauge pressure at the injection point (nozzle side of the sprue or hot drop), Pa. */
  feedPressure: number;
  /** Mold-opening force on the parting plane, N. */
  clampForce: number;
  /** Fill fraction of each cavity, 0…1, in cavity order. */
  cavityFill: number[];
}

/** Per-element figures. */
export interface ElementFigures {
  id: string;
  kind: ElementKind;
  /** Pressure drop along the element at switchover (end of the velocity phase), Pa. */
  pressureDropAtSwitchover: number;
  /**
   * Pressure drop along the element just as the first cavity fills, when every path
   * still carries flow, Pa (NaN if no cavity filled).
   */
  pressureDropAtFirstFull: number;
  /** Flow through the element at switchover, m³/s. */
  flowAtSwitchover: number;
  /** Peak true wall shear rate up to switchover, 1/s. */
  wallShearRatePeak: number;
  /** Peak true wall shear rate while every cavity is still filling (before the first is full), 1/s. */
  wallShearRatePeakBeforeFirstFull: number;
  /** Peak apparent (Newtonian) wall shear rate up to switchover, 1/s. */
  apparentShearRatePeak: number;
  /** Volume, m³. */
  volume: number;
  /** Time the element became full, s (NaN if it never did). */
  fullTime: number;
  /** Melt temperature used for its viscosity at switchover, K. */
  temperatureAtSwitchover: number;
  /** Frozen-layer thickness at switchover, m. */
  frozenLayerAtSwitchover: number;
  /** Whether the frozen layer closed the element during filling. */
  frozenShut: boolean;
  /** When it closed, s (NaN when it did not). */
  frozenShutAt: number;
}

/** Per-cavity figures. */
export interface CavityFigures {
  id: string;
  name: string;
  /** Time the cavity is full at the set injection rate, s (NaN: never filled). */
  fillTime: number;
  /** Fill fraction when the first cavity became full (short-shot view), 0…1. */
  fillAtFirstFull: number;
  /** Fill fraction at switchover, 0…1. */
  fillAtSwitchover: number;
  /** Peak true wall shear rate over its gates up to switchover, 1/s. */
  gateShearRatePeak: number;
  /**
   * The same peak while every cavity is still filling: the shear of the balanced split,
   * without the surge a cavity takes once others are full (smooth in the sizes).
   */
  gateShearRatePeakBeforeFirstFull: number;
  /** Id of the gate with that peak. */
  gateAtPeak: string;
  /** Pressure drop over its gate(s) at switchover (largest), Pa. */
  gatePressureDrop: number;
  /** Pressure at the cavity inlet at switchover, Pa. */
  inletPressureAtSwitchover: number;
}

/** Pressure drops along one flow path (injection point → cavity). */
export interface FlowPath {
  cavity: string;
  /** Element ids from the feed to the cavity. */
  elements: string[];
  /** Each element's pressure drop at switchover, Pa. */
  pressureDrops: number[];
  /** Each element's pressure drop as the first cavity fills (every path flowing), Pa. */
  pressureDropsAtFirstFull: number[];
}

/** How the transient solve went. */
export interface FillDiagnostics {
  steps: number;
  rejectedSteps: number;
  hydraulicSolves: number;
  events: number;
  newtonIterationsMax: number;
  worstMassResidual: number;
  worstMassResidualAt: string;
  /** |Σ filled volumes − injected volume| / injected volume at the end. */
  massBalanceError: number;
  stoppedBecause:
    | "all_full"
    | "short_shot"
    | "step_limit"
    | "solver_failure"
    | "cancelled"
    | "deadline";
  message: string;
}

/** A simulation's outcome, SI. */
export interface FillResult {
  /** Injection rate, m³/s. */
  injectionRate: number;
  /** Time of velocity-to-pressure switchover, s. */
  switchoverTime: number;
  /** Time the last cavity fills (constant rate continued past switchover), s. */
  fillTime: number;
  /** (t_max − t_min)/t_max × 100 over the cavity fill times. */
  imbalancePercent: number;
  /** Peak feed pressure up to switchover, Pa. */
  feedPressurePeak: number;
  feedPressureAtSwitchover: number;
  /** Peak clamp (mold-opening) force up to switchover, N. */
  clampForcePeak: number;
  history: FillSample[];
  elements: ElementFigures[];
  cavities: CavityFigures[];
  paths: FlowPath[];
  diagnostics: FillDiagnostics;
  /** First-order changes along the requested directions (`SimulateFillOptions.tangent`). */
  tangent?: FillTangent;
  /** Each cavity's fill at the requested injected volumes (`SimulateFillOptions.sampleVolumes`), in volume order. */
  samples?: { injectedVolume: number; cavityFill: number[] }[];
}
