/**
 * Measured viscosity points from CSV text (capillary-rheometer data, e.g. measured to ISO 11443):
 * a header line naming the columns `temperature_C`, `shear_rate_1_s`, `viscosity_Pa_s` and
 * optionally `pressure_MPa`, in any order, then one point per line. `#` starts a comment (a whole
 * line or the rest of one); blank lines are skipped. Problems come back as a list with 1-based
 * line numbers, never as a throw.
 *
 * @module
 */
import { cToK, KELVIN_AT_0_C, mpaToPa } from "../model/units.ts";
import type { ViscosityPoint } from "./fit_cross_wlf.ts";

/** A point as read, with the line it came from. SI, like {@link ViscosityPoint}. */
export interface ViscosityCsvPoint extends ViscosityPoint {
  /** 1-based line number in the CSV text. */
  line: number;
}

/** One problem of a CSV file: where (1-based line; 0 for the whole file) and what. */
export interface ViscosityCsvIssue {
  line: number;
  message: string;
}

/** Outcome of {@link parseViscosityCsv}. */
export type ViscosityCsvResult =
  | {
    ok: true;
    points: ViscosityCsvPoint[];
    /** True when the header has a `pressure_MPa` column. */
    hasPressure: boolean;
  }
  | { ok: false; issues: ViscosityCsvIssue[] };

const REQUIRED = ["temperature_C", "shear_rate_1_s", "viscosity_Pa_s"] as const;
const OPTIONAL = ["pressure_MPa"] as const;
type Column = (typeof REQUIRED)[number] | (typeof OPTIONAL)[number];
const COLUMNS: readonly string[] = [...REQUIRED, ...OPTIONAL];

/** Check one value against its column's range; a message, or undefined when it is fine. */
function outOfRange(column: Column, value: number): string | undefined {
  switch (column) {
    case "temperature_C":
      return value > -KELVIN_AT_0_C ? undefined : "must be above −273.15 °C";
    case "shear_rate_1_s":
      return value > 0 ? undefined : "must be > 0 1/s";
    case "viscosity_Pa_s":
      return value > 0 ? undefined : "must be > 0 Pa·s";
    case "pressure_MPa":
      return value >= 0 ? undefined : "must be ≥ 0 MPa (gauge)";
  }
}

/**
 * Parse viscosity points from CSV text into SI points (K, 1/s, Pa·s, Pa).
 *
 * @example
 * ```ts
 * const read = parseViscosityCsv("temperature_C,shear_rate_1_s,viscosity_Pa_s\n230,1000,310\n");
 * if (read.ok) console.log(read.points[0].temperatureK); // 503.15
 * ```
 */
export function parseViscosityCsv(text: string): ViscosityCsvResult {
  const issues: ViscosityCsvIssue[] = [];
  const lines = (text.charCodeAt(0) === 0xfeff ? text.slice(1) : text).split(/\r?\n/);
  let header: Column[] | undefined;
  const points: ViscosityCsvPoint[] = [];
  for (const [index, raw] of lines.entries()) {
    const line = index + 1;
    const hash = raw.indexOf("#");
    const content = (hash >= 0 ? raw.slice(0, hash) : raw).trim();
    if (content === "") continue;
    const fields = content.split(",").map((f) => f.trim());
    if (header === undefined) {
      const unknown = fields.filter((f) => !COLUMNS.includes(f));
      const missing = REQUIRED.filter((c) => !fields.includes(c));
      const repeated = fields.filter((f, i) => fields.indexOf(f) !== i);
      if (unknown.length > 0 || missing.length > 0 || repeated.length > 0) {
        const parts = [
          unknown.length > 0
            ? `unknown column${unknown.length > 1 ? "s" : ""} ${quote(unknown)}`
            : "",
          missing.length > 0 ? `missing ${quote(missing)}` : "",
          repeated.length > 0 ? `repeated ${quote(repeated)}` : "",
        ].filter(Boolean);
        issues.push({
          line,
          message: `header: ${parts.join("; ")} (expected comma-separated ${
            REQUIRED.join(", ")
          } and optionally ${OPTIONAL.join(", ")})`,
        });
        return { ok: false, issues };
      }
      header = fields as Column[];
      continue;
    }
    if (fields.length !== header.length) {
      issues.push({
        line,
        message: `${fields.length} field${
          fields.length === 1 ? "" : "s"
        }, the header has ${header.length} (${header.join(", ")})`,
      });
      continue;
    }
    const values = new Map<Column, number>();
    let good = true;
    for (const [i, column] of header.entries()) {
      const field = fields[i];
      const value = field === "" ? Number.NaN : Number(field);
      const problem = field === ""
        ? "is empty"
        : !Number.isFinite(value)
        ? `"${field}" is not a number`
        : outOfRange(column, value);
      if (problem) {
        issues.push({
          line,
          message: `${column} ${problem}${field === "" ? "" : `, got ${field}`}`,
        });
        good = false;
      } else values.set(column, value);
    }
    if (!good) continue;
    const pressureMPa = values.get("pressure_MPa");
    points.push({
      line,
      temperatureK: cToK(values.get("temperature_C")!),
      shearRate: values.get("shear_rate_1_s")!,
      viscosity: values.get("viscosity_Pa_s")!,
      ...(pressureMPa === undefined ? {} : { pressurePa: mpaToPa(pressureMPa) }),
    });
  }
  if (header === undefined) {
    issues.push({
      line: 0,
      message: `no header line (expected ${REQUIRED.join(", ")} and optionally ${
        OPTIONAL.join(", ")
      })`,
    });
  } else if (points.length === 0 && issues.length === 0) {
    issues.push({ line: 0, message: "no data lines after the header" });
  }
  if (issues.length > 0) return { ok: false, issues };
  return { ok: true, points, hasPressure: header!.includes("pressure_MPa") };
}

function quote(names: readonly string[]): string {
  return names.map((n) => `"${n}"`).join(", ");
}
