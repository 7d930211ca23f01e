import type { ScenarioRun } from "../network/simulate_scenario.ts";
import { m3ToCm3, nToKn, paToMpa } from "../model/units.ts";

/** The fill history as CSV: time, injected volume, feed pressure, clamp force, fill % per cavity. */
export function fillHistoryCsv(run: ScenarioRun): string {
  const header = [
    "time_s",
    "injected_cm3",
    "feed_pressure_MPa",
    "clamp_force_kN",
    ...run.fill.cavities.map((c) => `fill_percent_${c.id}`),
  ];
  const rows = run.fill.history.map((h) =>
    [
      h.time.toPrecision(8),
      m3ToCm3(h.injectedVolume).toPrecision(8),
      paToMpa(h.feedPressure).toPrecision(6),
      nToKn(h.clampForce).toPrecision(6),
      ...h.cavityFill.map((f) => (f * 100).toPrecision(6)),
    ].join(",")
  );
  return [header.join(","), ...rows].join("\n") + "\n";
}
