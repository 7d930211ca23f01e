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

Deno.test("cone closed form, power law: the tagged curve takes H = τw/n and matches the cone formula", () => {
  // Oracle: coneClosedForm above (Tadmor & Gogos §12.1). The tagged power law takes the
  // closed-form path (ΔP = 4ℓ/(3ΔDh)·(H₀ − H_ℓ)), the untagged tests above the quadrature.
  for (const n of [0.3, 0.6, 1]) {
    for (const [r0, r1] of [[0.0005, 0.0015], [0.003, 0.001]]) {
      const Q = 2e-6;
      const options = {
        entry: { kind: "circle", radius: r0 } as const,
        exit: { kind: "circle", radius: r1 } as const,
        length: L,
        curve: powerLawCurve(K, n),
      };
      const whole = taperedChannelFlow(Q, options);
      close(whole.pressureDrop, coneClosedForm(n, Q, r0, r1, L), 1e-12, `closed cone n=${n}`);
      close(whole.dPressureDropDFlow, (n * whole.pressureDrop) / Q, 1e-12, "closed cone slope");
      const part = taperedChannelFlow(-Q, { ...options, filledLength: 0.3 * L });
      close(-part.pressureDrop, coneClosedForm(n, Q, r0, r1, 0.3 * L), 1e-12, "closed part cone");
    }
  }
});

Deno.test("cone closed form, Cross melt: tube and half-round cones against Simpson's rule of the uniform law", () => {
  // Oracle: the lubrication integral ΔP = ∫ (dP/dx)(R(x)) dx (Tadmor & Gogos §12.1) by
  // composite Simpson in the test (2 000 slices, error ~1e-12), each slice the uniform
  // channel law of its own section on the exact Kozicki integral (untagged curve: the
  // Weissenberg–Rabinowitsch–Mooney equation, Bird, Armstrong & Hassager §5.3); the taper
  // takes the tabulated master potential. dΔP/dQ against a central difference of ΔP.
  for (const n of [0.2, 0.45, 0.9]) {
    const fast = crossCurve(2500, { tauStar: 6e4, index: n });
    const exact = untagged(fast);
    for (const kind of ["circle", "half_round"] as const) {
      for (const [r0, r1] of [[0.0006, 0.0016], [0.004, 0.0025]]) {
        for (const Q of [1e-8, 5e-6, 2e-4]) {
          const slices = 2000;
          let sum = 0;
          for (let i = 0; i <= slices; i++) {
            const radius = r0 + ((r1 - r0) * i) / slices;
            const g = uniformChannelFlow(Q, { section: { kind, radius }, length: 1, curve: exact });
            sum += (i === 0 || i === slices ? 1 : i % 2 === 1 ? 4 : 2) * g.pressureDrop;
          }
          sum *= L / (3 * slices);
          const options = {
            entry: { kind, radius: r0 },
            exit: { kind, radius: r1 },
            length: L,
            curve: fast,
          };
          const cone = taperedChannelFlow(Q, options);
          close(cone.pressureDrop, sum, 1e-7, `Cross cone n=${n} ${kind} Q=${Q}`);
          const h = 1e-5 * Q;
          const difference = (taperedChannelFlow(Q + h, options).pressureDrop -
            taperedChannelFlow(Q - h, options).pressureDrop) / (2 * h);
          close(cone.dPressureDropDFlow, difference, 1e-6, `Cross cone slope n=${n}`);
          // The narrow end's wall, as the uniform law gives it there.
          const narrow = uniformChannelFlow(Q, {
            section: { kind, radius: Math.min(r0, r1) },
            length: L,
            curve: exact,
          });
          close(cone.wallShearRate, narrow.wallShearRate, 1e-7, "Cross cone wall shear");
        }
      }
    }
  }
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
