import { AssertionError } from "node:assert/strict";

/** Tolerances for a float comparison: passes if |a − e| ≤ abs + rel·|e|. */
export interface CloseOptions {
  /** Relative tolerance (default 0). */
  rel?: number;
  /** Absolute tolerance, in the unit of the values (default 0). */
  abs?: number;
  /** What is being compared, for the failure message. */
  what?: string;
}

/** Assert `actual` is within the stated tolerance of `expected`; every float check states one. */
export function assertClose(actual: number, expected: number, options: CloseOptions): void {
  const rel = options.rel ?? 0;
  const abs = options.abs ?? 0;
  if (rel === 0 && abs === 0) {
    throw new TypeError("assertClose needs a tolerance: give rel, abs or both");
  }
  const limit = abs + rel * Math.abs(expected);
  const deviation = Math.abs(actual - expected);
  if (!Number.isFinite(actual) || !(deviation <= limit)) {
    const relDev = expected !== 0 ? deviation / Math.abs(expected) : Infinity;
    throw new AssertionError({
      message:
        `${options.what ?? "value"}: expected ${expected} ± ${limit} (rel ${rel}, abs ${abs}), ` +
        `got ${actual} (deviation ${deviation}, relative ${relDev.toExponential(3)})`,
      actual,
      expected,
    });
  }
}

/** Relative deviation |a − e|/|e|, for reporting measured deviations. */
export function relativeDeviation(actual: number, expected: number): number {
  return Math.abs(actual - expected) / Math.abs(expected);
}
