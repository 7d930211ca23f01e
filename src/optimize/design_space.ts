import type { Scenario } from "../model/scenario_schema.ts";
import { mmToM, mToMm } from "../model/units.ts";

/**
 * The design variables of a scenario: one size per element marked
 * `adjustable` (runner diameter; gate thickness for edge gates, diameter for
 * pin and tunnel gates), with bounds from the scenario, the size rules and the
 * mode. Sizes are in metres here; `applyDesign` writes them back in mm.
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
 * Where a bound comes from: the scenario's own limits, a size rule of thumb, the steel-safe
 * floor (today's size), the feed order against a fixed neighbour, or the cavity wall.
 */
export type BoundKind = "scenario" | "rule" | "steel_safe" | "feed_order" | "wall";

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

/** Runner-size rule: runner ≥ wall + 1.5 mm (common practice, no source). */
export const RUNNER_OVER_WALL_MM = 1.5;
/** Tunnel and pin gate diameter 25–60 % of the wall (common practice, no source). */
export const ROUND_GATE_WALL_FRACTION = [0.25, 0.6] as const;
/** Edge gate depth 50–80 % of the wall (common practice, no source). */
export const EDGE_GATE_WALL_FRACTION = [0.5, 0.8] as const;

/** Build the design space of a validated scenario. */
export function designSpace(scenario: Scenario): DesignSpace {
  const rules = scenario.goals.size_rules;
  const steelSafe = scenario.goals.mode === "steel_safe";
  const wall = new Map(scenario.cavities.map((c) => [c.id, c.wall_mm]));
  const tree = runnerTree(scenario);
  const downstreamWall = thickestDownstreamWall(scenario, tree);
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

  const { parentOf } = tree;
  const runnerById = new Map(scenario.runners.map((r) => [r.id, r]));
  scenario.runners.forEach((r, index) => {
    if (!r.adjustable) return;
    const d = r.diameter_mm;
    // Feed order against fixed neighbours: never smaller than a fixed runner it feeds, never
    // larger than a fixed runner feeding it (between two adjustable runners: `ordering`);
    // like the ordering rows, never stricter than today's size, which may break the order.
    const fixedChildren = scenario.runners.filter((c) =>
      !c.adjustable && parentOf.get(c.id) === r.id
    );
    const parentId = parentOf.get(r.id);
    const fixedParent = parentId !== undefined && !runnerById.get(parentId)!.adjustable
      ? runnerById.get(parentId)
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
    const w = downstreamWall.get(r.id);
    if (rules && w !== undefined) {
      lower.push([mmToM(w + RUNNER_OVER_WALL_MM), "runner ≥ wall + 1.5 mm rule", "rule"]);
    }
    if (steelSafe) lower.push([mmToM(d), "steel-safe: today's size", "steel_safe"]);
    for (const c of fixedChildren) {
      lower.push([
        mmToM(Math.min(c.diameter_mm, d)),
        `the fixed runner ${c.id} it feeds`,
        "feed_order",
      ]);
    }
    if (fixedParent) {
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
    if (rules) {
      const [lo, hi] = edge ? EDGE_GATE_WALL_FRACTION : ROUND_GATE_WALL_FRACTION;
      lower.push([mmToM(lo * w), `gate ≥ ${lo * 100} % of wall rule`, "rule"]);
      upper.push([mmToM(hi * w), `gate ≤ ${hi * 100} % of wall rule`, "rule"]);
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
    ordering: runnerOrdering(tree, variables),
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

/** For each runner id, the thickest wall of the cavities downstream of it (mm). */
function thickestDownstreamWall(scenario: Scenario, tree: RunnerTree): Map<string, number> {
  const { parentOf, downNode } = tree;
  const wall = new Map(scenario.cavities.map((c) => [c.id, c.wall_mm]));
  const runnerInto = new Map<string, string>();
  for (const [runner, node] of downNode) runnerInto.set(node, runner);
  const result = new Map<string, number>();
  for (const g of scenario.gates) {
    const w = wall.get(g.cavity)!;
    let runner = runnerInto.get(g.from);
    while (runner !== undefined) {
      result.set(runner, Math.max(result.get(runner) ?? 0, w));
      runner = parentOf.get(runner);
    }
  }
  return result;
}

/** The runner tree seen from the feed node. */
interface RunnerTree {
  /** Each runner's upstream runner (undefined at the feed). */
  parentOf: Map<string, string | undefined>;
  /** Each runner's downstream node. */
  downNode: Map<string, string>;
}

/** A size bound: value (m), the reason shown, and where it comes from (rules are soft for cutters). */
type Bound = [value: number, why: string, kind: BoundKind];

/** The runner tree by breadth-first search from the feed node. */
function runnerTree(scenario: Scenario): RunnerTree {
  const parentOf = new Map<string, string | undefined>();
  const downNode = new Map<string, string>();
  const reachedBy = new Map<string, string | undefined>([[scenario.feed.node, undefined]]);
  const queue = [scenario.feed.node];
  while (queue.length > 0) {
    const node = queue.shift()!;
    for (const r of scenario.runners) {
      if (parentOf.has(r.id)) continue;
      const other = r.from === node ? r.to : r.to === node ? r.from : undefined;
      if (other === undefined) continue;
      parentOf.set(r.id, reachedBy.get(node));
      downNode.set(r.id, other);
      if (!reachedBy.has(other)) {
        reachedBy.set(other, r.id);
        queue.push(other);
      }
    }
  }
  return { parentOf, downNode };
}

function runnerOrdering(tree: RunnerTree, variables: readonly DesignVariable[]): OrderingRule[] {
  const { parentOf } = tree;
  const index = new Map<string, number>();
  variables.forEach((v, j) => {
    if (v.kind === "runner") index.set(v.element, j);
  });
  const rules: OrderingRule[] = [];
  for (const [runner, parent] of parentOf) {
    if (parent === undefined) continue;
    const down = index.get(runner);
    const up = index.get(parent);
    if (down !== undefined && up !== undefined) rules.push({ upstream: up, downstream: down });
  }
  return rules;
}
