import type { Scenario } from "../model/scenario_schema.ts";
import { M_PER_INCH, mToMm } from "../model/units.ts";
import type { BalanceOutcome } from "./balance.ts";
import { evaluateDesign } from "./evaluate_design.ts";

/**
 * The change list a toolmaker works from: every size that differs between the
 * design today and the optimizer's answer, ordered so that each cut moves the
 * balance most (greedy, every candidate order step confirmed by a full
 * simulation), with the simulated imbalance, pressure and runner volume after
 * each step.
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

/** Build the ordered change list of an optimization outcome. */
export function changeList(outcome: BalanceOutcome): Change[] {
  const { space, before, after } = outcome;
  const scenario = space.scenario;
  const labels = new Map((outcome.snap?.choices ?? []).map((c) => [c.element, c.label]));
  const changed = space.variables.flatMap((_, j) =>
    Math.abs(after.x[j] - before.x[j]) > 1e-9 * before.x[j] ? [j] : []
  );
  const order: number[] = [];
  const results: Change["after"][] = [];
  const x = Float64Array.from(before.x);
  const remaining = [...changed];
  const simulate = changed.length <= SIMULATED_ORDER_LIMIT;
  if (!simulate) {
    remaining.sort((a, b) =>
      Math.abs(after.x[b] / before.x[b] - 1) - Math.abs(after.x[a] / before.x[a] - 1)
    );
  }
  while (remaining.length > 0) {
    let best = 0;
    let bestResult: Change["after"] | undefined;
    if (simulate) {
      remaining.forEach((j, k) => {
        const trial = Float64Array.from(x);
        trial[j] = after.x[j];
        const e = evaluateDesign(space, trial);
        if (!e.ok) return;
        const r = {
          imbalancePercent: e.evaluation.imbalancePercent,
          feedPressurePeak: e.evaluation.feedPressurePeak,
          runnerVolume: e.evaluation.runnerVolume,
          feasible: e.evaluation.feasible,
        };
        if (!bestResult || r.imbalancePercent < bestResult.imbalancePercent) {
          best = k;
          bestResult = r;
        }
      });
    }
    const j = remaining.splice(best, 1)[0];
    x[j] = after.x[j];
    if (!bestResult) {
      const e = evaluateDesign(space, Float64Array.from(x));
      bestResult = e.ok
        ? {
          imbalancePercent: e.evaluation.imbalancePercent,
          feedPressurePeak: e.evaluation.feedPressurePeak,
          runnerVolume: e.evaluation.runnerVolume,
          feasible: e.evaluation.feasible,
        }
        : { imbalancePercent: NaN, feedPressurePeak: NaN, runnerVolume: NaN, feasible: false };
    }
    order.push(j);
    results.push(bestResult);
  }
  return order.map((j, k) => {
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
