/**
 * Cost of one channel-law call: the general (integral) path on an untagged Cross curve,
 * the tabulated master-curve path on the same curve tagged `cross`, and the power-law
 * closed form.
 */
import { crossCurve, type FlowCurve, powerLawCurve } from "../../src/materials/flow_curve.ts";
import { uniformChannelFlow } from "../../src/physics/channel_flow.ts";
import { taperedChannelFlow } from "../../src/physics/tapered_flow.ts";
import { radialDiskFlow } from "../../src/physics/radial_flow.ts";

const cross = crossCurve(6000, { tauStar: 2.5e4, index: 0.27 });
/** The same Cross curve without its tag: the general integral runs. */
const general: FlowCurve = {
  viscosity: (g) => cross.viscosity(g),
  stress: (g) => cross.stress(g),
  stressSlope: (g) => cross.stressSlope(g),
};
const powerLaw = powerLawCurve(2e4, 0.35);
const circle = { kind: "circle", radius: 0.003 } as const;
const trapezoid = { kind: "trapezoid", topWidth: 0.007, bottomWidth: 0.005, depth: 0.006 } as const;
let q = 1e-5;
const next = () => (q = q * 1.000001 + 1e-12);

for (const [label, curve] of [["general path", general], ["tagged Cross", cross]] as const) {
  Deno.bench(`uniform circle, Cross (${label})`, { group: "circle" }, () => {
    uniformChannelFlow(next(), { section: circle, length: 0.05, curve });
  });
  Deno.bench(`uniform trapezoid, Cross (${label})`, { group: "trapezoid" }, () => {
    uniformChannelFlow(next(), { section: trapezoid, length: 0.05, curve });
  });
  Deno.bench(`tapered circle 4→1.5 mm, Cross (${label})`, { group: "taper" }, () => {
    taperedChannelFlow(next(), {
      entry: { kind: "circle", radius: 0.004 },
      exit: { kind: "circle", radius: 0.0015 },
      length: 0.06,
      curve,
    });
  });
  Deno.bench(`tapered trapezoid, Cross (${label})`, { group: "taper trapezoid" }, () => {
    taperedChannelFlow(next(), {
      entry: { kind: "trapezoid", topWidth: 0.006, bottomWidth: 0.004, depth: 0.005 },
      exit: { kind: "trapezoid", topWidth: 0.003, bottomWidth: 0.001, depth: 0.0015 },
      length: 0.04,
      curve,
    });
  });
  Deno.bench(`radial disk 1→60 mm, Cross (${label})`, { group: "disk" }, () => {
    radialDiskFlow(next(), { gap: 0.002, gateRadius: 0.001, frontRadius: 0.06, curve });
  });
}
Deno.bench("uniform circle, tagged power law (closed form)", { group: "circle" }, () => {
  uniformChannelFlow(next(), { section: circle, length: 0.05, curve: powerLaw });
});
