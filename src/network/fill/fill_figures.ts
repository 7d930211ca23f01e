import type { FeedNetwork } from "../feed_network.ts";
import type { CavityFigures, ElementFigures, FillSample, FlowPath } from "../fill_result.ts";
import type { FillContext } from "./context.ts";
import type { FillRecorder } from "./fill_records.ts";
import type { FillState } from "./fill_state.ts";
import type { Solved } from "./solve_instant.ts";

/** Per-element figures of a finished fill, from its switchover state and records. */
export function elementFigures(
  ctx: FillContext,
  state: FillState,
  records: FillRecorder,
  at: { switchover: Solved; frozenAtSwitchover: Float64Array | undefined },
): ElementFigures[] {
  const sw = at.switchover;
  return ctx.elements.map((e) => {
    const k = sw.assembly.branches.findIndex((br) => br.element === e.index);
    return {
      id: e.id,
      kind: e.kind,
      pressureDropAtSwitchover: k >= 0 ? sw.channel[k].pressureDrop : 0,
      pressureDropAtFirstFull: records.dropsAtFirstFull ? records.dropsAtFirstFull[e.index] : NaN,
      flowAtSwitchover: k >= 0 ? sw.flows[k] : 0,
      wallShearRatePeak: records.shearPeak[e.index],
      wallShearRatePeakBeforeFirstFull: records.shearPeakEarly[e.index],
      apparentShearRatePeak: records.apparentPeak[e.index],
      volume: e.volume,
      fullTime: state.fullTime[e.index],
      temperatureAtSwitchover: state.temperature[e.index],
      frozenLayerAtSwitchover: (at.frozenAtSwitchover ?? state.frozenHeld)[e.index],
      frozenShut: state.closed[e.index] === 1,
      frozenShutAt: state.closed[e.index] === 1 ? state.closedAt[e.index] : NaN,
    };
  });
}

/** Per-cavity figures of a finished fill. */
export function cavityFigures(
  ctx: FillContext,
  state: FillState,
  records: FillRecorder,
  at: { switchover: Solved; elements: readonly ElementFigures[] },
): CavityFigures[] {
  const { elements, network, switchoverTime } = ctx;
  const { shearPeak, shearPeakEarly, fillAtFirstFull } = records;
  return network.cavities.map((c, i) => {
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
      gateDrop = Math.max(gateDrop, Math.abs(at.elements[g].pressureDropAtSwitchover));
    }
    const p = at.switchover.pressure[elements[c.element].from];
    return {
      id: c.id,
      name: c.name,
      fillTime: state.cavityFullTime[i],
      fillAtFirstFull: fillAtFirstFull
        ? fillAtFirstFull[i]
        : Math.min(1, state.fill[2 * c.element] / c.volume),
      fillAtSwitchover: historyFillAt(records.history, Math.min(switchoverTime, state.time), i),
      gateShearRatePeak: peak,
      gateShearRatePeakBeforeFirstFull: early,
      gateAtPeak,
      gatePressureDrop: gateDrop,
      inletPressureAtSwitchover: Number.isFinite(p) ? p : 0,
    };
  });
}

function historyFillAt(history: readonly FillSample[], time: number, cavity: number): number {
  for (let i = history.length - 1; i >= 0; i--) {
    if (history[i].time <= time * (1 + 1e-12)) return history[i].cavityFill[cavity];
  }
  return 0;
}

/** Pressure drops along every flow path (feed → each gate of each cavity), at switchover and first full. */
export function flowPaths(network: FeedNetwork, figures: readonly ElementFigures[]): FlowPath[] {
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
