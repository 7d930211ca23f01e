import type { FlowCurve } from "../materials/flow_curve.ts";
import {
  type ChannelFlow,
  closingThickness,
  radialDiskFlow,
  type Section,
  shrinkSection,
  taperedChannelFlow,
  uniformChannelFlow,
} from "../physics/mod.ts";
import { adiabaticHeating, frozenLayerThickness } from "../physics/thermal.ts";
import { taperedFilledLength } from "./_fill_geometry.ts";
import type { FeedNetwork, NetworkElement } from "./feed_network.ts";
import {
  factorLaplacian,
  type FillTangentRequest,
  type LinearBranch,
  linearPattern,
} from "./fill_tangent.ts";
import type {
  CavityFigures,
  ElementFigures,
  FillDiagnostics,
  FillResult,
  FillSample,
  FlowPath,
} from "./fill_result.ts";
import { type HydraulicElement, solveHydraulics } from "./hydraulic_solve.ts";

/** The melt as the fill simulation needs it. All SI. */
export interface MeltModel {
  /** Flow curve at a melt temperature (K) and pressure (Pa). */
  curveAt(temperature: number, pressure: number): FlowCurve;
  /** kg/m³ */
  meltDensity: number;
  /** J/(kg·K) */
  specificHeat: number;
  /** Thermal diffusivity of the melt, m²/s. */
  diffusivity: number;
  /** No-flow (transition) temperature, K. */
  noFlowTemperature: number;
}

/** Process settings of one shot. All SI. */
export interface FillProcess {
  /** Constant injection rate, m³/s. */
  injectionRate: number;
  /** Switchover at this fraction of the whole shot volume (0.5–1). */
  switchoverFraction: number;
  /** Melt temperature entering the feed (nozzle or hot-drop tip), K. */
  feedTemperature: number;
  /** Mold wall temperature, K. */
  moldTemperature: number;
  /** No frozen layer, no viscous heating, viscosity at the feed temperature and 0 Pa. */
  isothermal: boolean;
}

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
}

/** Shortest resisting length of a partly filled element, as a fraction of its length. */
const MIN_FILLED_FRACTION = 1e-4;
/** A frozen layer this close to closing a section (fraction of the thinnest half-dimension) shuts it. */
const CLOSURE_FRACTION = 0.95;
/** Most heating–flow passes at an event, and the feed-pressure change (relative) that ends them. */
const THERMAL_PASSES = 12;
const THERMAL_TOLERANCE = 1e-4;
/** Relative tolerance for landing a step on an element's or cavity's full volume. */
const EVENT_TOLERANCE = 1e-10;

/** A branch of the instantaneous network: a full element, or one filling side of a partial one. */
interface Branch {
  element: number;
  /** 0: fed from the element's `from` node; 1: fed from its `to` node; -1: full, through-flow. */
  side: -1 | 0 | 1;
  /** Graph nodes: upstream node and downstream node (-1 = a flow front at 0 Pa). */
  a: number;
  b: number;
}

interface Assembly {
  branches: Branch[];
  /** graph node → index in the hydraulic problem (-1: not in it). */
  local: Int32Array;
  nodeCount: number;
}

interface Solved {
  assembly: Assembly;
  flows: Float64Array;
  /** Pressure per graph node (NaN where dry or pruned). */
  pressure: Float64Array;
  channel: ChannelFlow[];
}

/**
 * Transient filling of a feed network at a constant injection rate.
 *
 * Algorithm: the melt advances element by element. At any instant the wet part of
 * the network is a set of full elements (through-flow) and partly filled ones whose
 * flow front sits at 0 Pa gauge; the global gradient solve (`solveHydraulics`) gives
 * the flow into every front. Front volumes are integrated with Heun's method
 * (explicit trapezoid); steps are limited by the change of the branch flows and end
 * exactly on each event (an element or cavity becoming full, switchover), found by
 * inverse quadratic interpolation of the trapezoid volume. Landing error is removed
 * by shifting the event time so Σ filled volumes = Q·t exactly. A full cavity takes
 * no flow (incompressible melt), so the rest speed up. Thermal coupling is lagged by
 * one step: each element's viscosity uses its inlet melt temperature plus half its
 * own adiabatic heating ΔP/(ρ·cp), and the frozen layer of the no-flow conduction
 * solution δ = 2·erf⁻¹(θ)·√(α·t_c) with t_c the shorter of the wall's mean contact
 * time and half the melt's residence time in the element (the thermal boundary layer
 * of a flowing channel grows with residence, not contact, time: Lévêque scaling);
 * a layer never thins once formed (no re-melting: when a cavity fills and the flow
 * through the others jumps, their residence time falls but the solid stays).
 * At an event the heating and the flows are iterated to agree instead of lagging.
 * Dead ends (a full cavity and what leads only to it) hold the pressure of the node
 * they hang from; a node sealed by a frozen-shut element keeps its last pressure.
 * Stops when every cavity is full, when no path reaches an unfilled cavity (short
 * shot), or at the step limit.
 */
export function simulateFill(network: FeedNetwork, options: SimulateFillOptions): FillResult {
  const { melt, process } = options;
  const tolerance = options.flowChangeTolerance ?? 0.02;
  const maxSteps = options.maxSteps ?? 20000;
  const elements = network.elements;
  const nodeCount = network.nodes.length;
  const E = elements.length;
  const Q = process.injectionRate;
  const shotVolume = network.feedSystemVolume + network.cavityVolume;
  const switchoverTime = (process.switchoverFraction * shotVolume) / Q;
  const nominalFillTime = shotVolume / Q;

  const adjacency: { element: number; side: 0 | 1 }[][] = Array.from(
    { length: nodeCount },
    () => [],
  );
  for (const e of elements) {
    adjacency[e.from].push({ element: e.index, side: 0 });
    if (e.to >= 0) adjacency[e.to].push({ element: e.index, side: 1 });
  }

  const fill = new Float64Array(2 * E);
  const sideStart = new Float64Array(2 * E).fill(NaN);
  const fullTime = new Float64Array(E).fill(NaN);
  const wetTime = new Float64Array(nodeCount).fill(NaN);
  const closed = new Uint8Array(E);
  const closedAt = new Float64Array(E).fill(NaN);
  const lastFlow = new Float64Array(E);
  const temperature = new Float64Array(E).fill(process.feedTemperature);
  const heating = new Float64Array(E);
  const meanPressure = new Float64Array(E);
  /** Frozen layer reached by each element at the last accepted instant, m (it never re-melts). */
  const frozenHeld = new Float64Array(E);
  const closing = Float64Array.from(elements, closingLayer);

  const isFull = (e: number) => !Number.isNaN(fullTime[e]);
  const filledVolume = (e: number) => fill[2 * e] + fill[2 * e + 1];

  const wet = (node: number, t: number) => {
    if (!Number.isNaN(wetTime[node])) return;
    wetTime[node] = t;
    for (const { element, side } of adjacency[node]) {
      if (isFull(element) || !Number.isNaN(sideStart[2 * element + side])) continue;
      if (elements[element].kind === "cavity" && side === 1) continue;
      sideStart[2 * element + side] = t;
    }
  };

  // --- geometry and laws -------------------------------------------------
  const frozenAt = (e: NetworkElement, t: number, side: -1 | 0 | 1): number => {
    if (process.isothermal || e.heated) return 0;
    const starts = [sideStart[2 * e.index], sideStart[2 * e.index + 1]].filter((s) =>
      !Number.isNaN(s)
    );
    if (starts.length === 0) return 0;
    const start = Math.min(...starts);
    const contact = side === -1 ? t - (start + fullTime[e.index]) / 2 : (t - start) / 2;
    const flow = lastFlow[e.index];
    const residence = flow > 0 ? filledVolume(e.index) / flow : Infinity;
    const tc = Math.max(0, Math.min(contact, residence / 2));
    if (tc === 0) return 0;
    const delta = frozenLayerThickness(tc, {
      meltTemperature: temperature[e.index],
      wallTemperature: process.moldTemperature,
      noFlowTemperature: melt.noFlowTemperature,
      diffusivity: melt.diffusivity,
    });
    return Math.max(frozenHeld[e.index], Math.min(delta, CLOSURE_FRACTION * closing[e.index]));
  };

  const curveFor = (e: NetworkElement): FlowCurve =>
    process.isothermal
      ? isothermalCurve
      : melt.curveAt(temperature[e.index], Math.max(0, meanPressure[e.index]));
  const isothermalCurve = melt.curveAt(process.feedTemperature, 0);

  const lawOf = (
    branch: Branch,
    t: number,
    volumes: Float64Array,
    element?: NetworkElement,
  ): (flow: number) => ChannelFlow => {
    const e = element ?? elements[branch.element];
    const curve = curveFor(e);
    const delta = frozenAt(e, t, branch.side);
    const g = e.geometry;
    const v = branch.side === -1
      ? e.volume
      : Math.min(Math.max(volumes[2 * e.index + branch.side], 0), e.volume);
    const fraction = v / e.volume;
    switch (g.type) {
      case "uniform": {
        const section = delta > 0 ? shrinkSection(g.section, delta) : g.section;
        const length = Math.max(fraction, MIN_FILLED_FRACTION) * g.length;
        return (flow) => uniformChannelFlow(flow, { section, length, curve });
      }
      case "tapered": {
        const [entry, exit] = branch.side === 1 ? [g.exit, g.entry] : [g.entry, g.exit];
        const filledLength = branch.side === -1
          ? g.length
          : Math.max(taperedFilledLength(entry, exit, g.length, v), MIN_FILLED_FRACTION * g.length);
        const open = (s: Section) => (delta > 0 ? shrinkSection(s, delta) : s);
        const shrunkEntry = open(entry);
        const shrunkExit = open(exit);
        return (flow) =>
          taperedChannelFlow(flow, {
            entry: shrunkEntry,
            exit: shrunkExit,
            length: g.length,
            filledLength,
            curve,
          });
      }
      case "strip": {
        // physics.md §4: the front advances along the flow length in a slit of the strip's width.
        const section: Section = { kind: "slit", width: g.width, gap: g.gap - 2 * delta };
        const length = Math.max(fraction, MIN_FILLED_FRACTION) * g.flowLength;
        return (flow) => uniformChannelFlow(flow, { section, length, curve });
      }
      case "radial": {
        const r0 = g.gateRadius;
        const frontRadius = Math.max(
          Math.sqrt(r0 * r0 + v / (Math.PI * g.gap)),
          r0 + MIN_FILLED_FRACTION * (g.maxRadius - r0),
        );
        const gap = g.gap - 2 * delta;
        return (flow) => radialDiskFlow(flow, { gap, gateRadius: r0, frontRadius, curve });
      }
    }
  };

  // --- the instantaneous network ---------------------------------------------
  const assemble = (): Assembly => {
    const branches: Branch[] = [];
    for (const e of elements) {
      if (closed[e.index]) continue;
      if (isFull(e.index)) {
        if (e.kind === "cavity") continue;
        if (!Number.isNaN(wetTime[e.from]) && !Number.isNaN(wetTime[e.to])) {
          branches.push({ element: e.index, side: -1, a: e.from, b: e.to });
        }
        continue;
      }
      for (const side of [0, 1] as const) {
        if (Number.isNaN(sideStart[2 * e.index + side])) continue;
        branches.push({ element: e.index, side, a: side === 0 ? e.from : e.to, b: -1 });
      }
    }
    // Prune dead ends: free nodes joined by one branch carry no flow.
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
    // Keep what the inlet reaches: melt behind a frozen-shut element is cut off from the pump.
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
  };

  /** Pressure each wet node had at the last recorded instant, Pa (NaN: never had one). */
  const heldPressure = new Float64Array(nodeCount).fill(NaN);
  /**
   * Pressures of the wet nodes the assembly pruned. A dead end (a full cavity and the full
   * gates and runners that lead only to it) carries no flow, so every node of it sits at the
   * pressure of the live node it hangs from: the full cavity holds its feed pressure over its
   * whole area. A node sealed off by a frozen-shut element keeps the pressure it last had
   * (an upper bound: the sealed melt's shrinkage lowers it, which a fill model does not see).
   */
  const fillDeadEnds = (pressure: Float64Array) => {
    const queue: number[] = [];
    for (let n = 0; n < nodeCount; n++) if (!Number.isNaN(pressure[n])) queue.push(n);
    while (queue.length > 0) {
      const n = queue.pop()!;
      for (const { element, side } of adjacency[n]) {
        const e = elements[element];
        if (e.kind === "cavity" || e.to < 0 || closed[element] || !isFull(element)) continue;
        const other = side === 0 ? e.to : e.from;
        if (!Number.isNaN(pressure[other])) continue;
        pressure[other] = pressure[n];
        queue.push(other);
      }
    }
    for (let n = 0; n < nodeCount; n++) {
      if (Number.isNaN(pressure[n]) && !Number.isNaN(wetTime[n])) pressure[n] = heldPressure[n];
    }
  };

  let hydraulicSolves = 0;
  let newtonIterationsMax = 0;
  let worstMassResidual = 0;
  let worstMassResidualAt = "";

  const solveAt = (
    t: number,
    volumes: Float64Array,
    assembly: Assembly,
    warm?: Float64Array,
  ): Solved | { failure: string } => {
    if (assembly.branches.length === 0) {
      // Frozen shut at the feed: nothing flows, every wet node keeps its last pressure.
      const pressure = new Float64Array(nodeCount).fill(NaN);
      fillDeadEnds(pressure);
      return { assembly, flows: new Float64Array(0), pressure, channel: [] };
    }
    const laws = assembly.branches.map((br) => lawOf(br, t, volumes));
    const fixedPressure = new Map<number, number>();
    let next = assembly.nodeCount;
    const hydraulic: HydraulicElement[] = assembly.branches.map((br, k) => {
      let to: number;
      if (br.b < 0) {
        to = next++;
        fixedPressure.set(to, 0);
      } else to = assembly.local[br.b];
      const law = laws[k];
      return {
        from: assembly.local[br.a],
        to,
        law: (flow: number) => {
          const c = law(flow);
          return { pressureDrop: c.pressureDrop, dPressureDropDFlow: c.dPressureDropDFlow };
        },
      };
    });
    const solution = solveHydraulics(
      {
        nodeCount: next,
        elements: hydraulic,
        fixedPressure,
        inflow: new Map([[assembly.local[network.inlet], Q]]),
      },
      { initialFlows: warm },
    );
    hydraulicSolves++;
    if (!solution.ok) return { failure: `${solution.code}: ${solution.message}` };
    const d = solution.diagnostics;
    newtonIterationsMax = Math.max(newtonIterationsMax, d.iterations);
    if (d.worstMassResidual > worstMassResidual) {
      worstMassResidual = d.worstMassResidual;
      worstMassResidualAt = `t = ${t.toExponential(4)} s`;
    }
    const pressure = new Float64Array(nodeCount).fill(NaN);
    for (let n = 0; n < nodeCount; n++) {
      if (assembly.local[n] >= 0) pressure[n] = solution.pressures[assembly.local[n]];
    }
    fillDeadEnds(pressure);
    const channel = laws.map((law, k) => law(solution.flows[k]));
    return { assembly, flows: solution.flows, pressure, channel };
  };

  // --- thermal state update (lagged by one step) ------------------------------
  const updateThermal = (s: Solved) => {
    for (let k = 0; k < s.assembly.branches.length; k++) {
      const br = s.assembly.branches[k];
      lastFlow[br.element] = Math.abs(s.flows[k]);
      const pa = s.pressure[br.a];
      const pb = br.b >= 0 ? s.pressure[br.b] : 0;
      meanPressure[br.element] = (pa + pb) / 2;
    }
    if (process.isothermal) return;
    const nodeTemperature = new Float64Array(nodeCount).fill(NaN);
    nodeTemperature[network.inlet] = process.feedTemperature;
    const order = [...Array(nodeCount).keys()]
      .filter((n) => !Number.isNaN(s.pressure[n]))
      .sort((x, y) => s.pressure[y] - s.pressure[x]);
    const incoming: { heat: number; flow: number }[] = Array.from({ length: nodeCount }, () => ({
      heat: 0,
      flow: 0,
    }));
    const byUpstream: number[][] = Array.from({ length: nodeCount }, () => []);
    s.assembly.branches.forEach((br, k) => {
      const up = s.flows[k] >= 0 ? br.a : br.b;
      if (up >= 0) byUpstream[up].push(k);
    });
    for (const n of order) {
      const into = incoming[n];
      if (n !== network.inlet) {
        nodeTemperature[n] = into.flow > 0 ? into.heat / into.flow : process.feedTemperature;
      }
      for (const k of byUpstream[n]) {
        const br = s.assembly.branches[k];
        const e = elements[br.element];
        const rise = adiabaticHeating(Math.abs(s.channel[k].pressureDrop), {
          density: melt.meltDensity,
          specificHeat: melt.specificHeat,
        });
        heating[e.index] = rise;
        const inlet = e.heated ? process.feedTemperature : nodeTemperature[n];
        temperature[e.index] = inlet + rise / 2;
        const down = s.flows[k] >= 0 ? br.b : br.a;
        if (down >= 0) {
          incoming[down].heat += Math.abs(s.flows[k]) * (inlet + rise);
          incoming[down].flow += Math.abs(s.flows[k]);
        }
      }
    }
  };

  // --- records --------------------------------------------------------------
  const history: FillSample[] = [];
  const shearPeak = new Float64Array(E);
  const shearPeakEarly = new Float64Array(E);
  const apparentPeak = new Float64Array(E);
  const cavityFullTime = network.cavities.map(() => NaN);
  let fillAtFirstFull: number[] | undefined;
  /** Each element's pressure drop just as the first cavity fills (every path flowing), Pa. */
  let dropsAtFirstFull: Float64Array | undefined;
  let atSwitchover: Solved | undefined;
  let frozenAtSwitchover: Float64Array | undefined;
  let feedPressurePeak = 0;
  let clampForcePeak = 0;

  const cavityFill = () => network.cavities.map((c) => Math.min(1, fill[2 * c.element] / c.volume));

  const clampForce = (s: Solved): number => {
    let force = 0;
    for (let k = 0; k < s.assembly.branches.length; k++) {
      const br = s.assembly.branches[k];
      const e = elements[br.element];
      if (e.projectedArea === 0) continue;
      const pa = s.pressure[br.a];
      if (br.b >= 0) {
        force += e.projectedArea * (pa + s.pressure[br.b]) / 2;
      } else {
        const f = Math.min(1, fill[2 * e.index + br.side] / e.volume);
        force += e.projectedArea * f * pa * meanPressureShare(e, f, s.channel[k], s.flows[k]);
      }
    }
    // Full cavities hold their inlet pressure over the whole projected area (no flow).
    for (const c of network.cavities) {
      if (!isFull(c.element)) continue;
      const p = s.pressure[elements[c.element].from];
      if (Number.isFinite(p)) force += c.projectedArea * p;
    }
    // Pruned full runners and gates sit at their neighbours' pressure; count them too.
    const inAssembly = new Uint8Array(E);
    for (const br of s.assembly.branches) inAssembly[br.element] = 1;
    for (const e of elements) {
      if (e.kind === "cavity" || e.projectedArea === 0 || !isFull(e.index)) continue;
      if (inAssembly[e.index]) continue;
      const pa = s.pressure[e.from];
      const pb = s.pressure[e.to];
      const p = Number.isFinite(pa) ? pa : Number.isFinite(pb) ? pb : 0;
      force += e.projectedArea * p;
    }
    return force;
  };

  const record = (t: number, s: Solved) => {
    for (let n = 0; n < nodeCount; n++) {
      if (!Number.isNaN(s.pressure[n])) heldPressure[n] = s.pressure[n];
    }
    const feedPressure = s.pressure[network.inlet];
    const force = clampForce(s);
    let filledVolume = 0;
    for (let i = 0; i < 2 * E; i++) filledVolume += fill[i];
    tangentRecord();
    history.push({
      time: t,
      injectedVolume: Q * t,
      filledVolume,
      feedPressure,
      clampForce: force,
      cavityFill: cavityFill(),
    });
    if (t <= switchoverTime * (1 + 1e-12)) {
      feedPressurePeak = Math.max(feedPressurePeak, feedPressure);
      clampForcePeak = Math.max(clampForcePeak, force);
      const beforeFirstFull = cavityFullTime.every((x) => Number.isNaN(x));
      s.assembly.branches.forEach((br, k) => {
        // A gate's shear counts once the gate runs full (its cavity filling): while its own
        // front crosses the land, the incompressible model with a 0 Pa front lets a lagging
        // branch draw nearly the whole shot through it for a fraction of a millisecond, a
        // spike the resin's shear limit (a steady-flow figure) is not about.
        if (elements[br.element].kind === "gate" && !isFull(br.element)) return;
        shearPeak[br.element] = Math.max(shearPeak[br.element], s.channel[k].wallShearRate);
        if (beforeFirstFull) {
          shearPeakEarly[br.element] = Math.max(
            shearPeakEarly[br.element],
            s.channel[k].wallShearRate,
          );
        }
        apparentPeak[br.element] = Math.max(
          apparentPeak[br.element],
          s.channel[k].apparentWallShearRate,
        );
      });
    }
  };

  // --- tangent (fill_tangent.ts) ---------------------------------------------
  const directions = options.tangent?.directions ?? [];
  const m = directions.length;
  const C = network.cavities.length;
  let tangentOn = m > 0;
  /** dv[j][2e + side]: change of each filling side's volume along direction j, m³. */
  const dv = Array.from({ length: m }, () => new Float64Array(2 * E));
  /** Directions that change each element, with the element as rebuilt. */
  const changedBy: { j: number; element: NetworkElement }[][] = Array.from(
    { length: E },
    () => [],
  );
  directions.forEach((list, j) => {
    for (const element of list) changedBy[element.index].push({ j, element });
  });
  const patterns = new WeakMap<
    Assembly,
    { local: LinearBranch[]; symbolic: ReturnType<typeof linearPattern> }
  >();
  /**
   * For the state last evaluated: its filling branches (indices into its branches) and their
   * δQ per direction (`flows[j·P + q]`), and δp at the inlet per direction.
   */
  let tangentFlows: { partials: number[]; flows: Float64Array } = {
    partials: [],
    flows: new Float64Array(0),
  };
  let dInlet = new Float64Array(m);
  const tangentCavity: Float64Array[] = [];
  let firstFillShift: Float64Array | undefined;
  const tangentPressure: Float64Array[] = [];

  /** The linearised network about solved state `s` (before its thermal update), with today's δv. */
  const tangentAt = (s: Solved, t: number) => {
    if (!tangentOn) return;
    const branches = s.assembly.branches;
    const K = branches.length;
    let pattern = patterns.get(s.assembly);
    if (!pattern) {
      const local = branches.map((br) => ({
        a: s.assembly.local[br.a],
        b: br.b >= 0 ? s.assembly.local[br.b] : -1,
      }));
      pattern = { local, symbolic: linearPattern(s.assembly.nodeCount, local) };
      patterns.set(s.assembly, pattern);
    }
    const g = new Float64Array(K);
    for (let k = 0; k < K; k++) g[k] = 1 / s.channel[k].dPressureDropDFlow;
    // Sparse sources: each direction changes its own element's law; every filling branch
    // adds ∂ΔP/∂v·δv. Only the filling branches' δQ are kept (they drive δv).
    const direct: { j: number; k: number; drop: number }[] = [];
    const partials: number[] = [];
    const slopeV: number[] = [];
    const probe = fill.slice(); // one volume at a time moved, then put back
    for (let k = 0; k < K; k++) {
      const br = branches[k];
      const c = s.channel[k];
      for (const { j, element } of changedBy[br.element]) {
        const drop = lawOf(br, t, fill, element)(s.flows[k]).pressureDrop - c.pressureDrop;
        direct.push({ j, k, drop });
      }
      if (br.side < 0) continue;
      partials.push(k);
      const index = 2 * br.element + br.side;
      let any = false;
      for (let j = 0; j < m && !any; j++) any = dv[j][index] !== 0;
      if (!any) {
        slopeV.push(0);
        continue;
      }
      const e = elements[br.element];
      const v = fill[index];
      const dvol = Math.max(Math.abs(v) * 1e-4, e.volume * 1e-7);
      probe[index] = v + dvol;
      slopeV.push((lawOf(br, t, probe)(s.flows[k]).pressureDrop - c.pressureDrop) / dvol);
      probe[index] = v;
    }
    const factor = factorLaplacian(s.assembly.nodeCount, pattern.local, g, pattern.symbolic);
    if (!factor) {
      tangentOn = false;
      return;
    }
    const P = partials.length;
    const inlet = s.assembly.local[network.inlet];
    const rhs = new Float64Array(s.assembly.nodeCount);
    const sigma = new Float64Array(P);
    const byDirection: { k: number; drop: number }[][] = Array.from({ length: m }, () => []);
    for (const d of direct) byDirection[d.j].push(d);
    const partialOf = new Int32Array(K).fill(-1);
    partials.forEach((k, q) => (partialOf[k] = q));
    const flows = new Float64Array(m * P);
    const inletChange = new Float64Array(m);
    for (let j = 0; j < m; j++) {
      rhs.fill(0);
      for (let q = 0; q < P; q++) {
        const k = partials[q];
        const br = branches[k];
        sigma[q] = slopeV[q] * dv[j][2 * br.element + br.side];
      }
      for (const { k, drop } of byDirection[j]) {
        const q = partialOf[k];
        if (q >= 0) sigma[q] += drop;
        else {
          const { a, b } = pattern.local[k];
          rhs[a] += g[k] * drop;
          if (b >= 0) rhs[b] -= g[k] * drop;
        }
      }
      for (let q = 0; q < P; q++) rhs[pattern.local[partials[q]].a] += g[partials[q]] * sigma[q];
      factor.solve(rhs, rhs);
      // A filling branch ends at its front (0 Pa): δQ = g·(δp_a − σ).
      for (let q = 0; q < P; q++) {
        const k = partials[q];
        flows[j * P + q] = g[k] * (rhs[pattern.local[k].a] - sigma[q]);
      }
      inletChange[j] = rhs[inlet];
    }
    tangentFlows = { partials, flows };
    dInlet = inletChange;
  };
  /** Euler step of δv over `dt` with the δQ of the state the step started from. */
  const tangentAdvance = (s0: Solved, dt: number) => {
    if (!tangentOn) return;
    const { partials, flows } = tangentFlows;
    const P = partials.length;
    partials.forEach((k, q) => {
      const br = s0.assembly.branches[k];
      const index = 2 * br.element + br.side;
      for (let j = 0; j < m; j++) dv[j][index] += dt * flows[j * P + q];
    });
  };
  /** Shift of each newly full element's fill time along each direction, s. */
  const eventShifts = (s0: Solved, before: Float64Array, full: readonly number[]) => {
    const shifts = new Map<number, Float64Array>();
    if (!tangentOn) return shifts;
    for (const e of full) {
      let flow = 0;
      const sides: number[] = [];
      s0.assembly.branches.forEach((br, k) => {
        if (br.element !== e || br.side < 0) return;
        flow += before[k];
        sides.push(2 * e + br.side);
      });
      if (sides.length === 0 || !(flow > 0)) continue;
      const shift = new Float64Array(m);
      for (let j = 0; j < m; j++) {
        const grown = changedBy[e].find((c) => c.j === j);
        const dVolume = grown ? grown.element.volume - elements[e].volume : 0;
        let held = 0;
        for (const index of sides) held += dv[j][index];
        shift[j] = (dVolume - held) / flow;
      }
      shifts.set(e, shift);
    }
    return shifts;
  };
  /** The jump of δv across the events of one step (see `fill_tangent.ts`). */
  const tangentJump = (
    s0: Solved,
    before: Float64Array,
    after: Solved,
    shifts: Map<number, Float64Array>,
  ) => {
    if (!tangentOn || shifts.size === 0) return;
    const mean = new Float64Array(m);
    for (const shift of shifts.values()) {
      for (let j = 0; j < m; j++) mean[j] += shift[j] / shifts.size;
    }
    const previous = new Map<number, number>();
    s0.assembly.branches.forEach((br, k) => {
      if (br.side >= 0) previous.set(2 * br.element + br.side, before[k]);
    });
    after.assembly.branches.forEach((br, k) => {
      if (br.side < 0) return;
      const index = 2 * br.element + br.side;
      const q1 = after.flows[k];
      const q0 = previous.get(index);
      if (q0 !== undefined) {
        for (let j = 0; j < m; j++) dv[j][index] += (q0 - q1) * mean[j];
        return;
      }
      // A branch that starts here: it starts when the element that wetted its node filled.
      let shift: Float64Array = mean;
      for (const [e, sh] of shifts) {
        const el = elements[e];
        if (el.to === br.a || el.from === br.a) shift = sh;
      }
      for (let j = 0; j < m; j++) dv[j][index] = -q1 * shift[j];
    });
  };
  const tangentRecord = () => {
    if (!tangentOn) return;
    const cavity = new Float64Array(m * C);
    for (let j = 0; j < m; j++) {
      network.cavities.forEach((c, i) => {
        cavity[j * C + i] = dv[j][2 * c.element];
      });
    }
    tangentCavity.push(cavity);
    tangentPressure.push(dInlet.slice());
  };

  // --- time loop -------------------------------------------------------------
  let t = 0;
  wet(network.inlet, 0);
  let assembly = assemble();
  let state = solveAt(t, fill, assembly);
  if ("failure" in state) return failed(state.failure);
  tangentAt(state, t);
  updateThermal(state);
  record(t, state);
  let steps = 0;
  let rejected = 0;
  let events = 0;
  let h = nominalFillTime / 2000;
  let stoppedBecause: FillDiagnostics["stoppedBecause"] = "all_full";
  let message = "every cavity filled";
  let switchoverDone = switchoverTime <= 0;

  const shortShotMessage = () => {
    const unfilled = network.cavities.filter((_, i) => Number.isNaN(cavityFullTime[i]));
    const shut = elements.filter((e) => closed[e.index])
      .sort((a, b) => closedAt[a.index] - closedAt[b.index])
      .map((e) => `${e.kind} ${e.id} froze shut at ${closedAt[e.index].toFixed(3)} s`);
    const cavities = unfilled.map((c) =>
      `${c.id} stops at ${(100 * fill[2 * c.element] / c.volume).toFixed(1)} %`
    );
    return `${shut.length > 0 ? shut.join(", ") : "no open path is left"}: ` +
      `cavit${unfilled.length === 1 ? "y" : "ies"} ${cavities.join(", ")} (short shot)`;
  };

  const capacity = (br: Branch) => {
    const e = elements[br.element];
    return e.volume - fill[2 * e.index + (1 - br.side)] * (e.kind === "cavity" ? 0 : 1);
  };

  while (cavityFullTime.some((x) => Number.isNaN(x))) {
    if (steps >= maxSteps) {
      stoppedBecause = "step_limit";
      message = `stopped after ${steps} steps`;
      break;
    }
    const s0 = state as Solved;
    const partial = s0.assembly.branches.map((br, k) => ({ br, k })).filter(({ br }) =>
      br.side >= 0
    );
    if (partial.length === 0) {
      stoppedBecause = "short_shot";
      message = shortShotMessage();
      break;
    }
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
    let step = Math.min(h, hEvent, nominalFillTime / 40);
    let landingOnSwitchover = false;
    if (!switchoverDone && t + step >= switchoverTime) {
      step = switchoverTime - t;
      landingOnSwitchover = true;
    }
    const eventStep = !landingOnSwitchover && step === hEvent;

    // One Heun step of length `length` from the current state.
    const trial = (
      length: number,
    ): { next: Float64Array; s1: Solved; change: number } | { failure: string } => {
      const predicted = fill.slice();
      for (const { br, k } of partial) predicted[2 * br.element + br.side] += length * s0.flows[k];
      const s1 = solveAt(t + length, predicted, s0.assembly, s0.flows);
      if ("failure" in s1) return s1;
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

    let result = trial(step);
    if ("failure" in result) return failed(result.failure);
    // Flow-change control (not on a step aimed at an event: those are short by nature).
    while (result.change > 2 * tolerance && !eventStep && step > nominalFillTime * 1e-9) {
      step /= 2;
      landingOnSwitchover = false;
      rejected++;
      result = trial(step);
      if ("failure" in result) return failed(result.failure);
    }
    // Land exactly on the first branch to reach capacity: bracket the step length and
    // close in with the Illinois variant of regula falsi on v_b(step) − capacity.
    let landing = crossing(result.next).k;
    if (landing < 0 && eventStep && missOf(result.next, target) < -EVENT_TOLERANCE) {
      // Fell short of the predicted event: extend by secant until it is bracketed.
      for (let extend = 0; extend < 6 && landing < 0; extend++) {
        const miss = missOf(result.next, target);
        if (miss >= -EVENT_TOLERANCE) break;
        const br = s0.assembly.branches[target];
        const v0 = fill[2 * br.element + br.side];
        const gained = result.next[2 * br.element + br.side] - v0;
        const longer = step * Math.min(4, ((capacity(br) - v0) / Math.max(gained, 1e-300)) * 1.02);
        if (!switchoverDone && t + longer >= switchoverTime) break;
        const attempt = trial(longer);
        if ("failure" in attempt) return failed(attempt.failure);
        step = longer;
        result = attempt;
        landing = crossing(result.next).k;
        if (landing < 0 && missOf(result.next, target) >= -EVENT_TOLERANCE) landing = target;
      }
    }
    if (landing >= 0 && Math.abs(missOf(result.next, landing)) > EVENT_TOLERANCE) {
      landingOnSwitchover = false;
      const gZero = () => {
        const br = s0.assembly.branches[landing];
        const cap = capacity(br);
        return (fill[2 * br.element + br.side] - cap) / cap;
      };
      let lo = 0;
      let gLo = gZero();
      let hi = step;
      let gHi = missOf(result.next, landing);
      let side = 0;
      for (let iteration = 0; iteration < 60; iteration++) {
        const h1 = (lo * gHi - hi * gLo) / (gHi - gLo);
        const attempt = trial(h1);
        if ("failure" in attempt) return failed(attempt.failure);
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
    const accepted = result;
    steps++;
    // Accept, snap the branches at capacity, keep Σ filled = Q·t by moving the event time.
    fill.set(accepted.next);
    let surplus = 0;
    const newlyFull: number[] = [];
    for (const { br } of partial) {
      const index = 2 * br.element + br.side;
      const cap = capacity(br);
      if (fill[index] >= cap * (1 - 1e3 * EVENT_TOLERANCE)) {
        surplus += fill[index] - cap;
        fill[index] = cap;
        if (!newlyFull.includes(br.element)) newlyFull.push(br.element);
      }
    }
    t += step - surplus / Q;
    tangentAdvance(s0, step - surplus / Q);
    if (landingOnSwitchover) {
      // End of the velocity phase: the flows just before any element filling now closes.
      const end = solveAt(t, fill, s0.assembly, accepted.s1.flows);
      if ("failure" in end) return failed(end.failure);
      tangentAt(end, t);
      atSwitchover = end;
      record(t, end);
      switchoverDone = true;
    }
    const shifts = eventShifts(s0, accepted.s1.flows, newlyFull);
    // The first cavity full ends the tangent: its last sample keeps the left limit (the
    // state just before the flows jump), which is what lies between it and the sample before.
    const lastTangentStep = newlyFull.some((e) => elements[e].kind === "cavity");
    for (const [e, shift] of shifts) {
      if (elements[e].kind === "cavity" && !firstFillShift) firstFillShift = shift;
    }
    if (lastTangentStep) tangentAt(accepted.s1, t);
    for (const e of newlyFull) {
      fullTime[e] = t;
      events++;
      const el = elements[e];
      if (el.kind === "cavity") {
        cavityFullTime[el.cavity] = t;
        if (!fillAtFirstFull) {
          fillAtFirstFull = cavityFill();
          dropsAtFirstFull = new Float64Array(E);
          accepted.s1.assembly.branches.forEach((br, k) => {
            dropsAtFirstFull![br.element] = accepted.s1.channel[k].pressureDrop;
          });
        }
      } else {
        wet(el.to, t);
        wet(el.from, t);
      }
    }
    // Frozen-shut elements leave the network.
    for (const e of elements) {
      if (closed[e.index] || e.heated || process.isothermal) continue;
      frozenHeld[e.index] = frozenAt(e, t, isFull(e.index) ? -1 : 0);
      if (frozenHeld[e.index] >= CLOSURE_FRACTION * closing[e.index] * (1 - 1e-9)) {
        closed[e.index] = 1;
        closedAt[e.index] = t;
      }
    }
    if (landingOnSwitchover) frozenAtSwitchover = frozenHeld.slice();
    if (cavityFullTime.every((x) => !Number.isNaN(x))) {
      if (!atSwitchover) {
        const end = solveAt(t, fill, s0.assembly, accepted.s1.flows);
        if ("failure" in end) return failed(end.failure);
        tangentAt(end, t);
        record(t, end);
        atSwitchover = end;
      }
      break;
    }
    assembly = assemble();
    const unchanged = newlyFull.length === 0 && sameBranches(assembly, s0.assembly);
    state = solveAt(t, fill, assembly, unchanged ? accepted.s1.flows : undefined);
    if ("failure" in state) return failed(state.failure);
    if (!lastTangentStep) {
      tangentJump(s0, accepted.s1.flows, state, shifts);
      tangentAt(state, t);
    }
    updateThermal(state);
    // The flows jump at an event; the one-step thermal lag would then take viscous heating
    // from the flows before it. Iterate heating and flows to a consistent state instead.
    for (
      let pass = 0;
      pass < THERMAL_PASSES && newlyFull.length > 0 && !process.isothermal;
      pass++
    ) {
      const again = solveAt(t, fill, assembly, state.flows);
      if ("failure" in again) return failed(again.failure);
      const before = state.pressure[network.inlet];
      state = again;
      updateThermal(state);
      if (Math.abs(state.pressure[network.inlet] - before) <= THERMAL_TOLERANCE * before) break;
    }
    if (newlyFull.length > 0 || !landingOnSwitchover) record(t, state);
    if (lastTangentStep) tangentOn = false;
    options.onProgress?.(Math.min(1, (Q * t) / shotVolume));
    if (newlyFull.length > 0) h = Math.max(h, nominalFillTime / 2000);
    h = eventStep ? h : Math.min(step * 1.5, nominalFillTime / 40);
  }
  if (!atSwitchover) atSwitchover = state as Solved;

  // --- results ---------------------------------------------------------------
  const sw = atSwitchover;
  const elementFigures: ElementFigures[] = elements.map((e) => {
    const k = sw.assembly.branches.findIndex((br) => br.element === e.index);
    return {
      id: e.id,
      kind: e.kind,
      pressureDropAtSwitchover: k >= 0 ? sw.channel[k].pressureDrop : 0,
      pressureDropAtFirstFull: dropsAtFirstFull ? dropsAtFirstFull[e.index] : NaN,
      flowAtSwitchover: k >= 0 ? sw.flows[k] : 0,
      wallShearRatePeak: shearPeak[e.index],
      wallShearRatePeakBeforeFirstFull: shearPeakEarly[e.index],
      apparentShearRatePeak: apparentPeak[e.index],
      volume: e.volume,
      fullTime: fullTime[e.index],
      temperatureAtSwitchover: temperature[e.index],
      frozenLayerAtSwitchover: (frozenAtSwitchover ?? frozenHeld)[e.index],
      frozenShut: closed[e.index] === 1,
    };
  });
  const cavityFigures: CavityFigures[] = network.cavities.map((c, i) => {
    let peak = 0;
    let gateAtPeak = elements[c.gates[0]].id;
    let gateDrop = 0;
    let early = 0;
    for (const g of c.gates) {
      early = Math.max(early, shearPeakEarly[g]);
      if (shearPeak[g] >= peak) {
        peak = shearPeak[g];
        gateAtPeak = elements[g].id;
      }
      gateDrop = Math.max(gateDrop, Math.abs(elementFigures[g].pressureDropAtSwitchover));
    }
    const p = sw.pressure[elements[c.element].from];
    return {
      id: c.id,
      name: c.name,
      fillTime: cavityFullTime[i],
      fillAtFirstFull: fillAtFirstFull
        ? fillAtFirstFull[i]
        : Math.min(1, fill[2 * c.element] / c.volume),
      fillAtSwitchover: historyFillAt(history, Math.min(switchoverTime, t), i),
      gateShearRatePeak: peak,
      gateShearRatePeakBeforeFirstFull: early,
      gateAtPeak,
      gatePressureDrop: gateDrop,
      inletPressureAtSwitchover: Number.isFinite(p) ? p : 0,
    };
  });
  const times = cavityFullTime.filter((x) => Number.isFinite(x));
  const tMax = times.length === cavityFullTime.length ? Math.max(...times) : NaN;
  const tMin = times.length > 0 ? Math.min(...times) : NaN;
  const injected = Q * t;
  let filledTotal = 0;
  for (let i = 0; i < 2 * E; i++) filledTotal += fill[i];

  return {
    injectionRate: Q,
    switchoverTime,
    fillTime: tMax,
    imbalancePercent: ((tMax - tMin) / tMax) * 100,
    feedPressurePeak,
    feedPressureAtSwitchover: sw.pressure[network.inlet],
    clampForcePeak,
    history,
    elements: elementFigures,
    cavities: cavityFigures,
    paths: flowPaths(network, elementFigures),
    tangent: m > 0
      ? {
        directions: m,
        samples: tangentCavity.length,
        cavityVolume: tangentCavity,
        feedPressure: tangentPressure,
        firstFill: firstFillShift,
      }
      : undefined,
    diagnostics: {
      steps,
      rejectedSteps: rejected,
      hydraulicSolves,
      events,
      newtonIterationsMax,
      worstMassResidual,
      worstMassResidualAt,
      massBalanceError: injected > 0 ? Math.abs(filledTotal - injected) / injected : 0,
      stoppedBecause,
      message,
    },
  };

  function failed(reason: string): FillResult {
    return {
      injectionRate: Q,
      switchoverTime,
      fillTime: NaN,
      imbalancePercent: NaN,
      feedPressurePeak,
      feedPressureAtSwitchover: NaN,
      clampForcePeak,
      history,
      elements: [],
      cavities: [],
      paths: [],
      diagnostics: {
        steps: 0,
        rejectedSteps: 0,
        hydraulicSolves,
        events: 0,
        newtonIterationsMax,
        worstMassResidual,
        worstMassResidualAt,
        massBalanceError: NaN,
        stoppedBecause: "solver_failure",
        message: reason,
      },
    };
  }
}

/** Whether two assemblies hold the same branches in the same order (a warm start fits both). */
function sameBranches(a: Assembly, b: Assembly): boolean {
  if (a.branches.length !== b.branches.length) return false;
  return a.branches.every((br, k) => {
    const other = b.branches[k];
    return br.element === other.element && br.side === other.side;
  });
}

function historyFillAt(history: readonly FillSample[], time: number, cavity: number): number {
  for (let i = history.length - 1; i >= 0; i--) {
    if (history[i].time <= time * (1 + 1e-12)) return history[i].cavityFill[cavity];
  }
  return 0;
}

/**
 * Share of the inlet pressure that acts, on average, over the filled part of a
 * filling element. A uniform channel's pressure falls linearly to the front (½).
 * A radial disk with a power-law melt of local index n has the profile
 * P(r) ∝ (R^m − r^m)/m, m = 1 − n (Tadmor & Gogos, radial flow between disks), whose
 * area mean over r_g…R in closed form is
 * [R^m(R² − r_g²) − 2(R^(m+2) − r_g^(m+2))/(m+2)] / [(R² − r_g²)(R^m − r_g^m)].
 */
function meanPressureShare(
  e: NetworkElement,
  fraction: number,
  channel: ChannelFlow,
  flow: number,
): number {
  const g = e.geometry;
  if (g.type !== "radial") return 0.5;
  const rg = g.gateRadius;
  const R = Math.sqrt(rg * rg + fraction * (g.maxRadius * g.maxRadius - rg * rg));
  if (R <= rg * (1 + 1e-9)) return 1;
  const m = Math.max(1 - localIndex(channel, flow), 1e-4);
  const area = R * R - rg * rg;
  const numerator = Math.pow(R, m) * area -
    (2 * (Math.pow(R, m + 2) - Math.pow(rg, m + 2))) / (m + 2);
  return numerator / (area * (Math.pow(R, m) - Math.pow(rg, m)));
}

/** Local power-law index n = dlnΔP/dlnQ of a channel law at its operating point. */
function localIndex(channel: ChannelFlow, flow: number): number {
  if (channel.pressureDrop === 0 || flow === 0) return 1;
  return Math.min(1, Math.max(0.05, (flow * channel.dPressureDropDFlow) / channel.pressureDrop));
}

/** Frozen-layer thickness that closes an element (its thinnest section), m. */
function closingLayer(e: NetworkElement): number {
  const g = e.geometry;
  switch (g.type) {
    case "uniform":
      return closingThickness(g.section);
    case "tapered":
      return Math.min(closingThickness(g.entry), closingThickness(g.exit));
    case "strip":
      return g.gap / 2;
    case "radial":
      return g.gap / 2;
  }
}

function flowPaths(network: FeedNetwork, figures: readonly ElementFigures[]): FlowPath[] {
  // Breadth-first tree from the inlet; one path per gate of each cavity.
  const n = network.nodes.length;
  const via = new Int32Array(n).fill(-1);
  const seen = new Uint8Array(n);
  seen[network.inlet] = 1;
  const queue = [network.inlet];
  const adjacency: number[][] = Array.from({ length: n }, () => []);
  for (const e of network.elements) {
    if (e.to < 0 || e.kind === "gate") continue;
    adjacency[e.from].push(e.index);
    adjacency[e.to].push(e.index);
  }
  while (queue.length > 0) {
    const node = queue.shift()!;
    for (const k of adjacency[node]) {
      const e = network.elements[k];
      const other = e.from === node ? e.to : e.from;
      if (!seen[other]) {
        seen[other] = 1;
        via[other] = k;
        queue.push(other);
      }
    }
  }
  const paths: FlowPath[] = [];
  for (const c of network.cavities) {
    for (const g of c.gates) {
      const chain: number[] = [c.element, g];
      let node = network.elements[g].from;
      while (node !== network.inlet && via[node] >= 0) {
        const k = via[node];
        chain.push(k);
        const e = network.elements[k];
        node = e.from === node ? e.to : e.from;
      }
      chain.reverse();
      paths.push({
        cavity: c.id,
        elements: chain.map((k) => network.elements[k].id),
        pressureDrops: chain.map((k) => figures[k].pressureDropAtSwitchover),
        pressureDropsAtFirstFull: chain.map((k) => figures[k].pressureDropAtFirstFull),
      });
    }
  }
  return paths;
}
