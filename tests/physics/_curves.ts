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
export function seededRandom(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}
