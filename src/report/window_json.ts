import { paToMpa } from "../model/units.ts";
import type { ProcessWindowReport } from "../window/process_window.ts";
import {
  WINDOW_FORMAT,
  type WindowJobResult,
  type WindowJson,
  type WindowRangeJson,
} from "../wire/window.ts";

const finite = (x: number) => (Number.isFinite(x) ? x : null);

/** The process-window report on the wire (`window --json`): snake_case, units in the names. */
export function windowJson(report: ProcessWindowReport): WindowJson {
  return {
    points: report.points.map((p) => ({
      levels: p.levels,
      imbalance_percent: finite(p.imbalancePercent),
      gate_shear_peak_1_s: finite(p.gateShearPeak),
      feed_pressure_peak_MPa: finite(paToMpa(p.feedPressurePeak)),
      filled: p.filled,
    })),
    imbalance_range_percent: [finite(report.imbalanceRange[0]), finite(report.imbalanceRange[1])],
    gate_shear_range_1_s: [finite(report.gateShearRange[0]), finite(report.gateShearRange[1])],
    effects: report.effects.map((e) => ({
      factor: e.factor,
      imbalance_points: finite(e.imbalancePoints),
    })),
    failures: report.failures,
  };
}

/** A window job's result (`evenfill.window/1`): each design's sweep and the range it used. */
export function windowJobJson(
  designs: readonly { design: "today" | "after"; name: string; report: ProcessWindowReport }[],
  range: WindowRangeJson,
): WindowJobResult {
  return {
    format: WINDOW_FORMAT,
    range,
    designs: designs.map((d) => ({ design: d.design, name: d.name, ...windowJson(d.report) })),
    stopped_because: designs.find((d) => d.report.stoppedBecause)?.report.stoppedBecause ?? null,
  };
}
