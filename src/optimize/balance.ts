import type { Scenario } from "../model/scenario_schema.ts";
import { mToMm } from "../model/units.ts";
import type { SlopeSource } from "../wire/enums.ts";
import { type ChangePlan, planChanges } from "./change_list.ts";
import {
  type BalanceIteration,
  type ContinuousStatus,
  DEFAULT_MAX_ITERATIONS,
  solveContinuous,
} from "./continuous_slp.ts";
import { snapToCutters } from "./cutter_strategy.ts";
import { currentDesign, type DesignSpace, designSpace } from "./design_space.ts";
import { type DesignEvaluation, evaluateDesign } from "./evaluate_design.ts";
import { fewestChangeFront, type FewestChangesFront, slopesAt } from "./fewest_changes.ts";
import { remap } from "./snap_runners.ts";
import { createHighsSolver } from "./highs_solver.ts";
import type { LpSolver } from "./lp_solver.ts";
import type { SnapReport } from "./snap_design.ts";
import { inPhase } from "./run_meter.ts";
import { type StopOptions, stopReason, stopText } from "./stop.ts";

export type { BalanceIteration };

/**
 * Balancing a mold: the three steps of an optimization, each its own module.
 *
 * 1. Continuous sizes by sequential linear programming (`continuous_slp.ts`): the lightest
 *    cold runner whose cavities fill together within the target, with every gate's shear,
 *    the feed pressure and the feed order within their limits.
 * 2. Cutter sizes (`cutter_strategy.ts`), which receives the continuous solver to re-balance
 *    sub-spaces (the gates, once the runners are on cutters).
 * 3. The change plan (`change_list.ts`): every changed size in an order of work, each step
 *    simulated. Counted in `simulations` and stopped like the others.
 *
 * A signal or deadline ends the run between simulations with the best design so far (the
 * continuous optimum if cutters were not reached; no change plan if there was no time for
 * one, said in `changesOmitted`).
 */

/** Why the optimizer stopped. */
export type BalanceStatus = ContinuousStatus;

/** Options of {@link optimizeBalance}. */
export interface OptimizeBalanceOptions extends StopOptions {
  /** Iteration limit (default 40). */
  maxIterations?: number;
  /** LP adapter (default: HiGHS). */
  solver?: LpSolver;
  /** Called after every SLP iteration. */
  onProgress?: (iteration: BalanceIteration) => void;
  /** Called when a step begins, with the simulations spent so far. */
  onStep?: (step: OptimizationStep, simulations: number) => void;
  /** Skip the cutter snapping (continuous answer only). Default false. */
  continuousOnly?: boolean;
  /** Skip the change plan (its simulations). Default false. */
  withoutChanges?: boolean;
  /** Starting sizes by element id, m (default: today's sizes, clamped into the bounds). */
  start?: ReadonlyMap<string, number>;
  /**
   * Where the slopes come from: `"tangent"` (default), carried by each simulation
   * (`network/fill_tangent.ts`); or `"finite_difference"`, one extra simulation per size.
   */
  slopes?: SlopeSource;
}

/** The steps of an optimization, in order. */
export type OptimizationStep = "fewest_changes" | "continuous" | "cutters" | "changes";

/** What the optimizer found. */
export interface BalanceOutcome {
  status: BalanceStatus;
  reason: string;
  space: DesignSpace;
  before: DesignEvaluation;
  /** The continuous optimum (before snapping). */
  continuous: DesignEvaluation;
  /** The final design: snapped to the cutter catalogue (or = continuous). */
  after: DesignEvaluation;
  snap?: SnapReport;
  iterations: BalanceIteration[];
  /** Every simulation of the run, the change plan's included. */
  simulations: number;
  /** Where the slopes came from. */
  slopes: SlopeSource;
  /** When infeasible: changes outside today's bounds that the linear model says would help. */
  wouldNeed: string[];
  /** The change plan from today's design to `after`, when there was time for it. */
  changes?: ChangePlan;
  /** Why there is no change plan (stopped before it, or not asked for). */
  changesOmitted?: string;
  /** An existing tool's fewest-change front: per k changes, the best plan found. */
  front?: FewestChangesFront;
}

/** Expected failures as values. */
export type BalanceResult =
  | { ok: true; outcome: BalanceOutcome }
  | {
    ok: false;
    code: "bounds_conflict" | "no_variables" | "simulation_failed" | "lp_failed";
    message: string;
  };

/** Balance a validated scenario: continuous sizes, cutter sizes, the change plan. */
export async function optimizeBalance(
  scenario: Scenario,
  options: OptimizeBalanceOptions = {},
): Promise<BalanceResult> {
  const space = designSpace(scenario);
  const solver = options.solver ?? await createHighsSolver();
  const stop: StopOptions = { signal: options.signal, deadline: options.deadline };
  // An existing tool is changed as little as it can be (`fewest_changes.ts`).
  const existing = scenario.goals.mode !== "new_tool" && !options.continuousOnly &&
    space.variables.length > 0 && space.conflicts.length === 0;
  const fewest = existing
    ? await inPhase("fewest_changes", () => fewestChangePlan(space, solver, options, stop))
    : undefined;
  if (fewest && !fewest.ok) return fewest;
  const planned = fewest?.ok ? fewest.plan : undefined;
  const design = planned?.design ?? await allSizesDesign(space, solver, options, stop);
  if (!design.ok) return design;
  let { status, reason, simulations } = design;
  simulations += planned?.simulations ?? 0;
  const { before, continuous, after, snap } = design;
  const stoppedNow = stopReason(stop);
  if (stoppedNow && status !== "cancelled") {
    // Stopped during the cutter step: its best snapped design stands, but the run did not end.
    status = "cancelled";
    reason = `${stopText(stoppedNow)} while choosing cutter sizes; ${reason}`;
  }
  let changes: ChangePlan | undefined;
  let changesOmitted: string | undefined;
  const stoppedBefore = stopReason(stop);
  if (options.withoutChanges) changesOmitted = "not asked for";
  else if (stoppedBefore) changesOmitted = `${stopText(stoppedBefore)} before the change plan`;
  else {
    options.onStep?.("changes", simulations);
    const plan = await inPhase("changes", () => planChanges(space, before, after, snap, stop));
    simulations += plan.simulations;
    if (plan.complete) changes = plan;
    else {
      changesOmitted = `${
        plan.stopped ? stopText(plan.stopped) : "stopped"
      } during the change plan`;
    }
  }
  return {
    ok: true,
    outcome: {
      status,
      reason,
      space,
      before,
      continuous,
      after,
      snap,
      iterations: design.iterations,
      simulations,
      slopes: options.slopes ?? "tangent",
      wouldNeed: design.wouldNeed,
      changes,
      changesOmitted,
      front: planned?.front,
    },
  };
}

/** A design the driver reports: continuous and snapped, with how it was reached. */
interface ReachedDesign extends
  Pick<
    BalanceOutcome,
    | "status"
    | "reason"
    | "before"
    | "continuous"
    | "after"
    | "snap"
    | "iterations"
    | "simulations"
    | "wouldNeed"
  > {
  ok: true;
}

/** Steps 1 and 2 over every adjustable size: the lightest runner that meets every limit. */
async function allSizesDesign(
  space: DesignSpace,
  solver: LpSolver,
  options: OptimizeBalanceOptions,
  stop: StopOptions,
): Promise<ReachedDesign | Extract<BalanceResult, { ok: false }>> {
  options.onStep?.("continuous", 0);
  const solved = await inPhase("continuous", () =>
    solveContinuous(space, {
      solver,
      maxIterations: options.maxIterations ?? DEFAULT_MAX_ITERATIONS,
      onProgress: options.onProgress,
      start: options.start,
      slopes: options.slopes,
      ...stop,
    }));
  if (!solved.ok) return solved;
  const continuous = solved.outcome;
  let simulations = continuous.simulations;
  let reason = continuous.reason;
  let after = continuous.optimum;
  let snap: SnapReport | undefined;
  // A stopped run reports the best design so far, unsnapped.
  if (!options.continuousOnly && continuous.status !== "cancelled") {
    options.onStep?.("cutters", simulations);
    const snapped = await snapToCutters(space, continuous, {
      solver,
      continuous: solveContinuous,
      slopes: options.slopes,
      start: options.start,
      ...stop,
    });
    simulations += snapped.simulations;
    after = snapped.after;
    snap = snapped.snap;
    if (continuous.status === "converged" && !after.feasible) {
      reason += "; the continuous optimum meets every limit but the design in cutter sizes " +
        `does not (${after.violations.map((v) => v.message).join("; ")}): see the cutter line`;
    }
  }
  const wouldNeed = [...continuous.wouldNeed];
  if (!after.feasible && continuous.status === "converged") {
    wouldNeed.push(...roomNotes(space, continuous.optimum));
  }
  return {
    ok: true,
    status: continuous.status,
    reason,
    before: continuous.before,
    continuous: continuous.optimum,
    after,
    snap,
    iterations: continuous.iterations,
    simulations,
    wouldNeed,
  };
}

/**
 * When the continuous optimum meets every limit but no cutter design does: the sizes the
 * optimum holds at a size rule's ceiling or floor, where the rule (not the physics) leaves the
 * cutters no room — a larger sprue exit, a longer hold or a relaxed ratio would give them some.
 */
function roomNotes(space: DesignSpace, optimum: DesignEvaluation): string[] {
  const at = (a: number, b: number) => Math.abs(a - b) <= 1e-6 * b;
  const rule = (kind: string) => kind === "rule" || kind === "strict_rule";
  return space.variables.flatMap((v, j) => {
    const x = optimum.x[j];
    if (rule(v.upperKind) && at(x, v.upper)) {
      return [
        `${v.element} sits at its ${v.upperReason} (${mToMm(v.upper).toFixed(2)} mm): ` +
        "room above it would let the cutter sizes balance",
      ];
    }
    if (rule(v.lowerKind) && at(x, v.lower)) {
      return [
        `${v.element} sits at its ${v.lowerReason} (${mToMm(v.lower).toFixed(2)} mm): ` +
        "room below it would let the cutter sizes balance",
      ];
    }
    return [];
  });
}

/** The fewest-change plan of an existing tool, when one meets every limit (else only its front). */
async function fewestChangePlan(
  space: DesignSpace,
  solver: LpSolver,
  options: OptimizeBalanceOptions,
  stop: StopOptions,
): Promise<
  | { ok: true; plan: { front: FewestChangesFront; design?: ReachedDesign; simulations: number } }
  | Extract<BalanceResult, { ok: false }>
> {
  options.onStep?.("fewest_changes", 0);
  const todayOutcome = evaluateDesign(space, currentDesign(space), { slopes: true });
  if (!todayOutcome.ok) {
    return { ok: false, code: "simulation_failed", message: todayOutcome.message };
  }
  const today = todayOutcome.evaluation;
  const slopes = slopesAt(space, today, { ...stop, slopes: options.slopes });
  if (!slopes) return { ok: true, plan: { front: emptyFront(), simulations: 1 } };
  const front = await fewestChangeFront(space, today, slopes, {
    solver,
    continuous: solveContinuous,
    slopes: options.slopes,
    onProgress: options.onProgress,
    simulationsBefore: 1 + slopes.simulations,
    ...stop,
  });
  let simulations = 1 + slopes.simulations + front.simulations;
  const limit = space.scenario.goals.max_changes;
  const goal = space.scenario.goals.max_imbalance_percent;
  // The first plan (fewest changes) that still meets every limit in cutter sizes.
  front.chosen = undefined;
  for (const point of front.points) {
    if (!point.feasible || (limit !== undefined && point.elements.length > limit)) continue;
    if (stopReason(stop)) break;
    const k = point.elements.length;
    if (!point.solved) {
      front.chosen = point;
      const design: ReachedDesign = {
        ok: true,
        status: "converged",
        reason: `today's tool meets every limit (imbalance ${
          today.imbalancePercent.toFixed(2)
        } %, target ${goal} %): no change needed`,
        before: today,
        continuous: today,
        after: today,
        iterations: [],
        simulations: 0,
        wouldNeed: [],
      };
      return { ok: true, plan: { front, design, simulations } };
    }
    const sub = point.solved.space;
    options.onStep?.("cutters", simulations);
    const snapped = await snapToCutters(sub, point.solved, {
      solver,
      continuous: solveContinuous,
      ...stop,
    });
    simulations += snapped.simulations;
    const after = remap(space, sub, snapped.after);
    if (!after.feasible) continue;
    front.chosen = point;
    const design: ReachedDesign = {
      ok: true,
      status: "converged",
      reason: `every limit met with ${k} change${k === 1 ? "" : "s"}, the fewest found (${
        point.elements.join(", ")
      })`,
      before: today,
      continuous: remap(space, sub, point.solved.optimum),
      after,
      snap: { ...snapped.snap, evaluation: after },
      iterations: point.solved.iterations,
      simulations: 0,
      wouldNeed: [],
    };
    return { ok: true, plan: { front, design, simulations } };
  }
  if (limit !== undefined && !stopReason(stop)) {
    // No plan within the bound: the best within it, said honestly, with what would be needed.
    const within = front.points.filter((p) => p.elements.length <= limit && p.solved).at(-1);
    const needed = front.neededChanges;
    const wouldNeed = [
      needed !== undefined
        ? `${needed} changes would meet every limit (goals.max_changes is ${limit})`
        : `no plan with up to ${
          Math.max(limit, ...front.points.map((p) => p.changes))
        } changes meets every limit; raise goals.max_changes or relax a limit`,
    ];
    const best = within?.solved;
    const design: ReachedDesign = {
      ok: true,
      status: "infeasible",
      reason: `with at most ${limit} change${limit === 1 ? "" : "s"} the limits cannot all be met${
        best ? `; best imbalance reached ${best.optimum.imbalancePercent.toFixed(2)} %` : ""
      } (target ${goal} %)`,
      before: today,
      continuous: best ? remap(space, best.space, best.optimum) : today,
      after: best ? remap(space, best.space, best.optimum) : today,
      iterations: best?.iterations ?? [],
      simulations: 0,
      wouldNeed,
    };
    return { ok: true, plan: { front, design, simulations } };
  }
  return { ok: true, plan: { front, simulations } };
}

function emptyFront(): FewestChangesFront {
  return { points: [], simulations: 0 };
}
