import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import {
  adiabaticHeating,
  BESSEL_J0_FIRST_ZERO,
  CYLINDER_MEAN_AMPLITUDE,
  CYLINDER_MEAN_EXPONENT,
  cylinderCoolingTime,
  erf,
  erfc,
  erfInv,
  frozenLayerThickness,
  frozenLayerThinnerThan,
  plateCoolingTime,
  plateMeanCoolingTime,
  rememberedThinnerBound,
} from "../../src/physics/thermal.ts";

Deno.test("erf against Abramowitz & Stegun Table 7.1 (10 decimals)", () => {
  // A&S, Handbook of Mathematical Functions (1964), Table 7.1. 0.5, 1, 2 as quoted in the brief;
  // 0.1 and 1.5 from memory.
  const table: [number, number][] = [
    [0.1, 0.1124629160],
    [0.5, 0.5204998778],
    [1.0, 0.8427007929],
    [1.5, 0.9661051465],
    [2.0, 0.9953222650],
  ];
  for (const [x, value] of table) {
    assertClose(erf(x), value, { abs: 6e-11, what: `erf(${x})` });
    assertClose(erf(-x), -value, { abs: 6e-11, what: `erf(${-x})` });
  }
  assert.equal(erf(0), 0);
  assert.equal(erf(Infinity), 1);
});

Deno.test("erfc in the tail, and erf + erfc = 1", () => {
  // erfc(3) = 2.209049699858544e−5 and erfc(5) = 1.537459794428035e−12 (from memory; agree
  // with the C library erfc as exposed by CPython's math.erfc).
  assertClose(erfc(3), 2.209049699858544e-5, { rel: 1e-13, what: "erfc(3)" });
  assertClose(erfc(5), 1.537459794428035e-12, { rel: 1e-13, what: "erfc(5)" });
  for (const x of [0.3, 1.7, 2.49, 2.51, 3.5]) {
    assertClose(erf(x) + erfc(x), 1, { abs: 2e-16, what: `erf + erfc at ${x}` });
  }
});

Deno.test("erfInv inverts erf", () => {
  // erfInv(erf(x)) = x for |x| ≤ 1.5, and erf(erfInv(y)) = y on a grid of y in (−1, 1).
  for (let i = -150; i <= 150; i++) {
    const x = i / 100;
    assertClose(erfInv(erf(x)), x, { rel: 1e-13, abs: 1e-300, what: `erfInv(erf(${x}))` });
  }
  for (let i = -999; i <= 999; i += 7) {
    const y = i / 1000;
    assertClose(erf(erfInv(y)), y, { abs: 1e-15, what: `erf(erfInv(${y}))` });
  }
  // Table values inverted: erfInv(0.5204998778) = 0.5 (A&S Table 7.1); the table's 5e−11
  // rounding moves the inverse by ≤ 5e−11/erf'(0.5) ≈ 6e−11.
  assertClose(erfInv(0.5204998778), 0.5, { abs: 1e-10, what: "erfInv(erf 0.5)" });
  assertClose(erfInv(0.9953222650), 2, { abs: 1e-8, what: "erfInv(erf 2)" });
  assert.equal(erfInv(1), Infinity);
  assert.equal(erfInv(-1), -Infinity);
  assert.throws(() => erfInv(1.0000001), RangeError);
  assert.throws(() => erfInv(Number.NaN), RangeError);
});

const layer = {
  meltTemperature: 523.15,
  wallTemperature: 323.15,
  noFlowTemperature: 403.15,
  diffusivity: 1e-7,
};

Deno.test("frozen layer: θ = erf(δ/(2√(αt))) and δ ∝ √t", () => {
  // Semi-infinite solid suddenly cooled at its face: (T − Tw)/(Tm − Tw) = erf(x/(2√(αt)))
  // (Carslaw & Jaeger, Conduction of Heat in Solids, 2nd ed., §2.4).
  const theta = (403.15 - 323.15) / (523.15 - 323.15);
  for (const t of [0.1, 1, 10]) {
    const delta = frozenLayerThickness(t, layer);
    assertClose(erf(delta / (2 * Math.sqrt(1e-7 * t))), theta, { rel: 1e-14, what: `θ at t=${t}` });
    assertClose(frozenLayerThickness(4 * t, layer), 2 * delta, { rel: 1e-14, what: "√t scaling" });
  }
  // Worked by hand: θ = erf(0.5) = 0.5204998778 (A&S Table 7.1) → δ = 2·0.5·√(αt) = √(1e−7·1)
  // = 3.16227766e−4 m at t = 1 s.
  const worked = frozenLayerThickness(1, {
    meltTemperature: 400,
    wallTemperature: 300,
    noFlowTemperature: 300 + 52.04998778,
    diffusivity: 1e-7,
  });
  assertClose(worked, 3.16227766e-4, { rel: 2e-9, what: "δ for θ = erf(0.5)" });
});

Deno.test("frozen layer edge cases: hot wall, zero time, frozen melt", () => {
  assert.equal(frozenLayerThickness(5, { ...layer, wallTemperature: 410 }), 0);
  assert.equal(frozenLayerThickness(0, layer), 0);
  assert.equal(frozenLayerThickness(5, { ...layer, meltTemperature: 403.15 }), Infinity);
  assert.throws(() => frozenLayerThickness(-1, layer), RangeError);
  assert.throws(() => frozenLayerThickness(1, { ...layer, diffusivity: 0 }), RangeError);
});

// Exact comparisons on purpose: the fill takes the held layer on a true answer instead of the
// thickness, so a true answer must never be wrong.
Deno.test("frozenLayerThinnerThan: true only when frozenLayerThickness is thinner, and decided outside 1e-8", () => {
  const ratios = [0.5, 1 - 1e-8, 1 - 1e-12, 1, 1 + 1e-12, 1 + 1e-8, 2];
  // Melt temperatures no other test uses: erf⁻¹ of their θ is not remembered before
  // frozenLayerThickness is called, so the first look takes the erf side, the second the
  // remembered erf⁻¹.
  for (const melt of [431.7, 467.3, 509.9, 611.1]) {
    const at = { ...layer, meltTemperature: melt };
    const theta = (layer.noFlowTemperature - layer.wallTemperature) /
      (melt - layer.wallTemperature);
    for (const t of [1e-4, 0.03, 2.5]) {
      const delta = 2 * erfInv(theta) * Math.sqrt(layer.diffusivity * t);
      const what = (r: number) => `${r}·δ, melt ${melt} K, t = ${t} s`;
      for (const r of ratios) {
        const thinner = frozenLayerThinnerThan(t, r * delta, at);
        if (thinner) assert.ok(delta < r * delta, what(r));
        if (Math.abs(r - 1) >= 1e-8) assert.equal(thinner, delta < r * delta, what(r));
      }
      assert.equal(frozenLayerThickness(t, at), delta);
      for (const r of ratios) {
        assert.equal(frozenLayerThinnerThan(t, r * delta, at), delta < r * delta, what(r));
      }
    }
  }
  assert.equal(frozenLayerThinnerThan(1, 1e-9, { ...layer, meltTemperature: 403.15 }), false);
  assert.equal(frozenLayerThinnerThan(0, 1e-9, layer), true);
  assert.throws(() => frozenLayerThinnerThan(-1, 1e-3, layer), RangeError);
});

Deno.test("adiabatic heating: 100 MPa, ρ = 1000, cp = 2000 → 50 K", () => {
  // Arithmetic: 1e8 / (1000 · 2000) = 50.
  assertClose(adiabaticHeating(1e8, { density: 1000, specificHeat: 2000 }), 50, {
    rel: 1e-15,
    what: "ΔT",
  });
  assert.throws(() => adiabaticHeating(-1, { density: 1000, specificHeat: 2000 }), RangeError);
});

/** J0 by its power series Σ (−1)^k (x/2)^(2k)/(k!)² (A&S eq. 9.1.10); fine to 1e−12 for x < 10. */
function besselJ0(x: number): number {
  let term = 1;
  let sum = 1;
  const q = (x * x) / 4;
  for (let k = 1; k < 80; k++) {
    term *= -q / (k * k);
    sum += term;
  }
  return sum;
}

function bisect(f: (x: number) => number, lo: number, hi: number): number {
  for (let i = 0; i < 200; i++) {
    const mid = (lo + hi) / 2;
    if (Math.sign(f(mid)) === Math.sign(f(lo))) lo = mid;
    else hi = mid;
  }
  return (lo + hi) / 2;
}

Deno.test("cylinder constants: λ₁ from J0, 4λ₁² = 23.13 and 4/λ₁² = 0.6917", () => {
  // A&S Table 9.5: j0,1 = 2.4048255577. Menges, Michaeli & Mohren print 23.13 and 0.6917.
  // Algebra: mean-temperature series of a cylinder (radius R) is Σ (4/λk²)·exp(−λk²·αt/R²),
  // because the centre-line amplitude 2/(λ J1(λ)) times the area mean of J0(λr/R),
  // ∫₀¹ 2r·J0(λr) dr = 2J1(λ)/λ, is 4/λ². With R = D/2 the exponent is 4λ₁²·αt/D².
  const lambda = bisect(besselJ0, 2, 3);
  assertClose(lambda, 2.4048255577, { abs: 1e-10, what: "first zero of J0 (bisection)" });
  assertClose(BESSEL_J0_FIRST_ZERO, lambda, { abs: 1e-10, what: "exported λ₁" });
  assertClose(CYLINDER_MEAN_EXPONENT, 23.13, { abs: 0.005, what: "4λ₁² vs Menges 23.13" });
  assertClose(CYLINDER_MEAN_AMPLITUDE, 0.6917, { abs: 0.00005, what: "4/λ₁² vs Menges 0.6917" });
});

const cooling = {
  diffusivity: 1e-7,
  meltTemperature: 523.15,
  moldTemperature: 323.15,
  ejectionTemperature: 373.15,
};

Deno.test("plate centre-line cooling time: worked number and full Fourier series", () => {
  // Worked by hand: s = 2 mm, α = 1e−7, (Tm − Tw)/(Te − Tw) = 200/50 = 4:
  // s²/(π²α) = 4e−6/9.8696044e−7 = 4.052847 s; ln(16/π) = ln 5.092958 = 1.627860 → 6.59746 s.
  assertClose(plateCoolingTime(0.002, cooling), 6.59746, { rel: 2e-6, what: "plate t" });
  // Slab, both faces at Tw: centre θ = Σ (4/π)(−1)^k/(2k+1)·exp(−(2k+1)²π²αt/s²)
  // (Carslaw & Jaeger, 2nd ed., §3.3); the first term alone gives 4/π and the exponent π².
  for (const target of [373.15, 423.15]) {
    const t = plateCoolingTime(0.003, { ...cooling, ejectionTemperature: target });
    const fo = (1e-7 * t) / (0.003 * 0.003);
    let theta = 0;
    for (let k = 0; k < 50; k++) {
      const m = 2 * k + 1;
      theta += ((4 / Math.PI) * (k % 2 === 0 ? 1 : -1) / m) * Math.exp(-m * m * Math.PI ** 2 * fo);
    }
    // The one-term form is off by the first neglected term, −(4/(3π))·exp(−9π²·Fo).
    const neglected = (4 / (3 * Math.PI)) * Math.exp(-9 * Math.PI ** 2 * fo);
    assertClose(theta, (target - 323.15) / 200, {
      abs: 1.05 * neglected + 1e-12,
      what: `centre θ at ${target} K`,
    });
  }
});

Deno.test("plate mean cooling time matches the mean-temperature series", () => {
  // Mean θ = Σ 8/(π²(2k+1)²)·exp(−(2k+1)²π²αt/s²) (Carslaw & Jaeger §3.3, integrated over x).
  const t = plateMeanCoolingTime(0.003, cooling);
  const fo = (1e-7 * t) / (0.003 * 0.003);
  let theta = 0;
  for (let k = 0; k < 50; k++) {
    const m = 2 * k + 1;
    theta += (8 / (Math.PI ** 2 * m * m)) * Math.exp(-m * m * Math.PI ** 2 * fo);
  }
  // Off by the first neglected term, 8/(9π²)·exp(−9π²·Fo).
  const neglected = (8 / (9 * Math.PI ** 2)) * Math.exp(-9 * Math.PI ** 2 * fo);
  assertClose(theta, 0.25, { abs: 1.05 * neglected + 1e-12, what: "mean θ" });
  assert.ok(t < plateCoolingTime(0.003, cooling), "mean reaches Te before the centre");
});

Deno.test("cylinder mean cooling time: worked number and Bessel series", () => {
  // Worked by hand with Menges' constants: D = 6 mm, α = 1e−7: D²/(23.13α) = 36e−6/2.313e−6
  // = 15.5642 s; ln(0.6917·4) = ln 2.7668 = 1.017693 → 15.8396 s. The code uses the exact
  // 4λ₁² = 23.13274 (+1.2e−4 relative to 23.13) and 4/λ₁² = 0.691660 (ln shifts by −5.7e−5/1.0177),
  // so it should sit ≈ 1.8e−4 below the printed-constant value; tolerance 2.5e−4.
  assertClose(cylinderCoolingTime(0.006, cooling), 15.8396, { rel: 2.5e-4, what: "cylinder t" });
  // Full series with the first three zeros of J0 (found by bisection; A&S Table 9.5 gives
  // 2.4048255577, 5.5200781103, 8.6537279129), at θ = 0.1 where the 2nd term is ~5e−5 relative.
  const zeros = [bisect(besselJ0, 2, 3), bisect(besselJ0, 5, 6), bisect(besselJ0, 8, 9)];
  assertClose(zeros[1], 5.5200781103, { abs: 1e-9, what: "j0,2" });
  assertClose(zeros[2], 8.6537279129, { abs: 1e-9, what: "j0,3" });
  const target = 323.15 + 0.1 * 200;
  const t = cylinderCoolingTime(0.006, { ...cooling, ejectionTemperature: target });
  const fo = (1e-7 * t) / (0.003 * 0.003);
  const theta = zeros.reduce((s, l) => s + (4 / (l * l)) * Math.exp(-l * l * fo), 0);
  assertClose(theta, 0.1, { rel: 2e-4, what: "cylinder mean θ" });
});

Deno.test("cooling times: edge cases", () => {
  // Melt already below the target: no cooling needed.
  assert.equal(plateCoolingTime(0.002, { ...cooling, ejectionTemperature: 600 }), 0);
  assert.equal(cylinderCoolingTime(0.002, { ...cooling, ejectionTemperature: 323.15 }), Infinity);
  assert.throws(() => plateCoolingTime(0, cooling), RangeError);
  assert.throws(() => cylinderCoolingTime(0.002, { ...cooling, diffusivity: -1 }), RangeError);
  // Both scale as thickness² (the closed forms above).
  assertClose(plateCoolingTime(0.004, cooling), 4 * plateCoolingTime(0.002, cooling), {
    rel: 1e-14,
    what: "s² scaling",
  });
});

Deno.test("cylinder centre-line amplitude 2/(λ₁·J1(λ₁)) = 1.6020 (A&S Table 9.5: j0,1 = 2.4048255577, J1(j0,1) = 0.5191474973)", async () => {
  const { CYLINDER_CENTRE_AMPLITUDE, cylinderCentreCoolingTime } = await import(
    "../../src/physics/thermal.ts"
  );
  assertClose(CYLINDER_CENTRE_AMPLITUDE, 2 / (2.4048255577 * 0.5191474973), {
    rel: 1e-9,
    what: "amplitude",
  });
  // Hand-worked: D = 6 mm, α = 1e-7 m²/s, Tm = 250, Tw = 50, Te = 100 °C →
  // t = 3.6e-5/(23.1327·1e-7)·ln(1.60197·200/50) = 15.5625·1.85753 = 28.907 s.
  const t = cylinderCentreCoolingTime(6e-3, {
    diffusivity: 1e-7,
    meltTemperature: 523.15,
    moldTemperature: 323.15,
    ejectionTemperature: 373.15,
  });
  assertClose(t, 28.907, { rel: 2e-4, what: "hand-worked centre-line time" });
});

Deno.test("frozen layer: remembered erf⁻¹ gives the uncached 2·erf⁻¹(θ)·√(αt) exactly, hits and misses alike", () => {
  // Exact comparison on purpose: the remembered value must be the computed one, bit for bit.
  // 3000 melt temperatures (more than the table's 1024 slots), each asked three times.
  for (let pass = 0; pass < 3; pass++) {
    for (let k = 0; k < 3000; k++) {
      const tm = 430 + k * 0.037;
      const options = { ...layer, meltTemperature: tm };
      const theta = (layer.noFlowTemperature - layer.wallTemperature) /
        (tm - layer.wallTemperature);
      const t = 0.5 + pass;
      assert.equal(
        frozenLayerThickness(t, options),
        2 * erfInv(theta) * Math.sqrt(layer.diffusivity * t),
        `T_m = ${tm} K, pass ${pass}`,
      );
    }
  }
});

Deno.test("frozenLayerThinnerThan with a remembered bound answers as without, for any melt", () => {
  // The bound erf(s/(2√(α·t))) does not depend on the melt: kept across melt temperatures at
  // one contact time and thickness, it must give the answers a fresh computation gives, and a
  // new time or thickness must not be answered from the old one. Melt temperatures no other
  // test uses, so erf⁻¹ of their θ is not remembered (the bound is what decides).
  const bound = rememberedThinnerBound();
  let asked = 0;
  const counting = { value: (root: number, s: number) => (asked++, bound.value(root, s)) };
  for (const t of [2e-3, 0.7]) {
    for (const thickness of [1e-5, 1e-4, 4e-4]) {
      for (const melt of [437.3, 452.9, 488.1, 523.7, 563.3]) {
        const at = { ...layer, meltTemperature: melt };
        const what = `t = ${t} s, ${thickness} m, melt ${melt} K`;
        assert.equal(
          frozenLayerThinnerThan(t, thickness, at, counting),
          frozenLayerThinnerThan(t, thickness, at),
          what,
        );
      }
    }
  }
  assert.ok(asked > 0, "the bound was asked");
  // Both answers occur with one kept bound: at the layer of a middle melt, a hotter melt's is
  // thinner and a colder one's is not.
  const middle = frozenLayerThickness(0.7, { ...layer, meltTemperature: 500 });
  assert.equal(
    frozenLayerThinnerThan(0.7, middle, { ...layer, meltTemperature: 563.3 }, bound),
    true,
  );
  assert.equal(
    frozenLayerThinnerThan(0.7, middle, { ...layer, meltTemperature: 437.3 }, bound),
    false,
  );
});
