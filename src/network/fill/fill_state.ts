import type { FillContext } from "./context.ts";

/**
 * Everything that changes during a fill, SI. Each element has two filling sides: side 0 fills
 * from its `from` node, side 1 from its `to` node (a runner wetted from both ends); a cavity
 * fills from side 0 only.
 */
export interface FillState {
  /** Instant, s. */
  time: number;
  /** Filled volume of each side, `fill[2e + side]`, m³. */
  fill: Float64Array;
  /** Instant each side started filling, s (NaN: not yet). */
  sideStart: Float64Array;
  /** Instant each element became full, s (NaN: not yet). */
  fullTime: Float64Array;
  /** Instant melt reached each node, s (NaN: dry). */
  wetTime: Float64Array;
  /** 1 where the frozen layer has shut the element. */
  closed: Uint8Array;
  /** Instant each element froze shut, s (NaN: open). */
  closedAt: Float64Array;
  /** |flow| through each element at the last solve, m³/s. */
  lastFlow: Float64Array;
  /** Melt temperature each element's viscosity uses, K. */
  temperature: Float64Array;
  /** Mean pressure along each element at the last solve, Pa. */
  meanPressure: Float64Array;
  /** Frozen layer each element reached by the last accepted instant, m (it never re-melts). */
  frozenHeld: Float64Array;
  /** Pressure each node had at the last recorded instant, Pa (NaN: never had one). */
  heldPressure: Float64Array;
  /** Instant each cavity became full, s (NaN: not yet), in cavity order. */
  cavityFullTime: number[];
}

/** The state before any melt enters: everything dry, at the feed temperature. */
export function emptyFillState(ctx: FillContext): FillState {
  const E = ctx.elements.length;
  return {
    time: 0,
    fill: new Float64Array(2 * E),
    sideStart: new Float64Array(2 * E).fill(NaN),
    fullTime: new Float64Array(E).fill(NaN),
    wetTime: new Float64Array(ctx.nodeCount).fill(NaN),
    closed: new Uint8Array(E),
    closedAt: new Float64Array(E).fill(NaN),
    lastFlow: new Float64Array(E),
    temperature: new Float64Array(E).fill(ctx.process.feedTemperature),
    meanPressure: new Float64Array(E),
    frozenHeld: new Float64Array(E),
    heldPressure: new Float64Array(ctx.nodeCount).fill(NaN),
    cavityFullTime: ctx.network.cavities.map(() => NaN),
  };
}

/** Whether element `e` is full. */
export function isFull(state: FillState, e: number): boolean {
  return !Number.isNaN(state.fullTime[e]);
}

/** Volume filled in element `e` from both sides, m³. */
export function filledVolume(state: FillState, e: number): number {
  return state.fill[2 * e] + state.fill[2 * e + 1];
}

/** Fill fraction of every cavity, 0…1, in cavity order. */
export function cavityFill(ctx: FillContext, state: FillState): number[] {
  return ctx.network.cavities.map((c) => Math.min(1, state.fill[2 * c.element] / c.volume));
}

/** Melt reaches `node` at `t`: every element side that touches it starts filling. */
export function wetNode(ctx: FillContext, state: FillState, node: number, t: number): void {
  if (!Number.isNaN(state.wetTime[node])) return;
  state.wetTime[node] = t;
  for (const { element, side } of ctx.adjacency[node]) {
    if (isFull(state, element) || !Number.isNaN(state.sideStart[2 * element + side])) continue;
    if (ctx.elements[element].kind === "cavity" && side === 1) continue;
    state.sideStart[2 * element + side] = t;
  }
}
