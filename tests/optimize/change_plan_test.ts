import assert from "node:assert/strict";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import type { Scenario } from "../../src/model/scenario_schema.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";
import { optimizeBalance } from "../../src/optimize/balance.ts";
import { planChanges } from "../../src/optimize/change_list.ts";
import { currentDesign, designSpace } from "../../src/optimize/design_space.ts";
import { evaluateDesign } from "../../src/optimize/evaluate_design.ts";
import { assertClose } from "../assert_close.ts";
import { familyLayout } from "../support/family_layout.ts";

/**
 * The change plan is the optimizer's own step: counted, stoppable, and each step's
 * figures are those of a simulation of the design with that step and all before it.
 */

function parse(wire: unknown): Scenario {
  const parsed = parseScenario(wire, { materialIds: LIBRARY_MATERIAL_IDS });
  assert.ok(parsed.ok, JSON.stringify(!parsed.ok && parsed.issues));
  return parsed.scenario;
}

/** A generated 4-cavity family, and a target design: every adjustable size 10 % larger. */
function fixture() {
  const space = designSpace(parse(familyLayout(4, { seed: 1 })));
  const today = evaluateDesign(space, currentDesign(space));
  assert.ok(today.ok);
  const x = currentDesign(space).map((v, j) => Math.min(space.variables[j].upper, v * 1.1));
  const target = evaluateDesign(space, x);
  assert.ok(target.ok);
  return { space, before: today.evaluation, after: target.evaluation };
}

Deno.test("change plan: every changed size once, greedy order simulated, n(n+1)/2 simulations", async () => {
  const { space, before, after } = fixture();
  const changed = space.variables.filter((_, j) => after.x[j] !== before.x[j]).length;
  assert.ok(changed >= 2 && changed <= 10, `${changed} changes: the greedy range`);
  const plan = await planChanges(space, before, after, undefined);
  assert.equal(plan.complete, true);
  assert.equal(plan.steps.length, changed);
  assert.deepEqual(plan.steps.map((s) => s.step), plan.steps.map((_, k) => k + 1));
  assert.equal(new Set(plan.steps.map((s) => s.element)).size, changed, "each element once");
  // Step k tries each of the n − k + 1 changes left: n + (n − 1) + … + 1.
  assert.equal(plan.simulations, (changed * (changed + 1)) / 2);
  // The last step is the whole target design: its figures are the target's own simulation.
  const last = plan.steps.at(-1)!.after;
  assertClose(last.imbalancePercent, after.imbalancePercent, { rel: 1e-12, what: "last step" });
  assertClose(last.runnerVolume, after.runnerVolume, { rel: 1e-12, what: "last step volume" });
  // Every enlargement is steel-safe (only steel removed).
  for (const s of plan.steps) assert.equal(s.steelSafe, s.to >= s.from);
});

Deno.test("change plan: an aborted signal stops it before any simulation; a past deadline too", async () => {
  const { space, before, after } = fixture();
  const controller = new AbortController();
  controller.abort();
  const cancelled = await planChanges(space, before, after, undefined, {
    signal: controller.signal,
  });
  assert.equal(cancelled.complete, false);
  assert.equal(cancelled.stopped, "cancelled");
  assert.equal(cancelled.simulations, 0);
  assert.equal(cancelled.steps.length, 0);
  const late = await planChanges(space, before, after, undefined, { deadline: Date.now() - 1 });
  assert.equal(late.stopped, "deadline");
  assert.equal(late.simulations, 0);
});

Deno.test("change plan: a signal aborted from a timer mid-plan stops it between simulations", async () => {
  const { space, before, after } = fixture();
  const full = (await planChanges(space, before, after, undefined)).simulations;
  const controller = new AbortController();
  // The plan yields to the event loop between simulations, so this timer runs during it.
  let seen = 0;
  const timer = setInterval(() => {
    if (++seen === 2) controller.abort();
  }, 0);
  const plan = await planChanges(space, before, after, undefined, { signal: controller.signal });
  clearInterval(timer);
  assert.equal(plan.complete, false);
  assert.equal(plan.stopped, "cancelled");
  assert.ok(plan.simulations < full, `${plan.simulations} of ${full} simulations`);
});

Deno.test("optimize: the change plan's simulations are counted in the run; withoutChanges says so", async () => {
  const scenario = parse(familyLayout(4, { seed: 1 }));
  scenario.goals.cutters = "continuous";
  const bare = await optimizeBalance(scenario, { maxIterations: 2, withoutChanges: true });
  assert.ok(bare.ok);
  assert.equal(bare.outcome.changes, undefined);
  assert.equal(bare.outcome.changesOmitted, "not asked for");
  const steps: string[] = [];
  const planned = await optimizeBalance(scenario, {
    maxIterations: 2,
    onStep: (step) => steps.push(step),
  });
  assert.ok(planned.ok);
  assert.deepEqual(steps, ["continuous", "cutters", "changes"]);
  const plan = planned.outcome.changes;
  assert.ok(plan, planned.outcome.changesOmitted);
  assert.equal(planned.outcome.simulations, bare.outcome.simulations + plan.simulations);
});
