import type { ChannelFlow, ChannelLaw } from "../../physics/mod.ts";
import {
  type HydraulicElement,
  hydraulicTopology,
  solveHydraulics,
  topologyAnalysis,
} from "../hydraulic_solve.ts";
import type { SymbolicCholesky } from "../sparse_cholesky.ts";
import { type Assembly, branchSlot } from "./assemble.ts";
import { type BranchLawCache, branchLawCache, cachedBranchLaw } from "./channel_laws.ts";
import type { FillContext } from "./context.ts";
import { type FillState, isFull } from "./fill_state.ts";

/** The network solved at one instant. */
export interface Solved {
  assembly: Assembly;
  /** Flow through each branch, m³/s (assembly order). */
  flows: Float64Array;
  /** Pressure per graph node, Pa (NaN where dry). */
  pressure: Float64Array;
  /** Each branch's pressure drop at its flow, Pa (assembly order): the solve's own. */
  drops: Float64Array;
  /** Each branch's dΔP/dQ as the solve last linearised it, Pa·s/m³ (assembly order). */
  slopes: Float64Array;
  /** Each branch's law (assembly order). */
  readonly laws: readonly ChannelLaw[];
  /** Each branch's law at its flow (full results: wall shear as well as the pressure drop). */
  readonly channel: readonly ChannelFlow[];
}

/**
 * A solved instant whose full channel results are evaluated on first use: most solves are
 * trials of a step, whose flows are all that is read, and the thermal update reads only the
 * pressure drops, which the solve has. The laws are pure functions of the
 * flow, so when they are evaluated does not change a number.
 */
class SolvedInstant implements Solved {
  #channel: ChannelFlow[] | undefined;

  constructor(
    readonly assembly: Assembly,
    readonly flows: Float64Array,
    readonly pressure: Float64Array,
    readonly drops: Float64Array,
    readonly slopes: Float64Array,
    readonly laws: readonly ChannelLaw[],
  ) {}

  get channel(): readonly ChannelFlow[] {
    return this.#channel ??= this.laws.map((law, k) => law(this.flows[k]));
  }
}

/** How the hydraulic solves of one fill went, accumulated. */
export interface SolveStats {
  hydraulicSolves: number;
  newtonIterationsMax: number;
  worstMassResidual: number;
  worstMassResidualAt: string;
}

/** Fresh counters. */
export function solveStats(): SolveStats {
  return {
    hydraulicSolves: 0,
    newtonIterationsMax: 0,
    worstMassResidual: 0,
    worstMassResidualAt: "",
  };
}

/** The hydraulic problem of an assembly without its laws, and its checked topology. */
interface AssemblyProblem {
  ctx: FillContext;
  nodeCount: number;
  from: Int32Array;
  to: Int32Array;
  fixedPressure: Map<number, number>;
  inflow: Map<number, number>;
  topology: ReturnType<typeof hydraulicTopology>;
}

/** Each assembly's problem, made on its first solve (trials of one step share an assembly). */
const problems = new WeakMap<Assembly, AssemblyProblem>();

/** The nodal problem of `assembly`: its local nodes, then one fixed node at 0 Pa per front. */
function problemOf(ctx: FillContext, assembly: Assembly): AssemblyProblem {
  const known = problems.get(assembly);
  if (known && known.ctx === ctx) return known;
  const K = assembly.branches.length;
  const from = new Int32Array(K);
  const to = new Int32Array(K);
  const fixedPressure = new Map<number, number>();
  let next = assembly.nodeCount;
  assembly.branches.forEach((br, k) => {
    if (br.b < 0) {
      to[k] = next++;
      fixedPressure.set(to[k], 0);
    } else to[k] = assembly.local[br.b];
    from[k] = assembly.local[br.a];
  });
  const inflow = new Map([[assembly.local[ctx.network.inlet], ctx.injectionRate]]);
  const elements = Array.from({ length: K }, (_, k) => ({
    from: from[k],
    to: to[k],
    law: () => ({ pressureDrop: 0, dPressureDropDFlow: 1 }),
  }));
  const topology = hydraulicTopology({ nodeCount: next, elements, fixedPressure, inflow });
  const problem = { ctx, nodeCount: next, from, to, fixedPressure, inflow, topology };
  problems.set(assembly, problem);
  return problem;
}

/**
 * The symbolic analysis the solves of `assembly` factor its nodal matrix with: its local
 * nodes, one entry per two-ended branch in branch order, which is `linearPattern`'s pattern of
 * the same branches (`fill_tangent.ts`). Undefined before its first solve or for an invalid
 * topology. A factor from it lasts until the next solve of the assembly.
 */
export function nodalAnalysisOf(
  ctx: FillContext,
  assembly: Assembly,
): SymbolicCholesky | undefined {
  const known = problems.get(assembly);
  if (!known || known.ctx !== ctx || !known.topology.ok) return undefined;
  return topologyAnalysis(known.topology.topology);
}

/** The branch laws kept between the solves of one fill (`cachedBranchLaw`). */
const lawCaches = new WeakMap<FillContext, BranchLawCache>();

/**
 * Assemble the flow laws of `assembly` at `t` with filled volumes `volumes` and solve the
 * nodal network (`solveHydraulics`: injection rate in at the inlet, 0 Pa at every front).
 * `warm` (flows of the same assembly) starts Newton. Pruned and sealed nodes get their
 * pressures by {@link fillDeadEnds}.
 */
export function solveInstant(
  ctx: FillContext,
  state: FillState,
  stats: SolveStats,
  at: {
    t: number;
    volumes: Float64Array;
    assembly: Assembly;
    warm?: Float64Array;
    /** The solved instant `warm` carries flows from: its laws, where they serve again at the same flow, are not evaluated anew ({@link knownLaws}). */
    from?: Solved;
    /**
     * Laws of this assembly that the caller knows are still those of this instant (`fixed[k]`
     * = 1: `laws[k]` serves as is; `frozenFixedFrom`), so they are not asked for again.
     */
    reuse?: { laws: readonly ChannelLaw[]; fixed: Uint8Array };
  },
): Solved | { failure: string } {
  const { t, volumes, assembly, warm } = at;
  const { nodeCount } = ctx;
  if (assembly.branches.length === 0) {
    // Frozen shut at the feed: nothing flows, every wet node keeps its last pressure.
    const pressure = new Float64Array(nodeCount).fill(NaN);
    fillDeadEnds(ctx, state, pressure);
    const none = new Float64Array(0);
    return new SolvedInstant(assembly, none, pressure, none, none, []);
  }
  let cache = lawCaches.get(ctx);
  if (!cache) lawCaches.set(ctx, cache = branchLawCache(ctx.elements.length));
  const keep = { t, volumes, cache };
  const reuse = at.reuse;
  const laws = assembly.branches.map((br, k) =>
    reuse && reuse.fixed[k] ? reuse.laws[k] : cachedBranchLaw(ctx, state, br, keep)
  );
  const problem = problemOf(ctx, assembly);
  const hydraulic: HydraulicElement[] = new Array(laws.length);
  for (let k = 0; k < laws.length; k++) {
    hydraulic[k] = {
      from: problem.from[k],
      to: problem.to[k],
      law: laws[k].resistance,
      kinks: laws[k].kinks,
    };
  }
  const topology = problem.topology;
  const solution = topology.ok
    ? solveHydraulics(
      {
        nodeCount: problem.nodeCount,
        elements: hydraulic,
        fixedPressure: problem.fixedPressure,
        inflow: problem.inflow,
      },
      {
        initialFlows: warm,
        initialLaws: warm && at.from ? knownLaws(ctx, assembly, laws, warm, at.from) : undefined,
        topology: topology.topology,
      },
    )
    : topology;
  stats.hydraulicSolves++;
  if (!solution.ok) return { failure: `${solution.code}: ${solution.message}` };
  const d = solution.diagnostics;
  stats.newtonIterationsMax = Math.max(stats.newtonIterationsMax, d.iterations);
  if (d.worstMassResidual > stats.worstMassResidual) {
    stats.worstMassResidual = d.worstMassResidual;
    stats.worstMassResidualAt = `t = ${t.toExponential(4)} s`;
  }
  const pressure = new Float64Array(nodeCount).fill(NaN);
  for (let n = 0; n < nodeCount; n++) {
    if (assembly.local[n] >= 0) pressure[n] = solution.pressures[assembly.local[n]];
  }
  fillDeadEnds(ctx, state, pressure);
  return new SolvedInstant(
    assembly,
    solution.flows,
    pressure,
    solution.pressureDrops,
    solution.pressureDropSlopes,
    laws,
  );
}

/**
 * A warm flow this close to the flow of the solve it came from (relative) takes that solve's law
 * value carried along its slope, h + h'·ΔQ: the error, ½·|h''|·ΔQ², is at most
 * ½·(1 − n)·(ΔQ/Q)²·|h| ≤ 5e-13·|h| for a law locally ∝ Qⁿ, far inside the solve's 1e-10.
 * (The trials that close in on an event start this close to the trial before.)
 */
const NEAR_FLOW = 1e-6;

/** Per assembly, each (element, side) slot's branch index (−1: none), made on first use. */
const slotIndexes = new WeakMap<Assembly, Int32Array>();

function slotsOf(ctx: FillContext, assembly: Assembly): Int32Array {
  let known = slotIndexes.get(assembly);
  if (!known) {
    known = new Int32Array(branchSlot(ctx.elements.length, -1)).fill(-1);
    const slots = known;
    assembly.branches.forEach((br, k) => (slots[branchSlot(br.element, br.side)] = k));
    slotIndexes.set(assembly, known);
  }
  return known;
}

/**
 * The branches of `assembly` whose law (the same law object) is that of a branch of `from`,
 * the solve the warm start came from, and whose warm flow is that branch's flow or within
 * {@link NEAR_FLOW} of it, with that solve's drop (carried along its slope) and slope: the law
 * is a pure function of the flow, so its value is what `from` had (within its tolerance,
 * `solveHydraulics`), and the start need not evaluate it again. Undefined when none.
 */
function knownLaws(
  ctx: FillContext,
  assembly: Assembly,
  laws: readonly ChannelLaw[],
  warm: Float64Array,
  from: Solved,
): { known: Uint8Array; drop: Float64Array; slope: Float64Array } | undefined {
  const K = laws.length;
  if (from.slopes.length !== from.assembly.branches.length) return undefined;
  let slotOf: Int32Array | undefined;
  if (from.assembly !== assembly) slotOf = slotsOf(ctx, from.assembly);
  const known = new Uint8Array(K);
  const drop = new Float64Array(K);
  const slope = new Float64Array(K);
  let any = false;
  for (let k = 0; k < K; k++) {
    const br = assembly.branches[k];
    const j = slotOf ? slotOf[branchSlot(br.element, br.side)] : k;
    if (j < 0 || from.laws[j] !== laws[k]) continue;
    const change = warm[k] - from.flows[j];
    if (change !== 0 && !(Math.abs(change) <= NEAR_FLOW * Math.abs(from.flows[j]))) continue;
    known[k] = 1;
    drop[k] = from.drops[j] + from.slopes[j] * change;
    slope[k] = from.slopes[j];
    any = true;
  }
  return any ? { known, drop, slope } : undefined;
}

/**
 * Pressures of the wet nodes the assembly pruned. A dead end (a full cavity and the full
 * gates and runners that lead only to it) carries no flow, so every node of it sits at the
 * pressure of the live node it hangs from: the full cavity holds its feed pressure over its
 * whole area. A node sealed off by a frozen-shut element keeps the pressure it last had
 * (an upper bound: the sealed melt's shrinkage lowers it, which a fill model does not see).
 */
export function fillDeadEnds(ctx: FillContext, state: FillState, pressure: Float64Array): void {
  const { nodeCount, elements } = ctx;
  // Only wet nodes without a pressure get one (both ends of a full element are wet): when
  // there is none, as before the first cavity fills, there is nothing to walk.
  if (!someWetWithout(state, pressure)) return;
  const queue: number[] = [];
  for (let n = 0; n < nodeCount; n++) if (!Number.isNaN(pressure[n])) queue.push(n);
  while (queue.length > 0) {
    const n = queue.pop()!;
    for (const { element, side } of ctx.adjacency[n]) {
      const e = elements[element];
      if (e.kind === "cavity" || e.to < 0 || state.closed[element] || !isFull(state, element)) {
        continue;
      }
      const other = side === 0 ? e.to : e.from;
      if (!Number.isNaN(pressure[other])) continue;
      pressure[other] = pressure[n];
      queue.push(other);
    }
  }
  for (let n = 0; n < nodeCount; n++) {
    if (Number.isNaN(pressure[n]) && !Number.isNaN(state.wetTime[n])) {
      pressure[n] = state.heldPressure[n];
    }
  }
}

/** Whether some wet node has no pressure (NaN) yet. */
function someWetWithout(state: FillState, pressure: Float64Array): boolean {
  for (let n = 0; n < pressure.length; n++) {
    if (Number.isNaN(pressure[n]) && !Number.isNaN(state.wetTime[n])) return true;
  }
  return false;
}

/** Remember every node's pressure of a recorded instant (what a sealed node keeps). */
export function holdPressures(state: FillState, s: Solved): void {
  for (let n = 0; n < s.pressure.length; n++) {
    if (!Number.isNaN(s.pressure[n])) state.heldPressure[n] = s.pressure[n];
  }
}
