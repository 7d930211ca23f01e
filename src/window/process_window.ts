import { applyFactors } from "../calibrate/factors.ts";
import type { ScenarioWire } from "../model/scenario_schema.ts";
import { simulateScenario } from "../network/simulate_scenario.ts";

/** The sweep's default half-ranges (see {@link ProcessWindowRange}). Common practice, no source. */
export const DEFAULT_WINDOW_RANGE: Required<ProcessWindowRange> = {
  meltTemperatureK: 10,
  moldTemperatureK: 10,
  injectionRateShare: 0.2,
  viscosityShare: 0.15,
};

/** How far the sweep goes from the scenario's settings. */
export interface ProcessWindowRange {
  /** Melt temperature ± this, K (°C difference). Default 10. */
  meltTemperatureK?: number;
  /** Mold temperature ± this, K. Default 10. */
  moldTemperatureK?: number;
  /** Injection rate ± this share (0.2 = ±20 %). Default 0.2. */
  injectionRateShare?: number;
  /** Resin-lot viscosity ± this share. Default 0.15. */
  viscosityShare?: number;
}

/** One point of the sweep: the coded levels (−1, 0, +1) and what the simulation gave. */
export interface WindowPoint {
  levels: { melt: number; mold: number; rate: number; viscosity: number };
  imbalancePercent: number;
  /** Highest peak gate wall shear over the cavities, 1/s. */
  gateShearPeak: number;
  feedPressurePeak: number;
  filled: boolean;
}

/** The factor names of the sweep, in the order of {@link WindowPoint.levels}. */
export const WINDOW_FACTORS = ["melt", "mold", "rate", "viscosity"] as const;

/** What the sweep found. */
export interface ProcessWindowReport {
  points: WindowPoint[];
  imbalanceRange: [number, number];
  gateShearRange: [number, number];
  /**
   * Main effect of each factor on the imbalance (percentage points): the mean over the
   * high-level corners less the mean over the low-level ones (a two-level full factorial,
   * Box, Hunter & Hunter, *Statistics for Experimenters*, 2nd ed., 2005, ch. 5), largest first.
   */
  effects: { factor: (typeof WINDOW_FACTORS)[number]; imbalancePoints: number }[];
  failures: { levels: WindowPoint["levels"]; message: string }[];
  /** Set when the sweep was stopped before its last point (the report covers the points run). */
  stoppedBecause?: "cancelled" | "deadline";
}

/** Options of {@link processWindow}. */
export interface ProcessWindowOptions {
  /** Aborting it stops the sweep before its next simulation. */
  signal?: AbortSignal;
  /** Epoch ms after which the sweep stops before its next simulation. */
  deadline?: number;
  /** Called after every simulation with the points done and the points in all (17). */
  onProgress?: (done: number, total: number) => void;
}

/**
 * Check a design across the process window: every corner of melt temperature, mold
 * temperature, injection rate and resin-lot viscosity at ± their ranges (a 2⁴ full factorial)
 * plus the centre, 17 simulations; the imbalance and peak gate shear range, and which factor
 * moves the balance most.
 */
export function processWindow(
  wire: ScenarioWire,
  range: ProcessWindowRange = {},
  options: ProcessWindowOptions = {},
): ProcessWindowReport {
  const dMelt = range.meltTemperatureK ?? DEFAULT_WINDOW_RANGE.meltTemperatureK;
  const dMold = range.moldTemperatureK ?? DEFAULT_WINDOW_RANGE.moldTemperatureK;
  const dRate = range.injectionRateShare ?? DEFAULT_WINDOW_RANGE.injectionRateShare;
  const dVisc = range.viscosityShare ?? DEFAULT_WINDOW_RANGE.viscosityShare;
  const levels: WindowPoint["levels"][] = [{ melt: 0, mold: 0, rate: 0, viscosity: 0 }];
  for (let k = 0; k < 16; k++) {
    const bit = (b: number) => ((k >> b) & 1 ? 1 : -1);
    levels.push({ melt: bit(0), mold: bit(1), rate: bit(2), viscosity: bit(3) });
  }
  const points: WindowPoint[] = [];
  const failures: ProcessWindowReport["failures"] = [];
  let stoppedBecause: ProcessWindowReport["stoppedBecause"];
  for (const l of levels) {
    if (options.signal?.aborted) stoppedBecause = "cancelled";
    else if (options.deadline !== undefined && Date.now() > options.deadline) {
      stoppedBecause = "deadline";
    }
    if (stoppedBecause) break;
    const w = applyFactors(wire, [{ kind: "viscosity" }], [1 + l.viscosity * dVisc]);
    w.process.melt_temperature_C += l.melt * dMelt;
    if (w.feed.kind === "hot_drop" && w.feed.tip_temperature_C !== undefined) {
      w.feed.tip_temperature_C += l.melt * dMelt;
    }
    w.process.mold_temperature_C += l.mold * dMold;
    const scale = 1 + l.rate * dRate;
    w.process.injection = "flow_rate_cm3_s" in w.process.injection
      ? { flow_rate_cm3_s: w.process.injection.flow_rate_cm3_s * scale }
      : { fill_time_s: w.process.injection.fill_time_s / scale };
    const outcome = simulateScenario(w);
    options.onProgress?.(points.length + failures.length + 1, levels.length);
    if (!outcome.ok) {
      failures.push({
        levels: l,
        message: outcome.code === "invalid_scenario"
          ? outcome.issues.map((i) => `${i.at}: ${i.message}`).join("; ")
          : outcome.message,
      });
      continue;
    }
    const fill = outcome.run.fill;
    points.push({
      levels: l,
      imbalancePercent: fill.imbalancePercent,
      gateShearPeak: Math.max(...fill.cavities.map((c) => c.gateShearRatePeak)),
      feedPressurePeak: fill.feedPressurePeak,
      filled: fill.diagnostics.stoppedBecause === "all_full",
    });
  }
  const finite = points.filter((p) => Number.isFinite(p.imbalancePercent));
  const span = (values: number[]): [number, number] =>
    values.length > 0 ? [Math.min(...values), Math.max(...values)] : [NaN, NaN];
  const corners = finite.filter((p) => p.levels.melt !== 0);
  const effects = WINDOW_FACTORS.map((factor) => {
    const mean = (level: number) => {
      const at = corners.filter((p) => p.levels[factor] === level);
      return at.reduce((s, p) => s + p.imbalancePercent, 0) / at.length;
    };
    return { factor, imbalancePoints: mean(1) - mean(-1) };
  }).sort((a, b) => Math.abs(b.imbalancePoints) - Math.abs(a.imbalancePoints));
  return {
    points,
    imbalanceRange: span(finite.map((p) => p.imbalancePercent)),
    gateShearRange: span(points.map((p) => p.gateShearPeak)),
    effects,
    failures,
    ...(stoppedBecause ? { stoppedBecause } : {}),
  };
}
