/**
 * The channel laws split into a geometry half prepared once and a flow-curve half
 * (`uniformChannelGeometry`/`uniformGeometryLaw`, `taperedChannelGeometry`/`taperedGeometryLaw`)
 * and the taper's `resistance` (nodes only): the prepared path must give the same numbers as
 * the one-shot functions (bit for bit: `assert.equal`, no tolerance, because the fill's golden
 * snapshot depends on it), and the numbers must be the published closed forms.
 */
import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import { crossCurve, type FlowCurve, powerLawCurve } from "../../src/materials/flow_curve.ts";
import {
  uniformChannelFlow,
  uniformChannelGeometry,
  uniformChannelLaw,
  uniformGeometryLaw,
} from "../../src/physics/channel_flow.ts";
import {
  taperedChannelFlow,
  taperedChannelGeometry,
  taperedChannelLaw,
  taperedGeometryLaw,
} from "../../src/physics/tapered_flow.ts";
import type { Section } from "../../src/physics/section.ts";
import { untagged } from "./_curves.ts";

const curves: [string, FlowCurve][] = [
  ["Cross n = 0.3 (master curve)", crossCurve(800, { tauStar: 3e4, index: 0.3 })],
  ["power law n = 0.4 (closed form)", powerLawCurve(1.2e4, 0.4)],
  ["untagged Cross (exact integral)", untagged(crossCurve(800, { tauStar: 3e4, index: 0.3 }))],
];
const flows = [0, 1e-9, -3e-7, 2e-6, 5e-5];

function sameFlow(a: ReturnType<typeof uniformChannelFlow>, b: typeof a, what: string) {
  assert.equal(a.pressureDrop, b.pressureDrop, `${what}: pressure drop`);
  assert.equal(a.dPressureDropDFlow, b.dPressureDropDFlow, `${what}: dΔP/dQ`);
  assert.equal(a.wallShearRate, b.wallShearRate, `${what}: wall shear rate`);
  assert.equal(a.apparentWallShearRate, b.apparentWallShearRate, `${what}: apparent shear`);
  assert.equal(a.wallShearStress, b.wallShearStress, `${what}: wall stress`);
}

Deno.test("uniform law on a prepared geometry: the same numbers as uniformChannelFlow", () => {
  const sections: Section[] = [
    { kind: "circle", radius: 0.003 },
    { kind: "trapezoid", topWidth: 0.008, bottomWidth: 0.005, depth: 0.004 },
    { kind: "slit", width: 0.02, gap: 0.002 },
  ];
  for (const section of sections) {
    const geometry = uniformChannelGeometry({ section, length: 0.05 });
    for (const [name, curve] of curves) {
      const law = uniformGeometryLaw(geometry, curve);
      for (const q of flows) {
        const what = `${section.kind}, ${name}, Q = ${q}`;
        const expected = uniformChannelFlow(q, { section, length: 0.05, curve });
        sameFlow(law(q), expected, what);
        const r = law.resistance(q);
        assert.equal(r.pressureDrop, expected.pressureDrop, `${what}: resistance ΔP`);
        assert.equal(r.dPressureDropDFlow, expected.dPressureDropDFlow, `${what}: resistance h'`);
      }
    }
  }
});

Deno.test("uniform law on a prepared geometry: Hagen–Poiseuille and the power-law tube", () => {
  const R = 0.002;
  const L = 0.1;
  const Q = 1e-6;
  const geometry = uniformChannelGeometry({ section: { kind: "circle", radius: R }, length: L });
  // Newtonian tube ΔP = 8μLQ/(πR⁴) (Hagen–Poiseuille; Bird, Armstrong & Hassager, Dynamics of
  // Polymeric Liquids vol. 1, 2nd ed., §5.3, the n = 1 case), dΔP/dQ = ΔP/Q.
  const mu = 250;
  const newtonian = uniformGeometryLaw(geometry, powerLawCurve(mu, 1));
  const hp = (8 * mu * L * Q) / (Math.PI * R ** 4);
  assertClose(newtonian(Q).pressureDrop, hp, { rel: 1e-12, what: "Hagen–Poiseuille ΔP" });
  assertClose(newtonian.resistance(Q).dPressureDropDFlow, hp / Q, {
    rel: 1e-12,
    what: "Hagen–Poiseuille dΔP/dQ",
  });
  // Power-law tube ΔP = (2KL/R)[(3n+1)Q/(πnR³)]ⁿ, true wall shear (3n+1)/(4n)·4Q/(πR³)
  // (same source, §5.3; Tadmor & Gogos, Principles of Polymer Processing, 2nd ed., ch. 12).
  const K = 1.5e4;
  const n = 0.35;
  const powerLaw = uniformGeometryLaw(geometry, powerLawCurve(K, n));
  const expected = ((2 * K * L) / R) * Math.pow(((3 * n + 1) * Q) / (Math.PI * n * R ** 3), n);
  const r = powerLaw(Q);
  assertClose(r.pressureDrop, expected, { rel: 1e-12, what: "power-law tube ΔP" });
  assertClose(r.dPressureDropDFlow, (n * expected) / Q, { rel: 1e-12, what: "power-law dΔP/dQ" });
  assertClose(r.wallShearRate, ((3 * n + 1) / (4 * n)) * ((4 * Q) / (Math.PI * R ** 3)), {
    rel: 1e-12,
    what: "power-law true wall shear rate",
  });
});

Deno.test("taper: prepared geometry, resistance and full law give taperedChannelFlow's numbers", () => {
  const cone = {
    entry: { kind: "circle", radius: 0.0019 } as Section,
    exit: { kind: "circle", radius: 0.0003 } as Section,
    length: 0.006,
  };
  const oval = {
    entry: { kind: "ellipse", majorAxis: 0.004, minorAxis: 0.003 } as Section,
    exit: { kind: "ellipse", majorAxis: 0.0012, minorAxis: 0.0008 } as Section,
    length: 0.008,
  };
  for (const shape of [cone, oval]) {
    for (const filledLength of [shape.length, 0.4 * shape.length, 0]) {
      const geometry = taperedChannelGeometry({ ...shape, filledLength });
      for (const [name, curve] of curves) {
        const what = `${shape.entry.kind} filled ${filledLength}, ${name}`;
        const law = taperedGeometryLaw(geometry, curve);
        const oneShot = taperedChannelLaw({ ...shape, filledLength, curve });
        for (const q of flows) {
          const expected = taperedChannelFlow(q, { ...shape, filledLength, curve });
          // resistance first, then the full law at the same flow (the path a solve takes) …
          const r = law.resistance(q);
          assert.equal(r.pressureDrop, expected.pressureDrop, `${what}, Q = ${q}: resistance ΔP`);
          assert.equal(
            r.dPressureDropDFlow,
            expected.dPressureDropDFlow,
            `${what}, Q = ${q}: resistance dΔP/dQ`,
          );
          sameFlow(law(q), expected, `${what}, Q = ${q}, after resistance`);
          // … and the full law alone, on a fresh law
          sameFlow(oneShot(q), expected, `${what}, Q = ${q}, full law first`);
        }
      }
    }
  }
});

Deno.test("taper resistance: the power-law cone closed form", () => {
  // Lubrication approximation (Tadmor & Gogos, Principles of Polymer Processing, 2nd ed.,
  // §12.1): ΔP = 2K[(3n+1)Q/(πn)]ⁿ · L/(3n(R1 − R0)) · (R0^−3n − R1^−3n).
  const K = 1.5e4;
  const n = 0.4;
  const L = 0.006;
  const r0 = 0.0019;
  const r1 = 0.0003;
  const Q = 2e-6;
  const law = taperedGeometryLaw(
    taperedChannelGeometry({
      entry: { kind: "circle", radius: r0 },
      exit: { kind: "circle", radius: r1 },
      length: L,
    }),
    powerLawCurve(K, n),
  );
  const expected = 2 * K * Math.pow(((3 * n + 1) * Q) / (Math.PI * n), n) *
    (L / (3 * n * (r1 - r0))) * (Math.pow(r0, -3 * n) - Math.pow(r1, -3 * n));
  // The quadrature's documented error is ≲ 1e-9 (tapered_flow.ts, PANEL_RATIO).
  assertClose(law.resistance(Q).pressureDrop, expected, { rel: 1e-8, what: "cone ΔP" });
  assertClose(law.resistance(Q).dPressureDropDFlow, (n * expected) / Q, {
    rel: 1e-8,
    what: "cone dΔP/dQ",
  });
});

Deno.test("a law built twice from one prepared geometry gives identical numbers", () => {
  const geometry = uniformChannelGeometry({
    section: { kind: "half_round", radius: 0.003 },
    length: 0.04,
  });
  const curve = crossCurve(1200, { tauStar: 2e4, index: 0.25 });
  const a = uniformGeometryLaw(geometry, curve)(3e-6);
  const b = uniformChannelLaw({
    section: { kind: "half_round", radius: 0.003 },
    length: 0.04,
    curve,
  })(
    3e-6,
  );
  sameFlow(a, b, "half-round");
});
