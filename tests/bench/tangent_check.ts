/**
 * Tangent slopes (one simulation carrying the tangent) against the optimizer's forward
 * finite differences (one simulation per size) at today's sizes, with the cost of each, for
 * the demos and generated families. Not a test.
 *
 *   deno run -A tests/bench/tangent_check.ts [family_four_housing|hot_drop_eight_caps|two_gate_frame_and_knob|gen16|gen64 …]
 *
 * ISO=1 runs every case isothermal; CENTRAL=h also prints central differences with relative
 * step h beside the tangent for the first case's first six sizes.
 *
 * @module
 */
import { familyLayout } from "../support/family_layout.ts";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import type { Scenario } from "../../src/model/scenario_schema.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";
import { currentDesign, designSpace } from "../../src/optimize/design_space.ts";
import { evaluateDesign } from "../../src/optimize/evaluate_design.ts";
import { finiteDifferenceSensitivities } from "../../src/optimize/sensitivities.ts";

function parse(raw: unknown): Scenario {
  const p = parseScenario(raw, { materialIds: LIBRARY_MATERIAL_IDS });
  if (!p.ok) throw new Error(p.issues.map((i) => i.message).join("; "));
  return p.scenario;
}
const cases: [string, Scenario][] = [];
for (
  const f of Deno.args.length
    ? Deno.args
    : ["family_four_housing", "hot_drop_eight_caps", "two_gate_frame_and_knob", "gen16"]
) {
  if (f.startsWith("gen")) {
    cases.push([f, parse(familyLayout(Number(f.slice(3)), { gate: "edge" }))]);
  } else cases.push([f, parse(JSON.parse(Deno.readTextFileSync(`scenarios/${f}.json`)))]);
}
const iso = Deno.env.get("ISO") === "1";
for (const [name, scenario0] of cases) {
  const scenario = structuredClone(scenario0);
  if (iso) scenario.process.thermal = "isothermal";
  const space = designSpace(scenario);
  const x = currentDesign(space);
  let t0 = performance.now();
  const plain = evaluateDesign(space, x);
  const tPlain = performance.now() - t0;
  t0 = performance.now();
  const withSlopes = evaluateDesign(space, x, { slopes: true });
  const tTangent = performance.now() - t0;
  if (!plain.ok || !withSlopes.ok) throw new Error("sim failed");
  t0 = performance.now();
  const fd = finiteDifferenceSensitivities(space, plain.evaluation);
  const tFd = performance.now() - t0;
  if ("failure" in fd) throw new Error(fd.failure);
  const sl = withSlopes.evaluation.slopes;
  console.log(
    `${name}: ${space.variables.length} sizes; plain sim ${tPlain.toFixed(0)} ms, with tangent ${
      tTangent.toFixed(0)
    } ms, FD set ${tFd.toFixed(0)} ms; steps ${plain.evaluation.run.fill.diagnostics.steps}`,
  );
  if (!sl) {
    console.log("  no slopes");
    continue;
  }
  const e = plain.evaluation;
  // log slopes
  let worst = 0;
  let num = 0;
  let den = 0;
  for (let i = 0; i < e.splitFillTimes.length; i++) {
    for (let j = 0; j < x.length; j++) {
      const a = fd.fillTime[i][j] * x[j] / e.splitFillTimes[i];
      const b = sl.fillTime[i][j] * x[j] / e.splitFillTimes[i];
      num += (a - b) ** 2;
      den += a * a;
      worst = Math.max(worst, Math.abs(a - b));
      if (x.length <= 8 || (i < 2 && j < 6)) {
        console.log(
          `  t${i} x${j} (${space.variables[j].element}): FD ${a.toFixed(4)} tangent ${
            b.toFixed(4)
          }`,
        );
      }
    }
  }
  const pa = fd.pressure.map((g, j) => g * x[j] / e.feedPressurePeak);
  const pb = sl.pressure.map((g, j) => g * x[j] / e.feedPressureReference);
  console.log(
    `  fill-time log slopes: rel. Frobenius error ${Math.sqrt(num / den).toFixed(3)}, worst abs ${
      worst.toFixed(4)
    }`,
  );
  console.log(`  pressure log slopes FD ${pa.slice(0, 8).map((v) => v.toFixed(3)).join(" ")}`);
  console.log(`  pressure log slopes TL ${pb.slice(0, 8).map((v) => v.toFixed(3)).join(" ")}`);
}
if (Deno.env.get("CENTRAL")) {
  const h = Number(Deno.env.get("CENTRAL"));
  const [name, scenario0] = cases[0];
  const scenario = structuredClone(scenario0);
  if (iso) scenario.process.thermal = "isothermal";
  const space = designSpace(scenario);
  const x = currentDesign(space);
  const base = evaluateDesign(space, x, { slopes: true });
  if (!base.ok) throw new Error();
  const e = base.evaluation;
  for (let j = 0; j < Math.min(x.length, 6); j++) {
    const up = Float64Array.from(x);
    up[j] *= 1 + h;
    const dn = Float64Array.from(x);
    dn[j] *= 1 - h;
    const a = evaluateDesign(space, up);
    const b = evaluateDesign(space, dn);
    if (!a.ok || !b.ok) throw new Error();
    const row = e.splitFillTimes.map((t, i) =>
      ((a.evaluation.splitFillTimes[i] - b.evaluation.splitFillTimes[i]) / (2 * h)) / t
    );
    const tl = e.splitFillTimes.map((t, i) => e.slopes!.fillTime[i][j] * x[j] / t);
    const pc = (a.evaluation.feedPressureReference - b.evaluation.feedPressureReference) / (2 * h) /
      e.feedPressureReference;
    const pt = e.slopes!.pressure[j] * x[j] / e.feedPressureReference;
    console.log(
      `${name} x${j} central: ${row.map((v) => v.toFixed(4)).join(" ")} | p ${pc.toFixed(4)}`,
    );
    console.log(
      `${name} x${j} tangent: ${tl.map((v) => v.toFixed(4)).join(" ")} | p ${pt.toFixed(4)}`,
    );
  }
}
