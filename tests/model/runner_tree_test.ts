import assert from "node:assert/strict";
import { runnersTo, runnerTree, thickestWallDownstream } from "../../src/model/runner_tree.ts";

/**
 * The runner tree by hand: feed node S, main runner M to J, branches A (to P, one cavity of
 * 2 mm wall) and B (to Q), and B's sub-branch C (to R, a cavity of 3.5 mm wall) plus a gate
 * at Q into a 1.2 mm part. Runners listed out of order and one reversed (from/to swapped),
 * as a user may write them.
 */
const scenario = {
  feed: { node: "S" },
  runners: [
    { id: "C", from: "R", to: "Q" },
    { id: "A", from: "J", to: "P" },
    { id: "M", from: "S", to: "J" },
    { id: "B", from: "J", to: "Q" },
  ],
  gates: [
    { id: "G1", from: "P", cavity: "K1" },
    { id: "G2", from: "R", cavity: "K2" },
    { id: "G3", from: "Q", cavity: "K3" },
  ],
  cavities: [
    { id: "K1", wall_mm: 2 },
    { id: "K2", wall_mm: 3.5 },
    { id: "K3", wall_mm: 1.2 },
  ],
} as unknown as Parameters<typeof thickestWallDownstream>[0];

Deno.test("runner tree: parents, downstream ends and breadth-first order from the feed", () => {
  const tree = runnerTree(scenario);
  const id = (k: number | undefined) => k === undefined ? undefined : scenario.runners[k].id;
  assert.deepEqual(tree.order.map(id), ["M", "A", "B", "C"]);
  const parents = Object.fromEntries([...tree.parent].map(([k, up]) => [id(k), id(up)]));
  assert.deepEqual(parents, { M: undefined, A: "M", B: "M", C: "B" });
  // C is written from R to Q, but is fed from Q.
  assert.equal(tree.downNode.get(0), "R");
  assert.deepEqual((tree.children.get("J") ?? []).map(id), ["A", "B"]);
  assert.deepEqual(runnersTo(tree, "R").map(id), ["M", "B", "C"]);
  assert.deepEqual(runnersTo(tree, "S"), []);
});

Deno.test("runner tree: each runner's thickest wall downstream", () => {
  const walls = thickestWallDownstream(scenario);
  const byId = Object.fromEntries([...walls].map(([k, w]) => [scenario.runners[k].id, w]));
  // M feeds everything (3.5 mm); B feeds K3 (1.2) and, through C, K2 (3.5); A only K1.
  assert.deepEqual(byId, { M: 3.5, A: 2, B: 3.5, C: 3.5 });
});
