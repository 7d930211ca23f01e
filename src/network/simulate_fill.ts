import type { FeedNetwork } from "./feed_network.ts";
import type { FillTangentRequest } from "./fill_tangent.ts";
import type { FillDiagnostics, FillResult } from "./fill_result.ts";
import { assemble, carriedFlows, sameBranches } from "./fill/assemble.ts";
import { CLOSURE_FRACTION, frozenAt } from "./fill/channel_laws.ts";
import { type FillContext, fillContext, type FillProcess, type MeltModel } from "./fill/context.ts";
import { cavityFigures, elementFigures, flowPaths } from "./fill/fill_figures.ts";
import { FillRecorder } from "./fill/fill_records.ts";
import { cavityFill, emptyFillState, type FillState, isFull, wetNode } from "./fill/fill_state.ts";
import { eventStep } from "./fill/event_step.ts";
import { updateMeltTemperature } from "./fill/melt_temperature.ts";
import { type Solved, solveInstant, type SolveStats, solveStats } from "./fill/solve_instant.ts";
import { TangentCarrier } from "./fill/tangent_carrier.ts";

export type { FillProcess, MeltModel };

/** Options of {@link simulateFill}. */
export interface SimulateFillOptions {
  melt: MeltModel;
  process: FillProcess;
  /** Largest change of any branch flow within a step, as a fraction of the injection rate. Default 0.02. */
  flowChangeTolerance?: number;
  /** Step limit. Default 20 000. */
  maxSteps?: number;
  /** Called after every accepted step with the injected fraction of the shot, 0…1. */
  onProgress?: (fraction: number) => void;
  /** Carry the tangent along these directions (`fill_tangent.ts`); the result then has `tangent`. */
  tangent?: FillTangentRequest;
  /** Checked after every step: once aborted, the run ends with `stoppedBecause: "cancelled"`. */
  signal?: AbortSignal;
  /** Wall-clock instant (ms since the epoch, as `Date.now()`) after which the run ends with `stoppedBecause: "deadline"`. */
  deadline?: number;
  /**
   * Injected volumes (m³) at which to sample every cavity's fill exactly (a step lands on each,
   * like on switchover): the short shots a shop weighs. The result then has `samples`.
   */
  sampleVolumes?: readonly number[];
}

/** Most heating–flow passes at an event, and the feed-pressure change (relative) that ends them. */
const THERMAL_PASSES = 12;
const THERMAL_TOLERANCE = 1e-4;

/**
 * Transient filling of a feed network at a constant injection rate.
 *
 * Algorithm: the melt advances element by element. At any instant the wet part of
 * the network is a set of full elements (through-flow) and partly filled ones whose
 * flow front sits at 0 Pa gauge (`fill/assemble.ts`); the global gradient solve gives
 * the flow into every front (`fill/solve_instant.ts`). Front volumes are integrated with
 * Heun's method, each step ending exactly on the next event (an element or cavity
 * becoming full, switchover: `fill/event_step.ts`). A full cavity takes no flow
 * (incompressible melt), so the rest speed up. Thermal coupling is lagged by one step
 * (`fill/melt_temperature.ts`): each element's viscosity uses its inlet melt temperature
 * plus half its own adiabatic heating ΔP/(ρ·cp); the frozen layer (`fill/channel_laws.ts`)
 * is the no-flow conduction solution and never thins once formed (no re-melting: when a
 * cavity fills and the flow through the others jumps, their residence time falls but the
 * solid stays). At an event the heating and the flows are iterated to agree instead of
 * lagging. Dead ends (a full cavity and what leads only to it) hold the pressure of the
 * node they hang from; a node sealed by a frozen-shut element keeps its last pressure.
 * Records (history, peaks, clamp force: `fill/fill_records.ts`) and the tangent
 * (`fill/tangent_carrier.ts`) observe the loop.
 *
 * Stops when every cavity is full, when no path reaches an unfilled cavity (short shot,
 * naming what froze), at the step limit, or when cancelled or past its deadline.
 */
export function simulateFill(network: FeedNetwork, options: SimulateFillOptions): FillResult {
  const ctx = fillContext(network, options);
  const state = emptyFillState(ctx);
  const stats = solveStats();
  const records = new FillRecorder(ctx, state);
  const tangent = new TangentCarrier(ctx, state, options.tangent);
  const run = fillLoop(ctx, state, stats, { records, tangent, options });
  if ("failure" in run) return failedResult(ctx, records, stats, run.failure);
  return fillResult(ctx, state, stats, { records, tangent, run });
}

interface LoopEnd {
  switchover: Solved;
  samples: { time: number; cavityFill: number[] }[];
  frozenAtSwitchover: Float64Array | undefined;
  steps: number;
  rejected: number;
  events: number;
  stoppedBecause: FillDiagnostics["stoppedBecause"];
  message: string;
}

/** The time loop: step, note the events, re-assemble, observe; until a stop rule holds. */
function fillLoop(
  ctx: FillContext,
  state: FillState,
  stats: SolveStats,
  parts: { records: FillRecorder; tangent: TangentCarrier; options: SimulateFillOptions },
): LoopEnd | { failure: string } {
  const { records, tangent, options } = parts;
  const { network, elements, process, nominalFillTime } = ctx;
  const tolerance = options.flowChangeTolerance ?? 0.02;
  const maxSteps = options.maxSteps ?? 20000;
  const observe = (s: Solved) => {
    tangent.record();
    records.record(state.time, s);
  };

  wetNode(ctx, state, network.inlet, 0);
  let assembly = assemble(ctx, state);
  const first = solveInstant(ctx, state, stats, { t: 0, volumes: state.fill, assembly });
  if ("failure" in first) return first;
  let current: Solved = first;
  tangent.at(current, 0);
  updateMeltTemperature(ctx, state, current);
  observe(current);
  let steps = 0;
  let rejected = 0;
  let events = 0;
  let h = nominalFillTime / 2000;
  let stoppedBecause: FillDiagnostics["stoppedBecause"] = "all_full";
  let message = "every cavity filled";
  let switchoverDone = ctx.switchoverTime <= 0;
  let atSwitchover: Solved | undefined;
  let frozenAtSwitchover: Float64Array | undefined;
  const sampleTimes = [...(options.sampleVolumes ?? [])]
    .map((v) => v / ctx.injectionRate)
    .filter((time) => time > 0)
    .sort((a, b) => a - b);
  const samples: { time: number; cavityFill: number[] }[] = [];

  while (state.cavityFullTime.some((x) => Number.isNaN(x))) {
    if (steps >= maxSteps) {
      stoppedBecause = "step_limit";
      message = `stopped after ${steps} steps`;
      break;
    }
    if (options.signal?.aborted) {
      stoppedBecause = "cancelled";
      message = `cancelled at t = ${state.time.toFixed(4)} s: ${String(options.signal.reason)}`;
      break;
    }
    if (options.deadline !== undefined && Date.now() > options.deadline) {
      stoppedBecause = "deadline";
      message = `stopped at its deadline after ${steps} steps (t = ${state.time.toFixed(4)} s)`;
      break;
    }
    const s0 = current;
    const nextSample = sampleTimes.length > 0 ? sampleTimes[0] : Infinity;
    const landAt = Math.min(switchoverDone ? Infinity : ctx.switchoverTime, nextSample);
    const step = eventStep(ctx, state, stats, s0, { h, landAt, flowChangeTolerance: tolerance });
    if (step.kind === "failure") return step;
    if (step.kind === "no_open_branch") {
      stoppedBecause = "short_shot";
      message = shortShotMessage(ctx, state);
      break;
    }
    steps++;
    rejected += step.rejected;
    const t = state.time;
    const { newlyFull } = step;
    tangent.advance(s0, step.advanced);
    const onSwitchover = step.onLanding && !switchoverDone && landAt === ctx.switchoverTime;
    if (step.onLanding && landAt === nextSample) {
      sampleTimes.shift();
      samples.push({ time: t, cavityFill: cavityFill(ctx, state) });
    }
    // The state at the end of this step on the network it started from: the flows just
    // before any element filling now closes (switchover, or the end of filling), observed.
    const endOfPhase = (): Solved | { failure: string } => {
      const end = solveInstant(ctx, state, stats, {
        t,
        volumes: state.fill,
        assembly: s0.assembly,
        warm: step.end.flows,
        from: step.end,
      });
      if ("failure" in end) return end;
      tangent.at(end, t);
      observe(end);
      return end;
    };
    if (onSwitchover) {
      const end = endOfPhase();
      if ("failure" in end) return end;
      atSwitchover = end;
      switchoverDone = true;
    }
    const shifts = tangent.eventShifts(s0, step.end.flows, newlyFull);
    // The first cavity full ends the tangent: its last sample keeps the left limit (the
    // state just before the flows jump), which is what lies between it and the sample before.
    const lastTangentStep = newlyFull.some((e) => elements[e].kind === "cavity");
    if (lastTangentStep) tangent.at(step.end, t);
    for (const e of newlyFull) {
      state.fullTime[e] = t;
      events++;
      const el = elements[e];
      if (el.kind === "cavity") {
        state.cavityFullTime[el.cavity] = t;
        records.firstFull(step.end);
      } else {
        wetNode(ctx, state, el.to, t);
        wetNode(ctx, state, el.from, t);
      }
    }
    closeFrozen(ctx, state, t);
    if (onSwitchover) frozenAtSwitchover = state.frozenHeld.slice();
    if (state.cavityFullTime.every((x) => !Number.isNaN(x))) {
      if (!atSwitchover) {
        const end = endOfPhase();
        if ("failure" in end) return end;
        atSwitchover = end;
      }
      break;
    }
    assembly = assemble(ctx, state);
    const unchanged = newlyFull.length === 0 && sameBranches(assembly, s0.assembly);
    const next = solveInstant(ctx, state, stats, {
      t,
      volumes: state.fill,
      assembly,
      warm: unchanged ? step.end.flows : carriedFlows(ctx, s0.assembly, step.end.flows, assembly),
      from: step.end,
    });
    if ("failure" in next) return next;
    current = next;
    if (!lastTangentStep) {
      tangent.jump(s0, step.end.flows, current, shifts);
      tangent.at(current, t);
    }
    updateMeltTemperature(ctx, state, current);
    // The flows jump at an event; the one-step thermal lag would then take viscous heating
    // from the flows before it. Iterate heating and flows to a consistent state instead.
    for (
      let pass = 0;
      pass < THERMAL_PASSES && newlyFull.length > 0 && !process.isothermal;
      pass++
    ) {
      const again = solveInstant(ctx, state, stats, {
        t,
        volumes: state.fill,
        assembly,
        warm: current.flows,
      });
      if ("failure" in again) return again;
      const before = current.pressure[network.inlet];
      current = again;
      updateMeltTemperature(ctx, state, current);
      if (Math.abs(current.pressure[network.inlet] - before) <= THERMAL_TOLERANCE * before) break;
    }
    if (newlyFull.length > 0 || !onSwitchover) observe(current);
    if (lastTangentStep) tangent.stop();
    options.onProgress?.(Math.min(1, (ctx.injectionRate * t) / ctx.shotVolume));
    if (newlyFull.length > 0) h = Math.max(h, nominalFillTime / 2000);
    h = step.aimedAtEvent ? h : Math.min(step.length * 1.5, nominalFillTime / 40);
  }
  // Samples past the end of the fill see every cavity as it ended.
  for (const time of sampleTimes) samples.push({ time, cavityFill: cavityFill(ctx, state) });
  return {
    switchover: atSwitchover ?? current,
    frozenAtSwitchover,
    samples,
    steps,
    rejected,
    events,
    stoppedBecause,
    message,
  };
}

/** Hold each element's frozen layer at `t` and take out those it has shut. */
function closeFrozen(ctx: FillContext, state: FillState, t: number): void {
  for (const e of ctx.elements) {
    if (state.closed[e.index] || e.heated || ctx.process.isothermal) continue;
    state.frozenHeld[e.index] = frozenAt(ctx, state, e, t, isFull(state, e.index) ? -1 : 0);
    if (state.frozenHeld[e.index] >= CLOSURE_FRACTION * ctx.closing[e.index] * (1 - 1e-9)) {
      state.closed[e.index] = 1;
      state.closedAt[e.index] = t;
    }
  }
}

/** "gate G3 froze shut at 4.447 s: cavity C3 stops at 1.3 % (short shot)". */
function shortShotMessage(ctx: FillContext, state: FillState): string {
  const unfilled = ctx.network.cavities.filter((_, i) => Number.isNaN(state.cavityFullTime[i]));
  const shut = ctx.elements.filter((e) => state.closed[e.index])
    .sort((a, b) => state.closedAt[a.index] - state.closedAt[b.index])
    .map((e) => `${e.kind} ${e.id} froze shut at ${state.closedAt[e.index].toFixed(3)} s`);
  const cavities = unfilled.map((c) =>
    `${c.id} stops at ${(100 * state.fill[2 * c.element] / c.volume).toFixed(1)} %`
  );
  return `${shut.length > 0 ? shut.join(", ") : "no open path is left"}: ` +
    `cavit${unfilled.length === 1 ? "y" : "ies"} ${cavities.join(", ")} (short shot)`;
}

function fillResult(
  ctx: FillContext,
  state: FillState,
  stats: SolveStats,
  parts: { records: FillRecorder; tangent: TangentCarrier; run: LoopEnd },
): FillResult {
  const { records, tangent, run } = parts;
  const elements = elementFigures(ctx, state, records, run);
  const cavities = cavityFigures(ctx, state, records, {
    switchover: run.switchover,
    elements,
  });
  const fullTimes = state.cavityFullTime;
  const times = fullTimes.filter((x) => Number.isFinite(x));
  const tMax = times.length === fullTimes.length ? Math.max(...times) : NaN;
  const tMin = times.length > 0 ? Math.min(...times) : NaN;
  const injected = ctx.injectionRate * state.time;
  let filledTotal = 0;
  for (let i = 0; i < state.fill.length; i++) filledTotal += state.fill[i];
  return {
    injectionRate: ctx.injectionRate,
    switchoverTime: ctx.switchoverTime,
    fillTime: tMax,
    imbalancePercent: ((tMax - tMin) / tMax) * 100,
    feedPressurePeak: records.feedPressurePeak,
    feedPressureAtSwitchover: run.switchover.pressure[ctx.network.inlet],
    clampForcePeak: records.clampForcePeak,
    history: records.history,
    elements,
    cavities,
    paths: flowPaths(ctx.network, elements),
    tangent: tangent.result(),
    samples: run.samples.length > 0
      ? run.samples.map((sample) => ({
        injectedVolume: ctx.injectionRate * sample.time,
        cavityFill: sample.cavityFill,
      }))
      : undefined,
    diagnostics: {
      steps: run.steps,
      rejectedSteps: run.rejected,
      ...stats,
      events: run.events,
      massBalanceError: injected > 0 ? Math.abs(filledTotal - injected) / injected : 0,
      stoppedBecause: run.stoppedBecause,
      message: run.message,
    },
  };
}

function failedResult(
  ctx: FillContext,
  records: FillRecorder,
  stats: SolveStats,
  reason: string,
): FillResult {
  return {
    injectionRate: ctx.injectionRate,
    switchoverTime: ctx.switchoverTime,
    fillTime: NaN,
    imbalancePercent: NaN,
    feedPressurePeak: records.feedPressurePeak,
    feedPressureAtSwitchover: NaN,
    clampForcePeak: records.clampForcePeak,
    history: records.history,
    elements: [],
    cavities: [],
    paths: [],
    diagnostics: {
      steps: 0,
      rejectedSteps: 0,
      ...stats,
      events: 0,
      massBalanceError: NaN,
      stoppedBecause: "solver_failure",
      message: reason,
    },
  };
}
