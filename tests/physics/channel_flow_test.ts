import { assertClose, relativeDeviation } from "../assert_close.ts";
import { crossCurve, newtonianCurve, powerLawCurve } from "../../src/materials/flow_curve.ts";
import { uniformChannelFlow } from "../../src/physics/channel_flow.ts";
import { gaussLegendre } from "../../src/physics/_quadrature.ts";
import { untagged } from "./_curves.ts";
import assert from "node:assert/strict";

const deviations: string[] = [];
function close(actual: number, expected: number, rel: number, what: string) {
  deviations.push(`${what}: ${relativeDeviation(actual, expected).toExponential(2)}`);
  assertClose(actual, expected, { rel, what });
}

const R = 0.003;
const L = 0.12;
const circle = { kind: "circle", radius: R } as const;
const W = 0.02;
const H = 0.0015;
const slit = { kind: "slit", width: W, gap: H } as const;

Deno.test("Newtonian tube: Hagen–Poiseuille ΔP = 8μLQ/(πR⁴), tagged and numerical path", () => {
  // Bird, Stewart & Lightfoot, Transport Phenomena (2nd ed.), eq. 2.3-21.
  const mu = 250;
  for (const Q of [1e-8, 3e-6, 2e-4]) {
    const expected = (8 * mu * L * Q) / (Math.PI * R ** 4);
    for (const curve of [newtonianCurve(mu), untagged(newtonianCurve(mu))]) {
      const r = uniformChannelFlow(Q, { section: circle, length: L, curve });
      close(r.pressureDrop, expected, 1e-9, "Newtonian tube ΔP");
      close(r.dPressureDropDFlow, expected / Q, 1e-9, "Newtonian tube dΔP/dQ");
      close(r.wallShearRate, (4 * Q) / (Math.PI * R ** 3), 1e-9, "Newtonian tube γ̇w");
    }
  }
});

Deno.test("Newtonian slit: ΔP = 12μLQ/(WH³)", () => {
  // Bird, Stewart & Lightfoot, Transport Phenomena (2nd ed.), Problem 2B.3 (flow between plates).
  const mu = 80;
  const Q = 5e-6;
  const expected = (12 * mu * L * Q) / (W * H ** 3);
  for (const curve of [newtonianCurve(mu), untagged(newtonianCurve(mu))]) {
    const r = uniformChannelFlow(Q, { section: slit, length: L, curve });
    close(r.pressureDrop, expected, 1e-9, "Newtonian slit ΔP");
    close(r.apparentWallShearRate, (6 * Q) / (W * H * H), 1e-12, "slit apparent 6Q/WH²");
  }
});

Deno.test("power-law tube and slit on the numerical path (1e-6)", () => {
  // Bird, Armstrong & Hassager, Dynamics of Polymeric Liquids vol. 1 (2nd ed.), §4.2 /
  // Tadmor & Gogos, Principles of Polymer Processing (2nd ed.), ch. 12:
  // tube ΔP = (2KL/R)[(3n+1)Q/(πnR³)]ⁿ, true γ̇w = (3n+1)/(4n)·4Q/(πR³);
  // slit ΔP = (2KL/H)[2(2n+1)Q/(nWH²)]ⁿ, true γ̇w = (2n+1)/(3n)·6Q/(WH²).
  const K = 2.0e4;
  for (const n of [0.2, 0.35, 0.5, 0.75, 1]) {
    const curve = untagged(powerLawCurve(K, n));
    for (const Q of [1e-7, 1e-5, 1e-3]) {
      const tube = uniformChannelFlow(Q, { section: circle, length: L, curve });
      const appTube = (4 * Q) / (Math.PI * R ** 3);
      const dpTube = ((2 * K * L) / R) * Math.pow(((3 * n + 1) * Q) / (Math.PI * n * R ** 3), n);
      close(tube.pressureDrop, dpTube, 1e-6, `tube ΔP n=${n}`);
      close(tube.apparentWallShearRate, appTube, 1e-12, `tube apparent n=${n}`);
      close(tube.wallShearRate, ((3 * n + 1) / (4 * n)) * appTube, 1e-6, `tube γ̇w n=${n}`);
      close(tube.wallShearStress, (dpTube * R) / (2 * L), 1e-6, `tube τw n=${n}`);
      close(tube.dPressureDropDFlow, (n * dpTube) / Q, 1e-6, `tube dΔP/dQ n=${n}`);

      const sl = uniformChannelFlow(Q, { section: slit, length: L, curve });
      const appSlit = (6 * Q) / (W * H * H);
      const dpSlit = ((2 * K * L) / H) * Math.pow((2 * (2 * n + 1) * Q) / (n * W * H * H), n);
      close(sl.pressureDrop, dpSlit, 1e-6, `slit ΔP n=${n}`);
      close(sl.apparentWallShearRate, appSlit, 1e-12, `slit apparent n=${n}`);
      close(sl.wallShearRate, ((2 * n + 1) / (3 * n)) * appSlit, 1e-6, `slit γ̇w n=${n}`);
      close(sl.dPressureDropDFlow, (n * dpSlit) / Q, 1e-6, `slit dΔP/dQ n=${n}`);
    }
  }
});

Deno.test("tagged power law (fast path) gives the same answers as the numerical path", () => {
  // Oracle: the published closed form above, via the untagged numerical path.
  for (const n of [0.3, 0.6]) {
    const fast = uniformChannelFlow(2e-5, {
      section: circle,
      length: L,
      curve: powerLawCurve(1e4, n),
    });
    const slow = uniformChannelFlow(2e-5, {
      section: circle,
      length: L,
      curve: untagged(powerLawCurve(1e4, n)),
    });
    close(fast.pressureDrop, slow.pressureDrop, 1e-9, "fast vs numerical ΔP");
    close(fast.dPressureDropDFlow, slow.dPressureDropDFlow, 1e-8, "fast vs numerical slope");
  }
});

Deno.test("Cross curve: τ* → 0 gives the power law with K = η0ⁿ·τ*^(1−n)", () => {
  // Algebra: for η0γ̇/τ* ≫ 1, η = η0/(1 + (η0γ̇/τ*)^(1−n)) → η0·(τ*/(η0γ̇))^(1−n)
  // = η0ⁿ τ*^(1−n) γ̇^(n−1), i.e. K = η0ⁿ·τ*^(1−n) (the brief's "K = τ*^(1−n)" omits η0ⁿ,
  // which is 1 only for η0 = 1 Pa·s). Tube law: Bird, Armstrong & Hassager vol. 1.
  const eta0 = 3000;
  const n = 0.3;
  const tauStar = 1e-9;
  const K = Math.pow(eta0, n) * Math.pow(tauStar, 1 - n);
  const Q = 1e-5;
  const r = uniformChannelFlow(Q, {
    section: circle,
    length: L,
    curve: crossCurve(eta0, { tauStar, index: n }),
  });
  const dp = ((2 * K * L) / R) * Math.pow(((3 * n + 1) * Q) / (Math.PI * n * R ** 3), n);
  close(r.pressureDrop, dp, 1e-6, "Cross τ*→0 vs power law");
});

Deno.test("Cross curve: τ* → ∞ gives Newtonian flow at η0", () => {
  // Hagen–Poiseuille (Bird, Stewart & Lightfoot, eq. 2.3-21) at μ = η0.
  const eta0 = 3000;
  const Q = 1e-5;
  const r = uniformChannelFlow(Q, {
    section: circle,
    length: L,
    curve: crossCurve(eta0, { tauStar: 1e16, index: 0.3 }),
  });
  close(r.pressureDrop, (8 * eta0 * L * Q) / (Math.PI * R ** 4), 1e-6, "Cross τ*→∞ vs Newtonian");
});

/** Shear rate at stress τ by bisection on the curve (independent of the code under test). */
function invert(stress: (g: number) => number, tau: number): number {
  let lo = 0;
  let hi = 1;
  while (stress(hi) < tau) hi *= 2;
  for (let i = 0; i < 200 && hi - lo > 1e-15 * hi; i++) {
    const mid = 0.5 * (lo + hi);
    if (stress(mid) < tau) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

Deno.test("Cross curve: the velocity profile at the computed ΔP carries the imposed Q", () => {
  // Independent check of the Rabinowitsch–Mooney solve: with τ(r) = τw·r/R (momentum
  // balance, Bird, Armstrong & Hassager vol. 1 §4.2), v(r) = ∫_r^R γ̇(τ(r')) dr' and
  // Q = ∫₀^R 2πr·v(r) dr, both by composite Gauss–Legendre in this test.
  const curve = crossCurve(8000, { tauStar: 2.5e4, index: 0.28 });
  const g = gaussLegendre(16);
  for (const Q of [2e-7, 1e-5, 4e-4]) {
    const flow = uniformChannelFlow(Q, { section: circle, length: L, curve });
    const tauW = (flow.pressureDrop * R) / (2 * L);
    const gammaAt = (r: number) => invert((x) => curve.stress(x), (tauW * r) / R);
    const panels = 8;
    const integrate = (lo: number, hi: number, f: (x: number) => number) => {
      let sum = 0;
      const w = (hi - lo) / panels;
      for (let p = 0; p < panels; p++) {
        const mid = lo + (p + 0.5) * w;
        for (let i = 0; i < g.nodes.length; i++) {
          sum += 0.5 * w * g.weights[i] * f(mid + 0.5 * w * g.nodes[i]);
        }
      }
      return sum;
    };
    const velocity = (r: number) => integrate(r, R, gammaAt);
    const q = integrate(0, R, (r) => 2 * Math.PI * r * velocity(r));
    close(q, Q, 1e-6, `velocity-profile Q at Q=${Q}`);
    close(flow.wallShearRate, gammaAt(R), 1e-9, "wall shear = γ̇(τw)");
  }
});

Deno.test("odd in Q, zero-flow limits, bad input", () => {
  const curve = crossCurve(5000, { tauStar: 3e4, index: 0.3 });
  const plus = uniformChannelFlow(3e-6, { section: circle, length: L, curve });
  const minus = uniformChannelFlow(-3e-6, { section: circle, length: L, curve });
  assert.equal(minus.pressureDrop, -plus.pressureDrop);
  assert.equal(minus.wallShearRate, plus.wallShearRate);
  const zero = uniformChannelFlow(0, { section: circle, length: L, curve });
  assert.equal(zero.pressureDrop, 0);
  // Q → 0 of a Cross fluid is Newtonian at η0 (Hagen–Poiseuille slope 8η0L/(πR⁴)).
  close(zero.dPressureDropDFlow, (8 * 5000 * L) / (Math.PI * R ** 4), 1e-12, "Q=0 slope Cross");
  const pl = uniformChannelFlow(0, {
    section: circle,
    length: L,
    curve: untagged(powerLawCurve(1e4, 0.4)),
  });
  assert.ok(pl.dPressureDropDFlow > 0 && Number.isFinite(pl.dPressureDropDFlow));
  assert.throws(() => uniformChannelFlow(1e-6, { section: circle, length: 0, curve }), RangeError);
  assert.throws(
    () => uniformChannelFlow(1e-6, { section: { kind: "circle", radius: -1 }, length: L, curve }),
    RangeError,
  );
  assert.throws(() => uniformChannelFlow(NaN, { section: circle, length: L, curve }), RangeError);
});

// The worst deviation per check, printed on request (EVENFILL_REPORT=1); not a check.
if (Deno.env.get("EVENFILL_REPORT")) {
  Deno.test("report deviations (worst per check)", () => {
    const worst = new Map<string, number>();
    for (const line of deviations) {
      const cut = line.lastIndexOf(": ");
      const key = line.slice(0, cut);
      worst.set(key, Math.max(worst.get(key) ?? 0, Number(line.slice(cut + 2))));
    }
    for (const [k, v] of worst) console.log(`  ${k}: ${v.toExponential(2)}`);
  });
}
