/**
 * SLP-shaped LPs (design steps in a trust region, penalised slacks, one balance row)
 * of 10, 50 and 200 variables on both adapters. javascript-lp-solver is skipped above
 * 100 variables: it cycles/hangs there (measured in our own runs: a 100-variable
 * degenerate box LP did not return in 300 s) and its adapter refuses more than 80
 * transformed variables by default.
 *
 * Run: deno bench -A tests/bench/lp_bench.ts
 */
import type { LinearProgram, LpRow, LpVariable } from "../../src/optimize/lp_solver.ts";
import { createHighsSolver } from "../../src/optimize/highs_solver.ts";
import { createSimplexJsSolver } from "../support/simplex_js_solver.ts";
import { mulberry32 as random } from "../support/seeded_random.ts";

/** 60 % design steps δ ∈ [−1, 1], 40 % slacks s ≥ 0 on rows g·δ − s ≤ h. */
function slpProgram(total: number, seed: number): LinearProgram {
  const rand = random(seed);
  const nd = Math.round(total * 0.6);
  const nc = total - nd;
  const variables: LpVariable[] = [];
  for (let j = 0; j < nd; j++) {
    variables.push({ name: `d${j}`, lower: -1, upper: 1, cost: 2 * rand() - 1 });
  }
  for (let i = 0; i < nc; i++) {
    variables.push({ name: `s${i}`, lower: 0, upper: Infinity, cost: 10 });
  }
  const rows: LpRow[] = [];
  for (let i = 0; i < nc; i++) {
    const terms: Array<readonly [number, number]> = [];
    for (let j = 0; j < nd; j++) if (rand() < 0.2) terms.push([j, 2 * rand() - 1]);
    terms.push([nd + i, -1]);
    rows.push({ name: `g${i}`, terms, lower: -Infinity, upper: rand() - 0.6 });
  }
  rows.push({
    name: "balance",
    terms: variables.slice(0, nd).map((_, j) => [j, 1] as const),
    lower: -1,
    upper: 1,
  });
  return { sense: "minimize", variables, rows };
}

const highs = await createHighsSolver();
const simplexJs = createSimplexJsSolver();

for (const size of [10, 50, 200]) {
  const lp = slpProgram(size, size);
  Deno.bench({ name: `highs ${size} variables`, group: `${size}` }, async () => {
    const r = await highs.solve(lp);
    if (r.status !== "optimal") throw new Error(`highs: ${JSON.stringify(r)}`);
  });
  if (size <= 100) {
    Deno.bench({ name: `javascript-lp-solver ${size} variables`, group: `${size}` }, async () => {
      await simplexJs.solve(lp);
    });
  }
}
