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
