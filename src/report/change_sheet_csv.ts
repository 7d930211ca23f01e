import { m3ToCm3, mToInch, mToMm, paToMpa } from "../model/units.ts";
import type { Change, StepState } from "../optimize/change_list.ts";

/**
 * Column names of {@link changeSheetCsv}, in order (units in the names); each cavity's
 * `<cavity>_fill_percent` and `<cavity>_short_shot_g` follow them.
 */
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
  "action",
  "steel_safe",
  "mold_half",
  "cut_together",
  "imbalance_after_percent",
  "feed_pressure_peak_after_MPa",
  "runner_volume_after_cm3",
  "limits_met_after",
  "above_start",
  "above_start_reason",
  "first_full_s",
] as const;

/** Options of {@link changeSheetCsv}. */
export interface ChangeSheetCsvOptions {
  /** Today's tool, written as step 0 (an existing tool's plan: `ChangePlan.start`). */
  start?: StepState;
}

/** A field quoted as RFC 4180 asks when it holds a comma, quote or line break. */
function field(value: string | number | boolean): string {
  const text = String(value);
  return /[",\r\n]/.test(text) ? `"${text.replaceAll('"', '""')}"` : text;
}

const STEEL_SAFE_TEXT: Record<Change["action"], string> = {
  cut_to: "n/a (new tool)",
  enlarge: "yes",
  add_steel: "no (steel added: weld or insert)",
};

/** The state columns, rounded as the optimization JSON rounds them (`stepStateJson`). */
function stateFields(s: StepState, cavityCount: number): (string | number)[] {
  const simulated = Number.isFinite(s.firstFullTime);
  return [
    s.imbalancePercent.toFixed(3),
    paToMpa(s.feedPressurePeak).toFixed(2),
    m3ToCm3(s.runnerVolume).toFixed(4),
    s.feasible ? "yes" : "no",
  ].concat(["", "", simulated ? s.firstFullTime.toFixed(4) : ""]).concat(
    Array.from({ length: cavityCount }, (_, i) => {
      const c = s.shortShot[i];
      return c ? [(100 * c.fill).toFixed(2), (1000 * c.mass).toFixed(3)] : ["", ""];
    }).flat(),
  );
}

/**
 * The change sheet as CSV (RFC 4180, comma-separated, header row): step 0 (today's
 * tool) when given, then one row per change in the order of work (changes cut together
 * share their step number), sizes in mm and inch, the predicted state after each step
 * and each cavity's fill and short-shot mass when the first cavity is full. For a
 * spreadsheet or the toolroom's own job sheet.
 */
export function changeSheetCsv(
  changes: readonly Change[],
  options: ChangeSheetCsvOptions = {},
): string {
  const cavities = (options.start ?? changes[0]?.after)?.shortShot.map((c) => c.cavity) ?? [];
  const header = [
    ...CHANGE_SHEET_COLUMNS,
    ...cavities.flatMap((id) => [`${id}_fill_percent`, `${id}_short_shot_g`]),
  ];
  const startRow = options.start
    ? [[0, "today's tool", "", "", "", "", "", "", "", "", "", "", "", ""].concat(
      stateFields(options.start, cavities.length),
    )]
    : [];
  const rows = changes.map((c) => {
    const state = stateFields(c.after, cavities.length);
    state[4] = c.aboveStart ? "yes" : "no";
    state[5] = c.aboveStartReason ?? "";
    return [
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
      c.action,
      STEEL_SAFE_TEXT[c.action],
      c.moldHalf,
      c.together ? "yes" : "no",
      ...state,
    ];
  });
  return [header, ...startRow, ...rows].map((r) => r.map(field).join(",")).join("\r\n") +
    "\r\n";
}
