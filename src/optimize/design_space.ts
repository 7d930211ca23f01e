import type { Scenario } from "../model/scenario_schema.ts";
import { mmToM, mToMm } from "../model/units.ts";
import { type RunnerTree, runnerTree, thickestWallDownstream } from "../model/runner_tree.ts";
import {
  EDGE_GATE_WALL_FRACTION,
  gateWallFraction,
  ROUND_GATE_WALL_FRACTION,
  RUNNER_OVER_WALL_MM,
  runnerFloorMm,
  sizeForTime,
  sizeRuleSwitches,
  SPRUE_EXIT_MARGIN_MM,
  sprueExitCeilingMm,
} from "../model/size_rules.ts";
import { centreCoolingTime, gateFreezeFormula, thermalDataOf } from "../network/assess_fill.ts";
import { resolveMaterial, thermalSettingsOf } from "../network/simulate_scenario.ts";

/**
 * The design variables of a scenario: one size per element marked
 * `adjustable` (runner diameter; gate thickness for edge gates, diameter for
 * pin and tunnel gates), with bounds from the scenario, the size rules and the
 * mode. Sizes are in metres here; `applyDesign` writes them back in mm.
 *
 * The size rules (`model/size_rules.ts`, switched by `goals.size_rules`): runner ≥ wall + 1.5 mm
 * and the gate-to-wall ranges bind in every mode, as they always did; the feed order, the sprue
 * exit over the runners leaving it, the runner-cooling ceiling and the gate-hold floor never bind
 * tighter than today's size on an existing tool (trim, steel_safe), so none forces a change by
 * itself (today's tool may break one: its warning says so), and bind fully on a new tool. The
 * cooling and hold limits become sizes by the D² scaling of the first-term closed forms
 * (`network/assess_fill.ts` `centreCoolingTime`).
 *
 * @module
 */

/** One adjustable size. */
export interface DesignVariable {
  /** Element id in the scenario. */
  element: string;
  kind: "runner" | "gate";
  /** Which dimension changes. */
  dimension: "diameter" | "thickness";
  /** Index in `scenario.runners` or `scenario.gates`. */
  index: number;
  /** Today's size, m. */
  current: number;
  /** Bounds, m, after scenario limits, size rules and mode. */
  lower: number;
  upper: number;
  /**
   * The smallest cutter size acceptable when snapping, m: `lower`, except that a
   * rule-of-thumb lower bound may be undercut by {@link RULE_CUTTER_TOLERANCE}.
   */
  cutterLower: number;
  /**
   * The largest cutter or gate step acceptable when snapping, m: `upper`, except that a
   * rule-of-thumb upper bound (gate ≤ 60 % of wall) may be exceeded by
   * {@link RULE_CUTTER_TOLERANCE}; scenario limits and the cavity wall never are.
   */
  cutterUpper: number;
  /** Why the bounds are what they are, for an infeasibility report. */
  lowerReason: string;
  upperReason: string;
  /** What sets each bound (the binding one): decisions branch on this, never on the text. */
  lowerKind: BoundKind;
  upperKind: BoundKind;
}

/**
 * Where a bound comes from: the scenario's own limits, a size rule of thumb (a cutter may cross
 * it by {@link RULE_CUTTER_TOLERANCE}), a strict size rule (sprue exit, runner cooling, gate
 * hold: each compares with a number the scenario sets and its warning checks that number
 * exactly, so no cutter crosses it), the steel-safe floor (today's size), the feed order against
 * a fixed neighbour, or the cavity wall.
 */
export type BoundKind = "scenario" | "rule" | "strict_rule" | "steel_safe" | "feed_order" | "wall";

/** Pairs (upstream, downstream) of runner variables: the feeding runner is never the smaller one. */
export interface OrderingRule {
  upstream: number;
  downstream: number;
}

/** The design space of a scenario. */
export interface DesignSpace {
  scenario: Scenario;
  variables: DesignVariable[];
  ordering: OrderingRule[];
  /** For each variable, the index of the cavity its gate feeds (−1 for runners). */
  gateCavity: number[];
  /** Variables whose bounds cross (lower > upper): the goals cannot be met as stated. */
  conflicts: string[];
}

/**
 * How far a cutter may fall under a rule-of-thumb lower bound (a 5/32 in cutter, 3.97 mm,
 * for a 4.0 mm rule), or a gate step rise above a rule-of-thumb upper bound (1.10 mm for a
 * 1.08 mm rule): 3 %, our own judgement, no source. Scenario limits, the cavity wall and
 * steel-safe floors are never crossed.
 */
export const RULE_CUTTER_TOLERANCE = 0.03;

export { EDGE_GATE_WALL_FRACTION, ROUND_GATE_WALL_FRACTION, RUNNER_OVER_WALL_MM };

/** Build the design space of a validated scenario. */
export function designSpace(scenario: Scenario): DesignSpace {
  const rules = sizeRuleSwitches(scenario.goals.size_rules);
  const steelSafe = scenario.goals.mode === "steel_safe";
  const existingTool = scenario.goals.mode !== "new_tool";
  const limits = thermalLimits(scenario, rules);
  const wall = new Map(scenario.cavities.map((c) => [c.id, c.wall_mm]));
  const tree = runnerTree(scenario);
  const sprueExit = scenario.feed.kind === "sprue" && rules.sprue_exit
    ? scenario.feed.exit_diameter_mm
    : undefined;
  const mainRunners = new Set(tree.children.get(scenario.feed.node) ?? []);
  // On an existing tool a rule never binds tighter than today's size (it may be broken today).
  const ceiling = (rule: number, today: number) => existingTool ? Math.max(rule, today) : rule;
  const floor = (rule: number, today: number) => existingTool ? Math.min(rule, today) : rule;
  const broken = (rule: number, today: number, upper: boolean) =>
    existingTool && (upper ? today > rule : today < rule)
      ? ", held at today's size, which breaks it"
      : "";
  const wallBelow = thickestWallDownstream(scenario, tree);
  const runnerIndex = new Map(scenario.runners.map((r, k) => [r.id, k]));
  const parentId = (id: string) => {
    const up = tree.parent.get(runnerIndex.get(id)!);
    return up === undefined ? undefined : scenario.runners[up].id;
  };
  const variables: DesignVariable[] = [];
  const conflicts: string[] = [];

  const push = (
    v: Omit<
      DesignVariable,
      | "lower"
      | "upper"
      | "lowerReason"
      | "upperReason"
      | "lowerKind"
      | "upperKind"
      | "cutterLower"
      | "cutterUpper"
    >,
    bounds: {
      lower: Bound[];
      upper: Bound[];
    },
  ) => {
    let lower = -Infinity;
    let lowerReason = "";
    let lowerKind: BoundKind = "scenario";
    for (const [value, why, kind] of bounds.lower) {
      if (value > lower) {
        lower = value;
        lowerReason = why;
        lowerKind = kind;
      }
    }
    let upper = Infinity;
    let upperReason = "";
    let upperKind: BoundKind = "scenario";
    for (const [value, why, kind] of bounds.upper) {
      if (value < upper) {
        upper = value;
        upperReason = why;
        upperKind = kind;
      }
    }
    if (lower > upper * (1 + 1e-12)) {
      conflicts.push(
        `${v.element}: ${lowerReason} (${mToMm(lower).toFixed(2)} mm) is above ${upperReason} (${
          mToMm(upper).toFixed(2)
        } mm)`,
      );
    }
    // Rules of thumb are not sharp: a cutter a few percent under one is acceptable.
    let cutterLower = -Infinity;
    for (const [value, , kind] of bounds.lower) {
      const rule = kind === "rule";
      cutterLower = Math.max(cutterLower, rule ? value * (1 - RULE_CUTTER_TOLERANCE) : value);
    }
    let cutterUpper = Infinity;
    for (const [value, , kind] of bounds.upper) {
      const rule = kind === "rule";
      cutterUpper = Math.min(cutterUpper, rule ? value * (1 + RULE_CUTTER_TOLERANCE) : value);
    }
    variables.push({
      ...v,
      lower,
      upper,
      lowerReason,
      upperReason,
      lowerKind,
      upperKind,
      cutterLower,
      cutterUpper,
    });
  };

  const runnerById = new Map(scenario.runners.map((r) => [r.id, r]));
  scenario.runners.forEach((r, index) => {
    if (!r.adjustable) return;
    const d = r.diameter_mm;
    // Feed order against fixed neighbours: never smaller than a fixed runner it feeds, never
    // larger than a fixed runner feeding it (between two adjustable runners: `ordering`);
    // like the ordering rows, never stricter than today's size, which may break the order.
    const fixedChildren = scenario.runners.filter((c) => !c.adjustable && parentId(c.id) === r.id);
    const up = parentId(r.id);
    const fixedParent = up !== undefined && !runnerById.get(up)!.adjustable
      ? runnerById.get(up)
      : undefined;
    const lower: Bound[] = [[
      mmToM(r.min_diameter_mm ?? Math.max(2, d / 2)),
      "min_diameter_mm",
      "scenario",
    ]];
    const upper: Bound[] = [[
      mmToM(r.max_diameter_mm ?? Math.min(20, 2 * d)),
      "max_diameter_mm",
      "scenario",
    ]];
    const w = wallBelow.get(index);
    if (rules.runner_over_wall && w !== undefined) {
      lower.push([
        mmToM(runnerFloorMm(w)),
        `runner ≥ wall + ${RUNNER_OVER_WALL_MM} mm rule`,
        "rule",
      ]);
    }
    if (sprueExit !== undefined && mainRunners.has(index)) {
      const rule = mmToM(sprueExitCeilingMm(sprueExit));
      upper.push([
        ceiling(rule, mmToM(d)),
        `sprue exit ${sprueExit} mm − ${SPRUE_EXIT_MARGIN_MM} mm rule (sprue_exit)${
          broken(rule, mmToM(d), true)
        }`,
        "strict_rule",
      ]);
    }
    if (limits.runnerCeiling !== undefined) {
      // Where the cooling ceiling falls under the wall rule's floor (thin walls: 1.5 × a part's
      // cooling time allows a runner of about 1.7 × its wall), the floor wins: a runner that
      // froze before its part could not pack it, which matters more than the cycle; the
      // runner then stays at the floor, where it lengthens the cycle least.
      const floor = rules.runner_over_wall && w !== undefined ? mmToM(runnerFloorMm(w)) : 0;
      const rule = Math.max(limits.runnerCeiling, floor);
      upper.push([
        ceiling(rule, mmToM(d)),
        `runner cooling ≤ ${scenario.goals.max_runner_cooling_ratio} × thickest part or the sprue's rule (runner_cooling)${
          rule > limits.runnerCeiling ? ", lifted to the wall rule's floor" : ""
        }${broken(rule, mmToM(d), true)}`,
        "strict_rule",
      ]);
    }
    if (steelSafe) lower.push([mmToM(d), "steel-safe: today's size", "steel_safe"]);
    for (const c of rules.feed_order ? fixedChildren : []) {
      lower.push([
        mmToM(Math.min(c.diameter_mm, d)),
        `the fixed runner ${c.id} it feeds`,
        "feed_order",
      ]);
    }
    if (fixedParent && rules.feed_order) {
      upper.push([
        mmToM(Math.max(fixedParent.diameter_mm, d)),
        `the fixed runner ${fixedParent.id} feeding it`,
        "feed_order",
      ]);
    }
    push({ element: r.id, kind: "runner", dimension: "diameter", index, current: mmToM(d) }, {
      lower,
      upper,
    });
  });

  scenario.gates.forEach((g, index) => {
    if (!g.adjustable) return;
    const w = wall.get(g.cavity)!;
    const edge = g.type === "edge";
    const size = edge ? g.thickness_mm : g.diameter_mm;
    const min = edge ? g.min_thickness_mm : g.min_diameter_mm;
    const max = edge ? g.max_thickness_mm : g.max_diameter_mm;
    const field = edge ? "thickness" : "diameter";
    const lower: Bound[] = [[mmToM(min ?? size / 2), `min_${field}_mm`, "scenario"]];
    const upper: Bound[] = [
      [mmToM(max ?? size * 2), `max_${field}_mm`, "scenario"],
      [mmToM(w), "the cavity wall", "wall"],
    ];
    if (rules.gate_to_wall) {
      const [lo, hi] = gateWallFraction(g.type);
      lower.push([mmToM(lo * w), `gate ≥ ${lo * 100} % of wall rule`, "rule"]);
      upper.push([mmToM(hi * w), `gate ≤ ${hi * 100} % of wall rule`, "rule"]);
    }
    const holdFloor = limits.gateFloor(g.type);
    if (holdFloor !== undefined) {
      lower.push([
        floor(holdFloor, mmToM(size)),
        `gate freeze ≥ hold time ${scenario.process.hold_time_s} s rule (gate_hold)${
          broken(holdFloor, mmToM(size), false)
        }`,
        "strict_rule",
      ]);
    }
    if (steelSafe) lower.push([mmToM(size), "steel-safe: today's size", "steel_safe"]);
    push({
      element: g.id,
      kind: "gate",
      dimension: edge ? "thickness" : "diameter",
      index,
      current: mmToM(size),
    }, {
      lower,
      upper,
    });
  });

  const cavityIndex = new Map(scenario.cavities.map((c, i) => [c.id, i]));
  const gateCavity = variables.map((v) =>
    v.kind === "gate" ? cavityIndex.get(scenario.gates[v.index].cavity)! : -1
  );
  return {
    scenario,
    variables,
    ordering: rules.feed_order ? runnerOrdering(scenario, tree, variables) : [],
    gateCavity,
    conflicts,
  };
}

/** Today's sizes as a vector, m. */
export function currentDesign(space: DesignSpace): Float64Array {
  return Float64Array.from(space.variables, (v) => v.current);
}

/** A copy of the scenario with the sizes `x` (m) written into it (mm, rounded to 1 nm). */
export function applyDesign(space: DesignSpace, x: ArrayLike<number>): Scenario {
  const s: Scenario = structuredClone(space.scenario);
  space.variables.forEach((v, j) => {
    const mm = Math.round(mToMm(x[j]) * 1e6) / 1e6;
    if (v.kind === "runner") s.runners[v.index].diameter_mm = mm;
    else {
      const g = s.gates[v.index];
      if (g.type === "edge") g.thickness_mm = mm;
      else g.diameter_mm = mm;
    }
  });
  return s;
}

/** A size bound: value (m), the reason shown, and where it comes from (rules are soft for cutters). */
type Bound = [value: number, why: string, kind: BoundKind];

/** The sizes the thermal rules allow, m: a ceiling for every cold runner, a floor per gate type. */
interface ThermalLimits {
  runnerCeiling?: number;
  gateFloor(type: "edge" | "pin" | "tunnel"): number | undefined;
}

/**
 * The runner-cooling ceiling and the gate-hold floors of a scenario, m. A cold runner cools by
 * the cylinder's axis, the thickest part by the plate's centre line (the estimates of
 * `network/assess_fill.ts`); both are c·D², so the largest runner whose cooling time is at most
 * ratio × the part's is D = √(ratio·t_part / c_cylinder), or the sprue's exit if larger (the
 * sprue then already sets the cycle: model/size_rules.ts `runnerCoolingVerdict`). A gate freezes (centre at the no-flow
 * temperature) by the plate (edge) or the cylinder (pin, tunnel); the smallest that stays open
 * through the hold time is s = √(t_hold / c). No limit where the closed form gives none (a mold
 * at or above the target temperature, a melt starting at it).
 */
function thermalLimits(
  scenario: Scenario,
  rules: ReturnType<typeof sizeRuleSwitches>,
): ThermalLimits {
  const hold = rules.gate_hold ? scenario.process.hold_time_s : undefined;
  if (!rules.runner_cooling && hold === undefined) return { gateFloor: () => undefined };
  const thermal = thermalDataOf(resolveMaterial(scenario), thermalSettingsOf(scenario));
  const finite = (x: number) => Number.isFinite(x) ? x : undefined;
  let runnerCeiling: number | undefined;
  if (rules.runner_cooling) {
    const eject = thermal.ejectionTemperature;
    const part = Math.max(
      0,
      ...scenario.cavities.map((c) =>
        centreCoolingTime("plate_centre", mmToM(c.wall_mm), thermal, eject)
      ),
    );
    const perSquareMetre = centreCoolingTime("cylinder_centre", 1, thermal, eject);
    const ratioSize = finite(
      sizeForTime(1, perSquareMetre, scenario.goals.max_runner_cooling_ratio * part),
    );
    // The sprue's exit cools as long as the sprue (same closed form): a runner up to it adds nothing.
    const sprue = scenario.feed.kind === "sprue" ? mmToM(scenario.feed.exit_diameter_mm) : 0;
    runnerCeiling = ratioSize === undefined ? undefined : Math.max(ratioSize, sprue);
  }
  return {
    runnerCeiling,
    gateFloor: (type) => {
      if (hold === undefined) return undefined;
      const formula = gateFreezeFormula(type);
      return finite(
        sizeForTime(1, centreCoolingTime(formula, 1, thermal, thermal.noFlowTemperature), hold),
      );
    },
  };
}

function runnerOrdering(
  scenario: Scenario,
  tree: RunnerTree,
  variables: readonly DesignVariable[],
): OrderingRule[] {
  const index = new Map<string, number>();
  variables.forEach((v, j) => {
    if (v.kind === "runner") index.set(v.element, j);
  });
  const rules: OrderingRule[] = [];
  for (const [runner, parent] of tree.parent) {
    if (parent === undefined) continue;
    const down = index.get(scenario.runners[runner].id);
    const up = index.get(scenario.runners[parent].id);
    if (down !== undefined && up !== undefined) rules.push({ upstream: up, downstream: down });
  }
  return rules;
}
