import {
  gateHoldVerdict,
  gateRuleVerdict,
  RUNNER_OVER_WALL_MM,
  runnerCoolingVerdict,
  runnerFloorMm,
  SPRUE_EXIT_MARGIN_MM,
  sprueExitVerdict,
} from "../model/size_rules.ts";
import type { Scenario } from "../model/scenario_schema.ts";
import { runnerTree } from "../model/runner_tree.ts";
import type { Material } from "../materials/material.ts";
import { cylinderCentreCoolingTime, plateCoolingTime } from "../physics/thermal.ts";
import type { FeedNetwork } from "./feed_network.ts";
import type { FillResult } from "./fill_result.ts";

/**
 * Freeze and cooling estimates and the rule-of-thumb warnings,
 * computed from a fill result. Rules marked "common practice" have no published
 * source; the thresholds are those the trade quotes.
 *
 * @module
 */

/** Thermal data the estimates need, SI (temperatures in K). */
export interface ThermalData {
  diffusivity: number;
  meltTemperature: number;
  moldTemperature: number;
  noFlowTemperature: number;
  ejectionTemperature: number;
  maxShearRate: number;
  /** The resin's recommended melt temperature window, K (when its data give one). */
  meltTemperatureRange?: readonly [number, number];
  /** The resin's recommended mold temperature window, K. */
  moldTemperatureRange?: readonly [number, number];
  /** Whether thermal effects (viscous heating) were simulated. */
  isothermal?: boolean;
}

/** One element's freeze and cooling times, s. */
export interface FreezeEntry {
  id: string;
  kind: "part" | "gate" | "runner" | "sprue";
  /** Governing thickness or diameter, m. */
  size: number;
  /** Time for the centre (plate) or mean (cylinder) to reach the no-flow temperature, s. */
  freezeTime: number;
  /** Time to reach the ejection temperature, s. */
  coolingTime: number;
  /** Which closed form: plate or cylinder, both for the centre-line temperature. */
  formula: "plate_centre" | "cylinder_centre";
}

/** Freeze summary. */
export interface FreezeTimes {
  entries: FreezeEntry[];
  /** Longest part cooling time, s. */
  partCoolingTime: number;
  /** Longest cold-runner / sprue cooling time, s. */
  runnerCoolingTime: number;
  /** What sets the cooling time of the cycle. */
  cycleSetBy: string;
}

/** A warning: a stable code, the element it concerns, and plain words. */
export interface FillWarning {
  code: string;
  severity: "warning" | "caution" | "info";
  element?: string;
  message: string;
}

/** Press maker's rule of thumb for a clamp reserve (common practice, no source). */
export const CLAMP_RESERVE = 1.2;

/** The process temperatures the estimates start from, K, and the thermal switch. */
export interface ThermalSettings {
  /** Melt temperature at the feed's exit (the hot drop's tip, or the process melt), K. */
  feedTemperature: number;
  moldTemperature: number;
  isothermal: boolean;
}

/** The thermal data of the estimates, from a resin and the process temperatures. */
export function thermalDataOf(material: Material, settings: ThermalSettings): ThermalData {
  return {
    diffusivity: material.thermalDiffusivity,
    meltTemperature: settings.feedTemperature,
    moldTemperature: settings.moldTemperature,
    noFlowTemperature: material.noFlowTemperature,
    ejectionTemperature: material.ejectionTemperature,
    maxShearRate: material.maxShearRate,
    meltTemperatureRange: material.meltTemperatureRange,
    moldTemperatureRange: material.moldTemperatureRange,
    isothermal: settings.isothermal,
  };
}

/**
 * Time for the centre line of a plate (thickness `size`, m) or the axis of a cylinder
 * (diameter `size`, m) to reach `target` (K), s: {@link plateCoolingTime} or
 * {@link cylinderCentreCoolingTime} with `data`'s diffusivity, melt and mold temperatures. Both
 * are c·size² (first series term), which is what turns the size rules' time limits into bounds.
 */
export function centreCoolingTime(
  formula: FreezeEntry["formula"],
  size: number,
  data: ThermalData,
  target: number,
): number {
  const options = {
    diffusivity: data.diffusivity,
    meltTemperature: data.meltTemperature,
    moldTemperature: data.moldTemperature,
    ejectionTemperature: target,
  };
  return formula === "cylinder_centre"
    ? cylinderCentreCoolingTime(size, options)
    : plateCoolingTime(size, options);
}

/** The closed form a scenario gate freezes by: an edge gate is a plate, a pin or tunnel gate a cylinder. */
export function gateFreezeFormula(type: "edge" | "pin" | "tunnel"): FreezeEntry["formula"] {
  return type === "edge" ? "plate_centre" : "cylinder_centre";
}

/**
 * Freeze and cooling times per part, gate, runner and sprue: the first-term
 * closed forms for the centre line of a plate (walls, edge gates; Menges, Michaeli &
 * Mohren, *How to Make Injection Molds*) and of a cylinder (round channels; Carslaw &
 * Jaeger §7.6). Both are centre-line forms, so times of walls and channels compare.
 */
export function freezeTimes(network: FeedNetwork, data: ThermalData): FreezeTimes {
  const entries: FreezeEntry[] = [];
  for (const e of network.elements) {
    if (e.heated) continue;
    const round = e.kind === "runner" || e.kind === "feed" ||
      (e.kind === "gate" && e.geometry.type !== "uniform") ||
      (e.kind === "gate" && e.geometry.type === "uniform" && e.geometry.section.kind === "circle");
    const formula = round ? "cylinder_centre" : "plate_centre";
    const time = (target: number) => centreCoolingTime(formula, e.thickness, data, target);
    entries.push({
      id: e.id,
      kind: e.kind === "cavity" ? "part" : e.kind === "feed" ? "sprue" : e.kind,
      size: e.thickness,
      freezeTime: time(data.noFlowTemperature),
      coolingTime: time(data.ejectionTemperature),
      formula,
    });
  }
  const parts = entries.filter((x) => x.kind === "part");
  const cold = entries.filter((x) => x.kind === "runner" || x.kind === "sprue");
  const partCoolingTime = Math.max(0, ...parts.map((x) => x.coolingTime));
  const runnerCoolingTime = Math.max(0, ...cold.map((x) => x.coolingTime));
  const slowest = [...parts, ...cold].sort((a, b) => b.coolingTime - a.coolingTime)[0];
  return {
    entries,
    partCoolingTime,
    runnerCoolingTime,
    cycleSetBy: slowest
      ? (slowest.kind === slowest.id ? slowest.kind : `${slowest.kind} ${slowest.id}`)
      : "none",
  };
}

/** Options of {@link fillWarnings}. */
export interface FillWarningsOptions {
  thermal: ThermalData;
  freeze: FreezeTimes;
}

/** The rule-of-thumb warnings for one simulated design. */
export function fillWarnings(
  context: { scenario: Scenario; network: FeedNetwork; fill: FillResult },
  options: FillWarningsOptions,
): FillWarning[] {
  const { scenario, network, fill } = context;
  const { thermal, freeze } = options;
  const warnings: FillWarning[] = [];
  const mpa = (pa: number) => (pa / 1e6).toFixed(1);

  if (fill.diagnostics.stoppedBecause !== "all_full") {
    warnings.push({
      code: fill.diagnostics.stoppedBecause,
      severity: "warning",
      message: `The simulation did not fill every cavity: ${fill.diagnostics.message}.`,
    });
  }
  for (const e of fill.elements) {
    if (e.frozenShut) {
      warnings.push({
        code: "frozen_shut",
        severity: "warning",
        element: e.id,
        message: `${e.id} froze shut during filling (frozen layer closed the section).`,
      });
    }
  }

  // The resin's processing window (supplier data; the library's generic values otherwise).
  const degC = (k: number) => (k - 273.15).toFixed(0);
  const melt = thermal.meltTemperatureRange;
  const outside = (
    what: "Melt" | "Mold",
    value: number,
    range: readonly [number, number] | undefined,
    consequence: (low: boolean) => string,
  ) => {
    if (!range || (value >= range[0] && value <= range[1])) return;
    warnings.push({
      code: what === "Melt" ? "melt_outside_window" : "mold_outside_window",
      severity: "warning",
      message: `${what} temperature ${degC(value)} °C is outside the resin's ${degC(range[0])}–${
        degC(range[1])
      } °C window${consequence(value < range[0])}.`,
    });
  };
  outside(
    "Melt",
    thermal.meltTemperature,
    melt,
    (low) => low ? ": short shots and high pressure are likely" : ": the resin may degrade",
  );
  outside("Mold", thermal.moldTemperature, thermal.moldTemperatureRange, () => "");
  if (melt && !thermal.isothermal) {
    let hottest: (typeof fill.elements)[number] | undefined;
    // The feed system only: a cavity's thin wall takes the heat out over its fill, so the
    // adiabatic bound says little there; in a gate or runner it is close to the truth.
    for (const e of fill.elements) {
      if (e.kind === "cavity") continue;
      if (!hottest || e.temperatureAtSwitchover > hottest.temperatureAtSwitchover) hottest = e;
    }
    if (hottest && hottest.temperatureAtSwitchover > melt[1]) {
      warnings.push({
        code: "heating_past_window",
        severity: "warning",
        element: hottest.id,
        message: `Viscous heating takes the melt in ${hottest.id} to about ${
          degC(hottest.temperatureAtSwitchover)
        } °C (adiabatic upper bound), above the top of the resin's window (${
          degC(melt[1])
        } °C): risk of degradation; a larger gate or a slower fill lowers it.`,
      });
    }
  }

  const shearLimit = scenario.goals.gate_shear_limit_1_s ?? thermal.maxShearRate;
  for (const c of fill.cavities) {
    if (c.gateShearRatePeak > shearLimit) {
      warnings.push({
        code: "gate_shear_over_limit",
        severity: "warning",
        element: c.gateAtPeak,
        message: `Gate ${c.gateAtPeak} peaks at ${
          Math.round(c.gateShearRatePeak)
        } 1/s wall shear, over the ${Math.round(shearLimit)} 1/s limit of the resin.`,
      });
    }
  }

  const machinePressure = scenario.machine.max_injection_pressure_MPa * 1e6;
  const allowed = scenario.goals.max_pressure_fraction * machinePressure;
  if (fill.feedPressurePeak > machinePressure) {
    warnings.push({
      code: "pressure_over_machine",
      severity: "warning",
      message: `Peak injection pressure ${mpa(fill.feedPressurePeak)} MPa exceeds the press's ${
        mpa(machinePressure)
      } MPa: the press would not reach the set rate.`,
    });
  } else if (fill.feedPressurePeak > allowed) {
    warnings.push({
      code: "pressure_over_target",
      severity: "warning",
      message: `Peak injection pressure ${mpa(fill.feedPressurePeak)} MPa is over ${
        Math.round(scenario.goals.max_pressure_fraction * 100)
      } % of the press's ${mpa(machinePressure)} MPa (common practice: keep a 20–25 % reserve).`,
    });
  }

  const clamp = scenario.machine.clamp_force_kN * 1e3;
  if (fill.clampForcePeak * CLAMP_RESERVE > clamp) {
    warnings.push({
      code: "clamp_reserve_low",
      severity: "warning",
      message: `Peak mold-opening force ${
        (fill.clampForcePeak / 1e3).toFixed(0)
      } kN × ${CLAMP_RESERVE} exceeds the ${scenario.machine.clamp_force_kN} kN clamp (common practice: clamp ≥ 1.2 × computed force). Packing adds to this.`,
    });
  }

  if (
    Number.isFinite(fill.imbalancePercent) &&
    fill.imbalancePercent > scenario.goals.max_imbalance_percent
  ) {
    warnings.push({
      code: "imbalance_over_target",
      severity: "info",
      message: `Fill-time imbalance ${
        fill.imbalancePercent.toFixed(1)
      } % is over the ${scenario.goals.max_imbalance_percent} % target.`,
    });
  }

  // Size rules (common practice, no source): model/size_rules.ts.
  const wallOf = new Map(scenario.cavities.map((c) => [c.id, c.wall_mm]));
  for (const g of scenario.gates) {
    const wall = wallOf.get(g.cavity)!;
    const { ok, ratio, range } = gateRuleVerdict(g, wall);
    if (ok) continue;
    const what = g.type === "edge" ? "Edge" : g.type === "pin" ? "Pin" : "Tunnel";
    warnings.push({
      code: "gate_size_rule",
      severity: "caution",
      element: g.id,
      message: `${what} gate ${g.id} is ${(ratio * 100).toFixed(0)} % of the ${wall} mm wall; ` +
        `common practice is ${range[0] * 100}–${range[1] * 100} %.`,
    });
  }
  const thickestDownstream = new Map<string, number>();
  for (const path of fill.paths) {
    const wall = wallOf.get(path.cavity)!;
    for (const id of path.elements) {
      thickestDownstream.set(id, Math.max(thickestDownstream.get(id) ?? 0, wall));
    }
  }
  for (const r of scenario.runners) {
    const wall = thickestDownstream.get(r.id);
    if (wall !== undefined && r.diameter_mm < runnerFloorMm(wall)) {
      warnings.push({
        code: "runner_below_wall_rule",
        severity: "caution",
        element: r.id,
        message: `Runner ${r.id} (${r.diameter_mm} mm) is under wall + ${RUNNER_OVER_WALL_MM} mm (${
          runnerFloorMm(wall).toFixed(1)
        } mm) for the ${wall} mm part it feeds: it may freeze before the part is packed (common practice).`,
      });
    }
  }

  // Sprue exit over each runner leaving it (common practice, no source): model/size_rules.ts.
  if (scenario.feed.kind === "sprue") {
    const exit = scenario.feed.exit_diameter_mm;
    for (const k of runnerTree(scenario).children.get(scenario.feed.node) ?? []) {
      const r = scenario.runners[k];
      const { ok, stepMm } = sprueExitVerdict(exit, r.diameter_mm);
      if (ok) continue;
      warnings.push({
        code: "sprue_exit_below_margin",
        severity: "caution",
        element: r.id,
        message: `Runner ${r.id} (${r.diameter_mm} mm) leaves the ${exit} mm sprue exit ${
          stepMm > 0
            ? `only ${stepMm.toFixed(2)} mm smaller`
            : stepMm < 0
            ? "larger"
            : "at its size"
        }; common practice is a sprue exit at least ${SPRUE_EXIT_MARGIN_MM} mm larger than the runner it feeds (sprue_exit rule), so the sprue freezes last and pulls cleanly.`,
      });
    }
  }

  // Freeze order (common practice): gate before the part, runner after the part.
  const byId = new Map(freeze.entries.map((x) => [x.id, x]));
  for (const c of network.cavities) {
    const part = byId.get(c.id);
    if (!part) continue;
    for (const g of c.gates) {
      const gate = byId.get(network.elements[g].id);
      if (gate && gate.freezeTime >= part.freezeTime) {
        warnings.push({
          code: "gate_freezes_after_part",
          severity: "caution",
          element: gate.id,
          message: `Gate ${gate.id} freezes after part ${c.id} (${
            gate.freezeTime.toFixed(1)
          } s vs ${part.freezeTime.toFixed(1)} s): packing cannot be ended by gate freeze.`,
        });
      }
    }
  }
  for (const path of fill.paths) {
    const part = byId.get(path.cavity);
    if (!part) continue;
    for (const id of path.elements) {
      const entry = byId.get(id);
      if (entry && entry.kind === "runner" && entry.freezeTime < part.freezeTime) {
        warnings.push({
          code: "runner_freezes_before_part",
          severity: "caution",
          element: id,
          message: `Runner ${id} freezes (${
            entry.freezeTime.toFixed(1)
          } s) before part ${path.cavity} (${
            part.freezeTime.toFixed(1)
          } s): the part cannot be packed through it to the end.`,
        });
      }
    }
  }
  const hold = scenario.process.hold_time_s;
  if (hold !== undefined) {
    for (const entry of freeze.entries) {
      if (entry.kind !== "gate" || gateHoldVerdict(entry.freezeTime, hold).ok) continue;
      warnings.push({
        code: "gate_freezes_before_hold",
        severity: "caution",
        element: entry.id,
        message: `Gate ${entry.id} freezes ${
          entry.freezeTime.toFixed(2)
        } s into cooling, before the ${hold} s hold time ends: the holding pressure stops packing its part early (gate_hold rule).`,
      });
    }
  }
  // Runner cooling against the thickest part (ratio: goals.max_runner_cooling_ratio), or the
  // sprue's when that is longer: model/size_rules.ts.
  const ratio = scenario.goals.max_runner_cooling_ratio;
  const sprue = freeze.entries.find((x) => x.kind === "sprue");
  if (freeze.partCoolingTime > 0) {
    for (const entry of freeze.entries) {
      if (entry.kind !== "runner" && entry.kind !== "sprue") continue;
      const sprueCoolingTime = entry.kind === "runner" ? sprue?.coolingTime : undefined;
      const verdict = runnerCoolingVerdict(entry.coolingTime, freeze.partCoolingTime, {
        ratio,
        sprueCoolingTime,
      });
      if (verdict.ok) continue;
      const what = entry.kind === "sprue" ? "The sprue" : `Runner ${entry.id}`;
      const sprueLonger = sprueCoolingTime !== undefined &&
        sprueCoolingTime > ratio * freeze.partCoolingTime;
      warnings.push({
        code: "runner_cooling_over_ratio",
        severity: "caution",
        element: entry.id,
        message: `${what} needs ${entry.coolingTime.toFixed(1)} s to cool, ${
          verdict.share.toFixed(1)
        } × the thickest part's ${freeze.partCoolingTime.toFixed(1)} s, over ${
          sprueLonger
            ? `the sprue's ${sprueCoolingTime.toFixed(1)} s`
            : `the ${ratio} × of goals.max_runner_cooling_ratio`
        } (runner_cooling rule): it lengthens the cycle.`,
      });
    }
  }
  if (freeze.runnerCoolingTime > freeze.partCoolingTime) {
    const over = freeze.runnerCoolingTime > ratio * freeze.partCoolingTime * (1 + 1e-12);
    warnings.push({
      code: "runner_sets_cycle",
      severity: over ? "caution" : "info",
      message: `The cold runner needs ${
        freeze.runnerCoolingTime.toFixed(1)
      } s to cool, longer than the thickest part (${freeze.partCoolingTime.toFixed(1)} s)${
        over ? `, more than the ${ratio} × of goals.max_runner_cooling_ratio` : ""
      }: ${freeze.cycleSetBy} sets the cooling time.`,
    });
  }
  const unique = new Map<string, FillWarning>();
  for (const w of warnings) unique.set(`${w.code}:${w.element ?? ""}`, w);
  return [...unique.values()];
}

/** The cautions every report carries. */
export const CAUTIONS: readonly string[] = [
  "A one-dimensional network model: it does not see venting, cooling-line faults, mold deflection, cold-slug blockage or shear-induced melt variation at branches.",
  "Steel removal cannot be undone: cut one step, re-measure with weighed short shots, then decide.",
  "Pressures and clamp forces are estimates: confirm on the press, within the press maker's limits, local safety codes and licensed practice.",
  "Resin data from the built-in library are generic and representative: use your grade's data (supplier, or measured to ISO 11443) before cutting steel.",
];
