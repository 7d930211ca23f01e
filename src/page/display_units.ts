import {
  cToF,
  M3_PER_CM3,
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
 * Round for display to `digits` significant figures, once, with thousands separators
 * ("21,339"); never an exponent. A missing value prints as an en dash.
 */
export function formatNumber(value: number | null | undefined, digits = 3): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return "–";
  if (value === 0) return "0";
  const magnitude = Math.floor(Math.log10(Math.abs(value)));
  const decimals = Math.max(0, digits - 1 - magnitude);
  if (magnitude < -4) return value.toPrecision(digits);
  if (decimals === 0) return groupThousands(Math.round(value).toFixed(0));
  return groupThousands(value.toFixed(Math.min(decimals, 8)));
}

/** "1234567.5" → "1,234,567.5": commas between groups of three integer digits. */
export function groupThousands(text: string): string {
  const m = /^(-?)(\d+)(\.\d*)?$/.exec(text);
  if (!m) return text;
  return m[1] + m[2].replace(/\B(?=(\d{3})+(?!\d))/g, ",") + (m[3] ?? "");
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
  const text = units.pressure === "psi"
    ? groupThousands(Math.round(v).toFixed(0))
    : formatNumber(v, 3);
  return `${text} ${unitSymbol(units, "pressure")}`;
}

/** A force with its unit, three significant figures. */
export function formatForce(kn: number | null | undefined, units: DisplayUnits): string {
  if (kn === null || kn === undefined || !Number.isFinite(kn)) return "–";
  return `${formatNumber(forceFromKn(kn, units.force), 3)} ${unitSymbol(units, "force")}`;
}

/**
 * Avoirdupois ounce and pound, grams (exact: 1 lb = 0.45359237 kg, 1 oz = lb/16; NIST SP 811,
 * appendix B.8). The page's only masses outside model/units.ts: shown, never computed with.
 */
export const G_PER_OUNCE = 28.349523125;
/** Avoirdupois pound, grams (exact; NIST SP 811, appendix B.8). */
export const G_PER_POUND = 453.59237;
/** Cubic inch, cm³ (exact from 1 in = 25.4 mm). */
export const CM3_PER_CUBIC_INCH = Math.pow(M_PER_INCH, 3) / M3_PER_CM3;

/** US units follow the length choice: inch → in³, oz or lb, in³/s. */
const usUnits = (units: DisplayUnits) => units.length === "in";

/** A volume (given in cm³) with its unit: cm³, or in³ with US units; three figures. */
export function formatVolume(cm3: number | null | undefined, units: DisplayUnits, digits = 3) {
  if (cm3 === null || cm3 === undefined || !Number.isFinite(cm3)) return "–";
  return usUnits(units)
    ? `${formatNumber(cm3 / CM3_PER_CUBIC_INCH, digits)} in³`
    : `${formatNumber(cm3, digits)} cm³`;
}

/** A mass (given in g) with its unit: g, or oz (lb from 1 lb up) with US units; three figures. */
export function formatMass(g: number | null | undefined, units: DisplayUnits, digits = 3) {
  if (g === null || g === undefined || !Number.isFinite(g)) return "–";
  if (!usUnits(units)) return `${formatNumber(g, digits)} g`;
  return g >= G_PER_POUND
    ? `${formatNumber(g / G_PER_POUND, digits)} lb`
    : `${formatNumber(g / G_PER_OUNCE, digits)} oz`;
}

/** A flow rate (given in cm³/s) with its unit: cm³/s, or in³/s with US units. */
export function formatFlowRate(cm3PerS: number | null | undefined, units: DisplayUnits) {
  if (cm3PerS === null || cm3PerS === undefined || !Number.isFinite(cm3PerS)) return "–";
  return usUnits(units)
    ? `${formatNumber(cm3PerS / CM3_PER_CUBIC_INCH, 3)} in³/s`
    : `${formatNumber(cm3PerS, 3)} cm³/s`;
}

/** A length (given in mm) with its unit symbol, rounded once (mm to 0.01, inch to 0.0001). */
export function formatLengthWithUnit(mm: number | null | undefined, units: DisplayUnits): string {
  const text = formatLength(mm, units.length);
  return text === "–" ? text : `${text} ${unitSymbol(units, "length")}`;
}

/** A temperature (given in °C) with its unit, to a tenth of a degree at most. */
export function formatTemperature(c: number | null | undefined, units: DisplayUnits): string {
  if (c === null || c === undefined || !Number.isFinite(c)) return "–";
  const v = temperatureFromC(c, units.temperature);
  return `${trimZeros(v.toFixed(1))} ${unitSymbol(units, "temperature")}`;
}

/** A temperature difference (given in K) with its unit (°C or °F steps). */
export function formatTemperatureRise(k: number | null | undefined, units: DisplayUnits): string {
  if (k === null || k === undefined || !Number.isFinite(k)) return "–";
  const v = units.temperature === "C" ? k : k * 1.8;
  return `${trimZeros(v.toFixed(1))} ${units.temperature === "C" ? "K" : "°F"}`;
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
