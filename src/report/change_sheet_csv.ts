import { m3ToCm3, mToInch, mToMm, paToMpa } from "../model/units.ts";
import type { Change } from "../optimize/change_list.ts";

/** Column names of {@link changeSheetCsv}, in order (units in the names). */
export const CHANGE_SHEET_COLUMNS = [
  "step",
  "element",
  "kind",
  "section",
  "dimension",
  "from_mm",
  "to_mm",
  "from_in",
  "to_in",
  "cutter",
  "steel_safe",
  "mold_half",
  "imbalance_after_percent",
  "feed_pressure_peak_after_MPa",
  "runner_volume_after_cm3",
  "limits_met_after",
] as const;

/** A field quoted as RFC 4180 asks when it holds a comma, quote or line break. */
function field(value: string | number | boolean): string {
  const text = String(value);
  return /[",\r\n]/.test(text) ? `"${text.replaceAll('"', '""')}"` : text;
}

/**
 * The change sheet as CSV (RFC 4180, comma-separated, header row), one row per
 * change in the order of work, sizes in mm and inch, the predicted state after
 * each step. For a spreadsheet or the toolroom's own job sheet.
 */
export function changeSheetCsv(changes: readonly Change[]): string {
  const rows = changes.map((c) =>
    [
      c.step,
      c.element,
      c.kind,
      c.section,
      c.dimension,
      mToMm(c.from).toFixed(3),
      mToMm(c.to).toFixed(3),
      mToInch(c.from).toFixed(4),
      mToInch(c.to).toFixed(4),
      c.cutter,
      c.steelSafe ? "yes" : "no (steel added: weld or insert)",
      c.moldHalf,
      c.after.imbalancePercent.toFixed(2),
      paToMpa(c.after.feedPressurePeak).toFixed(1),
      m3ToCm3(c.after.runnerVolume).toFixed(3),
      c.after.feasible ? "yes" : "no",
    ].map(field).join(",")
  );
  return [CHANGE_SHEET_COLUMNS.join(","), ...rows].join("\r\n") + "\r\n";
}
