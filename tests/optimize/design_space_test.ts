import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";
import { designSpace } from "../../src/optimize/design_space.ts";
import { unequalBranches } from "../network/_scenarios.ts";

Deno.test("design space: a fixed feeding runner smaller than today's never makes a steel-safe tool unsolvable", () => {
  // Today's tool breaks the feed order: the fixed hot-drop-side runner R0 (4 mm) feeds the
  // adjustable R1 and R2 (5 mm). Steel-safe keeps R1 and R2 at ≥ 5 mm, so the feed-order
  // bound may not pull them below today's size (it binds only on growth past today).
  const wire = unequalBranches("isothermal");
  wire.nodes!.push({ id: "S", x_mm: 0, y_mm: -30 });
  wire.feed = { ...wire.feed, node: "S" } as typeof wire.feed;
  wire.runners!.unshift({ id: "R0", from: "S", to: "J", diameter_mm: 4 });
  wire.goals = { mode: "steel_safe", size_rules: false };
  const parsed = parseScenario(wire, { materialIds: LIBRARY_MATERIAL_IDS });
  assert.ok(parsed.ok, JSON.stringify(!parsed.ok && parsed.issues));
  const space = designSpace(parsed.scenario);
  assert.deepEqual(space.conflicts, []);
  for (const id of ["R1", "R2"]) {
    const v = space.variables.find((x) => x.element === id)!;
    assert.equal(v.lower, 5e-3, `${id} lower: today's size`);
    assert.equal(v.upper, 5e-3, `${id} upper: the feeder's order holds it at today's size`);
  }
});

// ---- The practical size rules (issue 13.3) as bounds, against hand calculations.

/** ABS (the library's abs-general), 240 °C melt, 50 °C mold: the unequal-branches layout. */
function abs(change: (wire: ReturnType<typeof unequalBranches>) => void = () => {}) {
  const wire = unequalBranches("full");
  change(wire);
  const parsed = parseScenario(wire, { materialIds: LIBRARY_MATERIAL_IDS });
  assert.ok(parsed.ok, JSON.stringify(!parsed.ok && parsed.issues));
  return parsed.scenario;
}
const variable = (space: ReturnType<typeof designSpace>, id: string) =>
  space.variables.find((v) => v.element === id)!;

// The library's ABS (src/materials/library.ts): T_nf 125 °C, T_e 90 °C, k 0.17 W/(m·K),
// ρ_melt 950 kg/m³, cp 2100 J/(kg·K); α = k/(ρ·cp).
const TM = 240;
const TW = 50;
const ABS = { noFlow: 125, ejection: 90, alpha: 0.17 / (950 * 2100) };
// First-term closed forms: plate centre line t = s²/(π²α)·ln[(4/π)θ] (Menges, Michaeli &
// Mohren, How to Make Injection Molds); cylinder axis t = D²/(4λ²α)·ln[(2/(λ·J1(λ)))θ]
// (Carslaw & Jaeger, Conduction of Heat in Solids, 2nd ed., §7.6), λ = j0,1 = 2.404825558,
// J1(j0,1) = 0.5191474973 (Abramowitz & Stegun, Table 9.5); θ = (Tm − Tw)/(T − Tw).
const LAMBDA = 2.404825558;
const plateLog = (t: number) => Math.log((4 / Math.PI) * (TM - TW) / (t - TW));
const cylinderLog = (t: number) => Math.log((2 / (LAMBDA * 0.5191474973)) * (TM - TW) / (t - TW));
/**
 * The largest runner cooling no longer than ratio × a plate of wall s: D² /(4λ²α)·L_cyl =
 * ratio·s²/(π²α)·L_plate, so D = s·√(ratio·(4λ²/π²)·L_plate/L_cyl) — α cancels.
 */
const coolingCeiling = (wall: number, ratio: number) =>
  wall * Math.sqrt(
    ratio * (4 * LAMBDA ** 2 / Math.PI ** 2) * plateLog(ABS.ejection) / cylinderLog(ABS.ejection),
  );

Deno.test("runner cooling rule: a new tool's runners are bounded at ratio × the thickest part's cooling time, by the D² scaling", () => {
  const space = designSpace(abs());
  // Walls 2 mm: D = 2 mm·√(1.5·2.3437·0.8867) ≈ 3.53 mm, just above the 3.5 mm wall rule.
  const expected = coolingCeiling(2e-3, 1.5);
  assertClose(expected, 3.531e-3, { rel: 1e-3, what: "hand figure" });
  for (const id of ["R1", "R2"]) {
    const v = variable(space, id);
    assertClose(v.upper, expected, { rel: 1e-9, what: `${id} upper` });
    assert.equal(v.upperKind, "strict_rule");
    assert.match(v.upperReason, /runner_cooling/);
    assert.equal(v.cutterUpper, v.upper, "no cutter tolerance on a strict rule");
  }
  assert.deepEqual(space.conflicts, []);
  // Ratio ∝ D²: the ratio that puts the ceiling on the 3.5 mm wall rule leaves it there; below
  // it the wall rule wins (a runner that froze before its part could not pack it): the ceiling
  // is lifted to the floor, said in the reason, and nothing conflicts.
  const atFloor = 1.5 * (3.5e-3 / expected) ** 2;
  const at = (ratio: number) =>
    designSpace(abs((w) => (w.goals = { max_runner_cooling_ratio: ratio })));
  assert.deepEqual(at(atFloor * (1 + 1e-9)).conflicts, []);
  assert.doesNotMatch(variable(at(atFloor * (1 + 1e-9)), "R1").upperReason, /lifted/);
  const thin = at(atFloor * 0.8);
  assert.deepEqual(thin.conflicts, []);
  for (const id of ["R1", "R2"]) {
    const v = variable(thin, id);
    assertClose(v.upper, 3.5e-3, { rel: 1e-12, what: `${id}: the wall rule's floor` });
    assert.equal(v.lower, v.upper, `${id}: held at the floor`);
    assert.match(v.upperReason, /lifted to the wall rule's floor/);
  }
  // Twice the ratio: √2 × the size.
  assertClose(variable(at(3), "R1").upper, Math.SQRT2 * expected, { rel: 1e-9, what: "ratio 3" });
});

Deno.test("runner cooling rule: switched off, it bounds nothing; on a trim tool that breaks it, today's size is the bound", () => {
  const off = designSpace(abs((w) => (w.goals = { size_rules: { runner_cooling: false } })));
  assert.equal(variable(off, "R1").upper, 12e-3, "back to max_diameter_mm");
  assert.equal(variable(off, "R1").upperKind, "scenario");
  // Trim: today's 5 mm runners need (5/3.53)²·1.5 ≈ 3 × the part's cooling time. The bound
  // is today's size: the rule forces no change, it only stops growth.
  const trim = designSpace(abs((w) => (w.goals = { mode: "trim" })));
  for (const id of ["R1", "R2"]) {
    const v = variable(trim, id);
    assert.equal(v.upper, 5e-3, `${id}: today's size`);
    assert.ok(v.lower <= v.current && v.current <= v.upper, `${id}: today's size allowed`);
    assert.match(v.upperReason, /runner_cooling.*today's size, which breaks it/);
  }
  assert.deepEqual(trim.conflicts, []);
});

/** The unequal-branches layout fed by a sprue (entry 3 mm, exit `exit` mm) at the junction. */
const sprueFed = (exit: number, goals: Record<string, unknown> = {}) =>
  abs((w) => {
    w.feed = {
      kind: "sprue",
      node: "J",
      length_mm: 50,
      entry_diameter_mm: 3,
      exit_diameter_mm: exit,
    };
    w.goals = goals;
  });

Deno.test("sprue exit rule: the runners leaving a sprue stay 0.5 mm under its exit (common practice); off, the sprue's own cooling is the ceiling", () => {
  const space = designSpace(sprueFed(5.2));
  for (const id of ["R1", "R2"]) {
    const v = variable(space, id);
    assertClose(v.upper, 4.7e-3, { rel: 1e-12, what: `${id}: 5.2 − 0.5 mm` });
    assert.equal(v.upperKind, "strict_rule");
    assert.match(v.upperReason, /sprue_exit/);
    assert.equal(v.cutterUpper, v.upper);
  }
  // Without it, the runner-cooling ceiling: the sprue (5.2 mm, longer than 1.5 × the part's)
  // already sets the cycle, and a runner as large as its exit cools as long.
  const noExit = designSpace(sprueFed(5.2, { size_rules: { sprue_exit: false } }));
  assertClose(variable(noExit, "R1").upper, 5.2e-3, { rel: 1e-12, what: "sprue allowance" });
  assert.match(variable(noExit, "R1").upperReason, /runner_cooling/);
  const none = designSpace(sprueFed(5.2, { size_rules: false }));
  assert.equal(variable(none, "R1").upper, 12e-3);
  // A steel-safe tool whose 5 mm runners break it today: held at today's size, no conflict.
  const steel = designSpace(sprueFed(5.2, { mode: "steel_safe" }));
  assert.equal(variable(steel, "R1").upper, 5e-3);
  assert.equal(variable(steel, "R1").lower, 5e-3);
  assert.deepEqual(steel.conflicts.filter((c) => c.startsWith("R")), []);
});

Deno.test("size rules that do not bind leave the design space as it was without them", () => {
  // A 25 mm sprue exit and a ratio of 100 put both ceilings far above max_diameter_mm (12 mm).
  for (const mode of ["new_tool", "trim", "steel_safe"] as const) {
    const on = designSpace(sprueFed(25, { mode, max_runner_cooling_ratio: 100 }));
    const off = designSpace(
      sprueFed(25, {
        mode,
        max_runner_cooling_ratio: 100,
        size_rules: { sprue_exit: false, runner_cooling: false, gate_hold: false },
      }),
    );
    assert.deepEqual(on.variables, off.variables, mode);
    assert.deepEqual(on.ordering, off.ordering, mode);
  }
});

Deno.test("gate hold rule: with a hold time, each gate is at least the size that freezes when it ends (plate for edge, cylinder for pin)", () => {
  const hold = 1.6;
  const withHold = (mode: "new_tool" | "trim", holdTime: number) =>
    designSpace(abs((w) => {
      w.process.hold_time_s = holdTime;
      w.goals = { mode };
      // G2 as an edge gate 3 mm wide, 1.2 mm deep (60 % of the wall).
      w.gates[1] = {
        id: "G2",
        from: "B",
        cavity: "C2",
        type: "edge",
        width_mm: 3,
        thickness_mm: 1.2,
        land_mm: 1,
        adjustable: true,
        min_thickness_mm: 0.5,
        max_thickness_mm: 2,
      };
    }));
  const space = withHold("new_tool", hold);
  // Freeze = centre at T_nf: pin D = √(t·4λ²α/L_cyl), edge s = √(t·π²α/L_plate).
  const pin = Math.sqrt(hold * 4 * LAMBDA ** 2 * ABS.alpha / cylinderLog(ABS.noFlow));
  const edge = Math.sqrt(hold * Math.PI ** 2 * ABS.alpha / plateLog(ABS.noFlow));
  const g1 = variable(space, "G1");
  const g2 = variable(space, "G2");
  assertClose(g1.lower, pin, { rel: 1e-9, what: "pin gate floor" });
  assertClose(g2.lower, edge, { rel: 1e-9, what: "edge gate floor" });
  assert.ok(pin > 1e-3 && edge > 1e-3, "the hold floors bind above the other lower bounds");
  for (const v of [g1, g2]) {
    assert.equal(v.lowerKind, "strict_rule");
    assert.match(v.lowerReason, /gate_hold/);
    assert.equal(v.cutterLower, v.lower);
  }
  // Four times the hold: twice the size; on a new tool that is past the gate ≤ 60 % of wall rule.
  const long = withHold("new_tool", 4 * hold);
  assertClose(variable(long, "G1").lower, 2 * pin, { rel: 1e-9, what: "4× hold" });
  assert.ok(
    long.conflicts.some((c) =>
      /^G1: gate freeze ≥ hold .*gate_hold.* is above gate ≤ 60 % of wall rule/.test(c)
    ),
  );
  // On a trim tool the floor never passes today's size (1.4 mm pin, 1.2 mm edge).
  const trim = withHold("trim", 4 * hold);
  assert.equal(variable(trim, "G1").lower, 1.4e-3);
  assert.equal(variable(trim, "G2").lower, 1.2e-3);
  // Without a hold time, or switched off: no floor.
  const none = designSpace(abs());
  const off = designSpace(abs((w) => {
    w.process.hold_time_s = hold;
    w.goals = { size_rules: { gate_hold: false } };
  }));
  assert.deepEqual(variable(off, "G1"), variable(none, "G1"));
  assert.equal(variable(none, "G1").lowerKind, "scenario");
});
