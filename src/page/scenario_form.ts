import { type DisplayUnits, temperatureFromC, temperatureToC } from "./display_units.ts";

/**
 * The small form for the settings people change most, read from and written
 * back into the scenario JSON (metric; the form shows temperatures in the
 * chosen unit). Everything else is edited in the JSON text.
 *
 * @module
 */

/** Values the form shows, in display units. */
export interface FormValues {
  /** Library id, or "" when the scenario carries an inline material. */
  material: string;
  inlineMaterialName: string | null;
  meltTemperature: number | null;
  moldTemperature: number | null;
  injectionKind: "flow_rate_cm3_s" | "fill_time_s";
  injectionValue: number | null;
  mode: string;
  maxImbalancePercent: number | null;
  /** "metric" | "inch" | "continuous" | "list" (a shop list, kept as is). */
  cutters: string;
}

type Json = Record<string, unknown>;
const obj = (
  v: unknown,
): Json => (typeof v === "object" && v !== null && !Array.isArray(v) ? v as Json : {});
const numOrNull = (v: unknown) => (typeof v === "number" && Number.isFinite(v) ? v : null);
const round = (v: number, digits = 6) => Number(v.toPrecision(digits));

/** Read the form's values from a scenario object. */
export function readForm(scenario: unknown, units: DisplayUnits): FormValues {
  const s = obj(scenario);
  const process = obj(s.process);
  const injection = obj(process.injection);
  const goals = obj(s.goals);
  const melt = numOrNull(process.melt_temperature_C);
  const mold = numOrNull(process.mold_temperature_C);
  const material = s.material;
  const kind = "fill_time_s" in injection ? "fill_time_s" : "flow_rate_cm3_s";
  return {
    material: typeof material === "string" ? material : "",
    inlineMaterialName: typeof material === "object" && material !== null
      ? String(obj(material).name ?? obj(material).id ?? "inline material")
      : null,
    meltTemperature: melt === null ? null : round(temperatureFromC(melt, units.temperature), 5),
    moldTemperature: mold === null ? null : round(temperatureFromC(mold, units.temperature), 5),
    injectionKind: kind,
    injectionValue: numOrNull(injection[kind]),
    mode: typeof goals.mode === "string" ? goals.mode : "new_tool",
    maxImbalancePercent: numOrNull(goals.max_imbalance_percent),
    cutters: Array.isArray(goals.cutters)
      ? "list"
      : typeof goals.cutters === "string"
      ? goals.cutters
      : "metric",
  };
}

/** A copy of `scenario` with one form field applied (metric in the result). */
export function applyFormField(
  scenario: unknown,
  field: keyof FormValues,
  value: string,
  units: DisplayUnits,
): unknown {
  const s: Json = structuredClone(obj(scenario));
  const process: Json = obj(s.process);
  const goals: Json = obj(s.goals);
  const number = Number(value);
  const isNumber = value.trim() !== "" && Number.isFinite(number);
  switch (field) {
    case "material":
      if (value) s.material = value;
      break;
    case "meltTemperature":
      if (isNumber) process.melt_temperature_C = round(temperatureToC(number, units.temperature));
      s.process = process;
      break;
    case "moldTemperature":
      if (isNumber) process.mold_temperature_C = round(temperatureToC(number, units.temperature));
      s.process = process;
      break;
    case "injectionKind": {
      // Same kind: the value stays. Another kind: its default, never the old number in the
      // new unit (30 cm³/s is not a 30 s fill).
      const injection = obj(process.injection);
      if (value === "fill_time_s" || value === "flow_rate_cm3_s") {
        process.injection = {
          [value]: numOrNull(injection[value]) ?? (value === "fill_time_s" ? 1 : 30),
        };
      }
      s.process = process;
      break;
    }
    case "injectionValue": {
      const injection = obj(process.injection);
      const kind = "fill_time_s" in injection ? "fill_time_s" : "flow_rate_cm3_s";
      if (isNumber) process.injection = { [kind]: number };
      s.process = process;
      break;
    }
    case "mode":
      goals.mode = value;
      s.goals = goals;
      break;
    case "maxImbalancePercent":
      if (isNumber) goals.max_imbalance_percent = number;
      s.goals = goals;
      break;
    case "cutters":
      if (value !== "list") goals.cutters = value;
      s.goals = goals;
      break;
    default:
      break;
  }
  return s;
}
