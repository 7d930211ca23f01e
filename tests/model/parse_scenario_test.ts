import assert from "node:assert/strict";
import { parseScenario, parseScenarioText, type ScenarioIssue } from "../../src/model/mod.ts";

// The ids the resin library ships (src/materials/library.ts); kept literal here so this
// test of the model layer does not depend on the library's contents.
const materialIds = new Set([
  "pbt-unfilled",
  "pp-homo",
  "abs-general",
  "pc-general",
  "pa66-unfilled",
  "pom-copolymer",
  "hdpe-injection",
]);

async function demo(name: string): Promise<Record<string, unknown>> {
  const url = new URL(`../../scenarios/${name}`, import.meta.url);
  return JSON.parse(await Deno.readTextFile(url));
}

function issuesOf(input: unknown): ScenarioIssue[] {
  const result = parseScenario(input, { materialIds });
  assert.equal(result.ok, false, "expected the scenario to be rejected");
  return result.ok ? [] : result.issues;
}

function hasIssue(issues: ScenarioIssue[], at: string, code?: string): boolean {
  return issues.some((i) => i.at === at && (code === undefined || i.code === code));
}

// deno-lint-ignore no-explicit-any
type Json = any;

Deno.test("every demo scenario in scenarios/ is valid", async () => {
  let count = 0;
  for await (const entry of Deno.readDir(new URL("../../scenarios/", import.meta.url))) {
    if (!entry.name.endsWith(".json")) continue;
    const result = parseScenario(await demo(entry.name), { materialIds });
    assert.ok(result.ok, `${entry.name}: ${JSON.stringify(!result.ok && result.issues)}`);
    count++;
  }
  assert.ok(count >= 3, `expected at least three demo scenarios, found ${count}`);
});

Deno.test("defaults are applied: switchover 98 %, full thermal model, metric cutters", async () => {
  const input: Json = await demo("family_four_housing.json");
  delete input.process.switchover_percent;
  delete input.goals;
  const result = parseScenario(input, { materialIds });
  assert.ok(result.ok);
  assert.equal(result.scenario.process.switchover_percent, 98);
  assert.equal(result.scenario.process.thermal, "full");
  assert.equal(result.scenario.goals.cutters, "metric");
  assert.equal(result.scenario.goals.mode, "new_tool");
});

Deno.test("unknown material id is reported at material with the known ids", async () => {
  const input: Json = await demo("family_four_housing.json");
  input.material = "unobtainium";
  const issues = issuesOf(input);
  assert.ok(hasIssue(issues, "material", "unknown_material"));
  assert.match(issues[0].message, /pbt-unfilled/);
});

Deno.test("zero and negative sizes are rejected at their JSON paths", async () => {
  const input: Json = await demo("family_four_housing.json");
  input.runners[2].diameter_mm = 0;
  input.gates[0].width_mm = -3;
  const issues = issuesOf(input);
  assert.ok(hasIssue(issues, "runners[2].diameter_mm"), JSON.stringify(issues));
  assert.ok(hasIssue(issues, "gates[0].width_mm"), JSON.stringify(issues));
});

Deno.test("a 500 mm gate is out of any plausible range", async () => {
  const input: Json = await demo("family_four_housing.json");
  input.gates[2].diameter_mm = 500;
  const issues = issuesOf(input);
  const found = issues.find((i) => i.at === "gates[2].diameter_mm");
  assert.ok(found, JSON.stringify(issues));
  assert.match(found.message, /not plausible/);
});

Deno.test("a gate thicker than its cavity wall is reported on the gate", async () => {
  const input: Json = await demo("family_four_housing.json");
  input.gates[0].thickness_mm = 2.5; // C1 wall is 2.0 mm
  input.gates[0].max_thickness_mm = 3;
  const issues = issuesOf(input);
  assert.ok(
    hasIssue(issues, "gates[0].thickness_mm", "gate_thicker_than_wall"),
    JSON.stringify(issues),
  );
});

Deno.test("unknown node ids, duplicate ids and self-loops are reported", async () => {
  const input: Json = await demo("family_four_housing.json");
  input.runners[0].to = "NOWHERE";
  input.gates[1].id = "R3";
  input.runners[3].to = input.runners[3].from;
  const issues = issuesOf(input);
  assert.ok(hasIssue(issues, "runners[0].to", "unknown_node"), JSON.stringify(issues));
  assert.ok(hasIssue(issues, "gates[1].id", "duplicate_id"), JSON.stringify(issues));
  assert.ok(hasIssue(issues, "runners[3].to", "self_loop"), JSON.stringify(issues));
});

Deno.test("a cavity without a gate and a node without elements are reported", async () => {
  const input: Json = await demo("family_four_housing.json");
  input.cavities.push({ ...input.cavities[3], id: "C5" });
  input.nodes.push({ id: "LONELY", x_mm: 5, y_mm: 5 });
  const issues = issuesOf(input);
  assert.ok(hasIssue(issues, "cavities[4].id", "cavity_without_gate"), JSON.stringify(issues));
  assert.ok(hasIssue(issues, "nodes[7].id", "orphan_node"), JSON.stringify(issues));
});

Deno.test("unknown fields and wrong types are named, never thrown", () => {
  const cases: unknown[] = [null, 42, "text", [], {}, { format: "evenfill.scenario/1" }];
  for (const input of cases) {
    const result = parseScenario(input, { materialIds });
    assert.equal(result.ok, false);
    if (!result.ok) {
      assert.ok(result.issues.length > 0);
      for (const i of result.issues) assert.equal(typeof i.message, "string");
    }
  }
});

Deno.test("bad JSON text becomes one invalid_json issue", () => {
  const result = parseScenarioText('{"format": ', { materialIds });
  assert.equal(result.ok, false);
  if (!result.ok) assert.equal(result.issues[0].code, "invalid_json");
});

Deno.test("an inline power-law material is accepted", async () => {
  const input: Json = await demo("family_four_housing.json");
  input.material = {
    id: "test-power-law",
    name: "power-law test fluid",
    source: "invented for a verification run",
    viscosity: { model: "power_law", K_Pa_sn: 7500, n: 0.38 },
    melt_density_kg_m3: 1000,
    solid_density_kg_m3: 1100,
    specific_heat_J_kgK: 2000,
    conductivity_W_mK: 0.2,
    no_flow_temperature_C: 200,
    ejection_temperature_C: 120,
    max_shear_rate_1_s: 50000,
  };
  const result = parseScenario(input, { materialIds });
  assert.ok(result.ok, JSON.stringify(!result.ok && result.issues));
});

Deno.test("the feed's internal ids are reserved: a node, runner or cavity named inlet/sprue/hot_drop is refused with its path", async () => {
  const text = await Deno.readTextFile(
    new URL("../../scenarios/family_four_housing.json", import.meta.url),
  );
  for (const reserved of ["inlet", "sprue", "hot_drop"]) {
    const wire = JSON.parse(text);
    const old = wire.feed.node;
    wire.feed.node = reserved;
    for (const n of wire.nodes) if (n.id === old) n.id = reserved;
    for (const r of wire.runners) {
      if (r.from === old) r.from = reserved;
      if (r.to === old) r.to = reserved;
    }
    const parsed = parseScenario(wire, { materialIds });
    assert.ok(!parsed.ok, `${reserved} accepted`);
    const hit = parsed.issues.find((i) => i.code === "reserved_id");
    assert.ok(hit, JSON.stringify(parsed.issues));
    assert.equal(hit.at, "nodes[0].id");
  }
});
