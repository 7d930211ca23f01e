import type { ChangeCosts, Scenario } from "../model/scenario_schema.ts";
import type { SlopeSource } from "../wire/enums.ts";
import type { BalanceIteration, ContinuousOutcome, ContinuousSolver } from "./continuous_slp.ts";
import { type DesignSpace, designSpace } from "./design_space.ts";
import { type DesignEvaluation, evaluateDesign, simulationsOf } from "./evaluate_design.ts";
import type { LpSolver, LpVariable } from "./lp_solver.ts";
import {
  finiteDifferenceSensitivities,
  type Sensitivities,
  tangentSensitivities,
} from "./sensitivities.ts";
import { formulateStep, LP_BAND_SHARE, LP_LIMIT_SHARE, violation } from "./slp_step.ts";
import { type StopOptions, stopReason } from "./stop.ts";

/**
 * Plans with the fewest changes, for an existing tool (`trim`, `steel_safe`): a shop
 * counts a plan in changes (each is a set-up, a cut, a try-out), not only in runner volume.
 *
 * For k = 1, 2, 3, … changes: a mixed-integer program on the linear model at today's tool
 * (the step LP of `slp_step.ts` without a trust region, one binary per direction of change
 * of each size, at most k of them on, each costing its kind's weight from `goals.change_costs`)
 * chooses which sizes change; the continuous solver then balances those sizes alone, the
 * rest held at today's. The front records, for each k, the best imbalance and runner volume
 * reached (a plan with fewer changes is also a plan with at most k, so the front never gets
 * worse as k grows). It stops at the first k that meets every limit, plus one more (the
 * trade-off the shop sees), or at `goals.max_changes` — then one more k is tried to say what
 * would be needed. Lexicographic choice: meet every limit, then the fewest changes, then the
 * cheapest kinds of change, then the lightest runner.
 *
 * @module
 */

/** One point of the front: the best plan found with at most `changes` changed sizes. */
export interface FrontPoint {
  /** The bound k. */
  changes: number;
  /** The sizes this plan changes (element ids), at most k of them. */
  elements: string[];
  /** The plan's sizes in the full space, m. */
  x: Float64Array;
  imbalancePercent: number;
  runnerVolume: number;
  /** Meets every limit (simulated, continuous sizes). */
  feasible: boolean;
  /** Sum of the change costs of its changes. */
  cost: number;
  /** Simulations spent on this point. */
  simulations: number;
  /** The continuous solution on the sub-space of the changed sizes (none for today's tool). */
  solved?: ContinuousOutcome;
}

/** Options of {@link fewestChangeFront}. */
export interface FewestChangesOptions extends StopOptions {
  solver: LpSolver;
  continuous: ContinuousSolver;
  slopes?: SlopeSource;
  /**
   * Called after every iteration of every k's re-balance, numbered on across them, with the
   * simulations of the whole front (plus `simulationsBefore`).
   */
  onProgress?: (iteration: BalanceIteration) => void;
  /** Simulations spent before the front, for the progress counts (default 0). */
  simulationsBefore?: number;
}

/** The front and where it stopped. */
export interface FewestChangesFront {
  points: FrontPoint[];
  /**
   * The plan the optimization goes on with: the smallest k whose plan meets every limit
   * within `goals.max_changes` (the optimizer moves it on when the plan's cutter sizes break
   * a limit).
   */
  chosen?: FrontPoint;
  /** The smallest k whose plan meets every limit at all (may exceed `goals.max_changes`). */
  neededChanges?: number;
  simulations: number;
}

/** The weight of one unit of change cost against the relative runner volume in the program. */
const COST_WEIGHT = 0.05;
/** Iterations of each k's re-balance: a handful of sizes from today's design. */
const FRONT_ITERATIONS = 15;
/** The front ends after this many more changes in a row moved neither the balance nor the limits. */
const STALLED_CHANGES = 3;
/** The program's slacks weigh this many times the step LP's penalty: limits come first. */
const LIMITS_FIRST = 100;
/** Default costs of `goals.change_costs` (kept in step with the schema's defaults). */
export const DEFAULT_CHANGE_COSTS: ChangeCosts = {
  enlarge_gate: 1,
  enlarge_runner: 2,
  reduce_gate: 6,
  reduce_runner: 10,
};

/** The cost of changing variable `j` of `space` from `from` to `to` (m). */
export function changeCost(
  space: DesignSpace,
  j: number,
  from: number,
  to: number,
  costs: ChangeCosts = costsOf(space),
): number {
  if (Math.abs(to - from) <= 1e-9 * from) return 0;
  return kindCost(costs, space.variables[j].kind, to > from);
}

/** The scenario's change costs, or the defaults. */
function costsOf(space: DesignSpace): ChangeCosts {
  return space.scenario.goals.change_costs ?? DEFAULT_CHANGE_COSTS;
}

/** The cost of enlarging (`up`) or reducing one gate or runner. */
function kindCost(costs: ChangeCosts, kind: "runner" | "gate", up: boolean): number {
  return kind === "gate"
    ? (up ? costs.enlarge_gate : costs.reduce_gate)
    : (up ? costs.enlarge_runner : costs.reduce_runner);
}

/**
 * Which sizes to change, at most `k` of them: the mixed-integer program on the linear model
 * at `today` (a design that differs from today's tool in the sizes `changed` only: those
 * are free and count against k, and at least one more is chosen). Returns the chosen
 * variable indices (`changed` included) and the program's proposal for their sizes, or
 * undefined when the program has no room or the solver cannot (it needs integers: HiGHS).
 */
export async function chooseChanges(
  space: DesignSpace,
  today: DesignEvaluation,
  slopes: Sensitivities,
  solver: LpSolver,
  k: number,
  changed: readonly number[] = [],
): Promise<{ chosen: number[]; proposal: Float64Array } | undefined> {
  const room = k - changed.length;
  if (room < 1) return undefined;
  const free = new Set(changed);
  const goals = space.scenario.goals;
  const epsilon = goals.max_imbalance_percent / 100;
  const program = formulateStep(space, today, slopes, {
    radius: 1,
    epsilon: LP_BAND_SHARE * epsilon,
    limitShare: LP_LIMIT_SHARE,
    V0: today.runnerVolume,
  });
  const n = space.variables.length;
  const variables: LpVariable[] = program.lp.variables.map((v, c) =>
    c >= n && v.cost > 0 ? { ...v, cost: LIMITS_FIRST * v.cost } : v
  );
  const rows = [...program.lp.rows];
  const count: [number, number][] = [];
  const costs = costsOf(space);
  space.variables.forEach((v, j) => {
    if (free.has(j)) return;
    const u = variables[j];
    // u_j = ln(x_j'/x_j) leaves 0 only in a direction whose binary is on:
    // lower·down_j ≤ u_j ≤ upper·up_j.
    const binary = (side: "up" | "down") => {
      variables.push({
        name: `${v.element} ${side}`,
        lower: 0,
        upper: 1,
        cost: COST_WEIGHT * kindCost(costs, v.kind, side === "up"),
        integer: true,
      });
      count.push([variables.length - 1, 1]);
      return variables.length - 1;
    };
    const up = u.upper > 0 ? binary("up") : -1;
    const down = u.lower < 0 ? binary("down") : -1;
    rows.push({
      name: `${v.element} grows only if chosen`,
      terms: up >= 0 ? [[j, 1], [up, -u.upper]] : [[j, 1]],
      lower: -Infinity,
      upper: 0,
    });
    rows.push({
      name: `${v.element} shrinks only if chosen`,
      terms: down >= 0 ? [[j, 1], [down, -u.lower]] : [[j, 1]],
      lower: 0,
      upper: Infinity,
    });
  });
  if (count.length === 0) return undefined;
  rows.push({ name: "at most k changes", terms: count, lower: 1, upper: room });
  const lp = await solver.solve({ ...program.lp, variables, rows }, { timeLimitSeconds: 20 });
  if (lp.status !== "optimal") return undefined;
  const chosen = space.variables.flatMap((_, j) =>
    free.has(j) || Math.abs(lp.x[j]) > 1e-6 ? [j] : []
  );
  const proposal = Float64Array.from(
    space.variables,
    (v, j) => Math.min(v.upper, Math.max(v.lower, today.x[j] * Math.exp(lp.x[j]))),
  );
  return { chosen, proposal };
}

/** The space of `space`'s sizes in `free` alone, every other size held at today's. */
export function spaceOf(space: DesignSpace, free: readonly number[]): DesignSpace {
  const keep = new Set(free.map((j) => space.variables[j].element));
  const scenario: Scenario = structuredClone(space.scenario);
  for (const v of space.variables) {
    if (keep.has(v.element)) continue;
    if (v.kind === "runner") scenario.runners[v.index].adjustable = false;
    else scenario.gates[v.index].adjustable = false;
  }
  return designSpace(scenario);
}

/** Build the front of fewest-change plans (see the module). */
export async function fewestChangeFront(
  space: DesignSpace,
  today: DesignEvaluation,
  slopes: Sensitivities,
  options: FewestChangesOptions,
): Promise<FewestChangesFront> {
  const goals = space.scenario.goals;
  const epsilon = goals.max_imbalance_percent / 100;
  const n = space.variables.length;
  const limit = goals.max_changes ?? n;
  const points: FrontPoint[] = [];
  let simulations = 0;
  let chosen: FrontPoint | undefined;
  let neededChanges: number | undefined;
  if (today.feasible) {
    // Today's tool meets every limit: the plan is to change nothing.
    const none: FrontPoint = {
      changes: 0,
      elements: [],
      x: Float64Array.from(today.x),
      imbalancePercent: today.imbalancePercent,
      runnerVolume: today.runnerVolume,
      feasible: true,
      cost: 0,
      simulations: 0,
    };
    return { points: [none], chosen: none, neededChanges: 0, simulations: 0 };
  }
  // Nested plans: each k keeps the sizes the last one changed and adds at least one, chosen
  // on the linear model where the last plan landed (today's model misjudges large changes).
  // The search goes on from each plan even when it is no better than an earlier one (opening
  // one gate can push the others' shear up until they are all opened); the front reports the
  // best so far.
  let base = today;
  let baseSlopes = slopes;
  let explored: number[] = [];
  let last: FrontPoint | undefined;
  const progress = new FrontProgress(options.onProgress);
  let stalled = 0;
  for (let k = 1; k <= n; k++) {
    if (stopReason(options)) break;
    const pick = await chooseChanges(space, base, baseSlopes, options.solver, k, explored);
    if (!pick) {
      if (explored.length >= k) continue; // no room yet: the next k has it
      break;
    }
    explored = pick.chosen;
    progress.simulations = (options.simulationsBefore ?? 0) + simulations;
    // Each re-balance starts from the last plan (the sizes it adds at today's); the first
    // starts where the program proposes.
    const tried = await balanceChanges(
      space,
      today,
      pick.chosen,
      last?.x ?? pick.proposal,
      k,
      options,
      progress,
    );
    if (!tried) continue;
    simulations += tried.simulations;
    const moved = !last || tried.imbalancePercent < last.imbalancePercent - 1e-6 ||
      better(tried, last, epsilon, today.runnerVolume);
    stalled = moved ? 0 : stalled + 1;
    last = tried;
    if (!tried.feasible) {
      // The next choice is linearised where this plan landed (one simulation with its tangent).
      const again = evaluateDesign(space, tried.x, { slopes: true });
      simulations += simulationsOf(again);
      const s = again.ok ? slopesAt(space, again.evaluation, options) : undefined;
      if (s) simulations += s.simulations;
      if (again.ok && s) {
        base = again.evaluation;
        baseSlopes = s;
      }
    }
    // A plan with fewer changes is a plan with at most k: the front never gets worse.
    const previous = points.at(-1);
    const point = previous && !better(tried, previous, epsilon, today.runnerVolume)
      ? { ...previous, changes: k, simulations: 0 }
      : tried;
    points.push(point);
    if (point.feasible) {
      neededChanges ??= point.elements.length;
      if (!chosen && point.elements.length <= limit) chosen = point;
    }
    // Stop one past the first k that meets every limit, or one past the bound, or when
    // several more changes in a row moved neither the balance nor the limits.
    const firstFeasible = points.findIndex((p) => p.feasible);
    if (firstFeasible >= 0 && points.length - 1 > firstFeasible) break;
    if (k > limit || stalled >= STALLED_CHANGES) break;
  }
  return { points, chosen, neededChanges, simulations };
}

/**
 * The slopes the choice of changes linearises with at `e` (evaluated with its tangent): the
 * tangent's, or finite differences (one simulation per size) when the run asks for them.
 */
export function slopesAt(
  space: DesignSpace,
  e: DesignEvaluation,
  options: StopOptions & { slopes?: SlopeSource },
): Sensitivities | undefined {
  if (options.slopes !== "finite_difference") return tangentSensitivities(space, e);
  const s = finiteDifferenceSensitivities(space, e, options);
  return "failure" in s ? undefined : s;
}

/** Balance the sizes in `free` (the rest at today's) and judge the plan. */
async function balanceChanges(
  space: DesignSpace,
  today: DesignEvaluation,
  free: number[],
  proposal: Float64Array,
  k: number,
  options: FewestChangesOptions,
  progress: FrontProgress,
): Promise<FrontPoint | undefined> {
  const sub = spaceOf(space, free);
  const start = new Map(free.map((j) => [space.variables[j].element, proposal[j]]));
  const solved = await options.continuous(sub, {
    solver: options.solver,
    maxIterations: FRONT_ITERATIONS,
    start,
    slopes: options.slopes,
    signal: options.signal,
    deadline: options.deadline,
    onProgress: (i) => progress.report(i),
  });
  if (!solved.ok) return undefined;
  const e = solved.outcome.optimum;
  const size = new Map(sub.variables.map((v, i) => [v.element, e.x[i]]));
  const x = Float64Array.from(space.variables, (v, j) => size.get(v.element) ?? today.x[j]);
  const elements = space.variables.flatMap((v, j) =>
    Math.abs(x[j] - today.x[j]) > 1e-9 * today.x[j] ? [v.element] : []
  );
  const cost = space.variables.reduce(
    (sum, _, j) => sum + changeCost(space, j, today.x[j], x[j]),
    0,
  );
  return {
    changes: k,
    elements,
    x,
    imbalancePercent: e.imbalancePercent,
    runnerVolume: e.runnerVolume,
    feasible: e.feasible,
    cost,
    simulations: solved.outcome.simulations,
    solved: solved.outcome,
  };
}

/** Whether plan `a` beats `b`: meeting the limits first, then less violation, then volume. */
function better(a: FrontPoint, b: FrontPoint, epsilon: number, V0: number): boolean {
  if (a.feasible !== b.feasible) return a.feasible;
  if (!a.feasible) {
    if (!a.solved || !b.solved) return !!a.solved;
    return violation(a.solved.optimum, epsilon, { split: false, shear: "both" }) <
      violation(b.solved.optimum, epsilon, { split: false, shear: "both" });
  }
  return a.runnerVolume / V0 + 1e-9 < b.runnerVolume / V0 ||
    (Math.abs(a.runnerVolume - b.runnerVolume) <= 1e-9 * V0 && a.cost < b.cost);
}

/** Progress across the front's re-balances: one running iteration count and simulation total. */
class FrontProgress {
  iterations = 0;
  /** Simulations before the re-balance now running. */
  simulations = 0;
  constructor(private readonly onProgress?: (iteration: BalanceIteration) => void) {}
  report(i: BalanceIteration): void {
    this.onProgress?.({
      ...i,
      iteration: ++this.iterations,
      simulations: this.simulations + i.simulations,
    });
  }
}
