import type { ElementGeometry } from "../network/feed_network.ts";
import type { ScenarioRun } from "../network/simulate_scenario.ts";
import { kgToG, kToC, m3ToCm3, mToMm, nToKn, paToMpa } from "../model/units.ts";
import { RESULT_FORMAT, type SimulationResult } from "../wire/result.ts";

export { RESULT_FORMAT } from "../wire/result.ts";

const round = (
  x: number,
  digits = 6,
) => (Number.isFinite(x) ? Number(x.toPrecision(digits)) : null);

/**
 * The result JSON (`evenfill.result/1`), with stable field names: a value of the
 * wire type ({@link SimulationResult}, schema `wire/result.ts`).
 */
export function resultJson(
  run: ScenarioRun,
  options: { history?: boolean } = {},
): SimulationResult {
  const { fill, network, scenario, material, freeze } = run;
  const shearLimit = scenario.goals.gate_shear_limit_1_s ?? material.maxShearRate;
  const machinePressure = scenario.machine.max_injection_pressure_MPa;
  const cavityVolume = network.cavityVolume;
  const byId = new Map(network.elements.map((e) => [e.id, e]));
  return {
    format: RESULT_FORMAT,
    scenario: scenario.name,
    material: {
      id: material.id,
      name: material.name,
      generic: material.generic,
      source: material.source,
    },
    injection_rate_cm3_s: round(m3ToCm3(fill.injectionRate)),
    fill_time_s: round(fill.fillTime),
    switchover_time_s: round(fill.switchoverTime),
    imbalance_percent: round(fill.imbalancePercent, 4),
    feed_pressure_peak_MPa: round(paToMpa(fill.feedPressurePeak)),
    feed_pressure_at_switchover_MPa: round(paToMpa(fill.feedPressureAtSwitchover)),
    machine_pressure_share_percent: round(
      (paToMpa(fill.feedPressurePeak) / machinePressure) * 100,
      4,
    ),
    clamp_force_peak_kN: round(nToKn(fill.clampForcePeak)),
    clamp_share_percent: round(
      (nToKn(fill.clampForcePeak) / scenario.machine.clamp_force_kN) * 100,
      4,
    ),
    shot_mass_g: round(kgToG(run.shotMass)),
    runner_volume_cm3: round(m3ToCm3(network.coldRunnerVolume)),
    runner_mass_g: round(kgToG(run.runnerMass)),
    runner_share_percent: round((run.runnerMass / run.shotMass) * 100, 4),
    feed_system_volume_cm3: round(m3ToCm3(network.feedSystemVolume)),
    cavity_volume_cm3: round(m3ToCm3(cavityVolume)),
    cavities: fill.cavities.map((c, i) => ({
      id: c.id,
      name: c.name,
      fill_time_s: round(c.fillTime),
      fill_percent_at_first_full: round(c.fillAtFirstFull * 100, 5),
      fill_percent_at_switchover: round(c.fillAtSwitchover * 100, 5),
      gate: c.gateAtPeak,
      gate_shear_rate_peak_1_s: round(c.gateShearRatePeak),
      gate_shear_limit_1_s: round(shearLimit),
      gate_pressure_drop_MPa: round(paToMpa(c.gatePressureDrop)),
      inlet_pressure_at_switchover_MPa: round(paToMpa(c.inletPressureAtSwitchover)),
      mass_g: round(kgToG(run.partMasses[i])),
    })),
    elements: fill.elements.map((e) => ({
      id: e.id,
      kind: e.kind,
      pressure_drop_end_MPa: round(paToMpa(e.pressureDropAtSwitchover)),
      flow_end_cm3_s: round(m3ToCm3(e.flowAtSwitchover)),
      wall_shear_rate_peak_1_s: round(e.wallShearRatePeak),
      apparent_shear_rate_peak_1_s: round(e.apparentShearRatePeak),
      volume_cm3: round(m3ToCm3(e.volume)),
      full_time_s: round(e.fullTime),
      melt_temperature_end_C: round(kToC(e.temperatureAtSwitchover), 5),
      frozen_layer_end_mm: round(mToMm(e.frozenLayerAtSwitchover), 4),
      frozen_shut: e.frozenShut,
    })),
    paths: fill.paths.map((p) => ({
      cavity: p.cavity,
      elements: p.elements.map((id, k) => ({
        id,
        length_mm: round(mToMm(flowDistance(byId.get(id)!.geometry)), 6),
        pressure_drop_MPa: round(paToMpa(p.pressureDrops[k])),
        pressure_drop_first_full_MPa: round(paToMpa(p.pressureDropsAtFirstFull[k])),
      })),
      total_MPa: round(paToMpa(p.pressureDrops.reduce((a, b) => a + b, 0))),
      total_first_full_MPa: round(
        paToMpa(p.pressureDropsAtFirstFull.reduce((a, b) => a + b, 0)),
      ),
    })),
    freeze: {
      part_cooling_time_s: round(freeze.partCoolingTime, 4),
      runner_cooling_time_s: round(freeze.runnerCoolingTime, 4),
      cycle_set_by: freeze.cycleSetBy,
      entries: freeze.entries.map((f) => ({
        id: f.id,
        kind: f.kind,
        size_mm: round(mToMm(f.size), 4),
        freeze_time_s: round(f.freezeTime, 4),
        cooling_time_s: round(f.coolingTime, 4),
        formula: f.formula,
      })),
    },
    warnings: run.warnings,
    cautions: [...run.cautions],
    model: {
      thermal: run.process.isothermal ? "isothermal" : "full",
      viscous_heating: run.process.isothermal
        ? "off"
        : "adiabatic upper bound ΔT = ΔP/(ρ·cp), lagged one step, iterated to agree with the flows at each event",
      frozen_layer: run.process.isothermal
        ? "off"
        : "no-flow conduction solution at min(mean contact time, half residence time), never thinner than it was (no re-melting)",
      clamp_force:
        "pressure over every projected area; a full cavity holds its feed node's pressure, one sealed by a frozen gate the pressure it had then",
      fill_time_basis:
        "cavity fill times at the set injection rate continued past switchover; peaks are taken up to switchover",
      gate_shear_basis:
        "peak true wall shear while the gate runs full (its cavity filling), up to switchover; the front's transit through the land is left out",
    },
    diagnostics: {
      steps: fill.diagnostics.steps,
      rejected_steps: fill.diagnostics.rejectedSteps,
      events: fill.diagnostics.events,
      network_solves: fill.diagnostics.hydraulicSolves,
      newton_iterations_max: fill.diagnostics.newtonIterationsMax,
      worst_mass_residual: fill.diagnostics.worstMassResidual,
      worst_mass_residual_at: fill.diagnostics.worstMassResidualAt,
      mass_balance_error: fill.diagnostics.massBalanceError,
      stopped_because: fill.diagnostics.stoppedBecause,
      message: fill.diagnostics.message,
    },
    ...(options.history
      ? {
        history: fill.history.map((h) => ({
          time_s: round(h.time),
          injected_cm3: round(m3ToCm3(h.injectedVolume)),
          feed_pressure_MPa: round(paToMpa(h.feedPressure)),
          clamp_force_kN: round(nToKn(h.clampForce)),
          cavity_fill_percent: h.cavityFill.map((f) => round(f * 100, 5)),
        })),
      }
      : {}),
  };
}

/** The type of {@link resultJson}'s output. */
export type ResultJson = SimulationResult;

/**
 * How far melt travels through an element along its flow path, m: a channel's length, a
 * strip cavity's flow length, a radial cavity's gate-to-rim distance.
 */
function flowDistance(g: ElementGeometry): number {
  switch (g.type) {
    case "uniform":
    case "tapered":
      return g.length;
    case "strip":
      return g.flowLength;
    case "radial":
      return g.maxRadius - g.gateRadius;
  }
}
