import type { Gate } from "./scenario_schema.ts";

/**
 * The shop's size rules of thumb, in one place: the design space bounds the optimizer by
 * them (`optimize/design_space.ts`), the warnings check today's tool against them
 * (`network/assess_fill.ts`). Each is common practice with no published source unless said;
 * they are starting points a toolmaker adjusts, which is why the optimizer may undercut a
 * rule by a few percent when snapping to a cutter (`RULE_CUTTER_TOLERANCE`).
 *
 * @module
 */

/** A runner is at least the wall it feeds plus this, mm, so it freezes after the part (common practice, no source). */
export const RUNNER_OVER_WALL_MM = 1.5;

/** Pin and tunnel gate diameter as a fraction of the wall it gates into (common practice, no source). */
export const ROUND_GATE_WALL_FRACTION = [0.25, 0.6] as const;

/** Edge gate depth as a fraction of the wall (common practice, no source). */
export const EDGE_GATE_WALL_FRACTION = [0.5, 0.8] as const;

/** The gate-to-wall range of a gate type: edge depth, or pin and tunnel tip diameter. */
export function gateWallFraction(type: Gate["type"]): readonly [number, number] {
  return type === "edge" ? EDGE_GATE_WALL_FRACTION : ROUND_GATE_WALL_FRACTION;
}

/** The smallest runner the wall rule allows for a part of wall `wallMm`, mm. */
export function runnerFloorMm(wallMm: number): number {
  return wallMm + RUNNER_OVER_WALL_MM;
}

/** A gate's adjustable size in the scenario's own field, mm (edge depth, or tip diameter). */
export function gateSizeMm(gate: Gate): number {
  return gate.type === "edge" ? gate.thickness_mm : gate.diameter_mm;
}

/** Where a gate stands against its wall rule: inside, or the range it leaves, as fractions. */
export function gateRuleVerdict(
  gate: Gate,
  wallMm: number,
): { ok: boolean; ratio: number; range: readonly [number, number] } {
  const range = gateWallFraction(gate.type);
  const ratio = gateSizeMm(gate) / wallMm;
  return { ok: ratio >= range[0] && ratio <= range[1], ratio, range };
}
