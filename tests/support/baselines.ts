import type { Scenario } from "../../src/model/scenario_schema.ts";
import { mmToM } from "../../src/model/units.ts";
import {
  type CutterCatalogue,
  cutterCatalogue,
  nearest,
  neighbouringSizes,
  roundUp,
} from "../../src/optimize/cutters.ts";
import {
  currentDesign,
  type DesignSpace,
  RUNNER_OVER_WALL_MM,
} from "../../src/optimize/design_space.ts";
import {
  type DesignEvaluation,
  evaluateDesign,
  runnerVolumeOf,
} from "../../src/optimize/evaluate_design.ts";
import { runnerTree } from "../../src/model/runner_tree.ts";

/**
 * Three baseline ways of sizing a runner system, against which the SLP
 * optimizer is benchmarked: the handbook rules (no search), the toolroom's
 * trial-shot loop (open the lagging cavity's gate one step at a time) and a
 * derivative-free Nelder–Mead search on the same simulation model.
 * Sizes are in metres, volumes in m³, times in ms where named so.
 *
 * @module
 */

/** What a baseline produced. `evaluation` is absent only when its last simulation failed. */
export interface BaselineResult {
  /** The design, m, in `space.variables` order. */
  x: Float64Array;
  /** The full simulation of `x` (absent if that simulation failed, see `failure`). */
  evaluation?: DesignEvaluation;
  /** Fill simulations run. */
  simulations: number;
  /** Trial shots (toolroom loop only; equals its simulations). */
  trials?: number;
  /** Wall-clock time, ms. */
  wallTimeMs: number;
  /** Why the method stopped (a stable code). */
  reason: string;
  /** Message of a failed simulation. */
  failure?: string;
  /** Simulations run when a design first met the imbalance target (absent: never). */
  firstBalanced?: number;
  /** Simulations run when a design first met every limit (absent: never). */
  firstFeasible?: number;
  /** Nelder–Mead only: the penalty objective it minimised, at `x`. */
  objective?: number;
}

/** Branching exponent: D_feed = D_branch · N^(1/3) (Lee & Stevenson, J. Reinf. Plast. Compos. 1998). */
export const BRANCHING_EXPONENT = 1 / 3;
/** Smallest runner the handbook sizing uses, m (3 mm; common practice, no source). */
export const HANDBOOK_MIN_RUNNER_DIAMETER = 3e-3;
/** Tunnel and pin gate diameter as a fraction of the wall (common practice, no source). */
export const HANDBOOK_ROUND_GATE_FRACTION = 0.5;
/** Edge gate depth as a fraction of the wall (common practice, no source). */
export const HANDBOOK_EDGE_GATE_FRACTION = 0.65;
/** Gate sizes are cut to this grid, m (0.05 mm; common practice, no source). */
export const GATE_SIZE_STEP = 0.05e-3;
/** Runner step when the catalogue is continuous, m (0.5 mm; common practice, no source). */
export const CONTINUOUS_RUNNER_STEP = 0.5e-3;

const SIZE_TOLERANCE = 1e-9;

function catalogueOf(scenario: Scenario): CutterCatalogue {
  return cutterCatalogue(scenario.goals.cutters);
}

/** Snap a runner diameter (m) to the catalogue inside [lower, upper]; off-catalogue only if no cutter fits. */
function snapRunner(catalogue: CutterCatalogue, d: number, lower: number, upper: number): number {
  const clamped = Math.min(Math.max(d, lower), upper);
  if (catalogue.kind === "continuous") return clamped;
  let size = nearest(catalogue, clamped).cutter.size;
  if (size < lower - SIZE_TOLERANCE) {
    const up = roundUp(catalogue, lower);
    size = up.ok && up.cutter.size <= upper + SIZE_TOLERANCE ? up.cutter.size : lower;
  } else if (size > upper + SIZE_TOLERANCE) {
    const { exact, below } = neighbouringSizes(catalogue, upper);
    const down = exact ?? below;
    size = down !== undefined && down.size >= lower - SIZE_TOLERANCE ? down.size : upper;
  }
  return size;
}

/** A size rounded to 1 nm, m (keeps repeated 0.05 mm steps free of float drift). */
function toNanometre(size: number): number {
  return Math.round(size * 1e9) / 1e9;
}

/** Round a gate size to the 0.05 mm grid, then clamp to its bounds, m. */
function snapGate(size: number, lower: number, upper: number): number {
  const gridded = toNanometre(Math.round(size / GATE_SIZE_STEP) * GATE_SIZE_STEP);
  return Math.min(Math.max(gridded, lower), upper);
}

/** Options of {@link handbookSizing}. */
export interface HandbookSizingOptions {
  /** Smallest leaf runner, m (default {@link HANDBOOK_MIN_RUNNER_DIAMETER}, 3 mm). */
  minRunnerDiameter?: number;
  /** Run the one final simulation (default true). */
  evaluate?: boolean;
}

/**
 * Size runners and gates by the trade's rules, without search: leaf runners
 * at max(wall + 1.5 mm, 3 mm), each feeding runner by the branching rule
 * D_feed³ = Σ D_branch³ (for N equal branches D_feed = D_branch·N^(1/3): Lee &
 * Stevenson, J. Reinforced Plastics and Composites 1998, minimum volume for a
 * balanced split; the cube sum for unequal branches is Murray's law, Proc. Natl.
 * Acad. Sci. 12:207 (1926), from memory), tunnel/pin gates 0.5 × wall and edge
 * gates 0.65 × wall (common practice, no source). Runners are clamped to their
 * bounds and snapped to the scenario's cutter catalogue, gates to 0.05 mm; an
 * upstream runner is raised if snapping left it below a branch. One simulation
 * judges the result. Sizes in m.
 */
export function handbookSizing(
  space: DesignSpace,
  options: HandbookSizingOptions = {},
): BaselineResult {
  const start = performance.now();
  const minimum = options.minRunnerDiameter ?? HANDBOOK_MIN_RUNNER_DIAMETER;
  if (!(minimum > 0) || !Number.isFinite(minimum)) {
    throw new RangeError(
      `Cannot size by the handbook: minRunnerDiameter must be finite and > 0 m, got ${minimum}`,
    );
  }
  const scenario = space.scenario;
  const tree = runnerTree(scenario);
  const wallOf = new Map(scenario.cavities.map((c) => [c.id, mmToM(c.wall_mm)]));
  const leafDiameter = (wall: number) => Math.max(wall + mmToM(RUNNER_OVER_WALL_MM), minimum);
  const gatesAt = new Map<string, string[]>();
  for (const g of scenario.gates) gatesAt.set(g.from, [...(gatesAt.get(g.from) ?? []), g.cavity]);

  // Rule diameters from the leaves up: D³ = Σ over branches (runners and gated cavities) of D_branch³.
  const ideal = new Map<number, number>();
  for (const k of [...tree.order].reverse()) {
    const node = tree.downNode.get(k)!;
    const childRunners = tree.children.get(node) ?? [];
    const cavities = gatesAt.get(node) ?? [];
    let cubeSum = 0;
    for (const c of childRunners) cubeSum += ideal.get(c)! ** 3;
    if (childRunners.length === 0) {
      // A leaf runner is sized for the thickest wall it feeds (a dead end: for none).
      cubeSum = leafDiameter(Math.max(0, ...cavities.map((c) => wallOf.get(c)!))) ** 3;
    } else {
      for (const c of cavities) cubeSum += leafDiameter(wallOf.get(c)!) ** 3;
    }
    ideal.set(k, Math.pow(cubeSum, BRANCHING_EXPONENT));
  }

  const catalogue = catalogueOf(scenario);
  const x = currentDesign(space);
  const variableOfRunner = new Map<number, number>();
  space.variables.forEach((v, j) => {
    if (v.kind === "runner") {
      variableOfRunner.set(v.index, j);
      x[j] = snapRunner(catalogue, ideal.get(v.index) ?? v.current, v.lower, v.upper);
    } else {
      const g = scenario.gates[v.index];
      const fraction = g.type === "edge"
        ? HANDBOOK_EDGE_GATE_FRACTION
        : HANDBOOK_ROUND_GATE_FRACTION;
      x[j] = snapGate(fraction * wallOf.get(g.cavity)!, v.lower, v.upper);
    }
  });
  for (const k of [...tree.order].reverse()) {
    const up = tree.parent.get(k);
    const jDown = variableOfRunner.get(k);
    const jUp = up === undefined ? undefined : variableOfRunner.get(up);
    if (jDown === undefined || jUp === undefined) continue;
    if (x[jUp] < x[jDown]) x[jUp] = Math.min(x[jDown], space.variables[jUp].upper);
  }

  if (options.evaluate === false) {
    return { x, simulations: 0, wallTimeMs: performance.now() - start, reason: "rules_applied" };
  }
  const outcome = evaluateDesign(space, x);
  const e = outcome.ok ? outcome.evaluation : undefined;
  return {
    x,
    evaluation: e,
    simulations: 1,
    wallTimeMs: performance.now() - start,
    reason: outcome.ok ? "rules_applied" : "simulation_failed",
    failure: outcome.ok ? undefined : outcome.message,
    firstBalanced: e && e.imbalancePercent <= space.scenario.goals.max_imbalance_percent
      ? 1
      : undefined,
    firstFeasible: e?.feasible ? 1 : undefined,
  };
}

/** One change the toolroom loop made. */
export interface ToolroomStep {
  /** Trial (1-based) whose shot led to this change. */
  trial: number;
  /** The lagging cavity id. */
  cavity: string;
  /** Variable index and element id changed. */
  variable: number;
  element: string;
  /** Size before and after, m. */
  from: number;
  to: number;
}

/** Options of {@link toolroomLoop}. */
export interface ToolroomLoopOptions {
  /** Largest number of trial shots (simulations), default 60. */
  maxTrials?: number;
}

/** Result of {@link toolroomLoop}: a baseline result plus the list of changes in order. */
export interface ToolroomResult extends BaselineResult {
  trials: number;
  steps: ToolroomStep[];
}

/**
 * The shop's trial-shot loop: from today's design, shoot (simulate), find the
 * cavity that fills last (an unfilled one counts as last), open its gate by
 * 0.05 mm — or, once that gate is at its upper bound, the runner nearest the
 * cavity to the next cutter size (walking upstream past runners at their bound
 * or at their feeder's size) — and shoot again. Stops with `balanced`
 * (imbalance ≤ goal), `no_step`, `max_trials` or `simulation_failed`. Only ever
 * enlarges (steel-safe by nature); one trial = one simulation. Sizes in m.
 */
export function toolroomLoop(
  space: DesignSpace,
  options: ToolroomLoopOptions = {},
): ToolroomResult {
  const start = performance.now();
  const maxTrials = options.maxTrials ?? 60;
  if (!Number.isInteger(maxTrials) || maxTrials < 1) {
    throw new RangeError(
      `Cannot run the toolroom loop: maxTrials must be an integer ≥ 1, got ${maxTrials}`,
    );
  }
  const scenario = space.scenario;
  const target = scenario.goals.max_imbalance_percent;
  const catalogue = catalogueOf(scenario);
  const tree = runnerTree(scenario);
  const gateVariables = new Map<string, number[]>();
  const runnerVariable = new Map<number, number>();
  space.variables.forEach((v, j) => {
    if (v.kind === "gate") {
      const cavity = scenario.gates[v.index].cavity;
      gateVariables.set(cavity, [...(gateVariables.get(cavity) ?? []), j]);
    } else runnerVariable.set(v.index, j);
  });
  const gateFrom = new Map<string, string[]>();
  for (const g of scenario.gates) {
    gateFrom.set(g.cavity, [...(gateFrom.get(g.cavity) ?? []), g.from]);
  }

  const x = currentDesign(space);
  const steps: ToolroomStep[] = [];
  let evaluation: DesignEvaluation | undefined;
  let firstBalanced: number | undefined;
  let firstFeasible: number | undefined;
  let trials = 0;
  let reason = "max_trials";
  let failure: string | undefined;

  const nextRunnerSize = (j: number): number | undefined => {
    const v = space.variables[j];
    const next = catalogue.kind === "continuous"
      ? x[j] + CONTINUOUS_RUNNER_STEP
      : neighbouringSizes(catalogue, x[j]).above?.size;
    if (next === undefined || next > v.upper + SIZE_TOLERANCE) return undefined;
    const up = tree.parent.get(v.index);
    const jUp = up === undefined ? undefined : runnerVariable.get(up);
    if (jUp !== undefined && next > x[jUp] + SIZE_TOLERANCE) return undefined;
    return next;
  };

  const stepFor = (cavity: string): { j: number; to: number } | undefined => {
    const gates = (gateVariables.get(cavity) ?? []).filter((j) =>
      x[j] < space.variables[j].upper - SIZE_TOLERANCE
    );
    if (gates.length > 0) {
      const j = gates.reduce((a, b) => (x[b] < x[a] ? b : a));
      return { j, to: Math.min(toNanometre(x[j] + GATE_SIZE_STEP), space.variables[j].upper) };
    }
    for (const node of gateFrom.get(cavity) ?? []) {
      let runner = tree.arriving.get(node);
      while (runner !== undefined) {
        const j = runnerVariable.get(runner);
        if (j !== undefined) {
          const to = nextRunnerSize(j);
          if (to !== undefined) return { j, to };
        }
        runner = tree.parent.get(runner);
      }
    }
    return undefined;
  };

  while (trials < maxTrials) {
    trials++;
    const outcome = evaluateDesign(space, x);
    if (!outcome.ok) {
      reason = "simulation_failed";
      failure = outcome.message;
      evaluation = undefined;
      break;
    }
    evaluation = outcome.evaluation;
    if (evaluation.feasible) firstFeasible ??= trials;
    if (evaluation.imbalancePercent <= target) {
      firstBalanced = trials;
      reason = "balanced";
      break;
    }
    const lagging = laggingCavity(evaluation);
    const step = stepFor(lagging);
    if (step === undefined) {
      reason = "no_step";
      break;
    }
    if (trials === maxTrials) break;
    steps.push({
      trial: trials,
      cavity: lagging,
      variable: step.j,
      element: space.variables[step.j].element,
      from: x[step.j],
      to: step.to,
    });
    x[step.j] = step.to;
  }
  return {
    x,
    evaluation,
    simulations: trials,
    trials,
    firstBalanced,
    firstFeasible,
    steps,
    wallTimeMs: performance.now() - start,
    reason,
    failure,
  };
}

/** The cavity that fills last; an unfilled cavity is later than any filled one (least filled first). */
function laggingCavity(evaluation: DesignEvaluation): string {
  const cavities = evaluation.run.fill.cavities;
  let worst = cavities[0];
  const late = (c: typeof worst) => (Number.isFinite(c.fillTime) ? c.fillTime : Infinity);
  for (const c of cavities) {
    const a = late(c);
    const b = late(worst);
    if (a > b || (a === b && a === Infinity && c.fillAtSwitchover < worst.fillAtSwitchover)) {
      worst = c;
    }
  }
  return worst.id;
}

/** Options of {@link nelderMeadMinimise}. */
export interface NelderMeadMinimiseOptions {
  /** Largest number of calls of `f` (default 200·n). */
  maxEvaluations?: number;
  /** Edge of the initial simplex along each axis, in x's units (default 0.1; a negative step is taken if the positive one leaves the box). */
  initialStep?: number;
  /** Stop when max f − min f over the simplex ≤ this (default 1e-10) … */
  fTolerance?: number;
  /** … and every vertex is within this of the best, per coordinate (default 1e-8). */
  xTolerance?: number;
  /** Box bounds; every trial point is clamped into them before `f` sees it. */
  lower?: ArrayLike<number>;
  upper?: ArrayLike<number>;
}

/** Result of {@link nelderMeadMinimise}. */
export interface NelderMeadMinimiseResult {
  /** Best point found. */
  x: Float64Array;
  /** f at `x`. */
  value: number;
  /** Calls of `f` made (never more than the budget). */
  evaluations: number;
  iterations: number;
  reason: "converged" | "budget";
}

class BudgetExhausted extends Error {}

/**
 * Minimise `f` over ℝⁿ (or a box, by clamping trial points) with the
 * Nelder–Mead simplex method (Nelder & Mead 1965, Computer Journal 7:308),
 * standard coefficients: reflection 1, expansion 2, contraction 0.5, shrink 0.5,
 * in the formulation of Lagarias, Reeds, Wright & Wright (1998), SIAM J. Optim.
 * 9:112 (inside and outside contraction; shrink toward the best vertex).
 * Stops when the simplex has collapsed in f and x (`converged`) or the
 * evaluation budget is spent (`budget`). The best vertex never gets worse.
 */
export function nelderMeadMinimise(
  f: (x: Float64Array) => number,
  x0: ArrayLike<number>,
  options: NelderMeadMinimiseOptions = {},
): NelderMeadMinimiseResult {
  const n = x0.length;
  if (n < 1) throw new RangeError("Cannot run Nelder–Mead: the start point has no coordinates");
  const maxEvaluations = options.maxEvaluations ?? 200 * n;
  if (!Number.isInteger(maxEvaluations) || maxEvaluations < 1) {
    throw new RangeError(
      `Cannot run Nelder–Mead: maxEvaluations must be an integer ≥ 1, got ${maxEvaluations}`,
    );
  }
  const step = options.initialStep ?? 0.1;
  const fTolerance = options.fTolerance ?? 1e-10;
  const xTolerance = options.xTolerance ?? 1e-8;
  const lower = options.lower;
  const upper = options.upper;
  const clamp = (p: Float64Array) => {
    for (let i = 0; i < n; i++) {
      if (lower !== undefined && p[i] < lower[i]) p[i] = lower[i];
      if (upper !== undefined && p[i] > upper[i]) p[i] = upper[i];
    }
    return p;
  };

  let evaluations = 0;
  let best: { x: Float64Array; value: number } | undefined;
  const evaluate = (p: Float64Array): number => {
    if (evaluations >= maxEvaluations) throw new BudgetExhausted();
    evaluations++;
    const value = f(Float64Array.from(p));
    const v = Number.isNaN(value) ? Infinity : value;
    if (best === undefined || v < best.value) best = { x: Float64Array.from(p), value: v };
    return v;
  };

  const points: Float64Array[] = [];
  const values: number[] = [];
  let iterations = 0;
  let reason: "converged" | "budget" = "budget";
  try {
    const first = clamp(Float64Array.from(x0));
    points.push(first);
    values.push(evaluate(first));
    for (let i = 0; i < n; i++) {
      const p = Float64Array.from(first);
      p[i] += step;
      if (upper !== undefined && p[i] > upper[i]) p[i] = first[i] - step;
      clamp(p);
      points.push(p);
      values.push(evaluate(p));
    }
    const along = (a: Float64Array, b: Float64Array, t: number) => {
      // a + t·(a − b)
      const p = new Float64Array(n);
      for (let i = 0; i < n; i++) p[i] = a[i] + t * (a[i] - b[i]);
      return clamp(p);
    };
    for (;;) {
      const order = values.map((_, k) => k).sort((a, b) => values[a] - values[b]);
      const sortedPoints = order.map((k) => points[k]);
      const sortedValues = order.map((k) => values[k]);
      points.splice(0, points.length, ...sortedPoints);
      values.splice(0, values.length, ...sortedValues);

      let spread = 0;
      for (let k = 1; k <= n; k++) {
        for (let i = 0; i < n; i++) {
          spread = Math.max(spread, Math.abs(points[k][i] - points[0][i]));
        }
      }
      if (values[n] - values[0] <= fTolerance && spread <= xTolerance) {
        reason = "converged";
        break;
      }
      iterations++;

      const centroid = new Float64Array(n);
      for (let k = 0; k < n; k++) {
        for (let i = 0; i < n; i++) centroid[i] += points[k][i] / n;
      }
      const worst = points[n];
      const reflected = along(centroid, worst, 1);
      const fr = evaluate(reflected);
      if (fr < values[0]) {
        const expanded = along(centroid, worst, 2);
        const fe = evaluate(expanded);
        if (fe < fr) [points[n], values[n]] = [expanded, fe];
        else [points[n], values[n]] = [reflected, fr];
        continue;
      }
      if (fr < values[n - 1]) {
        [points[n], values[n]] = [reflected, fr];
        continue;
      }
      if (fr < values[n]) {
        const outside = along(centroid, worst, 0.5);
        const fc = evaluate(outside);
        if (fc <= fr) {
          [points[n], values[n]] = [outside, fc];
          continue;
        }
      } else {
        const inside = along(centroid, worst, -0.5);
        const fcc = evaluate(inside);
        if (fcc < values[n]) {
          [points[n], values[n]] = [inside, fcc];
          continue;
        }
      }
      for (let k = 1; k <= n; k++) {
        const p = new Float64Array(n);
        for (let i = 0; i < n; i++) p[i] = points[0][i] + 0.5 * (points[k][i] - points[0][i]);
        clamp(p);
        points[k] = p;
        values[k] = evaluate(p);
      }
    }
  } catch (error) {
    if (!(error instanceof BudgetExhausted)) throw error;
  }
  const found = best!;
  return { x: found.x, value: found.value, evaluations, iterations, reason };
}

/** Options of {@link nelderMead}. */
export interface NelderMeadOptions {
  /** Simulation budget (default 400). */
  maxSimulations?: number;
  /** Initial simplex edge in the scaled [0, 1] space (default 0.2). */
  initialStep?: number;
  /** Weight of the summed relative violation excesses in the penalty (default 100). */
  penaltyWeight?: number;
}

/** Penalty objective value of a failed simulation (worse than any simulated design). */
const FAILED_SIMULATION_PENALTY = 1e6;

/**
 * Derivative-free sizing: Nelder–Mead ({@link nelderMeadMinimise}) on the full
 * simulation over the sizes scaled to [0, 1] within their bounds (trial points
 * clamped), minimising V/V0 + 100·Σ violation excesses (V the cold runner
 * volume, V0 today's design's, excesses relative to each limit as reported by
 * `evaluateDesign`). Continuous sizes (no cutter snapping); variables with
 * lower ≥ upper are held at their lower bound. Repeated points are not
 * re-simulated. Reason `converged` or `budget`. Sizes in m.
 */
export function nelderMead(space: DesignSpace, options: NelderMeadOptions = {}): BaselineResult {
  const start = performance.now();
  const budget = options.maxSimulations ?? 400;
  if (!Number.isInteger(budget) || budget < 1) {
    throw new RangeError(
      `Cannot run Nelder–Mead: maxSimulations must be an integer ≥ 1, got ${budget}`,
    );
  }
  const weight = options.penaltyWeight ?? 100;
  const variables = space.variables;
  const free = variables.map((_, j) => j).filter((j) => variables[j].upper > variables[j].lower);
  const base = Float64Array.from(variables, (v) => Math.min(Math.max(v.current, v.lower), v.upper));
  variables.forEach((v, j) => {
    if (!(v.upper > v.lower)) base[j] = v.lower;
  });
  const toDesign = (u: ArrayLike<number>) => {
    const x = Float64Array.from(base);
    free.forEach((j, i) => {
      const v = variables[j];
      x[j] = v.lower + Math.min(Math.max(u[i], 0), 1) * (v.upper - v.lower);
    });
    return x;
  };
  const v0 = runnerVolumeOf(space, base);
  const cache = new Map<string, { value: number; evaluation?: DesignEvaluation }>();
  let simulations = 0;
  let firstBalanced: number | undefined;
  let firstFeasible: number | undefined;
  const objective = (u: Float64Array): number => {
    const x = toDesign(u);
    const key = Array.from(x, (s) => s.toExponential(12)).join(",");
    const hit = cache.get(key);
    if (hit !== undefined) return hit.value;
    simulations++;
    const outcome = evaluateDesign(space, x);
    let entry: { value: number; evaluation?: DesignEvaluation };
    if (!outcome.ok) entry = { value: FAILED_SIMULATION_PENALTY };
    else {
      const e = outcome.evaluation;
      if (e.imbalancePercent <= space.scenario.goals.max_imbalance_percent) {
        firstBalanced ??= simulations;
      }
      if (e.feasible) firstFeasible ??= simulations;
      const excess = e.violations.reduce((sum, v) => sum + v.excess, 0);
      entry = { value: e.runnerVolume / v0 + weight * excess, evaluation: e };
    }
    cache.set(key, entry);
    return entry.value;
  };
  const u0 = free.map((j) => {
    const v = variables[j];
    return (base[j] - v.lower) / (v.upper - v.lower);
  });
  if (free.length === 0) {
    objective(new Float64Array(0));
  }
  const result = free.length === 0
    ? { x: new Float64Array(0), reason: "converged" as const }
    : nelderMeadMinimise(objective, u0, {
      maxEvaluations: budget,
      initialStep: options.initialStep ?? 0.2,
      fTolerance: 1e-6,
      xTolerance: 1e-4,
      lower: new Float64Array(free.length),
      upper: new Float64Array(free.length).fill(1),
    });
  const x = toDesign(result.x);
  const entry = cache.get(Array.from(x, (s) => s.toExponential(12)).join(","));
  return {
    x,
    evaluation: entry?.evaluation,
    simulations,
    wallTimeMs: performance.now() - start,
    reason: entry?.evaluation === undefined ? "simulation_failed" : result.reason,
    firstBalanced,
    firstFeasible,
    objective: entry?.value,
  };
}
