import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import type { DesignSpace } from "../../src/optimize/design_space.ts";
import type { DesignEvaluation } from "../../src/optimize/evaluate_design.ts";
import type { Sensitivities } from "../../src/optimize/sensitivities.ts";
import {
  formulateStep,
  imbalanceViolation,
  modelMerit,
  PENALTY,
  snappedMerit,
  violation,
} from "../../src/optimize/slp_step.ts";

// Every expected value below is worked out by hand from the definitions in slp_step.ts's JSDoc
// (the ℓ₁ log-band distance; rows ln r + Σ (∂ln r/∂ln x_j)·Δ·u_j ≤ ln limit + slack), with the
// arithmetic written out beside it. The ℓ₁ penalty form is Fletcher's Sℓ₁LP (Fletcher & de la
// Maza (1989) Math. Programming 43:235).

Deno.test("imbalanceViolation: zero inside the band, spread minus band width outside it", () => {
  // Equal times, and a 1 % spread under a 2 % band: the band covers every ln t_i.
  assert.equal(imbalanceViolation([1.2, 1.2, 1.2], 0.02), 0);
  assert.equal(imbalanceViolation([1, 0.99], 0.02), 0);
  // Exactly at the threshold: (t_max − t_min)/t_max = ε, so ln t_max − ln t_min = −ln(1 − ε).
  assert.equal(imbalanceViolation([1, 0.98], 0.02), 0);
  // Two times: the band sits between them, the distance left is ln(t_max/t_min) + ln(1 − ε).
  assertClose(imbalanceViolation([1, 0.9], 0.02), Math.log(1 / 0.9) + Math.log(0.98), {
    rel: 1e-12,
    what: "two times",
  });
  // Three times: with the middle one inside the band, the ℓ₁ distance of the outer two is
  // ln(t_max/t_min) − width whatever the band's place between them (it cannot do better).
  assertClose(imbalanceViolation([0.8, 1, 0.9], 0.02), Math.log(1 / 0.8) + Math.log(0.98), {
    rel: 1e-12,
    what: "three times",
  });
  // Five times, four equal and one late: the band [ln 1, ln 1 + width] holds the four (moving
  // it up costs 4 per unit, the late one saves 1), the late one pays ln 1.5 − width.
  assertClose(imbalanceViolation([1, 1, 1, 1, 1.5], 0.1), Math.log(1.5) + Math.log(0.9), {
    rel: 1e-12,
    what: "one late cavity among five",
  });
  // A time that is not a positive finite number counts as a whole unit.
  assert.equal(imbalanceViolation([1, 0], 0.02), 1);
  assert.equal(imbalanceViolation([1, Number.NaN], 0.02), 1);
});

/** A hand-made evaluation: only the fields the merit and the LP read. */
function evaluation(over: Partial<DesignEvaluation> = {}): DesignEvaluation {
  return {
    x: Float64Array.from([4e-3, 1e-3]),
    fillTimes: [1, 0.95],
    splitFillTimes: [1, 0.9],
    gateShearBalanced: [40000, 60000],
    gateShear: [45000, 70000],
    gateShearLimit: 50000,
    feedPressurePeak: 80e6,
    feedPressureReference: 75e6,
    pressureLimit: 160e6,
    runnerVolume: 3e-6,
    violations: [],
    ...over,
  } as unknown as DesignEvaluation;
}

const EPS = 0.02;
const WIDTH = -Math.log(1 - EPS);

Deno.test("violation: band distances, log excess of shear and pressure, flagged limits", () => {
  // fill times [1, 0.95]: ln(1/0.95) − width; split times [1, 0.9]: ln(1/0.9) − width.
  const simulated = Math.log(1 / 0.95) - WIDTH;
  const split = Math.log(1 / 0.9) - WIDTH;
  const within = evaluation({ feedPressurePeak: 80e6 });
  // Balanced shear [40000, 60000] against 50000: only the second is over, by ln 1.2.
  assertClose(violation(within, EPS), split + Math.log(1.2), { rel: 1e-12, what: "default" });
  assertClose(violation(within, EPS, { split: false }), simulated + Math.log(1.2), {
    rel: 1e-12,
    what: "simulated times only",
  });
  // Peak shear [45000, 70000]: ln 1.4; both: ln 1.2 + ln 1.4.
  assertClose(violation(within, EPS, { shear: "peak" }), split + Math.log(1.4), {
    rel: 1e-12,
    what: "peak shear",
  });
  assertClose(
    violation(within, EPS, { shear: "both" }),
    split + Math.log(1.2) + Math.log(1.4),
    { rel: 1e-12, what: "both shears" },
  );
  // Pressure 180 MPa against 160 MPa: + ln 1.125. A cavity not filled: + 1. A feed-order
  // breach by 10 %: + ln 1.1. An imbalance flag adds nothing (the band term counts it).
  const flagged = evaluation({
    feedPressurePeak: 180e6,
    violations: [
      { code: "not_filled", excess: 1, message: "" },
      { code: "ordering", excess: 0.1, message: "" },
      { code: "imbalance", excess: 0.5, message: "" },
    ],
  });
  assertClose(
    violation(flagged, EPS),
    split + Math.log(1.2) + Math.log(1.125) + 1 + Math.log(1.1),
    { rel: 1e-12, what: "every term" },
  );
  // Every limit met and balanced: exactly zero.
  const clean = evaluation({
    fillTimes: [1, 0.99],
    splitFillTimes: [1, 0.995],
    gateShearBalanced: [40000, 45000],
    gateShear: [41000, 49000],
  });
  assert.equal(violation(clean, EPS, { shear: "both" }), 0);
});

Deno.test("snappedMerit: relative volume plus the penalty on simulated times and both shears", () => {
  const e = evaluation({ feedPressurePeak: 170e6 });
  const V0 = 2e-6;
  const expected = 3e-6 / V0 +
    PENALTY * (Math.log(1 / 0.95) - WIDTH + Math.log(1.2) + Math.log(1.4) + Math.log(170 / 160));
  assertClose(snappedMerit(e, EPS, V0), expected, { rel: 1e-12, what: "snapped merit" });
});

/** Two sizes: a runner R1 (4 mm, 3–8 mm) and an edge gate G1's depth (1 mm, 0.95–1.05 mm). */
const SPACE = {
  variables: [
    { element: "R1", kind: "runner", dimension: "diameter", lower: 3e-3, upper: 8e-3 },
    { element: "G1", kind: "gate", dimension: "thickness", lower: 0.95e-3, upper: 1.05e-3 },
  ],
  ordering: [],
  gateCavity: [-1, 0],
} as unknown as DesignSpace;

/** Slopes in absolute units (s/m, (1/s)/m, Pa/m, m³/m), chosen by hand. */
const SLOPES: Sensitivities = {
  fillTime: [[-50, -100], [30, -400]],
  gateShear: [[0, -1.2e8], [5e5, 0]],
  pressure: [-2e10, -5e10],
  runnerVolume: [6e-4, 1e-5],
  simulations: 0,
};

Deno.test("formulateStep: bounds and costs in log units, one row per response, objective at zero", () => {
  const e = evaluation();
  const R = 0.1;
  const V0 = 2e-6;
  const { lp, linearMeritAtZero, toDesign } = formulateStep(SPACE, e, SLOPES, {
    radius: R,
    epsilon: EPS,
    limitShare: 0.97,
    V0,
  });
  assert.equal(lp.sense, "minimize");
  const byName = new Map(lp.variables.map((v) => [v.name, v]));
  // u_j: x_j·exp(R·u_j) within [lower, upper] and the box |u| ≤ 1, 0 always inside.
  // R1: ln(3/4)/0.1 = −2.88 → −1; ln(8/4)/0.1 = 6.93 → 1.
  assert.equal(byName.get("u_R1")!.lower, -1);
  assert.equal(byName.get("u_R1")!.upper, 1);
  // G1: ln(0.95)/0.1 = −0.513 and ln(1.05)/0.1 = 0.488, inside the box.
  assertClose(byName.get("u_G1")!.lower, Math.log(0.95) / R, { rel: 1e-12, what: "G1 lower" });
  assertClose(byName.get("u_G1")!.upper, Math.log(1.05) / R, { rel: 1e-12, what: "G1 upper" });
  // Cost: relative volume change per unit u = (∂V/∂x)·x·R/V0: 6e-4·4e-3·0.1/2e-6 = 0.12 and
  // 1e-5·1e-3·0.1/2e-6 = 5e-4.
  assertClose(byName.get("u_R1")!.cost, 0.12, { rel: 1e-12, what: "R1 cost" });
  assertClose(byName.get("u_G1")!.cost, 5e-4, { rel: 1e-12, what: "G1 cost" });
  // v = ln τ − ln t_max in [−1, 1], free of cost; every slack ≥ 0 at the penalty weight.
  assert.deepEqual(
    [byName.get("v")!.lower, byName.get("v")!.upper, byName.get("v")!.cost],
    [-1, 1, 0],
  );
  const slacks = lp.variables.filter((v) => v.name.startsWith("s_"));
  assert.deepEqual(slacks.map((v) => v.name).sort(), [
    "s_early_0",
    "s_early_1",
    "s_late_0",
    "s_late_1",
    "s_pressure",
    "s_shear_0",
    "s_shear_1",
  ]);
  for (const s of slacks) assert.deepEqual([s.lower, s.upper, s.cost], [0, Infinity, PENALTY]);

  const index = (name: string) => lp.variables.findIndex((v) => v.name === name);
  const row = (name: string) => {
    const r = lp.rows.find((x) => x.name === name);
    assert.ok(r, `row ${name}`);
    const coefficient = (variable: string) =>
      r.terms.filter(([j]) => j === index(variable)).reduce((s, [, c]) => s + c, 0);
    return { ...r, coefficient };
  };
  assert.equal(lp.rows.length, 2 * 2 + 2 + 1, "late/early per cavity, shear per gate, pressure");
  // Fill-time log slopes (∂t/∂x)·x·R/t: cavity 0: −50·4e-3·0.1/1 = −0.02, −100·1e-3·0.1/1 = −0.01;
  // cavity 1: 30·4e-3·0.1/0.9 = 0.013333, −400·1e-3·0.1/0.9 = −0.044444.
  const late1 = row("late_1");
  assertClose(late1.coefficient("u_R1"), 0.012 / 0.9, { rel: 1e-12, what: "late_1 R1" });
  assertClose(late1.coefficient("u_G1"), -0.04 / 0.9, { rel: 1e-12, what: "late_1 G1" });
  assert.equal(late1.coefficient("v"), -1);
  assert.equal(late1.coefficient("s_late_1"), -1);
  // late: ln(t_i/t_max) + slope·u − v ≤ slack, so upper = −ln(0.9/1).
  assertClose(late1.upper, -Math.log(0.9), { rel: 1e-12, what: "late_1 bound" });
  assert.equal(late1.lower, -Infinity);
  const early0 = row("early_0");
  assertClose(early0.coefficient("u_R1"), 0.02, { rel: 1e-12, what: "early_0 R1 (negated)" });
  assertClose(early0.coefficient("u_G1"), 0.01, { rel: 1e-12, what: "early_0 G1 (negated)" });
  assert.equal(early0.coefficient("v"), 1);
  // early: v − width − ln(t_i/t_max) − slope·u ≤ slack, so upper = ln(1/1) + width.
  assertClose(early0.upper, WIDTH, { rel: 1e-12, what: "early_0 bound" });
  // Shear rows against 0.97 × 50000 = 48500 1/s: log slopes (∂γ̇/∂x)·x·R/γ̇:
  // gate 0: −1.2e8·1e-3·0.1/40000 = −0.3; gate 1: 5e5·4e-3·0.1/60000 = 0.0033333.
  const shear0 = row("shear_0");
  assertClose(shear0.coefficient("u_G1"), -0.3, { rel: 1e-12, what: "shear_0 G1" });
  assertClose(shear0.upper, -Math.log(40000 / 48500), { rel: 1e-12, what: "shear_0 bound" });
  const shear1 = row("shear_1");
  assertClose(shear1.coefficient("u_R1"), 200 / 60000, { rel: 1e-12, what: "shear_1 R1" });
  assertClose(shear1.upper, -Math.log(60000 / 48500), { rel: 1e-12, what: "shear_1 bound" });
  // Pressure: −2e10·4e-3·0.1/80e6 = −0.1, −5e10·1e-3·0.1/80e6 = −0.0625; limit 0.97 × 160 MPa.
  const pressure = row("pressure");
  assertClose(pressure.coefficient("u_R1"), -0.1, { rel: 1e-12, what: "pressure R1" });
  assertClose(pressure.coefficient("u_G1"), -0.0625, { rel: 1e-12, what: "pressure G1" });
  assertClose(pressure.upper, -Math.log(80 / (0.97 * 160)), { rel: 1e-12, what: "pressure" });
  // Objective at u = 0: volume 3e-6/2e-6 = 1.5, plus the penalty on the split band distance
  // ln(1/0.9) − width and on the one shear over its aim, ln(60000/48500); pressure is under.
  assertClose(
    linearMeritAtZero,
    1.5 + PENALTY * (Math.log(1 / 0.9) - WIDTH + Math.log(60000 / 48500)),
    { rel: 1e-12, what: "linear merit at zero" },
  );
  // toDesign: x·exp(R·u), clipped to the bounds; at the box edge flagged.
  const solution = new Float64Array(lp.variables.length);
  solution[index("u_R1")] = 1;
  solution[index("u_G1")] = 0.2;
  const next = toDesign(solution);
  assertClose(next.x[0], 4e-3 * Math.exp(0.1), { rel: 1e-12, what: "R1 stepped" });
  assertClose(next.x[1], 1e-3 * Math.exp(0.02), { rel: 1e-12, what: "G1 stepped" });
  assert.equal(next.atEdge, true);
});

Deno.test("formulateStep: a feed-order rule is a row ln x_a + Δu_a ≥ ln x_b + Δu_b, never worse than today", () => {
  const space = {
    variables: [
      { element: "R1", kind: "runner", dimension: "diameter", lower: 3e-3, upper: 8e-3 },
      { element: "R2", kind: "runner", dimension: "diameter", lower: 3e-3, upper: 8e-3 },
    ],
    ordering: [{ upstream: 0, downstream: 1 }],
    gateCavity: [-1, -1],
  } as unknown as DesignSpace;
  const R = 0.1;
  // Row: R·u_1 − R·u_2 ≥ min(0, −ln(x_1/x_2)). Today R1 = 4 mm feeds R2 = 5 mm (breaks the
  // rule): −ln(4/5) > 0, so the bound is 0 (the step may not make it worse, need not mend it).
  // R1 = 6 mm: the rule holds with room ln(6/5), which the step may use up.
  for (const [x0, expectedLower] of [[4e-3, 0], [6e-3, -Math.log(6 / 5)]] as const) {
    const e = evaluation({ x: Float64Array.from([x0, 5e-3]) });
    const { lp } = formulateStep(space, e, SLOPES, {
      radius: R,
      epsilon: EPS,
      limitShare: 1,
      V0: 1e-6,
    });
    const order = lp.rows.find((r) => r.name === "order_R1_R2");
    assert.ok(order);
    assert.deepEqual(order.terms, [[0, R], [1, -R]]);
    assertClose(order.lower, expectedLower, { abs: 1e-15, what: `order lower at R1 = ${x0}` });
    assert.equal(order.upper, Infinity);
  }
});

Deno.test("modelMerit: the log-linear model's responses at a step, judged on the goals", () => {
  const e = evaluation();
  const V0 = 2e-6;
  // At today's sizes the model gives today's split responses: volume 1.5, split band distance,
  // shear ln(60000/50000) over the goal (not the LP's 97 % aim), pressure under.
  assertClose(
    modelMerit(SPACE, e, SLOPES, e.x, { epsilon: EPS, V0 }),
    1.5 + PENALTY * (Math.log(1 / 0.9) - WIDTH + Math.log(1.2)),
    { rel: 1e-12, what: "at today's sizes" },
  );
  // R1 10 % larger, G1 unchanged: d = ln 1.1 on R1 only. r' = r·exp((∂r/∂x·x/r)·d):
  const d = Math.log(1.1);
  const t0 = 1 * Math.exp(((-50 * 4e-3) / 1) * d);
  const t1 = 0.9 * Math.exp(((30 * 4e-3) / 0.9) * d);
  const g1 = 60000 * Math.exp(((5e5 * 4e-3) / 60000) * d);
  const p = 80e6 * Math.exp(((-2e10 * 4e-3) / 80e6) * d); // log slope −1: 80 MPa/1.1
  const volume = 3e-6 + 6e-4 * 4e-3 * d;
  assert.ok(p < 160e6);
  const band = Math.max(0, Math.log(Math.max(t0, t1) / Math.min(t0, t1)) - WIDTH);
  const x = Float64Array.from([4.4e-3, 1e-3]);
  assertClose(
    modelMerit(SPACE, e, SLOPES, x, { epsilon: EPS, V0 }),
    volume / V0 + PENALTY * (band + Math.log(g1 / 50000)),
    { rel: 1e-12, what: "after a 10 % runner step" },
  );
});
