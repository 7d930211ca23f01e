import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import type { Scenario } from "../../src/model/scenario_schema.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";
import { cutterCatalogue } from "../../src/optimize/cutters.ts";
import { currentDesign, designSpace } from "../../src/optimize/design_space.ts";
import { evaluateDesign } from "../../src/optimize/evaluate_design.ts";
import { createHighsSolver } from "../../src/optimize/highs_solver.ts";
import { tangentSensitivities } from "../../src/optimize/sensitivities.ts";
import { mixedIntegerRunnerCutters } from "../../src/optimize/snap_runners.ts";
import { unequalBranches } from "../network/_scenarios.ts";

function parse(wire: unknown): Scenario {
  const parsed = parseScenario(wire, { materialIds: LIBRARY_MATERIAL_IDS });
  assert.ok(parsed.ok, JSON.stringify(!parsed.ok && parsed.issues));
  return parsed.scenario;
}

Deno.test("cutter choice: the mixed-integer program finds the runner pair that enumeration finds best", async () => {
  // Two runners between metric cutters (4.3 mm: 4 or 5; 5.6 mm: 5 or 6; the metric ball-end
  // series is common practice, no source), gates free. Every one of the four pairs is solved
  // as the same program with both runners held, and the mixed-integer answer must be the best
  // of them: branch and bound against enumeration.
  // The runner-cooling rule would cap these 2 mm-wall parts' runners at 3.5 mm, under every
  // cutter of the check: off here, where the subject is the search, not the rule.
  const wire = unequalBranches("full");
  wire.goals = { ...wire.goals, size_rules: { runner_cooling: false } };
  const scenario = parse(wire);
  const space = designSpace(scenario);
  const runners = space.variables.flatMap((v, j) => (v.kind === "runner" ? [j] : []));
  assert.equal(runners.length, 2);
  const x = currentDesign(space);
  x[runners[0]] = 4.3e-3;
  x[runners[1]] = 5.6e-3;
  const outcome = evaluateDesign(space, x, { slopes: true });
  assert.ok(outcome.ok);
  const e = outcome.evaluation;
  const slopes = tangentSensitivities(space, e);
  assert.ok(slopes);
  const solver = await createHighsSolver();
  const o = {
    epsilon: 0.7 * 0.02,
    V0: e.runnerVolume,
    catalogue: cutterCatalogue("metric"),
    around: x,
  };
  const chosen = await mixedIntegerRunnerCutters(space, e, slopes, solver, o);
  assert.ok(chosen, "the program solves");
  let best: { objective: number; pair: number[] } | undefined;
  const objectives: number[] = [];
  for (const a of [4e-3, 5e-3]) {
    for (const b of [5e-3, 6e-3]) {
      const pinned = new Map([[runners[0], a], [runners[1], b]]);
      const r = await mixedIntegerRunnerCutters(space, e, slopes, solver, { ...o, pinned });
      assert.ok(r);
      objectives.push(r.objective);
      if (!best || r.objective < best.objective) best = { objective: r.objective, pair: [a, b] };
    }
  }
  assert.ok(best);
  if (Deno.env.get("EVENFILL_REPORT")) console.log(objectives, chosen.objective, best.pair);
  // The pairs differ, so the choice matters and the check can fail.
  assert.ok(Math.max(...objectives) - Math.min(...objectives) > 1e-3 * Math.abs(best.objective));
  assertClose(chosen.objective, best.objective, { rel: 1e-6, abs: 1e-9, what: "objective" });
  assert.deepEqual(runners.map((j) => chosen.x[j]), best.pair);
});
