import assert from "node:assert/strict";
import { assemble, sameBranches } from "../../../src/network/fill/assemble.ts";
import { fixture, markFull } from "./_fixture.ts";

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
