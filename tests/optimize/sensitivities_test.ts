import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import type { DesignSpace } from "../../src/optimize/design_space.ts";
import type { DesignEvaluation } from "../../src/optimize/evaluate_design.ts";
import { broydenSensitivities, type Sensitivities } from "../../src/optimize/sensitivities.ts";

// Broyden's rank-one update (Broyden (1965) Math. Comp. 19:577), here on log slopes L (∂ln r/∂ln x):
// L' = L + (Δln r − L·Δln x)·Δln xᵀ/|Δln x|². Two properties define it, and are checked here:
// the secant condition L'·Δln x = Δln r along the step, and L'·d = L·d for every d ⊥ Δln x.

/** A runner R1 and a pin gate G2 of cavity 1 (round: the mean-flow shear exponent is 3). */
const SPACE = {
  variables: [
    { element: "R1", kind: "runner", dimension: "diameter" },
    { element: "G2", kind: "gate", dimension: "diameter" },
  ],
  ordering: [],
  gateCavity: [-1, 1],
} as unknown as DesignSpace;

function design(x: number[], times: number[], reference: number, peak: number): DesignEvaluation {
  return {
    x: Float64Array.from(x),
    splitFillTimes: times,
    feedPressureReference: reference,
    feedPressurePeak: peak,
    gateShearBalanced: [30000, 42000],
  } as unknown as DesignEvaluation;
}

const FROM = design([5e-3, 1.2e-3], [1.0, 0.92], 60e6, 66e6);
const TO = design([5.4e-3, 1.1e-3], [0.97, 0.95], 57e6, 64e6);
const S: Sensitivities = {
  fillTime: [[-40, 150], [25, -300]],
  gateShear: [[0, 0], [0, 0]],
  pressure: [-1.5e10, -2e10],
  runnerVolume: [1, 2],
  simulations: 3,
};
const KNOWN_VOLUME = [7e-4, 3e-6];

const dlx = [Math.log(5.4 / 5), Math.log(1.1 / 1.2)];
/** A direction orthogonal to the step. */
const across = [-dlx[1], dlx[0]];
const dot = (a: readonly number[], b: readonly number[]) => a[0] * b[0] + a[1] * b[1];

Deno.test("broydenSensitivities: the updated fill-time slopes satisfy the secant condition", () => {
  const updated = broydenSensitivities(SPACE, S, FROM, TO, { runnerVolume: KNOWN_VOLUME });
  for (const i of [0, 1]) {
    // Returned slopes are absolute at `to`: log slope = g'·x_to/t_to.
    const log = updated.fillTime[i].map((g, j) => (g * TO.x[j]) / TO.splitFillTimes[i]);
    assertClose(dot(log, dlx), Math.log(TO.splitFillTimes[i] / FROM.splitFillTimes[i]), {
      rel: 1e-12,
      what: `secant, cavity ${i}`,
    });
    // Across the step nothing changes: the old log slopes at `from` give the same product.
    const before = S.fillTime[i].map((g, j) => (g * FROM.x[j]) / FROM.splitFillTimes[i]);
    assertClose(dot(log, across), dot(before, across), {
      rel: 1e-12,
      what: `orthogonal direction, cavity ${i}`,
    });
  }
});

Deno.test("broydenSensitivities: the pressure slopes follow the reference pressure's secant", () => {
  const updated = broydenSensitivities(SPACE, S, FROM, TO, { runnerVolume: KNOWN_VOLUME });
  // Pressure slopes are the reference pressure's relative slopes applied to the peak, so in log
  // form g'·x/p_peak, and the secant is the reference pressure's change.
  const log = updated.pressure.map((g, j) => (g * TO.x[j]) / TO.feedPressurePeak);
  assertClose(dot(log, dlx), Math.log(57 / 60), { rel: 1e-12, what: "pressure secant" });
  const before = S.pressure.map((g, j) => (g * FROM.x[j]) / FROM.feedPressurePeak);
  assertClose(dot(log, across), dot(before, across), { rel: 1e-12, what: "pressure across" });
});

Deno.test("broydenSensitivities: shear by the mean-flow law at `to`, known volume slopes kept", () => {
  const updated = broydenSensitivities(SPACE, S, FROM, TO, { runnerVolume: KNOWN_VOLUME });
  assert.deepEqual(updated.runnerVolume, KNOWN_VOLUME);
  assert.equal(updated.simulations, 0, "an update costs no simulation");
  // γ̇ ∝ (V/t)·d⁻³ for a round gate (power-law tube, Bird, Armstrong & Hassager vol. 1):
  // ∂ln γ̇_i/∂ln x_j = −∂ln t_i/∂ln x_j − 3·[x_j is cavity i's gate].
  for (const i of [0, 1]) {
    for (const j of [0, 1]) {
      const logT = (updated.fillTime[i][j] * TO.x[j]) / TO.splitFillTimes[i];
      const own = j === 1 && i === 1 ? 3 : 0;
      const expected = ((-logT - own) * TO.gateShearBalanced[i]) / TO.x[j];
      assertClose(updated.gateShear[i][j], expected, { rel: 1e-12, what: `shear ${i},${j}` });
    }
  }
});

Deno.test("broydenSensitivities: slopes that already satisfy the secant are left as they are", () => {
  // Log slopes L chosen first; `to` made from them exactly (t_to = t_from·exp(L·Δln x)).
  const L = [[-0.3, 0.5], [0.2, -0.8]];
  const times = [0, 1].map((i) => FROM.splitFillTimes[i] * Math.exp(dot(L[i], dlx)));
  const to = design([5.4e-3, 1.1e-3], times, 60e6, 66e6);
  const s = {
    ...S,
    fillTime: L.map((row, i) => row.map((l, j) => (l * FROM.splitFillTimes[i]) / FROM.x[j])),
  };
  const updated = broydenSensitivities(SPACE, s, FROM, to, { runnerVolume: KNOWN_VOLUME });
  for (const i of [0, 1]) {
    for (const j of [0, 1]) {
      assertClose((updated.fillTime[i][j] * to.x[j]) / times[i], L[i][j], {
        rel: 1e-12,
        what: `log slope ${i},${j} unchanged`,
      });
    }
  }
});
