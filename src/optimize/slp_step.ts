import type { DesignSpace } from "./design_space.ts";
import type { DesignEvaluation } from "./evaluate_design.ts";
import type { LinearProgram, LpRow, LpVariable } from "./lp_solver.ts";
import type { Sensitivities } from "./sensitivities.ts";

/**
 * One step of the balancing SLP, as a linear program, and the merit it is judged
 * by: the ℓ₁ penalty form of Fletcher's Sℓ₁LP (Fletcher & de la Maza (1989) Math.
 * Programming 43:235). Responses are linearised in log–log form (exact for power
 * laws), so every row reads ln r + Σ (∂ln r/∂ln x_j)·Δ·u_j ≤ ln limit + slack.
 *
 * @module
 */

/** Penalty weight of a unit of (log) constraint violation against the relative volume. */
export const PENALTY = 20;
/** Share of the imbalance target the linear model aims for. */
export const LP_BAND_SHARE = 0.7;
/** Share of the gate-shear and pressure limits the LP aims for when it will snap to cutters. */
export const LP_LIMIT_SHARE = 0.97;

/**
 * Violation of the goals in log measure (0 when every limit is met): the ℓ₁ log-band
 * distance of the fill times, plus ln(value/limit) for each gate's shear and the feed
 * pressure when over. Log measure makes power-law responses linear in log sizes.
 * With `split` (default true) the fill-time term is the larger of the simulated and
 * the split fill times' distances, matching the LP's model (the optimizer's merit);
 * with `split: false` only the simulated times count. Gate shear is the balanced
 * split's (before the first cavity is full; default), the peak up to switchover,
 * which also carries the over-packing that any imbalance causes, or both, each counted.
 */
export function violation(
  e: DesignEvaluation,
  epsilon: number,
  options: { split?: boolean; shear?: "balanced" | "peak" | "both" } = {},
): number {
  let v = imbalanceViolation(e.fillTimes, epsilon);
  if (options.split ?? true) v = Math.max(v, imbalanceViolation(e.splitFillTimes, epsilon));
  const which = options.shear ?? "balanced";
  const shears = which === "both"
    ? [...e.gateShearBalanced, ...e.gateShear]
    : which === "balanced"
    ? e.gateShearBalanced
    : e.gateShear;
  for (const s of shears) v += Math.max(0, Math.log(s / e.gateShearLimit));
  v += Math.max(0, Math.log(e.feedPressurePeak / e.pressureLimit));
  for (const x of e.violations) {
    if (x.code === "not_filled") v += 1;
    if (x.code === "ordering") v += Math.log(1 + x.excess);
  }
  return v;
}

/**
 * The merit a design in cutter sizes is judged by: relative volume plus the penalty on
 * the simulated fill times' band distance and on both the balanced-split and the peak
 * gate shear (a snapped design is not steered further, so both count).
 */
export function snappedMerit(e: DesignEvaluation, epsilon: number, V0: number): number {
  return e.runnerVolume / V0 + PENALTY * violation(e, epsilon, { split: false, shear: "both" });
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

/** Options of {@link formulateStep}. */
export interface StepProgramOptions {
  /** Trust-region radius Δ, as a fraction of each size in log measure. */
  radius: number;
  /** Imbalance band the LP aims for (fraction). */
  epsilon: number;
  /** Share of the shear and pressure limits to aim for. */
  limitShare: number;
  /** Per cavity: share of the shear limit its balanced-split gate shear may use. */
  shearShare?: readonly number[];
  /** Runner volume the objective is relative to, m³. */
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
export function formulateStep(
  space: DesignSpace,
  e: DesignEvaluation,
  s: Sensitivities,
  o: StepProgramOptions,
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

/** The responses the linear model predicts at sizes `x` (log-linear in the log sizes, as in the LP). */
export function modelResponses(
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
export function modelMerit(
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
