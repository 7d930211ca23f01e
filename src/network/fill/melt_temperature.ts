import { adiabaticHeating } from "../../physics/thermal.ts";
import { STAGNANT_RATIO } from "../hydraulic_solve.ts";
import type { FillContext } from "./context.ts";
import type { FillState } from "./fill_state.ts";
import type { Solved } from "./solve_instant.ts";

/**
 * The thermal update after a solve (lagged by one step): each branch's flow and mean pressure,
 * and, unless isothermal, each element's melt temperature: its inlet temperature (the
 * flow-weighted mix at its upstream node, walking nodes from the highest pressure down) plus
 * half its own adiabatic heating ΔT = ΔP/(ρ·cp), the upper bound of viscous heating
 * (energy balance: all pressure work becomes heat). A heated element (hot drop) starts again
 * at the feed temperature.
 */
export function updateMeltTemperature(ctx: FillContext, state: FillState, s: Solved): void {
  const { process, melt, network, nodeCount, elements } = ctx;
  for (let k = 0; k < s.assembly.branches.length; k++) {
    const br = s.assembly.branches[k];
    state.lastFlow[br.element] = Math.abs(s.flows[k]);
    const pa = s.pressure[br.a];
    const pb = br.b >= 0 ? s.pressure[br.b] : 0;
    state.meanPressure[br.element] = (pa + pb) / 2;
  }
  if (process.isothermal) return;
  const K = s.assembly.branches.length;
  // An assembly has at most two branches per element (its two filling sides).
  const { nodeTemperature, heat, flow, start, cursor, upstream, byUpstream } = scratchOf(
    state,
    nodeCount,
    Math.max(K, 2 * elements.length),
  );
  nodeTemperature.fill(NaN);
  nodeTemperature[network.inlet] = process.feedTemperature;
  const order = byFallingPressure(state, s.pressure);
  heat.fill(0);
  flow.fill(0);
  // Branches by upstream node, in branch order (compressed rows).
  start.fill(0);
  for (let k = 0; k < K; k++) {
    const br = s.assembly.branches[k];
    upstream[k] = s.flows[k] >= 0 ? br.a : br.b;
    if (upstream[k] >= 0) start[upstream[k] + 1]++;
  }
  for (let n = 0; n < nodeCount; n++) start[n + 1] += start[n];
  cursor.set(start.subarray(0, nodeCount));
  for (let k = 0; k < K; k++) if (upstream[k] >= 0) byUpstream[cursor[upstream[k]]++] = k;
  const heating = { density: melt.meltDensity, specificHeat: melt.specificHeat };
  const stagnant = STAGNANT_RATIO * ctx.injectionRate;
  for (const n of order) {
    if (n !== network.inlet) {
      nodeTemperature[n] = flow[n] > 0 ? heat[n] / flow[n] : process.feedTemperature;
    }
    for (let p = start[n]; p < start[n + 1]; p++) {
      const k = byUpstream[p];
      // Stagnant melt (a flow at the solve's rounding level) is not carried anywhere: it keeps
      // the temperature it had, instead of one taken from whichever end the noise flows from.
      if (Math.abs(s.flows[k]) <= stagnant) continue;
      const br = s.assembly.branches[k];
      const e = elements[br.element];
      const rise = adiabaticHeating(Math.abs(s.drops[k]), heating);
      const inlet = e.heated ? process.feedTemperature : nodeTemperature[n];
      state.temperature[e.index] = inlet + rise / 2;
      const down = s.flows[k] >= 0 ? br.b : br.a;
      if (down >= 0) {
        heat[down] += Math.abs(s.flows[k]) * (inlet + rise);
        flow[down] += Math.abs(s.flows[k]);
      }
    }
  }
}

/** Working arrays of the thermal update, kept per fill (every one is cleared before it is read). */
interface Scratch {
  nodeTemperature: Float64Array;
  heat: Float64Array;
  flow: Float64Array;
  start: Int32Array;
  cursor: Int32Array;
  upstream: Int32Array;
  byUpstream: Int32Array;
}

const scratches = new WeakMap<FillState, Scratch>();

/** The scratch of `state`, for `nodeCount` nodes and up to `branches` branches. */
function scratchOf(state: FillState, nodeCount: number, branches: number): Scratch {
  let known = scratches.get(state);
  if (!known || known.heat.length !== nodeCount || known.upstream.length < branches) {
    known = {
      nodeTemperature: new Float64Array(nodeCount),
      heat: new Float64Array(nodeCount),
      flow: new Float64Array(nodeCount),
      start: new Int32Array(nodeCount + 1),
      cursor: new Int32Array(nodeCount),
      upstream: new Int32Array(branches),
      byUpstream: new Int32Array(branches),
    };
    scratches.set(state, known);
  }
  return known;
}

/** The order {@link byFallingPressure} gave last, per fill. */
const lastOrders = new WeakMap<FillState, number[]>();

/**
 * The nodes that have a pressure, highest first, equal pressures by index: the one order
 * with that property, which a stable sort of them in index order also gives. It starts from
 * the order of the last call (nodes that lost their pressure out, new ones at the end) and is
 * put right by insertion: between consecutive solves few nodes change places.
 */
function byFallingPressure(state: FillState, pressure: Float64Array): number[] {
  const kept = lastOrders.get(state) ?? [];
  const order = kept.filter((n) => !Number.isNaN(pressure[n]));
  const listed = new Uint8Array(pressure.length);
  for (const n of order) listed[n] = 1;
  for (let n = 0; n < pressure.length; n++) {
    if (!listed[n] && !Number.isNaN(pressure[n])) order.push(n);
  }
  const before = (a: number, b: number) =>
    pressure[a] > pressure[b] || (pressure[a] === pressure[b] && a < b);
  // Insertion costs a move per pair out of order: past a few per node, sort anew instead.
  const movesAllowed = 8 * order.length;
  let moves = 0;
  for (let i = 1; i < order.length && moves <= movesAllowed; i++) {
    const node = order[i];
    let j = i - 1;
    for (; j >= 0 && before(node, order[j]); j--, moves++) order[j + 1] = order[j];
    order[j + 1] = node;
  }
  if (moves > movesAllowed) order.sort((x, y) => x - y).sort((x, y) => pressure[y] - pressure[x]);
  lastOrders.set(state, order);
  return order;
}
