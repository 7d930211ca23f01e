import type { Scenario } from "../model/scenario_schema.ts";
import { mToMm } from "../model/units.ts";
import {
  type Cutter,
  type CutterCatalogue,
  cutterCatalogue,
  neighbouringSizes,
} from "./cutters.ts";
import { applyDesign, type DesignSpace, designSpace, type DesignVariable } from "./design_space.ts";
import { type DesignEvaluation, evaluateDesign, simulationsOf } from "./evaluate_design.ts";
import type { LpSolver } from "./lp_solver.ts";
import { type Sensitivities, tangentSensitivities } from "./sensitivities.ts";
import { snapDesign, snapMethod, type SnapReport, snapVerdict } from "./snap_design.ts";
import { formulateStep, LP_LIMIT_SHARE, snappedMerit } from "./slp_step.ts";
import type { ContinuousSolver } from "./continuous_slp.ts";
import { type StopOptions, stopReason } from "./stop.ts";

/** Iterations of each re-balance after a runner is fixed (it starts next to its optimum). */
const RELAX_ITERATIONS = 8;

/**
 * Runner cutters chosen together with balance, for a continuous optimum whose
 * nearest-cutter rounding breaks a limit: a dive on the linear model, and
 * relax-and-fix on the full model (fix one runner, re-balance the rest).
 *
 * @module
 */

/** What {@link relaxAndFixRunners} needs of the optimizer (passed in: no import cycle). */
export interface RelaxAndFixOptions extends StopOptions {
  solver: LpSolver;
  /** The continuous solver, run on the sizes still free after each fix. */
  continuous: ContinuousSolver;
}

/** An evaluation from a sub-space (some variables fixed) expressed in the full space's x. */
export function remap(full: DesignSpace, sub: DesignSpace, e: DesignEvaluation): DesignEvaluation {
  const scenario = applyDesign(sub, e.x);
  const x = Float64Array.from(full.variables, (v) => {
    if (v.kind === "runner") return scenario.runners[v.index].diameter_mm / 1000;
    const g = scenario.gates[v.index];
    return (g.type === "edge" ? g.thickness_mm : g.diameter_mm) / 1000;
  });
  // A copy with its own x that keeps the evaluation's lazy report (`run`) lazy.
  const copy = Object.defineProperties({}, Object.getOwnPropertyDescriptors(e)) as DesignEvaluation;
  copy.x = x;
  return copy;
}

/**
 * Choose each runner's cutter (the one below or above its continuous size) by diving
 * on the linear model around the continuous optimum: runners are fixed one at a time,
 * largest relative rounding first, each to the side whose LP (gates and the runners
 * not yet fixed free within their bounds and cutter intervals) predicts the lower
 * merit. Returns the design the last LP proposes, or undefined when an LP fails.
 */
export async function diveRunnerCutters(
  space: DesignSpace,
  e: DesignEvaluation,
  s: Sensitivities,
  solver: LpSolver,
  o: { epsilon: number; V0: number; catalogue: CutterCatalogue },
): Promise<Float64Array | undefined> {
  const lower = space.variables.map((v) => v.lower);
  const upper = space.variables.map((v) => v.upper);
  const options: { j: number; sides: number[]; spread: number }[] = [];
  for (const [j, sides] of runnerCutterSides(space, o.catalogue, e.x)) {
    lower[j] = sides[0];
    upper[j] = sides[sides.length - 1];
    options.push({ j, sides, spread: Math.log(upper[j] / lower[j]) });
  }
  options.sort((a, b) => b.spread - a.spread);
  let last: Float64Array | undefined;
  const solveWith = async () => {
    const program = cutterProgram(space, e, s, o, { lower, upper });
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
 * Runner cutters for every runner at once: a mixed-integer program on the linear model at
 * `e` (the LP of `slp_step.ts` with exact bounds, no trust region) in which each runner's
 * log size is tied to a binary choosing between the two permitted cutters that neighbour
 * its size in `around` (the continuous optimum; one cutter when it sits on one or only one
 * is permitted), gates free within their bounds. Returns the design (runners exactly on
 * cutters, gates at the program's sizes) and the program's objective, or undefined when
 * the solver cannot (it needs integer variables: HiGHS).
 */
export async function mixedIntegerRunnerCutters(
  space: DesignSpace,
  e: DesignEvaluation,
  s: Sensitivities,
  solver: LpSolver,
  o: {
    epsilon: number;
    V0: number;
    catalogue: CutterCatalogue;
    around: Float64Array;
    /** Runners held at these sizes (m) instead of choosing: the same program, fewer binaries. */
    pinned?: ReadonlyMap<number, number>;
  },
): Promise<{ x: Float64Array; objective: number } | undefined> {
  const lower = space.variables.map((v) => v.lower);
  const upper = space.variables.map((v) => v.upper);
  const sides = runnerCutterSides(space, o.catalogue, o.around);
  for (const [j, size] of o.pinned ?? []) sides.set(j, [size]);
  for (const [j, list] of sides) {
    lower[j] = list[0];
    upper[j] = list[list.length - 1];
  }
  // The rows start from the simulated fill times and peak shears, which are what the snapped
  // design is judged on, not from their smooth stand-ins (which the continuous optimum
  // may leave outside the LP's band while the simulated ones are inside it): each row is
  // shifted by the gap between the two, and keeps the stand-in's slopes.
  const tTrue = Math.max(...e.fillTimes);
  const tSplit = Math.max(...e.splitFillTimes);
  const gap = (a: number, b: number) => (a > 0 && b > 0 ? Math.log(a / b) : 0);
  const program = cutterProgram(space, e, s, o, { lower, upper }, {
    times: e.fillTimes.map((t, i) => gap(t / tTrue, e.splitFillTimes[i] / tSplit)),
    shear: e.gateShear.map((g, i) => gap(g, e.gateShearBalanced[i])),
    pressure: 0,
  });
  // Meeting the limits comes first here: the slacks cost a hundred times the step LP's penalty,
  // so the program never buys runner volume with imbalance.
  const variables = program.lp.variables.map((v, k) =>
    k >= space.variables.length && v.cost > 0 ? { ...v, cost: 100 * v.cost } : v
  );
  const rows = [...program.lp.rows];
  const binary = new Map<number, number>();
  for (const [j, list] of sides) {
    if (list.length < 2) continue;
    binary.set(j, variables.length);
    const element = space.variables[j].element;
    variables.push({ name: `${element} cutter`, lower: 0, upper: 1, cost: 0, integer: true });
    // ln(x_j/e.x_j) = ln(below/e.x_j) + b·ln(above/below): on one cutter or the other.
    const at = Math.log(list[0] / e.x[j]);
    rows.push({
      name: `${element} on a cutter`,
      terms: [[j, 1], [binary.get(j)!, -Math.log(list[1] / list[0])]],
      lower: at,
      upper: at,
    });
  }
  const lp = await solver.solve({ ...program.lp, variables, rows }, { timeLimitSeconds: 20 });
  if (lp.status !== "optimal") return undefined;
  const x = Float64Array.from(space.variables, (_, j) => e.x[j] * Math.exp(lp.x[j]));
  for (const [j, list] of sides) {
    const b = binary.get(j);
    x[j] = b === undefined ? list[0] : list[lp.x[b] > 0.5 ? 1 : 0];
  }
  return { x, objective: lp.objective };
}

/**
 * Each runner's permitted cutters around its size in `around`, ascending: the two
 * neighbours (or the exact one) within its rule bounds, never below today's in
 * steel-safe mode; the nearest available when none qualifies.
 */
function runnerCutterSides(
  space: DesignSpace,
  catalogue: CutterCatalogue,
  around: ArrayLike<number>,
): Map<number, number[]> {
  const steelSafe = space.scenario.goals.mode === "steel_safe";
  const sides = new Map<number, number[]>();
  space.variables.forEach((v, j) => {
    if (v.kind !== "runner") return;
    const { below, above, exact } = neighbouringSizes(catalogue, around[j]);
    let list = (exact ? [exact.size] : [below?.size, above?.size]).filter((x): x is number =>
      x !== undefined && cutterPermitted(v, x, steelSafe)
    );
    if (list.length === 0) list = [above?.size ?? below?.size ?? around[j]];
    sides.set(j, list.sort((a, b) => a - b));
  });
  return sides;
}

/**
 * Whether a cutter of `size` (m) may cut `v`: within its bounds for cutters (rules of
 * thumb a few percent soft, `cutterLower`/`cutterUpper`) and, in steel-safe mode, not below today's size.
 */
function cutterPermitted(v: DesignVariable, size: number, steelSafe: boolean): boolean {
  return size >= v.cutterLower * (1 - 1e-9) && size <= v.cutterUpper * (1 + 1e-9) &&
    (!steelSafe || size >= v.current * (1 - 1e-9));
}

/** The step LP for choosing cutters: exact bounds, no trust region, aims as in the loop. */
function cutterProgram(
  space: DesignSpace,
  e: DesignEvaluation,
  s: Sensitivities,
  o: { epsilon: number; V0: number },
  bounds: { lower: number[]; upper: number[] },
  shifts?: { times: number[]; shear: number[]; pressure: number },
) {
  return formulateStep(space, e, s, {
    radius: 1,
    epsilon: o.epsilon,
    limitShare: LP_LIMIT_SHARE,
    V0: o.V0,
    bounds,
    exactBounds: true,
    shifts,
  });
}

/**
 * Relax-and-fix for the runner cutters: among the runners whose fed runners are
 * all fixed, fix the one whose nearest permitted cutter is furthest from its size
 * (never smaller than a runner it feeds), re-balance every size still free (a short SLP from
 * the current design), and repeat until every runner is on a cutter; then snap the
 * gates. Costlier than the dive (one short SLP per runner) and surer, because each
 * rounding is absorbed by sizes that are still free on the full model.
 */
export async function relaxAndFixRunners(
  space: DesignSpace,
  continuous: DesignEvaluation,
  options: RelaxAndFixOptions,
): Promise<SnapReport | undefined> {
  const scenario = space.scenario;
  const catalogue = cutterCatalogue(scenario.goals.cutters);
  if (catalogue.kind !== "discrete") return undefined;
  const steelSafe = scenario.goals.mode === "steel_safe";
  const epsilon = scenario.goals.max_imbalance_percent / 100;
  const V0 = continuous.runnerVolume;
  const judgeOf = (e: DesignEvaluation) => snappedMerit(e, epsilon, V0);
  const work: Scenario = structuredClone(scenario);
  const sizes = new Map(space.variables.map((v, j) => [v.element, continuous.x[j]]));
  const labels = new Map<string, string>();
  let simulations = 0;
  /** How the last re-balance ended (none yet: the sizes are the continuous optimum's). */
  let lastStop: string | undefined;
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
        c !== undefined && cutterPermitted(v, c.size, steelSafe)
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
          c.size >= fedSize * (1 - 1e-9) && c.size <= v.cutterUpper * (1 + 1e-9)
        );
        sides = up ? [up] : allowed;
      }
      if (sides.length === 0) return undefined;
      sides.sort((a, b) => Math.abs(Math.log(a.size / x)) - Math.abs(Math.log(b.size / x)));
      const gap = Math.abs(Math.log(sides[0].size / x));
      // The runner that rounds furthest goes first, while the most sizes can still adapt.
      if (!pick || gap > pick.gap) pick = { v, sides, gap };
    }
    if (!pick) break;
    if (stopReason(options)) return undefined;
    const v = pick.v;
    labels.set(v.element, "");
    work.runners[v.index].adjustable = false;
    const free = space.variables.filter((u) => u.kind === "gate" || !labels.has(u.element));
    // Nearest cutter first; the other side only when the nearest leaves a limit broken.
    let best:
      | { cutter: Cutter; sizes: Map<string, number>; score: number; stop?: string }
      | undefined;
    for (const cutter of pick.sides) {
      work.runners[v.index].diameter_mm = mToMm(cutter.size);
      const trial = new Map(sizes);
      trial.set(v.element, cutter.size);
      let score = 0;
      const unmoved = Math.abs(cutter.size - sizes.get(v.element)!) <= 1e-9 * cutter.size;
      if (
        unmoved && pick.sides.length === 1 && lastStop !== undefined &&
        lastStop !== "iteration_limit"
      ) {
        // Already on its only cutter: fixing it moves nothing, and the last re-balance, with this
        // runner free, stopped here by its own rule (not its iteration limit).
        best = { cutter, sizes: trial, score, stop: lastStop };
        break;
      }
      if (free.length > 0) {
        const sub = await options.continuous(designSpace(work), {
          solver: options.solver,
          signal: options.signal,
          deadline: options.deadline,
          maxIterations: RELAX_ITERATIONS,
          start: trial,
          todayVolumeOnly: true,
        });
        if (!sub.ok) continue;
        simulations += sub.outcome.simulations;
        const e = sub.outcome.optimum;
        sub.outcome.space.variables.forEach((u, j) => trial.set(u.element, e.x[j]));
        score = judgeOf(e);
        if (!best || score < best.score) {
          best = { cutter, sizes: trial, score, stop: sub.outcome.status };
        }
        if (e.feasible) break;
      } else {
        best = { cutter, sizes: trial, score };
        break;
      }
    }
    if (!best) return undefined;
    lastStop = best.stop ?? lastStop;
    work.runners[v.index].diameter_mm = mToMm(best.cutter.size);
    labels.set(v.element, best.cutter.label);
    for (const [k, value] of best.sizes) sizes.set(k, value);
  }
  // Gates last: the usual snapping on the space of the gates alone.
  const gateOnly = gateSpaceAt(work, sizes);
  if (!gateOnly) return undefined;
  const gateSnap = snapDesign(
    gateOnly.space,
    gateOnly.evaluation,
    tangentSensitivities(gateOnly.space, gateOnly.evaluation),
    { merit: judgeOf },
  );
  // Judged again in the full space, where the feed-order rules between runners apply.
  const full = evaluateDesign(space, remap(space, gateOnly.space, gateSnap.evaluation).x);
  simulations += gateOnly.simulations + gateSnap.simulations + simulationsOf(full);
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
    // The whole tool's continuous optimum, not the gates-only re-balance's.
    ...gateSnap.choices.map((c) => {
      const j = space.variables.findIndex((v) => v.element === c.element);
      return j >= 0 ? { ...c, continuous: continuous.x[j] } : c;
    }),
  ];
  // Judged against the continuous optimum of the whole tool, not the gates-only one.
  const message = `snapped to ${snapMethod(catalogue)}; ${snapVerdict(continuous, evaluation)}`;
  return { evaluation, choices, simulations, message };
}

/** The design space of `scenario` (its runners fixed), simulated at the given sizes. */
function gateSpaceAt(
  scenario: Scenario,
  sizes: ReadonlyMap<string, number>,
): { space: DesignSpace; evaluation: DesignEvaluation; simulations: number } | undefined {
  const space = designSpace(scenario);
  if (space.variables.length === 0) return undefined;
  const x = Float64Array.from(
    space.variables,
    (v) => Math.min(v.upper, Math.max(v.lower, sizes.get(v.element) ?? v.current)),
  );
  const outcome = evaluateDesign(space, x, { slopes: true });
  return outcome.ok
    ? { space, evaluation: outcome.evaluation, simulations: outcome.simulations }
    : undefined;
}
