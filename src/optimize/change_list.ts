import type { Scenario } from "../model/scenario_schema.ts";
import { M_PER_INCH, mToMm } from "../model/units.ts";
import type { DesignSpace } from "./design_space.ts";
import { type DesignEvaluation, evaluateDesign } from "./evaluate_design.ts";
import type { SnapReport } from "./snap_design.ts";
import { nextTurn, type StopOptions, type StopReason, stopReason } from "./stop.ts";

/**
 * The change list a toolmaker works from: every size that differs between the
 * design today and the optimizer's answer, ordered so that each cut moves the
 * balance most (greedy, every candidate order step confirmed by a full
 * simulation), with the simulated imbalance, pressure and runner volume after
 * each step. The optimizer's last step (`balance.ts`), counted and stoppable; the
 * reports only print it.
 *
 * @module
 */

/** One change of one element. */
export interface Change {
  element: string;
  kind: "runner" | "gate";
  /** Runner shape or gate type and section. */
  section: string;
  dimension: "diameter" | "thickness";
  /** m */
  from: number;
  to: number;
  /** Cutter or step label of the new size. */
  cutter: string;
  /** true: only steel is removed (an enlargement); false: steel must be added (weld or insert). */
  steelSafe: boolean;
  /** Where the cut is made. */
  moldHalf: "fixed" | "moving" | "both";
  /** Position in the order of work, 1-based. */
  step: number;
  /** Simulated after this step (and all before it). */
  after: {
    imbalancePercent: number;
    feedPressurePeak: number;
    runnerVolume: number;
    feasible: boolean;
  };
}

/** Greedy ordering is simulated up to this many changes; beyond, the order is by size of change. */
export const SIMULATED_ORDER_LIMIT = 10;

/** The change plan: the steps in order of work and what they cost to work out. */
export interface ChangePlan {
  steps: Change[];
  /** Simulations spent ordering and checking the steps. */
  simulations: number;
  /** False when the plan was stopped before every step was simulated. */
  complete: boolean;
  stopped?: StopReason;
}

const notSimulated: Change["after"] = {
  imbalancePercent: NaN,
  feedPressurePeak: NaN,
  runnerVolume: NaN,
  feasible: false,
};

/**
 * Order the changes from `before` to `after` (designs of `space`): greedily, the change
 * whose simulation leaves the lowest imbalance first (up to {@link SIMULATED_ORDER_LIMIT}
 * changes; beyond, largest relative change first, each prefix simulated once). Stops
 * between simulations on a signal or deadline, returning `complete: false`.
 */
export async function planChanges(
  space: DesignSpace,
  before: DesignEvaluation,
  after: DesignEvaluation,
  snap: SnapReport | undefined,
  stop: StopOptions = {},
): Promise<ChangePlan> {
  const scenario = space.scenario;
  const labels = new Map((snap?.choices ?? []).map((c) => [c.element, c.label]));
  const changed = space.variables.flatMap((_, j) =>
    Math.abs(after.x[j] - before.x[j]) > 1e-9 * before.x[j] ? [j] : []
  );
  const order: number[] = [];
  const results: Change["after"][] = [];
  const x = Float64Array.from(before.x);
  const remaining = [...changed];
  const greedy = changed.length <= SIMULATED_ORDER_LIMIT;
  if (!greedy) {
    remaining.sort((a, b) =>
      Math.abs(after.x[b] / before.x[b] - 1) - Math.abs(after.x[a] / before.x[a] - 1)
    );
  }
  let simulations = 0;
  let stopped: StopReason | undefined;
  const simulate = async (design: Float64Array): Promise<Change["after"] | undefined> => {
    await nextTurn();
    stopped ??= stopReason(stop);
    if (stopped) return undefined;
    simulations++;
    const e = evaluateDesign(space, design, stop);
    if (!e.ok) {
      stopped ??= e.stopped;
      return stopped ? undefined : notSimulated;
    }
    return {
      imbalancePercent: e.evaluation.imbalancePercent,
      feedPressurePeak: e.evaluation.feedPressurePeak,
      runnerVolume: e.evaluation.runnerVolume,
      feasible: e.evaluation.feasible,
    };
  };
  while (remaining.length > 0 && !stopped) {
    let best = 0;
    let bestResult: Change["after"] | undefined;
    if (greedy) {
      for (const [k, j] of remaining.entries()) {
        const trial = Float64Array.from(x);
        trial[j] = after.x[j];
        const r = await simulate(trial);
        if (stopped) break;
        if (!r || Number.isNaN(r.imbalancePercent)) continue;
        if (!bestResult || r.imbalancePercent < bestResult.imbalancePercent) {
          best = k;
          bestResult = r;
        }
      }
      if (stopped) break;
    }
    const j = remaining.splice(best, 1)[0];
    x[j] = after.x[j];
    bestResult ??= await simulate(Float64Array.from(x));
    if (stopped || !bestResult) break;
    order.push(j);
    results.push(bestResult);
  }
  const steps = order.map((j, k): Change => {
    const v = space.variables[j];
    return {
      element: v.element,
      kind: v.kind,
      section: sectionOf(scenario, v.kind, v.index),
      dimension: v.dimension,
      from: before.x[j],
      to: after.x[j],
      cutter: labels.get(v.element) ?? `${mToMm(after.x[j]).toFixed(2)} mm`,
      steelSafe: after.x[j] >= before.x[j],
      moldHalf: moldHalfOf(scenario, v.kind, v.index),
      step: k + 1,
      after: results[k],
    };
  });
  return { steps, simulations, complete: !stopped && steps.length === changed.length, stopped };
}

function sectionOf(s: Scenario, kind: "runner" | "gate", index: number): string {
  if (kind === "runner") return s.runners[index].shape;
  const g = s.gates[index];
  return g.type === "tunnel" ? `tunnel ${g.section}` : g.type;
}

function moldHalfOf(s: Scenario, kind: "runner" | "gate", index: number): Change["moldHalf"] {
  if (kind === "runner") {
    const r = s.runners[index];
    return r.mold_half ?? (r.shape === "round" ? "both" : "moving");
  }
  // A tunnel gate is cut into one half; edge and pin gates follow the parting line (common practice).
  return s.gates[index].type === "tunnel" ? "moving" : "both";
}

/** A size in mm and inch for the sheet. */
export function dualSize(m: number): string {
  return `${mToMm(m).toFixed(2)} mm (${(m / M_PER_INCH).toFixed(4)} in)`;
}
