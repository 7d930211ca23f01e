import assert from "node:assert/strict";
import { assemble } from "../../../src/network/fill/assemble.ts";
import {
  branchLaw,
  branchLawCache,
  cachedBranchLaw,
} from "../../../src/network/fill/channel_laws.ts";
import { unequalBranches } from "../_scenarios.ts";
import { fixture, markFull } from "./_fixture.ts";

// Exact comparisons (assert.equal/deepEqual) on purpose: the cache must not change a bit.
Deno.test("cachedBranchLaw: the same numbers as branchLaw, one law while the inputs hold, a new one when the melt changes", () => {
  const f = fixture(unequalBranches("full"));
  markFull(f, ["hot_drop", "R1", "R2", "G1"], 0);
  const g2 = f.element("G2");
  f.state.sideStart[2 * g2] = 0.01;
  f.state.fill[2 * g2] = 0.3 * f.network.elements[g2].volume;
  f.state.lastFlow.fill(2e-5);
  const assembly = assemble(f.ctx, f.state);
  const cache = branchLawCache(f.network.elements.length);
  const t = 0.05;
  const at = { t, volumes: f.state.fill, cache };
  for (const br of assembly.branches) {
    const kept = cachedBranchLaw(f.ctx, f.state, br, at);
    const fresh = branchLaw(f.ctx, f.state, br, t, f.state.fill);
    for (const q of [1e-7, 2e-5, -4e-6]) {
      const what = `branch of ${f.network.elements[br.element].id}, Q = ${q}`;
      assert.deepEqual(kept(q), fresh(q), what);
      assert.equal(kept.resistance(q).pressureDrop, fresh(q).pressureDrop, what);
    }
    assert.equal(cachedBranchLaw(f.ctx, f.state, br, at), kept, "inputs unchanged: same law");
  }
  // A hotter melt: every law is rebuilt and runs at a lower pressure drop.
  const r1 = assembly.branches.find((br) => br.element === f.element("R1"))!;
  const before = cachedBranchLaw(f.ctx, f.state, r1, at);
  f.state.temperature[r1.element] += 20;
  const after = cachedBranchLaw(f.ctx, f.state, r1, at);
  assert.notEqual(after, before);
  assert.deepEqual(after(2e-5), branchLaw(f.ctx, f.state, r1, t, f.state.fill)(2e-5));
  assert.ok(after(2e-5).pressureDrop < before(2e-5).pressureDrop, "hotter melt, lower drop");
});
