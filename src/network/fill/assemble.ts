import type { FillContext } from "./context.ts";
import { type FillState, isFull } from "./fill_state.ts";

/** A branch of the instantaneous network: a full element, or one filling side of a partial one. */
export interface Branch {
  element: number;
  /** 0: fed from the element's `from` node; 1: fed from its `to` node; -1: full, through-flow. */
  side: -1 | 0 | 1;
  /** Graph nodes: upstream node and downstream node (-1 = a flow front at 0 Pa). */
  a: number;
  b: number;
}

/**
 * Index of (element, side) in per-branch arrays of a whole network, 3 per element: the full
 * element (side −1), then its side 0 and side 1.
 */
export function branchSlot(element: number, side: -1 | 0 | 1): number {
  return 3 * element + side + 1;
}

/** The network the melt sees at one instant. */
export interface Assembly {
  branches: Branch[];
  /** graph node → index in the hydraulic problem (-1: not in it). */
  local: Int32Array;
  nodeCount: number;
}

/**
 * The instantaneous network of a state: every full, open element joining two wet nodes and
 * every filling side ending at its front; dead ends (free nodes joined by one branch: a full
 * cavity's gate and what leads only to it) carry no flow and are pruned; what the inlet cannot
 * reach (melt behind a frozen-shut element) is cut off from the pump and left out.
 */
export function assemble(ctx: FillContext, state: FillState): Assembly {
  const { network, elements, nodeCount } = ctx;
  const branches: Branch[] = [];
  for (const e of elements) {
    if (state.closed[e.index]) continue;
    if (isFull(state, e.index)) {
      if (e.kind === "cavity") continue;
      if (!Number.isNaN(state.wetTime[e.from]) && !Number.isNaN(state.wetTime[e.to])) {
        branches.push({ element: e.index, side: -1, a: e.from, b: e.to });
      }
      continue;
    }
    for (const side of [0, 1] as const) {
      if (Number.isNaN(state.sideStart[2 * e.index + side])) continue;
      branches.push({ element: e.index, side, a: side === 0 ? e.from : e.to, b: -1 });
    }
  }
  const degree = new Int32Array(nodeCount);
  for (const br of branches) {
    degree[br.a]++;
    if (br.b >= 0) degree[br.b]++;
  }
  const alive = branches.map(() => true);
  let changed = true;
  while (changed) {
    changed = false;
    branches.forEach((br, k) => {
      if (!alive[k] || br.b < 0) return;
      for (const n of [br.a, br.b]) {
        if (n !== network.inlet && degree[n] === 1) {
          alive[k] = false;
          degree[br.a]--;
          degree[br.b]--;
          changed = true;
          return;
        }
      }
    });
  }
  const reached = new Uint8Array(nodeCount);
  reached[network.inlet] = 1;
  let grew = true;
  while (grew) {
    grew = false;
    branches.forEach((br, k) => {
      if (!alive[k] || br.b < 0 || reached[br.a] === reached[br.b]) return;
      reached[br.a] = reached[br.b] = 1;
      grew = true;
    });
  }
  const kept = branches.filter((br, k) => alive[k] && reached[br.a] === 1);
  const local = new Int32Array(nodeCount).fill(-1);
  let count = 0;
  local[network.inlet] = count++;
  for (const br of kept) {
    if (local[br.a] < 0) local[br.a] = count++;
    if (br.b >= 0 && local[br.b] < 0) local[br.b] = count++;
  }
  return { branches: kept, local, nodeCount: count };
}

/** Whether two assemblies hold the same branches in the same order (a warm start fits both). */
export function sameBranches(a: Assembly, b: Assembly): boolean {
  if (a.branches.length !== b.branches.length) return false;
  return a.branches.every((br, k) => {
    const other = b.branches[k];
    return br.element === other.element && br.side === other.side;
  });
}

/**
 * Newton's start on a new assembly, from the flows just before the event: a branch that stays
 * keeps its flow; an element just full carries on with the flow that filled it (negated when
 * it filled from its `to` node; the difference where two fronts met in it); a fresh branch
 * takes an equal share of what its node receives. Where Newton starts changes only how soon
 * it converges (about 3.5 iterations from linear theory, 2.4 from these).
 */
export function carriedFlows(
  ctx: FillContext,
  before: Assembly,
  flows: Float64Array,
  after: Assembly,
): Float64Array {
  // Flow of each (element, side) before, NaN where it had no branch.
  const had = new Float64Array(branchSlot(ctx.elements.length, -1)).fill(NaN);
  before.branches.forEach((br, k) => (had[branchSlot(br.element, br.side)] = flows[k]));
  const warm = new Float64Array(after.branches.length);
  const received = new Float64Array(ctx.nodeCount);
  received[ctx.network.inlet] = ctx.injectionRate;
  const fresh: number[] = [];
  after.branches.forEach((br, k) => {
    let q = had[branchSlot(br.element, br.side)];
    if (Number.isNaN(q) && br.side === -1) {
      const fromSide = had[branchSlot(br.element, 0)], toSide = had[branchSlot(br.element, 1)];
      if (!Number.isNaN(fromSide) || !Number.isNaN(toSide)) {
        q = (Number.isNaN(fromSide) ? 0 : fromSide) - (Number.isNaN(toSide) ? 0 : toSide);
      }
    }
    if (Number.isNaN(q)) {
      fresh.push(k);
      return;
    }
    warm[k] = q;
    received[br.a] -= q;
    if (br.b >= 0) received[br.b] += q;
  });
  const freshAt = new Int32Array(ctx.nodeCount);
  for (const k of fresh) freshAt[after.branches[k].a]++;
  for (const k of fresh) {
    const a = after.branches[k].a;
    warm[k] = Math.max(received[a], 0) / freshAt[a];
  }
  return warm;
}
