import { materialById } from "../materials/library.ts";
import type { ScenarioWire } from "../model/scenario_schema.ts";

/**
 * The unknowns a calibration may fit, each a multiplier (or an offset) on today's model:
 * - `viscosity`: the resin lot's viscosity, the whole curve scaled (Cross-WLF D1 and τ* both,
 *   so η(γ̇, T) → f·η; power law K → f·K);
 * - `gate_size`: a gate's effective flow size (diameter, or an edge gate's thickness) — a
 *   half-blocked or worn gate;
 * - `runner_size`: a runner's effective diameter — what the 1-D model does not see in that
 *   branch (shear-induced imbalance at a split, a worn or blocked runner), as a size;
 * - `melt_temperature`: an offset on the melt (and hot-drop tip) temperature, K.
 *
 * @module
 */
export type CalibrationFactor =
  | { kind: "viscosity" }
  | { kind: "gate_size"; gate: string }
  | { kind: "runner_size"; runner: string }
  | { kind: "melt_temperature" };

/** The nominal value of a factor (its Tikhonov anchor): 1 for multipliers, 0 K for the offset. */
export function nominalValue(factor: CalibrationFactor): number {
  return factor.kind === "melt_temperature" ? 0 : 1;
}

/** Default bounds: multipliers 0.5…2 (0.7…1.3 for sizes), the offset ±30 K. Common practice, no source. */
export function defaultBounds(factor: CalibrationFactor): [number, number] {
  switch (factor.kind) {
    case "viscosity":
      return [0.5, 2];
    case "gate_size":
    case "runner_size":
      return [0.7, 1.3];
    case "melt_temperature":
      return [-30, 30];
  }
}

/** A short name for reports: "viscosity", "gate G2 size", "runner R4 size", "melt temperature". */
export function factorName(factor: CalibrationFactor): string {
  switch (factor.kind) {
    case "viscosity":
      return "viscosity";
    case "gate_size":
      return `gate ${factor.gate} size`;
    case "runner_size":
      return `runner ${factor.runner} size`;
    case "melt_temperature":
      return "melt temperature";
  }
}

/**
 * The scenario with the factors applied at `values`, as a new scenario wire (a library
 * material is written out inline, its `source` saying it was calibrated). Throws a
 * RangeError for an unknown gate or runner id.
 */
export function applyFactors(
  wire: ScenarioWire,
  factors: readonly CalibrationFactor[],
  values: ArrayLike<number>,
): ScenarioWire {
  const out = structuredClone(wire);
  factors.forEach((factor, k) => {
    const v = values[k];
    switch (factor.kind) {
      case "viscosity": {
        const base = typeof out.material === "string"
          ? structuredClone(materialById(out.material))
          : out.material;
        if (!base) throw new RangeError(`Cannot calibrate: unknown material "${out.material}"`);
        const viscosity = base.viscosity;
        if (viscosity.model === "cross_wlf") {
          viscosity.D1_Pa_s *= v;
          viscosity.tau_star_Pa *= v;
        } else viscosity.K_Pa_sn *= v;
        out.material = base;
        break;
      }
      case "gate_size": {
        const gate = out.gates.find((g) => g.id === factor.gate);
        if (!gate) throw new RangeError(`Cannot calibrate: no gate "${factor.gate}"`);
        if (gate.type === "edge") gate.thickness_mm *= v;
        else {
          gate.diameter_mm *= v;
          if (gate.type === "tunnel" && gate.entry_diameter_mm !== undefined) {
            gate.entry_diameter_mm *= v;
          }
        }
        break;
      }
      case "runner_size": {
        const runner = out.runners?.find((r) => r.id === factor.runner);
        if (!runner) throw new RangeError(`Cannot calibrate: no runner "${factor.runner}"`);
        runner.diameter_mm *= v;
        if (runner.width_mm !== undefined) runner.width_mm *= v;
        if (runner.depth_mm !== undefined) runner.depth_mm *= v;
        break;
      }
      case "melt_temperature": {
        out.process.melt_temperature_C += v;
        if (out.feed.kind === "hot_drop" && out.feed.tip_temperature_C !== undefined) {
          out.feed.tip_temperature_C += v;
        }
        break;
      }
    }
  });
  return out;
}
