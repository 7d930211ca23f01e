import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import { familyLayout } from "../support/family_layout.ts";
import type { ScenarioWire } from "../../src/model/scenario_schema.ts";
import { type ScenarioRun, simulateScenario } from "../../src/network/simulate_scenario.ts";
import type { FillSample } from "../../src/network/fill_result.ts";
import { unequalBranches } from "./_scenarios.ts";

function run(wire: unknown): ScenarioRun {
  const outcome = simulateScenario(wire);
  assert.ok(outcome.ok, JSON.stringify(!outcome.ok && outcome));
  return outcome.run;
}

async function demo(name: string): Promise<ScenarioWire> {
  return JSON.parse(await Deno.readTextFile(new URL(`../../scenarios/${name}`, import.meta.url)));
}

function sampleAt(history: readonly FillSample[], time: number): FillSample {
  const sample = history.find((h) => Math.abs(h.time - time) <= 1e-12 * time);
  assert.ok(sample, `no history sample at t = ${time} s`);
  return sample;
}

// Power-law tube and slit (W ≫ H), Bird, Armstrong & Hassager, Dynamics of Polymeric
// Liquids vol. 1 (1987), ch. 4: ΔP = (2KL/R)[(3n+1)Q/(πnR³)]ⁿ, ΔP = (2KL/H)[2(2n+1)Q/(nWH²)]ⁿ.
const tube = (K: number, n: number, Q: number, R: number, L: number) =>
  ((2 * K * L) / R) * Math.pow(((3 * n + 1) * Q) / (Math.PI * n * R ** 3), n);
const slit = (K: number, n: number, Q: number, W: number, H: number, L: number) =>
  ((2 * K * L) / H) * Math.pow((2 * (2 * n + 1) * Q) / (n * W * H * H), n);

/** unequalBranches (isothermal power law) with switchover before the second cavity is full. */
function twoCavitiesOneFull(): ScenarioWire {
  const wire = unequalBranches("isothermal");
  wire.process.switchover_percent = 95;
  return wire;
}

Deno.test("a full single-gated cavity holds its feed node's pressure over its whole area: clamp force by hand (Kirchhoff)", () => {
  const r = run(twoCavitiesOneFull());
  const K = 7500;
  const n = 0.38;
  const Q = 40e-6;
  const mm = 1e-3;
  // Volumes by hand: hot drop Ø6 × 30, runners Ø5 × 40 and × 120, pin gates Ø1.4 × 1 (mm).
  const hotDrop = Math.PI * (3 * mm) ** 2 * (30 * mm);
  const runners = Math.PI * (2.5 * mm) ** 2 * (160 * mm);
  const gates = 2 * Math.PI * (0.7 * mm) ** 2 * (1 * mm);
  const feedSystem = hotDrop + runners + gates;
  const shot = feedSystem + 50e-6;
  assertClose(r.network.feedSystemVolume, feedSystem, { rel: 1e-12, what: "feed system volume" });
  const switchover = 0.95 * shot / Q;
  const c1 = r.fill.cavities.find((c) => c.id === "C1")!;
  assert.ok(c1.fillTime < switchover, "C1 (short branch, smaller part) fills before switchover");
  // Mass balance: what is not in the feed system or C1 is in C2 (20 cm³ and 30 cm³ parts).
  const c2Filled = 0.95 * shot - feedSystem - 20e-6;
  const f2 = c2Filled / 30e-6;
  // Everything flows into C2: strip 30 cm³ / (2 mm wall × 100 mm flow length) = 150 mm wide.
  const pC2 = slit(K, n, Q, 0.15, 2 * mm, f2 * 0.1);
  const pB = pC2 + tube(K, n, Q, 0.7 * mm, 1 * mm);
  const pJ = pB + tube(K, n, Q, 2.5 * mm, 120 * mm);
  const pInlet = pJ + tube(K, n, Q, 3 * mm, 30 * mm);
  assertClose(r.fill.feedPressureAtSwitchover, pInlet, { rel: 1e-5, what: "feed pressure" });
  // R1 → G1 → C1 is a dead end: no flow, no drop, so C1's inlet sits at p_J.
  assertClose(c1.inletPressureAtSwitchover, pJ, { rel: 1e-5, what: "C1 inlet pressure" });
  // Clamp: cavities 100 cm² each (C2 over its filled share, pressure linear to the front:
  // mean ½); round runners and pin gates project diameter × length; the hot drop none.
  const area = 100e-4;
  const clamp = area * pJ + // C1, full
    area * f2 * pC2 / 2 + // C2, filling
    5 * mm * 40 * mm * pJ + // R1, no flow
    1.4 * mm * 1 * mm * pJ + // G1, no flow
    5 * mm * 120 * mm * (pJ + pB) / 2 + // R2
    1.4 * mm * 1 * mm * (pB + pC2) / 2; // G2
  const atSwitchover = sampleAt(r.fill.history, r.fill.switchoverTime);
  assertClose(atSwitchover.clampForce, clamp, { rel: 1e-5, what: "clamp force at switchover" });
  assert.ok(r.fill.clampForcePeak >= clamp * (1 - 1e-5), "the peak is at least that");
});

Deno.test("a full cavity gives the same clamp force whether one gate or two feed it", () => {
  // Same gate volume and projected area both ways: one Ø1.4 × 1 mm pin, or two Ø1.4 × 0.5 mm.
  const single = twoCavitiesOneFull();
  const double = twoCavitiesOneFull();
  const g1 = double.gates.find((g) => g.id === "G1")!;
  assert.ok(g1.type === "pin");
  double.gates = [
    ...double.gates.filter((g) => g.id !== "G1"),
    { ...g1, id: "G1a", land_mm: 0.5 },
    { ...g1, id: "G1b", land_mm: 0.5 },
  ];
  const a = run(single);
  const b = run(double);
  assertClose(b.network.feedSystemVolume, a.network.feedSystemVolume, { rel: 1e-12, what: "V" });
  for (const r of [a, b]) {
    assert.ok(r.fill.cavities[0].fillTime < r.fill.switchoverTime, "C1 full at switchover");
  }
  const force = (r: ScenarioRun) => sampleAt(r.fill.history, r.fill.switchoverTime).clampForce;
  assertClose(force(b), force(a), { rel: 1e-6, what: "clamp force, two gates vs one" });
  assertClose(b.fill.feedPressureAtSwitchover, a.fill.feedPressureAtSwitchover, {
    rel: 1e-6,
    what: "feed pressure",
  });
});

Deno.test("every cavity's inlet pressure at switchover is a real pressure, full or not", async () => {
  for (const name of ["family_four_housing.json", "two_gate_frame_and_knob.json"]) {
    const r = run(await demo(name));
    for (const c of r.fill.cavities) {
      assert.ok(c.inletPressureAtSwitchover > 0, `${name} ${c.id}: ${c.inletPressureAtSwitchover}`);
      assert.ok(c.inletPressureAtSwitchover <= r.fill.feedPressureAtSwitchover);
    }
    for (const path of r.fill.paths) {
      const last = path.pressureDrops.reduce((sum, drop) => sum + drop, 0);
      assert.ok(last > 0, `${name} path to ${path.cavity} carries the feed pressure`);
    }
  }
});

Deno.test("at a constant injection rate the feed pressure never falls up to switchover, cavities filling or not (thermal)", async () => {
  // Incompressible melt at a fixed ram speed: when a cavity fills, the same flow goes through
  // fewer, longer paths, so the pressure can only rise (mass balance, derived here). A frozen layer that
  // thinned as the flow sped up ("re-melting") or a heating lag made it fall.
  const cases: [string, ScenarioWire][] = [
    ["four-part demo", await demo("family_four_housing.json")],
    ["two-gate demo", await demo("two_gate_frame_and_knob.json")],
    ["eight-cap demo", await demo("hot_drop_eight_caps.json")],
  ];
  for (const count of [4, 6]) {
    for (const seed of [1, 2, 3]) {
      cases.push([`${count}-cavity family seed ${seed}`, familyLayout(count, { seed })]);
    }
  }
  for (const [name, wire] of cases) {
    const r = run(wire);
    assert.equal(r.fill.diagnostics.stoppedBecause, "all_full", name);
    const history = r.fill.history.filter((h) => h.time <= r.fill.switchoverTime * (1 + 1e-12));
    let events = 0;
    for (let i = 1; i < history.length; i++) {
      const before = history[i - 1];
      const after = history[i];
      const full = (h: FillSample) => h.cavityFill.filter((f) => f >= 1).length;
      if (full(after) > full(before)) events++;
      assert.ok(
        after.feedPressure >= before.feedPressure * (1 - 1e-9),
        `${name}: feed pressure falls from ${
          before.feedPressure / 1e6
        } MPa (t = ${before.time} s) ` +
          `to ${after.feedPressure / 1e6} MPa (t = ${after.time} s)`,
      );
    }
    if (name !== "eight-cap demo") {
      assert.ok(events > 0, `${name}: a cavity fills before switchover`);
    }
  }
});

Deno.test("a branch that freezes off ends as a short shot naming the element, never an exception", async () => {
  const slow = await demo("two_gate_frame_and_knob.json");
  slow.process.injection = { flow_rate_cm3_s: 2 };
  const family = await demo("family_four_housing.json");
  const slowFamily = structuredClone(family);
  slowFamily.process.injection = { flow_rate_cm3_s: 5 };
  const narrow = structuredClone(family);
  const last = narrow.runners![narrow.runners!.length - 1];
  Object.assign(last, { shape: "parabolic", width_mm: 0.5, depth_mm: 0.5 });
  for (
    const [name, wire] of [["two-gate at 2 cm³/s", slow], ["four-part at 5 cm³/s", slowFamily], [
      "four-part with a 0.5 mm parabolic runner",
      narrow,
    ]] as const
  ) {
    const outcome = simulateScenario(wire);
    assert.ok(outcome.ok, `${name}: ${JSON.stringify(!outcome.ok && outcome)}`);
    const fill = outcome.run.fill;
    const shut = fill.elements.filter((e) => e.frozenShut);
    assert.ok(shut.length > 0, `${name}: something froze shut`);
    const codes = outcome.run.warnings.map((w) => w.code);
    assert.ok(codes.includes("frozen_shut"), `${name}: warned`);
    if (fill.diagnostics.stoppedBecause === "short_shot") {
      assert.ok(codes.includes("short_shot"));
      assert.match(fill.diagnostics.message, /froze shut at [0-9.]+ s: cavit(y|ies) C\d/);
      const unfilled = fill.cavities.filter((c) => !Number.isFinite(c.fillTime));
      assert.ok(unfilled.length > 0, `${name}: a cavity is left short`);
      for (const c of unfilled) assert.match(fill.diagnostics.message, new RegExp(`${c.id} stops`));
    } else {
      assert.equal(fill.diagnostics.stoppedBecause, "all_full", name);
    }
    // Mass balance still holds through the closures.
    assert.ok(fill.diagnostics.massBalanceError < 1e-8, `${name}: mass balance`);
  }
});
