import { M_PER_INCH, M_PER_MM, mToMm } from "../model/units.ts";
import {
  type Cutter,
  type CutterCatalogue,
  cutterCatalogue,
  neighbouringSizes,
} from "./cutters.ts";
import type { DesignSpace } from "./design_space.ts";
import { type DesignEvaluation, evaluateDesign, simulationsOf } from "./evaluate_design.ts";
import type { Sensitivities } from "./sensitivities.ts";
import { modelResponses } from "./slp_step.ts";

/**
 * Snap a continuous optimum to sizes a toolroom can cut: runners to the
 * scenario's cutter catalogue, gates to a 0.05 mm step (0.002 in for the inch
 * series; common practice, no source: gates are ground or spark-eroded to size).
 * Each size chooses between its two neighbours (in steel-safe mode only the one
 * above, never below today's). Start from the best, on the full simulation, of the
 * nearest runner cutters with the gate step above and plain rounding (every size to its
 * nearest permitted step; in steel-safe mode also every size rounded up), then repair
 * by flips ranked with the linear model and confirmed by full simulation (sizes the
 * optimum made equal flip together), then (when feasible) try cheaper flips. A design
 * that meets every limit is kept over one that does not, whatever the merit. Reports the
 * snapped design against the continuous optimum, both as simulated.
 *
 * @module
 */

/** One size's snapped value. */
export interface SnapChoice {
  element: string;
  continuous: number;
  snapped: number;
  /** Cutter label ("5.5 mm", "5/16 in") or the gate step. */
  label: string;
}

/** What snapping did. */
export interface SnapReport {
  evaluation: DesignEvaluation;
  choices: SnapChoice[];
  simulations: number;
  message: string;
}

/** Gate size step, m (common practice, no source). */
export const GATE_STEP_METRIC = 0.05 * M_PER_MM;
/** Gate size step for inch shops, m (0.002 in). */
export const GATE_STEP_INCH = 0.002 * M_PER_INCH;

/** The catalogue a scenario's runners are cut with. */
export function runnerCatalogue(space: DesignSpace): CutterCatalogue {
  return cutterCatalogue(space.scenario.goals.cutters);
}

function gateCandidates(size: number, step: number, inch: boolean): Cutter[] {
  const k = size / step;
  const lo = Math.floor(k + 1e-9);
  const hi = Math.ceil(k - 1e-9);
  const label = (v: number) =>
    inch ? `${(v / M_PER_INCH).toFixed(3)} in` : `${mToMm(v).toFixed(2)} mm`;
  // One step beyond the upper neighbour too: a slightly larger gate is the usual repair of a
  // gate whose shear the rounding of the others pushed just over the limit.
  return [...new Set([lo, hi, hi + 1])].map((i) => ({ size: i * step, label: label(i * step) }));
}

/** Options of {@link snapDesign}. */
export interface SnapDesignOptions {
  /** The optimizer's merit (lower is better). */
  merit: (e: DesignEvaluation) => number;
  /**
   * The continuous optimum the message compares the snapped design with (default
   * `continuous`; differs when `continuous` is a sub-problem's optimum, e.g. the gates
   * re-balanced with the runners already on cutters).
   */
  reference?: DesignEvaluation;
}

/**
 * Two designs that both meet every limit and whose cold runners differ by less than this share
 * of their volume (a gate step is a few thousandths of it) are ranked by balance, not volume:
 * the shop does not see 0.1 % of a runner, it does see a percentage point of imbalance. Our own
 * judgement, no source.
 */
export const VOLUME_TIE_SHARE = 1e-3;

/**
 * Whether snapped design `a` is to be kept over `b`: meeting every limit comes first; between
 * two that meet them and weigh the same to {@link VOLUME_TIE_SHARE}, the better balanced;
 * else the lower `merit` (by more than 1e-9).
 */
export function snappedBetter(
  a: DesignEvaluation,
  b: DesignEvaluation,
  merit: (e: DesignEvaluation) => number,
): boolean {
  if (a.feasible !== b.feasible) return a.feasible;
  const heavier = Math.max(a.runnerVolume, b.runnerVolume);
  if (a.feasible && Math.abs(a.runnerVolume - b.runnerVolume) <= VOLUME_TIE_SHARE * heavier) {
    if (Math.abs(a.imbalancePercent - b.imbalancePercent) > 1e-6) {
      return a.imbalancePercent < b.imbalancePercent;
    }
  }
  return merit(a) < merit(b) - 1e-9;
}

/** What the sizes were snapped to: "metric cutters and 0.05 mm gate steps". */
export function snapMethod(catalogue: CutterCatalogue): string {
  if (catalogue.kind === "continuous") return "continuous sizes";
  return `${catalogue.system} cutters and ${
    catalogue.system === "inch" ? "0.002 in" : "0.05 mm"
  } gate steps`;
}

/**
 * The snapped design against the continuous optimum, both as simulated: whether it meets every
 * limit (or which it breaks) and the imbalance of each, e.g. "every limit met; imbalance 1.17 %
 * continuous → 1.40 % in cutter sizes".
 */
export function snapVerdict(continuous: DesignEvaluation, snapped: DesignEvaluation): string {
  const limits = snapped.feasible
    ? "every limit met"
    : `the snapped design breaks: ${snapped.violations.map((x) => x.message).join("; ")}`;
  return `${limits}; imbalance ${continuous.imbalancePercent.toFixed(2)} % continuous (${
    continuous.feasible ? "every limit met" : "limits not met"
  }) → ${snapped.imbalancePercent.toFixed(2)} % in cutter sizes`;
}

/** Snap `continuous` to cuttable sizes; `sensitivities` (at or near it) rank the repair flips. */
export function snapDesign(
  space: DesignSpace,
  continuous: DesignEvaluation,
  sensitivities: Sensitivities | undefined,
  options: SnapDesignOptions,
): SnapReport {
  const catalogue = runnerCatalogue(space);
  if (catalogue.kind === "continuous") {
    return {
      evaluation: continuous,
      choices: space.variables.map((v, j) => ({
        element: v.element,
        continuous: continuous.x[j],
        snapped: continuous.x[j],
        label: `${mToMm(continuous.x[j]).toFixed(3)} mm (continuous)`,
      })),
      simulations: 0,
      message: "continuous sizes (verification run): no snapping",
    };
  }
  const inch = catalogue.system === "inch";
  const steelSafe = space.scenario.goals.mode === "steel_safe";
  const candidates: Cutter[][] = space.variables.map((v, j) => {
    const size = continuous.x[j];
    let list: Cutter[];
    if (v.kind === "runner") {
      const { below, above, exact } = neighbouringSizes(catalogue, size);
      list = exact ? [exact] : [below, above].filter((c): c is Cutter => c !== undefined);
    } else list = gateCandidates(size, inch ? GATE_STEP_INCH : GATE_STEP_METRIC, inch);
    if (steelSafe) {
      const up = list.filter((c) => c.size >= v.current * (1 - 1e-9));
      list = up.length > 0 ? up : [{ size: v.current, label: `${mToMm(v.current)} mm (today)` }];
    }
    const inside = list.filter((c) =>
      c.size >= v.cutterLower * (1 - 1e-9) && c.size <= v.cutterUpper * (1 + 1e-9)
    );
    return inside.length > 0 ? inside : list;
  });
  // Start: runners at the nearest cutter (ties and steel-safe: the larger); gates at the step
  // above (a larger gate lowers shear and pressure, and its volume is negligible).
  const pick = candidates.map((list, j) => {
    if (space.variables[j].kind === "gate") return list.length - 1;
    let best = 0;
    for (let k = 1; k < list.length; k++) {
      if (Math.abs(list[k].size - continuous.x[j]) <= Math.abs(list[best].size - continuous.x[j])) {
        best = k;
      }
    }
    return best;
  });
  // Sizes the continuous optimum made equal (symmetric branches) move together: a single
  // flip would unbalance what symmetry balanced.
  const groups: number[][] = [];
  space.variables.forEach((v, j) => {
    const twin = groups.find((g) =>
      space.variables[g[0]].kind === v.kind &&
      Math.abs(continuous.x[g[0]] - continuous.x[j]) <= 1e-6 * continuous.x[j] &&
      candidates[g[0]].length === candidates[j].length &&
      candidates[g[0]].every((c, k) => Math.abs(c.size - candidates[j][k].size) < 1e-12)
    );
    if (twin) twin.push(j);
    else groups.push([j]);
  });
  const design = (p: readonly number[]) => Float64Array.from(p, (k, j) => candidates[j][k].size);
  let simulations = 0;
  const evaluate = (p: readonly number[]) => {
    const outcome = evaluateDesign(space, design(p));
    simulations += simulationsOf(outcome);
    return outcome.ok ? outcome.evaluation : undefined;
  };
  // Plain rounding (every size, gates too, to its nearest permitted cutter; in steel-safe mode
  // also every size to the permitted cutter at or above it) is always a candidate: a shop would
  // try it first, and the repair flips below start from the best start on the true model.
  const nearestPick = candidates.map((list, j) => {
    let best = 0;
    for (let k = 1; k < list.length; k++) {
      if (Math.abs(list[k].size - continuous.x[j]) < Math.abs(list[best].size - continuous.x[j])) {
        best = k;
      }
    }
    return best;
  });
  const roundUpPick = candidates.map((list, j) => {
    const k = list.findIndex((c) => c.size >= continuous.x[j] * (1 - 1e-9));
    return k >= 0 ? k : list.length - 1;
  });
  const starts = steelSafe ? [pick, nearestPick, roundUpPick] : [pick, nearestPick];
  let best: DesignEvaluation | undefined;
  let bestPick = [...pick];
  const tried = new Set<string>();
  for (const start of starts) {
    const key = start.join(",");
    if (tried.has(key)) continue;
    tried.add(key);
    const trial = evaluate(start);
    if (trial && (!best || snappedBetter(trial, best, options.merit))) {
      best = trial;
      bestPick = [...start];
    }
  }
  if (!best) {
    return {
      evaluation: continuous,
      choices: [],
      simulations,
      message: "the snapped design could not be simulated",
    };
  }
  const linearMerit = (x: Float64Array) =>
    predictMerit(space, continuous, sensitivities, x, options.merit);
  // Repair / improve by flips of one group, best predicted first, each confirmed by simulation.
  const flipped = (p: readonly number[], group: readonly number[], k: number) => {
    const q = [...p];
    for (const j of group) q[j] = k;
    return q;
  };
  for (let round = 0; round < 2 * groups.length; round++) {
    const flips: { group: number[]; k: number; predicted: number }[] = [];
    for (const group of groups) {
      for (let k = 0; k < candidates[group[0]].length; k++) {
        if (k === bestPick[group[0]]) continue;
        flips.push({ group, k, predicted: linearMerit(design(flipped(bestPick, group, k))) });
      }
    }
    flips.sort((a, b) => a.predicted - b.predicted);
    let improved = false;
    for (const flip of flips.slice(0, 3)) {
      const p = flipped(bestPick, flip.group, flip.k);
      const trial = evaluate(p);
      if (trial && snappedBetter(trial, best, options.merit)) {
        best = trial;
        bestPick = p;
        improved = true;
        break;
      }
    }
    if (!improved) break;
  }
  // Targeted repair: a gate over the shear limit opens by one step (its candidates hold one
  // beyond the upper neighbour), confirmed on the true model, while that lowers the merit.
  for (let repair = 0; repair < space.variables.length && !best.feasible; repair++) {
    const over = best.violations.filter((x) => x.code === "gate_shear").map((x) => x.element);
    const p = [...bestPick];
    let moved = false;
    space.variables.forEach((v, j) => {
      if (v.kind === "gate" && over.includes(v.element) && p[j] + 1 < candidates[j].length) {
        p[j]++;
        moved = true;
      }
    });
    if (!moved) break;
    const trial = evaluate(p);
    if (!trial || !snappedBetter(trial, best, options.merit)) break;
    best = trial;
    bestPick = p;
  }
  const choices = space.variables.map((v, j) => ({
    element: v.element,
    continuous: continuous.x[j],
    snapped: candidates[j][bestPick[j]].size,
    label: candidates[j][bestPick[j]].label,
  }));
  const message = `snapped to ${snapMethod(catalogue)}; ${
    snapVerdict(options.reference ?? continuous, best)
  }`;
  return { evaluation: best, choices, simulations, message };
}

/**
 * The merit of `x` predicted by the step LP's own log-linear model around `base`
 * (`modelResponses`), the peak gate shear moved by the same factor as the balanced-split
 * one; the base merit when there are no slopes.
 */
function predictMerit(
  space: DesignSpace,
  base: DesignEvaluation,
  s: Sensitivities | undefined,
  x: Float64Array,
  merit: (e: DesignEvaluation) => number,
): number {
  if (!s) return merit(base);
  const model = modelResponses(space, base, s, x);
  const predicted: DesignEvaluation = {
    ...base,
    x,
    fillTimes: model.times,
    gateShearBalanced: model.shear,
    gateShear: base.gateShear.map((g, i) =>
      base.gateShearBalanced[i] > 0 ? g * (model.shear[i] / base.gateShearBalanced[i]) : g
    ),
    feedPressurePeak: model.pressure,
    runnerVolume: model.volume,
    violations: [],
  };
  return merit(predicted);
}
