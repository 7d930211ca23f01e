/**
 * Properties of every channel law (no published value needed): ΔP strictly increasing
 * in Q, falling as the channel grows, and dΔP/dQ equal to a central finite difference.
 */
import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import { crossCurve, type FlowCurve, powerLawCurve } from "../../src/materials/flow_curve.ts";
import { type ChannelFlow, uniformChannelFlow } from "../../src/physics/channel_flow.ts";
import { taperedChannelFlow } from "../../src/physics/tapered_flow.ts";
import { radialDiskFlow } from "../../src/physics/radial_flow.ts";
import type { Section } from "../../src/physics/section.ts";
import { seededRandom, untagged } from "./_curves.ts";

/** Every section kind at scale k (k = 1: runner-size, mm range). */
function sections(k: number): Section[] {
  const m = 1e-3 * k;
  return [
    { kind: "circle", radius: 3 * m },
    { kind: "half_round", radius: 3 * m },
    { kind: "trapezoid", topWidth: 7 * m, bottomWidth: 5 * m, depth: 6 * m },
    { kind: "parabolic", width: 8 * m, depth: 5 * m },
    { kind: "rectangle", width: 4 * m, height: 1 * m },
    { kind: "slit", width: 30 * m, gap: 1 * m },
    { kind: "ellipse", majorAxis: 2 * m, minorAxis: 1.2 * m },
    { kind: "d_shape", radius: 1.5 * m, flatOffset: 0.6 * m },
    { kind: "d_shape", radius: 1.5 * m, flatOffset: -0.4 * m },
  ];
}

const curves: [string, FlowCurve][] = [
  ["Cross", crossCurve(6000, { tauStar: 2.5e4, index: 0.27 })],
  ["power law (untagged)", untagged(powerLawCurve(2e4, 0.35))],
  ["power law (tagged)", powerLawCurve(2e4, 0.35)],
];

type Law = (q: number, k: number, curve: FlowCurve) => ChannelFlow;

const laws: [string, Law][] = [
  ...sections(1).map((s, i): [string, Law] => [
    `uniform ${s.kind} #${i}`,
    (q, k, curve) => uniformChannelFlow(q, { section: sections(k)[i], length: 0.05, curve }),
  ]),
  [
    "tapered circle",
    (q, k, curve) =>
      taperedChannelFlow(q, {
        entry: { kind: "circle", radius: 0.004 * k },
        exit: { kind: "circle", radius: 0.0015 * k },
        length: 0.06,
        curve,
      }),
  ],
  [
    "tapered ellipse, partly filled",
    (q, k, curve) =>
      taperedChannelFlow(q, {
        entry: { kind: "ellipse", majorAxis: 0.004 * k, minorAxis: 0.003 * k },
        exit: { kind: "ellipse", majorAxis: 0.0012 * k, minorAxis: 0.0008 * k },
        length: 0.02,
        filledLength: 0.013,
        curve,
      }),
  ],
  [
    "tapered trapezoid",
    (q, k, curve) =>
      taperedChannelFlow(q, {
        entry: { kind: "trapezoid", topWidth: 0.008 * k, bottomWidth: 0.006 * k, depth: 0.006 * k },
        exit: { kind: "trapezoid", topWidth: 0.005 * k, bottomWidth: 0.002 * k, depth: 0.004 * k },
        length: 0.05,
        curve,
      }),
  ],
  [
    "radial disk",
    (q, k, curve) =>
      radialDiskFlow(q, { gap: 0.002 * k, gateRadius: 0.001, frontRadius: 0.06, curve }),
  ],
];

Deno.test("ΔP strictly increasing in Q on a random grid, odd in Q", () => {
  const random = seededRandom(20240611);
  const qs = Array.from({ length: 12 }, () => Math.pow(10, -9 + 6 * random())).sort((a, b) =>
    a - b
  );
  for (const [name, law] of laws) {
    for (const [cname, curve] of curves) {
      let previous = 0;
      for (const q of qs) {
        const dp = law(q, 1, curve).pressureDrop;
        assert.ok(dp > previous, `${name}, ${cname}: ΔP(${q}) = ${dp} not above ${previous}`);
        previous = dp;
      }
      assert.equal(law(-qs[3], 1, curve).pressureDrop, -law(qs[3], 1, curve).pressureDrop);
    }
  }
});

Deno.test("ΔP falls as the channel grows", () => {
  for (const [name, law] of laws) {
    for (const [cname, curve] of curves) {
      const q = 1e-5;
      const small = law(q, 1, curve).pressureDrop;
      const larger = law(q, 1.01, curve).pressureDrop;
      const large = law(q, 1.5, curve).pressureDrop;
      assert.ok(small > larger && larger > large, `${name}, ${cname}: ${small} ${larger} ${large}`);
    }
  }
});

Deno.test("dΔP/dQ agrees with a central finite difference (1e-5)", () => {
  const random = seededRandom(7);
  for (const [name, law] of laws) {
    for (const [cname, curve] of curves) {
      for (let t = 0; t < 4; t++) {
        const q = Math.pow(10, -8 + 5 * random());
        const h = 1e-4 * q;
        const fd = (law(q + h, 1, curve).pressureDrop - law(q - h, 1, curve).pressureDrop) /
          (2 * h);
        assertClose(law(q, 1, curve).dPressureDropDFlow, fd, {
          rel: 1e-5,
          what: `${name}, ${cname}, Q=${q}`,
        });
      }
      const zero = law(0, 1, curve).dPressureDropDFlow;
      assert.ok(zero > 0 && Number.isFinite(zero), `${name}, ${cname}: slope at Q = 0 ${zero}`);
    }
  }
});
