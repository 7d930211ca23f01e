import assert from "node:assert/strict";
import { assemble } from "../../../src/network/fill/assemble.ts";
import {
  branchLaw,
  branchLawCache,
  cachedBranchLaw,
  FRONT_START_AGE,
  frozenAt,
  frozenFixedFrom,
  START_LINEAR_SHARE,
} from "../../../src/network/fill/channel_laws.ts";
import type { FillState } from "../../../src/network/fill/fill_state.ts";
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

Deno.test("a fresh branch resists as a front that has filled at its flow for the start age", () => {
  // Fully developed flow in a uniform channel: the drop is proportional to the filled length,
  // so to the filled volume (Bird, Armstrong & Hassager, Dynamics of Polymeric Liquids vol. 1,
  // 2nd ed., §5.3). A fresh runner at flow Q must then drop ΔP_V(Q)·(Q·τ)/V for the drop ΔP_V
  // of the same runner holding any volume V that is past Q·τ and still short of its length.
  const f = fixture(unequalBranches("isothermal"));
  markFull(f, ["hot_drop"], 0);
  const assembly = assemble(f.ctx, f.state);
  const r1 = assembly.branches.find((br) => br.element === f.element("R1") && br.side === 0)!;
  const e = f.network.elements[r1.element];
  assert.equal(f.state.fill[2 * r1.element], 0, "R1 is fresh");
  const age = FRONT_START_AGE * f.ctx.nominalFillTime;
  const fresh = branchLaw(f.ctx, f.state, r1, 0, f.state.fill);
  const heldVolume = 1e-3 * e.volume;
  const held = f.state.fill.slice();
  held[2 * r1.element] = heldVolume;
  const atHeld = branchLaw(f.ctx, f.state, r1, 0, held);
  for (const q of [2e-6, 2e-5, 8e-5]) {
    assert.ok(q * age < heldVolume && heldVolume < START_LINEAR_SHARE * e.volume);
    const expected = (atHeld(q).pressureDrop * (q * age)) / heldVolume;
    const got = fresh(q).pressureDrop;
    assert.ok(Math.abs(got - expected) <= 1e-9 * expected, `Q = ${q}: ${got} vs ${expected}`);
    // The slope includes the growth of the start volume with the flow.
    const dq = q * 1e-6;
    const central = (fresh(q + dq).pressureDrop - fresh(q - dq).pressureDrop) / (2 * dq);
    const slope = fresh(q).dPressureDropDFlow;
    assert.ok(Math.abs(slope - central) <= 1e-5 * slope, `Q = ${q}: slope ${slope} vs ${central}`);
    assert.equal(fresh.resistance(q).pressureDrop, got);
  }
});

Deno.test("a fresh branch's law declares the two flows where its slope jumps, and only those", () => {
  // ΔP = ΔP₀(Q)·f(Q): f = 1 up to Q·τ = V₀, f = Q·τ/V₀ up to the linear share, then constant
  // (the scaling of the test above). The slope picks up |ΔP₀|·τ/V₀ at the first kink and
  // loses f's slope at the second; between and beyond them it is continuous. The hydraulic
  // solve must know where (HydraulicElement.kinks): a Newton step across a kink is not
  // second-order accurate.
  const f = fixture(unequalBranches("isothermal"));
  markFull(f, ["hot_drop"], 0);
  const assembly = assemble(f.ctx, f.state);
  const r1 = assembly.branches.find((br) => br.element === f.element("R1") && br.side === 0)!;
  const fresh = branchLaw(f.ctx, f.state, r1, 0, f.state.fill);
  assert.ok(fresh.kinks && fresh.kinks.length === 2, "two kinks");
  const [first, second] = fresh.kinks;
  const slope = (q: number) => fresh.resistance(q).dPressureDropDFlow;
  const jump = (q: number) => Math.abs(slope(q * (1 + 1e-9)) - slope(q * (1 - 1e-9))) / slope(q);
  assert.ok(jump(first) > 0.1, `slope jumps by ${jump(first)} at the first kink`);
  assert.ok(jump(second) > 0.1, `slope jumps by ${jump(second)} at the second kink`);
  for (const q of [first / 3, Math.sqrt(first * second), 3 * second]) {
    assert.ok(jump(q) < 1e-6, `slope continuous at ${q} m³/s: ${jump(q)}`);
  }
  // A full branch keeps the channel's own smooth law.
  const full = assembly.branches.find((br) => br.side === -1)!;
  assert.equal(branchLaw(f.ctx, f.state, full, 0, f.state.fill).kinks, undefined);
});

Deno.test("frozenAt answers a repeat from its memory and works out a changed melt, flow or layer afresh", () => {
  // The memory must never change a number: every answer equals the one a state with the same
  // values but no memory gives (a copy of the state is a new key of the memory).
  const f = fixture(unequalBranches("full"));
  markFull(f, ["hot_drop", "R1", "R2", "G1"], 0);
  const r1 = f.network.elements[f.element("R1")];
  f.state.lastFlow[r1.index] = 2e-5;
  const copy = (s: FillState): FillState => ({
    ...s,
    lastFlow: s.lastFlow.slice(),
    temperature: s.temperature.slice(),
    frozenHeld: s.frozenHeld.slice(),
  });
  const fresh = (t: number) => frozenAt(f.ctx, copy(f.state), r1, t, -1);
  const first = frozenAt(f.ctx, f.state, r1, 0.5, -1);
  assert.ok(first > 0, "a full runner at 0.5 s has a frozen layer");
  assert.equal(frozenAt(f.ctx, f.state, r1, 0.5, -1), first);
  assert.equal(first, fresh(0.5));
  f.state.temperature[r1.index] -= 15; // a cooler melt: a thicker layer
  const cooler = frozenAt(f.ctx, f.state, r1, 0.5, -1);
  assert.ok(cooler > first, `cooler melt: ${cooler} > ${first}`);
  assert.equal(cooler, fresh(0.5));
  f.state.lastFlow[r1.index] = 2e-6; // slower flow, longer residence: thicker again
  const slower = frozenAt(f.ctx, f.state, r1, 0.5, -1);
  assert.ok(slower > cooler, `slower flow: ${slower} > ${cooler}`);
  assert.equal(slower, fresh(0.5));
  f.state.frozenHeld[r1.index] = 2 * slower; // a thicker layer already held is kept
  assert.equal(frozenAt(f.ctx, f.state, r1, 0.5, -1), 2 * slower);
  assert.equal(fresh(0.5), 2 * slower);
});

Deno.test("frozenFixedFrom: a full element past half its residence keeps its layer; a filling side never counts", () => {
  // t_c = min(contact, residence/2): once the contact time passes half the residence, later
  // instants give the same t_c, so the same layer (checked here against frozenAt itself);
  // before that the layer still grows with the contact time, and a filling side's volume moves.
  const f = fixture(unequalBranches("full"));
  markFull(f, ["hot_drop", "R1", "R2", "G1"], 0);
  const r1 = f.network.elements[f.element("R1")];
  const residence = r1.volume / 2e-5;
  f.state.lastFlow[r1.index] = 2e-5;
  const early = residence / 4; // contact = t while the element has been full since 0
  assert.equal(frozenFixedFrom(f.ctx, f.state, r1, early, -1), false);
  assert.ok(frozenAt(f.ctx, f.state, r1, 2 * early, -1) > frozenAt(f.ctx, f.state, r1, early, -1));
  const late = residence;
  assert.equal(frozenFixedFrom(f.ctx, f.state, r1, late, -1), true);
  const layer = frozenAt(f.ctx, f.state, r1, late, -1);
  assert.ok(layer > 0);
  for (const t of [1.5 * late, 4 * late, 40 * late]) {
    assert.equal(frozenAt(f.ctx, f.state, r1, t, -1), layer, `t = ${t} s`);
  }
  // A filling side: never, not even isothermal (its law moves with its volume).
  const g2 = f.network.elements[f.element("G2")];
  f.state.sideStart[2 * g2.index] = 0;
  assert.equal(frozenFixedFrom(f.ctx, f.state, g2, late, 0), false);
  const iso = fixture(unequalBranches("isothermal"));
  const g2i = iso.network.elements[iso.element("G2")];
  assert.equal(frozenFixedFrom(iso.ctx, iso.state, g2i, 1, 0), false);
  assert.equal(frozenFixedFrom(iso.ctx, iso.state, g2i, 1, -1), true);
});
