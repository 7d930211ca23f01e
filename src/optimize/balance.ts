import type { Scenario } from "../model/scenario_schema.ts";
import { type ChangePlan, planChanges } from "./change_list.ts";
import {
  type BalanceIteration,
  type ContinuousStatus,
  DEFAULT_MAX_ITERATIONS,
  solveContinuous,
} from "./continuous_slp.ts";
import { snapToCutters } from "./cutter_strategy.ts";
import { type DesignSpace, designSpace } from "./design_space.ts";
import type { DesignEvaluation } from "./evaluate_design.ts";
import { createHighsSolver } from "./highs_solver.ts";
import type { LpSolver } from "./lp_solver.ts";
import type { SnapReport } from "./snap_design.ts";
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
  slopes?: "tangent" | "finite_difference";
}

/** The steps of an optimization, in order. */
export type OptimizationStep = "continuous" | "cutters" | "changes";

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
  slopes: "tangent" | "finite_difference";
  /** When infeasible: changes outside today's bounds that the linear model says would help. */
  wouldNeed: string[];
  /** The change plan from today's design to `after`, when there was time for it. */
  changes?: ChangePlan;
  /** Why there is no change plan (stopped before it, or not asked for). */
  changesOmitted?: string;
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
  options.onStep?.("continuous", 0);
  const solved = await solveContinuous(space, {
    solver,
    maxIterations: options.maxIterations ?? DEFAULT_MAX_ITERATIONS,
    onProgress: options.onProgress,
    start: options.start,
    slopes: options.slopes,
    ...stop,
  });
  if (!solved.ok) return solved;
  const continuous = solved.outcome;
  let simulations = continuous.simulations;
  let status = continuous.status;
  let reason = continuous.reason;
  let after = continuous.optimum;
  let snap: SnapReport | undefined;
  // A stopped run reports the best design so far, unsnapped.
  if (!options.continuousOnly && status !== "cancelled") {
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
    if (status === "converged" && !after.feasible) {
      reason += "; the continuous optimum meets every limit but the design in cutter sizes " +
        `does not (${after.violations.map((v) => v.message).join("; ")}): see the cutter line`;
    }
  }
  const stoppedNow = stopReason(stop);
  if (stoppedNow && status !== "cancelled") {
    // Stopped during the cutter step: its best snapped design stands, but the run did not end.
    status = "cancelled";
    reason = `${stopText(stoppedNow)} while choosing cutter sizes; ${reason}`;
  }
  let changes: ChangePlan | undefined;
  let changesOmitted: string | undefined;
  if (options.withoutChanges) changesOmitted = "not asked for";
  else if (stopReason(stop)) {
    changesOmitted = `${stopText(stopReason(stop)!)} before the change plan`;
  } else {
    options.onStep?.("changes", simulations);
    const plan = await planChanges(space, continuous.before, after, snap, stop);
    simulations += plan.simulations;
    if (plan.complete) changes = plan;
    else {changesOmitted = `${
        plan.stopped ? stopText(plan.stopped) : "stopped"
      } during the change plan`;}
  }
  return {
    ok: true,
    outcome: {
      status,
      reason,
      space,
      before: continuous.before,
      continuous: continuous.optimum,
      after,
      snap,
      iterations: continuous.iterations,
      simulations,
      slopes: (options.slopes ?? "tangent") === "tangent" ? "tangent" : "finite_difference",
      wouldNeed: continuous.wouldNeed,
      changes,
      changesOmitted,
    },
  };
}
