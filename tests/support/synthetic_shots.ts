/**
 * Synthetic weighed short shots for tests and benchmarks: the model itself with known factors
 * applied (a perturbed gate, resin lot …), sampled at given shot sizes — the recovery check of a
 * calibration, never program output pasted back.
 *
 * @module
 */
import { applyFactors, type CalibrationFactor } from "../../src/calibrate/factors.ts";
import type { Measurements } from "../../src/model/measurements_schema.ts";
import type { ScenarioWire } from "../../src/model/scenario_schema.ts";
import { simulateScenario } from "../../src/network/simulate_scenario.ts";

/** Options of {@link syntheticShots}. */
export interface SyntheticShotsOptions {
  /** Report parts as weighed masses (g, melt density × filled volume) instead of fill %. */
  masses?: boolean;
}

/**
 * Short shots of `wire` with `factors` set to `truth`, at each of `shotPercents` (% of the
 * full shot): every cavity's fill, noise-free. Throws if the simulation fails.
 */
export function syntheticShots(
  wire: ScenarioWire,
  factors: readonly CalibrationFactor[],
  truth: readonly number[],
  shotPercents: readonly number[],
  options: SyntheticShotsOptions = {},
): Measurements {
  const scaled = applyFactors(wire, factors, truth);
  const probe = simulateScenario(scaled);
  if (!probe.ok) throw new Error("syntheticShots: the perturbed scenario does not simulate");
  const shot = probe.run.network.feedSystemVolume + probe.run.network.cavityVolume;
  const outcome = simulateScenario(scaled, {
    sampleVolumes: shotPercents.map((p) => (p / 100) * shot),
  });
  if (!outcome.ok) throw new Error("syntheticShots: the perturbed scenario does not simulate");
  const { fill, network, material } = outcome.run;
  return {
    short_shots: shotPercents.map((percent, k) => ({
      shot_percent: percent,
      parts: network.cavities.map((c, i) => {
        const f = Math.min(1, Math.max(0, fill.samples![k].cavityFill[i]));
        return options.masses
          ? { cavity: c.id, mass_g: Math.max(1e-6, f * c.volume * material.meltDensity * 1000) }
          : { cavity: c.id, fill_percent: 100 * f };
      }),
    })),
  };
}
