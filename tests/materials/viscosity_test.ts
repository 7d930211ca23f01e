import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import {
  type CrossWlfViscosity,
  flowCurveAt,
  isFrozen,
  transitionTemperature,
  viscosityAt,
  zeroShearViscosity,
} from "../../src/materials/viscosity.ts";

const base: CrossWlfViscosity = {
  model: "cross_wlf",
  n: 0.3,
  tauStar: 5e4,
  d1: 1e12,
  d2: 400,
  d3: 1e-7,
  a1: 20,
  a2: 50,
  convention: "A2_shifts_with_pressure",
};

Deno.test("WLF universal constants: η0(Tg + 51.6 K)/η0(Tg) = 10^(−17.44/2)", () => {
  // Williams, Landel & Ferry (1955) JACS 77:3701: log10 aT = −17.44 (T − Tg)/(51.6 + T − Tg).
  // The IM form uses the natural log, so A1 = 17.44·ln 10. At T − Tg = 51.6 K the shift is 10^−8.72.
  const wlf: CrossWlfViscosity = { ...base, d2: 373, d3: 0, a1: 17.44 * Math.LN10, a2: 51.6 };
  const ratio = zeroShearViscosity(wlf, 373 + 51.6, 0) / wlf.d1;
  assertClose(ratio, Math.pow(10, -8.72), { rel: 1e-12, what: "WLF shift at Tg + C2" });
});

Deno.test("Cross-WLF η0 at pressure, both conventions, by hand", () => {
  // By hand: T* = 400 + 1e-7·1e8 = 410 K, T − T* = 90 K.
  // A2 shifts: A2 = 50 + 10 = 60 K → exponent −20·90/150 = −12; e^−12 = 6.14421235332821e−6
  // (from memory, A&S Table 4.4 gives e^−x). A2 constant: exponent −20·90/140 = −90/7.
  assert.equal(transitionTemperature(base, 1e8), 410);
  assertClose(zeroShearViscosity(base, 500, 1e8), 1e12 * 6.14421235332821e-6, {
    rel: 1e-12,
    what: "η0, A2 shifts with p",
  });
  const constant: CrossWlfViscosity = { ...base, convention: "A2_constant" };
  assertClose(zeroShearViscosity(constant, 500, 1e8), 1e12 * Math.exp(-90 / 7), {
    rel: 1e-12,
    what: "η0, A2 constant",
  });
});

Deno.test("A2_shifts_with_pressure: ln η0 is linear in p with slope A1·D3/(Ã2 + T − D2)", () => {
  // Follows from A2 + T − T* = Ã2 + T − D2 (Kennedy, Flow Analysis of Injection Molds).
  const t = 520;
  const ln0 = Math.log(zeroShearViscosity(base, t, 0));
  for (const p of [2e7, 5e7, 1.5e8]) {
    const slope = (base.a1 * base.d3) / (base.a2 + t - base.d2);
    assertClose(Math.log(zeroShearViscosity(base, t, p)) - ln0, slope * p, {
      rel: 1e-10,
      what: `ln η0 shift at p = ${p}`,
    });
  }
});

Deno.test("Cross model: η = η0/2 at γ̇ = τ*/η0 and slope → n − 1 at high rate", () => {
  // Cross (1965) J. Colloid Sci. 20:417: the model form gives half of η0 where η0·γ̇/τ* = 1
  // and a power-law asymptote of index n.
  const material = { viscosity: base };
  const t = 480;
  const eta0 = zeroShearViscosity(base, t, 0);
  assertClose(viscosityAt(material, base.tauStar / eta0, { temperature: t }), eta0 / 2, {
    rel: 1e-12,
    what: "half-viscosity point",
  });
  const e1 = viscosityAt(material, 1e9, { temperature: t });
  const e2 = viscosityAt(material, 1e10, { temperature: t });
  assertClose(Math.log10(e2 / e1), base.n - 1, { abs: 1e-4, what: "high-rate log slope" });
  assertClose(viscosityAt(material, 0, { temperature: t }), eta0, { rel: 1e-15, what: "η(0)" });
});

Deno.test("below T* the melt is frozen and η0 is capped at D1 (continuous)", () => {
  assert.ok(isFrozen(base, 399, 0));
  assert.ok(isFrozen(base, 400, 0));
  assert.ok(!isFrozen(base, 401, 0));
  assert.ok(isFrozen(base, 405, 1e8)); // T* = 410 K at 100 MPa
  assert.equal(zeroShearViscosity(base, 300, 0), base.d1);
  assertClose(zeroShearViscosity(base, 400 + 1e-9, 0), base.d1, {
    rel: 1e-9,
    what: "η0 just above T*",
  });
  assert.ok(zeroShearViscosity(base, 401, 0) < base.d1);
});

Deno.test("power law: flow curve is the power law, T and p ignored", () => {
  // τ = K·γ̇ⁿ, Bird, Armstrong & Hassager, Dynamics of Polymeric Liquids vol. 1, ch. 5.
  const material = { viscosity: { model: "power_law", consistency: 1e4, index: 0.4 } as const };
  const curve = flowCurveAt(material, 500, 1e7);
  assert.deepEqual(curve.powerLaw, { consistency: 1e4, index: 0.4 });
  // By hand: 1e4 · 1000^(−0.6) = 1e4 · 10^(−1.8) = 158.489319…
  assertClose(viscosityAt(material, 1000, { temperature: 300 }), 158.48931924611134, {
    rel: 1e-12,
    what: "K·γ̇^(n−1)",
  });
  assert.ok(Number.isNaN(zeroShearViscosity(material.viscosity, 500, 0)));
  assert.ok(!isFrozen(material.viscosity, 100, 0));
});

Deno.test("Cross-WLF flow curve is crossCurve at η0(T, p)", () => {
  const curve = flowCurveAt({ viscosity: base }, 500, 1e8);
  const eta0 = 1e12 * 6.14421235332821e-6; // by hand, see the pressure test above
  const g = 2000;
  const expected = eta0 / (1 + Math.pow((eta0 * g) / base.tauStar, 1 - base.n));
  assertClose(curve.viscosity(g), expected, { rel: 1e-12, what: "η at 2000 1/s" });
  assert.deepEqual(curve.powerLaw, undefined);
});

Deno.test("out-of-domain arguments throw RangeError", () => {
  assert.throws(() => zeroShearViscosity(base, -1, 0), RangeError);
  assert.throws(() => zeroShearViscosity(base, 500, -1), RangeError);
  assert.throws(() => flowCurveAt({ viscosity: base }, Number.NaN, 0), RangeError);
  assert.throws(() => viscosityAt({ viscosity: base }, -5, { temperature: 500 }), RangeError);
});
