/**
 * Steady flow in a network of nonlinear hydraulic elements (sprue, runners, gates,
 * cavities at one instant of filling): node pressures and element flows such that
 * every element obeys its law ΔP = h(Q) and mass balances at every free node.
 *
 * Method: the global gradient algorithm of Todini & Pilati (1988), "A gradient
 * algorithm for the analysis of pipe networks", in *Computer Applications in Water
 * Supply* vol. 1 (Research Studies Press), pp. 1–20; also Rossman, *EPANET 2 Users
 * Manual*, EPA/600/R-00/057 (2000), appendix D. The Newton system on (pressures, flows)
 * is reduced to the symmetric positive definite nodal system A21·D⁻¹·A12 on the free
 * pressures, solved by the sparse LDLᵀ of `sparse_cholesky.ts`, whose symbolic
 * analysis is reused for every solve of one topology.
 *
 * @module
 */

import { analyse, type SymbolicCholesky } from "./sparse_cholesky.ts";

/** An element's law evaluated at one flow. SI. */
export interface ElementLaw {
  /** Pressure drop from the `from` node to the `to` node, Pa. */
  pressureDrop: number;
  /** dΔP/dQ, Pa·s/m³ (> 0). */
  dPressureDropDFlow: number;
}

/** One element of the network. */
export interface HydraulicElement {
  /** Upstream node index (positive flow leaves it). */
  from: number;
  /** Downstream node index. */
  to: number;
  /** ΔP = h(Q) and h'(Q) for flow Q in m³/s (from → to); h odd and strictly increasing. */
  law(flow: number): ElementLaw;
  /**
   * Flows |Q| (m³/s) at which h' jumps, if the law has such kinks: a Newton step across one is
   * not second-order accurate, so the solve does not end on it unevaluated ({@link
   * QUADRATIC_MARGIN}). Absent: h is smooth (h' Lipschitz) for Q ≠ 0.
   */
  kinks?: readonly number[];
}

/** A steady network problem. SI. */
export interface HydraulicProblem {
  /** Number of nodes; node indices are 0 … nodeCount − 1. */
  nodeCount: number;
  /** The elements; a pair of nodes may be joined by several elements. */
  elements: readonly HydraulicElement[];
  /** Nodes with a prescribed pressure, Pa (at least one per connected component). */
  fixedPressure: ReadonlyMap<number, number>;
  /** External inflow into free nodes, m³/s (absent: 0; negative: a withdrawal). */
  inflow: ReadonlyMap<number, number>;
}

/** Options of {@link solveHydraulics}. */
export interface HydraulicOptions {
  /** Warm start: one flow per element, m³/s (default: a linear-theory start). */
  initialFlows?: Float64Array;
  /**
   * The laws already evaluated at `initialFlows` for the elements a previous solve shares law
   * and flow with: where `known[e]` is 1, `drop[e]` (Pa) and `slope[e]` (Pa·s/m³, > 0) are
   * taken as h and h' at the start instead of evaluating the law there (values a solve
   * returned, `pressureDrops` and `pressureDropSlopes`, are within its tolerance of them).
   * They must be the laws' own values to within the tolerance: the solve ends on a small
   * Newton step without evaluating the laws again, so a known drop that is off (a stale law)
   * may move the pressures without moving the flows and go unnoticed. Only with
   * `initialFlows`.
   */
  initialLaws?: { known: Uint8Array; drop: Float64Array; slope: Float64Array };
  /**
   * Stop when the first-order flow correction Σ|r_e/h'_e| / Σ|Q_e| (r_e: the energy
   * residual of element e) is at most this; dimensionless, default 1e-10.
   */
  flowTolerance?: number;
  /**
   * …and the worst nodal mass residual, relative to the total inflow (or, with no
   * inflow, the largest flow), is at most this; dimensionless, default 1e-10.
   */
  massTolerance?: number;
  /** Most linear solves (Newton iterations), default 100. */
  maxIterations?: number;
  /**
   * The problem's topology checked and analysed beforehand ({@link hydraulicTopology}), for a
   * caller that solves one topology many times; it must be that of this problem.
   */
  topology?: HydraulicTopology;
}

/** How well a solve balanced. */
export interface HydraulicDiagnostics {
  /** Newton iterations done (one sparse solve each). */
  iterations: number;
  /** Worst nodal mass residual relative to the total inflow (or the largest flow); dimensionless. */
  worstMassResidual: number;
  /** Node where it occurs (−1 when no free node). */
  worstNode: number;
  /** Σ|ΔQ|/Σ|Q| of the last accepted step; dimensionless. */
  relativeFlowChange: number;
}

/** Outcome of {@link solveHydraulics}. */
export type HydraulicSolution =
  | {
    ok: true;
    /** Pressure at every node, Pa (fixed nodes: their prescribed value). */
    pressures: Float64Array;
    /** Flow in every element from → to, m³/s. */
    flows: Float64Array;
    /**
     * Each element's law at its flow: the pressure drop from → to, Pa (after a last Newton
     * step, the laws linearised along it, h + h'·δ, equal to them within the tolerance).
     */
    pressureDrops: Float64Array;
    /**
     * dΔP/dQ of each element where the solve last evaluated it (Pa·s/m³): at the flows
     * returned, or at the start of a last Newton step, which moved them within the tolerance.
     */
    pressureDropSlopes: Float64Array;
    diagnostics: HydraulicDiagnostics;
  }
  | {
    ok: false;
    code: "did_not_converge" | "singular" | "invalid_topology";
    message: string;
    diagnostics?: HydraulicDiagnostics;
  };

/** Below this fraction of the flow scale, h' is taken at the floor flow (h'(0) is infinite for n < 1). */
const FLOW_FLOOR_RATIO = 1e-30;
/** Armijo sufficient-decrease constant of the backtracking line search. */
const ARMIJO = 1e-4;
/**
 * Flows below this fraction of the flow scale (the total inflow) are at the solve's rounding
 * level: such elements always take the secant step, and a caller may treat them as stagnant.
 */
export const STAGNANT_RATIO = 1e-12;
/** A tangent step that leaves less than this fraction of an element's flow is redone with the secant. */
const SHRINK_LIMIT = 0.5;
/** Relative size of rounding noise in flows, below which the merit cannot be resolved. */
const ROUNDOFF = 1e-13;
/** Smallest element conductance used, as a fraction of the largest. */
const CONDUCTANCE_RANGE = 1e-12;
/**
 * A pure Newton step δ (per element, m³/s) ends the solve, unevaluated, when QUADRATIC_MARGIN ×
 * its predicted flow correction Σ δ_e²/|Q_e| / Σ|Q| is at most flowTolerance. After a Newton
 * step the error left in an element's flow is ½·|h''/h'|·δ_e² (Taylor; quadratic convergence),
 * and a law locally ∝ |Q|ⁿ has |h''/h'| = |1 − n|/|Q| ≤ 1/|Q| for the shear-thinning n ∈ (0, 1]
 * of melts, so the prediction bounds it twice over and the margin ten times more. Measured on
 * the fills of generated 4- to 64-cavity families (three seeds, both gate kinds) and the
 * demos, the points so reached had first-order corrections of at most 4e-12. Evaluating
 * them once more, only to confirm that, is the cost this saves. Not across a kink.
 */
const QUADRATIC_MARGIN = 10;
/** Smallest step fraction tried by the line search. */
const MIN_STEP = 1 / 1024;
/** Flow scale for the linear-theory start when there is no inflow, m³/s (1 cm³/s). */
const DEFAULT_FLOW_SCALE = 1e-6;

type Failure = Extract<HydraulicSolution, { ok: false }>;

/** Topology reduced to arrays, with its symbolic factorisation. */
interface Topology {
  nodeCount: number;
  from: Int32Array;
  to: Int32Array;
  fixed: Uint8Array;
  /** node → index among the free nodes, or −1 when fixed. */
  freeIndex: Int32Array;
  freeNodes: Int32Array;
  /** element → its off-diagonal entry in the pattern, or −1 unless both ends are free. */
  slot: Int32Array;
  symbolic: SymbolicCholesky;
  /** Scratch of a solve of this topology, made on the first one (see {@link workspaceOf}). */
  workspace: Workspace | undefined;
}

/**
 * The working arrays of one solve, kept with its topology: a fill solves the same topology
 * many times, and fresh arrays per solve were most of its garbage. Every array is written
 * before it is read (or cleared where it accumulates), so a reused one holds nothing over.
 */
interface Workspace {
  busy: boolean;
  inflow: Float64Array;
  drop: Float64Array;
  slope: Float64Array;
  trialPressure: Float64Array;
  trialFlow: Float64Array;
  trialDrop: Float64Array;
  trialSlope: Float64Array;
  conductance: Float64Array;
  offset: Float64Array;
  newFlow: Float64Array;
  diagonal: Float64Array;
  offDiagonal: Float64Array;
  rhs: Float64Array;
  solved: Float64Array;
  newPressure: Float64Array;
  balance: Float64Array;
}

function newWorkspace(topology: Topology): Workspace {
  const n = topology.nodeCount;
  const m = topology.from.length;
  const freeCount = topology.freeNodes.length;
  return {
    busy: false,
    inflow: new Float64Array(n),
    drop: new Float64Array(m),
    slope: new Float64Array(m),
    trialPressure: new Float64Array(n),
    trialFlow: new Float64Array(m),
    trialDrop: new Float64Array(m),
    trialSlope: new Float64Array(m),
    conductance: new Float64Array(m),
    offset: new Float64Array(m),
    newFlow: new Float64Array(m),
    diagonal: new Float64Array(freeCount),
    offDiagonal: new Float64Array(countSlots(topology.slot)),
    rhs: new Float64Array(freeCount),
    solved: new Float64Array(freeCount),
    newPressure: new Float64Array(n),
    balance: new Float64Array(n),
  };
}

/**
 * The topology's workspace, marked busy until `release`; a fresh one when it is already in
 * use (a law that itself solved a network of the same topology).
 */
function workspaceOf(topology: Topology): Workspace {
  const kept = topology.workspace;
  if (kept && !kept.busy) {
    kept.busy = true;
    return kept;
  }
  const fresh = newWorkspace(topology);
  fresh.busy = true;
  if (!kept) topology.workspace = fresh;
  return fresh;
}

/** A checked topology with its symbolic factorisation, reusable by every problem that has it. */
export interface HydraulicTopology {
  readonly nodeCount: number;
  readonly elementCount: number;
  /** @internal */
  readonly analysed: Topology;
}

/**
 * Check and analyse the topology of `problem` (node indices, connectivity, fixed pressures,
 * inflow nodes; the laws are not looked at) once, for {@link HydraulicOptions.topology}: every
 * problem with the same node count, element ends, fixed-pressure and inflow nodes may use it.
 */
export function hydraulicTopology(
  problem: HydraulicProblem,
): { ok: true; topology: HydraulicTopology } | Failure {
  const checked = checkTopology(problem);
  if (!checked.ok) return checked;
  const analysed = topologyOf(problem.nodeCount, checked.from, checked.to, checked.fixed);
  return {
    ok: true,
    topology: { nodeCount: problem.nodeCount, elementCount: problem.elements.length, analysed },
  };
}

/**
 * The symbolic LDLᵀ analysis of a topology's nodal matrix, as its solves factor it: rows and
 * columns the free nodes in node order, one off-diagonal entry per element joining two free
 * nodes, in element order. A factor from it is valid until the next one of the same topology.
 */
export function topologyAnalysis(topology: HydraulicTopology): SymbolicCholesky {
  return topology.analysed.symbolic;
}

/**
 * Topologies analysed lately, by structure, least recently used first. A fill meets each of its
 * assemblies' topologies once in turn, and an optimization run meets the same sequence again in
 * every simulation of one tool (sizes change no topology): 256 hold a run's sequence on tools of
 * a few hundred elements, where 4 held none of it. The symbolic analysis is what is saved. A
 * topology is shared by every problem of its structure, so a factor from it lasts until the next
 * solve of any of them, as before.
 */
const topologyCache = new Map<string, Topology>();
const TOPOLOGY_CACHE_SIZE = 256;

/**
 * The structure a topology is analysed from, as a key: its sizes and two 32-bit hashes
 * (FNV-1a and a multiply–xorshift) of the element ends and the fixed nodes. A hit is confirmed by
 * comparing the arrays ({@link sameStructure}), so a collision costs an analysis, never a wrong
 * one. (Joining the arrays into the key took 15–20 µs per assembly of a few hundred elements.)
 */
function structureKey(
  nodeCount: number,
  from: Int32Array,
  to: Int32Array,
  fixed: Uint8Array,
): string {
  let a = 0x811c9dc5;
  let b = 0x9e3779b9;
  const mix = (v: number) => {
    a = Math.imul(a ^ v, 0x01000193);
    b = Math.imul(b ^ v, 0x5bd1e995);
    b ^= b >>> 15;
  };
  for (let e = 0; e < from.length; e++) {
    mix(from[e]);
    mix(to[e]);
  }
  for (let i = 0; i < fixed.length; i++) if (fixed[i]) mix(~i);
  return `${nodeCount}|${from.length}|${a >>> 0}|${b >>> 0}`;
}

/** Whether `topology` was analysed from exactly these arrays. */
function sameStructure(
  topology: Topology,
  from: Int32Array,
  to: Int32Array,
  fixed: Uint8Array,
): boolean {
  const equal = (x: ArrayLike<number>, y: ArrayLike<number>) => {
    if (x.length !== y.length) return false;
    for (let i = 0; i < x.length; i++) if (x[i] !== y[i]) return false;
    return true;
  };
  return equal(topology.from, from) && equal(topology.to, to) && equal(topology.fixed, fixed);
}

function listNodes(nodes: number[]): string {
  const shown = nodes.slice(0, 10).join(", ");
  return nodes.length > 10 ? `${shown}, … (${nodes.length} in all)` : shown;
}

function invalid(message: string): Failure {
  return { ok: false, code: "invalid_topology", message };
}

/** Check indices and connectivity; return the arrays or an `invalid_topology` failure. */
function checkTopology(
  problem: HydraulicProblem,
): { ok: true; from: Int32Array; to: Int32Array; fixed: Uint8Array } | Failure {
  const n = problem.nodeCount;
  if (!Number.isInteger(n) || n < 0) return invalid(`nodeCount must be an integer ≥ 0, got ${n}`);
  const inRange = (i: number) => Number.isInteger(i) && i >= 0 && i < n;
  const m = problem.elements.length;
  const from = new Int32Array(m), to = new Int32Array(m);
  for (let e = 0; e < m; e++) {
    const el = problem.elements[e];
    if (!inRange(el.from) || !inRange(el.to)) {
      return invalid(
        `element ${e} joins nodes ${el.from} → ${el.to}; node indices must be integers in 0…${
          n - 1
        }`,
      );
    }
    if (el.from === el.to) return invalid(`element ${e} starts and ends at node ${el.from}`);
    from[e] = el.from;
    to[e] = el.to;
  }
  const fixed = new Uint8Array(n);
  for (const [node, pressure] of problem.fixedPressure) {
    if (!inRange(node)) {
      return invalid(`fixed pressure at node ${node}, which is not in 0…${n - 1}`);
    }
    if (!Number.isFinite(pressure)) {
      return invalid(`fixed pressure at node ${node} must be finite, got ${pressure}`);
    }
    fixed[node] = 1;
  }
  for (const [node, q] of problem.inflow) {
    if (!inRange(node)) return invalid(`inflow at node ${node}, which is not in 0…${n - 1}`);
    if (!Number.isFinite(q)) return invalid(`inflow at node ${node} must be finite, got ${q}`);
    if (fixed[node] && q !== 0) {
      return invalid(`inflow ${q} m³/s at node ${node}, which has a fixed pressure`);
    }
  }
  // Union–find over the elements; every component needs a fixed-pressure node.
  const root = Int32Array.from({ length: n }, (_, i) => i);
  const find = (i: number): number => {
    while (root[i] !== i) {
      root[i] = root[root[i]];
      i = root[i];
    }
    return i;
  };
  for (let e = 0; e < m; e++) {
    const a = find(from[e]), b = find(to[e]);
    if (a !== b) root[a] = b;
  }
  const anchored = new Uint8Array(n);
  for (let i = 0; i < n; i++) if (fixed[i]) anchored[find(i)] = 1;
  const floating: number[] = [];
  for (let i = 0; i < n; i++) if (!anchored[find(i)]) floating.push(i);
  if (floating.length > 0) {
    return invalid(
      `nodes ${listNodes(floating)} are not connected to any node with a fixed pressure`,
    );
  }
  return { ok: true, from, to, fixed };
}

/** The cached topology with these arrays, or a new analysis (kept among the last few). */
function topologyOf(
  nodeCount: number,
  from: Int32Array,
  to: Int32Array,
  fixed: Uint8Array,
): Topology {
  const key = structureKey(nodeCount, from, to, fixed);
  const known = topologyCache.get(key);
  if (known && sameStructure(known, from, to, fixed)) {
    topologyCache.delete(key);
    topologyCache.set(key, known);
    return known;
  }
  const freeIndex = new Int32Array(nodeCount).fill(-1);
  const free: number[] = [];
  for (let i = 0; i < nodeCount; i++) {
    if (!fixed[i]) {
      freeIndex[i] = free.length;
      free.push(i);
    }
  }
  const slot = new Int32Array(from.length).fill(-1);
  const rows: number[] = [], cols: number[] = [];
  for (let e = 0; e < from.length; e++) {
    const a = freeIndex[from[e]], b = freeIndex[to[e]];
    if (a >= 0 && b >= 0) {
      slot[e] = rows.length;
      rows.push(a);
      cols.push(b);
    }
  }
  const topology: Topology = {
    nodeCount,
    from,
    to,
    fixed,
    freeIndex,
    freeNodes: Int32Array.from(free),
    slot,
    symbolic: analyse({ size: free.length, rows, cols }),
    workspace: undefined,
  };
  topologyCache.delete(key);
  topologyCache.set(key, topology);
  if (topologyCache.size > TOPOLOGY_CACHE_SIZE) {
    topologyCache.delete(topologyCache.keys().next().value!);
  }
  return topology;
}

function checkOptions(options: HydraulicOptions, elementCount: number) {
  const flowTolerance = options.flowTolerance ?? 1e-10;
  const massTolerance = options.massTolerance ?? 1e-10;
  const maxIterations = options.maxIterations ?? 100;
  if (!(flowTolerance > 0)) {
    throw new RangeError(
      `Cannot solve hydraulics: flowTolerance must be > 0, got ${flowTolerance}`,
    );
  }
  if (!(massTolerance > 0)) {
    throw new RangeError(
      `Cannot solve hydraulics: massTolerance must be > 0, got ${massTolerance}`,
    );
  }
  if (!Number.isInteger(maxIterations) || maxIterations < 1) {
    throw new RangeError(
      `Cannot solve hydraulics: maxIterations must be an integer ≥ 1, got ${maxIterations}`,
    );
  }
  const initial = options.initialFlows;
  if (initial !== undefined) {
    if (initial.length !== elementCount) {
      throw new RangeError(
        `Cannot solve hydraulics: initialFlows has ${initial.length} values for ${elementCount} elements`,
      );
    }
    for (let e = 0; e < initial.length; e++) {
      if (!Number.isFinite(initial[e])) {
        throw new RangeError("Cannot solve hydraulics: initialFlows must all be finite");
      }
    }
  }
  const known = options.initialLaws;
  if (known !== undefined) {
    if (initial === undefined) {
      throw new RangeError("Cannot solve hydraulics: initialLaws needs initialFlows");
    }
    const { known: mask, drop, slope } = known;
    if (
      mask.length !== elementCount || drop.length !== elementCount || slope.length !== elementCount
    ) {
      throw new RangeError(
        `Cannot solve hydraulics: initialLaws must have one value per element (${elementCount})`,
      );
    }
    for (let e = 0; e < elementCount; e++) {
      if (mask[e] && (!Number.isFinite(drop[e]) || !(slope[e] > 0) || !Number.isFinite(slope[e]))) {
        throw new RangeError(
          `Cannot solve hydraulics: initialLaws of element ${e} must be finite with a slope > 0`,
        );
      }
    }
  }
  return { flowTolerance, massTolerance, maxIterations, initial, known };
}

/**
 * Solve a steady hydraulic network: pressures at the free nodes and flows in every
 * element, given each element's law ΔP = h(Q), fixed pressures and nodal inflows. SI
 * (Pa, m³/s). Global gradient algorithm (Todini & Pilati 1988; Rossman 2000, EPANET 2
 * manual, appendix D) with a backtracking line search. Topology problems, a singular
 * system and non-convergence come back as `{ ok: false, code }`, never as a throw;
 * malformed options throw `RangeError`.
 *
 * @example
 * ```ts
 * // Two linear resistances in series, 1 m³/s into node 0, node 2 at 0 Pa.
 * const law = (r: number) => (q: number) => ({ pressureDrop: r * q, dPressureDropDFlow: r });
 * const s = solveHydraulics({
 *   nodeCount: 3,
 *   elements: [{ from: 0, to: 1, law: law(2) }, { from: 1, to: 2, law: law(3) }],
 *   fixedPressure: new Map([[2, 0]]),
 *   inflow: new Map([[0, 1]]),
 * });
 * // s.ok && s.pressures → [5, 3, 0]
 * ```
 */
export function solveHydraulics(
  problem: HydraulicProblem,
  options: HydraulicOptions = {},
): HydraulicSolution {
  let topology: Topology;
  if (options.topology) {
    const given = options.topology;
    if (given.nodeCount !== problem.nodeCount || given.elementCount !== problem.elements.length) {
      throw new RangeError(
        `Cannot solve hydraulics: the topology given has ${given.nodeCount} nodes and ` +
          `${given.elementCount} elements, the problem ${problem.nodeCount} and ${problem.elements.length}`,
      );
    }
    topology = given.analysed;
  } else {
    const checked = checkTopology(problem);
    if (!checked.ok) return checked;
    topology = topologyOf(problem.nodeCount, checked.from, checked.to, checked.fixed);
  }
  const settings = checkOptions(options, problem.elements.length);
  const workspace = workspaceOf(topology);
  try {
    return solveOn(problem, topology, { settings, workspace });
  } finally {
    workspace.busy = false;
  }
}

/** {@link solveHydraulics} on a checked topology with checked options, in `workspace`. */
function solveOn(
  problem: HydraulicProblem,
  topology: Topology,
  at: { settings: ReturnType<typeof checkOptions>; workspace: Workspace },
): HydraulicSolution {
  const { flowTolerance, massTolerance, maxIterations, initial, known } = at.settings;
  const n = problem.nodeCount;
  const elements = problem.elements;
  const m = elements.length;
  const { from, to, freeIndex, freeNodes, slot, symbolic } = topology;
  const freeCount = freeNodes.length;
  const {
    inflow,
    drop,
    slope,
    trialPressure,
    trialFlow,
    trialDrop,
    trialSlope,
    conductance,
    offset,
    newFlow,
    diagonal,
    offDiagonal,
    rhs,
    solved,
    newPressure,
    balance,
  } = at.workspace;

  inflow.fill(0);
  for (const [node, q] of problem.inflow) inflow[node] += q;
  let totalInflow = 0;
  for (let i = 0; i < n; i++) if (inflow[i] > 0) totalInflow += inflow[i];
  const flowScale = totalInflow > 0 ? totalInflow : DEFAULT_FLOW_SCALE;
  const flowFloor = FLOW_FLOOR_RATIO * flowScale;
  const stagnantFlow = STAGNANT_RATIO * flowScale;

  const pressure = new Float64Array(n);
  for (const [node, p] of problem.fixedPressure) pressure[node] = p;
  const flow = new Float64Array(m);
  trialPressure.set(pressure);
  newPressure.set(pressure);

  let lawFailure: Failure | undefined;
  const floorSecant = (e: number) => elements[e].law(flowFloor).pressureDrop / flowFloor;
  /** h and h' at `q` (not for the elements `skip` marks); h' at the floor flow when |Q| is below it or h' is not finite there. */
  const evaluate = (
    q: Float64Array,
    h: Float64Array,
    dh: Float64Array,
    skip?: Uint8Array,
  ): boolean => {
    for (let e = 0; e < m; e++) {
      if (skip !== undefined && skip[e]) continue;
      const law = elements[e].law(q[e]);
      let d = law.dPressureDropDFlow;
      if (Math.abs(q[e]) < flowFloor || !Number.isFinite(d)) {
        d = elements[e].law(q[e] < 0 ? -flowFloor : flowFloor).dPressureDropDFlow;
      }
      if (!Number.isFinite(law.pressureDrop) || !(d > 0) || !Number.isFinite(d)) {
        lawFailure = {
          ok: false,
          code: "did_not_converge",
          message: `element ${e} law at Q = ${q[e]} m³/s gave ΔP = ${law.pressureDrop} Pa, ` +
            `dΔP/dQ = ${d} Pa·s/m³; need finite values and dΔP/dQ > 0`,
        };
        return false;
      }
      h[e] = law.pressureDrop;
      dh[e] = d;
    }
    return true;
  };

  /**
   * Nodal solve for Q_e = c_e + g_e·(P_from − P_to) with mass balance at the free nodes:
   * (A21·G·A12)·P = inflow + A21·c + fixed-pressure terms. Fills newPressure and newFlow.
   * Linearised about the current flows (`aboutFlows`): c = Q − g·h, so the law is
   * Q* = Q + g·(ΔP − h); otherwise c = 0 (a linear law Q = g·ΔP). Conductances below
   * CONDUCTANCE_RANGE × the largest are raised to that bound (a chord slope: it keeps
   * the pivots of elements carrying almost no flow above rounding).
   */
  const nodalSolve = (aboutFlows: boolean): Failure | undefined => {
    let largest = 0;
    for (let e = 0; e < m; e++) largest = Math.max(largest, conductance[e]);
    const smallest = CONDUCTANCE_RANGE * largest;
    for (let e = 0; e < m; e++) {
      if (conductance[e] < smallest) conductance[e] = smallest;
      offset[e] = aboutFlows ? flow[e] - conductance[e] * drop[e] : 0;
    }
    diagonal.fill(0);
    rhs.fill(0);
    for (let e = 0; e < m; e++) {
      const g = conductance[e], c = offset[e];
      const a = freeIndex[from[e]], b = freeIndex[to[e]];
      if (a >= 0) {
        diagonal[a] += g;
        rhs[a] -= c;
        if (b < 0) rhs[a] += g * pressure[to[e]];
      }
      if (b >= 0) {
        diagonal[b] += g;
        rhs[b] += c;
        if (a < 0) rhs[b] += g * pressure[from[e]];
      }
      if (slot[e] >= 0) offDiagonal[slot[e]] = -g;
    }
    for (let k = 0; k < freeCount; k++) rhs[k] += inflow[freeNodes[k]];
    const factored = symbolic.factor({ diagonal, offDiagonal });
    if (!factored.ok) {
      return {
        ok: false,
        code: "singular",
        message: `nodal system is singular near node ${
          factored.column < 0 ? "?" : freeNodes[factored.column]
        }: ${factored.message}`,
      };
    }
    factored.factor.solve(rhs, solved);
    for (let k = 0; k < freeCount; k++) newPressure[freeNodes[k]] = solved[k];
    for (let e = 0; e < m; e++) {
      newFlow[e] = offset[e] + conductance[e] * (newPressure[from[e]] - newPressure[to[e]]);
    }
    return undefined;
  };

  let worstMass = 0, worstNode = -1;
  /** Worst relative nodal mass residual of `q`; sets worstMass and worstNode, returns Σ m_i². */
  const massResidual = (q: Float64Array): number => {
    balance.set(inflow);
    let largest = 0;
    for (let e = 0; e < m; e++) {
      balance[from[e]] -= q[e];
      balance[to[e]] += q[e];
      largest = Math.max(largest, Math.abs(q[e]));
    }
    const scale = totalInflow > 0 ? totalInflow : largest > 0 ? largest : DEFAULT_FLOW_SCALE;
    let sum = 0;
    worstMass = 0;
    worstNode = -1;
    for (let k = 0; k < freeCount; k++) {
      const i = freeNodes[k];
      const r = Math.abs(balance[i]);
      sum += r * r;
      if (worstNode < 0 || r / scale > worstMass) {
        worstMass = r / scale;
        worstNode = i;
      }
    }
    return sum;
  };

  /**
   * Merit ½‖S·F‖² with S = diag(g) on the energy rows (a flow, m³/s) and 1 on the mass rows,
   * from the mass rows' Σ m_i² (`massResidual` of the flows) and the pressures and drops.
   */
  const merit = (massSum: number, p: Float64Array, h: Float64Array): number => {
    let sum = massSum;
    for (let e = 0; e < m; e++) {
      const r = conductance[e] * (h[e] - (p[from[e]] - p[to[e]]));
      sum += r * r;
    }
    return sum / 2;
  };

  /** Convergence measure: the first-order relative flow correction Σ|r_e/h'_e| / Σ|Q_e|. */
  const convergenceMeasure = (): number => {
    let num = 0, den = 0;
    for (let e = 0; e < m; e++) {
      num += Math.abs((drop[e] - (pressure[from[e]] - pressure[to[e]])) / slope[e]);
      den += Math.abs(flow[e]);
    }
    return den > 0 ? num / den : num / flowScale;
  };

  const diagnostics = (iterations: number, change: number): HydraulicDiagnostics => {
    massResidual(flow);
    return { iterations, worstMassResidual: worstMass, worstNode, relativeFlowChange: change };
  };

  /**
   * The pure Newton step to newFlow, newPressure as the solution, if the point it reaches is
   * predicted to meet the tolerance ({@link QUADRATIC_MARGIN}: no element at rest or crossing
   * a kink) and its flows balance (a nodal solve's do, to rounding): the drops are the laws
   * linearised along the step, h + h'·δ, which are off the laws there by what is off the
   * flows, inside the tolerance.
   */
  const lastNewtonStep = (iteration: number): HydraulicSolution | undefined => {
    let predicted = 0, moved = 0, size = 0;
    for (let e = 0; e < m; e++) {
      const step = newFlow[e] - flow[e];
      const q = Math.abs(newFlow[e]);
      if (step === 0) {
        size += q;
        continue;
      }
      if (!(q > 0) || flow[e] * newFlow[e] <= 0) return undefined;
      const kinks = elements[e].kinks;
      if (kinks && crossesKink(kinks, Math.abs(flow[e]), q)) return undefined;
      predicted += (step * step) / q;
      moved += Math.abs(step);
      size += q;
    }
    if (!(size > 0) || QUADRATIC_MARGIN * predicted > flowTolerance * size) return undefined;
    const change = moved / size;
    massResidual(newFlow);
    if (worstMass > massTolerance) return undefined;
    const drops = new Float64Array(m);
    for (let e = 0; e < m; e++) drops[e] = drop[e] + slope[e] * (newFlow[e] - flow[e]);
    pressure.set(newPressure);
    flow.set(newFlow);
    return {
      ok: true,
      pressures: pressure,
      flows: flow,
      pressureDrops: drops,
      pressureDropSlopes: slope.slice(),
      diagnostics: {
        iterations: iteration + 1,
        worstMassResidual: worstMass,
        worstNode,
        relativeFlowChange: change,
      },
    };
  };

  // Start: the warm-start flows, or one linear-theory solve with every law replaced by
  // its secant resistance h(q)/q at the flow scale (Wood & Charles (1972) J. Hydraulics
  // Div. ASCE 98(HY7):1157).
  if (initial) {
    flow.set(initial);
  } else {
    for (let e = 0; e < m; e++) {
      const h = elements[e].law(flowScale).pressureDrop;
      if (!(h > 0) || !Number.isFinite(h)) {
        return {
          ok: false,
          code: "did_not_converge",
          message:
            `element ${e} law at Q = ${flowScale} m³/s gave ΔP = ${h} Pa; need a finite ΔP > 0`,
        };
      }
      conductance[e] = flowScale / h;
    }
    const failure = nodalSolve(false);
    if (failure) return failure;
    flow.set(newFlow);
  }
  if (known) {
    // The laws a previous solve left at these flows; the others evaluated here.
    for (let e = 0; e < m; e++) {
      if (!known.known[e]) continue;
      drop[e] = known.drop[e];
      slope[e] = known.slope[e];
    }
    if (!evaluate(flow, drop, slope, known.known)) return lawFailure!;
  } else if (!evaluate(flow, drop, slope)) return lawFailure!;

  /*
   * Global gradient Newton (Todini & Pilati 1988; Rossman 2000, app. D).
   * Each iteration linearises every law at the current flows, h(Q+δ) ≈ h + D·δ, solves
   * the reduced SPD system for the new free pressures and gets the new flows
   * Q* = Q + D⁻¹·(P_from − P_to − h).
   * Safeguards for strongly shear-thinning (concave, n ≈ 0.3) laws, whose tangent step
   * overshoots past the root when a flow must fall:
   *  1. secant guard: an element whose tangent step would leave < ½ of its flow (or flip
   *     it), or whose flow is at rounding level (< 1e-12 of the inflow), is re-linearised
   *     with its secant slope h(Q)/Q — the linear-theory step (Wood & Charles 1972), which
   *     never overshoots a concave law — and the system is solved again;
   *  2. line search: the step (P, Q) → (P*, Q*) is scaled by the largest α in 1, ½, ¼, …
   *     (down to 1/1024) that passes the Armijo test on the merit ½‖S·F‖² (F: energy and
   *     mass residuals, S: D⁻¹ on the energy rows, frozen for the iteration), or brings
   *     the merit to rounding level.
   * The first solve defines the starting pressures (the Newton pressures do not depend
   * on the old ones). Near the solution neither safeguard acts: quadratic convergence.
   * Stopping: at the current point, the first-order flow correction Σ|r_e/h'_e| / Σ|Q|
   * ≤ flowTolerance and the worst nodal mass residual / total inflow ≤ massTolerance; or
   * after a pure Newton step (no secant guard) so small that the point it reaches meets them
   * (`lastNewtonStep`: quadratic convergence), which then is not evaluated again;
   * otherwise `did_not_converge` after maxIterations solves.
   */
  let havePressure = false;
  let change = NaN;
  // Σ m_i² of the current flows once known: the line search's accepted trial becomes the next
  // iterate, and its massResidual (with worstMass and worstNode) was the last one run.
  let flowMass = NaN;
  for (let iteration = 0;; iteration++) {
    if (havePressure) {
      const correction = convergenceMeasure();
      if (Number.isNaN(flowMass)) flowMass = massResidual(flow);
      if (correction <= flowTolerance && worstMass <= massTolerance) {
        return {
          ok: true,
          pressures: pressure,
          flows: flow,
          pressureDrops: drop.slice(),
          pressureDropSlopes: slope.slice(),
          diagnostics: diagnostics(iteration, change),
        };
      }
    }
    if (iteration >= maxIterations) {
      return {
        ok: false,
        code: "did_not_converge",
        message: `no convergence in ${maxIterations} iterations (convergence measure ` +
          `${convergenceMeasure().toExponential(2)}, tolerance ${flowTolerance})`,
        diagnostics: diagnostics(iteration, change),
      };
    }
    for (let e = 0; e < m; e++) {
      conductance[e] = 1 / slope[e];
    }
    let failure = nodalSolve(true);
    if (failure) return { ...failure, diagnostics: diagnostics(iteration, change) };
    let guarded = 0;
    for (let e = 0; e < m; e++) {
      const q = flow[e];
      if (Math.abs(q) >= stagnantFlow && newFlow[e] / q >= SHRINK_LIMIT) continue;
      const secant = q !== 0 ? drop[e] / q : floorSecant(e);
      if (!(secant > 0) || !Number.isFinite(secant)) continue;
      conductance[e] = 1 / secant;
      guarded++;
    }
    if (guarded > 0) {
      failure = nodalSolve(true);
      if (failure) return { ...failure, diagnostics: diagnostics(iteration, change) };
    }
    if (guarded === 0) {
      const last = lastNewtonStep(iteration);
      if (last) return last;
    }
    if (!havePressure) {
      pressure.set(newPressure);
      havePressure = true;
    }
    const merit0 = merit(Number.isNaN(flowMass) ? massResidual(flow) : flowMass, pressure, drop);
    let largestFlow = flowScale;
    for (let e = 0; e < m; e++) largestFlow = Math.max(largestFlow, Math.abs(flow[e]));
    const meritNoise = (m + freeCount) * (ROUNDOFF * largestFlow) ** 2;
    let alpha = 1;
    let trialMass = NaN;
    for (;;) {
      for (let k = 0; k < freeCount; k++) {
        const i = freeNodes[k];
        trialPressure[i] = pressure[i] + alpha * (newPressure[i] - pressure[i]);
      }
      for (let e = 0; e < m; e++) trialFlow[e] = flow[e] + alpha * (newFlow[e] - flow[e]);
      if (!evaluate(trialFlow, trialDrop, trialSlope)) {
        return { ...lawFailure!, diagnostics: diagnostics(iteration + 1, change) };
      }
      trialMass = massResidual(trialFlow);
      const meritTrial = merit(trialMass, trialPressure, trialDrop);
      if (
        meritTrial <= (1 - 2 * ARMIJO * alpha) * merit0 || meritTrial <= meritNoise ||
        alpha <= MIN_STEP
      ) break;
      alpha /= 2;
    }
    let moved = 0, size = 0;
    for (let e = 0; e < m; e++) {
      moved += Math.abs(trialFlow[e] - flow[e]);
      size += Math.abs(trialFlow[e]);
    }
    change = size > 0 ? moved / size : 0;
    pressure.set(trialPressure);
    flow.set(trialFlow);
    flowMass = trialMass;
    drop.set(trialDrop);
    slope.set(trialSlope);
  }
}

/** Whether the flows |q0| and |q1| lie on two sides of (or on) one of `kinks`. */
function crossesKink(kinks: readonly number[], q0: number, q1: number): boolean {
  for (let i = 0; i < kinks.length; i++) {
    if ((q0 - kinks[i]) * (q1 - kinks[i]) <= 0) return true;
  }
  return false;
}

function countSlots(slot: Int32Array): number {
  let count = 0;
  for (const s of slot) if (s >= 0) count++;
  return count;
}
