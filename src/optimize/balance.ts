import type { Scenario } from "../model/scenario_schema.ts";
import { mToMm } from "../model/units.ts";
import { applyDesign, type DesignSpace, designSpace } from "./design_space.ts";
import { type DesignEvaluation, evaluateDesign } from "./evaluate_design.ts";
import { createHighsSolver } from "./highs_solver.ts";
import type { LinearProgram, LpRow, LpSolver, LpVariable } from "./lp_solver.ts";
import { finiteDifferenceSensitivities, type Sensitivities } from "./sensitivities.ts";
import { snapDesign, type SnapReport } from "./snap_design.ts";
import {
  type Cutter,
  type CutterCatalogue,
  cutterCatalogue,
  neighbouringSizes,
} from "./cutters.ts";

/**
 * Balancing by sequential linear programming (SLP) with a trust region.
 *
 * Problem: minimise the cold runner volume V(x) over the adjustable sizes x,
 * subject to fill-time imbalance ≤ ε (written as t_i ≤ τ and t_i ≥ (1 − ε)τ for
 * every cavity with one free reference time τ), every gate's peak wall shear ≤
 * the resin's limit, peak feed pressure ≤ fraction × machine, each feeding runner
 * ≥ the runner it feeds, and the bounds of the design space.
 *
 * Iteration (Fletcher's Sℓ₁LP form of SLP: Fletcher & de la Maza (1989) Math.
 * Programming 43:235; trust-region ratio test as in Conn, Gould & Toint,
 * *Trust-Region Methods*, 2000, ch. 6): linearise every response around the
 * current design (finite differences on the full simulation), solve the LP in
 * trust-region units u = δ/Δ (|u| ≤ 1) with penalised slacks on every linearised
 * constraint (so the LP is always feasible), re-simulate the step, and accept it
 * if the true ℓ₁ merit φ = V/V₀ + M·violation falls by at least 10 % of the LP's
 * predicted fall; the trust region doubles after a good step that reached its
 * edge and halves after a rejected one. Stops: converged (feasible and the
 * predicted gain below 1e-4, or the region below 0.2 % of the sizes), infeasible
 * (the region has collapsed with limits still violated), iteration limit, or
 * cancelled. Every accepted design is a full simulation, never the linear model.
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

/** Penalty weight of a unit of (relative) constraint violation against the relative volume. */
const PENALTY = 20;
/** Share of the imbalance target the linear model aims for. */
const LP_BAND_SHARE = 0.7;
/** Share of the gate-shear and pressure limits the linear model aims for (room to snap). */
const LP_LIMIT_SHARE = 0.97;

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

  const evaluate = (x: Float64Array) => {
    simulations++;
    return evaluateDesign(space, x);
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
  /** Snapped designs: simulated fill times, balanced and peak shear both counted. */
  const judge = (e: DesignEvaluation) =>
    e.runnerVolume / V0 + PENALTY * (violation(e, epsilon, { split: false }) +
        violation(e, epsilon, { split: false, shear: "peak" }));

  let radius = 0.2; // trust region as a fraction of each size
  let lpEpsilon = LP_BAND_SHARE * epsilon;
  // Room below the limits for the cutter snapping; none for a continuous answer.
  const limitShare = scenario.goals.cutters === "continuous" ? 0.999 : LP_LIMIT_SHARE;
  const shearShare: number[] = current.gateShear.map(() => limitShare);
  const iterations: BalanceIteration[] = [];
  let status: BalanceStatus = "iteration_limit";
  let reason = `stopped after ${maxIterations} iterations`;
  let lastLinear: { sens: Sensitivities; program: ReturnType<typeof buildProgram> } | undefined;
  let sens: Sensitivities | undefined;

  for (let iteration = 1; iteration <= maxIterations; iteration++) {
    if (options.cancelled?.()) {
      status = "cancelled";
      reason = "cancelled by request";
      break;
    }
    if (!sens) {
      const s = finiteDifferenceSensitivities(space, current);
      if ("failure" in s) return { ok: false, code: "simulation_failed", message: s.failure };
      simulations += s.simulations;
      sens = s;
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
    const program = buildProgram(space, current, sens, {
      radius,
      epsilon: lpEpsilon,
      limitShare,
      shearShare,
      V0,
    });
    lastLinear = { sens, program };
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
      const corrected = buildProgram(space, current, sens, {
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
        current = trial;
        currentOutcome = trialResult;
        sens = undefined;
        if (good && step.atEdge) radius = Math.min(0.5, radius * 2);
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
    };
    iterations.push(record);
    options.onProgress?.(record);
    const feasible = violation(current, epsilon) === 0;
    if (feasible && lpGain < 1e-7) {
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
  const wouldNeed = status === "infeasible" && lastLinear
    ? await explainInfeasible(space, current, lastLinear.sens, solver, { epsilon, V0 })
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
  const linear = sens ?? lastLinear?.sens;
  if (!options.continuousOnly) {
    const snapped = snapDesign(space, current, linear, { merit: judge });
    simulations += snapped.simulations;
    after = snapped.evaluation;
    snap = snapped;
    // Cutter steps are coarse for runners (1 mm above 4 mm), fine for gates. Choose each
    // runner's cutter with the gates free (a dive on the linear model), then balance again on
    // the gates alone with the runners fixed, and snap those; keep whichever snapped design
    // has the better merit.
    const gates = space.variables.flatMap((v, j) => (v.kind === "gate" ? [j] : []));
    const runnerCatalogue = cutterCatalogue(scenario.goals.cutters);
    if (
      !after.feasible && linear && gates.length > 0 && gates.length < space.variables.length &&
      runnerCatalogue.kind === "discrete"
    ) {
      const dive = await diveRunnerCutters(space, current, linear, solver, {
        epsilon: LP_BAND_SHARE * epsilon,
        V0,
        catalogue: runnerCatalogue,
      });
      const fixed = applyDesign(space, dive ?? after.x);
      for (const v of space.variables) {
        if (v.kind === "runner") fixed.runners[v.index].adjustable = false;
      }
      const second = await optimizeBalance(fixed, {
        ...options,
        onProgress: undefined,
        maxIterations: 20,
      });
      if (second.ok) {
        simulations += second.outcome.simulations;
        const refined = remap(space, second.outcome.space, second.outcome.after);
        if (judge(refined) < judge(after)) {
          after = refined;
          const runnerChoices = space.variables.flatMap((v) =>
            v.kind === "runner"
              ? [{
                element: v.element,
                continuous: current.x[space.variables.indexOf(v)],
                snapped: refined.x[space.variables.indexOf(v)],
                label: `${mToMm(refined.x[space.variables.indexOf(v)])} mm`,
              }]
              : []
          );
          snap = {
            evaluation: refined,
            simulations: snapped.simulations + second.outcome.simulations,
            choices: [...runnerChoices, ...(second.outcome.snap?.choices ?? [])],
            message: `runner cutters chosen with the gates free, gates re-balanced and snapped: ${
              second.outcome.snap?.message ?? "no gate snapping"
            }`,
          };
        }
      }
    }
  }
  if (!options.continuousOnly && !after.feasible) {
    const fixedOutcome = await relaxAndFixRunners(scenario, space, current, options);
    if (fixedOutcome) {
      simulations += fixedOutcome.simulations;
      if (judge(fixedOutcome.evaluation) < judge(after)) {
        after = fixedOutcome.evaluation;
        snap = {
          ...fixedOutcome,
          message:
            `runners fixed to cutters one at a time, the rest re-balanced after each; ${fixedOutcome.message}`,
        };
      }
    }
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
      wouldNeed,
    },
  };
}

/**
 * Violation of the goals in log measure (0 when every limit is met): the ℓ₁ log-band
 * distance of the fill times, plus ln(value/limit) for each gate's shear and the feed
 * pressure when over. Log measure makes power-law responses linear in log sizes.
 * With `split` (default true) the fill-time term is the larger of the simulated and
 * the split fill times' distances, matching the LP's model (the optimizer's merit);
 * with `split: false` only the simulated times count. Gate shear is the balanced
 * split's (before the first cavity is full; default) or the peak up to switchover,
 * which also carries the over-packing that any imbalance causes.
 */
export function violation(
  e: DesignEvaluation,
  epsilon: number,
  options: { split?: boolean; shear?: "balanced" | "peak" } = {},
): number {
  let v = imbalanceViolation(e.fillTimes, epsilon);
  if (options.split ?? true) v = Math.max(v, imbalanceViolation(e.splitFillTimes, epsilon));
  const shear = (options.shear ?? "balanced") === "balanced" ? e.gateShearBalanced : e.gateShear;
  for (const s of shear) v += Math.max(0, Math.log(s / e.gateShearLimit));
  v += Math.max(0, Math.log(e.feedPressurePeak / e.pressureLimit));
  for (const x of e.violations) {
    if (x.code === "not_filled") v += 1;
    if (x.code === "ordering") v += Math.log(1 + x.excess);
  }
  return v;
}

/**
 * ℓ₁ distance of the log fill times from a band [ln τ + ln(1 − ε), ln τ], minimised
 * over τ: zero exactly when (t_max − t_min)/t_max ≤ ε. Piecewise linear and convex in
 * ln τ, so the minimum sits at a breakpoint ln t_i or ln t_i − ln(1 − ε).
 */
export function imbalanceViolation(times: readonly number[], epsilon: number): number {
  if (times.some((t) => !(t > 0 && Number.isFinite(t)))) return 1;
  const logs = times.map(Math.log);
  const width = -Math.log(1 - epsilon);
  let best = Infinity;
  for (const l of logs) {
    for (const top of [l, l + width]) {
      let sum = 0;
      for (const li of logs) sum += Math.max(0, li - top) + Math.max(0, top - width - li);
      best = Math.min(best, sum);
    }
  }
  return best <= 1e-12 ? 0 : best;
}

interface ProgramOptions {
  radius: number;
  epsilon: number;
  /** Share of the shear and pressure limits to aim for. */
  limitShare: number;
  /** Per cavity: share of the shear limit its balanced-split gate shear may use. */
  shearShare?: readonly number[];
  V0: number;
  /** Ignore the design space's lower/upper bounds and use these (for the infeasibility explanation). */
  bounds?: { lower: number[]; upper: number[] };
  /** Use `bounds` as they are, without widening them to contain today's design. */
  exactBounds?: boolean;
  /**
   * Second-order correction: how far (in log) the simulated responses at a trial step
   * sat above the linear model; the rows are tightened by as much.
   */
  shifts?: { times: number[]; shear: number[]; pressure: number };
}

/**
 * The LP of one SLP step in log sizes: x_j → x_j·exp(Δ·u_j), |u_j| ≤ 1, Δ = radius.
 * Fill times, gate shear and pressure are linearised in log–log form (exact for
 * power laws), so rows read ln r + Σ (∂ln r/∂ln x_j)·Δ·u_j ≤ ln limit + slack.
 * Columns: u (n), v = ln τ − ln t_max, then one slack per linearised row.
 */
function buildProgram(
  space: DesignSpace,
  e: DesignEvaluation,
  s: Sensitivities,
  o: ProgramOptions,
) {
  const n = space.variables.length;
  const x = e.x;
  const R = o.radius;
  const variables: LpVariable[] = [];
  const rows: LpRow[] = [];
  space.variables.forEach((v, j) => {
    const lower = o.bounds ? o.bounds.lower[j] : v.lower;
    const upper = o.bounds ? o.bounds.upper[j] : v.upper;
    variables.push({
      name: `u_${v.element}`,
      // Bounds include u = 0 (today's design stays feasible), except for a dive's exact bounds.
      lower: o.exactBounds
        ? Math.log(lower / x[j]) / R
        : Math.min(0, Math.max(-1, Math.log(lower / x[j]) / R)),
      upper: o.exactBounds
        ? Math.log(upper / x[j]) / R
        : Math.max(0, Math.min(1, Math.log(upper / x[j]) / R)),
      cost: (s.runnerVolume[j] * x[j] * R) / o.V0,
    });
  });
  const logSlope = (row: readonly number[], value: number): [number, number][] =>
    space.variables.map((_, j) => [j, (row[j] * x[j] * R) / value] as [number, number]);
  const tMax = Math.max(...e.splitFillTimes);
  const band = -Math.log(1 - o.epsilon);
  const w = variables.length;
  variables.push({ name: "v", lower: -1, upper: 1, cost: 0 });
  let linearMeritAtZero = e.runnerVolume / o.V0 +
    PENALTY * imbalanceViolation(e.splitFillTimes, o.epsilon);
  const slack = (name: string) => {
    variables.push({ name, lower: 0, upper: Infinity, cost: PENALTY });
    return variables.length - 1;
  };
  e.splitFillTimes.forEach((t, i) => {
    const lt = Math.log(t / tMax);
    const slope = logSlope(s.fillTime[i], t);
    const late = slack(`s_late_${i}`);
    rows.push({
      name: `late_${i}`,
      terms: [...slope, [w, -1], [late, -1]],
      lower: -Infinity,
      upper: -lt - (o.shifts?.times[i] ?? 0),
    });
    const early = slack(`s_early_${i}`);
    rows.push({
      name: `early_${i}`,
      terms: [...slope.map(([j, c]) => [j, -c] as [number, number]), [w, 1], [early, -1]],
      lower: -Infinity,
      upper: lt + band + (o.shifts?.times[i] ?? 0),
    });
  });
  // Gate shear: the balanced split's (the peak up to switchover adds the over-packing that
  // imbalance causes, which the fill-time rows already deal with), with the mean-flow slopes
  // of sensitivities.ts, against a per-gate share of the limit.
  e.gateShearBalanced.forEach((g, i) => {
    if (!(g > 0)) return;
    const over = Math.log(g / ((o.shearShare?.[i] ?? o.limitShare) * e.gateShearLimit));
    linearMeritAtZero += PENALTY * Math.max(0, over);
    const k = slack(`s_shear_${i}`);
    rows.push({
      name: `shear_${i}`,
      terms: [...logSlope(s.gateShear[i], g), [k, -1]],
      lower: -Infinity,
      upper: -over - (o.shifts?.shear[i] ?? 0),
    });
  });
  const over = Math.log(e.feedPressurePeak / (o.limitShare * e.pressureLimit));
  linearMeritAtZero += PENALTY * Math.max(0, over);
  const kp = slack("s_pressure");
  rows.push({
    name: "pressure",
    terms: [...logSlope(s.pressure, e.feedPressurePeak), [kp, -1]],
    lower: -Infinity,
    upper: -over - (o.shifts?.pressure ?? 0),
  });
  // Feeding runner ≥ fed runner, in logs: ln x_a + Δu_a ≥ ln x_b + Δu_b; never worse than today.
  for (const rule of space.ordering) {
    const a = rule.upstream;
    const b = rule.downstream;
    const gap = Math.log(x[a] / x[b]);
    rows.push({
      name: `order_${space.variables[a].element}_${space.variables[b].element}`,
      terms: [[a, R], [b, -R]],
      lower: Math.min(0, -gap),
      upper: Infinity,
    });
  }
  const lp: LinearProgram = { sense: "minimize", variables, rows };
  return {
    lp,
    linearMeritAtZero,
    toDesign: (solution: Float64Array) => {
      const next = new Float64Array(n);
      let atEdge = false;
      for (let j = 0; j < n; j++) {
        const v = space.variables[j];
        next[j] = Math.min(v.upper, Math.max(v.lower, x[j] * Math.exp(R * solution[j])));
        if (Math.abs(Math.abs(solution[j]) - 1) < 1e-6) atEdge = true;
      }
      return { x: next, atEdge };
    },
  };
}

/**
 * For an infeasible outcome: solve the last linear model again with the mode's and
 * the size rules' bounds lifted (scenario min/max only, a generous region) and list
 * the sizes that would have to leave today's bounds.
 */
async function explainInfeasible(
  space: DesignSpace,
  e: DesignEvaluation,
  s: Sensitivities,
  solver: LpSolver,
  o: { epsilon: number; V0: number },
): Promise<string[]> {
  const lower = space.variables.map((v) => v.current * 0.3);
  const upper = space.variables.map((v) => v.current * 3);
  const program = buildProgram(space, e, s, {
    radius: 1,
    epsilon: o.epsilon,
    limitShare: 1,
    V0: o.V0,
    bounds: { lower, upper },
  });
  const lp = await solver.solve(program.lp, { timeLimitSeconds: 20 });
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

/** An evaluation from a sub-space (some variables fixed) expressed in the full space's x. */
function remap(full: DesignSpace, sub: DesignSpace, e: DesignEvaluation): DesignEvaluation {
  const scenario = applyDesign(sub, e.x);
  const x = Float64Array.from(full.variables, (v) => {
    if (v.kind === "runner") return scenario.runners[v.index].diameter_mm / 1000;
    const g = scenario.gates[v.index];
    return (g.type === "edge" ? g.thickness_mm : g.diameter_mm) / 1000;
  });
  return { ...e, x };
}

/**
 * Choose each runner's cutter (the one below or above its continuous size) by diving
 * on the linear model around the continuous optimum: runners are fixed one at a time,
 * largest relative rounding first, each to the side whose LP (gates and the runners
 * not yet fixed free within their bounds and cutter intervals) predicts the lower
 * merit. Returns the design the last LP proposes, or undefined when an LP fails.
 */
async function diveRunnerCutters(
  space: DesignSpace,
  e: DesignEvaluation,
  s: Sensitivities,
  solver: LpSolver,
  o: { epsilon: number; V0: number; catalogue: CutterCatalogue },
): Promise<Float64Array | undefined> {
  const steelSafe = space.scenario.goals.mode === "steel_safe";
  const lower = space.variables.map((v) => v.lower);
  const upper = space.variables.map((v) => v.upper);
  const options: { j: number; sides: number[]; spread: number }[] = [];
  space.variables.forEach((v, j) => {
    if (v.kind !== "runner") return;
    const { below, above, exact } = neighbouringSizes(o.catalogue, e.x[j]);
    let sides = exact
      ? [exact.size]
      : [below?.size, above?.size].filter((x): x is number =>
        x !== undefined && x >= v.lower * (1 - 1e-9) && x <= v.upper * (1 + 1e-9)
      );
    if (steelSafe) sides = sides.filter((x) => x >= v.current * (1 - 1e-9));
    if (sides.length === 0) sides = [above?.size ?? below?.size ?? e.x[j]];
    lower[j] = Math.min(...sides);
    upper[j] = Math.max(...sides);
    options.push({ j, sides, spread: Math.log(upper[j] / lower[j]) });
  });
  options.sort((a, b) => b.spread - a.spread);
  let last: Float64Array | undefined;
  const solveWith = async () => {
    const program = buildProgram(space, e, s, {
      radius: 1,
      epsilon: o.epsilon,
      limitShare: LP_LIMIT_SHARE,
      V0: o.V0,
      bounds: { lower, upper },
      exactBounds: true,
    });
    const lp = await solver.solve(program.lp, { timeLimitSeconds: 20 });
    if (lp.status !== "optimal") return undefined;
    return {
      objective: lp.objective,
      x: Float64Array.from(space.variables, (_, j) => e.x[j] * Math.exp(lp.x[j])),
    };
  };
  for (const { j, sides } of options) {
    let best: { objective: number; x: Float64Array; side: number } | undefined;
    for (const side of sides) {
      lower[j] = side;
      upper[j] = side;
      const r = await solveWith();
      if (r && (!best || r.objective < best.objective - 1e-12)) best = { ...r, side };
    }
    if (!best) return undefined;
    lower[j] = best.side;
    upper[j] = best.side;
    last = best.x;
  }
  if (!last) return undefined;
  // Exact cutter sizes for the runners (the LP's exp/log round trip is not).
  for (const { j } of options) last[j] = lower[j];
  return last;
}

/**
 * Relax-and-fix for the runner cutters: among the runners whose fed runners are
 * all fixed, fix the one whose continuous size is nearest a permitted cutter
 * (never smaller than a runner it feeds), re-balance every size still free (a short SLP from
 * the current design), and repeat until every runner is on a cutter; then snap the
 * gates. Costlier than the dive (one short SLP per runner) and surer, because each
 * rounding is absorbed by sizes that are still free on the full model.
 */
async function relaxAndFixRunners(
  scenario: Scenario,
  space: DesignSpace,
  continuous: DesignEvaluation,
  options: OptimizeBalanceOptions,
): Promise<SnapReport | undefined> {
  const catalogue = cutterCatalogue(scenario.goals.cutters);
  if (catalogue.kind !== "discrete") return undefined;
  const steelSafe = scenario.goals.mode === "steel_safe";
  const epsilon = scenario.goals.max_imbalance_percent / 100;
  const V0 = continuous.runnerVolume;
  const judgeOf = (e: DesignEvaluation) =>
    e.runnerVolume / V0 + PENALTY * (violation(e, epsilon, { split: false }) +
        violation(e, epsilon, { split: false, shear: "peak" }));
  const work: Scenario = structuredClone(scenario);
  const sizes = new Map(space.variables.map((v, j) => [v.element, continuous.x[j]]));
  const labels = new Map<string, string>();
  let simulations = 0;
  for (;;) {
    let pick:
      | { v: (typeof space.variables)[number]; sides: Cutter[]; gap: number }
      | undefined;
    for (const v of space.variables) {
      if (v.kind !== "runner" || labels.has(v.element)) continue;
      // Leaves first: a runner is fixed once every runner it feeds is, so its cutter can
      // respect the feed order.
      const feedsUnfixed = space.ordering.some((rule) =>
        space.variables[rule.upstream] === v &&
        !labels.has(space.variables[rule.downstream].element)
      );
      if (feedsUnfixed) continue;
      const x = sizes.get(v.element)!;
      const { below, above, exact } = neighbouringSizes(catalogue, x);
      const allowed = (exact ? [exact] : [below, above]).filter((c): c is Cutter =>
        c !== undefined && c.size >= v.lower * (1 - 1e-9) && c.size <= v.upper * (1 + 1e-9) &&
        (!steelSafe || c.size >= v.current * (1 - 1e-9))
      );
      // Never against the feed order with a runner already on its cutter.
      const fedSize = Math.max(
        0,
        ...space.ordering.filter((rule) => space.variables[rule.upstream] === v).map((rule) =>
          sizes.get(space.variables[rule.downstream].element)!
        ),
      );
      let sides = allowed.filter((c) => c.size >= fedSize * (1 - 1e-9));
      if (sides.length === 0) {
        // Both neighbours are smaller than a runner this one feeds: the next cutter up that is not.
        const up = catalogue.cutters.find((c) =>
          c.size >= fedSize * (1 - 1e-9) && c.size <= v.upper * (1 + 1e-9)
        );
        sides = up ? [up] : allowed;
      }
      if (sides.length === 0) return undefined;
      sides.sort((a, b) => Math.abs(Math.log(a.size / x)) - Math.abs(Math.log(b.size / x)));
      const gap = Math.abs(Math.log(sides[0].size / x));
      if (!pick || gap < pick.gap) pick = { v, sides, gap };
    }
    if (!pick) break;
    if (options.cancelled?.()) return undefined;
    const v = pick.v;
    labels.set(v.element, "");
    work.runners[v.index].adjustable = false;
    const free = space.variables.filter((u) => u.kind === "gate" || !labels.has(u.element));
    // Nearest cutter first; the other side only when the nearest leaves a limit broken.
    let best: { cutter: Cutter; sizes: Map<string, number>; score: number } | undefined;
    for (const cutter of pick.sides) {
      work.runners[v.index].diameter_mm = mToMm(cutter.size);
      const trial = new Map(sizes);
      trial.set(v.element, cutter.size);
      let score = 0;
      if (free.length > 0) {
        const sub = await optimizeBalance(work, {
          solver: options.solver,
          cancelled: options.cancelled,
          continuousOnly: true,
          maxIterations: 8,
          start: trial,
        });
        if (!sub.ok) continue;
        simulations += sub.outcome.simulations;
        const e = sub.outcome.continuous;
        sub.outcome.space.variables.forEach((u, j) => trial.set(u.element, e.x[j]));
        score = judgeOf(e);
        if (!best || score < best.score) best = { cutter, sizes: trial, score };
        if (e.feasible) break;
      } else {
        best = { cutter, sizes: trial, score };
        break;
      }
    }
    if (!best) return undefined;
    work.runners[v.index].diameter_mm = mToMm(best.cutter.size);
    labels.set(v.element, best.cutter.label);
    for (const [k, value] of best.sizes) sizes.set(k, value);
  }
  // Gates last: the usual snapping on the space of the gates alone.
  const gateOnly = optimizeBalanceSpaceAt(work, sizes);
  if (!gateOnly) return undefined;
  const gateSnap = snapDesign(gateOnly.space, gateOnly.evaluation, undefined, {
    merit: judgeOf,
  });
  simulations += gateOnly.simulations + gateSnap.simulations + 1;
  // Judged again in the full space, where the feed-order rules between runners apply.
  const full = evaluateDesign(space, remap(space, gateOnly.space, gateSnap.evaluation).x);
  if (!full.ok) return undefined;
  const evaluation = full.evaluation;
  const choices = [
    ...space.variables.flatMap((v, j) =>
      v.kind === "runner"
        ? [{
          element: v.element,
          continuous: continuous.x[j],
          snapped: sizes.get(v.element)!,
          label: labels.get(v.element) ?? `${mToMm(sizes.get(v.element)!)} mm`,
        }]
        : []
    ),
    ...gateSnap.choices,
  ];
  return { evaluation, choices, simulations, message: gateSnap.message };
}

/** The design space of `scenario` (runners fixed) evaluated at the given sizes. */
function optimizeBalanceSpaceAt(
  scenario: Scenario,
  sizes: ReadonlyMap<string, number>,
): { space: DesignSpace; evaluation: DesignEvaluation; simulations: number } | undefined {
  const space = designSpace(scenario);
  if (space.variables.length === 0) return undefined;
  const x = Float64Array.from(
    space.variables,
    (v) => Math.min(v.upper, Math.max(v.lower, sizes.get(v.element) ?? v.current)),
  );
  const outcome = evaluateDesign(space, x);
  return outcome.ok ? { space, evaluation: outcome.evaluation, simulations: 1 } : undefined;
}

/** The responses the linear model predicts at sizes `x` (log-linear in the log sizes, as in the LP). */
function modelResponses(
  space: DesignSpace,
  e: DesignEvaluation,
  s: Sensitivities,
  x: ArrayLike<number>,
): { times: number[]; shear: number[]; pressure: number; volume: number } {
  const logStep = Array.from(space.variables, (_, j) => Math.log(x[j] / e.x[j]));
  const move = (row: readonly number[], value: number) =>
    value * Math.exp(row.reduce((sum, g, j) => sum + (g * e.x[j] / value) * logStep[j], 0));
  return {
    times: e.splitFillTimes.map((t, i) => move(s.fillTime[i], t)),
    shear: e.gateShearBalanced.map((g, i) => (g > 0 ? move(s.gateShear[i], g) : g)),
    pressure: move(s.pressure, e.feedPressurePeak),
    volume: e.runnerVolume +
      s.runnerVolume.reduce((sum, g, j) => sum + g * e.x[j] * logStep[j], 0),
  };
}

/**
 * The merit as the linear model predicts it at sizes `x`, judged against the goals
 * themselves (not the LP's narrower aims).
 */
function modelMerit(
  space: DesignSpace,
  e: DesignEvaluation,
  s: Sensitivities,
  x: ArrayLike<number>,
  o: { epsilon: number; V0: number },
): number {
  const r = modelResponses(space, e, s, x);
  let v = imbalanceViolation(r.times, o.epsilon);
  for (const g of r.shear) if (g > 0) v += Math.max(0, Math.log(g / e.gateShearLimit));
  v += Math.max(0, Math.log(r.pressure / e.pressureLimit));
  return r.volume / o.V0 + PENALTY * v;
}
