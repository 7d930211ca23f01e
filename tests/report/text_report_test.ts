import assert from "node:assert/strict";
import { simulateScenario } from "../../src/network/simulate_scenario.ts";
import { textReport } from "../../src/report/text_report.ts";
import { unequalBranches } from "../network/_scenarios.ts";

// Power-law tube and slit, Bird, Armstrong & Hassager, Dynamics of Polymeric Liquids vol. 1
// (1987), ch. 4 (the same hand figures as tests/network/fill_pressure_test.ts).
const K = 7500;
const n = 0.38;
const tube = (Q: number, R: number, L: number) =>
  ((2 * K * L) / R) * Math.pow(((3 * n + 1) * Q) / (Math.PI * n * R ** 3), n);
const slit = (Q: number, W: number, H: number, L: number) =>
  ((2 * K * L) / H) * Math.pow((2 * (2 * n + 1) * Q) / (n * W * H * H), n);

function report(units?: "dual") {
  const wire = unequalBranches("isothermal");
  wire.process.switchover_percent = 95;
  const outcome = simulateScenario(wire);
  assert.ok(outcome.ok);
  return { text: textReport(outcome.run, { units }), run: outcome.run };
}

Deno.test("textReport: a full cavity's path says what pressure it holds, the filling one ends at its front", () => {
  const { text, run } = report();
  const Q = 40e-6;
  const feedSystem = run.network.feedSystemVolume;
  const shot = feedSystem + 50e-6;
  const f2 = (0.95 * shot - feedSystem - 20e-6) / 30e-6;
  const pJ = slit(Q, 0.15, 2e-3, f2 * 0.1) + tube(Q, 0.7e-3, 1e-3) + tube(Q, 2.5e-3, 0.12);
  const c1 = text.split("\n").find((l) => l.trimStart().startsWith("C1: "));
  assert.ok(c1, text);
  assert.match(c1, new RegExp(`full, holding ${(pJ / 1e6).toFixed(1)} MPa`));
  const c2 = text.split("\n").find((l) => l.trimStart().startsWith("C2: "));
  assert.ok(c2);
  assert.match(c2, /MPa to the front$/);
});

Deno.test("textReport: the peak pressure's share of the press and the cautions are printed", () => {
  const { text, run } = report();
  // The press in unequalBranches is 250 MPa; share = peak / 250 MPa, rounded to a whole %.
  const share = Math.round((run.fill.feedPressurePeak / 250e6) * 100);
  assert.match(text, new RegExp(`= ${share} % of the press's 250\\.0 MPa`));
  assert.match(text, /confirm on the press, within the press maker's limits/);
});

Deno.test("textReport: dual units print psi beside MPa (1 psi = 6 894.757 Pa, NIST SP 811)", () => {
  const { text, run } = report("dual");
  const psi = Math.round(run.fill.feedPressurePeak / 6894.757293168);
  assert.ok(text.includes(`(${psi} psi)`), `expected (${psi} psi) in the report`);
});

Deno.test("textReport: imbalance from the cavity fill times, one table row per cavity and element", () => {
  const { text, run } = report();
  // Imbalance = (t_max − t_min)/t_max × 100 over the cavity fill times (common practice, no source).
  const times = run.fill.cavities.map((c) => c.fillTime);
  const imbalance = ((Math.max(...times) - Math.min(...times)) / Math.max(...times)) * 100;
  assert.match(text, new RegExp(`imbalance ${imbalance.toFixed(2)} % \\(target ≤ `));
  const lines = text.split("\n");
  const section = (title: string) => {
    const start = lines.indexOf(title);
    assert.ok(start >= 0, `section ${title}`);
    const end = lines.indexOf("", start);
    return lines.slice(start + 2, end); // title, header, then rows up to the blank line
  };
  assert.deepEqual(section("Cavities").map((l) => l.trim().split(/\s+/)[0]), ["C1", "C2"]);
  assert.deepEqual(
    section("Elements at switchover").map((l) => l.trim().split(/\s+/)[0]),
    run.fill.elements.map((e) => e.id),
  );
});

Deno.test("textReport: clamp share, shot and runner masses from the run's own totals", () => {
  const { text, run } = report();
  // Clamp share of the 2000 kN press, whole %; runner share of the shot mass, 0.1 %.
  const clampShare = Math.round((run.fill.clampForcePeak / 2000e3) * 100);
  assert.match(text, new RegExp(`= ${clampShare} % of 2000 kN \\(filling only; packing adds\\)`));
  const runnerShare = ((run.runnerMass / run.shotMass) * 100).toFixed(1);
  assert.match(text, new RegExp(`\\(${runnerShare} % of the shot\\)`));
  assert.match(text, new RegExp(`^Shot ${(run.shotMass * 1e3).toFixed(1)} g;`, "m"));
});

Deno.test("textReport: dual units print inch beside mm (1 in = 25.4 mm) and US tons beside kN", () => {
  const { text, run } = report("dual");
  // The 5 mm runner R1 in the freeze table: 5/25.4 = 0.197 in (international yard and pound, 1959).
  assert.ok(text.includes("5.00 mm (0.197 in)"), text);
  // 1 US ton-force = 2000 lbf × 4.4482216152605 N/lbf (NIST SP 811).
  const tons = (run.fill.clampForcePeak / (2000 * 4.4482216152605)).toFixed(1);
  assert.ok(text.includes(`(${tons} US ton)`), `expected (${tons} US ton)`);
});

Deno.test("textReport: every warning of the run is listed with its code and element", () => {
  const wire = unequalBranches("isothermal");
  wire.goals = { max_imbalance_percent: 0.01 };
  wire.runners![0].diameter_mm = 3; // under wall + 1.5 mm = 3.5 mm
  const outcome = simulateScenario(wire);
  assert.ok(outcome.ok);
  const text = textReport(outcome.run);
  assert.ok(outcome.run.warnings.length >= 2, "imbalance and runner rule at least");
  for (const w of outcome.run.warnings) {
    const line = `  [${w.severity}] ${w.code}${w.element ? ` (${w.element})` : ""}: ${w.message}`;
    assert.ok(text.includes(line), `missing warning line ${line}`);
  }
});
