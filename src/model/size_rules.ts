/**
 * The shop's size rules, in one place: the design space bounds the optimizer by them
 * (`optimize/design_space.ts`), the warnings check today's tool against them
 * (`network/assess_fill.ts`). Each is common practice with no published source unless said;
 * they are starting points a toolmaker adjusts, which is why the optimizer may undercut a
 * rule of thumb by a few percent when snapping to a cutter (`RULE_CUTTER_TOLERANCE`); the
 * rules that compare with a number the scenario sets (the sprue exit, the cooling ratio, the
 * hold time) are never crossed.
 *
 * Each rule is switched by name in `goals.size_rules` ({@link SIZE_RULE_NAMES}). The scenario
 * schema imports this file, so it names a gate by its shape only ({@link SizedGate}).
 *
 * @module
 */

/** What the rules read of a gate (a scenario `Gate` is one): its type and adjustable size, mm. */
export type SizedGate =
  | { type: "edge"; thickness_mm: number }
  | { type: "pin" | "tunnel"; diameter_mm: number };

/** The size rules by the names `goals.size_rules` switches them with. */
export const SIZE_RULE_NAMES = [
  "runner_over_wall",
  "gate_to_wall",
  "feed_order",
  "sprue_exit",
  "runner_cooling",
  "gate_hold",
] as const;
/** One of {@link SIZE_RULE_NAMES}. */
export type SizeRuleName = (typeof SIZE_RULE_NAMES)[number];
/** Which size rules apply. */
export type SizeRuleSwitches = Readonly<Record<SizeRuleName, boolean>>;

/**
 * The switches of `goals.size_rules`: `true` every rule, `false` none but the feed order
 * (which `false` never switched off: it is the design space's ordering, not a rule of thumb),
 * an object each rule by name, those it leaves out on.
 */
export function sizeRuleSwitches(
  setting: boolean | Partial<Record<SizeRuleName, boolean>>,
): SizeRuleSwitches {
  const on = (name: SizeRuleName) =>
    typeof setting === "boolean" ? setting || name === "feed_order" : setting[name] ?? true;
  return Object.fromEntries(SIZE_RULE_NAMES.map((name) => [name, on(name)])) as Record<
    SizeRuleName,
    boolean
  >;
}

/** A runner is at least the wall it feeds plus this, mm, so it freezes after the part (common practice, no source). */
export const RUNNER_OVER_WALL_MM = 1.5;

/** Pin and tunnel gate diameter as a fraction of the wall it gates into (common practice, no source). */
export const ROUND_GATE_WALL_FRACTION = [0.25, 0.6] as const;

/** Edge gate depth as a fraction of the wall (common practice, no source). */
export const EDGE_GATE_WALL_FRACTION = [0.5, 0.8] as const;

/**
 * The sprue's exit is larger than each runner leaving it by at least this, mm (common practice,
 * no source: the trade quotes 0.5–1 mm). The low end of the range: the rule's purpose (the
 * sprue, upstream, freezes after the runner it packs through and pulls cleanly from its bushing)
 * is met by any step, and a 0.5 mm step is already a 16 % longer freeze (freeze ∝ D², 7 mm
 * against 6.5 mm); the high end would cost the balance a whole cutter size more. Never crossed
 * by cutter snapping, since a 3 % tolerance (0.2 mm on 7 mm) would eat a third of the margin.
 */
export const SPRUE_EXIT_MARGIN_MM = 0.5;

/**
 * Default of `goals.max_runner_cooling_ratio`: a cold runner may need at most this multiple of
 * the thickest part's cooling time (our own common practice, no source), or the sprue's when the
 * sprue needs longer: the cycle is then already the sprue's, and a runner up to it does not
 * lengthen it (a runner as large as the sprue's exit cools as long as the sprue, by the same
 * closed form). Above that the runner, not the part, sets the cooling time of the cycle.
 */
export const DEFAULT_MAX_RUNNER_COOLING_RATIO = 1.5;

/** The gate-to-wall range of a gate type: edge depth, or pin and tunnel tip diameter. */
export function gateWallFraction(type: SizedGate["type"]): readonly [number, number] {
  return type === "edge" ? EDGE_GATE_WALL_FRACTION : ROUND_GATE_WALL_FRACTION;
}

/** The smallest runner the wall rule allows for a part of wall `wallMm`, mm. */
export function runnerFloorMm(wallMm: number): number {
  return wallMm + RUNNER_OVER_WALL_MM;
}

/** A gate's adjustable size in the scenario's own field, mm (edge depth, or tip diameter). */
export function gateSizeMm(gate: SizedGate): number {
  return gate.type === "edge" ? gate.thickness_mm : gate.diameter_mm;
}

/** Where a gate stands against its wall rule: inside, or the range it leaves, as fractions. */
export function gateRuleVerdict(
  gate: SizedGate,
  wallMm: number,
): { ok: boolean; ratio: number; range: readonly [number, number] } {
  const range = gateWallFraction(gate.type);
  const ratio = gateSizeMm(gate) / wallMm;
  return { ok: ratio >= range[0] && ratio <= range[1], ratio, range };
}

/** The largest runner the sprue-exit rule allows behind a sprue exit of `exitMm`, mm. */
export function sprueExitCeilingMm(exitMm: number): number {
  return exitMm - SPRUE_EXIT_MARGIN_MM;
}

/** Whether a runner of `runnerMm` leaving a sprue exit of `exitMm` keeps the margin (at it is fine). */
export function sprueExitVerdict(
  exitMm: number,
  runnerMm: number,
): { ok: boolean; stepMm: number } {
  const stepMm = exitMm - runnerMm;
  return { ok: runnerMm <= sprueExitCeilingMm(exitMm) * (1 + 1e-12), stepMm };
}

/**
 * The size at which a time that grows with the size squared reaches `targetTime`, from one
 * known point (`timeAtReference` at `referenceSize`): s = s_ref·√(t/t_ref). Every first-term
 * cooling or freeze time is c·s² at fixed temperatures: the plate's centre line (Menges, Michaeli
 * & Mohren, *How to Make Injection Molds*) and the cylinder's axis (Carslaw & Jaeger, *Conduction
 * of Heat in Solids*, 2nd ed., §7.6), so this turns a time limit into a size limit. Any unit of size; times in the same unit. NaN unless both times are > 0 and the reference time finite.
 */
export function sizeForTime(
  referenceSize: number,
  timeAtReference: number,
  targetTime: number,
): number {
  if (!(timeAtReference > 0 && timeAtReference < Infinity) || !(targetTime > 0)) return NaN;
  return referenceSize * Math.sqrt(targetTime / timeAtReference);
}

/**
 * Whether a cold runner's cooling time stays within the runner-cooling rule: at most `ratio` ×
 * the thickest part's, or the sprue's (`sprueCoolingTime`, 0 without a sprue) when that is
 * longer; the sprue itself is held to `ratio` × the part's alone. At the limit is fine. `share`
 * is the cooling time over the part's.
 */
export function runnerCoolingVerdict(
  coolingTime: number,
  partCoolingTime: number,
  options: { ratio: number; sprueCoolingTime?: number },
): { ok: boolean; share: number; limit: number } {
  const limit = Math.max(options.ratio * partCoolingTime, options.sprueCoolingTime ?? 0);
  return {
    ok: coolingTime <= limit * (1 + 1e-12),
    share: coolingTime / partCoolingTime,
    limit,
  };
}

/** Whether a gate stays open through the hold time (freezing at its end is fine). */
export function gateHoldVerdict(gateFreezeTime: number, holdTime: number): { ok: boolean } {
  return { ok: gateFreezeTime >= holdTime * (1 - 1e-12) };
}
