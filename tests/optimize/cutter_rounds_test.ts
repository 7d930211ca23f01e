import assert from "node:assert/strict";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";
import { type ContinuousSolver, solveContinuous } from "../../src/optimize/continuous_slp.ts";
import {
  CUTTER_ROUNDS_PAST_OPTIMUM_LIMITS,
  snapToCutters,
} from "../../src/optimize/cutter_strategy.ts";
import { designSpace } from "../../src/optimize/design_space.ts";
import { createHighsSolver } from "../../src/optimize/highs_solver.ts";
import { familyLayout } from "../support/family_layout.ts";

Deno.test("cutter rounds: when the continuous optimum breaks a limit, the gates are re-balanced at most once", async () => {
  // A generated 16-cavity family whose gate shear no gate size within its bounds meets: the
  // continuous optimum is infeasible, so are the nearest cutters, and the rounds start.
  const parsed = parseScenario(familyLayout(16, { seed: 1 }), {
    materialIds: LIBRARY_MATERIAL_IDS,
  });
  assert.ok(parsed.ok);
  const space = designSpace(parsed.scenario);
  const solver = await createHighsSolver();
  const solved = await solveContinuous(space, { solver, maxIterations: 40 });
  assert.ok(solved.ok);
  assert.equal(solved.outcome.optimum.feasible, false);
  let rebalances = 0;
  const counting: ContinuousSolver = (sub, options) => {
    rebalances++;
    assert.ok(sub.variables.every((v) => v.kind === "gate"), "a re-balance moves gates only");
    return solveContinuous(sub, options);
  };
  const snapped = await snapToCutters(space, solved.outcome, { solver, continuous: counting });
  assert.ok(rebalances >= 1, "the rounds ran");
  assert.ok(rebalances <= CUTTER_ROUNDS_PAST_OPTIMUM_LIMITS, `${rebalances} re-balances`);
  assert.ok(snapped.simulations > 0);
});
