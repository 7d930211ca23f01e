import type { Scenario } from "../model/scenario_schema.ts";
import { M_PER_INCH, mToMm } from "../model/units.ts";
import { runSetup } from "../network/simulate_scenario.ts";
import type { DesignSpace } from "./design_space.ts";
import { type DesignEvaluation, evaluateDesign, simulationsOf } from "./evaluate_design.ts";
import type { SnapReport } from "./snap_design.ts";
import { nextTurn, type StopOptions, type StopReason, stopReason } from "./stop.ts";

/**
 * The change list a toolmaker works from: every size that differs between the design
 * today and the optimizer's answer. The optimizer's last step (`balance.ts`), counted and
 * stoppable; the reports only print it.
 *
 * A new tool (`goals.mode` "new_tool") has no steel to change: the list is the drawing's
 * sizes ("cut to"), in the design's own order, with the final design's figures (no
 * simulation). An existing tool (trim, steel_safe) is changed one step at a time and shot
 * after each, so the order is searched so that every step can be checked on the press:
 *
 * - each round simulates the single changes left (all of them up to
 *   {@link SIMULATED_ORDER_LIMIT}; beyond, the {@link RANKED_SINGLES} the linear model of
 *   the current tool ranks best) and takes the one with the lowest imbalance among those
 *   that keep it at or below the bound: today's imbalance, or the final design's when
 *   that is higher (the last step is the final design whatever the order);
 * - when none does, the sets of like changes left (same kind, section and sizes: the
 *   symmetric branches of a balanced tree) are simulated, each cut together as one step;
 * - when none of those does, pairs are simulated (every pair while at most
 *   {@link SIMULATED_ORDER_LIMIT} changes are left; beyond, the {@link RANKED_PAIRS} best by
 *   the linear model), and the best pair within the bound becomes one step, cut together;
 * - when no pair does either, the lowest single is taken and the step says that and why.
 *
 * Every step carries each cavity's predicted fill and short-shot mass at the instant the
 * first cavity is full, as the plan's start (step 0, today's tool) does, so the shop can
 * weigh a short shot after each cut and compare.
 *
 * @module
 */

/** What a step does to the steel. */
export type ChangeAction =
  /** A new tool: the size is cut as drawn. */
  | "cut_to"
  /** An existing tool: the channel is opened up (only steel removed). */
  | "enlarge"
  /** An existing tool: the channel is made smaller, steel must be added (weld or insert). */
  | "add_steel";

/** One cavity of a short shot stopped when the first cavity is full. */
export interface CavityShortShot {
  cavity: string;
  /** Fill fraction, 0…1. */
  fill: number;
  /** Fill fraction × the part's mass (solid density), kg. */
  mass: number;
}

/** The tool's predicted state after a step (or today, for the start). */
export interface StepState {
  imbalancePercent: number;
  /** Pa */
  feedPressurePeak: number;
  /** Cold runner volume, m³. */
  runnerVolume: number;
  feasible: boolean;
  /** When the first cavity is full, s (NaN if not simulated). */
  firstFullTime: number;
  /** Each cavity, in cavity order, at `firstFullTime` (empty if not simulated). */
  shortShot: CavityShortShot[];
}

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
  /** What is done to the steel: cut as drawn (new tool), enlarge, or add steel. */
  action: ChangeAction;
  /**
   * true: no steel is added (an enlargement, or any size of a new tool); false: steel must
   * be added (weld or insert). Meaningful for an existing tool only.
   */
  steelSafe: boolean;
  /** Where the cut is made. */
  moldHalf: "fixed" | "moving" | "both";
  /** Position in the order of work, 1-based; changes cut together share their number. */
  step: number;
  /** Cut together with the other changes of the same step (no single one keeps the balance). */
  together: boolean;
  /** The imbalance after this step is above today's (an existing tool). */
  aboveStart: boolean;
  /** Why, when `aboveStart`. */
  aboveStartReason?: string;
  /** Simulated after this step (and all before it); a new tool's: the final design. */
  after: StepState;
}

/**
 * Every single change is simulated in a round while at most this many are left, and
 * every pair when no single change keeps the bound.
 */
export const SIMULATED_ORDER_LIMIT = 10;
/**
 * Imbalance within this many percentage points of the bound counts as within it: below what
 * weighed short shots resolve, and below the sheet's two decimals.
 */
export const IMBALANCE_TOLERANCE_PERCENT = 0.005;
/** With more changes left, this many singles ranked by the linear model are simulated. */
export const RANKED_SINGLES = 5;
/** With more changes left, this many pairs ranked by the linear model are simulated. */
export const RANKED_PAIRS = 10;

/** The change plan: the steps in order of work and what they cost to work out. */
export interface ChangePlan {
  steps: Change[];
  /** Simulations spent ordering and checking the steps. */
  simulations: number;
  /** False when the plan was stopped before every step was simulated. */
  complete: boolean;
  stopped?: StopReason;
  /** The scenario's mode the plan was made for. */
  mode: Scenario["goals"]["mode"];
  /** Step 0: today's tool (an existing tool only). */
  start?: StepState;
  /** The bound the order keeps every step within: max(today's, final design's) imbalance, %. */
  bound?: number;
}

const notSimulated: StepState = {
  imbalancePercent: NaN,
  feedPressurePeak: NaN,
  runnerVolume: NaN,
  feasible: false,
  firstFullTime: NaN,
  shortShot: [],
};

/**
 * Each cavity's fill fraction and short-shot mass at the instant the first cavity is
 * full, the fill history interpolated linearly at that instant (extended along its last
 * interval when that instant is after switchover); `solidDensity` kg/m³.
 */
export function shortShotAtFirstFull(
  evaluation: Pick<DesignEvaluation, "fill" | "network">,
  solidDensity: number,
): { time: number; cavities: CavityShortShot[] } {
  const { fill, network } = evaluation;
  const time = Math.min(...fill.cavities.map((c) => c.fillTime));
  const history = fill.history;
  if (!Number.isFinite(time) || history.length === 0) return { time: NaN, cavities: [] };
  // A first fill after switchover (the end of the recorded velocity phase) is reached along
  // the last recorded interval's intake, as the fill's own cavity fill times are.
  let k = history.findIndex((h) => h.time >= time);
  if (k < 0) k = history.length - 1;
  const b = history[k];
  const a = history[Math.max(0, k - 1)];
  const w = b.time > a.time ? Math.max(0, (time - a.time) / (b.time - a.time)) : 1;
  return {
    time,
    cavities: network.cavities.map((c, i) => {
      const f = Math.min(1, a.cavityFill[i] + w * (b.cavityFill[i] - a.cavityFill[i]));
      return { cavity: c.id, fill: f, mass: f * c.volume * solidDensity };
    }),
  };
}

function stateOf(e: DesignEvaluation, solidDensity: number): StepState {
  const shot = shortShotAtFirstFull(e, solidDensity);
  return {
    imbalancePercent: e.imbalancePercent,
    feedPressurePeak: e.feedPressurePeak,
    runnerVolume: e.runnerVolume,
    feasible: e.feasible,
    firstFullTime: shot.time,
    shortShot: shot.cavities,
  };
}

/** One step of the order: the changes (indices into the space's variables) and the state after. */
interface Taken {
  changes: number[];
  state: StepState;
  aboveStart: boolean;
  reason?: string;
}

/**
 * The change plan from `before` to `after` (designs of `space`): a new tool's sizes as
 * drawn, or an existing tool's steps in an order every one of which can be checked on the
 * press (see the module comment). Stops between simulations on a signal or deadline,
 * returning `complete: false`.
 */
export async function planChanges(
  space: DesignSpace,
  before: DesignEvaluation,
  after: DesignEvaluation,
  snap: SnapReport | undefined,
  stop: StopOptions = {},
): Promise<ChangePlan> {
  const scenario = space.scenario;
  const mode = scenario.goals.mode;
  const density = runSetup(scenario).material.solidDensity;
  const labels = new Map((snap?.choices ?? []).map((c) => [c.element, c.label]));
  const changed = space.variables.flatMap((_, j) =>
    Math.abs(after.x[j] - before.x[j]) > 1e-9 * before.x[j] ? [j] : []
  );
  const change = (j: number, step: number, taken: Taken, together: boolean): Change => {
    const v = space.variables[j];
    const enlarge = after.x[j] >= before.x[j];
    return {
      element: v.element,
      kind: v.kind,
      section: sectionOf(scenario, v.kind, v.index),
      dimension: v.dimension,
      from: before.x[j],
      to: after.x[j],
      cutter: labels.get(v.element) ?? `${mToMm(after.x[j]).toFixed(2)} mm`,
      action: mode === "new_tool" ? "cut_to" : enlarge ? "enlarge" : "add_steel",
      steelSafe: mode === "new_tool" || enlarge,
      moldHalf: moldHalfOf(scenario, v.kind, v.index),
      step,
      together,
      aboveStart: taken.aboveStart,
      ...(taken.reason ? { aboveStartReason: taken.reason } : {}),
      after: taken.state,
    };
  };
  if (mode === "new_tool") {
    // Nothing is cut yet: the drawing's sizes, with the final design's own figures.
    const final = stateOf(after, density);
    const taken: Taken = { changes: [], state: final, aboveStart: false };
    return {
      steps: changed.map((j, k) => change(j, k + 1, taken, false)),
      simulations: 0,
      complete: true,
      mode,
    };
  }
  const start = stateOf(before, density);
  const ordered = await orderExisting(space, before, after, changed, density, stop);
  const steps = ordered.taken.flatMap((t, k) =>
    t.changes.map((j) => change(j, k + 1, t, t.changes.length > 1))
  );
  const complete = !ordered.stopped && steps.length === changed.length;
  return {
    steps,
    simulations: ordered.simulations,
    complete,
    ...(ordered.stopped ? { stopped: ordered.stopped } : {}),
    mode,
    start,
    bound: ordered.bound,
  };
}

/** The search of the module comment, for an existing tool. */
async function orderExisting(
  space: DesignSpace,
  before: DesignEvaluation,
  after: DesignEvaluation,
  changed: number[],
  density: number,
  stop: StopOptions,
): Promise<{ taken: Taken[]; simulations: number; stopped?: StopReason; bound: number }> {
  const startImbalance = before.imbalancePercent;
  const bound = Math.max(startImbalance, after.imbalancePercent);
  const within = (imbalance: number, limit: number) =>
    imbalance <= limit + IMBALANCE_TOLERANCE_PERCENT;
  let simulations = 0;
  let stopped: StopReason | undefined;
  const finalKey = keyOf(after.x);
  const evaluate = async (design: Float64Array, slopes = false) => {
    if (!slopes && keyOf(design) === finalKey) return after;
    await nextTurn();
    stopped ??= stopReason(stop);
    if (stopped) return undefined;
    const e = evaluateDesign(space, design, { ...stop, slopes });
    simulations += simulationsOf(e);
    if (!e.ok) {
      stopped ??= e.stopped;
      return null;
    }
    return e.evaluation;
  };
  const x = Float64Array.from(before.x);
  const trialOf = (js: readonly number[]) => {
    const trial = Float64Array.from(x);
    for (const j of js) trial[j] = after.x[j];
    return trial;
  };
  const taken: Taken[] = [];
  const remaining = [...changed];
  while (remaining.length > 0 && !stopped) {
    const many = remaining.length > SIMULATED_ORDER_LIMIT;
    // The linear model of the current tool ranks candidates when not all are simulated.
    let rank: ((js: readonly number[]) => number) | undefined;
    if (many) {
      const withSlopes = await evaluate(Float64Array.from(x), true);
      if (withSlopes === undefined) break;
      rank = withSlopes ? linearImbalance(withSlopes, x, after.x) : undefined;
    }
    const singles = remaining.map((j) => [j]);
    const trySingles = many
      ? (rank
        ? [...singles].sort((a, b) => rank!(a) - rank!(b))
        : [...singles].sort((a, b) =>
          relativeChange(b[0], x, after.x) - relativeChange(a[0], x, after.x)
        ))
        .slice(0, RANKED_SINGLES)
      : singles;
    const simulateAll = async (moves: readonly number[][]) => {
      const tried: { changes: number[]; e: DesignEvaluation }[] = [];
      for (const js of moves) {
        const e = await evaluate(trialOf(js));
        if (e === undefined) break;
        if (e && Number.isFinite(e.imbalancePercent)) tried.push({ changes: [...js], e });
      }
      return tried;
    };
    const lowest = (list: Awaited<ReturnType<typeof simulateAll>>, limit: number) =>
      list.filter((t) => within(t.e.imbalancePercent, limit))
        .sort((a, b) => a.e.imbalancePercent - b.e.imbalancePercent)[0];
    const tried = await simulateAll(trySingles);
    if (stopped) break;
    let pick = lowest(tried, bound);
    if (!pick) {
      // Like changes (same kind, section and sizes: symmetric branches) cut together.
      pick = lowest(await simulateAll(likeSets(space, remaining, x, after.x)), bound);
      if (stopped) break;
    }
    if (!pick && remaining.length >= 2) {
      const pairs: number[][] = [];
      for (let a = 0; a < remaining.length; a++) {
        for (let b = a + 1; b < remaining.length; b++) pairs.push([remaining[a], remaining[b]]);
      }
      const tryPairs = many && rank
        ? pairs.sort((p, q) => rank!(p) - rank!(q)).slice(0, RANKED_PAIRS)
        : many
        ? []
        : pairs;
      pick = lowest(await simulateAll(tryPairs), bound);
      if (stopped) break;
    }
    let reason: string | undefined;
    if (!pick) {
      pick = lowest(tried, Infinity);
      if (!pick) {
        // No candidate simulated: the largest change, marked so.
        const j = remaining.reduce((best, k) =>
          relativeChange(k, x, after.x) > relativeChange(best, x, after.x) ? k : best
        );
        remaining.splice(remaining.indexOf(j), 1);
        x[j] = after.x[j];
        taken.push({
          changes: [j],
          state: notSimulated,
          aboveStart: true,
          reason: "not simulated",
        });
        continue;
      }
      reason =
        `no single change${
          remaining.length >= 2 ? ", set of like changes or pair of changes" : ""
        } left ` +
        `keeps the imbalance at or below ${bound.toFixed(2)} %: ` +
        `the lowest next is ${pick.e.imbalancePercent.toFixed(2)} %`;
    }
    const e = pick.e;
    const aboveStart = !within(e.imbalancePercent, startImbalance);
    if (aboveStart && !reason) {
      reason = `the final design's imbalance (${after.imbalancePercent.toFixed(2)} %) ` +
        `is above today's (${startImbalance.toFixed(2)} %); this step stays within it`;
    }
    if (aboveStart) reason = `${leadText(e)}; ${reason}`;
    for (const j of pick.changes) {
      remaining.splice(remaining.indexOf(j), 1);
      x[j] = after.x[j];
    }
    taken.push({
      changes: pick.changes,
      state: stateOf(e, density),
      aboveStart,
      ...(reason ? { reason } : {}),
    });
  }
  return { taken, simulations, ...(stopped ? { stopped } : {}), bound };
}

/** Which cavity fills first and which last, in words. */
function leadText(e: DesignEvaluation): string {
  const ids = e.network.cavities.map((c) => c.id);
  const times = e.fillTimes;
  const first = times.indexOf(Math.min(...times));
  const last = times.indexOf(Math.max(...times));
  return `rises to ${e.imbalancePercent.toFixed(2)} % (${ids[first]} fills first, ${
    ids[last]
  } last)`;
}

/** |to/from − 1| of change j from the current design. */
function relativeChange(j: number, x: ArrayLike<number>, target: ArrayLike<number>): number {
  return Math.abs(target[j] / x[j] - 1);
}

/**
 * The imbalance the linear model of `e` predicts when changes `js` are made: split fill
 * times moved by their slopes, (max − min)/max in %.
 */
function linearImbalance(
  e: DesignEvaluation,
  x: ArrayLike<number>,
  target: ArrayLike<number>,
): ((js: readonly number[]) => number) | undefined {
  const slopes = e.slopes;
  if (!slopes) return undefined;
  const t0 = e.splitFillTimes;
  return (js) => {
    const t = t0.map((ti, i) =>
      js.reduce((sum, j) => sum + slopes.fillTime[i][j] * (target[j] - x[j]), ti)
    );
    const max = Math.max(...t);
    const value = ((max - Math.min(...t)) / max) * 100;
    return Number.isFinite(value) ? value : Infinity;
  };
}

/** Sets of two or more remaining changes alike in kind, section, dimension and both sizes. */
function likeSets(
  space: DesignSpace,
  remaining: readonly number[],
  x: ArrayLike<number>,
  target: ArrayLike<number>,
): number[][] {
  const sets = new Map<string, number[]>();
  for (const j of remaining) {
    const v = space.variables[j];
    const key = [
      v.kind,
      sectionOf(space.scenario, v.kind, v.index),
      v.dimension,
      mToMm(x[j]).toFixed(4),
      mToMm(target[j]).toFixed(4),
    ].join("|");
    sets.set(key, [...(sets.get(key) ?? []), j]);
  }
  return [...sets.values()].filter((set) => set.length >= 2);
}

function keyOf(x: ArrayLike<number>): string {
  return Array.from(x).join(",");
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
