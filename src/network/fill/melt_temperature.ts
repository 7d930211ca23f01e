import { adiabaticHeating } from "../../physics/thermal.ts";
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
      const inlet = e.heated ? process.feedTemperature : nodeTemperature[n];
      state.temperature[e.index] = inlet + rise / 2;
      const down = s.flows[k] >= 0 ? br.b : br.a;
      if (down >= 0) {
        incoming[down].heat += Math.abs(s.flows[k]) * (inlet + rise);
        incoming[down].flow += Math.abs(s.flows[k]);
      }
    }
  }
}
