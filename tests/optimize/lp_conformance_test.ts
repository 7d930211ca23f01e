/**
 * Conformance of both LP adapters against LPs with published or hand-derived
 * optima. Every case runs on both adapters. On programs feasible by construction
 * both must say "optimal" with the reference objective; on infeasible and unbounded
 * programs neither may say "optimal". javascript-lp-solver 1.0.3 is known to us
 * (our own runs, no published source) to have returned δ = 0 as "optimal" on
 * degenerate LPs without the adapter's safeguards, which the last cases replay.
 */
import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import {
  certifyOptimality,
  checkSolution,
  type LinearProgram,
  type LpResult,
  type LpRow,
  type LpSolver,
  type LpVariable,
  scaleProgram,
  unscaleSolution,
} from "../../src/optimize/lp_solver.ts";
import { createHighsSolver, formatCplexLp } from "../../src/optimize/highs_solver.ts";
import { createSimplexJsSolver } from "../support/simplex_js_solver.ts";
import { mulberry32 as random } from "../support/seeded_random.ts";

const highs = await createHighsSolver();
const simplexJs = createSimplexJsSolver();
const adapters: LpSolver[] = [highs, simplexJs];

const v = (name: string, lower: number, upper: number, cost: number): LpVariable => ({
  name,
  lower,
  upper,
  cost,
});
const row = (name: string, coefficients: number[], lower: number, upper: number): LpRow => ({
  name,
  terms: coefficients.flatMap((a, j) => (a === 0 ? [] : [[j, a] as const])),
  lower,
  upper,
});
const INF = Infinity;

type Optimal = Extract<LpResult, { status: "optimal" }>;

/** `r` as an optimal result, or an assertion failure naming what came back. */
function optimal(r: LpResult, what: string): Optimal {
  if (r.status !== "optimal") {
    throw new assert.AssertionError({ message: `${what}: ${JSON.stringify(r)}` });
  }
  return r;
}

/** Assert `r` is optimal with the expected objective (and x when given). */
function expectOptimal(
  solver: LpSolver,
  r: LpResult,
  expected: { objective: number; x?: number[] },
  tolerance: { rel?: number; abs?: number },
): void {
  assert.deepEqual(r.status, "optimal", `${solver.name}: ${JSON.stringify(r)}`);
  if (r.status !== "optimal") return;
  assertClose(r.objective, expected.objective, { ...tolerance, what: `${solver.name} objective` });
  expected.x?.forEach((xj, j) =>
    assertClose(r.x[j], xj, { ...tolerance, what: `${solver.name} x[${j}]` })
  );
}

/**
 * A program feasible by construction (every case passed here has a feasible point written into
 * it, e.g. δ = 0): "optimal" with the reference objective is the only acceptable answer —
 * "infeasible" would be wrong, and an error would be a failure of the adapter.
 */
function expectOptimalOnFeasible(
  solver: LpSolver,
  r: LpResult,
  expected: { objective: number },
  tolerance: { rel?: number; abs?: number },
): void {
  assert.equal(r.status, "optimal", `${solver.name} on a feasible program: ${JSON.stringify(r)}`);
  if (r.status !== "optimal") return;
  assertClose(r.objective, expected.objective, { ...tolerance, what: `${solver.name} objective` });
}

// Chvátal, *Linear Programming* (Freeman, 1983), ch. 2 opening example:
// z* = 13 at (2, 0, 1); dual optimum y = (1, 0, 1) (ch. 5) — verified: Aᵀy = (5, 7, 3) ≥ c, b·y = 13.
const chvatal: LinearProgram = {
  sense: "maximize",
  variables: [v("x1", 0, INF, 5), v("x2", 0, INF, 4), v("x3", 0, INF, 3)],
  rows: [
    row("c1", [2, 3, 1], -INF, 5),
    row("c2", [4, 1, 2], -INF, 11),
    row("c3", [3, 4, 2], -INF, 8),
  ],
};

Deno.test("Chvátal 1983 ch. 2 example: z* = 13 at (2, 0, 1) on both adapters", async () => {
  for (const solver of adapters) {
    const r = await solver.solve(chvatal);
    expectOptimal(solver, r, { objective: 13, x: [2, 0, 1] }, { abs: 1e-7 });
  }
});

Deno.test("HiGHS duals for Chvátal's example: y = (1, 0, 1), min-form sign −y", async () => {
  const r = optimal(await highs.solve(chvatal), "highs");
  assert.ok(r.duals !== undefined);
  // Minimisation form min −c·x: active upper rows carry π ≤ 0, so π = −y.
  [-1, 0, -1].forEach((pi, i) => assertClose(r.duals!.rows[i], pi, { abs: 1e-9, what: `π[${i}]` }));
});

// Hillier & Lieberman, *Introduction to Operations Research* (9th ed., 2010), §3.1
// Wyndor Glass Co.: max 3x1 + 5x2, x1 ≤ 4, 2x2 ≤ 12, 3x1 + 2x2 ≤ 18 → Z = 36 at (2, 6).
Deno.test("Wyndor Glass (Hillier & Lieberman §3.1): Z = 36 at (2, 6)", async () => {
  const lp: LinearProgram = {
    sense: "maximize",
    variables: [v("x1", 0, INF, 3), v("x2", 0, INF, 5)],
    rows: [
      row("plant1", [1, 0], -INF, 4),
      row("plant2", [0, 2], -INF, 12),
      row("plant3", [3, 2], -INF, 18),
    ],
  };
  for (const solver of adapters) {
    expectOptimal(solver, await solver.solve(lp), { objective: 36, x: [2, 6] }, { abs: 1e-7 });
  }
});

// Diet problem, Winston, *Operations Research: Applications and Algorithms* (4th ed.), §3.4
// (brownie, ice cream, cola, cheesecake) — from memory: cost 90 at x = (0, 3, 1, 0).
// Re-verified by hand: chocolate and sugar rows active, duals (0, 2.5, 7.5, 0) give
// reduced costs (27.5, 0, 0, 50) ≥ 0 and dual objective 6·2.5 + 10·7.5 = 90.
Deno.test("Diet minimisation (Winston §3.4): cost 90 at (0, 3, 1, 0)", async () => {
  const lp: LinearProgram = {
    sense: "minimize",
    variables: [
      v("brownie", 0, INF, 50),
      v("ice", 0, INF, 20),
      v("cola", 0, INF, 30),
      v("cake", 0, INF, 80),
    ],
    rows: [
      row("calories", [400, 200, 150, 500], 500, INF),
      row("chocolate", [3, 2, 0, 0], 6, INF),
      row("sugar", [2, 2, 4, 4], 10, INF),
      row("fat", [2, 4, 1, 5], 8, INF),
    ],
  };
  for (const solver of adapters) {
    expectOptimal(solver, await solver.solve(lp), { objective: 90, x: [0, 3, 1, 0] }, {
      abs: 1e-6,
    });
  }
});

// Radiation therapy design, Hillier & Lieberman (9th ed.) §3.4 — from memory:
// min 0.4x1 + 0.5x2, 0.3x1 + 0.1x2 ≤ 2.7, 0.5x1 + 0.5x2 = 6, 0.6x1 + 0.4x2 ≥ 6 → Z = 5.25 at (7.5, 4.5).
Deno.test("Radiation therapy (Hillier & Lieberman §3.4), equality row: Z = 5.25 at (7.5, 4.5)", async () => {
  const lp: LinearProgram = {
    sense: "minimize",
    variables: [v("x1", 0, INF, 0.4), v("x2", 0, INF, 0.5)],
    rows: [
      row("healthy", [0.3, 0.1], -INF, 2.7),
      row("tumor", [0.5, 0.5], 6, 6),
      row("center", [0.6, 0.4], 6, INF),
    ],
  };
  for (const solver of adapters) {
    expectOptimal(solver, await solver.solve(lp), { objective: 5.25, x: [7.5, 4.5] }, {
      abs: 1e-6,
    });
  }
});

// Hand-derived (substitution): min x + 2y + 3w − z with y free, x ∈ [−3, 5], w ∈ [−2.5, 4],
// z ≤ −2, rows x + y ≥ −4, x + w ≤ 10, y − x ≤ 1. With y = −4 − x the objective in x is
// −8 − x + 3w − z, so x = 5, y = −9, w = −2.5, z = −2: objective −18.5 (unique).
Deno.test("negative lower bounds, free and upper-only variables: −18.5 (hand-derived)", async () => {
  const lp: LinearProgram = {
    sense: "minimize",
    variables: [v("x", -3, 5, 1), v("y", -INF, INF, 2), v("w", -2.5, 4, 3), v("z", -INF, -2, -1)],
    rows: [
      row("r1", [1, 1, 0, 0], -4, INF),
      row("r2", [1, 0, 1, 0], -INF, 10),
      row("r3", [-1, 1, 0, 0], -INF, 1),
    ],
  };
  for (const solver of adapters) {
    expectOptimal(solver, await solver.solve(lp), { objective: -18.5, x: [5, -9, -2.5, -2] }, {
      abs: 1e-6,
    });
  }
});

// Hand-derived: x + 2y = 4, 1 ≤ x − y ≤ 2, x, y ≥ 0 ⇒ y ∈ [2/3, 1], x + y = 4 − y.
// max x + y: y = 2/3, x = 8/3 (upper side of the range active), value 10/3;
// min x + y: y = 1, x = 2 (lower side active), value 3.
Deno.test("two-sided and equality rows: both sides of a range (hand-derived)", async () => {
  const rows = [row("range", [1, -1], 1, 2), row("eq", [1, 2], 4, 4)];
  const vars = [v("x", 0, INF, 1), v("y", 0, INF, 1)];
  for (const solver of adapters) {
    const up = await solver.solve({ sense: "maximize", variables: vars, rows });
    expectOptimal(solver, up, { objective: 10 / 3, x: [8 / 3, 2 / 3] }, { abs: 1e-7 });
    const down = await solver.solve({ sense: "minimize", variables: vars, rows });
    expectOptimal(solver, down, { objective: 3, x: [2, 1] }, { abs: 1e-7 });
  }
});

// By inspection: x + y ≤ 1 and x + y ≥ 2 cannot both hold.
Deno.test("infeasible LPs: HiGHS says infeasible, javascript-lp-solver never optimal", async () => {
  const cases: LinearProgram[] = [
    {
      sense: "minimize",
      variables: [v("x", 0, INF, 1), v("y", 0, INF, 1)],
      rows: [row("a", [1, 1], -INF, 1), row("b", [1, 1], 2, INF)],
    },
    // Free variables, equality rows: x − y = 1 and y − x = 1 contradict.
    {
      sense: "maximize",
      variables: [v("x", -INF, INF, 1), v("y", -INF, INF, 0)],
      rows: [row("a", [1, -1], 1, 1), row("b", [-1, 1], 1, 1), row("c", [1, 0], -INF, 3)],
    },
    // Crossed bounds.
    { sense: "minimize", variables: [v("x", 2, 1, 1)], rows: [] },
  ];
  for (const lp of cases) {
    assert.deepEqual((await highs.solve(lp)).status, "infeasible");
    assert((await simplexJs.solve(lp)).status !== "optimal");
  }
});

// By inspection: along x = y → ∞ every row holds and x + y grows without bound.
Deno.test("unbounded LPs: HiGHS says unbounded, javascript-lp-solver never optimal", async () => {
  const cases: LinearProgram[] = [
    {
      sense: "maximize",
      variables: [v("x", 0, INF, 1), v("y", 0, INF, 1)],
      rows: [row("a", [1, -1], -INF, 1)],
    },
    {
      sense: "minimize",
      variables: [v("x", -INF, INF, 1), v("y", 0, 1, 0)],
      rows: [row("a", [1, 1], -INF, 3)],
    },
  ];
  for (const lp of cases) {
    assert.deepEqual((await highs.solve(lp)).status, "unbounded");
    assert((await simplexJs.solve(lp)).status !== "optimal");
  }
});

// Degenerate, SLP-near-convergence shape: min −w·δ s.t. δ_k − δ_{k+1} ≤ 0 (all active at δ = 0
// and at the optimum), −1 ≤ δ ≤ 1. Vertices of {δ1 ≤ … ≤ δn} ∩ [−1, 1]ⁿ are the step vectors
// (−1,…,−1, 1,…,1); for w = (3, −1, 2, −5, 1) the best step starts at k = 5: δ = (−1,−1,−1,−1, 1),
// w·δ = −3 + 1 − 2 + 5 + 1 = 2, so the optimum is −2, not 0 (hand-derived by enumerating the 6 steps).
Deno.test("degenerate chain LP: both adapters find −2", async () => {
  const w = [3, -1, 2, -5, 1];
  const lp: LinearProgram = {
    sense: "minimize",
    variables: w.map((wk, k) => v(`d${k}`, -1, 1, -wk)),
    rows: w.slice(1).map((_, k) => ({
      name: `chain${k}`,
      terms: [[k, 1], [k + 1, -1]],
      lower: -INF,
      upper: 0,
    })),
  };
  expectOptimal(highs, await highs.solve(lp), { objective: -2, x: [-1, -1, -1, -1, 1] }, {
    abs: 1e-9,
  });
  // Feasible by construction: δ = 0 meets every row.
  expectOptimalOnFeasible(simplexJs, await simplexJs.solve(lp), { objective: -2 }, { abs: 1e-6 });
});

/**
 * Independent KKT check of an optimal result carrying duals (weak duality,
 * Chvátal 1983 ch. 5): primal feasible, reduced costs of the right sign for the
 * active bound, and primal objective = dual objective. Returns the relative gap.
 */
function kktGap(lp: LinearProgram, r: Optimal): number {
  assert.ok(r.duals !== undefined, "needs an optimal result with duals");
  const sigma = lp.sense === "minimize" ? 1 : -1;
  const d = lp.variables.map((vj) => sigma * vj.cost);
  lp.rows.forEach((ri, i) => ri.terms.forEach(([j, a]) => (d[j] -= a * r.duals!.rows[i])));
  let dual = 0;
  let scale = 0;
  const side = (m: number, lower: number, upper: number) => {
    if (m === 0) return 0;
    const b = m > 0 ? lower : upper;
    assert(Number.isFinite(b) || Math.abs(m) < 1e-9, `multiplier ${m} on an infinite bound`);
    return Number.isFinite(b) ? m * b : 0;
  };
  lp.rows.forEach((ri, i) => (dual += side(r.duals!.rows[i], ri.lower, ri.upper)));
  lp.variables.forEach((vj, j) => {
    dual += side(d[j], vj.lower, vj.upper);
    scale += Math.abs(vj.cost) * Math.max(1, Math.abs(r.x[j]));
  });
  return Math.abs(sigma * r.objective - dual) / scale;
}

/**
 * SLP-shaped LP: nd design steps δ ∈ [−Δ, Δ] (trust region), one nonnegative slack per
 * linearised constraint g_i·δ − s_i ≤ h_i with penalty ρ, a two-sided balance row and an
 * equality row; `spread` multiplies rows by 10^±spread to mimic unscaled SI coefficients.
 */
function slpProgram(seed: number, nd: number, nc: number, spread = 0): LinearProgram {
  const rand = random(seed);
  const variables: LpVariable[] = [];
  for (let j = 0; j < nd; j++) {
    variables.push(v(`delta${j}`, -0.5 - rand(), 0.5 + rand(), rand() * 2 - 1));
  }
  for (let i = 0; i < nc; i++) variables.push(v(`slack${i}`, 0, INF, 10 + 10 * rand()));
  const rows: LpRow[] = [];
  for (let i = 0; i < nc; i++) {
    const scale = Math.pow(10, spread * (2 * rand() - 1));
    const terms: Array<readonly [number, number]> = [];
    for (let j = 0; j < nd; j++) if (rand() < 0.3) terms.push([j, scale * (rand() * 2 - 1)]);
    terms.push([nd + i, -scale]);
    rows.push({ name: `lin${i}`, terms, lower: -INF, upper: scale * (rand() - 0.6) });
  }
  rows.push({
    name: "balance",
    terms: variables.slice(0, nd).map((_, j) => [j, 1] as const),
    lower: -1,
    upper: 1,
  });
  rows.push({
    name: "tie",
    terms: [[0, 1], [1, -1], [2, 0.5]],
    lower: 0.1,
    upper: 0.1,
  });
  return { sense: "minimize", variables, rows };
}

Deno.test("SLP-shaped random family (seeded, 50 variables): HiGHS passes an independent KKT check", async () => {
  for (let seed = 1; seed <= 10; seed++) {
    for (const spread of [0, 6]) {
      const lp = slpProgram(seed, 30, 20, spread);
      const r = optimal(await highs.solve(lp), `seed ${seed} spread ${spread}`);
      assert(checkSolution(lp, r.x).maxViolation <= 1e-7);
      // Duality theorem (Chvátal 1983, ch. 5): zero gap certifies optimality.
      assertClose(kktGap(lp, r), 0, { abs: 1e-9, what: `KKT gap seed ${seed} spread ${spread}` });
    }
  }
});

Deno.test("SLP-shaped random family: javascript-lp-solver agrees with HiGHS", async () => {
  for (let seed = 1; seed <= 10; seed++) {
    const lp = slpProgram(seed, 30, 20);
    const reference = optimal(await highs.solve(lp), `seed ${seed}`);
    // Feasible by construction: δ = 0 with slacks s_i = max(0, −h_i) and the tie row met by δ_2.
    expectOptimalOnFeasible(
      simplexJs,
      await simplexJs.solve(lp),
      { objective: reference.objective },
      { rel: 1e-6, abs: 1e-6 },
    );
  }
});

// Degenerate random family: min c·δ, G·δ ≤ 0 (all active at 0),
// |δ| ≤ 1. The optimum is < 0 whenever some δ ≠ 0 in the cone has c·δ < 0; HiGHS must find a
// KKT-certified optimum (independent check); javascript-lp-solver must find the same optimum.
Deno.test("degenerate random family: HiGHS certified, javascript-lp-solver agrees", async () => {
  for (let seed = 100; seed < 110; seed++) {
    const rand = random(seed);
    const n = 12;
    const variables = Array.from({ length: n }, (_, j) => v(`d${j}`, -1, 1, rand() * 2 - 1));
    const rows: LpRow[] = Array.from({ length: 8 }, (_, i) => ({
      name: `g${i}`,
      terms: Array.from({ length: n }, (_, j) => [j, rand() * 2 - 1] as const),
      lower: -INF,
      upper: 0,
    }));
    const lp: LinearProgram = { sense: "minimize", variables, rows };
    const r = optimal(await highs.solve(lp), `seed ${seed}`);
    assertClose(kktGap(lp, r), 0, { abs: 1e-9, what: `KKT gap seed ${seed}` });
    assert(r.objective < -1e-3, `seed ${seed}: optimum ${r.objective} should be < 0`);
    // Feasible by construction: δ = 0 meets every row G·δ ≤ 0.
    expectOptimalOnFeasible(simplexJs, await simplexJs.solve(lp), r, { rel: 1e-6 });
  }
});

Deno.test("certifyOptimality rejects a feasible non-optimal point and certifies the optimum", () => {
  // Chvátal's example: x = 0 is feasible (objective 0 < 13), (2, 0, 1) is optimal.
  const zero = certifyOptimality(chvatal, new Float64Array([0, 0, 0]));
  assert(!zero.certified);
  const best = certifyOptimality(chvatal, new Float64Array([2, 0, 1]));
  assert(best.certified, JSON.stringify(best));
  // Estimated duals are Chvátal's y = (1, 0, 1), in min-form sign.
  [-1, 0, -1].forEach((pi, i) =>
    assertClose(best.duals.rows[i], pi, { abs: 1e-9, what: `π[${i}]` })
  );
});

Deno.test("checkSolution measures violations relative to the row's term scale", () => {
  // Row 2x ≤ 1 at x = 1: excess 1, term scale 2·max(1, 1) = 2 ⇒ 0.5 (definition in checkSolution).
  const lp: LinearProgram = {
    sense: "minimize",
    variables: [v("x", 0, 3, 1)],
    rows: [row("r", [2], -INF, 1)],
  };
  const c = checkSolution(lp, new Float64Array([1]));
  assertClose(c.maxViolation, 0.5, { rel: 1e-15 });
  assertClose(c.objective, 1, { rel: 1e-15 });
  // Bound 3 exceeded by 1 at x = 4: 1 / max(1, 3) = 1/3; the row (excess 7, scale 8) is worse.
  assertClose(checkSolution(lp, new Float64Array([4])).maxViolation, 7 / 8, { rel: 1e-15 });
  assert.deepEqual(checkSolution(lp, new Float64Array([NaN])).maxViolation, Infinity);
  assert.throws(() => checkSolution(lp, new Float64Array(2)), RangeError);
});

Deno.test("scaleProgram uses powers of two, so unscaling is exact", () => {
  const lp = slpProgram(7, 10, 5, 6);
  const scaled = scaleProgram(lp);
  for (const f of [...scaled.rowFactors, ...scaled.columnFactors, scaled.objectiveFactor]) {
    assert.ok(Number.isInteger(Math.log2(f)), `factor ${f} is not a power of two`);
  }
  // Largest |coefficient| of each scaled row lies in [1/4, 4] after row then column scaling.
  for (const r of scaled.program.rows) {
    const big = Math.max(...r.terms.map(([, a]) => Math.abs(a)));
    assert(big >= 0.25 && big <= 4, `row ${r.name} largest |a| = ${big}`);
  }
  const x = new Float64Array(lp.variables.length).map((_, j) => 0.1 * j - 0.3);
  const y = x.map((xj, j) => xj / scaled.columnFactors[j]);
  assert.deepEqual([...unscaleSolution(scaled, y)], [...x]);
});

Deno.test("CPLEX LP text keeps full double precision and writes ranges as two rows", () => {
  // 0.1 + 0.2 = 0.30000000000000004 in IEEE 754 binary64; ECMAScript Number::toString prints the
  // shortest round-tripping digits.
  const lp: LinearProgram = {
    sense: "maximize",
    variables: [v("a b", -INF, INF, 0.1 + 0.2), v("c", 0, 1e-12, 1)],
    rows: [row("two sided", [1e-13, 1], -1, 2)],
  };
  const { text, rowOrigin } = formatCplexLp(lp);
  assert(text.includes("- 0.30000000000000004 x0"), text);
  assert(text.includes("1e-13 x0"), text);
  assert(text.includes("x0 free") && text.includes("0 <= x1 <= 1e-12"), text);
  assert.deepEqual([...rowOrigin], [0, 0]);
});

Deno.test("malformed programs throw RangeError", async () => {
  for (const solver of adapters) {
    await assertRejectsRange(() =>
      solver.solve({ sense: "minimize", variables: [v("x", 0, 1, NaN)], rows: [] })
    );
    await assertRejectsRange(() =>
      solver.solve({
        sense: "minimize",
        variables: [v("x", 0, 1, 1)],
        rows: [row("r", [1, 1], 0, 1)],
      })
    );
  }
});

async function assertRejectsRange(f: () => Promise<unknown>): Promise<void> {
  let caught: unknown;
  try {
    await f();
  } catch (error) {
    caught = error;
  }
  assert(caught instanceof RangeError, `expected RangeError, got ${String(caught)}`);
}

// Without the adapter's safeguards javascript-lp-solver 1.0.3 returned δ = 0 as "optimal" on
// degenerate LPs (15 of 15 in our own runs), some violating constraints. With the adapter's variable shifting
// the real library solved the families above, so its safeguards are exercised here with a
// stand-in that replays those two failure modes.
Deno.test("javascript-lp-solver adapter turns a wrong 'optimal' into check_failed", async () => {
  const chain: LinearProgram = {
    sense: "minimize",
    variables: [3, -1, 2, -5, 1].map((wk, k) => v(`d${k}`, -1, 1, -wk)),
    rows: [0, 1, 2, 3].map((k) => ({
      name: `chain${k}`,
      terms: [[k, 1], [k + 1, -1]],
      lower: -INF,
      upper: 0,
    })),
  };
  // δ = 0 is y = lower + ... = 1 in shifted variables (x = −1 + y); omitted zeros mean y = 0.
  const zeroStep = createSimplexJsSolver({
    library: {
      Solve: () => ({
        feasible: true,
        bounded: true,
        result: 0,
        y0: 1,
        y1: 1,
        y2: 1,
        y3: 1,
        y4: 1,
      }),
    },
  });
  const r0 = await zeroStep.solve(chain);
  assert.ok(r0.status === "error" && r0.code === "check_failed", JSON.stringify(r0));
  // A point violating chain0 (δ0 = 1 > δ1 = −1).
  const violating = createSimplexJsSolver({
    library: { Solve: () => ({ feasible: true, bounded: true, result: 0, y0: 2, y4: 2 }) },
  });
  const r1 = await violating.solve(chain);
  assert.ok(r1.status === "error" && r1.code === "check_failed", JSON.stringify(r1));
  // The true optimum (−1, −1, −1, −1, 1) = y (0, 0, 0, 0, 2) passes.
  const right = createSimplexJsSolver({
    library: { Solve: () => ({ feasible: true, bounded: true, result: -2, y4: 2 }) },
  });
  expectOptimal(right, await right.solve(chain), { objective: -2, x: [-1, -1, -1, -1, 1] }, {
    abs: 1e-12,
  });
});

Deno.test("javascript-lp-solver adapter refuses programs above maxVariables", async () => {
  const lp = slpProgram(3, 70, 30);
  const r = await simplexJs.solve(lp);
  assert.ok(r.status === "error" && r.code === "solver_failure", JSON.stringify(r));
});

Deno.test("integer program: max 5x₁ + 8x₂, x₁ + x₂ ≤ 6, 5x₁ + 9x₂ ≤ 45 → 40 at (0, 5) on HiGHS", async () => {
  // A branch-and-bound teaching example (from memory, of the kind in Hillier & Lieberman's
  // integer programming chapter): the LP relaxation's optimum is 41.25 at (2.25, 3.75); the
  // integer optimum is checked here by enumerating every integer point as well.
  const program: LinearProgram = {
    sense: "maximize",
    variables: [
      { ...v("x1", 0, 10, 5), integer: true },
      { ...v("x2", 0, 10, 8), integer: true },
    ],
    rows: [row("c1", [1, 1], -INF, 6), row("c2", [5, 9], -INF, 45)],
  };
  let best = { z: -INF, x: [NaN, NaN] };
  for (let x1 = 0; x1 <= 10; x1++) {
    for (let x2 = 0; x2 <= 10; x2++) {
      if (x1 + x2 <= 6 && 5 * x1 + 9 * x2 <= 45 && 5 * x1 + 8 * x2 > best.z) {
        best = { z: 5 * x1 + 8 * x2, x: [x1, x2] };
      }
    }
  }
  assert.deepEqual(best, { z: 40, x: [0, 5] });
  const relaxed = optimal(
    await highs.solve({
      ...program,
      variables: program.variables.map(({ integer: _, ...rest }) => rest),
    }),
    "relaxation",
  );
  assertClose(relaxed.objective, 41.25, { rel: 1e-9, what: "LP relaxation" });
  const r = optimal(await highs.solve(program), "integer program");
  assert.equal(r.objective, 40);
  assert.deepEqual(Array.from(r.x), [0, 5]);
  assert.match(formatCplexLp(program).text, /\nGeneral\n x0 x1\n/);
  // The JS adapter says plainly that it does not take integer variables.
  const js = await simplexJs.solve(program);
  assert.equal(js.status, "error");
});
