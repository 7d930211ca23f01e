import { mToMm } from "../model/units.ts";
import type { SlopeSource } from "../wire/enums.ts";
import type { ContinuousOutcome, ContinuousSolver } from "./continuous_slp.ts";
import { cutterCatalogue } from "./cutters.ts";
import { applyDesign, type DesignSpace, designSpace } from "./design_space.ts";
import { type DesignEvaluation, evaluateDesign, simulationsOf } from "./evaluate_design.ts";
import type { LpSolver } from "./lp_solver.ts";
import { type Sensitivities, tangentSensitivities } from "./sensitivities.ts";
import {
  snapDesign,
  snapMethod,
  snappedBetter,
  type SnapReport,
  snapVerdict,
} from "./snap_design.ts";
import { LP_BAND_SHARE, snappedMerit } from "./slp_step.ts";
import {
  diveRunnerCutters,
  mixedIntegerRunnerCutters,
  relaxAndFixRunners,
  remap,
} from "./snap_runners.ts";
import { inPhase } from "./run_meter.ts";
import { type StopOptions, stopReason } from "./stop.ts";

/**
 * The discrete half of balancing: from a continuous optimum to sizes a toolroom can cut
 * (runner cutters from the scenario's catalogue, gates to their step). The continuous
 * solver is a parameter: where a choice of runner cutters needs the gates balanced again,
 * this module runs it on the sub-space of the gates (runners fixed), then snaps that.
 *
 * Order of attempts, the best snapped design judged on the full simulation winning:
 * 1. nearest cutters with repair flips (`snap_design.ts`);
 * 2. when that breaks a limit and the tool has both runners and gates: every runner's cutter
 *    chosen at once on the linear model (a mixed-integer program; the sequential dive if the
 *    solver has no integers), the gates re-balanced with the runners fixed and snapped, up to
 *    {@link CUTTER_ROUNDS} times, each round linearised where the last one landed (once, when
 *    the continuous optimum itself breaks a limit: {@link CUTTER_ROUNDS_PAST_OPTIMUM_LIMITS});
 * 3. when still infeasible and the tool has at most {@link RELAX_AND_FIX_MAX_RUNNERS}
 *    adjustable runners: relax-and-fix (`snap_runners.ts`), one short re-balance per runner.
 *
 * @module
 */

/** Rounds of choosing the runner cutters together, each linearised where the last one landed. */
export const CUTTER_ROUNDS = 3;
/**
 * Rounds when the continuous optimum itself breaks a limit. Later rounds re-linearise to mend
 * a limit that snapping broke; a limit the optimum breaks (a gate's shear no size within its
 * bounds brings under the limit) is not one a choice of cutters mends. Measured on the bench's
 * 11 cases with infeasible optima (generated 4-, 6-, 8- and 16-cavity families, several seeds):
 * rounds 2 and 3 changed no result and cost up to 35 % of the run (`optimize_runs.ts`).
 */
export const CUTTER_ROUNDS_PAST_OPTIMUM_LIMITS = 1;
/** Relax-and-fix costs one short SLP per runner: kept to tools with few adjustable runners. */
export const RELAX_AND_FIX_MAX_RUNNERS = 8;
/** Iterations of the gates' re-balance after the runners are fixed (the gates start balanced). */
const GATE_REBALANCE_ITERATIONS = 20;

/** What the cutter strategy needs besides the space and the continuous optimum. */
export interface CutterStrategyOptions extends StopOptions {
  solver: LpSolver;
  /** The continuous solver, run on sub-spaces (gates alone; the sizes relax-and-fix leaves free). */
  continuous: ContinuousSolver;
  /** Slopes and starting sizes of the gates' re-balance (as the whole run's). */
  slopes?: SlopeSource;
  start?: ReadonlyMap<string, number>;
}

/** The snapped design and how it was reached. */
export interface CutterOutcome {
  after: DesignEvaluation;
  snap: SnapReport;
  simulations: number;
}

/** Snap a continuous optimum to cutter sizes (see the module's order of attempts). */
export async function snapToCutters(
  space: DesignSpace,
  continuous: ContinuousOutcome,
  options: CutterStrategyOptions,
): Promise<CutterOutcome> {
  const nearest = await inPhase("cutter_nearest", () => nearestSnap(space, continuous));
  const together = await inPhase(
    "cutter_rounds",
    () => runnerCutterRounds(space, continuous, nearest, options),
  );
  return await relaxIfInfeasible(space, continuous, together, options);
}

/** Attempt 1: nearest cutters and gate steps with repair flips, judged against today's volume. */
function nearestSnap(space: DesignSpace, continuous: ContinuousOutcome): CutterOutcome {
  const snap = snapDesign(space, continuous.optimum, continuous.slopesAtOptimum, {
    merit: judgeOf(space, continuous),
  });
  return { after: snap.evaluation, snap, simulations: snap.simulations };
}

/** The merit a snapped design is ranked by: volume relative to the space's today, limits first. */
function judgeOf(space: DesignSpace, continuous: ContinuousOutcome) {
  const epsilon = space.scenario.goals.max_imbalance_percent / 100;
  const V0 = continuous.referenceVolume;
  return (e: DesignEvaluation) => snappedMerit(e, epsilon, V0);
}

/**
 * Attempt 2, when the best so far breaks a limit and the tool has runners and gates: every
 * runner's cutter chosen at once on the linear model (one binary per runner between its two
 * neighbouring cutters; the sequential dive if the solver has no integers), the gates
 * re-balanced with the runners fixed and snapped (attempts 1 and 3 on the gates' space);
 * while a limit still breaks, linearise again where the round landed (one simulation with
 * its tangent) and choose again.
 */
async function runnerCutterRounds(
  space: DesignSpace,
  continuous: ContinuousOutcome,
  best: CutterOutcome,
  options: CutterStrategyOptions,
): Promise<CutterOutcome> {
  const current = continuous.optimum;
  const linear = continuous.slopesAtOptimum;
  const epsilon = space.scenario.goals.max_imbalance_percent / 100;
  const V0 = continuous.referenceVolume;
  const judge = judgeOf(space, continuous);
  const catalogue = cutterCatalogue(space.scenario.goals.cutters);
  const gates = space.variables.filter((v) => v.kind === "gate").length;
  if (
    best.after.feasible || !linear || gates === 0 || gates === space.variables.length ||
    catalogue.kind !== "discrete"
  ) return best;
  let { after, snap, simulations } = best;
  const tried = new Set<string>();
  let base = current;
  let slopes: Sensitivities | undefined = linear;
  const rounds = current.feasible ? CUTTER_ROUNDS : CUTTER_ROUNDS_PAST_OPTIMUM_LIMITS;
  for (let round = 0; round < rounds && slopes && !after.feasible; round++) {
    if (stopReason(options)) break;
    const cut = { epsilon: LP_BAND_SHARE * epsilon, V0, catalogue };
    const chosen = (await mixedIntegerRunnerCutters(space, base, slopes, options.solver, {
      ...cut,
      around: current.x,
    }))?.x ??
      (round === 0
        ? await diveRunnerCutters(space, current, linear, options.solver, cut)
        : undefined);
    if (!chosen) break;
    const key = space.variables.flatMap((v, j) => (v.kind === "runner" ? [chosen[j]] : []))
      .join(",");
    if (tried.has(key)) break;
    tried.add(key);
    const gateSpace = runnersFixed(space, chosen);
    const rebalanced = await options.continuous(gateSpace, {
      solver: options.solver,
      maxIterations: GATE_REBALANCE_ITERATIONS,
      slopes: options.slopes,
      start: options.start,
      signal: options.signal,
      deadline: options.deadline,
    });
    if (!rebalanced.ok) break;
    simulations += rebalanced.outcome.simulations;
    // A stopped re-balance is not snapped: the run is ending.
    if (rebalanced.outcome.status === "cancelled") break;
    const gateSnap = await relaxIfInfeasible(
      gateSpace,
      rebalanced.outcome,
      nearestSnap(gateSpace, rebalanced.outcome),
      options,
    );
    simulations += gateSnap.simulations;
    const refined = remap(space, gateSpace, gateSnap.after);
    if (snappedBetter(refined, after, judge)) {
      after = refined;
      const continuousOf = new Map(space.variables.map((v, j) => [v.element, current.x[j]]));
      const runnerChoices = space.variables.flatMap((v, j) =>
        v.kind === "runner"
          ? [{
            element: v.element,
            continuous: current.x[j],
            snapped: refined.x[j],
            label: `${mToMm(refined.x[j])} mm`,
          }]
          : []
      );
      // The gates' choices name the whole tool's continuous optimum, not the re-balance's.
      const gateChoices = gateSnap.snap.choices.map((c) => ({
        ...c,
        continuous: continuousOf.get(c.element) ?? c.continuous,
      }));
      snap = {
        evaluation: refined,
        simulations: best.simulations + rebalanced.outcome.simulations + gateSnap.simulations,
        choices: [...runnerChoices, ...gateChoices],
        message:
          `runner cutters chosen together with the gates free, gates re-balanced and snapped to ${
            snapMethod(catalogue)
          }; ${snapVerdict(current, refined)}`,
      };
    }
    if (after.feasible || round + 1 >= rounds) break;
    const again = evaluateDesign(space, refined.x, { slopes: true });
    simulations += simulationsOf(again);
    if (!again.ok) break;
    base = again.evaluation;
    slopes = tangentSensitivities(space, base);
  }
  return { after, snap, simulations };
}

/**
 * Attempt 3, when the best so far still breaks a limit and the space has at most
 * {@link RELAX_AND_FIX_MAX_RUNNERS} runners: relax-and-fix (`snap_runners.ts`; on a space
 * of gates alone it is a fresh snap from the optimum's own, uncorrected tangent).
 */
async function relaxIfInfeasible(
  space: DesignSpace,
  continuous: ContinuousOutcome,
  best: CutterOutcome,
  options: CutterStrategyOptions,
): Promise<CutterOutcome> {
  const runnerCount = space.variables.filter((v) => v.kind === "runner").length;
  if (best.after.feasible || runnerCount > RELAX_AND_FIX_MAX_RUNNERS || stopReason(options)) {
    return best;
  }
  const fixed = await inPhase(
    "relax_and_fix",
    () => relaxAndFixRunners(space, continuous.optimum, options),
  );
  if (!fixed) return best;
  const simulations = best.simulations + fixed.simulations;
  if (!snappedBetter(fixed.evaluation, best.after, judgeOf(space, continuous))) {
    return { ...best, simulations };
  }
  return {
    after: fixed.evaluation,
    snap: {
      ...fixed,
      message:
        `runners fixed to cutters one at a time, the rest re-balanced after each; ${fixed.message}`,
    },
    simulations,
  };
}
/** The space of the gates alone, with the runners fixed at the sizes of `x`. */
function runnersFixed(space: DesignSpace, x: ArrayLike<number>): DesignSpace {
  const fixed = applyDesign(space, x);
  for (const v of space.variables) {
    if (v.kind === "runner") fixed.runners[v.index].adjustable = false;
  }
  return designSpace(fixed);
}
