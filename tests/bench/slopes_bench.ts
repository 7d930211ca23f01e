/**
 * What one set of slopes costs on generated family layouts (edge gates): a plain
 * simulation, the same simulation carrying the tangent along every adjustable size,
 * and the finite differences the tangent replaces (one more simulation per size):
 * `deno bench -A tests/bench/slopes_bench.ts`.
 */
import { familyLayout } from "../support/family_layout.ts";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";
import { currentDesign, designSpace } from "../../src/optimize/design_space.ts";
import { evaluateDesign } from "../../src/optimize/evaluate_design.ts";
import { finiteDifferenceSensitivities } from "../../src/optimize/sensitivities.ts";

for (const n of [4, 16]) {
  const parsed = parseScenario(familyLayout(n, { gate: "edge" }), {
    materialIds: LIBRARY_MATERIAL_IDS,
  });
  if (!parsed.ok) throw new Error(parsed.issues.map((i) => i.message).join("; "));
  const space = designSpace(parsed.scenario);
  const x = currentDesign(space);
  const base = evaluateDesign(space, x);
  if (!base.ok) throw new Error(`layout ${n} does not simulate`);
  const sizes = space.variables.length;
  const group = `${n}-cavity family, ${sizes} sizes`;
  Deno.bench({
    name: `${group}: plain simulation`,
    group,
    baseline: true,
    fn: () => {
      if (!evaluateDesign(space, x).ok) throw new Error("simulation failed");
    },
  });
  Deno.bench({
    name: `${group}: simulation carrying the tangent`,
    group,
    fn: () => {
      const e = evaluateDesign(space, x, { slopes: true });
      if (!e.ok || !e.evaluation.slopes) throw new Error("no slopes");
    },
  });
  Deno.bench({
    name: `${group}: finite differences (${sizes} more simulations)`,
    group,
    n: n >= 16 ? 3 : undefined,
    warmup: n >= 16 ? 0 : undefined,
    fn: () => {
      const s = finiteDifferenceSensitivities(space, base.evaluation);
      if ("failure" in s) throw new Error(s.failure);
    },
  });
}
