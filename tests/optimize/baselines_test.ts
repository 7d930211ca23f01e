import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import { familyLayout } from "../support/family_layout.ts";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import type { Scenario, ScenarioWire } from "../../src/model/scenario_schema.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";
import {
  handbookSizing,
  nelderMead,
  nelderMeadMinimise,
  toolroomLoop,
} from "../support/baselines.ts";
import { currentDesign, designSpace } from "../../src/optimize/design_space.ts";

const MM = 1e-3; // 1 mm = 1e-3 m, SI definition.
const CBRT2 = Math.cbrt(2);

function parse(wire: unknown): Scenario {
  const parsed = parseScenario(wire, { materialIds: LIBRARY_MATERIAL_IDS });
  if (!parsed.ok) throw new Error(parsed.issues.map((i) => `${i.at}: ${i.message}`).join("; "));
  return parsed.scenario;
}

/** A generated family layout with every wall set to `wallMm`, gate sizes and bounds reset to that wall. */
function uniformWallLayout(
  cavities: number,
  wallMm: number,
  options: { gate?: "tunnel" | "edge"; cutters?: "metric" | "continuous" } = {},
): ScenarioWire {
  const wire = familyLayout(cavities, { volumeSpread: 1, gate: options.gate });
  for (const c of wire.cavities) c.wall_mm = wallMm;
  for (const g of wire.gates) {
    if (g.type === "edge") {
      g.thickness_mm = 0.65 * wallMm;
      g.min_thickness_mm = 0.3 * wallMm;
      g.max_thickness_mm = 0.9 * wallMm;
    } else {
      g.diameter_mm = 0.5 * wallMm;
      g.min_diameter_mm = 0.25 * wallMm;
      g.max_diameter_mm = 0.6 * wallMm;
    }
  }
  wire.goals = { ...wire.goals!, cutters: options.cutters ?? "continuous" };
  return wire;
}

/** Depth of each runner below the feed (runners leaving the feed node have depth 0). */
function runnerDepths(wire: ScenarioWire, feed: string): Map<string, number> {
  const arriving = new Map(wire.runners!.map((r) => [r.to, r]));
  const depth = new Map<string, number>();
  for (const r of wire.runners!) {
    let d = 0;
    let node = r.from;
    while (node !== feed) {
      node = arriving.get(node)!.from;
      d++;
    }
    depth.set(r.id, d);
  }
  return depth;
}

// Branching rule D_feed = D_branch·N^(1/3), N = 2 (Lee & Stevenson, J. Reinforced Plastics and
// Composites 1998); leaf runner = wall + 1.5 mm (common practice, no source).
Deno.test("handbook: symmetric binary tree gives leaf = wall + 1.5 mm and ratio 2^(1/3) per split", () => {
  const wire = uniformWallLayout(8, 2.0);
  const space = designSpace(parse(wire));
  const result = handbookSizing(space, { evaluate: false });
  assert.equal(result.simulations, 0);
  const depth = runnerDepths(wire, "S");
  const x = new Map(space.variables.map((v, j) => [v.element, result.x[j]]));
  let checked = 0;
  for (const r of wire.runners!) {
    const d = depth.get(r.id)!;
    // 8 cavities: depths 0, 1, 2; the leaves (depth 2) carry 3.5 mm.
    const expected = 3.5 * MM * Math.pow(CBRT2, 2 - d);
    assertClose(x.get(r.id)!, expected, { rel: 1e-9, what: `${r.id} (depth ${d})` });
    const child = wire.runners!.find((c) => c.from === r.to);
    if (child !== undefined) {
      assertClose(x.get(r.id)! / x.get(child.id)!, CBRT2, {
        rel: 1e-9,
        what: `${r.id}/${child.id}`,
      });
      checked++;
    }
  }
  assert.equal(checked, 6); // 2 + 4 non-leaf runners in an 8-leaf binary tree
});

// Leaf runner = max(wall + 1.5 mm, 3 mm): for a 1 mm wall the 3 mm minimum governs (common practice,
// no source); the rule above it still steps by 2^(1/3) (Lee & Stevenson 1998).
Deno.test("handbook: thin wall falls back to the 3 mm minimum runner", () => {
  const wire = uniformWallLayout(4, 1.0);
  const space = designSpace(parse(wire));
  const result = handbookSizing(space, { evaluate: false });
  const depth = runnerDepths(wire, "S");
  space.variables.forEach((v, j) => {
    if (v.kind !== "runner") return;
    const expected = 3 * MM * Math.pow(CBRT2, 1 - depth.get(v.element)!);
    assertClose(result.x[j], expected, { rel: 1e-9, what: v.element });
  });
});

// Metric ball-end series 2, 2.5, 3, 3.5, 4, 5, 6 … mm (common practice, no source), nearest cutter:
// 3.5 mm stays, 3.5·2^(1/3) = 4.41 mm → 4 mm, 3.5·2^(2/3) = 5.56 mm → 6 mm (by hand).
Deno.test("handbook: metric catalogue rounding of the rule diameters", () => {
  const wire = uniformWallLayout(8, 2.0, { cutters: "metric" });
  const space = designSpace(parse(wire));
  const result = handbookSizing(space, { evaluate: false });
  const depth = runnerDepths(wire, "S");
  const expectedMm = [6, 4, 3.5];
  space.variables.forEach((v, j) => {
    if (v.kind !== "runner") return;
    assertClose(result.x[j], expectedMm[depth.get(v.element)!] * MM, {
      rel: 1e-12,
      what: v.element,
    });
  });
});

// Gate sizes: tunnel/pin 0.5 × wall, edge 0.65 × wall, cut to 0.05 mm (common practice, no source):
// 0.5 × 2.0 = 1.00 mm; 0.65 × 1.7 = 1.105 mm → 1.10 mm (by hand).
Deno.test("handbook: gate sizes as wall fractions on the 0.05 mm grid", () => {
  for (
    const [gate, wall, expectedMm] of [["tunnel", 2.0, 1.0], ["edge", 1.7, 1.1]] as const
  ) {
    const space = designSpace(parse(uniformWallLayout(4, wall, { gate })));
    const result = handbookSizing(space, { evaluate: false });
    const gates = space.variables.map((v, j) => [v, j] as const).filter(([v]) => v.kind === "gate");
    assert.equal(gates.length, 4);
    for (const [v, j] of gates) {
      assertClose(result.x[j], expectedMm * MM, { rel: 1e-12, what: `${gate} ${v.element}` });
    }
  }
});

// One final simulation, and its design is the one returned (evaluate_design contract).
Deno.test("handbook: exactly one simulation, evaluation of the returned design", () => {
  const space = designSpace(parse(familyLayout(2)));
  const result = handbookSizing(space);
  assert.equal(result.simulations, 1);
  assert.ok(result.evaluation !== undefined, result.failure);
  assert.deepEqual(Array.from(result.evaluation.x), Array.from(result.x));
  for (const [j, v] of space.variables.entries()) {
    assert.ok(result.x[j] >= v.lower - 1e-12 && result.x[j] <= v.upper + 1e-12, v.element);
  }
});

// Toolroom loop only removes steel: sizes never decrease (steel-safe by construction); gate steps
// are +0.05 mm (or to the bound), runner steps go to the next metric cutter (series: common
// practice, no source).
Deno.test("toolroom: never decreases a size, steps are one cutter step, trials = simulations", () => {
  const space = designSpace(parse(
    JSON.parse(
      Deno.readTextFileSync(new URL("../../scenarios/family_four_housing.json", import.meta.url)),
    ),
  ));
  const metricMm = [2, 2.5, 3, 3.5, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13];
  const result = toolroomLoop(space, { maxTrials: 6 });
  // The demo is not balanced as drawn, so the loop must cut at least once (else the checks on
  // the steps below would pass on an empty list).
  assert.ok(result.steps.length >= 1, `no step taken (${result.reason})`);
  assert.ok(result.trials <= 6);
  assert.equal(result.simulations, result.trials);
  assert.ok(result.evaluation !== undefined);
  if (result.reason === "max_trials") assert.equal(result.steps.length, result.trials - 1);
  const x0 = currentDesign(space);
  for (const [j, v] of space.variables.entries()) {
    assert.ok(result.x[j] >= x0[j], `${v.element} shrank`);
  }
  for (const s of result.steps) {
    const v = space.variables[s.variable];
    assert.ok(s.to > s.from, `${s.element}: ${s.from} → ${s.to}`);
    if (v.kind === "gate") {
      if (s.to < v.upper) assertClose(s.to - s.from, 0.05 * MM, { abs: 1e-12, what: s.element });
    } else {
      const next = metricMm.find((mm) => mm * MM > s.from + 1e-9)!;
      assertClose(s.to, next * MM, { rel: 1e-12, what: s.element });
    }
  }
});

// Two identical cavities on identical branches fill together (symmetry): the loop stops after the
// first shot with nothing to change.
Deno.test("toolroom: a symmetric layout is balanced at the first trial", () => {
  const wire = familyLayout(2, { volumeSpread: 1 });
  const [a, b] = wire.cavities;
  Object.assign(b, { ...a, id: b.id, name: b.name });
  const [ga, gb] = wire.gates;
  Object.assign(gb, { ...ga, id: gb.id, from: gb.from, cavity: gb.cavity });
  const result = toolroomLoop(designSpace(parse(wire)), { maxTrials: 5 });
  assert.equal(result.reason, "balanced");
  assert.equal(result.trials, 1);
  assert.equal(result.steps.length, 0);
  assertClose(result.evaluation!.imbalancePercent, 0, { abs: 0.1, what: "imbalance %" });
});

Deno.test("toolroom: maxTrials bounds the simulations", () => {
  const result = toolroomLoop(designSpace(parse(familyLayout(2))), { maxTrials: 3 });
  assert.ok(result.simulations <= 3);
  assert.throws(
    () => toolroomLoop(designSpace(parse(familyLayout(2))), { maxTrials: 0 }),
    RangeError,
  );
});

// Rosenbrock (1960), Computer Journal 3:175: f = 100(y − x²)² + (1 − x)², minimum 0 at (1, 1),
// classic start (−1.2, 1).
Deno.test("Nelder–Mead core: Rosenbrock from (−1.2, 1) reaches the minimum at (1, 1)", () => {
  let calls = 0;
  const rosenbrock = (p: Float64Array) => {
    calls++;
    return 100 * (p[1] - p[0] ** 2) ** 2 + (1 - p[0]) ** 2;
  };
  const result = nelderMeadMinimise(rosenbrock, [-1.2, 1], { maxEvaluations: 2000 });
  assert.equal(result.reason, "converged");
  assert.equal(result.evaluations, calls);
  assertClose(result.x[0], 1, { abs: 1e-4, what: "x" });
  assertClose(result.x[1], 1, { abs: 1e-4, what: "y" });
  assertClose(result.value, 0, { abs: 1e-8, what: "f" });
});

// A separable convex quadratic on a box has its minimum at the clamped unconstrained minimum
// (elementary convexity): (x − 2)² + (y + 1)² + (z − 0.3)² on [0, 1]³ → (1, 0, 0.3).
Deno.test("Nelder–Mead core: box-clamped quadratic ends at the clamped minimum", () => {
  const f = (p: Float64Array) => (p[0] - 2) ** 2 + (p[1] + 1) ** 2 + (p[2] - 0.3) ** 2;
  const result = nelderMeadMinimise(f, [0.5, 0.5, 0.5], {
    maxEvaluations: 2000,
    lower: [0, 0, 0],
    upper: [1, 1, 1],
  });
  assertClose(result.x[0], 1, { abs: 1e-6, what: "x" });
  assertClose(result.x[1], 0, { abs: 1e-6, what: "y" });
  assertClose(result.x[2], 0.3, { abs: 1e-4, what: "z" });
});

Deno.test("Nelder–Mead core: the evaluation budget is never exceeded", () => {
  let calls = 0;
  const f = (p: Float64Array) => {
    calls++;
    return 100 * (p[1] - p[0] ** 2) ** 2 + (1 - p[0]) ** 2;
  };
  const result = nelderMeadMinimise(f, [-1.2, 1], { maxEvaluations: 30 });
  assert.equal(calls, 30);
  assert.equal(result.evaluations, 30);
  assert.equal(result.reason, "budget");
  // The best vertex never gets worse than the start (Nelder & Mead 1965: only the worst is replaced).
  assert.ok(result.value <= 100 * (1 - 1.44) ** 2 + 2.2 ** 2);
});

// On the simulation: budget respected, design inside the bounds, and the objective of the answer no
// worse than today's design (the start vertex, the first simulation; Nelder & Mead 1965: only the
// worst vertex is ever replaced). The start's objective is what nelderMead reports on a budget of
// one simulation, which is the start alone.
Deno.test("Nelder–Mead on the model: budget, bounds, no worse than the start", () => {
  const space = designSpace(parse(familyLayout(2)));
  const x0 = Float64Array.from(
    space.variables,
    (v) => Math.min(Math.max(v.current, v.lower), v.upper),
  );
  const start = nelderMead(space, { maxSimulations: 1 });
  assert.equal(start.simulations, 1);
  // One simulation: the start design (through the [0, 1] scaling and back, hence the tolerance).
  x0.forEach((xj, j) => assertClose(start.x[j], xj, { rel: 1e-12, what: `start x[${j}]` }));
  assert.ok(start.objective !== undefined && Number.isFinite(start.objective));

  const result = nelderMead(space, { maxSimulations: 12 });
  assert.ok(result.simulations <= 12 && result.simulations >= 2);
  assert.ok(result.evaluation !== undefined);
  for (const [j, v] of space.variables.entries()) {
    assert.ok(result.x[j] >= v.lower - 1e-12 && result.x[j] <= v.upper + 1e-12, v.element);
  }
  assert.ok(
    result.objective! <= start.objective,
    `${result.objective} vs start ${start.objective}`,
  );
  assert.throws(() => nelderMead(space, { maxSimulations: 0 }), RangeError);
});
