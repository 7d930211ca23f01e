import assert from "node:assert/strict";
import { assertClose, relativeDeviation } from "../assert_close.ts";
import { crossCurve, powerLawCurve } from "../../src/materials/flow_curve.ts";
import { taperedChannelFlow } from "../../src/physics/tapered_flow.ts";
import { uniformChannelFlow } from "../../src/physics/channel_flow.ts";
import { untagged } from "./_curves.ts";

const report: string[] = [];
function close(actual: number, expected: number, rel: number, what: string) {
  report.push(`${what}: ${relativeDeviation(actual, expected).toExponential(2)}`);
  assertClose(actual, expected, { rel, what });
}

const K = 1.5e4;
const L = 0.06;

/**
 * Power-law cone, lubrication approximation (Tadmor & Gogos, Principles of Polymer
 * Processing, 2nd ed., §12.1): dP/dx = (2K/R)[(3n+1)Q/(πnR³)]ⁿ with R(x) = R0 + (R1 − R0)x/L,
 * so ΔP = 2K[(3n+1)Q/(πn)]ⁿ ∫₀^ℓ R^−(3n+1) dx
 *       = 2K[(3n+1)Q/(πn)]ⁿ · L/(3n(R1 − R0)) · (R0^−3n − R(ℓ)^−3n).
 */
function coneClosedForm(n: number, Q: number, r0: number, r1: number, filled: number) {
  const rl = r0 + ((r1 - r0) * filled) / L;
  return 2 * K * Math.pow(((3 * n + 1) * Q) / (Math.PI * n), n) * (L / (3 * n * (r1 - r0))) *
    (Math.pow(r0, -3 * n) - Math.pow(rl, -3 * n));
}

Deno.test("tapered tube vs the power-law cone closed form (numerical path)", () => {
  for (const n of [0.25, 0.5, 1]) {
    for (const [r0, r1] of [[0.002, 0.004], [0.004, 0.001], [0.0005, 0.003]]) {
      const Q = 1e-5;
      const curve = untagged(powerLawCurve(K, n));
      const r = taperedChannelFlow(Q, {
        entry: { kind: "circle", radius: r0 },
        exit: { kind: "circle", radius: r1 },
        length: L,
        curve,
      });
      close(r.pressureDrop, coneClosedForm(n, Q, r0, r1, L), 1e-8, `cone n=${n} ${r0}→${r1}`);
      // Slope: ΔP ∝ Qⁿ, so dΔP/dQ = n·ΔP/Q.
      close(r.dPressureDropDFlow, (n * r.pressureDrop) / Q, 1e-8, `cone slope n=${n}`);
      // Max true wall shear at the narrow end: (3n+1)/(4n)·4Q/(πR³) (Bird, Armstrong & Hassager).
      const rmin = Math.min(r0, r1);
      close(
        r.wallShearRate,
        ((3 * n + 1) / (4 * n)) * (4 * Q) / (Math.PI * rmin ** 3),
        1e-8,
        "cone max wall shear",
      );
      const half = taperedChannelFlow(Q, {
        entry: { kind: "circle", radius: r0 },
        exit: { kind: "circle", radius: r1 },
        length: L,
        filledLength: 0.4 * L,
        curve,
      });
      close(half.pressureDrop, coneClosedForm(n, Q, r0, r1, 0.4 * L), 1e-8, "partly filled cone");
    }
  }
});

Deno.test("tapered tube vs a trapezoid-rule integration of the power-law tube law in the test", () => {
  // Oracle: composite trapezoid rule (20 000 steps, error ~1e-9) of the published tube law
  // (Bird, Armstrong & Hassager vol. 1) along a linear taper; power law n = 0.35 on the
  // numerical path.
  const n = 0.35;
  const Q = 3e-6;
  const [r0, r1] = [0.0035, 0.0012];
  let sum = 0;
  const steps = 20000;
  for (let i = 0; i <= steps; i++) {
    const R = r0 + ((r1 - r0) * i) / steps;
    const g = ((2 * K) / R) * Math.pow(((3 * n + 1) * Q) / (Math.PI * n * R ** 3), n);
    sum += (i === 0 || i === steps ? 0.5 : 1) * g;
  }
  sum *= L / steps;
  const r = taperedChannelFlow(Q, {
    entry: { kind: "circle", radius: r0 },
    exit: { kind: "circle", radius: r1 },
    length: L,
    curve: untagged(powerLawCurve(K, n)),
  });
  close(r.pressureDrop, sum, 1e-7, "taper vs in-test trapezoid rule");
});

Deno.test("taper with equal ends equals the uniform channel; zero filled length has no resistance", () => {
  // Oracle: uniformChannelFlow (itself checked against Hagen–Poiseuille / power law).
  const curve = crossCurve(4000, { tauStar: 3e4, index: 0.3 });
  const s = { kind: "trapezoid", topWidth: 0.007, bottomWidth: 0.005, depth: 0.006 } as const;
  const t = taperedChannelFlow(2e-5, { entry: s, exit: s, length: L, curve });
  const u = uniformChannelFlow(2e-5, { section: s, length: L, curve });
  close(t.pressureDrop, u.pressureDrop, 1e-10, "equal-end taper ΔP");
  close(t.dPressureDropDFlow, u.dPressureDropDFlow, 1e-10, "equal-end taper slope");
  const z = taperedChannelFlow(2e-5, { entry: s, exit: s, length: L, filledLength: 0, curve });
  assert.equal(z.pressureDrop, 0);
  assert.equal(z.dPressureDropDFlow, 0);
  assert.throws(
    () => taperedChannelFlow(1e-6, { entry: s, exit: s, length: L, filledLength: 2 * L, curve }),
    RangeError,
  );
});

// The worst deviation per check, printed on request (EVENFILL_REPORT=1); not a check.
if (Deno.env.get("EVENFILL_REPORT")) {
  Deno.test("tapered report", () => {
    const worst = new Map<string, number>();
    for (const line of report) {
      const [k, v] = line.split(": ");
      const key = k.replace(/ [0-9.e-]+→[0-9.e-]+/, "");
      worst.set(key, Math.max(worst.get(key) ?? 0, Number(v)));
    }
    for (const [k, v] of worst) console.log(`  ${k}: worst ${v.toExponential(2)}`);
  });
}
