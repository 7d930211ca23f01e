import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import { calibrate } from "../../src/calibrate/calibrate.ts";
import { applyFactors, type CalibrationFactor } from "../../src/calibrate/factors.ts";
import type { Measurements } from "../../src/calibrate/measurements.ts";
import { mulberry32 } from "../support/seeded_random.ts";
import type { ScenarioWire } from "../../src/model/scenario_schema.ts";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import { LIBRARY_MATERIAL_IDS, simulateScenario } from "../../src/network/simulate_scenario.ts";
import { unequalBranches } from "../network/_scenarios.ts";

// Synthetic measurements: the model itself with known factors applied (the recovery test
// issue 14 asks for), read as short shots at given shot sizes; optional Gaussian noise.
function synthetic(
  wire: ScenarioWire,
  factors: CalibrationFactor[],
  truth: number[],
  shotPercents: number[],
  options: { noise?: number; seed?: number; pressure?: boolean } = {},
): Measurements {
  const scaled = applyFactors(wire, factors, truth);
  const probe = simulateScenario(scaled);
  assert.ok(probe.ok);
  const shot = probe.run.network.feedSystemVolume + probe.run.network.cavityVolume;
  const outcome = simulateScenario(scaled, {
    sampleVolumes: shotPercents.map((percent) => (percent / 100) * shot),
  });
  assert.ok(outcome.ok);
  const { fill, network } = outcome.run;
  const random = mulberry32(options.seed ?? 1);
  const gauss = () => {
    // Box–Muller transform.
    const u = Math.max(random(), 1e-12);
    return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * random());
  };
  const fillAt = (k: number, i: number) => fill.samples![k].cavityFill[i];
  return {
    short_shots: shotPercents.map((percent, k) => ({
      shot_percent: percent,
      parts: network.cavities.map((c, i) => ({
        cavity: c.id,
        fill_percent: Math.min(
          100,
          Math.max(
            0,
            100 * fillAt(k, i) + 100 * (options.noise ?? 0) * gauss(),
          ),
        ),
      })),
    })),
    full_shot_pressure_MPa: options.pressure ? fill.feedPressureAtSwitchover / 1e6 : undefined,
  };
}

const tool = () => {
  const wire = unequalBranches("isothermal");
  wire.process.switchover_percent = 98;
  return wire;
};

Deno.test("calibrate: a gate's effective size is recovered from noise-free short shots to 1e-3", () => {
  const factors: CalibrationFactor[] = [{ kind: "gate_size", gate: "G1" }];
  const measured = synthetic(tool(), factors, [0.88], [50, 70, 85]);
  // Noise-free data: say so (a tiny stated noise), so the pull toward nominal does not bias it.
  const fit = calibrate(tool(), measured, { factors, fillNoise: 1e-5 });
  assert.ok(fit.ok, JSON.stringify(!fit.ok && fit));
  assertClose(fit.factors[0].value, 0.88, { rel: 1e-3, what: "G1 size factor" });
  assert.ok(fit.factors[0].identified);
  assert.ok(fit.costAfter < 1e-3 * fit.costBefore, "the fit explains the shots");
  for (const r of fit.residuals) assertClose(r.after, r.measured, { abs: 2e-4, what: r.cavity });
});

Deno.test("calibrate: two factors at once (a gate and a runner) from noise-free shots", () => {
  const factors: CalibrationFactor[] = [
    { kind: "gate_size", gate: "G2" },
    { kind: "runner_size", runner: "R1" },
  ];
  const measured = synthetic(tool(), factors, [1.1, 0.92], [40, 55, 70, 85], { pressure: true });
  const fit = calibrate(tool(), measured, { factors, fillNoise: 1e-5, pressureNoise: 1e-5 });
  assert.ok(fit.ok);
  assertClose(fit.factors[0].value, 1.1, {
    rel: 1e-3,
    what: "G2 size factor",
  });
  assertClose(fit.factors[1].value, 0.92, { rel: 1e-3, what: "R1" });
});

Deno.test("calibrate: a pure power law's viscosity is not identified by masses alone, and is with the pressure", () => {
  // In a network of power-law elements with one K, every pressure drop scales with K and the
  // fronts sit at 0 Pa, so the split (and every short-shot mass) does not depend on K at all
  // (Kirchhoff's laws with ΔP = K·f(Q)): the data cannot see it. The injection pressure can.
  const factors: CalibrationFactor[] = [{ kind: "viscosity" }];
  const masses = synthetic(tool(), factors, [1.3], [50, 80]);
  const blind = calibrate(tool(), masses, { factors });
  assert.ok(blind.ok);
  assert.equal(blind.factors[0].identified, false, "not identified from masses");
  assertClose(blind.factors[0].value, 1, { abs: 1e-6, what: "stays at the nominal model" });
  const withPressure = synthetic(tool(), factors, [1.3], [50, 80], { pressure: true });
  const seen = calibrate(tool(), withPressure, { factors, pressureNoise: 1e-5 });
  assert.ok(seen.ok);
  assert.ok(seen.factors[0].identified);
  assertClose(seen.factors[0].value, 1.3, { rel: 1e-3, what: "viscosity factor" });
});

Deno.test("calibrate: with 1 % fill noise the truth lies within 2 standard errors in most seeds", () => {
  const factors: CalibrationFactor[] = [{ kind: "gate_size", gate: "G1" }];
  let inside = 0;
  const seeds = [1, 2, 3, 4, 5, 6, 7, 8];
  for (const seed of seeds) {
    const measured = synthetic(tool(), factors, [0.9], [45, 60, 75, 90], { noise: 0.01, seed });
    const fit = calibrate(tool(), measured, { factors, fillNoise: 0.01 });
    assert.ok(fit.ok);
    if (Math.abs(fit.factors[0].value - 0.9) <= 2 * fit.factors[0].standardError) inside++;
  }
  // A Gaussian estimate lies within 2σ with probability 0.954; 6 of 8 or more is expected
  // (binomial, P ≈ 0.99).
  assert.ok(inside >= 6, `${inside} of ${seeds.length} seeds within 2 standard errors`);
});

Deno.test("calibrate: the calibrated scenario is valid and reproduces the fitted shots", () => {
  const factors: CalibrationFactor[] = [
    { kind: "gate_size", gate: "G1" },
    { kind: "viscosity" },
  ];
  const measured = synthetic(tool(), factors, [0.9, 1.2], [50, 75], { pressure: true });
  const fit = calibrate(tool(), measured, { factors, fillNoise: 1e-5, pressureNoise: 1e-5 });
  assert.ok(fit.ok);
  const parsed = parseScenario(fit.calibrated, { materialIds: LIBRARY_MATERIAL_IDS });
  assert.ok(parsed.ok, JSON.stringify(!parsed.ok && parsed.issues));
  const again = simulateScenario(fit.calibrated);
  assert.ok(again.ok);
  assertClose(again.run.fill.feedPressureAtSwitchover / 1e6, measured.full_shot_pressure_MPa!, {
    rel: 1e-3,
    what: "pressure of the calibrated scenario",
  });
});

Deno.test("calibrate: measurements that cannot be right are refused with their JSON paths", () => {
  const bad: Measurements = {
    short_shots: [
      { injected_cm3: 500, parts: [{ cavity: "C1", mass_g: 5 }] },
      { shot_percent: 50, parts: [{ cavity: "C9", mass_g: 5 }, { cavity: "C2", mass_g: 400 }] },
    ],
  };
  const fit = calibrate(tool(), bad, { factors: [{ kind: "viscosity" }] });
  assert.ok(!fit.ok && fit.code === "invalid_measurements");
  const at = fit.issues.map((i) => i.at).sort();
  assert.deepEqual(at, [
    "measurements.short_shots[0].injected_cm3",
    "measurements.short_shots[1].parts[0].cavity",
    "measurements.short_shots[1].parts[1].mass_g",
  ]);
});
