import assert from "node:assert/strict";
import { assertClose } from "./assert_close.ts";
import { WindowSchema } from "../src/wire/window.ts";

const cli = new URL("../src/cli.ts", import.meta.url).pathname;
const config = new URL("../deno.json", import.meta.url).pathname;

async function run(args: string[]) {
  const out = await new Deno.Command(Deno.execPath(), {
    args: ["run", "--config", config, "--allow-read", "--allow-write", cli, ...args],
    stdout: "piped",
    stderr: "piped",
    env: { NO_COLOR: "1" },
  }).output();
  const decode = (b: Uint8Array) => new TextDecoder().decode(b);
  return { code: out.code, stdout: decode(out.stdout), stderr: decode(out.stderr) };
}

Deno.test("simulate --json prints evenfill.result/1 with the stable field names", async () => {
  const r = await run(["simulate", "scenarios/family_four_housing.json", "--json"]);
  assert.equal(r.code, 0, r.stderr);
  const result = JSON.parse(r.stdout);
  assert.equal(result.format, "evenfill.result/1");
  for (
    const field of [
      "fill_time_s",
      "imbalance_percent",
      "feed_pressure_peak_MPa",
      "clamp_force_peak_kN",
      "shot_mass_g",
      "runner_volume_cm3",
      "runner_mass_g",
      "cavities",
      "elements",
      "freeze",
      "warnings",
      "cautions",
      "diagnostics",
    ]
  ) assert.ok(field in result, `missing ${field}`);
  // Imbalance is (t_max − t_min)/t_max × 100 over the cavity fill times (common practice, no source).
  const times: number[] = result.cavities.map((c: { fill_time_s: number }) => c.fill_time_s);
  const expected = ((Math.max(...times) - Math.min(...times)) / Math.max(...times)) * 100;
  assertClose(result.imbalance_percent, expected, {
    rel: 1e-3,
    what: "imbalance from the cavity fill times",
  });
  assert.ok(
    result.cautions.some((c: string) => /press maker/.test(c)),
    "the press-maker caution is carried",
  );
});

Deno.test("simulate on a bad scenario exits 2 and names the JSON path, no stack trace", async () => {
  const dir = await Deno.makeTempDir();
  const file = `${dir}/bad.json`;
  const wire = JSON.parse(await Deno.readTextFile("scenarios/family_four_housing.json"));
  wire.gates[0].thickness_mm = 0;
  await Deno.writeTextFile(file, JSON.stringify(wire));
  const r = await run(["simulate", file]);
  await Deno.remove(dir, { recursive: true });
  assert.equal(r.code, 2);
  assert.match(r.stderr, /gates\[0\]\.thickness_mm/);
  assert.doesNotMatch(r.stderr, /at .*\.ts:\d+/);
});

Deno.test("simulate --csv prints the fill history with a header and one column per cavity", async () => {
  const r = await run(["simulate", "scenarios/hot_drop_eight_caps.json", "--csv"]);
  assert.equal(r.code, 0, r.stderr);
  const [header, ...rows] = r.stdout.trim().split("\n");
  const columns = header.split(",");
  assert.equal(columns.length, 4 + 8);
  assert.ok(rows.length > 5);
  for (const row of rows) assert.equal(row.split(",").length, columns.length);
});

Deno.test("optimize --csv on the steel-safe demo: catalogue cutters, every change steel-safe", async () => {
  const r = await run(["optimize", "scenarios/two_gate_frame_and_knob.json", "--csv"]);
  assert.equal(r.code, 0, r.stderr);
  const lines = r.stdout.trimEnd().split("\r\n").map((l) => l.split(","));
  const header = lines[0];
  assert.equal(header[0], "step");
  assert.ok(lines.length > 1, "the demo's tool needs changes");
  const at = (row: string[], name: string) => row[header.indexOf(name)];
  // Metric ball-end series (common practice, no source): 2–3.5 mm in half steps, then whole mm.
  const metric = new Set([2, 2.5, 3, 3.5, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13]);
  // Step 0 is today's tool, no change; the changes follow.
  assert.equal(at(lines[1], "step"), "0");
  lines.splice(1, 1);
  for (const row of lines.slice(1)) {
    assert.equal(at(row, "steel_safe"), "yes");
    assert.equal(at(row, "action"), "enlarge");
    assert.ok(Number(at(row, "to_mm")) >= Number(at(row, "from_mm")));
    if (at(row, "kind") === "runner") assert.ok(metric.has(Number(at(row, "to_mm"))));
  }
  assert.deepEqual(
    lines.slice(1).map((row) => Number(at(row, "step"))),
    lines.slice(1).map((_, i) => i + 1),
  );
});

Deno.test("optimize --slopes: finite differences are accepted, an unknown source exits 1 and says why", async () => {
  const bad = await run([
    "optimize",
    "scenarios/two_gate_frame_and_knob.json",
    "--slopes",
    "adjoint",
  ]);
  assert.equal(bad.code, 1);
  assert.match(bad.stderr, /--slopes must be tangent or finite_difference, got adjoint/);
  const fd = await run([
    "optimize",
    "scenarios/two_gate_frame_and_knob.json",
    "--slopes",
    "finite_difference",
    "--json",
  ]);
  const json = JSON.parse(fd.stdout);
  // Exit 0 when it converged, 4 when it ended otherwise (the CLI's documented exit codes).
  assert.equal(fd.code, json.status === "converged" ? 0 : 4, fd.stderr);
  assert.equal(json.slopes, "finite_difference", "the flag reached the optimizer");
  // Steel-safe demo: whatever the slopes, nothing may shrink.
  for (const c of json.changes) assert.ok(c.to_mm >= c.from_mm, `${c.element} shrinks`);
});

Deno.test("CLI: unknown options are errors; --json prints a bad file's issues as JSON in plain words; a BOM is fine", async () => {
  const typo = await run(["simulate", "scenarios/family_four_housing.json", "--jsn"]);
  assert.equal(typo.code, 2);
  assert.match(typo.stderr, /unknown option --jsn/);
  const dir = await Deno.makeTempDir();
  try {
    const wire = JSON.parse(await Deno.readTextFile("scenarios/family_four_housing.json"));
    delete wire.$schema;
    wire.process.injection = { flow_rate_cm3_s: 30, fill_time_s: 1 };
    Object.assign(wire.runners[0], { shape: "trapezoid", width_mm: 1, depth_mm: 5 });
    const bad = `${dir}/bad.json`;
    await Deno.writeTextFile(bad, JSON.stringify(wire));
    const r = await run(["validate", bad, "--json"]);
    assert.equal(r.code, 2);
    const out = JSON.parse(r.stdout);
    assert.equal(out.ok, false);
    const injection = out.issues.find((i: { at: string }) => i.at === "process.injection");
    assert.ok(injection, r.stdout);
    assert.doesNotMatch(injection.message, /invalid_union|Invalid input/);
    assert.match(injection.message, /flow_rate_cm3_s.*fill_time_s/);
    // Fixed injection: now the network check (what simulate would refuse) speaks.
    wire.process.injection = { flow_rate_cm3_s: 30 };
    await Deno.writeTextFile(bad, JSON.stringify(wire));
    const section = await run(["validate", bad]);
    assert.equal(section.code, 2);
    assert.match(section.stderr, /runners\[0\]\.width_mm: .*too narrow/);
    // The demo with a UTF-8 byte-order mark in front.
    const bom = `${dir}/bom.json`;
    await Deno.writeTextFile(
      bom,
      "\uFEFF" + await Deno.readTextFile("scenarios/family_four_housing.json"),
    );
    const ok = await run(["validate", bom]);
    assert.equal(ok.code, 0, ok.stderr);
  } finally {
    await Deno.remove(dir, { recursive: true });
  }
});

Deno.test("calibrate: fits a gate's size to the scenario's short shots, says what the data cannot tell, writes a valid scenario", async () => {
  // Synthetic short shots from the model with G1 at 0.88 × its size (tests/calibrate has the
  // noise-free and noisy recovery checks); here the CLI's path end to end.
  const { applyFactors } = await import("../src/calibrate/factors.ts");
  const { simulateScenario } = await import("../src/network/simulate_scenario.ts");
  const { unequalBranches } = await import("./network/_scenarios.ts");
  const wire = unequalBranches("isothermal");
  const truth = applyFactors(wire, [{ kind: "gate_size", gate: "G1" }], [0.88]);
  const probe = simulateScenario(truth);
  assert.ok(probe.ok);
  const shot = probe.run.network.feedSystemVolume + probe.run.network.cavityVolume;
  const sampled = simulateScenario(truth, { sampleVolumes: [0.5 * shot, 0.75 * shot] });
  assert.ok(sampled.ok);
  const withShots = {
    ...wire,
    measurements: {
      short_shots: [50, 75].map((percent, k) => ({
        shot_percent: percent,
        parts: sampled.run.network.cavities.map((c, i) => ({
          cavity: c.id,
          fill_percent: 100 * sampled.run.fill.samples![k].cavityFill[i],
        })),
      })),
    },
  };
  const dir = await Deno.makeTempDir();
  try {
    await Deno.writeTextFile(`${dir}/tool.json`, JSON.stringify(withShots));
    const r = await run([
      "calibrate",
      `${dir}/tool.json`,
      "--factors",
      "gate:G1,viscosity",
      "--json",
      "--write",
      `${dir}/calibrated.json`,
    ]);
    assert.equal(r.code, 0, r.stderr);
    const out = JSON.parse(r.stdout);
    assert.equal(out.format, "evenfill.calibration/1");
    const [gate, viscosity] = out.factors;
    assert.ok(gate.identified);
    // Between the truth and nominal (the Tikhonov pull at the default 1 % noise), near the truth.
    assert.ok(gate.value >= 0.88 - 1e-3 && gate.value < 0.92, `G1 factor ${gate.value}`);
    // Masses alone cannot see a power law's viscosity (its split does not depend on K).
    assert.equal(viscosity.identified, false);
    const again = await run(["validate", `${dir}/calibrated.json`]);
    assert.equal(again.code, 0, again.stderr);
    const window = await run(["window", `${dir}/calibrated.json`, "--json"]);
    assert.equal(window.code, 0, window.stderr);
    const sweep = JSON.parse(window.stdout);
    assert.equal(sweep.points.length, 17);
    // snake_case with units in the names, like every other JSON the CLI prints
    assert.ok(WindowSchema.strict().safeParse(sweep).success);
    assert.equal(sweep.imbalance_range_percent.length, 2);
    assert.ok(sweep.points[0].feed_pressure_peak_MPa > 0);
  } finally {
    await Deno.remove(dir, { recursive: true });
  }
});
