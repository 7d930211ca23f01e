import { mmToM, mToMm } from "../model/units.ts";
import type { SlopeSource } from "../wire/enums.ts";
import type { DesignSpace } from "./design_space.ts";
import {
  type DesignEvaluation,
  evaluateDesign,
  runnerVolumeOf,
  simulationsOf,
} from "./evaluate_design.ts";
import type { LpSolver } from "./lp_solver.ts";
import {
  broydenSensitivities,
  finiteDifferenceSensitivities,
  type Sensitivities,
  tangentSensitivities,
} from "./sensitivities.ts";
import {
  formulateStep,
  imbalanceViolation,
  LP_BAND_SHARE,
  LP_LIMIT_SHARE,
  modelMerit,
  modelResponses,
  PENALTY,
  violation,
} from "./slp_step.ts";
import { nextTurn, type StopOptions, stopReason, stopText } from "./stop.ts";

/**
 * The continuous half of balancing: sequential linear programming (SLP) with a trust
 * region over the real-valued sizes of a design space. The discrete half (cutter sizes,
 * `cutter_strategy.ts`) takes this solver as a parameter.
 *
 * Problem: minimise the cold runner volume V(x) over the adjustable sizes x, subject to
 * fill-time imbalance ≤ ε, every gate's peak wall shear ≤ the resin's limit, peak feed
 * pressure ≤ fraction × machine, each feeding runner ≥ the runner it feeds, and the bounds
 * of the design space.
 *
 * What the LP steers with. At a constant injection rate the last cavity always fills at
 * V/Q, and the peak shear and pressure up to switchover jump with the order in which
 * cavities fill (over-packing): all three have kinks exactly at balance. The LP therefore
 * uses smooth stand-ins: split fill times (each cavity's intake near the end of the split,
 * extrapolated; `evaluate_design.ts`), the gate shear before the first cavity is full with
 * mean-flow slopes (`sensitivities.ts`), and the feed pressure at the split's reference
 * instant. Feasibility is always judged on the simulated fill times and peaks; where the
 * peaks break a limit the stand-ins meet, the LP's aims narrow (imbalance band, per-gate
 * shear share).
 *
 * Slopes. By default each simulation carries its own tangent (`network/fill_tangent.ts`:
 * the fill linearised along every size at once), and after a well-predicted step the new
 * design's tangent is corrected along that step by a Broyden update (the tangent holds the
 * temperatures and frozen layers fixed). `slopes: "finite_difference"` uses one extra
 * simulation per size instead, refreshed at least every third iteration.
 *
 * Iteration (Fletcher's Sℓ₁LP form: Fletcher & de la Maza (1989) Math. Programming 43:235;
 * trust-region ratio test as in Conn, Gould & Toint, *Trust-Region Methods*, 2000, ch. 6):
 * solve the LP of `slp_step.ts` in trust-region units, re-simulate the step; when the merit
 * falls by less than {@link GOOD_STEP_RATIO} of the linear model's prediction, try a
 * second-order correction (the same LP with each row tightened by its miss at the trial;
 * Fletcher, *Practical Methods of Optimization*, 2nd ed., §14.4); accept if the merit
 * φ = V/V₀ + M·violation falls by at least {@link ACCEPT_RATIO} of the predicted fall. The
 * region doubles after a good step at its edge and halves after a rejection. Stops:
 * converged (feasible and the LP gains less than {@link LP_GAIN_TOLERANCE}, or its rejected
 * step promised no fall of the merit, or the region below {@link MIN_TRUST_RADIUS}),
 * infeasible (the region collapsed with limits still violated; the last LP is solved again
 * with the rule and mode bounds lifted to say which change would be needed), iteration
 * limit, or stopped (signal or deadline). Every accepted design is a full simulation.
 *
 * @module
 */

/** Why the continuous solver stopped. */
export type ContinuousStatus = "converged" | "infeasible" | "iteration_limit" | "cancelled";

/** One SLP iteration, for the history and progress reports. */
export interface BalanceIteration {
  iteration: number;
  accepted: boolean;
  imbalancePercent: number;
  feedPressurePeak: number;
  runnerVolume: number;
  merit: number;
  predictedReduction: number;
  actualReduction: number;
  trustRadius: number;
  /** Simulations of this solver so far. */
  simulations: number;
  /** The current design meets every limit. */
  feasible: boolean;
}

/** Options of {@link solveContinuous}. */
export interface ContinuousOptions extends StopOptions {
  /** LP adapter. */
  solver: LpSolver;
  /** Iteration limit (default {@link DEFAULT_MAX_ITERATIONS}). */
  maxIterations?: number;
  /** Called after every iteration. */
  onProgress?: (iteration: BalanceIteration) => void;
  /** Starting sizes by element id, m (default: today's sizes, clamped into the bounds). */
  start?: ReadonlyMap<string, number>;
  /** Where the slopes come from (default `"tangent"`). */
  slopes?: SlopeSource;
  /**
   * Today's design is needed only for its runner volume (the merit's reference, from geometry):
   * it is not simulated unless the run starts there (default false). For re-balances inside
   * the cutter choice, whose today nobody reports.
   */
  todayVolumeOnly?: boolean;
  /**
   * Share of each limit the LP aims at: room below the limits for the cutter snapping
   * ({@link LP_LIMIT_SHARE}), or {@link CONTINUOUS_LIMIT_SHARE} when the scenario asks for
   * continuous sizes (the default follows `goals.cutters`).
   */
  limitShare?: number;
}

/** What the continuous solver found. */
export interface ContinuousOutcome {
  status: ContinuousStatus;
  reason: string;
  space: DesignSpace;
  /** Today's design, simulated (the start design with `todayVolumeOnly`, when it starts elsewhere). */
  before: DesignEvaluation;
  /** Today's cold runner volume, m³: the merit's reference V₀. */
  referenceVolume: number;
  /** The last accepted design. */
  optimum: DesignEvaluation;
  /** The linearisation at (or last before) the optimum: what the cutter choice builds on. */
  slopesAtOptimum?: Sensitivities;
  iterations: BalanceIteration[];
  simulations: number;
  /** When infeasible: changes outside today's bounds that the linear model says would help. */
  wouldNeed: string[];
}

/** Expected failures as values. */
export type ContinuousResult =
  | { ok: true; outcome: ContinuousOutcome }
  | {
    ok: false;
    code: "bounds_conflict" | "no_variables" | "simulation_failed" | "lp_failed";
    message: string;
  };

/** The continuous solver as the cutter strategy receives it. */
export type ContinuousSolver = (
  space: DesignSpace,
  options: ContinuousOptions,
) => Promise<ContinuousResult>;

/** Iterations unless the caller says otherwise: the demos converge in 10–30. */
export const DEFAULT_MAX_ITERATIONS = 40;
/** First trust region, as a fraction of each size: a 20 % change stays near linear for fill times. */
const INITIAL_TRUST_RADIUS = 0.2;
/**
 * Largest trust region, as a fraction of each size. With tangent slopes, 0.3 converged in
 * fewer simulations (family demo 20 vs 25, generated 16-cavity family 35 vs 49) but landed
 * the family demo on a continuous optimum whose cutter sizes miss the shear limit of one
 * gate by 2.7 %; 0.5 is kept until the snapping is less sensitive to where the optimum lies.
 */
const MAX_TRUST_RADIUS = 0.5;
/** Below this region (fraction of the sizes) the solver stops: steps are under a cutter's tolerance. */
const MIN_TRUST_RADIUS = 2e-3;
/** A step is accepted when the merit falls by at least this share of the predicted fall (Conn et al. ch. 6). */
const ACCEPT_RATIO = 0.1;
/**
 * A step is good (the region may grow, its slopes may be carried by Broyden, no second-order
 * correction is needed) when the merit falls by at least this share of the prediction.
 */
const GOOD_STEP_RATIO = 0.75;
/** Converged when the LP's own objective gains less than this (merit units: V/V₀). */
const LP_GAIN_TOLERANCE = 1e-7;
/** The imbalance band never narrows below this share of the target (a floor for the halving). */
const BAND_FLOOR_SHARE = 0.05;
/** A gate's shear share never narrows below half its limit (beyond, the gate itself must change). */
const SHEAR_SHARE_FLOOR = 0.5;
/** A gate's shear share is set 2 % under its measured overshoot, so one narrowing usually suffices. */
const SHEAR_SHARE_MARGIN = 0.98;
/** Finite-difference slopes are carried by Broyden updates at most this many iterations. */
const FD_BROYDEN_AGE = 2;
/** Time limit of one LP, s: the programs are small; this only guards a stalled solver. */
export const LP_TIME_LIMIT_S = 20;
/** Share of the limits a continuous answer aims at (no cutter snapping follows): just inside. */
export const CONTINUOUS_LIMIT_SHARE = 0.999;
/** The generous box the infeasibility explanation searches, as multiples of today's sizes. */
const EXPLAIN_BOX = [0.3, 3] as const;

/** Run the SLP on a design space. */
export async function solveContinuous(
  space: DesignSpace,
  options: ContinuousOptions,
): Promise<ContinuousResult> {
  if (space.variables.length === 0) {
    return {
      ok: false,
      code: "no_variables",
      message: "No element is marked adjustable: nothing to change.",
    };
  }
  if (space.conflicts.length > 0) {
    return {
      ok: false,
      code: "bounds_conflict",
      message: `Size bounds cannot all hold: ${space.conflicts.join("; ")}`,
    };
  }
  const solver = options.solver;
  const scenario = space.scenario;
  const maxIterations = options.maxIterations ?? DEFAULT_MAX_ITERATIONS;
  const stop = { signal: options.signal, deadline: options.deadline };
  let simulations = 0;

  const useTangent = (options.slopes ?? "tangent") === "tangent";
  // Trial designs stop with the run; today's and the start design are always simulated whole.
  const evaluate = (x: Float64Array, stoppable = true) => {
    const outcome = evaluateDesign(space, x, { slopes: useTangent, ...(stoppable ? stop : {}) });
    simulations += simulationsOf(outcome);
    return outcome;
  };

  const start = Float64Array.from(
    space.variables,
    (v) => Math.min(v.upper, Math.max(v.lower, options.start?.get(v.element) ?? v.current)),
  );
  const today = Float64Array.from(space.variables, (v) => v.current);
  const startsToday = start.every((v, j) => v === today[j]);
  // Today's runner volume is geometry: with `todayVolumeOnly`, today is not simulated.
  const beforeOutcome = options.todayVolumeOnly && !startsToday
    ? undefined
    : evaluate(today, false);
  if (beforeOutcome && !beforeOutcome.ok) {
    return { ok: false, code: "simulation_failed", message: beforeOutcome.message };
  }
  const currentOutcome = startsToday && beforeOutcome ? beforeOutcome : evaluate(start, false);
  if (!currentOutcome.ok) {
    return { ok: false, code: "simulation_failed", message: currentOutcome.message };
  }
  let current = currentOutcome.evaluation;
  const before = beforeOutcome?.evaluation ?? current;
  const V0 = beforeOutcome ? before.runnerVolume : runnerVolumeOf(space, today);
  const epsilon = scenario.goals.max_imbalance_percent / 100;
  const merit = (e: DesignEvaluation) => e.runnerVolume / V0 + PENALTY * violation(e, epsilon);

  let radius = INITIAL_TRUST_RADIUS;
  let lpEpsilon = LP_BAND_SHARE * epsilon;
  // Room below the limits for the cutter snapping; none for a continuous answer.
  const limitShare = options.limitShare ??
    (scenario.goals.cutters === "continuous" ? CONTINUOUS_LIMIT_SHARE : LP_LIMIT_SHARE);
  const shearShare: number[] = current.gateShear.map(() => limitShare);
  const iterations: BalanceIteration[] = [];
  let status: ContinuousStatus = "iteration_limit";
  let reason = `stopped after ${maxIterations} iterations`;
  /** Slopes of the last LP solved (kept when a rejected step drops the current ones). */
  let lastSens: Sensitivities | undefined;
  let sens: Sensitivities | undefined;
  let sensAge = 0;

  for (let iteration = 1; iteration <= maxIterations; iteration++) {
    await nextTurn();
    const stopped = stopReason(stop);
    if (stopped) {
      status = "cancelled";
      reason = stopText(stopped);
      break;
    }
    if (!sens) {
      const s = (useTangent ? tangentSensitivities(space, current) : undefined) ??
        finiteDifferenceSensitivities(space, current, stop);
      if ("failure" in s) {
        if (s.stopped) {
          status = "cancelled";
          reason = stopText(s.stopped);
          break;
        }
        return { ok: false, code: "simulation_failed", message: s.failure };
      }
      simulations += s.simulations;
      sens = s;
      sensAge = 0;
    }
    // The LP aims inside the band (70 % of the target) so that linearisation and simulation
    // noise at the 1e-4 level do not leave the accepted design a hair outside it.
    // The split fill times the LP steers with can sit inside its band while the simulated
    // ones are still outside the target: then the band narrows.
    if (
      imbalanceViolation(current.splitFillTimes, lpEpsilon) === 0 &&
      current.imbalancePercent > scenario.goals.max_imbalance_percent
    ) lpEpsilon = Math.max(BAND_FLOOR_SHARE * epsilon, lpEpsilon / 2);
    // Likewise a gate whose balanced shear meets its share while its peak up to switchover
    // (over-packing after the first cavity is full) breaks the limit: its share shrinks.
    current.gateShear.forEach((peak, i) => {
      const balanced = current.gateShearBalanced[i];
      const limit = current.gateShearLimit;
      if (peak > limit && balanced <= shearShare[i] * limit * (1 + 1e-9)) {
        shearShare[i] = Math.max(
          SHEAR_SHARE_FLOOR,
          SHEAR_SHARE_MARGIN * shearShare[i] * (limit / peak),
        );
      }
    });
    const aims = { radius, epsilon: lpEpsilon, limitShare, shearShare, V0 };
    const program = formulateStep(space, current, sens, aims);
    lastSens = sens;
    const lp = await solver.solve(program.lp, { timeLimitSeconds: LP_TIME_LIMIT_S });
    if (lp.status !== "optimal") {
      return {
        ok: false,
        code: "lp_failed",
        message: `LP step ${iteration}: ${lp.status} ${"message" in lp ? lp.message : ""}`,
      };
    }
    const step = program.toDesign(lp.x);
    const meritNow = merit(current);
    // Predicted fall of the merit itself (the LP aims inside the limits, so its own
    // objective would promise more than the merit can show).
    const predicted = modelMerit(space, current, sens, current.x, { epsilon, V0 }) -
      modelMerit(space, current, sens, step.x, { epsilon, V0 });
    // What the LP itself expects to gain (its objective has no constant term).
    const lpGain = program.linearMeritAtZero - (current.runnerVolume / V0 + lp.objective);
    const trialOutcome = evaluate(step.x);
    let accepted = false;
    let actual = 0;
    let trialResult = trialOutcome;
    if (
      trialOutcome.ok && meritNow - merit(trialOutcome.evaluation) < GOOD_STEP_RATIO * predicted
    ) {
      // Second-order correction (Fletcher, *Practical Methods of Optimization*, 2nd ed.,
      // §14.4): the responses curve away from their tangents along the step; tighten each
      // row by its miss at the trial and solve the same linearisation again.
      const t = trialOutcome.evaluation;
      const model = modelResponses(space, current, sens, step.x);
      const miss = (actualValue: number, modelValue: number) =>
        actualValue > 0 && modelValue > 0 ? Math.log(actualValue / modelValue) : 0;
      const corrected = formulateStep(space, current, sens, {
        ...aims,
        shifts: {
          times: t.splitFillTimes.map((v, i) => miss(v, model.times[i])),
          shear: t.gateShearBalanced.map((v, i) => miss(v, model.shear[i])),
          pressure: miss(t.feedPressurePeak, model.pressure),
        },
      });
      const lp2 = await solver.solve(corrected.lp, { timeLimitSeconds: LP_TIME_LIMIT_S });
      if (lp2.status === "optimal") {
        const second = evaluate(corrected.toDesign(lp2.x).x);
        if (second.ok && merit(second.evaluation) < merit(t)) trialResult = second;
      }
    }
    if (trialResult.ok) {
      const trial = trialResult.evaluation;
      actual = meritNow - merit(trial);
      accepted = predicted > 0 && actual >= ACCEPT_RATIO * predicted;
      if (accepted) {
        const good = actual >= GOOD_STEP_RATIO * predicted;
        const previous = current;
        current = trial;
        if (useTangent) {
          // The new design's own tangent; a well-predicted step also corrects it along the
          // step just taken (the tangent leaves out the thermal feedback). The update reads
          // the fresh slopes in the log measure of the previous design, as it does slopes
          // carried forward; reading them at the new design instead converged to heavier
          // runners on two demos (family 9.76 vs 5.64 cm³, frame and knob 10.19 vs 5.81).
          const fresh = tangentSensitivities(space, trial);
          sens = fresh && good ? broydenSensitivities(space, fresh, previous, trial, fresh) : fresh;
        } else if (good && sensAge < FD_BROYDEN_AGE && sens) {
          sens = broydenSensitivities(space, sens, previous, trial);
          sensAge++;
        } else sens = undefined;
        if (good && step.atEdge) radius = Math.min(MAX_TRUST_RADIUS, radius * 2);
      } else radius *= 0.5;
    } else if (trialResult.stopped) {
      status = "cancelled";
      reason = stopText(trialResult.stopped);
      break;
    } else radius *= 0.5;
    const record: BalanceIteration = {
      iteration,
      accepted,
      imbalancePercent: current.imbalancePercent,
      feedPressurePeak: current.feedPressurePeak,
      runnerVolume: current.runnerVolume,
      merit: merit(current),
      predictedReduction: predicted,
      actualReduction: actual,
      trustRadius: radius,
      simulations,
      feasible: current.feasible,
    };
    iterations.push(record);
    options.onProgress?.(record);
    const feasible = violation(current, epsilon) === 0;
    // Stop when the linear model sees nothing left to gain: the LP's own objective, or the
    // merit along the LP's step (the LP aims inside the limits, so at a feasible design
    // whose gain is all in that margin its step only costs volume).
    if (feasible && (lpGain < LP_GAIN_TOLERANCE || (!accepted && predicted <= 0))) {
      status = "converged";
      reason =
        "every limit met and no step the linear model trusts lowers the runner volume further";
      break;
    }
    if (radius < MIN_TRUST_RADIUS) {
      status = feasible ? "converged" : "infeasible";
      reason = feasible
        ? "every limit met; the trust region has shrunk to below 0.2 % of the sizes"
        : "limits still violated and no step within the bounds improves them";
      break;
    }
  }

  if (status === "converged" && !current.feasible) {
    status = "infeasible";
    reason = "the smooth model's limits are met, but the simulated design still breaks a limit";
  }
  const wouldNeed = status === "infeasible" && lastSens
    ? await explainInfeasible(space, current, lastSens, solver, { epsilon, V0 })
    : [];
  if (status === "infeasible") {
    reason +=
      `; best imbalance reached ${
        current.imbalancePercent.toFixed(2)
      } % (target ${scenario.goals.max_imbalance_percent} %)` +
      `; binding: ${current.violations.map((v) => v.message).join("; ") || "none"}`;
  }
  return {
    ok: true,
    outcome: {
      status,
      reason,
      space,
      before,
      referenceVolume: V0,
      optimum: current,
      slopesAtOptimum: sens ?? lastSens,
      iterations,
      simulations,
      wouldNeed,
    },
  };
}

/**
 * For an infeasible outcome: solve the last linear model again with the mode's and
 * the size rules' bounds lifted (a generous region, {@link EXPLAIN_BOX} × today's sizes),
 * leaving them at a cost, and list the sizes that would have to leave today's bounds.
 */
async function explainInfeasible(
  space: DesignSpace,
  e: DesignEvaluation,
  s: Sensitivities,
  solver: LpSolver,
  o: { epsilon: number; V0: number },
): Promise<string[]> {
  const [shrink, grow] = EXPLAIN_BOX;
  const lower = space.variables.map((v) => v.current * shrink);
  // A gate never deeper than its cavity's wall, even with the rules lifted.
  const wallOf = (v: (typeof space.variables)[number]) => {
    const cavity = space.scenario.gates[v.index].cavity;
    return mmToM(space.scenario.cavities.find((c) => c.id === cavity)!.wall_mm);
  };
  const upper = space.variables.map((v) =>
    v.kind === "gate" ? Math.min(v.current * grow, wallOf(v)) : v.current * grow
  );
  const program = formulateStep(space, e, s, {
    radius: 1,
    epsilon: o.epsilon,
    limitShare: 1,
    V0: o.V0,
    bounds: { lower, upper },
  });
  // Leaving today's bounds costs 1 per unit of log size (above the volume's cost, below a
  // limit's penalty), so the answer names the fewest, smallest moves out of them.
  const variables = [...program.lp.variables];
  const rows = [...program.lp.rows];
  space.variables.forEach((v, j) => {
    variables.push({ name: `over_${v.element}`, lower: 0, upper: Infinity, cost: 1 });
    rows.push({
      name: `within_upper_${v.element}`,
      terms: [[j, 1], [variables.length - 1, -1]],
      lower: -Infinity,
      upper: Math.log(v.upper / e.x[j]),
    });
    variables.push({ name: `under_${v.element}`, lower: 0, upper: Infinity, cost: 1 });
    rows.push({
      name: `within_lower_${v.element}`,
      terms: [[j, 1], [variables.length - 1, 1]],
      lower: Math.log(v.lower / e.x[j]),
      upper: Infinity,
    });
  });
  const lp = await solver.solve({ ...program.lp, variables, rows }, {
    timeLimitSeconds: LP_TIME_LIMIT_S,
  });
  if (lp.status !== "optimal") return [];
  const proposal = space.variables.map((_, j) => e.x[j] * Math.exp(lp.x[j]));
  const needs: string[] = [];
  space.variables.forEach((v, j) => {
    const want = proposal[j];
    if (want < v.lower * (1 - 1e-3)) {
      needs.push(
        `${v.element} would have to go down to about ${
          mToMm(want).toFixed(2)
        } mm, below its ${v.lowerReason} (${mToMm(v.lower).toFixed(2)} mm)${
          v.lowerKind === "steel_safe" ? ": not steel-safe, needs steel added (weld or insert)" : ""
        }`,
      );
    } else if (want > v.upper * (1 + 1e-3)) {
      needs.push(
        `${v.element} would have to grow to about ${
          mToMm(want).toFixed(2)
        } mm, beyond ${v.upperReason} (${mToMm(v.upper).toFixed(2)} mm)`,
      );
    }
  });
  return needs;
}
