/**
 * Ball-end cutter catalogues: the runner diameters a toolroom can actually
 * cut. The optimizer works with continuous diameters and then chooses between
 * the two neighbouring cutter sizes.
 *
 * Sizes are in metres inside; labels are for display. The metric and inch
 * series are common practice, no source (stock ball-end mill sizes); 1 in =
 * 25.4 mm exactly (international yard and pound agreement, 1959).
 *
 * Out-of-catalogue sizes are handled explicitly: {@link roundUp} fails with
 * `above_largest` instead of returning a smaller cutter; {@link nearest}
 * clamps to the end of the series and says so in `outside`;
 * {@link neighbouringSizes} simply lacks `below` or `above`.
 *
 * @module
 */

import { M_PER_INCH, M_PER_MM } from "../model/units.ts";

/** One cutter: diameter in m and a display label ("5 mm", "5/16 in"). */
export interface Cutter {
  /** Ball diameter = runner diameter cut, m. */
  readonly size: number;
  /** Display label in the catalogue's own unit. */
  readonly label: string;
}

/** A discrete series (sorted ascending, no duplicates) or "any diameter". */
export type CutterCatalogue =
  | {
    readonly kind: "discrete";
    /** Where the series came from. */
    readonly system: "metric" | "inch" | "custom";
    /** Cutters, ascending by size. */
    readonly cutters: readonly Cutter[];
  }
  | { readonly kind: "continuous" };

/** Two sizes closer than this are the same cutter, m (1 nm; catalogue values are exact decimals or fractions). */
export const CUTTER_MATCH_TOLERANCE = 1e-9;

const METRIC_SIZES_MM = [2, 2.5, 3, 3.5, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13];
const INCH_FRACTIONS: ReadonlyArray<readonly [number, number]> = [
  [3, 32],
  [1, 8],
  [5, 32],
  [3, 16],
  [7, 32],
  [1, 4],
  [9, 32],
  [5, 16],
  [11, 32],
  [3, 8],
  [7, 16],
  [1, 2],
];

/**
 * Build a catalogue: "metric" (2–13 mm: 2, 2.5, 3, 3.5, 4, then whole mm),
 * "inch" (3/32–1/2 in in 1/32 steps to 11/32, then 3/8, 7/16, 1/2), a user list of
 * diameters in mm (sorted and de-duplicated; each must be finite and > 0), or
 * "continuous" (every diameter is available). Common practice, no source.
 */
export function cutterCatalogue(
  spec: "metric" | "inch" | "continuous" | readonly number[],
): CutterCatalogue {
  if (spec === "continuous") return { kind: "continuous" };
  if (spec === "metric") {
    return { kind: "discrete", system: "metric", cutters: METRIC_SIZES_MM.map(metricCutter) };
  }
  if (spec === "inch") {
    return {
      kind: "discrete",
      system: "inch",
      cutters: INCH_FRACTIONS.map(([n, d]) => ({
        size: (n / d) * M_PER_INCH,
        label: `${n}/${d} in`,
      })),
    };
  }
  if (!Array.isArray(spec)) {
    throw new TypeError(`Cannot build cutter catalogue: unknown spec ${String(spec)}`);
  }
  if (spec.length === 0) {
    throw new RangeError("Cannot build cutter catalogue: the list of sizes is empty");
  }
  for (const mm of spec) {
    if (!Number.isFinite(mm) || !(mm > 0)) {
      throw new RangeError(
        `Cannot build cutter catalogue: sizes must be finite and > 0 mm, got ${mm}`,
      );
    }
  }
  const sorted = [...spec].sort((a, b) => a - b);
  const cutters: Cutter[] = [];
  for (const mm of sorted) {
    const cutter = metricCutter(mm);
    const last = cutters[cutters.length - 1];
    if (last === undefined || cutter.size - last.size > CUTTER_MATCH_TOLERANCE) {
      cutters.push(cutter);
    }
  }
  return { kind: "discrete", system: "custom", cutters };
}

function metricCutter(mm: number): Cutter {
  return { size: mm * M_PER_MM, label: `${formatMm(mm)} mm` };
}

/** mm with at most 3 decimals, trailing zeros dropped ("5", "5.5", "5.375"). */
function formatMm(mm: number): string {
  return String(Number(mm.toFixed(3)));
}

/** The catalogue's entry for `size` when it offers any diameter. */
function continuousCutter(size: number): Cutter {
  return { size, label: `${formatMm(size / M_PER_MM)} mm` };
}

function checkSize(size: number, what: string): void {
  if (!Number.isFinite(size) || !(size > 0)) {
    throw new RangeError(`Cannot ${what}: size must be finite and > 0 m, got ${size}`);
  }
}

/**
 * The cutters around `size` (m): `exact` when one matches within
 * {@link CUTTER_MATCH_TOLERANCE}, `below` the largest strictly smaller one,
 * `above` the smallest strictly larger one; either is absent past the end of
 * the series. A continuous catalogue returns only `exact`.
 */
export function neighbouringSizes(
  catalogue: CutterCatalogue,
  size: number,
): { below?: Cutter; above?: Cutter; exact?: Cutter } {
  checkSize(size, "find neighbouring cutters");
  if (catalogue.kind === "continuous") return { exact: continuousCutter(size) };
  const result: { below?: Cutter; above?: Cutter; exact?: Cutter } = {};
  for (const cutter of catalogue.cutters) {
    if (Math.abs(cutter.size - size) <= CUTTER_MATCH_TOLERANCE) result.exact = cutter;
    else if (cutter.size < size) result.below = cutter;
    else if (result.above === undefined) result.above = cutter;
  }
  return result;
}

/** Result of {@link roundUp}. */
export type RoundUpResult =
  | { ok: true; cutter: Cutter }
  | { ok: false; code: "above_largest"; largest: Cutter; message: string };

/**
 * The smallest cutter at least as large as `size` (m; a match within
 * {@link CUTTER_MATCH_TOLERANCE} counts), never a smaller one. Below the
 * smallest cutter that is the smallest cutter; above the largest the result is
 * `{ ok: false, code: "above_largest" }` with the largest cutter for the message.
 */
export function roundUp(catalogue: CutterCatalogue, size: number): RoundUpResult {
  checkSize(size, "round up to a cutter");
  const { exact, above } = neighbouringSizes(catalogue, size);
  const cutter = exact ?? above;
  if (cutter !== undefined) return { ok: true, cutter };
  const cutters = catalogue.kind === "discrete" ? catalogue.cutters : [];
  const largest = cutters[cutters.length - 1];
  return {
    ok: false,
    code: "above_largest",
    largest,
    message: `No cutter at least ${formatMm(size / M_PER_MM)} mm: the largest is ${largest.label}`,
  };
}

/** Result of {@link nearest}: `outside` is set when `size` lies beyond the series and was clamped. */
export interface NearestResult {
  /** The chosen cutter. */
  cutter: Cutter;
  /** Set when `size` is below the smallest or above the largest cutter. */
  outside?: "below_smallest" | "above_largest";
}

/**
 * The cutter closest to `size` (m) in diameter; a tie goes to the larger
 * cutter (a slightly larger runner is the safe side for fill — common
 * practice, no source). Past either end the end cutter is returned with
 * `outside` set.
 */
export function nearest(catalogue: CutterCatalogue, size: number): NearestResult {
  checkSize(size, "find the nearest cutter");
  const { exact, below, above } = neighbouringSizes(catalogue, size);
  if (exact !== undefined) return { cutter: exact };
  if (below === undefined && above !== undefined) {
    return { cutter: above, outside: "below_smallest" };
  }
  if (above === undefined && below !== undefined) {
    return { cutter: below, outside: "above_largest" };
  }
  if (below === undefined || above === undefined) {
    throw new RangeError("Cannot find the nearest cutter: the catalogue is empty");
  }
  // Differences within the match tolerance count as a tie, which goes to the larger cutter.
  const closerBelow = size - below.size < above.size - size - CUTTER_MATCH_TOLERANCE;
  return { cutter: closerBelow ? below : above };
}
