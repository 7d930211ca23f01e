import assert from "node:assert/strict";
import { assemble, carriedFlows, sameBranches } from "../../../src/network/fill/assemble.ts";
import { solveInstant, solveStats } from "../../../src/network/fill/solve_instant.ts";
import { fixture, markFull, solvedNow } from "./_fixture.ts";

Deno.test("assemble: a dry tool is one branch, the feed filling from the inlet", () => {
  const f = fixture();
  markFull(f, []);
  const a = assemble(f.ctx, f.state);
  assert.deepEqual(a.branches.map((b) => [f.network.elements[b.element].id, b.side]), [[
    "hot_drop",
    0,
  ]]);
  assert.equal(a.nodeCount, 1);
});

Deno.test("assemble: a full cavity's gate and runner are a dead end and leave the network", () => {
  const f = fixture();
  markFull(f, ["hot_drop", "R1", "R2", "G1", "G2", "C1"]);
  const a = assemble(f.ctx, f.state);
  const ids = a.branches.map((b) => f.network.elements[b.element].id).sort();
  // C1 is full: G1 (A → C1 node) and then R1 (J → A) carry no flow; C2 fills from G2.
  assert.deepEqual(ids, ["C2", "G2", "R2", "hot_drop"]);
  assert.equal(a.local[f.node("A")], -1);
});

Deno.test("assemble: melt behind a frozen-shut element is cut off from the inlet", () => {
  const f = fixture();
  markFull(f, ["hot_drop", "R1", "R2", "G1", "G2"]);
  f.state.sideStart[2 * f.element("C1")] = 0;
  f.state.sideStart[2 * f.element("C2")] = 0;
  f.state.closed[f.element("R2")] = 1;
  const a = assemble(f.ctx, f.state);
  const ids = a.branches.map((b) => f.network.elements[b.element].id).sort();
  assert.deepEqual(ids, ["C1", "G1", "R1", "hot_drop"]);
  f.state.closed[f.element("hot_drop")] = 1;
  assert.equal(assemble(f.ctx, f.state).branches.length, 0);
});

Deno.test("sameBranches: equal for the same state, not once an element closes", () => {
  const f = fixture();
  markFull(f, ["hot_drop", "R1", "R2"]);
  const a = assemble(f.ctx, f.state);
  assert.ok(sameBranches(a, assemble(f.ctx, f.state)));
  f.state.closed[f.element("R1")] = 1;
  assert.ok(!sameBranches(a, assemble(f.ctx, f.state)));
});

Deno.test("carriedFlows: staying branches keep their flow, a just-full element carries its filling flow on, fresh branches share what their node receives", () => {
  const f = fixture();
  markFull(f, ["hot_drop"]);
  f.state.sideStart[2 * f.element("R1")] = 0;
  f.state.sideStart[2 * f.element("R2")] = 0;
  const before = assemble(f.ctx, f.state);
  const flows = Float64Array.from(before.branches, (b) => {
    const id = f.network.elements[b.element].id;
    return id === "hot_drop" ? 1e-5 : id === "R1" ? 6e-6 : 4e-6;
  });
  // R1 fills: node A gets wet, G1 starts filling from it.
  markFull(f, ["hot_drop", "R1"]);
  f.state.sideStart[2 * f.element("G1")] = 0;
  const after = assemble(f.ctx, f.state);
  const warm = carriedFlows(f.ctx, before, flows, after);
  const at = (id: string) => warm[after.branches.findIndex((b) => b.element === f.element(id))];
  assert.equal(at("hot_drop"), 1e-5);
  assert.equal(at("R2"), 4e-6);
  assert.equal(at("R1"), 6e-6);
  // A receives R1's 6e-6 and has one fresh branch.
  assert.equal(at("G1"), 6e-6);
});

Deno.test("carriedFlows: a solve started from them ends where one from linear theory ends", () => {
  const f = fixture();
  markFull(f, ["hot_drop"]);
  f.state.sideStart[2 * f.element("R1")] = 0;
  f.state.sideStart[2 * f.element("R2")] = 0;
  f.state.fill[2 * f.element("R1")] = 0.9 * f.network.elements[f.element("R1")].volume;
  f.state.fill[2 * f.element("R2")] = 0.3 * f.network.elements[f.element("R2")].volume;
  const before = solvedNow(f, 0.1);
  markFull(f, ["hot_drop", "R1"]);
  f.state.sideStart[2 * f.element("G1")] = 0;
  const assembly = assemble(f.ctx, f.state);
  const solve = (warm?: Float64Array) => {
    const s = solveInstant(f.ctx, f.state, solveStats(), {
      t: 0.1,
      volumes: f.state.fill,
      assembly,
      warm,
    });
    assert.ok(!("failure" in s));
    return { s };
  };
  const cold = solve();
  const carried = solve(carriedFlows(f.ctx, before.assembly, before.flows, assembly));
  for (let k = 0; k < assembly.branches.length; k++) {
    // Both converge to the solve's tolerance (1e-10 relative flow correction).
    assert.ok(Math.abs(carried.s.flows[k] - cold.s.flows[k]) <= 1e-9 * f.ctx.injectionRate);
  }
});
