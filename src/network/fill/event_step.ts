import type { Branch } from "./assemble.ts";
import type { ChannelLaw } from "../../physics/mod.ts";
import { CLOSURE_FRACTION, frozenAt, frozenFixedFrom } from "./channel_laws.ts";
import type { FillContext } from "./context.ts";
import type { FillState } from "./fill_state.ts";
import { type Solved, solveInstant, type SolveStats } from "./solve_instant.ts";

/**
 * Relative tolerance for landing a step on an element's or cavity's full volume: the hydraulic
 * solve's own tolerance (1e-10); a tighter landing would chase the noise that leaves in the flows.
 */
export const EVENT_TOLERANCE = 1e-10;
/**
 * Branches this close to capacity (relative) at the end of a step are full with it: a thousand
 * landing tolerances, so that branches filling together within the landing's noise fill at one
 * event.
 */
const SNAP_WINDOW = 1e-7;

/** Where one step may go. */
export interface EventStepOptions {
  /** Proposed step length, s. */
  h: number;
  /** An instant the step must not pass (switchover, a requested sample), s; Infinity for none. */
  landAt: number;
  /** Largest change of any branch flow within a step, as a fraction of the injection rate. */
  flowChangeTolerance: number;
}

/** What one step did. */
export type EventStepOutcome =
  | { kind: "failure"; failure: string }
  | { kind: "no_open_branch" }
  | {
    kind: "step";
    /** Length integrated, s (before the landing correction). */
    length: number;
    /** Time advanced, s: the length less the surplus volume over the injection rate. */
    advanced: number;
    /** The state solved at the end of the step, on the assembly it started from. */
    end: Solved;
    /** The step ends on `landAt`. */
    onLanding: boolean;
    /** The step was aimed at a predicted event from the start. */
    aimedAtEvent: boolean;
    /** Steps halved by the flow-change control. */
    rejected: number;
    /** Elements that became full, in the order found. */
    newlyFull: number[];
  };

/** A frozen layer past this share of what closes its section is closing (its step is watched). */
const CLOSING_FROM = 0.5;
/** Most growth of a closing layer in one step, as a share of what closes its section. */
const CLOSING_STEP_SHARE = 0.02;

/**
 * The step shortened (halved, at most 30 times) until no section whose frozen layer would be
 * past CLOSING_FROM of closing it grows by more than CLOSING_STEP_SHARE of that within it: a
 * section freezing shut is found at the end of a step, and the flow-change control alone let
 * that be a step late where the flows still changed little.
 */
function closingStep(ctx: FillContext, state: FillState, s0: Solved, proposed: number): number {
  if (ctx.process.isothermal) return proposed;
  const t = state.time;
  let step = proposed;
  for (let halving = 0; halving < 30; halving++) {
    let ok = true;
    for (const br of s0.assembly.branches) {
      const e = ctx.elements[br.element];
      if (e.heated || state.closed[e.index]) continue;
      const closes = CLOSURE_FRACTION * ctx.closing[e.index];
      const after = frozenAt(ctx, state, e, t + step, br.side);
      if (after < CLOSING_FROM * closes) continue;
      if (after - frozenAt(ctx, state, e, t, br.side) > CLOSING_STEP_SHARE * closes) {
        ok = false;
        break;
      }
    }
    if (ok) return step;
    step /= 2;
  }
  return step;
}

/**
 * One accepted step of the fill from the solved state `s0`: Heun's method (explicit trapezoid)
 * on the filled volumes of every filling branch, the length bounded by the earliest predicted
 * event, by switchover, and by the change of the branch flows (halved while any changes by
 * more than twice the tolerance). It lands exactly on the first branch to reach its capacity:
 * a short step is extended by secant until the event is bracketed, then closed in with the
 * Illinois variant of regula falsi on v_b(length) − capacity (Dowell & Jarratt (1971) BIT
 * 11:168), switching to any branch that fills earlier inside the shorter step. The accepted
 * volumes snap to capacity, and the event time moves so that Σ filled = Q·t exactly.
 *
 * Mutates `state.fill` and `state.time`; everything else is the caller's to update.
 */
export function eventStep(
  ctx: FillContext,
  state: FillState,
  stats: SolveStats,
  s0: Solved,
  options: EventStepOptions,
): EventStepOutcome {
  const { elements, nominalFillTime } = ctx;
  const Q = ctx.injectionRate;
  const fill = state.fill;
  const t = state.time;
  const { landAt } = options;
  const partial = s0.assembly.branches.map((br, k) => ({ br, k })).filter(({ br }) => br.side >= 0);
  if (partial.length === 0) return { kind: "no_open_branch" };
  const capacity = (br: Branch) => {
    const e = elements[br.element];
    return e.volume - fill[2 * e.index + (1 - br.side)] * (e.kind === "cavity" ? 0 : 1);
  };

  // Earliest predicted event (Euler estimate) bounds the step.
  let target = -1;
  let hEvent = Infinity;
  for (const { br, k } of partial) {
    const q = s0.flows[k];
    if (q <= 0) continue;
    const remaining = capacity(br) - fill[2 * br.element + br.side];
    const tau = remaining / q;
    if (tau < hEvent) {
      hEvent = tau;
      target = k;
    }
  }
  let step = Math.min(options.h, hEvent, nominalFillTime / 40);
  step = closingStep(ctx, state, s0, step);
  let onLanding = false;
  if (t + step >= landAt) {
    step = landAt - t;
    onLanding = true;
  }
  let aimedAtEvent = !onLanding && step === hEvent;
  let rejected = 0;

  // The last trial's length and end flows: later trials start Newton from the flows
  // interpolated linearly in the length between s0 and it (mass-balanced like both).
  let lastLength = 0;
  let lastFlows = s0.flows;
  let lastSolved = s0;
  // Full branches whose law stays the same for the whole step (frozenFixedFrom at its start):
  // every trial after the first takes the first trial's law for them.
  const fixed = new Uint8Array(s0.assembly.branches.length);
  s0.assembly.branches.forEach((br, k) => {
    if (frozenFixedFrom(ctx, state, elements[br.element], t, br.side)) fixed[k] = 1;
  });
  let stepLaws: readonly ChannelLaw[] | undefined;
  const warmAt = (length: number): Float64Array => {
    if (lastLength === 0) return s0.flows;
    const w = length / lastLength;
    const warm = new Float64Array(s0.flows.length);
    for (let k = 0; k < warm.length; k++) warm[k] = s0.flows[k] + w * (lastFlows[k] - s0.flows[k]);
    return warm;
  };
  // One Heun step of length `length` from the current state.
  const trial = (
    length: number,
  ): { next: Float64Array; s1: Solved; change: number } | { failure: string } => {
    const predicted = fill.slice();
    for (const { br, k } of partial) predicted[2 * br.element + br.side] += length * s0.flows[k];
    const s1 = solveInstant(ctx, state, stats, {
      t: t + length,
      volumes: predicted,
      assembly: s0.assembly,
      warm: warmAt(length),
      from: lastSolved,
      reuse: stepLaws ? { laws: stepLaws, fixed } : undefined,
    });
    if ("failure" in s1) return s1;
    stepLaws ??= s1.laws;
    lastLength = length;
    lastFlows = s1.flows;
    lastSolved = s1;
    let change = 0;
    const next = fill.slice();
    for (const { br, k } of partial) {
      change = Math.max(change, Math.abs(s1.flows[k] - s0.flows[k]) / Q);
      next[2 * br.element + br.side] += (length * (s0.flows[k] + s1.flows[k])) / 2;
    }
    return { next, s1, change };
  };
  // Fraction of the step at which a branch would reach capacity (linear in the step), or Infinity.
  const crossing = (next: Float64Array): { k: number; fraction: number } => {
    let best = { k: -1, fraction: Infinity };
    for (const { br, k } of partial) {
      const index = 2 * br.element + br.side;
      const cap = capacity(br);
      if ((next[index] - cap) / cap <= EVENT_TOLERANCE) continue;
      const fraction = (cap - fill[index]) / (next[index] - fill[index]);
      if (fraction < best.fraction) best = { k, fraction };
    }
    return best;
  };
  const missOf = (next: Float64Array, k: number) => {
    const br = s0.assembly.branches[k];
    const cap = capacity(br);
    return (next[2 * br.element + br.side] - cap) / cap;
  };

  /**
   * The step at which branch k reaches capacity if its flow changes linearly over the step,
   * q(τ) = q0 + a·τ with a from the trial of length `length` (flow `q1` there): the Heun
   * volume q0·h + a·h²/2 then equals what is left, a quadratic whose root is exact to the
   * flows' curvature (h³), where a secant on the miss is exact only to their slope (h²).
   * NaN when the model has no positive root.
   */
  const quadraticLanding = (k: number, length: number, q1: number): number => {
    const br = s0.assembly.branches[k];
    const left = capacity(br) - fill[2 * br.element + br.side];
    const q0 = s0.flows[k];
    const a = (q1 - q0) / length;
    const discriminant = q0 * q0 + 2 * a * left;
    if (!(discriminant >= 0) || !(left > 0)) return NaN;
    const denominator = q0 + Math.sqrt(discriminant);
    return denominator > 0 ? (2 * left) / denominator : NaN;
  };

  let result = trial(step);
  if ("failure" in result) return { kind: "failure", failure: result.failure };
  // Flow-change control, on a step aimed at an event too: a front entering the narrow end
  // of a tunnel gate slows sharply within such a step, and one Heun step across it would
  // decide which gate fills first by the step's length rather than by the flows.
  while (result.change > 2 * options.flowChangeTolerance && step > nominalFillTime * 1e-9) {
    step /= 2;
    onLanding = false;
    aimedAtEvent = false;
    rejected++;
    result = trial(step);
    if ("failure" in result) return { kind: "failure", failure: result.failure };
  }
  let landing = crossing(result.next).k;
  // The longest trial known to fall short of the target, to bracket from (not from 0).
  let short = { step: 0, miss: NaN };
  if (landing < 0 && aimedAtEvent && missOf(result.next, target) < -EVENT_TOLERANCE) {
    // Fell short of the predicted event: extend to the root of the linear-flow model (a
    // secant 2 % long of it where the model has none) until it lands or is bracketed.
    for (let extend = 0; extend < 6 && landing < 0; extend++) {
      const miss = missOf(result.next, target);
      if (miss >= -EVENT_TOLERANCE) break;
      const br = s0.assembly.branches[target];
      const v0 = fill[2 * br.element + br.side];
      const gained = result.next[2 * br.element + br.side] - v0;
      const modelled = quadraticLanding(target, step, result.s1.flows[target]);
      const longer = modelled > step
        ? Math.min(4 * step, modelled)
        : step * Math.min(4, ((capacity(br) - v0) / Math.max(gained, 1e-300)) * 1.02);
      if (t + longer >= landAt) break;
      const attempt = trial(longer);
      if ("failure" in attempt) return { kind: "failure", failure: attempt.failure };
      short = { step, miss };
      step = longer;
      result = attempt;
      landing = crossing(result.next).k;
      if (landing < 0 && missOf(result.next, target) >= -EVENT_TOLERANCE) landing = target;
    }
  }
  if (landing >= 0 && Math.abs(missOf(result.next, landing)) > EVENT_TOLERANCE) {
    onLanding = false;
    const gZero = () => {
      const br = s0.assembly.branches[landing];
      const cap = capacity(br);
      return (fill[2 * br.element + br.side] - cap) / cap;
    };
    const fromShort = landing === target && short.step > 0 && short.step < step;
    let lo = fromShort ? short.step : 0;
    let gLo = fromShort ? short.miss : gZero();
    let hi = step;
    let gHi = missOf(result.next, landing);
    let side = 0;
    for (let iteration = 0; iteration < 60; iteration++) {
      const h1 = (lo * gHi - hi * gLo) / (gHi - gLo);
      const attempt = trial(h1);
      if ("failure" in attempt) return { kind: "failure", failure: attempt.failure };
      const earlier = crossing(attempt.next);
      if (earlier.k >= 0 && earlier.k !== landing) {
        // Another branch fills first inside this shorter step: chase that one instead.
        landing = earlier.k;
        hi = h1;
        gHi = missOf(attempt.next, landing);
        lo = 0;
        gLo = gZero();
        side = 0;
        continue;
      }
      const g = missOf(attempt.next, landing);
      step = h1;
      result = attempt;
      if (Math.abs(g) <= EVENT_TOLERANCE) break;
      if (g > 0) {
        hi = h1;
        gHi = g;
        if (side === -1) gLo /= 2;
        side = -1;
      } else {
        lo = h1;
        gLo = g;
        if (side === 1) gHi /= 2;
        side = 1;
      }
    }
  }
  // Accept, snap the branches at capacity, keep Σ filled = Q·t by moving the event time.
  fill.set(result.next);
  let surplus = 0;
  const newlyFull: number[] = [];
  for (const { br } of partial) {
    const index = 2 * br.element + br.side;
    const cap = capacity(br);
    if (fill[index] >= cap * (1 - SNAP_WINDOW)) {
      surplus += fill[index] - cap;
      fill[index] = cap;
      if (!newlyFull.includes(br.element)) newlyFull.push(br.element);
    }
  }
  const advanced = step - surplus / Q;
  state.time = t + advanced;
  return {
    kind: "step",
    length: step,
    advanced,
    end: result.s1,
    onLanding,
    aimedAtEvent,
    rejected,
    newlyFull,
  };
}
