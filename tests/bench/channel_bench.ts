/** Cost of one channel-law call on the general (integral) path and the fast path. */
import { crossCurve, powerLawCurve } from "../../src/materials/flow_curve.ts";
import { uniformChannelFlow } from "../../src/physics/channel_flow.ts";
import { taperedChannelFlow } from "../../src/physics/tapered_flow.ts";
import { radialDiskFlow } from "../../src/physics/radial_flow.ts";

const cross = crossCurve(6000, { tauStar: 2.5e4, index: 0.27 });
const circle = { kind: "circle", radius: 0.003 } as const;
const trapezoid = { kind: "trapezoid", topWidth: 0.007, bottomWidth: 0.005, depth: 0.006 } as const;
let q = 1e-5;
const next = () => (q = q * 1.000001 + 1e-12);

Deno.bench("uniform circle, Cross (general path)", () => {
  uniformChannelFlow(next(), { section: circle, length: 0.05, curve: cross });
});
Deno.bench("uniform trapezoid, Cross (general path)", () => {
  uniformChannelFlow(next(), { section: trapezoid, length: 0.05, curve: cross });
});
Deno.bench("uniform circle, tagged power law (fast path)", () => {
  uniformChannelFlow(next(), { section: circle, length: 0.05, curve: powerLawCurve(2e4, 0.35) });
});
Deno.bench("tapered circle 4→1.5 mm, Cross", () => {
  taperedChannelFlow(next(), {
    entry: { kind: "circle", radius: 0.004 },
    exit: { kind: "circle", radius: 0.0015 },
    length: 0.06,
    curve: cross,
  });
});
Deno.bench("radial disk 1→60 mm, Cross", () => {
  radialDiskFlow(next(), { gap: 0.002, gateRadius: 0.001, frontRadius: 0.06, curve: cross });
});
