import type { FlowCurve } from "../../materials/flow_curve.ts";
import { closingThickness } from "../../physics/mod.ts";
import type { FeedNetwork, NetworkElement } from "../feed_network.ts";

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

/** What stays fixed during one fill: the network, the melt, the process and facts derived once. */
export interface FillContext {
  network: FeedNetwork;
  elements: readonly NetworkElement[];
  melt: MeltModel;
  process: FillProcess;
  /** Number of graph nodes. */
  nodeCount: number;
  /** Injection rate, m³/s. */
  injectionRate: number;
  /** Feed system + cavities, m³. */
  shotVolume: number;
  /** Instant of velocity-to-pressure switchover, s. */
  switchoverTime: number;
  /** Shot volume / injection rate, s: the time scale of step sizes. */
  nominalFillTime: number;
  /** Elements at each node, with the side of the element that touches it. */
  adjacency: readonly { element: number; side: 0 | 1 }[][];
  /** Frozen-layer thickness that closes each element (its thinnest section), m. */
  closing: Float64Array;
  /** The flow curve of an isothermal run (feed temperature, 0 Pa). */
  isothermalCurve: FlowCurve;
}

/** The fixed facts of a fill of `network` under `melt` and `process`. */
export function fillContext(
  network: FeedNetwork,
  options: { melt: MeltModel; process: FillProcess },
): FillContext {
  const { melt, process } = options;
  const nodeCount = network.nodes.length;
  const adjacency: { element: number; side: 0 | 1 }[][] = Array.from(
    { length: nodeCount },
    () => [],
  );
  for (const e of network.elements) {
    adjacency[e.from].push({ element: e.index, side: 0 });
    if (e.to >= 0) adjacency[e.to].push({ element: e.index, side: 1 });
  }
  const injectionRate = process.injectionRate;
  const shotVolume = network.feedSystemVolume + network.cavityVolume;
  return {
    network,
    elements: network.elements,
    melt,
    process,
    nodeCount,
    injectionRate,
    shotVolume,
    switchoverTime: (process.switchoverFraction * shotVolume) / injectionRate,
    nominalFillTime: shotVolume / injectionRate,
    adjacency,
    closing: Float64Array.from(network.elements, closingLayer),
    isothermalCurve: melt.curveAt(process.feedTemperature, 0),
  };
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
