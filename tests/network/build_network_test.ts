import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import type { Scenario, ScenarioWire } from "../../src/model/scenario_schema.ts";
import { buildNetwork, TRAPEZOID_DRAFT_RAD } from "../../src/network/build_network.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";

// Volumes and areas by hand from elementary geometry (m, m², m³; 1 mm = 1e-3 m):
// a sprue is a conical frustum, V = πL(R1² + R1R2 + R2²)/3; a round runner a cylinder, πR²L;
// a trapezoid of top width w, depth h and side draft θ has bottom b = w − 2h·tan θ and area
// (w + b)h/2; an edge gate is a box, width × thickness × land.

const MM = 1e-3;

/** A sprue feeding S, a round runner S→J (40 mm), a trapezoid J→A (30 mm), two edge gates. */
function wire(): ScenarioWire {
  const cavity = (id: string) => ({
    id,
    volume_cm3: 12,
    projected_area_cm2: 30,
    wall_mm: 2,
    flow_length_mm: 80,
    fill_pattern: "strip" as const,
  });
  return {
    format: "evenfill.scenario/1",
    name: "build_network hand check",
    material: "pp-homo",
    process: {
      melt_temperature_C: 230,
      mold_temperature_C: 40,
      injection: { flow_rate_cm3_s: 20 },
    },
    machine: { max_injection_pressure_MPa: 150, clamp_force_kN: 500 },
    feed: { kind: "sprue", node: "S", length_mm: 60, entry_diameter_mm: 4, exit_diameter_mm: 7 },
    nodes: [
      { id: "S", x_mm: 0, y_mm: 0 },
      { id: "J", x_mm: 40, y_mm: 0 },
      { id: "A", x_mm: 40, y_mm: 30 },
    ],
    runners: [
      { id: "R1", from: "S", to: "J", shape: "round", diameter_mm: 6 },
      {
        id: "R2",
        from: "J",
        to: "A",
        shape: "trapezoid",
        diameter_mm: 5,
        depth_mm: 4,
        width_mm: 6,
      },
    ],
    gates: [
      {
        id: "G1",
        from: "J",
        cavity: "C1",
        type: "edge",
        width_mm: 3,
        thickness_mm: 1.2,
        land_mm: 1,
      },
      {
        id: "G2",
        from: "A",
        cavity: "C2",
        type: "edge",
        width_mm: 4,
        thickness_mm: 1.0,
        land_mm: 1.5,
      },
    ],
    cavities: [cavity("C1"), cavity("C2")],
  };
}

function parse(w: ScenarioWire): Scenario {
  const parsed = parseScenario(w, { materialIds: LIBRARY_MATERIAL_IDS });
  assert.ok(parsed.ok, JSON.stringify(!parsed.ok && parsed.issues));
  return parsed.scenario;
}

Deno.test("buildNetwork: nodes and elements of a sprue, two runners, two gates, two cavities", () => {
  const built = buildNetwork(parse(wire()));
  assert.ok(built.ok);
  const n = built.network;
  // Nodes: 3 junctions + the injection point + one inlet node per cavity = 6.
  assert.equal(n.nodes.length, 3 + 1 + 2);
  assert.equal(n.nodes.filter((x) => x.role === "cavity").length, 2);
  assert.equal(n.nodes[n.inlet].role, "inlet");
  // Elements: sprue + 2 runners + 2 gates + 2 cavities = 7.
  assert.equal(n.elements.length, 7);
  assert.deepEqual(n.elements.map((e) => e.kind).sort(), [
    "cavity",
    "cavity",
    "feed",
    "gate",
    "gate",
    "runner",
    "runner",
  ]);
  assert.equal(n.elements[n.feed].id, "sprue");
  // Each cavity element runs from its inlet node to the flow front (to = −1) and is fed by its gate.
  for (const c of n.cavities) {
    const e = n.elements[c.element];
    assert.equal(e.to, -1);
    assert.equal(c.gates.length, 1);
    assert.equal(n.elements[c.gates[0]].to, e.from);
  }
});

Deno.test("buildNetwork: volumes and projected areas by hand", () => {
  const built = buildNetwork(parse(wire()));
  assert.ok(built.ok);
  const n = built.network;
  const el = (id: string) => n.elements.find((e) => e.id === id)!;
  const tol = { rel: 1e-12 };
  // Sprue: frustum L = 60 mm, R1 = 2 mm, R2 = 3.5 mm: π·60·(4 + 7 + 12.25)/3 mm³ = 1461.0 mm³.
  const sprue = (Math.PI * 60 * (2 * 2 + 2 * 3.5 + 3.5 * 3.5)) / 3 * MM ** 3;
  assertClose(el("sprue").volume, sprue, { ...tol, what: "sprue frustum" });
  assert.equal(el("sprue").projectedArea, 0, "the sprue stands across the parting plane");
  // R1: round 6 mm over the 40 mm between S and J: π·3²·40 mm³; projected 6 × 40 mm².
  assertClose(el("R1").volume, Math.PI * 9 * 40 * MM ** 3, { ...tol, what: "R1 volume" });
  assertClose(el("R1").projectedArea, 6 * 40 * MM ** 2, { ...tol, what: "R1 area" });
  // R2: trapezoid, top 6 mm, depth 4 mm, 10° draft: bottom 6 − 8·tan 10° = 4.589 mm, over 30 mm;
  // the parting plane sees the top width.
  assert.equal(TRAPEZOID_DRAFT_RAD, (10 * Math.PI) / 180, "10° side draft (common practice)");
  const bottom = 6 - 2 * 4 * Math.tan((10 * Math.PI) / 180);
  assertClose(el("R2").volume, ((6 + bottom) / 2) * 4 * 30 * MM ** 3, { ...tol, what: "R2" });
  assertClose(el("R2").projectedArea, 6 * 30 * MM ** 2, { ...tol, what: "R2 area" });
  // Edge gates: boxes 3 × 1.2 × 1 and 4 × 1.0 × 1.5 mm³; projected width × land.
  assertClose(el("G1").volume, 3 * 1.2 * 1 * MM ** 3, { ...tol, what: "G1 volume" });
  assertClose(el("G2").volume, 4 * 1.0 * 1.5 * MM ** 3, { ...tol, what: "G2 volume" });
  assertClose(el("G1").projectedArea, 3 * 1 * MM ** 2, { ...tol, what: "G1 area" });
  assertClose(el("G2").projectedArea, 4 * 1.5 * MM ** 2, { ...tol, what: "G2 area" });
  // Cavities as given: 12 cm³ = 12e-6 m³, 30 cm² = 30e-4 m².
  for (const c of n.cavities) {
    assertClose(c.volume, 12e-6, { ...tol, what: `${c.id} volume` });
    assertClose(c.projectedArea, 30e-4, { ...tol, what: `${c.id} area` });
    assertClose(c.wall, 2 * MM, { ...tol, what: `${c.id} wall` });
  }
  // Totals: the cold feed system is sprue + runners + gates; cavities 24 cm³.
  const feedSystem = ["sprue", "R1", "R2", "G1", "G2"].reduce((s, id) => s + el(id).volume, 0);
  assertClose(n.feedSystemVolume, feedSystem, { ...tol, what: "feed system" });
  assertClose(n.coldRunnerVolume, feedSystem, { ...tol, what: "cold runner (no hot drop)" });
  assertClose(n.cavityVolume, 24e-6, { ...tol, what: "cavity volume" });
});

Deno.test("buildNetwork: a hot drop is heated and not part of the cold runner volume", () => {
  const w = wire();
  w.feed = { kind: "hot_drop", node: "S", length_mm: 50, diameter_mm: 5, tip_temperature_C: 235 };
  const built = buildNetwork(parse(w));
  assert.ok(built.ok);
  const n = built.network;
  const drop = n.elements[n.feed];
  assert.equal(drop.heated, true);
  assertClose(drop.volume, Math.PI * 2.5 * 2.5 * 50 * MM ** 3, { rel: 1e-12, what: "hot drop" });
  assertClose(n.feedSystemVolume - n.coldRunnerVolume, drop.volume, {
    rel: 1e-9,
    what: "hot drop left out of the cold runner",
  });
});

Deno.test("buildNetwork: unreachable cavities and nodes are issues with JSON paths", () => {
  const w = wire();
  // Node B with a gate to a third cavity, joined to nothing upstream.
  w.nodes!.push({ id: "B", x_mm: 100, y_mm: 0 });
  w.gates!.push({
    id: "G3",
    from: "B",
    cavity: "C3",
    type: "edge",
    width_mm: 3,
    thickness_mm: 1.2,
    land_mm: 1,
  });
  w.cavities!.push({ ...w.cavities![0], id: "C3" });
  const built = buildNetwork(parse(w));
  assert.ok(!built.ok);
  const found = built.issues.map((i) => `${i.at} ${i.code}`).sort();
  assert.deepEqual(found, ["cavities[2].id cavity_unreachable", "nodes[3].id node_unreachable"]);
  for (const i of built.issues) {
    assert.equal(i.at.replace(/\[(\d+)\]/g, ".$1"), i.path.join("."), "at and path agree");
    assert.ok(i.message.length > 10);
  }
});
