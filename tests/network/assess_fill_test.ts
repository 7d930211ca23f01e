import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import { materialById } from "../../src/materials/library.ts";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import type { Scenario, ScenarioWire } from "../../src/model/scenario_schema.ts";
import {
  CLAMP_RESERVE,
  fillWarnings,
  type FreezeEntry,
  type FreezeTimes,
  freezeTimes,
  type ThermalData,
} from "../../src/network/assess_fill.ts";
import { LIBRARY_MATERIAL_IDS, simulateScenario } from "../../src/network/simulate_scenario.ts";
import { unequalBranches } from "./_scenarios.ts";

const codes = (wire: ScenarioWire) => {
  const outcome = simulateScenario(wire);
  assert.ok(outcome.ok, JSON.stringify(!outcome.ok && outcome));
  return { codes: outcome.run.warnings.map((w) => w.code), run: outcome.run };
};

/** unequalBranches on ABS with its library window written out inline (220–260 °C melt, 50–80 °C mold). */
function abs(melt: number, mold: number, meltWindow: [number, number] = [220, 260]): ScenarioWire {
  const wire = unequalBranches("full");
  const material = structuredClone(materialById("abs-general")!);
  material.melt_temperature_range_C = meltWindow;
  material.mold_temperature_range_C = [50, 80];
  wire.material = material;
  wire.process.melt_temperature_C = melt;
  wire.process.mold_temperature_C = mold;
  return wire;
}

Deno.test("a melt temperature outside the resin's window is warned, at its threshold and not inside it", () => {
  assert.ok(!codes(abs(240, 60)).codes.includes("melt_outside_window"));
  assert.ok(!codes(abs(260, 60)).codes.includes("melt_outside_window"), "the top itself is inside");
  assert.ok(codes(abs(261, 60)).codes.includes("melt_outside_window"));
  assert.ok(codes(abs(215, 60)).codes.includes("melt_outside_window"));
});

Deno.test("a mold temperature outside the resin's window is warned", () => {
  assert.ok(!codes(abs(240, 50)).codes.includes("mold_outside_window"));
  assert.ok(codes(abs(240, 45)).codes.includes("mold_outside_window"));
  assert.ok(codes(abs(240, 85)).codes.includes("mold_outside_window"));
});

Deno.test("viscous heating past the window's top is warned on the hottest feed element, never on an isothermal run", () => {
  // A window whose top sits just above the melt: the gates' heating ΔT = ΔP/(ρ·cp) crosses it.
  const { codes: hot, run } = codes(abs(240, 60, [220, 241]));
  const hottest = run.fill.elements.filter((e) => e.kind !== "cavity")
    .reduce((a, b) => (b.temperatureAtSwitchover > a.temperatureAtSwitchover ? b : a));
  assert.ok(hottest.temperatureAtSwitchover > 241 + 273.15, "the gate does heat past 241 °C");
  assert.ok(hot.includes("heating_past_window"));
  const warning = run.warnings.find((w) => w.code === "heating_past_window")!;
  assert.equal(warning.element, hottest.id);
  // A roomy window: no warning.
  assert.ok(!codes(abs(240, 60, [220, 300])).codes.includes("heating_past_window"));
  const iso = abs(240, 60, [220, 241]);
  iso.process.thermal = "isothermal";
  assert.ok(!codes(iso).codes.includes("heating_past_window"));
});

Deno.test("contradictory resin data are validation errors with their paths", () => {
  const at = (wire: ScenarioWire) => {
    const parsed = parseScenario(wire, { materialIds: LIBRARY_MATERIAL_IDS });
    assert.ok(!parsed.ok);
    return parsed.issues.map((i) => `${i.at} ${i.code}`);
  };
  const ejection = abs(240, 60);
  const m = ejection.material as Exclude<ScenarioWire["material"], string>;
  m.ejection_temperature_C = m.no_flow_temperature_C + 5;
  assert.ok(at(ejection).includes("material.ejection_temperature_C ejection_above_no_flow"));
  const reversed = abs(240, 60, [260, 220]);
  assert.ok(at(reversed).includes("material.melt_temperature_range_C range_reversed"));
  const cold = abs(240, 60);
  (cold.material as typeof m).no_flow_temperature_C = 245;
  assert.ok(at(cold).includes("process.melt_temperature_C melt_below_no_flow"));
});

// ---- The remaining rule-of-thumb warnings at their thresholds, through fillWarnings itself on one
// simulated run, with the scenario's limits set to the simulated values by hand: exactly at a
// threshold stays quiet, a hair past it warns (the thresholds are common practice, no source).

function baseRun() {
  const outcome = simulateScenario(unequalBranches("full"));
  assert.ok(outcome.ok, JSON.stringify(!outcome.ok && outcome));
  return outcome.run;
}

const RUN = baseRun();
const THERMAL: ThermalData = {
  diffusivity: RUN.material.thermalDiffusivity,
  meltTemperature: 240 + 273.15,
  moldTemperature: 50 + 273.15,
  noFlowTemperature: RUN.material.noFlowTemperature,
  ejectionTemperature: RUN.material.ejectionTemperature,
  maxShearRate: RUN.material.maxShearRate,
};

/** Warning codes of fillWarnings on the run with a modified scenario and freeze summary. */
function warned(
  change: (s: Scenario) => void,
  freeze: FreezeTimes = RUN.freeze,
): string[] {
  const scenario = structuredClone(RUN.scenario);
  change(scenario);
  return fillWarnings({ scenario, network: RUN.network, fill: RUN.fill }, {
    thermal: THERMAL,
    freeze,
  }).map((w) => `${w.code}${w.element ? `:${w.element}` : ""}`);
}
const HAIR = 1e-9;

Deno.test("gate shear over the limit: warned just past the simulated peak, not at it", () => {
  const peak = Math.max(...RUN.fill.cavities.map((c) => c.gateShearRatePeak));
  const at = RUN.fill.cavities.find((c) => c.gateShearRatePeak === peak)!.gateAtPeak;
  assert.ok(
    !warned((s) => (s.goals.gate_shear_limit_1_s = peak)).some((c) =>
      c.startsWith("gate_shear_over_limit")
    ),
  );
  assert.ok(
    warned((s) => (s.goals.gate_shear_limit_1_s = peak * (1 - HAIR))).includes(
      `gate_shear_over_limit:${at}`,
    ),
  );
});

Deno.test("pressure: over the target share and over the machine, each at its threshold", () => {
  const peakMPa = RUN.fill.feedPressurePeak / 1e6;
  // Machine at the peak (a hair above: the MPa conversion may round) and the share 1: neither.
  const none = warned((s) => {
    s.machine.max_injection_pressure_MPa = peakMPa * (1 + HAIR);
    s.goals.max_pressure_fraction = 1;
  });
  assert.ok(!none.includes("pressure_over_machine") && !none.includes("pressure_over_target"));
  // Allowed = 0.8 × machine at the peak (a hair above), then a hair under: the target warning.
  assert.ok(
    !warned((s) => {
      s.machine.max_injection_pressure_MPa = peakMPa / 0.8;
      s.goals.max_pressure_fraction = 0.8 * (1 + HAIR);
    }).includes("pressure_over_target"),
  );
  const target = warned((s) => {
    s.machine.max_injection_pressure_MPa = peakMPa / 0.8;
    s.goals.max_pressure_fraction = 0.8 * (1 - HAIR);
  });
  assert.ok(target.includes("pressure_over_target") && !target.includes("pressure_over_machine"));
  // Machine a hair under the peak: the machine warning, which replaces the target one.
  const machine = warned((s) => (s.machine.max_injection_pressure_MPa = peakMPa * (1 - HAIR)));
  assert.ok(machine.includes("pressure_over_machine") && !machine.includes("pressure_over_target"));
});

Deno.test("clamp reserve: warned when 1.2 × the peak force exceeds the clamp", () => {
  const needKN = (RUN.fill.clampForcePeak * CLAMP_RESERVE) / 1e3;
  assert.equal(CLAMP_RESERVE, 1.2, "press makers' 20 % reserve (common practice, no source)");
  assert.ok(
    !warned((s) => (s.machine.clamp_force_kN = needKN * (1 + HAIR))).includes("clamp_reserve_low"),
  );
  assert.ok(
    warned((s) => (s.machine.clamp_force_kN = needKN * (1 - HAIR))).includes("clamp_reserve_low"),
  );
});

Deno.test("imbalance over the target: warned just under the simulated imbalance, not at it", () => {
  const imbalance = RUN.fill.imbalancePercent;
  assert.ok(imbalance > 0.1, `the unequal branches are unbalanced (${imbalance} %)`);
  assert.ok(
    !warned((s) => (s.goals.max_imbalance_percent = imbalance)).includes("imbalance_over_target"),
  );
  assert.ok(
    warned((s) => (s.goals.max_imbalance_percent = imbalance * (1 - HAIR))).includes(
      "imbalance_over_target",
    ),
  );
});

Deno.test("gate size rules: round gates 25–60 % of the wall, edge gates 50–80 %, bounds inside", () => {
  // Wall 2 mm: pin gate 0.5 and 1.2 mm are the bounds; 0.49 and 1.21 mm are outside.
  const pin = (d: number) =>
    warned((s) => ((s.gates[0] as unknown as Record<string, unknown>).diameter_mm = d));
  assert.ok(!pin(0.5).includes("gate_size_rule:G1"));
  assert.ok(!pin(1.2).includes("gate_size_rule:G1"));
  assert.ok(pin(0.49).includes("gate_size_rule:G1"));
  assert.ok(pin(1.21).includes("gate_size_rule:G1"));
  // The same gate as an edge gate: 1.0 and 1.6 mm deep are the bounds.
  const edge = (t: number) =>
    warned((s) => {
      const g = s.gates[0] as unknown as Record<string, unknown>;
      g.type = "edge";
      g.thickness_mm = t;
      g.width_mm = 3;
    });
  assert.ok(!edge(1.0).includes("gate_size_rule:G1"));
  assert.ok(!edge(1.6).includes("gate_size_rule:G1"));
  assert.ok(edge(0.99).includes("gate_size_rule:G1"));
  assert.ok(edge(1.61).includes("gate_size_rule:G1"));
});

Deno.test("runner under wall + 1.5 mm is warned, at the rule it is not", () => {
  // Wall 2 mm downstream of R1: the rule is 3.5 mm.
  assert.ok(!warned((s) => (s.runners[0].diameter_mm = 3.5)).includes("runner_below_wall_rule:R1"));
  assert.ok(warned((s) => (s.runners[0].diameter_mm = 3.49)).includes("runner_below_wall_rule:R1"));
});

Deno.test("freeze order: gate after part, runner before part, runner setting the cycle", () => {
  const entry = (id: string, kind: FreezeEntry["kind"], freezeTime: number): FreezeEntry => ({
    id,
    kind,
    size: 1e-3,
    freezeTime,
    coolingTime: 2 * freezeTime,
    formula: "plate_centre",
  });
  const freeze = (gate: number, runner: number, partCooling: number, runnerCooling: number) => ({
    entries: [
      entry("C1", "part", 10),
      entry("C2", "part", 10),
      entry("G1", "gate", gate),
      entry("G2", "gate", 1),
      entry("R1", "runner", runner),
      entry("R2", "runner", 20),
    ],
    partCoolingTime: partCooling,
    runnerCoolingTime: runnerCooling,
    cycleSetBy: "runner R1",
  });
  // Gate G1 freezing exactly with its part counts as after (the code's ≥); a hair sooner is fine.
  assert.ok(warned(() => {}, freeze(10, 20, 30, 30)).includes("gate_freezes_after_part:G1"));
  assert.ok(
    !warned(() => {}, freeze(10 * (1 - HAIR), 20, 30, 30)).some((c) =>
      c.startsWith("gate_freezes_after_part")
    ),
  );
  // Runner R1 freezing with the part is fine; a hair sooner is warned.
  assert.ok(!warned(() => {}, freeze(1, 10, 30, 30)).includes("runner_freezes_before_part:R1"));
  assert.ok(
    warned(() => {}, freeze(1, 10 * (1 - HAIR), 30, 30)).includes("runner_freezes_before_part:R1"),
  );
  // Runner cooling equal to the part's: nothing; longer: it sets the cycle.
  assert.ok(!warned(() => {}, freeze(1, 20, 30, 30)).includes("runner_sets_cycle"));
  assert.ok(warned(() => {}, freeze(1, 20, 30, 30 * (1 + HAIR))).includes("runner_sets_cycle"));
});

Deno.test("freeze times: plate centre line for walls, cylinder axis for round channels, by the published closed forms", () => {
  const freeze = freezeTimes(RUN.network, THERMAL);
  const alpha = THERMAL.diffusivity;
  const tm = THERMAL.meltTemperature;
  const tw = THERMAL.moldTemperature;
  // Plate, centre line, first Fourier term (Menges, Michaeli & Mohren, How to Make Injection
  // Molds): t = s²/(π²α)·ln[(4/π)(Tm − Tw)/(Te − Tw)].
  const plate = (s: number, te: number) =>
    (s * s) / (Math.PI ** 2 * alpha) * Math.log((4 / Math.PI) * (tm - tw) / (te - tw));
  // Cylinder, axis, first term (Carslaw & Jaeger, Conduction of Heat in Solids, 2nd ed., §7.6):
  // t = D²/(4λ²α)·ln[(2/(λ·J1(λ)))·(Tm − Tw)/(Te − Tw)], λ = j0,1 = 2.404825558 and
  // J1(j0,1) = 0.5191474973 (Abramowitz & Stegun, Table 9.5).
  const lambda = 2.404825558;
  const cylinder = (d: number, te: number) =>
    (d * d) / (4 * lambda ** 2 * alpha) *
    Math.log((2 / (lambda * 0.5191474973)) * (tm - tw) / (te - tw));
  const part = freeze.entries.find((x) => x.id === "C1")!;
  assert.equal(part.formula, "plate_centre");
  assertClose(part.size, 2e-3, { rel: 1e-12, what: "part wall" });
  assertClose(part.freezeTime, plate(2e-3, THERMAL.noFlowTemperature), {
    rel: 1e-8,
    what: "part freeze",
  });
  assertClose(part.coolingTime, plate(2e-3, THERMAL.ejectionTemperature), {
    rel: 1e-8,
    what: "part cooling",
  });
  const runner = freeze.entries.find((x) => x.id === "R1")!;
  assert.equal(runner.formula, "cylinder_centre");
  assertClose(runner.freezeTime, cylinder(5e-3, THERMAL.noFlowTemperature), {
    rel: 1e-8,
    what: "runner freeze",
  });
  assertClose(runner.coolingTime, cylinder(5e-3, THERMAL.ejectionTemperature), {
    rel: 1e-8,
    what: "runner cooling",
  });
  const gate = freeze.entries.find((x) => x.id === "G1")!;
  assert.equal(gate.formula, "cylinder_centre", "a pin gate is round");
  assertClose(gate.freezeTime, cylinder(1.4e-3, THERMAL.noFlowTemperature), {
    rel: 1e-8,
    what: "gate freeze",
  });
  // The hot drop never freezes: no entry.
  assert.ok(!freeze.entries.some((x) => x.kind === "sprue"));
  // The cycle: the 5 mm runner (D²/23.13α) outlasts the 2 mm wall (s²/π²α).
  assertClose(freeze.runnerCoolingTime, runner.coolingTime, {
    rel: 1e-12,
    what: "runner cooling time",
  });
  assertClose(freeze.partCoolingTime, part.coolingTime, { rel: 1e-12, what: "part cooling time" });
  assert.ok(freeze.runnerCoolingTime > freeze.partCoolingTime);
  assert.equal(freeze.cycleSetBy, "runner R1");
});

// ---- The practical size rules' warnings (issue 13.3) at their thresholds.

Deno.test("sprue exit: a runner leaving it within 0.5 mm of its size is warned, at 0.5 mm it is not (common practice)", () => {
  const sprueFed = (runner: number) => {
    const wire = unequalBranches("full");
    wire.feed = {
      kind: "sprue",
      node: "J",
      length_mm: 50,
      entry_diameter_mm: 3,
      exit_diameter_mm: 5.5,
    };
    wire.runners![0].diameter_mm = runner;
    return codes(wire).run.warnings.filter((w) => w.code === "sprue_exit_below_margin")
      .map((w) => w.element);
  };
  assert.deepEqual(sprueFed(5), []);
  assert.deepEqual(sprueFed(5.01), ["R1"]);
  // A hot drop has no sprue exit to compare with.
  assert.ok(!RUN.warnings.some((w) => w.code === "sprue_exit_below_margin"));
});

/** A freeze summary with one part cooling `part` s and the given runner and sprue cooling times. */
function cooling(part: number, cold: Record<string, number>): FreezeTimes {
  const entry = (id: string, kind: FreezeEntry["kind"], coolingTime: number): FreezeEntry => ({
    id,
    kind,
    size: 1e-3,
    freezeTime: coolingTime / 2,
    coolingTime,
    formula: "cylinder_centre",
  });
  const entries = [
    entry("C1", "part", part),
    ...Object.entries(cold).map(([id, t]) => entry(id, id === "sprue" ? "sprue" : "runner", t)),
  ];
  return {
    entries,
    partCoolingTime: part,
    runnerCoolingTime: Math.max(...Object.values(cold)),
    cycleSetBy: "runner",
  };
}

Deno.test("runner cooling: over ratio × the thickest part's it is a caution naming the ratio, at it not; a longer sprue is the limit", () => {
  // goals.max_runner_cooling_ratio defaults to 1.5: part 10 s allows 15 s.
  const over = (freeze: FreezeTimes, ratio?: number) =>
    warned((s) => ratio !== undefined && (s.goals.max_runner_cooling_ratio = ratio), freeze)
      .filter((c) => c.startsWith("runner_cooling_over_ratio"));
  assert.deepEqual(over(cooling(10, { R1: 15, R2: 12 })), []);
  assert.deepEqual(over(cooling(10, { R1: 15 * (1 + HAIR), R2: 12 })), [
    "runner_cooling_over_ratio:R1",
  ]);
  assert.deepEqual(over(cooling(10, { R1: 30 }), 3), []);
  // A sprue at 20 s breaks the rule itself; a runner up to 20 s adds nothing to the cycle.
  assert.deepEqual(over(cooling(10, { sprue: 20, R1: 20 })), ["runner_cooling_over_ratio:sprue"]);
  assert.deepEqual(over(cooling(10, { sprue: 20, R1: 20 * (1 + HAIR) })), [
    "runner_cooling_over_ratio:sprue",
    "runner_cooling_over_ratio:R1",
  ]);
  // runner_sets_cycle: a note between 1× and the ratio, a caution naming the ratio past it.
  const setsCycle = (freeze: FreezeTimes) => {
    const scenario = structuredClone(RUN.scenario);
    return fillWarnings({ scenario, network: RUN.network, fill: RUN.fill }, {
      thermal: THERMAL,
      freeze,
    }).find((w) => w.code === "runner_sets_cycle");
  };
  assert.equal(setsCycle(cooling(10, { R1: 15 }))?.severity, "info");
  const caution = setsCycle(cooling(10, { R1: 15 * (1 + HAIR) }));
  assert.equal(caution?.severity, "caution");
  assert.match(caution!.message, /1\.5 × of goals\.max_runner_cooling_ratio/);
});

Deno.test("gate hold: a gate freezing before the hold time ends is warned, freezing at its end is not", () => {
  const g1 = RUN.freeze.entries.find((x) => x.id === "G1")!;
  const g2 = RUN.freeze.entries.find((x) => x.id === "G2")!;
  const hold = (t: number | undefined) =>
    warned((s) => (s.process.hold_time_s = t)).filter((c) =>
      c.startsWith("gate_freezes_before_hold")
    );
  assert.deepEqual(hold(undefined), []);
  // Both 1.4 mm pin gates freeze at the same time.
  assert.equal(g1.freezeTime, g2.freezeTime);
  assert.deepEqual(hold(g1.freezeTime), []);
  assert.deepEqual(hold(g1.freezeTime * (1 + HAIR)), [
    "gate_freezes_before_hold:G1",
    "gate_freezes_before_hold:G2",
  ]);
});
