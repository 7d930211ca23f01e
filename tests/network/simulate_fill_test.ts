import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import type { Scenario, ScenarioWire } from "../../src/model/scenario_schema.ts";
import {
  LIBRARY_MATERIAL_IDS,
  runScenario,
  type ScenarioRun,
} from "../../src/network/simulate_scenario.ts";
import { singleLine } from "./_scenarios.ts";

function parse(wire: unknown): Scenario {
  const parsed = parseScenario(wire, { materialIds: LIBRARY_MATERIAL_IDS });
  assert.ok(parsed.ok, JSON.stringify(!parsed.ok && parsed.issues));
  return parsed.scenario;
}

function run(wire: unknown): ScenarioRun {
  const outcome = runScenario(parse(wire));
  assert.ok(outcome.ok, JSON.stringify(!outcome.ok && outcome));
  return outcome.run;
}

async function demo(name: string): Promise<ScenarioWire> {
  return JSON.parse(await Deno.readTextFile(new URL(`../../scenarios/${name}`, import.meta.url)));
}

// Power-law tube, Bird, Armstrong & Hassager, Dynamics of Polymeric Liquids vol. 1 (1987),
// ch. 4: ΔP = (2KL/R)·[(3n+1)Q/(πnR³)]ⁿ.
const tube = (K: number, n: number, Q: number, R: number, L: number) =>
  ((2 * K * L) / R) * Math.pow(((3 * n + 1) * Q) / (Math.PI * n * R ** 3), n);
// Power-law slit (W ≫ H), same source: ΔP = (2KL/H)·[2(2n+1)Q/(nWH²)]ⁿ.
const slit = (K: number, n: number, Q: number, W: number, H: number, L: number) =>
  ((2 * K * L) / H) * Math.pow((2 * (2 * n + 1) * Q) / (n * W * H * H), n);
// Linear cone R(x) = R0 + (R1 − R0)x/L: the tube law integrated along x (lubrication
// approximation, Tadmor & Gogos, Principles of Polymer Processing):
// ΔP = 2K[(3n+1)Q/(πn)]ⁿ · L/(3n(R1 − R0)) · (R0^(−3n) − R1^(−3n)).
const cone = (K: number, n: number, Q: number, R0: number, R1: number, L: number) =>
  2 * K * Math.pow(((3 * n + 1) * Q) / (Math.PI * n), n) * (L / (3 * n * (R1 - R0))) *
  (Math.pow(R0, -3 * n) - Math.pow(R1, -3 * n));
// Radial disk from r_g to R_f (Tadmor & Gogos, radial flow):
// P = (2K/H)[(2n+1)Q/(πnH²)]ⁿ (R_f^(1−n) − r_g^(1−n))/(1−n).
const disk = (K: number, n: number, Q: number, H: number, rg: number, Rf: number) =>
  ((2 * K) / H) * Math.pow(((2 * n + 1) * Q) / (Math.PI * n * H * H), n) *
  (Math.pow(Rf, 1 - n) - Math.pow(rg, 1 - n)) / (1 - n);

const K = 7500;
const n = 0.38;

Deno.test("isothermal power-law single line: element drops at end of fill equal the closed forms", () => {
  const r = run(singleLine({ feed: "sprue", gate: "pin", cavity: "strip", flowRate: 20 }));
  const Q = 20e-6;
  const drop = (id: string) => r.fill.elements.find((e) => e.id === id)!.pressureDropAtSwitchover;
  assertClose(drop("sprue"), cone(K, n, Q, 2e-3, 3.5e-3, 0.06), {
    rel: 1e-5,
    what: "sprue (cone)",
  });
  assertClose(drop("R1"), tube(K, n, Q, 3e-3, 0.05), { rel: 1e-5, what: "runner (tube)" });
  assertClose(drop("G1"), tube(K, n, Q, 0.6e-3, 1e-3), { rel: 1e-5, what: "pin gate (tube)" });
  // Strip cavity: width = V/(wall·flow length) = 20 cm³/(2 mm · 100 mm) = 100 mm.
  assertClose(drop("C1"), slit(K, n, Q, 0.1, 2e-3, 0.1), { rel: 1e-4, what: "cavity (slit)" });
});

Deno.test("single line: the cavity fills at exactly (feed + runner + gate + cavity volume)/Q", () => {
  const r = run(singleLine({ feed: "hot_drop", gate: "edge", cavity: "strip", flowRate: 25 }));
  const volume = r.network.feedSystemVolume + r.network.cavityVolume;
  // Hot drop π·2.5²·40 mm³, runner π·3²·50, edge gate 4·1.5·1, cavity 20 000 mm³ (geometry arithmetic).
  const expected = (Math.PI * 2.5 ** 2 * 40 + Math.PI * 9 * 50 + 4 * 1.5 * 1 + 20000) * 1e-9;
  assertClose(volume, expected, { rel: 1e-12, what: "shot volume" });
  assertClose(r.fill.cavities[0].fillTime, expected / 25e-6, { rel: 1e-9, what: "fill time" });
});

Deno.test("radial cavity: feed pressure follows the disk closed form while it fills", () => {
  const r = run(singleLine({ feed: "hot_drop", gate: "pin", cavity: "radial", flowRate: 15 }));
  const Q = 15e-6;
  const H = 2e-3;
  const rg = 1e-3;
  const upstream = tube(K, n, Q, 2.5e-3, 0.04) + tube(K, n, Q, 3e-3, 0.05) +
    tube(K, n, Q, 0.6e-3, 1e-3);
  const cavityStart = r.fill.elements.find((e) => e.id === "G1")!.fullTime;
  let checked = 0;
  for (const sample of r.fill.history) {
    const intoCavity = Q * (sample.time - cavityStart);
    if (intoCavity < 0.05 * 20e-6 || intoCavity > 0.99 * 20e-6) continue;
    const Rf = Math.sqrt(rg * rg + intoCavity / (Math.PI * H));
    assertClose(sample.feedPressure, upstream + disk(K, n, Q, H, rg, Rf), {
      rel: 1e-4,
      what: `feed pressure at t = ${sample.time}`,
    });
    checked++;
  }
  assert.ok(checked >= 5, `only ${checked} samples while the disk filled`);
});

Deno.test("mass is conserved at every recorded instant: Σ filled volumes = Q·t to 1e-9", async () => {
  for (
    const name of [
      "family_four_housing.json",
      "two_gate_frame_and_knob.json",
      "hot_drop_eight_caps.json",
    ]
  ) {
    const r = run(await demo(name));
    for (const s of r.fill.history) {
      if (s.injectedVolume === 0) continue;
      assertClose(s.filledVolume, s.injectedVolume, {
        rel: 1e-9,
        what: `${name} at t = ${s.time}`,
      });
    }
    assert.ok(r.fill.diagnostics.massBalanceError < 1e-9);
  }
});

Deno.test("two identical branches fill identically (symmetry)", async () => {
  const r = run(await demo("hot_drop_eight_caps.json"));
  const times = r.fill.cavities.map((c) => c.fillTime);
  for (const t of times) assertClose(t, times[0], { rel: 1e-9, what: "cap fill time" });
  assertClose(r.fill.imbalancePercent, 0, { abs: 1e-6, what: "imbalance of a symmetric H" });
});

Deno.test("family mold: the high-resistance cavity lags, and restricting the other branch reduces the lag", async () => {
  // Two equal parts, one behind a much longer runner: it must fill last; narrowing the
  // short branch's runner slows the leader and closes the gap (monotone, no number pasted).
  const wire = await demo("family_four_housing.json");
  const base = JSON.parse(JSON.stringify(wire)) as ScenarioWire;
  base.cavities = [
    { ...wire.cavities[1], id: "C1", name: "near" },
    { ...wire.cavities[1], id: "C2", name: "far" },
  ];
  base.gates = [
    { ...wire.gates[1], id: "G1", from: "NA", cavity: "C1" },
    { ...wire.gates[1], id: "G2", from: "NC", cavity: "C2" },
  ];
  base.nodes = wire.nodes.filter((x) => ["S", "JL", "JR", "NA", "NC"].includes(x.id));
  base.runners = wire.runners!.filter((x) => ["R1", "R2", "R3", "R5"].includes(x.id));
  base.runners.find((x) => x.id === "R5")!.length_mm = 160;
  const lag = (w: ScenarioWire) => {
    const r = run(w);
    const [near, far] = r.fill.cavities;
    assert.ok(far.fillTime > near.fillTime, "the far cavity must fill last");
    return (far.fillTime - near.fillTime) / far.fillTime;
  };
  const lags = [5, 4.5, 4].map((d) => {
    const w = JSON.parse(JSON.stringify(base)) as ScenarioWire;
    w.runners!.find((x) => x.id === "R3")!.diameter_mm = d;
    return lag(w);
  });
  assert.ok(lags[1] < lags[0] && lags[2] < lags[1], `lag must fall as R3 narrows: ${lags}`);
});

Deno.test("multi-gated cavity (a loop): the two gate flows add up to the cavity intake", async () => {
  // The knob's feed opened wide, so that the frame is the cavity still filling at switchover.
  const wire = await demo("two_gate_frame_and_knob.json");
  wire.runners!.find((x) => x.id === "R4")!.diameter_mm = 8;
  const knobGate = wire.gates.find((x) => x.id === "G3")!;
  if (knobGate.type === "tunnel") knobGate.diameter_mm = 1.5;
  const r = run(wire);
  const flow = (id: string) => r.fill.elements.find((e) => e.id === id)!.flowAtSwitchover;
  const g1 = flow("G1");
  const g2 = flow("G2");
  const cavity = flow("C1");
  assert.ok(g1 > 0 && g2 > 0, `both gates must carry flow: ${g1}, ${g2}`);
  // Mass balance at the cavity inlet (Kirchhoff's junction rule).
  assertClose(g1 + g2, cavity, { rel: 1e-9, what: "gate flows vs cavity intake" });
  // Symmetric branches: equal split (geometry is mirror-symmetric).
  assertClose(g1, g2, { rel: 1e-6, what: "mirror-symmetric gate flows" });
});

Deno.test("gate-size sweep: pressure and gate shear fall steeply while clamp force changes much less", async () => {
  // Common practice, no source: smaller gates raise injection pressure and gate shear
  // steeply, while clamp force changes little because the runner's projected area is small.
  // One branch of a family tool, invented for this check: a 9 cm³ bezel (22 cm² projected,
  // 1.4 mm wall) behind sprue → R2 → R5 → a round tunnel gate.
  const wire = await demo("family_four_housing.json");
  const line: ScenarioWire = {
    ...wire,
    nodes: [{ id: "S", x_mm: 0, y_mm: 0 }, { id: "JR", x_mm: 40, y_mm: 0 }, {
      id: "NC",
      x_mm: 40,
      y_mm: 35,
    }],
    runners: [
      { id: "R2", from: "S", to: "JR", diameter_mm: 6 },
      { id: "R5", from: "JR", to: "NC", diameter_mm: 5 },
    ],
    gates: [{
      id: "G3",
      from: "NC",
      cavity: "C3",
      type: "tunnel",
      section: "round",
      diameter_mm: 0.8,
      length_mm: 8,
      taper_angle_deg: 30,
    }],
    cavities: [{
      id: "C3",
      name: "bezel",
      volume_cm3: 9,
      projected_area_cm2: 22,
      wall_mm: 1.4,
      flow_length_mm: 70,
      fill_pattern: "strip",
    }],
    process: { ...wire.process, injection: { flow_rate_cm3_s: 15 } },
  };
  const sweep = [0.5, 0.6, 0.7, 0.84].map((d) => {
    const w = JSON.parse(JSON.stringify(line)) as ScenarioWire;
    (w.gates[0] as { diameter_mm: number }).diameter_mm = d;
    const r = run(w);
    return {
      pressure: r.fill.feedPressurePeak,
      shear: r.fill.cavities[0].gateShearRatePeak,
      clamp: r.fill.clampForcePeak,
    };
  });
  const first = sweep[0];
  const last = sweep[sweep.length - 1];
  for (let i = 1; i < sweep.length; i++) {
    assert.ok(sweep[i].pressure < sweep[i - 1].pressure, "pressure falls as the gate grows");
    assert.ok(sweep[i].shear < sweep[i - 1].shear, "gate shear falls as the gate grows");
  }
  const relative = (a: number, b: number) => Math.abs(a - b) / Math.max(a, b);
  const pressureChange = relative(first.pressure, last.pressure);
  const shearChange = relative(first.shear, last.shear);
  const clampChange = relative(first.clamp, last.clamp);
  assert.ok(shearChange > 0.6, `gate shear should fall by most of itself, fell ${shearChange}`);
  assert.ok(
    pressureChange > 2.5 * clampChange,
    `pressure change ${pressureChange} should dwarf clamp change ${clampChange}`,
  );
});

Deno.test("bad topology and bad input return errors, never a crash", async () => {
  const wire = await demo("family_four_housing.json");
  // A gate leaving a node that no runner reaches: the cavity is unreachable.
  const cut = JSON.parse(JSON.stringify(wire)) as ScenarioWire;
  cut.runners = cut.runners!.filter((x) => x.id !== "R6");
  const outcome = runScenario(parse(cut));
  assert.equal(outcome.ok, false);
  if (!outcome.ok && outcome.code === "invalid_scenario") {
    assert.ok(
      outcome.issues.some((i) => i.code === "cavity_unreachable"),
      JSON.stringify(outcome.issues),
    );
  } else assert.fail("expected invalid_scenario");
});

Deno.test("as the first cavity fills, every flow path drops the same total: feed pressure to a 0 Pa front", async () => {
  // Kirchhoff's loop rule on the network: each path from the injection point ends at a melt
  // front held at 0 Pa, so the drops along every path add up to the same feed pressure.
  for (const name of ["family_four_housing.json", "hot_drop_eight_caps.json"]) {
    const r = run(await demo(name));
    const totals = r.fill.paths.map((p) => p.pressureDropsAtFirstFull.reduce((a, b) => a + b, 0));
    assert.ok(totals.every((t) => t > 0), `${name}: ${totals}`);
    for (const t of totals) {
      assertClose(t, totals[0], { rel: 1e-6, what: `${name}: path totals at first full` });
    }
  }
});
