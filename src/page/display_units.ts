import {
  cToF,
  M_PER_INCH,
  M_PER_MM,
  N_PER_KN,
  N_PER_TONNE_FORCE,
  N_PER_US_TON_FORCE,
  PA_PER_BAR,
  PA_PER_MPA,
  PA_PER_PSI,
} from "../model/units.ts";

/**
 * Display units of the page. Files and the API stay metric (mm, MPa, kN, °C);
 * the page converts at the last moment, with the factors of `model/units.ts`.
 *
 * @module
 */

/** Length unit shown on the page. */
export type LengthUnit = "mm" | "in";
/** Pressure unit shown on the page. */
export type PressureUnit = "MPa" | "bar" | "psi";
/** Force unit shown on the page. */
export type ForceUnit = "kN" | "tf" | "tonUS";
/** Temperature unit shown on the page. */
export type TemperatureUnit = "C" | "F";

/** The four unit choices of the page. */
export interface DisplayUnits {
  length: LengthUnit;
  pressure: PressureUnit;
  force: ForceUnit;
  temperature: TemperatureUnit;
}

/** Metric, as in files and the API. */
export const METRIC_UNITS: DisplayUnits = {
  length: "mm",
  pressure: "MPa",
  force: "kN",
  temperature: "C",
};

/** Choices offered by the unit switch, with the label shown. */
export const UNIT_CHOICES = {
  length: [["mm", "mm"], ["in", "inch"]],
  pressure: [["MPa", "MPa"], ["bar", "bar"], ["psi", "psi"]],
  force: [["kN", "kN"], ["tf", "tonne-force"], ["tonUS", "US ton"]],
  temperature: [["C", "°C"], ["F", "°F"]],
} as const;

/** Symbol printed after a value. */
export function unitSymbol(units: DisplayUnits, quantity: keyof DisplayUnits): string {
  switch (quantity) {
    case "length":
      return units.length === "mm" ? "mm" : "in";
    case "pressure":
      return units.pressure;
    case "force":
      return units.force === "kN" ? "kN" : units.force === "tf" ? "tf" : "US tonf";
    case "temperature":
      return units.temperature === "C" ? "°C" : "°F";
  }
}

/** Millimetres → the chosen length unit. */
export function lengthFromMm(mm: number, unit: LengthUnit): number {
  return unit === "mm" ? mm : (mm * M_PER_MM) / M_PER_INCH;
}

/** The chosen length unit → millimetres. */
export function lengthToMm(value: number, unit: LengthUnit): number {
  return unit === "mm" ? value : (value * M_PER_INCH) / M_PER_MM;
}

/** Megapascals → the chosen pressure unit. */
export function pressureFromMpa(mpa: number, unit: PressureUnit): number {
  const pa = mpa * PA_PER_MPA;
  return unit === "MPa" ? mpa : unit === "bar" ? pa / PA_PER_BAR : pa / PA_PER_PSI;
}

/** Kilonewtons → the chosen force unit. */
export function forceFromKn(kn: number, unit: ForceUnit): number {
  const n = kn * N_PER_KN;
  return unit === "kN" ? kn : unit === "tf" ? n / N_PER_TONNE_FORCE : n / N_PER_US_TON_FORCE;
}

/** Degrees Celsius → the chosen temperature unit. */
export function temperatureFromC(c: number, unit: TemperatureUnit): number {
  return unit === "C" ? c : cToF(c);
}

/** The chosen temperature unit → degrees Celsius. */
export function temperatureToC(value: number, unit: TemperatureUnit): number {
  return unit === "C" ? value : (value - 32) / 1.8;
}

/**
 * Round for display to `digits` significant figures, without exponent for
 * everyday magnitudes; a missing value prints as an en dash.
 */
export function formatNumber(value: number | null | undefined, digits = 3): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return "–";
  if (value === 0) return "0";
  const magnitude = Math.floor(Math.log10(Math.abs(value)));
  const decimals = Math.max(0, digits - 1 - magnitude);
  if (magnitude >= 6 || magnitude < -4) return value.toPrecision(digits);
  return value.toFixed(Math.min(decimals, 8));
}

/** Decimals used for a length: mm to 0.01, inch to 0.0001 (a toolroom's habit). */
export function formatLength(mm: number | null | undefined, unit: LengthUnit): string {
  if (mm === null || mm === undefined || !Number.isFinite(mm)) return "–";
  const v = lengthFromMm(mm, unit);
  return unit === "mm" ? trimZeros(v.toFixed(2)) : v.toFixed(4);
}

/** A pressure with its unit, three significant figures (psi to whole numbers). */
export function formatPressure(mpa: number | null | undefined, units: DisplayUnits): string {
  if (mpa === null || mpa === undefined || !Number.isFinite(mpa)) return "–";
  const v = pressureFromMpa(mpa, units.pressure);
  const text = units.pressure === "psi" ? Math.round(v).toString() : formatNumber(v, 3);
  return `${text} ${unitSymbol(units, "pressure")}`;
}

/** A force with its unit, three significant figures. */
export function formatForce(kn: number | null | undefined, units: DisplayUnits): string {
  if (kn === null || kn === undefined || !Number.isFinite(kn)) return "–";
  return `${formatNumber(forceFromKn(kn, units.force), 3)} ${unitSymbol(units, "force")}`;
}

function trimZeros(text: string): string {
  return text.includes(".") ? text.replace(/\.?0+$/, "") : text;
}

/** Parse saved unit choices, falling back to metric for anything unknown. */
export function parseDisplayUnits(value: unknown): DisplayUnits {
  const out = { ...METRIC_UNITS };
  if (typeof value !== "object" || value === null) return out;
  const v = value as Record<string, unknown>;
  for (const key of Object.keys(UNIT_CHOICES) as (keyof DisplayUnits)[]) {
    const allowed = UNIT_CHOICES[key].map((c) => c[0] as string);
    if (typeof v[key] === "string" && allowed.includes(v[key] as string)) {
      (out as Record<string, string>)[key] = v[key] as string;
    }
  }
  return out;
}
