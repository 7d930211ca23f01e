/**
 * Steady hydraulic solve on binary H-tree runner layouts of about 100, 1 000 and
 * 10 000 elements, power-law laws with n = 0.35. Cost should grow about linearly
 * with the element count (a tree factors with zero fill). Run:
 * `deno bench -A tests/bench/hydraulic_bench.ts`; divide the time per solve by the element count.
 */
import {
  type HydraulicElement,
  type HydraulicProblem,
  solveHydraulics,
} from "../../src/network/hydraulic_solve.ts";

function powerLaw(r: number, n: number): HydraulicElement["law"] {
  return (q: number) => ({
    pressureDrop: r * Math.sign(q) * Math.pow(Math.abs(q), n),
    dPressureDropDFlow: r * n * Math.pow(Math.abs(q), n - 1),
  });
}

/**
 * Complete binary tree with `count` elements in heap order: element k runs from node
 * parent(k) + 1 (node 0 for the sprue, k = 0) to node k + 1; nodes without children are
 * flow fronts at 0 Pa. H-tree proportions: branch length halves every second level and
 * the diameter follows D_feed = D_branch·2^(1/3), so r ∝ L / D^(3n+1) (power-law tube).
 */
function hTree(count: number): HydraulicProblem {
  const n = 0.35;
  const elements: HydraulicElement[] = [];
  for (let k = 0; k < count; k++) {
    const level = Math.floor(Math.log2(k + 1));
    const length = Math.pow(0.5, Math.floor(level / 2));
    const diameter = Math.pow(2, -level / 3);
    const r = 1e9 * length / Math.pow(diameter, 3 * n + 1);
    elements.push({
      from: k === 0 ? 0 : Math.floor((k - 1) / 2) + 1,
      to: k + 1,
      law: powerLaw(r, n),
    });
  }
  const fixedPressure = new Map<number, number>();
  for (let k = 0; k < count; k++) if (2 * k + 1 >= count) fixedPressure.set(k + 1, 0);
  return { nodeCount: count + 1, elements, fixedPressure, inflow: new Map([[0, 5e-5]]) };
}

for (const count of [100, 1000, 10000]) {
  const problem = hTree(count);
  const first = solveHydraulics(problem);
  if (!first.ok) throw new Error(`H-tree ${count}: ${first.code}: ${first.message}`);
  Deno.bench(`cold solve, ${count} elements`, { group: "cold" }, () => {
    solveHydraulics(problem);
  });
  Deno.bench(`warm solve, ${count} elements`, { group: "warm" }, () => {
    solveHydraulics(problem, { initialFlows: first.flows });
  });
}
