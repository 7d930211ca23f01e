/**
 * The reuse of simulations by `evaluateDesign` within a run (`optimize/simulation_cache.ts`,
 * `withReusedSimulations`): property checks only. A reused evaluation must be the one a
 * simulation outside any run gives (a simulation is deterministic), cost no simulation, and
 * read its slopes from a tangent that carried every size asked for, in whichever space of the
 * same scenario it was run.
 */
import assert from "node:assert/strict";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import type { Scenario } from "../../src/model/scenario_schema.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";
import { currentDesign, type DesignSpace, designSpace } from "../../src/optimize/design_space.ts";
import {
  type DesignEvaluation,
  evaluateDesign,
  type EvaluationOutcome,
  withReusedSimulations,
} from "../../src/optimize/evaluate_design.ts";
import { readMeter, resetMeter } from "../../src/optimize/run_meter.ts";
import { scenarioFingerprint, SimulationCache } from "../../src/optimize/simulation_cache.ts";
import { familyLayout } from "../support/family_layout.ts";

function family(seed: number): Scenario {
  const parsed = parseScenario(familyLayout(4, { seed }), { materialIds: LIBRARY_MATERIAL_IDS });
  assert.ok(parsed.ok);
  return parsed.scenario;
}

function evaluation(outcome: EvaluationOutcome): DesignEvaluation {
  assert.ok(outcome.ok, !outcome.ok ? outcome.message : "");
  return outcome.evaluation;
}

/** The figures an optimizer reads of an evaluation. */
function figures(e: DesignEvaluation) {
  return {
    x: [...e.x],
    fillTimes: e.fillTimes,
    splitFillTimes: e.splitFillTimes,
    gateShear: e.gateShear,
    gateShearBalanced: e.gateShearBalanced,
    feedPressurePeak: e.feedPressurePeak,
    feedPressureReference: e.feedPressureReference,
    runnerVolume: e.runnerVolume,
    violations: e.violations,
    slopes: e.slopes,
  };
}

function simulationsCounted(): { simulations: number; reused: number } {
  let simulations = 0;
  let reused = 0;
  for (const tally of readMeter().values()) {
    simulations += tally.simulations;
    reused += tally.reused;
  }
  return { simulations, reused };
}

/** The space of the gates alone, every runner held at its size today. */
function gatesAlone(scenario: Scenario): DesignSpace {
  const fixed = structuredClone(scenario);
  for (const r of fixed.runners) r.adjustable = false;
  return designSpace(fixed);
}

Deno.test("simulation cache: forgets the least recently used entry beyond its capacity", () => {
  const cache = new SimulationCache<number>(2);
  cache.set("a", 1);
  cache.set("b", 2);
  assert.equal(cache.get("a"), 1); // a is now the most recently used
  cache.set("c", 3);
  assert.equal(cache.size, 2);
  assert.equal(cache.get("b"), undefined);
  assert.equal(cache.get("a"), 1);
  assert.equal(cache.get("c"), 3);
  assert.throws(() => new SimulationCache(0), RangeError);
});

Deno.test("simulation cache: within a run the same sizes give the same evaluation and count one simulation", async () => {
  const space = designSpace(family(1));
  const x = currentDesign(space).map((v) => v * 1.02);
  const outside = evaluation(evaluateDesign(space, x, { slopes: true }));
  resetMeter();
  await withReusedSimulations(async () => {
    const first = evaluateDesign(space, x, { slopes: true });
    await Promise.resolve();
    const again = evaluateDesign(space, Float64Array.from(x), { slopes: true });
    const plain = evaluateDesign(space, Float64Array.from(x));
    assert.ok(first.ok && again.ok && plain.ok);
    assert.equal(first.simulations, 1);
    assert.equal(again.simulations, 0);
    assert.equal(plain.simulations, 0);
    assert.deepEqual(simulationsCounted(), { simulations: 1, reused: 2 });
    // A simulation is deterministic: the reused one is the one outside the run.
    assert.deepEqual(figures(first.evaluation), figures(outside));
    assert.deepEqual(figures(again.evaluation), figures(outside));
    assert.ok(outside.slopes);
    // Asked without slopes, an evaluation has none, as a plain simulation would.
    assert.deepEqual(figures(plain.evaluation), { ...figures(outside), slopes: undefined });
    // Other sizes are simulated.
    const other = evaluateDesign(space, currentDesign(space).map((v) => v * 1.03));
    assert.ok(other.ok);
    assert.equal(other.simulations, 1);
  });
  // Outside a run nothing is reused.
  const after = evaluateDesign(space, x, { slopes: true });
  assert.ok(after.ok);
  assert.equal(after.simulations, 1);
});

Deno.test("simulation cache: a sub-space reads its slopes from the whole space's tangent", async () => {
  const scenario = family(2);
  const space = designSpace(scenario);
  const gates = gatesAlone(scenario);
  assert.ok(gates.variables.length > 0 && gates.variables.length < space.variables.length);
  // Today's sizes: the same network in both spaces, to the last bit.
  const fresh = evaluation(evaluateDesign(gates, currentDesign(gates), { slopes: true }));
  // The other way round below: a gates-only tangent lacks the runners' slopes.
  const x = currentDesign(space);
  space.variables.forEach((v, j) => {
    if (v.kind === "gate") x[j] *= 0.98;
  });
  const y = Float64Array.from(gates.variables, (v) => {
    const j = space.variables.findIndex((u) => u.element === v.element && u.kind === v.kind);
    return x[j];
  });
  await withReusedSimulations(async () => {
    evaluation(evaluateDesign(space, currentDesign(space), { slopes: true }));
    const reused = evaluateDesign(gates, currentDesign(gates), { slopes: true });
    assert.ok(reused.ok);
    assert.equal(reused.simulations, 0);
    assert.deepEqual(figures(reused.evaluation), figures(fresh));
    await Promise.resolve();
    evaluation(evaluateDesign(gates, y, { slopes: true }));
    const whole = evaluateDesign(space, x, { slopes: true });
    assert.ok(whole.ok);
    assert.equal(whole.simulations, 1);
    assert.ok(whole.evaluation.slopes);
    assert.equal(whole.evaluation.slopes.pressure.length, space.variables.length);
  });
});

Deno.test("simulation cache: asking for slopes after a plain simulation simulates again", async () => {
  const space = designSpace(family(3));
  const x = currentDesign(space).map((v) => v * 1.01);
  await withReusedSimulations(async () => {
    evaluation(evaluateDesign(space, x));
    await Promise.resolve();
    const withSlopes = evaluateDesign(space, x, { slopes: true });
    assert.ok(withSlopes.ok);
    assert.equal(withSlopes.simulations, 1);
    assert.ok(withSlopes.evaluation.slopes);
  });
});

Deno.test("simulation cache: the fingerprint leaves out the sizes and flags a design sets, nothing else", () => {
  const scenario = family(1);
  const resized = structuredClone(scenario);
  resized.runners[0].diameter_mm *= 1.1;
  resized.runners[1].adjustable = false;
  const gate = resized.gates[0];
  if (gate.type === "edge") gate.thickness_mm *= 1.1;
  else gate.diameter_mm = (gate.diameter_mm ?? 1) * 1.1;
  resized.gates[1].adjustable = false;
  assert.equal(scenarioFingerprint(resized), scenarioFingerprint(scenario));
  const slower = structuredClone(scenario);
  slower.process.injection = { flow_rate_cm3_s: 1 };
  assert.notEqual(scenarioFingerprint(slower), scenarioFingerprint(scenario));
  const longer = structuredClone(scenario);
  longer.runners[0].length_mm = (longer.runners[0].length_mm ?? 10) + 1;
  assert.notEqual(scenarioFingerprint(longer), scenarioFingerprint(scenario));
});
