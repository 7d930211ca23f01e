import assert from "node:assert/strict";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import type { Scenario } from "../../src/model/scenario_schema.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";
import { optimizeBalance } from "../../src/optimize/balance.ts";
import {
  type ChangePlan,
  IMBALANCE_TOLERANCE_PERCENT,
  planChanges,
  shortShotAtFirstFull,
} from "../../src/optimize/change_list.ts";
import { currentDesign, type DesignSpace, designSpace } from "../../src/optimize/design_space.ts";
import { type DesignEvaluation, evaluateDesign } from "../../src/optimize/evaluate_design.ts";
import { assertClose } from "../assert_close.ts";
import { familyLayout } from "../support/family_layout.ts";

/**
 * The change plan is the optimizer's own step: counted, stoppable. A new tool's plan lists
 * the sizes to cut; an existing tool's steps are ordered so that each can be checked on
 * the press, with each cavity's predicted short shot when the first cavity is full.
 */

function parse(wire: unknown): Scenario {
  const parsed = parseScenario(wire, { materialIds: LIBRARY_MATERIAL_IDS });
  assert.ok(parsed.ok, JSON.stringify(!parsed.ok && parsed.issues));
  return parsed.scenario;
}

function evaluate(space: DesignSpace, x: Float64Array): DesignEvaluation {
  const e = evaluateDesign(space, x);
  assert.ok(e.ok, !e.ok ? e.message : "");
  return e.evaluation;
}

/**
 * A generated 4-cavity family in `mode`, and a target design: the sizes alternately 10 %
 * larger and 10 % smaller than today's (so an existing tool needs steel added for some).
 */
function fixture(mode: Scenario["goals"]["mode"]) {
  const scenario = parse(familyLayout(4, { seed: 1 }));
  scenario.goals.mode = mode;
  const space = designSpace(scenario);
  const today = currentDesign(space);
  const x = today.map((v, j) => {
    const b = space.variables[j];
    return Math.min(b.upper, Math.max(b.lower, v * (j % 2 === 0 ? 1.1 : 0.9)));
  });
  return { space, before: evaluate(space, today), after: evaluate(space, x) };
}

/** Each step's design: today's sizes with every change up to and including that step. */
function stepDesigns(space: DesignSpace, before: DesignEvaluation, plan: ChangePlan) {
  const index = new Map(space.variables.map((v, j) => [v.element, j]));
  const x = Float64Array.from(before.x);
  const designs = new Map<number, Float64Array>();
  for (const s of plan.steps) {
    x[index.get(s.element)!] = s.to;
    designs.set(s.step, Float64Array.from(x));
  }
  return designs;
}

/** What a plan of an existing tool must hold whatever the order chosen. */
function assertCheckable(plan: ChangePlan, before: DesignEvaluation, after: DesignEvaluation) {
  assert.ok(plan.start, "an existing tool's plan has step 0");
  assert.equal(plan.start.imbalancePercent, before.imbalancePercent);
  const numbers = plan.steps.map((s) => s.step);
  // Steps are numbered 1, 2, … in order; changes cut together share one number.
  assert.equal(numbers[0], 1);
  for (let k = 1; k < numbers.length; k++) {
    assert.ok(numbers[k] === numbers[k - 1] || numbers[k] === numbers[k - 1] + 1, `${numbers}`);
  }
  for (const s of plan.steps) {
    const group = plan.steps.filter((t) => t.step === s.step);
    assert.equal(s.together, group.length > 1, `step ${s.step}`);
    // One step, one tool state: every change of a group carries the same figures.
    assert.equal(s.after, group[0].after);
    assert.equal(s.action, s.to >= s.from ? "enlarge" : "add_steel");
    assert.equal(s.steelSafe, s.to >= s.from);
    // Never above today's imbalance unless the step says so, and why.
    const above = s.after.imbalancePercent > before.imbalancePercent + IMBALANCE_TOLERANCE_PERCENT;
    assert.equal(s.aboveStart, above, `step ${s.step}: ${s.after.imbalancePercent} %`);
    if (above) assert.ok((s.aboveStartReason ?? "").length > 20, `step ${s.step} says why`);
    else assert.equal(s.aboveStartReason, undefined);
  }
  const last = plan.steps.at(-1)!.after;
  assertClose(last.imbalancePercent, after.imbalancePercent, { rel: 1e-12, what: "last step" });
  assertClose(last.runnerVolume, after.runnerVolume, { rel: 1e-12, what: "last step volume" });
}

Deno.test("change plan, new tool: every size 'cut to', never steel added, no simulation", async () => {
  const { space, before, after } = fixture("new_tool");
  const changed = space.variables.filter((_, j) => after.x[j] !== before.x[j]).length;
  assert.ok(changed >= 2);
  assert.ok(space.variables.some((_, j) => after.x[j] < before.x[j]), "some sizes are smaller");
  const plan = await planChanges(space, before, after, undefined);
  assert.equal(plan.complete, true);
  assert.equal(plan.simulations, 0);
  assert.equal(plan.start, undefined, "no today's tool");
  assert.equal(plan.steps.length, changed);
  for (const s of plan.steps) {
    assert.equal(s.action, "cut_to");
    assert.equal(s.steelSafe, true);
    assert.equal(s.aboveStart, false);
    // Nothing is cut in between: the figures are the final design's own simulation.
    assert.equal(s.after.imbalancePercent, after.imbalancePercent);
  }
  assert.deepEqual(plan.steps.map((s) => s.step), plan.steps.map((_, k) => k + 1));
});

Deno.test("change plan, trim: each step checkable, figures of its own simulation", async () => {
  const { space, before, after } = fixture("trim");
  const plan = await planChanges(space, before, after, undefined);
  assert.equal(plan.complete, true);
  assert.ok(plan.steps.some((s) => s.action === "add_steel"), "a trim fixture adds steel");
  const changed = space.variables.filter((_, j) => after.x[j] !== before.x[j]).length;
  assert.equal(new Set(plan.steps.map((s) => s.element)).size, changed, "each element once");
  assert.equal(plan.steps.length, changed);
  assertCheckable(plan, before, after);
  // Each step's figures are a simulation of today's tool with that step and all before it.
  for (const [step, x] of stepDesigns(space, before, plan)) {
    const e = evaluate(space, x);
    const s = plan.steps.find((t) => t.step === step)!;
    assertClose(s.after.imbalancePercent, e.imbalancePercent, { rel: 1e-12, what: `step ${step}` });
  }
  // At most every single and every pair per round, and the final design never re-simulated.
  const n = changed;
  assert.ok(plan.simulations > 0 && plan.simulations <= n * n * n, `${plan.simulations}`);
});

/**
 * Mass balance at the instant t₁ the first cavity is full, rate-controlled fill
 * (injection rate Q constant): the screw has pushed Q·t₁ of melt. The hot runner (a hot
 * drop) and the cold feed system are full by then (the first cavity is fed through its
 * runners and every partly filled cavity through its own), the rest sits in the cavities:
 * Q·t₁ = V_hot + V_cold + Σ fᵢ·Vᵢ. Weighed as solid, ×ρ_solid:
 * Σ short-shot masses + cold runner mass = ρ_solid·(Q·t₁ − V_hot).
 * And the first cavity full is 100 % by definition.
 */
function assertShotBalance(e: DesignEvaluation, what: string) {
  const density = e.run.material.solidDensity;
  const shot = shortShotAtFirstFull(e, density);
  const hot = e.network.feedSystemVolume - e.network.coldRunnerVolume;
  const expected = density * (e.fill.injectionRate * shot.time - hot);
  const masses = shot.cavities.reduce((sum, c) => sum + c.mass, 0);
  assertClose(masses + density * e.network.coldRunnerVolume, expected, { rel: 1e-6, what });
  assertClose(Math.max(...shot.cavities.map((c) => c.fill)), 1, { abs: 1e-9, what });
  const first = e.fillTimes.indexOf(Math.min(...e.fillTimes));
  assertClose(shot.cavities[first].fill, 1, { abs: 1e-9, what: `${what}: first-full cavity` });
  for (const c of shot.cavities) assert.ok(c.fill >= 0 && c.fill <= 1 + 1e-9, what);
}

Deno.test("short shot at first full: 100 % in the first cavity; parts + runner = the shot (sprue and hot drop)", async () => {
  const { space, before, after } = fixture("trim");
  assertShotBalance(before, "family today");
  assertShotBalance(after, "family target");
  const hotDrop = await hotDropSpace();
  const x = currentDesign(hotDrop).map((v, j) => j === 0 ? v * 0.8 : v);
  const oneSmaller = evaluate(hotDrop, x);
  assert.ok(oneSmaller.network.feedSystemVolume > oneSmaller.network.coldRunnerVolume, "hot");
  assertShotBalance(oneSmaller, "hot drop, one runner smaller");
  // Today's hot-drop tool is balanced: every cap is full together, after switchover.
  assertShotBalance(evaluate(hotDrop, currentDesign(hotDrop)), "hot drop today");
  // The plan's step figures are the same numbers, step 0 included.
  const plan = await planChanges(space, before, after, undefined);
  const density = before.run.material.solidDensity;
  assert.deepEqual(plan.start!.shortShot, shortShotAtFirstFull(before, density).cavities);
  for (const [step, design] of stepDesigns(space, before, plan)) {
    const e = evaluate(space, design);
    const s = plan.steps.find((t) => t.step === step)!;
    const shot = shortShotAtFirstFull(e, density);
    assertClose(s.after.firstFullTime, shot.time, { rel: 1e-12, what: `step ${step} t₁` });
    s.after.shortShot.forEach((c, i) =>
      assertClose(c.mass, shot.cavities[i].mass, { rel: 1e-12, what: `step ${step} ${c.cavity}` })
    );
  }
});

async function hotDropSpace(): Promise<DesignSpace> {
  const url = new URL("../../scenarios/hot_drop_eight_caps.json", import.meta.url);
  return designSpace(parse(JSON.parse(await Deno.readTextFile(url))));
}

Deno.test("change plan, hot drop: symmetric like changes are cut together and keep the balance", async () => {
  const space = await hotDropSpace();
  const today = currentDesign(space);
  // Every end runner one cutter smaller and every gate a step larger: alike by level.
  const x = today.map((v, j) => {
    const variable = space.variables[j];
    if (variable.kind === "gate") return v + 0.1e-3;
    return /^R[LR][UD].$/.test(variable.element) ? v - 1e-3 : v;
  });
  const before = evaluate(space, today);
  const after = evaluate(space, x);
  // The tree is symmetric: today, and any set of like changes, fill every cap together.
  assert.ok(before.imbalancePercent < IMBALANCE_TOLERANCE_PERCENT);
  const single = Float64Array.from(today);
  single[space.variables.findIndex((v) => v.kind === "gate")] += 0.1e-3;
  assert.ok(evaluate(space, single).imbalancePercent > 10 * IMBALANCE_TOLERANCE_PERCENT);
  const plan = await planChanges(space, before, after, undefined);
  assert.equal(plan.complete, true);
  assertCheckable(plan, before, after);
  assert.equal(plan.steps.length, 16);
  assert.ok(plan.steps.every((s) => !s.aboveStart), "every step as balanced as today");
  // Two steps: the eight runners together and the eight gates together.
  assert.deepEqual(new Set(plan.steps.map((s) => s.step)), new Set([1, 2]));
  for (const step of [1, 2]) {
    const kinds = new Set(plan.steps.filter((s) => s.step === step).map((s) => s.kind));
    assert.equal(kinds.size, 1, `step ${step} is one kind of change`);
  }
});

Deno.test("change plan: a pair that no single change can stand in for is one step, cut together", async () => {
  const space = await hotDropSpace();
  const today = currentDesign(space);
  const before = evaluate(space, today);
  const gate = space.variables.findIndex((v) => v.element === "G1");
  const runner = space.variables.findIndex((v) => v.element === "RLUo");
  // Unlike changes that compensate: cap C1's gate a step larger, the runner to it smaller,
  // by the reduction (of four tried) that leaves the two together closest to balance.
  const pairOf = (reduction: number) => {
    const x = Float64Array.from(today);
    x[gate] += 0.1e-3;
    x[runner] -= reduction;
    return evaluate(space, x);
  };
  const after = [0.25e-3, 0.5e-3, 0.75e-3, 1e-3].map(pairOf)
    .sort((a, b) => a.imbalancePercent - b.imbalancePercent)[0];
  const alone = [gate, runner].map((j) => {
    const y = Float64Array.from(today);
    y[j] = after.x[j];
    return evaluate(space, y).imbalancePercent;
  });
  // The fixture's premise, checked: each alone unbalances more than both together.
  assert.ok(
    alone.every((i) => i > after.imbalancePercent + IMBALANCE_TOLERANCE_PERCENT),
    `${alone} vs ${after.imbalancePercent}`,
  );
  const plan = await planChanges(space, before, after, undefined);
  assert.equal(plan.steps.length, 2);
  assert.deepEqual(plan.steps.map((s) => s.step), [1, 1]);
  assert.ok(plan.steps.every((s) => s.together));
  assertCheckable(plan, before, after);
});

Deno.test("change plan: an aborted signal stops it before any simulation; a past deadline too", async () => {
  const { space, before, after } = fixture("trim");
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
  assert.equal(late.complete, false);
  assert.equal(late.simulations, 0);
});

Deno.test("change plan: a signal aborted from a timer mid-plan stops it between simulations", async () => {
  const { space, before, after } = fixture("trim");
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
  assert.ok(bare.ok, !bare.ok ? `${bare.code}: ${bare.message}` : "");
  assert.equal(bare.outcome.changes, undefined);
  assert.equal(bare.outcome.changesOmitted, "not asked for");
  const steps: string[] = [];
  const planned = await optimizeBalance(scenario, {
    maxIterations: 2,
    onStep: (step) => steps.push(step),
  });
  assert.ok(planned.ok);
  assert.ok(steps.includes("changes"));
  const plan = planned.outcome.changes;
  assert.ok(plan, planned.outcome.changesOmitted);
  assert.equal(planned.outcome.simulations, bare.outcome.simulations + plan.simulations);
});
