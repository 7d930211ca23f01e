/** Test helpers: flow curves without the `powerLaw` tag, so the general integral is used. */
import type { FlowCurve } from "../../src/materials/flow_curve.ts";

/** The same curve with its `powerLaw` tag removed. */
export function untagged(curve: FlowCurve): FlowCurve {
  return {
    viscosity: (g) => curve.viscosity(g),
    stress: (g) => curve.stress(g),
    stressSlope: (g) => curve.stressSlope(g),
  };
}

/** Deterministic pseudo-random numbers in [0, 1) (mulberry32). */
export { mulberry32 as seededRandom } from "../support/seeded_random.ts";
