import type { Scenario } from "../model/scenario_schema.ts";
import { mmToM, mToMm } from "../model/units.ts";
import { applyDesign, type DesignSpace, designSpace } from "./design_space.ts";
import { type DesignEvaluation, evaluateDesign } from "./evaluate_design.ts";
import { createHighsSolver } from "./highs_solver.ts";
import type { LpSolver } from "./lp_solver.ts";
import {
  broydenSensitivities,
  finiteDifferenceSensitivities,
  type Sensitivities,
  tangentSensitivities,
} from "./sensitivities.ts";
import {
  snapDesign,
  snapMethod,
  snappedBetter,
  type SnapReport,
  snapVerdict,
} from "./snap_design.ts";
import { cutterCatalogue } from "./cutters.ts";
import {
  formulateStep,
  imbalanceViolation,
  LP_BAND_SHARE,
  LP_LIMIT_SHARE,
  modelMerit,
  modelResponses,
  PENALTY,
  snappedMerit,
  violation,
} from "./slp_step.ts";
import {
  diveRunnerCutters,
  mixedIntegerRunnerCutters,
  relaxAndFixRunners,
  remap,
} from "./snap_runners.ts";

/**
 * Balancing by sequential linear programming (SLP) with a trust region.
 *
 * Problem: minimise the cold runner volume V(x) over the adjustable sizes x,
 * subject to fill-time imbalance ≤ ε, every gate's peak wall shear ≤ the resin's
 * limit, peak feed pressure ≤ fraction × machine, each feeding runner ≥ the runner
 * it feeds, and the bounds of the design space.
 *
 * What the LP steers with. At a constant injection rate the last cavity always
 * fills at V/Q, and the peak shear and pressure up to switchover jump with the
 * order in which cavities fill (over-packing): all three have kinks exactly at
 * balance. The LP therefore uses smooth stand-ins: split fill times (each cavity's intake near
 * the end of the split, extrapolated; `evaluate_design.ts`), the gate shear before
 * the first cavity is full with mean-flow slopes (`sensitivities.ts`), and the
 * feed pressure at the split's reference instant. Feasibility is always judged on
 * the simulated fill times and peaks; where the peaks break a limit the stand-ins
 * meet, the LP's aims narrow (imbalance band, per-gate shear share).
 *
 * Slopes. By default each simulation carries its own tangent (`network/fill_tangent.ts`:
 * the fill linearised along every size at once, about 1.5 plain simulations' cost
 * whatever the number of sizes), and after a well-predicted step the new design's
 * tangent is corrected along that step by a Broyden update (the tangent holds the
 * temperatures and frozen layers fixed). `slopes: "finite_difference"` uses one extra
 * simulation per size instead, refreshed at least every third iteration.
 *
 * Iteration (Fletcher's Sℓ₁LP form: Fletcher & de la Maza (1989) Math.
 * Programming 43:235; trust-region ratio test as in Conn, Gould & Toint,
 * *Trust-Region Methods*, 2000, ch. 6): solve the LP of `slp_step.ts` in trust-region
 * units, re-simulate the step; when the merit falls by less than 75 % of the
 * linear model's prediction, try a second-order correction (the same LP with each
 * row tightened by its miss at the trial; Fletcher, *Practical Methods of
 * Optimization*, 2nd ed., §14.4); accept if the merit φ = V/V₀ + M·violation falls
 * by at least 10 % of the predicted fall. The region doubles after a good step at
 * its edge and halves after a rejection. Stops: converged (feasible and the LP
 * gains less than 1e-7, or its rejected step promised no fall of the merit, or the
 * region below 0.2 % of the sizes), infeasible (the
 * region collapsed with limits still violated; the last LP is solved again with
 * the rule and mode bounds lifted to say which change would be needed), iteration
 * limit, or cancelled. Every accepted design is a full simulation.
 *
 * Then cutters: nearest runner cutters and gate steps with repair flips
 * (`snap_design.ts`); if a limit breaks, runner cutters chosen by a dive on the
 * linear model and by relax-and-fix (`snap_runners.ts`); the best snapped design
 * wins, judged on the simulation.
 */

/** Why the optimizer stopped. */
export type BalanceStatus = "converged" | "infeasible" | "iteration_limit" | "cancelled";

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
  simulations: number;
  /** The current design meets every limit. */
  feasible: boolean;
}

/** Options of {@link optimizeBalance}. */
export interface OptimizeBalanceOptions {
  /** Iteration limit (default 40). */
  maxIterations?: number;
  /** LP adapter (default: HiGHS). */
  solver?: LpSolver;
  /** Called after every iteration. */
  onProgress?: (iteration: BalanceIteration) => void;
  /** Polled between iterations; true stops with status "cancelled". */
  cancelled?: () => boolean;
  /** Skip the cutter snapping (continuous answer only). Default false. */
  continuousOnly?: boolean;
  /** Starting sizes by element id, m (default: today's sizes, clamped into the bounds). */
  start?: ReadonlyMap<string, number>;
  /**
   * Where the slopes come from: `"tangent"` (default), carried by each simulation
   * (`network/fill_tangent.ts`); or `"finite_difference"`, one extra simulation per size.
   */
  slopes?: "tangent" | "finite_difference";
}

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
  simulations: number;
  /** Where the slopes came from. */
  slopes: "tangent" | "finite_difference";
  /** When infeasible: changes outside today's bounds that the linear model says would help. */
  wouldNeed: string[];
}

/** Expected failures as values. */
export type BalanceResult =
  | { ok: true; outcome: BalanceOutcome }
  | {
    ok: false;
    code: "bounds_conflict" | "no_variables" | "simulation_failed" | "lp_failed";
    message: string;
  };

/**
 * Largest trust region, as a fraction of each size. With tangent slopes, 0.3 converged in
 * fewer simulations (family demo 20 vs 25, generated 16-cavity family 35 vs 49) but landed
 * the family demo on a continuous optimum whose cutter sizes miss the shear limit of one
 * gate by 2.7 %; 0.5 is kept until the snapping is less sensitive to where the optimum lies.
 */
const MAX_TRUST_RADIUS = 0.5;
/** Rounds of choosing the runner cutters together, each linearised where the last one landed. */
const CUTTER_ROUNDS = 3;
/** Relax-and-fix of the runner cutters is tried up to this many adjustable runners. */
export const RELAX_AND_FIX_MAX_RUNNERS = 8;

/** Balance a validated scenario. */
export async function optimizeBalance(
  scenario: Scenario,
  options: OptimizeBalanceOptions = {},
): Promise<BalanceResult> {
  const space = designSpace(scenario);
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
  const solver = options.solver ?? await createHighsSolver();
  const maxIterations = options.maxIterations ?? 40;
  let simulations = 0;

  const useTangent = (options.slopes ?? "tangent") === "tangent";
  const evaluate = (x: Float64Array) => {
    simulations++;
    return evaluateDesign(space, x, { slopes: useTangent });
  };

  const start = Float64Array.from(
    space.variables,
    (v) => Math.min(v.upper, Math.max(v.lower, options.start?.get(v.element) ?? v.current)),
  );
  const beforeOutcome = evaluate(Float64Array.from(space.variables, (v) => v.current));
  if (!beforeOutcome.ok) {
    return { ok: false, code: "simulation_failed", message: beforeOutcome.message };
  }
  const before = beforeOutcome.evaluation;
  let currentOutcome = start.every((v, j) => v === space.variables[j].current)
    ? beforeOutcome
    : evaluate(start);
  if (!currentOutcome.ok) {
    return { ok: false, code: "simulation_failed", message: currentOutcome.message };
  }
  let current = currentOutcome.evaluation;
  const V0 = before.runnerVolume;
  const epsilon = scenario.goals.max_imbalance_percent / 100;
  const merit = (e: DesignEvaluation) => e.runnerVolume / V0 + PENALTY * violation(e, epsilon);
  const judge = (e: DesignEvaluation) => snappedMerit(e, epsilon, V0);

  let radius = 0.2; // trust region as a fraction of each size
  let lpEpsilon = LP_BAND_SHARE * epsilon;
  // Room below the limits for the cutter snapping; none for a continuous answer.
  const limitShare = scenario.goals.cutters === "continuous" ? 0.999 : LP_LIMIT_SHARE;
  const shearShare: number[] = current.gateShear.map(() => limitShare);
  const iterations: BalanceIteration[] = [];
  let status: BalanceStatus = "iteration_limit";
  let reason = `stopped after ${maxIterations} iterations`;
  /** Slopes of the last LP solved (kept when a rejected step drops the current ones). */
  let lastSens: Sensitivities | undefined;
  let sens: Sensitivities | undefined;
  let sensAge = 0;

  for (let iteration = 1; iteration <= maxIterations; iteration++) {
    if (options.cancelled?.()) {
      status = "cancelled";
      reason = "cancelled by request";
      break;
    }
    if (!sens) {
      // Cancellation is polled between the finite-difference simulations too: one
      // iteration can take seconds.
      const s = (useTangent ? tangentSensitivities(space, current) : undefined) ??
        finiteDifferenceSensitivities(space, current, { cancelled: options.cancelled });
      if ("failure" in s) {
        if (s.cancelled) {
          status = "cancelled";
          reason = "cancelled by request";
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
    ) lpEpsilon = Math.max(0.05 * epsilon, lpEpsilon / 2);
    // Likewise a gate whose balanced shear meets its share while its peak up to switchover
    // (over-packing after the first cavity is full) breaks the limit: its share shrinks.
    current.gateShear.forEach((peak, i) => {
      const balanced = current.gateShearBalanced[i];
      const limit = current.gateShearLimit;
      if (peak > limit && balanced <= shearShare[i] * limit * (1 + 1e-9)) {
        shearShare[i] = Math.max(0.5, 0.98 * shearShare[i] * (limit / peak));
      }
    });
    const program = formulateStep(space, current, sens, {
      radius,
      epsilon: lpEpsilon,
      limitShare,
      shearShare,
      V0,
    });
    lastSens = sens;
    const lp = await solver.solve(program.lp, { timeLimitSeconds: 20 });
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
    if (trialOutcome.ok && meritNow - merit(trialOutcome.evaluation) < 0.75 * predicted) {
      // Second-order correction (Fletcher, *Practical Methods of Optimization*, 2nd ed.,
      // §14.4): the responses curve away from their tangents along the step; tighten each
      // row by its miss at the trial and solve the same linearisation again.
      const t = trialOutcome.evaluation;
      const model = modelResponses(space, current, sens, step.x);
      const miss = (actualValue: number, modelValue: number) =>
        actualValue > 0 && modelValue > 0 ? Math.log(actualValue / modelValue) : 0;
      const corrected = formulateStep(space, current, sens, {
        radius,
        epsilon: lpEpsilon,
        limitShare,
        shearShare,
        V0,
        shifts: {
          times: t.splitFillTimes.map((v, i) => miss(v, model.times[i])),
          shear: t.gateShearBalanced.map((v, i) => miss(v, model.shear[i])),
          pressure: miss(t.feedPressurePeak, model.pressure),
        },
      });
      const lp2 = await solver.solve(corrected.lp, { timeLimitSeconds: 20 });
      if (lp2.status === "optimal") {
        const second = evaluate(corrected.toDesign(lp2.x).x);
        if (second.ok && merit(second.evaluation) < merit(t)) trialResult = second;
      }
    }
    if (trialResult.ok) {
      const trial = trialResult.evaluation;
      actual = meritNow - merit(trial);
      accepted = predicted > 0 && actual >= 0.1 * predicted;
      if (accepted) {
        const good = actual >= 0.75 * predicted;
        const previous = current;
        current = trial;
        currentOutcome = trialResult;
        // A step the linear model predicted well carries its slopes forward by a Broyden
        // update; otherwise, and at least every third iteration, fresh finite differences.
        if (useTangent) {
          // The new design's own tangent; a well-predicted step also corrects it along the
          // step just taken (the tangent leaves out the thermal feedback). The update reads
          // the fresh slopes in the log measure of the previous design, as it does slopes
          // carried forward; reading them at the new design instead converged to heavier
          // runners on two demos (family 9.76 vs 5.64 cm³, frame and knob 10.19 vs 5.81).
          const fresh = tangentSensitivities(space, trial);
          sens = fresh && good ? broydenSensitivities(space, fresh, previous, trial, fresh) : fresh;
        } else if (good && sensAge < 2 && sens) {
          sens = broydenSensitivities(space, sens, previous, trial);
          sensAge++;
        } else sens = undefined;
        if (good && step.atEdge) radius = Math.min(MAX_TRUST_RADIUS, radius * 2);
      } else radius *= 0.5;
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
    if (feasible && (lpGain < 1e-7 || (!accepted && predicted <= 0))) {
      status = "converged";
      reason =
        "every limit met and no step the linear model trusts lowers the runner volume further";
      break;
    }
    if (radius < 2e-3) {
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

  let after = current;
  let snap: SnapReport | undefined;
  const linear = sens ?? lastSens;
  // A cancelled run reports the best design so far, unsnapped.
  const snapping = !options.continuousOnly && status !== "cancelled";
  const runnerCatalogue = cutterCatalogue(scenario.goals.cutters);
  if (snapping) {
    const snapped = snapDesign(space, current, linear, { merit: judge });
    simulations += snapped.simulations;
    after = snapped.evaluation;
    snap = snapped;
    // Cutter steps are coarse for runners (1 mm above 4 mm), fine for gates. Choose every
    // runner's cutter at once with the gates free (a mixed-integer program on the linear
    // model: one binary per runner between its two neighbouring cutters; the sequential dive
    // if that fails), then balance again on the gates alone with the runners fixed, and snap
    // those. While the result breaks a limit, linearise again at it (one simulation with its
    // tangent) and choose again, up to CUTTER_ROUNDS times. Keep the best snapped design.
    const gates = space.variables.flatMap((v, j) => (v.kind === "gate" ? [j] : []));
    if (
      !after.feasible && linear && gates.length > 0 && gates.length < space.variables.length &&
      runnerCatalogue.kind === "discrete"
    ) {
      const tried = new Set<string>();
      let base = current;
      let slopes: Sensitivities | undefined = linear;
      for (let round = 0; round < CUTTER_ROUNDS && slopes && !after.feasible; round++) {
        const cut = { epsilon: LP_BAND_SHARE * epsilon, V0, catalogue: runnerCatalogue };
        const chosen = (await mixedIntegerRunnerCutters(space, base, slopes, solver, {
          ...cut,
          around: current.x,
        }))?.x ??
          (round === 0 ? await diveRunnerCutters(space, current, linear, solver, cut) : undefined);
        if (!chosen) break;
        const key = space.variables.flatMap((v, j) => (v.kind === "runner" ? [chosen[j]] : []))
          .join(",");
        if (tried.has(key)) break;
        tried.add(key);
        const fixed = applyDesign(space, chosen);
        for (const v of space.variables) {
          if (v.kind === "runner") fixed.runners[v.index].adjustable = false;
        }
        const second = await optimizeBalance(fixed, {
          ...options,
          onProgress: undefined,
          maxIterations: 20,
        });
        if (!second.ok) break;
        simulations += second.outcome.simulations;
        const refined = remap(space, second.outcome.space, second.outcome.after);
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
          const gateChoices = (second.outcome.snap?.choices ?? []).map((c) => ({
            ...c,
            continuous: continuousOf.get(c.element) ?? c.continuous,
          }));
          snap = {
            evaluation: refined,
            simulations: snapped.simulations + second.outcome.simulations,
            choices: [...runnerChoices, ...gateChoices],
            message:
              `runner cutters chosen together with the gates free, gates re-balanced and snapped to ${
                snapMethod(runnerCatalogue)
              }; ${snapVerdict(current, refined)}`,
          };
        }
        if (after.feasible || round + 1 >= CUTTER_ROUNDS) break;
        // Linearise again where this round landed.
        const again = evaluateDesign(space, refined.x, { slopes: true });
        simulations++;
        if (!again.ok) break;
        base = again.evaluation;
        slopes = tangentSensitivities(space, base);
      }
    }
  }
  // Relax-and-fix costs one short SLP per runner (each with its own slopes): kept to
  // tools with few adjustable runners, where it pays.
  const runnerCount = space.variables.filter((v) => v.kind === "runner").length;
  if (snapping && !after.feasible && runnerCount <= RELAX_AND_FIX_MAX_RUNNERS) {
    const fixedOutcome = await relaxAndFixRunners(scenario, space, current, {
      solver,
      cancelled: options.cancelled,
      optimize: optimizeBalance,
    });
    if (fixedOutcome) {
      simulations += fixedOutcome.simulations;
      if (snappedBetter(fixedOutcome.evaluation, after, judge)) {
        after = fixedOutcome.evaluation;
        snap = {
          ...fixedOutcome,
          message:
            `runners fixed to cutters one at a time, the rest re-balanced after each; ${fixedOutcome.message}`,
        };
      }
    }
  }
  if (status === "converged" && !after.feasible) {
    reason += "; the continuous optimum meets every limit but the design in cutter sizes does " +
      `not (${after.violations.map((v) => v.message).join("; ")}): see the cutter line`;
  }
  return {
    ok: true,
    outcome: {
      status,
      reason,
      space,
      before,
      continuous: current,
      after,
      snap,
      iterations,
      simulations,
      slopes: useTangent ? "tangent" : "finite_difference",
      wouldNeed,
    },
  };
}

/**
 * For an infeasible outcome: solve the last linear model again with the mode's and
 * the size rules' bounds lifted (a generous region, 0.3–3 × today's sizes), leaving
 * them at a cost, and list the sizes that would have to leave today's bounds.
 */
async function explainInfeasible(
  space: DesignSpace,
  e: DesignEvaluation,
  s: Sensitivities,
  solver: LpSolver,
  o: { epsilon: number; V0: number },
): Promise<string[]> {
  const lower = space.variables.map((v) => v.current * 0.3);
  // A gate never deeper than its cavity's wall, even with the rules lifted.
  const wallOf = (v: (typeof space.variables)[number]) => {
    const cavity = space.scenario.gates[v.index].cavity;
    return mmToM(space.scenario.cavities.find((c) => c.id === cavity)!.wall_mm);
  };
  const upper = space.variables.map((v) =>
    v.kind === "gate" ? Math.min(v.current * 3, wallOf(v)) : v.current * 3
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
  const lp = await solver.solve({ ...program.lp, variables, rows }, { timeLimitSeconds: 20 });
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
          v.lowerReason.startsWith("steel-safe")
            ? ": not steel-safe, needs steel added (weld or insert)"
            : ""
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
