import assert from "node:assert/strict";
import { assertClose } from "../../assert_close.ts";
import { assemble } from "../../../src/network/fill/assemble.ts";
import {
  fillDeadEnds,
  holdPressures,
  type Solved,
  solveInstant,
  solveStats,
} from "../../../src/network/fill/solve_instant.ts";
import { unequalBranches } from "../_scenarios.ts";
import { fixture, markFull, solvedNow } from "./_fixture.ts";

// Power-law tube and slit, Bird, Armstrong & Hassager, Dynamics of Polymeric Liquids vol. 1
// (1987), ch. 4.
const K = 7500;
const n = 0.38;
const tube = (Q: number, R: number, L: number) =>
  ((2 * K * L) / R) * Math.pow(((3 * n + 1) * Q) / (Math.PI * n * R ** 3), n);
const slit = (Q: number, W: number, H: number, L: number) =>
  ((2 * K * L) / H) * Math.pow((2 * (2 * n + 1) * Q) / (n * W * H * H), n);

function solved(f: ReturnType<typeof fixture>): Solved {
  return solvedNow(f, 1);
}

Deno.test("solveInstant: one cavity full, the whole rate goes to the other and the pressures add up by hand", () => {
  const f = fixture();
  markFull(f, ["hot_drop", "R1", "R2", "G1", "G2", "C1"]);
  const c2 = f.element("C2");
  f.state.sideStart[2 * c2] = 0;
  f.state.fill[2 * c2] = 0.4 * f.network.elements[c2].volume;
  const s = solved(f);
  const Q = 40e-6;
  // C2 strip: 150 mm wide, 2 mm gap, 40 % of 100 mm filled; G2 Ø1.4 × 1; R2 Ø5 × 120 mm.
  const pB = slit(Q, 0.15, 2e-3, 0.04) + tube(Q, 0.7e-3, 1e-3);
  const pJ = pB + tube(Q, 2.5e-3, 0.12);
  assertClose(s.pressure[f.node("B")], pB, { rel: 1e-6, what: "p_B" });
  assertClose(s.pressure[f.node("J")], pJ, { rel: 1e-6, what: "p_J" });
  // The dead end R1 → A → G1 → C1 sits at p_J: no flow, no drop.
  assertClose(s.pressure[f.node("A")], pJ, { rel: 1e-12, what: "p_A (dead end)" });
  assertClose(s.pressure[f.node("C1")], pJ, { rel: 1e-12, what: "C1 node (dead end)" });
  // The solve's own drops are the branch laws at their flows (to its 1e-10 tolerance), and
  // R2's is the tube's.
  s.assembly.branches.forEach((_, k) =>
    assertClose(s.drops[k], s.channel[k].pressureDrop, { rel: 1e-10, what: `drop ${k}` })
  );
  const r2 = s.assembly.branches.findIndex((b) => b.element === f.element("R2"));
  assertClose(s.drops[r2], tube(Q, 2.5e-3, 0.12), { rel: 1e-6, what: "ΔP R2" });
});

Deno.test("fillDeadEnds: a node sealed by a frozen-shut element keeps its last pressure; dry nodes stay NaN", () => {
  const f = fixture();
  markFull(f, ["hot_drop", "R1", "R2", "G1", "G2", "C1"]);
  const c2 = f.element("C2");
  f.state.sideStart[2 * c2] = 0;
  f.state.fill[2 * c2] = 0.4 * f.network.elements[c2].volume;
  const before = solved(f);
  holdPressures(f.state, before);
  f.state.closed[f.element("G1")] = 1;
  const pressure = new Float64Array(f.ctx.nodeCount).fill(NaN);
  pressure[f.node("J")] = 1e7;
  fillDeadEnds(f.ctx, f.state, pressure);
  assert.equal(pressure[f.node("A")], 1e7, "A still hangs from J through the full, open R1");
  assert.equal(pressure[f.node("C1")], before.pressure[f.node("C1")], "C1 behind the shut G1");
  const dry = fixture();
  markFull(dry, []);
  const p = new Float64Array(dry.ctx.nodeCount).fill(NaN);
  fillDeadEnds(dry.ctx, dry.state, p);
  assert.ok(Number.isNaN(p[dry.node("A")]));
});

Deno.test("solveInstant from another solve: shared laws are taken as known, a changed law is not", () => {
  // Warm-started from a solve of the same state, the solve takes that solve's laws as known
  // and must land on its flows; after one element's melt is made hotter (a new law for it),
  // the stale value must not be reused: the solve must land where a cold solve of the new
  // state does. (A stale drop taken as known could move the pressures without moving the
  // flows, unnoticed: solveHydraulics' initialLaws.)
  const f = fixture(unequalBranches("full"));
  markFull(f, ["hot_drop", "R1", "R2", "G1", "G2"], 0);
  for (const id of ["C1", "C2"]) {
    const c = f.element(id);
    f.state.sideStart[2 * c] = 0;
    f.state.fill[2 * c] = 0.3 * f.network.elements[c].volume;
  }
  f.state.lastFlow.fill(2e-5);
  const assembly = assemble(f.ctx, f.state);
  const at = { t: 0.5, volumes: f.state.fill, assembly };
  const stats = solveStats();
  const first = solveInstant(f.ctx, f.state, stats, at);
  assert.ok(!("failure" in first));
  const again = solveInstant(f.ctx, f.state, stats, { ...at, warm: first.flows, from: first });
  assert.ok(!("failure" in again));
  first.flows.forEach((q, k) => assertClose(again.flows[k], q, { rel: 1e-9, what: `Q${k}` }));
  // Started a hair off (1e-7 relative, inside NEAR_FLOW): the known values are carried along
  // the slopes, and the solve still lands on the same flows.
  const near = first.flows.map((q, k) => q * (1 + 1e-7 * (k % 2 === 0 ? 1 : -1)));
  const nearly = solveInstant(f.ctx, f.state, stats, { ...at, warm: near, from: first });
  assert.ok(!("failure" in nearly));
  first.flows.forEach((q, k) => assertClose(nearly.flows[k], q, { rel: 1e-9, what: `near Q${k}` }));
  f.state.temperature[f.element("R1")] += 20;
  const hotter = solveInstant(f.ctx, f.state, stats, { ...at, warm: first.flows, from: first });
  const cold = solveInstant(f.ctx, f.state, stats, at);
  assert.ok(!("failure" in hotter) && !("failure" in cold));
  const r1 = assembly.branches.findIndex((br) => br.element === f.element("R1"));
  assert.ok(hotter.flows[r1] > first.flows[r1] * (1 + 1e-6), "a hotter R1 takes more of the flow");
  cold.flows.forEach((q, k) => assertClose(hotter.flows[k], q, { rel: 1e-9, what: `hot Q${k}` }));
  const inlet = f.network.inlet;
  assertClose(hotter.pressure[inlet], cold.pressure[inlet], { rel: 1e-9, what: "feed pressure" });
});
