import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import { fitCrossWlf, type ViscosityPoint } from "../../src/materials/fit_cross_wlf.ts";
import {
  type CrossWlfViscosity,
  viscosityAt,
  zeroShearViscosity,
} from "../../src/materials/viscosity.ts";
import { mulberry32 } from "../support/seeded_random.ts";

// The "truth" parameters are invented for these tests (PP-like and PC-like magnitudes). The
// synthetic data come from the Cross-WLF formula itself; what the test checks is that the fit
// recovers the parameters it was generated from (an external, known answer).
const ppLike: CrossWlfViscosity = {
  model: "cross_wlf",
  n: 0.3,
  tauStar: 3e4,
  d1: 2e14,
  d2: 263.15,
  d3: 0,
  a1: 30,
  a2: 51.6,
  convention: "A2_shifts_with_pressure",
};
const pcLike: CrossWlfViscosity = {
  model: "cross_wlf",
  n: 0.18,
  tauStar: 5e5,
  d1: 8e11,
  d2: 420,
  d3: 0,
  a1: 27,
  a2: 51.6,
  convention: "A2_shifts_with_pressure",
};

/** Points at the given temperatures, shear rates 10…10⁵ 1/s (9 per decade-half), optional noise. */
function synthesize(
  truth: CrossWlfViscosity,
  temperatures: number[],
  options: { noise?: number; seed?: number; pressures?: number[] } = {},
): ViscosityPoint[] {
  const random = mulberry32(options.seed ?? 1);
  const noise = options.noise ?? 0;
  const points: ViscosityPoint[] = [];
  for (const temperatureK of temperatures) {
    for (const pressurePa of options.pressures ?? [0]) {
      for (let e = 1; e <= 5.0001; e += 0.5) {
        const shearRate = Math.pow(10, e);
        const exact = viscosityAt({ viscosity: truth }, shearRate, {
          temperature: temperatureK,
          pressure: pressurePa,
        });
        const factor = 1 + noise * (2 * random() - 1);
        points.push({ temperatureK, shearRate, viscosity: exact * factor, pressurePa });
      }
    }
  }
  return points;
}

function assertRecovered(fit: CrossWlfViscosity, truth: CrossWlfViscosity, rel: number): void {
  assertClose(fit.n, truth.n, { rel, what: "n" });
  assertClose(fit.tauStar, truth.tauStar, { rel, what: "τ*" });
  assertClose(fit.d1, truth.d1, { rel, what: "D1" });
  assertClose(fit.a1, truth.a1, { rel, what: "A1" });
}

Deno.test("noise-free data: the known parameters are recovered to 1e-6", () => {
  const cases: [CrossWlfViscosity, number[]][] = [
    [ppLike, [473.15, 503.15, 533.15]],
    [pcLike, [553.15, 573.15, 593.15, 613.15]],
  ];
  for (const [truth, temperatures] of cases) {
    const fit = fitCrossWlf(synthesize(truth, temperatures), { d2: truth.d2 });
    assert.ok(fit.ok, fit.ok ? "" : fit.message);
    assertRecovered(fit.parameters, truth, 1e-6);
    assert.equal(fit.parameters.d2, truth.d2);
    assert.equal(fit.parameters.a2, 51.6);
    assert.equal(fit.parameters.d3, 0);
    assertClose(fit.rmsLogResidual, 0, { abs: 1e-9, what: "rms ln-residual" });
  }
});

Deno.test("3 % multiplicative noise: viscosity and shape recovered within stated tolerances", () => {
  // Uniform noise ±3 % gives a ln-residual standard deviation 0.03/√3 = 0.0173 (uniform
  // distribution, variance w²/3). D1 alone is poorly determined (it extrapolates η0 from the
  // measured temperatures down to T* ≈ Tg), so the check is on n, τ* and η0 where data exist.
  // η0 is itself extrapolated (at 10 1/s this melt already thins), hence 10 % on η0 but 3 %
  // (the noise amplitude) on η inside the measured range.
  const temperatures = [473.15, 503.15, 533.15];
  for (const seed of [1, 2, 3]) {
    const fit = fitCrossWlf(synthesize(ppLike, temperatures, { noise: 0.03, seed }), {
      d2: ppLike.d2,
    });
    assert.ok(fit.ok, fit.ok ? "" : fit.message);
    const p = fit.parameters;
    assertClose(p.n, ppLike.n, { abs: 0.02, what: `n (seed ${seed})` });
    assertClose(p.tauStar, ppLike.tauStar, { rel: 0.15, what: `τ* (seed ${seed})` });
    for (const t of temperatures) {
      assertClose(zeroShearViscosity(p, t, 0), zeroShearViscosity(ppLike, t, 0), {
        rel: 0.1,
        what: `η0(${t} K) (seed ${seed})`,
      });
      for (const rate of [10, 1e3, 1e5]) {
        assertClose(
          viscosityAt({ viscosity: p }, rate, { temperature: t }),
          viscosityAt({ viscosity: ppLike }, rate, { temperature: t }),
          { rel: 0.03, what: `η(${rate} 1/s, ${t} K) (seed ${seed})` },
        );
      }
    }
    assertClose(fit.rmsLogResidual, 0.03 / Math.sqrt(3), { rel: 0.3, what: "rms ln-residual" });
  }
});

Deno.test("pressure data: D3 is fitted, both conventions", () => {
  for (const convention of ["A2_shifts_with_pressure", "A2_constant"] as const) {
    const truth: CrossWlfViscosity = { ...pcLike, d3: 2e-7, convention };
    const points = synthesize(truth, [553.15, 583.15, 613.15], { pressures: [0, 4e7, 8e7] });
    const fit = fitCrossWlf(points, { d2: truth.d2, fitPressureShift: true, convention });
    assert.ok(fit.ok, fit.ok ? "" : fit.message);
    assertRecovered(fit.parameters, truth, 1e-6);
    assertClose(fit.parameters.d3, truth.d3, { rel: 1e-6, what: `D3 (${convention})` });
    assert.equal(fit.parameters.convention, convention);
  }
});

Deno.test("failures come back as values with stable codes", () => {
  const points = synthesize(ppLike, [473.15, 503.15]);
  const few = fitCrossWlf(points.slice(0, 4), { d2: ppLike.d2 });
  assert.equal(few.ok ? "ok" : few.code, "too_few_points");
  const oneT = fitCrossWlf(synthesize(ppLike, [503.15]), { d2: ppLike.d2 });
  assert.equal(oneT.ok ? "ok" : oneT.code, "too_few_temperatures");
  const bad = fitCrossWlf([...points, { temperatureK: 500, shearRate: 100, viscosity: -1 }], {
    d2: ppLike.d2,
  });
  assert.equal(bad.ok ? "ok" : bad.code, "invalid_point");
  const noP = fitCrossWlf(points, { d2: ppLike.d2, fitPressureShift: true });
  assert.equal(noP.ok ? "ok" : noP.code, "too_few_pressures");
  const capped = fitCrossWlf(points, { d2: ppLike.d2, maxIterations: 1 });
  assert.equal(capped.ok ? "ok" : capped.code, "did_not_converge");
  assert.throws(() => fitCrossWlf(points, { d2: 0 }), RangeError);
});
