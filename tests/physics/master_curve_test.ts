/**
 * The tabulated Cross master curves (src/physics/_cross_master.ts) against the exact
 * Weissenberg–Rabinowitsch–Mooney / Kozicki integral of the same curve. The reference is
 * the general quadrature path, reached by stripping the `cross` tag (`untagged`); that
 * path is itself checked against closed forms in channel_flow_test.ts and
 * noncircular_test.ts. Oracle: Kozicki, Chou & Tiu (1966) Chem. Eng. Sci. 21:665, eq. 23
 * (for the tube and slit Bird, Armstrong & Hassager, *Dynamics of Polymeric Liquids*
 * vol. 1, 2nd ed., §5.3), evaluated by an independent method; the required agreement
 * (1e-7 relative) is the project's accuracy budget for the fast path.
 */
import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import { crossCurve } from "../../src/materials/flow_curve.ts";
import { uniformChannelFlow } from "../../src/physics/channel_flow.ts";
import { kozickiConstants } from "../../src/physics/noncircular.ts";
import { radialDiskFlow } from "../../src/physics/radial_flow.ts";
import { hydraulicDiameter, type Section, sectionArea } from "../../src/physics/section.ts";
import { taperedChannelFlow } from "../../src/physics/tapered_flow.ts";
import {
  crossWallPotentialInto,
  stressPotential,
  wallResponseInto,
} from "../../src/physics/_wall_shear.ts";
import { seededRandom, untagged } from "./_curves.ts";

const REL = 1e-7;

const SECTIONS: Section[] = [
  { kind: "circle", radius: 0.003 },
  { kind: "slit", width: 0.05, gap: 0.002 },
  { kind: "rectangle", width: 0.004, height: 0.001 },
  { kind: "rectangle", width: 0.003, height: 0.003 },
  { kind: "trapezoid", topWidth: 0.007, bottomWidth: 0.005, depth: 0.006 },
  { kind: "trapezoid", topWidth: 0.01, bottomWidth: 0.002, depth: 0.003 },
  { kind: "ellipse", majorAxis: 0.003, minorAxis: 0.0015 },
  { kind: "half_round", radius: 0.004 },
  { kind: "d_shape", radius: 0.003, flatOffset: 0.0012 },
  { kind: "parabolic", width: 0.008, depth: 0.005 },
];

/** Flow rate whose Newtonian-estimate wall shear rate is `shearRate` (1/s). */
function flowFor(section: Section, shearRate: number): number {
  const { a, b } = kozickiConstants(section);
  const apparent = shearRate / (a + b);
  return (apparent * sectionArea(section) * hydraulicDiameter(section)) / 8;
}

Deno.test("Cross master curves match the exact integral: all sections, n ∈ [0.15, 0.95], x_w ∈ [1e-6, 1e10]", () => {
  const random = seededRandom(20240611);
  let xMin = Infinity;
  let xMax = 0;
  let worst = 0;
  const indices = [0.15, 0.95];
  for (let k = 0; k < 9; k++) indices.push(0.15 + 0.8 * random());
  for (const n of indices) {
    const eta0 = 500 + 2e4 * random();
    const tauStar = 1e4 + 2e5 * random();
    const fast = crossCurve(eta0, { tauStar, index: n });
    const exact = untagged(fast);
    for (const section of SECTIONS) {
      for (let j = 0; j < 24; j++) {
        // Newtonian-estimate x from 1e-6 to 1e9.8 (the true x_w is larger by ≤ 1/n·…).
        const x = Math.pow(10, -6 + 15.8 * ((j + random()) / 24));
        const q = flowFor(section, (x * tauStar) / eta0);
        const options = { section, length: 0.05 };
        const f = uniformChannelFlow(q, { ...options, curve: fast });
        const e = uniformChannelFlow(q, { ...options, curve: exact });
        const xw = (eta0 * e.wallShearRate) / tauStar;
        xMin = Math.min(xMin, xw);
        xMax = Math.max(xMax, xw);
        const what = `${section.kind} n=${n.toFixed(3)} x_w=${xw.toExponential(2)}`;
        assertClose(f.pressureDrop, e.pressureDrop, { rel: REL, what: `ΔP ${what}` });
        assertClose(f.wallShearRate, e.wallShearRate, { rel: REL, what: `γ̇w ${what}` });
        assertClose(f.wallShearStress, e.wallShearStress, { rel: REL, what: `τw ${what}` });
        assertClose(f.dPressureDropDFlow, e.dPressureDropDFlow, {
          rel: REL,
          what: `dΔP/dQ ${what}`,
        });
        for (
          const [p, q2] of [
            [f.pressureDrop, e.pressureDrop],
            [f.wallShearRate, e.wallShearRate],
            [f.dPressureDropDFlow, e.dPressureDropDFlow],
          ]
        ) {
          worst = Math.max(worst, Math.abs(p / q2 - 1));
        }
      }
    }
  }
  // The sweep really covered the required range of x_w.
  if (!(xMin <= 1.5e-6 && xMax >= 1e10)) {
    throw new Error(`x_w sweep covered only ${xMin}…${xMax}`);
  }
  if (Deno.env.get("EVENFILL_REPORT")) {
    console.log(`master curves: worst relative deviation ${worst.toExponential(2)}`);
  }
});

Deno.test("Cross master curves: outside the table (x_w < 1e-8, > 1e12) the exact path is used", () => {
  const fast = crossCurve(3000, { tauStar: 3e4, index: 0.3 });
  const exact = untagged(fast);
  const section: Section = { kind: "circle", radius: 0.002 };
  for (const x of [1e-11, 1e13]) {
    const q = flowFor(section, (x * 3e4) / 3000);
    const f = uniformChannelFlow(q, { section, length: 0.1, curve: fast });
    const e = uniformChannelFlow(q, { section, length: 0.1, curve: exact });
    assertClose(f.pressureDrop, e.pressureDrop, { rel: 1e-12, what: `ΔP x=${x}` });
    assertClose(f.dPressureDropDFlow, e.dPressureDropDFlow, { rel: 1e-12, what: `slope x=${x}` });
  }
});

Deno.test("Cross master curves: near the table's ends (inverse-table cells next to the grid edge) and a cone straddling an end", () => {
  // The wall solve reads s off the inverse table except in its outermost cells, where Newton
  // or the exact integral takes over; every path must agree with the exact integral (1e-7).
  const section: Section = { kind: "circle", radius: 0.002 };
  const slit: Section = { kind: "slit", width: 0.05, gap: 0.002 };
  for (const n of [0.1, 0.5, 0.95]) {
    const fast = crossCurve(3000, { tauStar: 3e4, index: n });
    const exact = untagged(fast);
    for (const s of [section, slit]) {
      for (const x of [1.05e-8, 1.5e-8, 3e-8, 3e11, 6e11, 9.5e11]) {
        const q = flowFor(s, (x * 3e4) / 3000);
        const f = uniformChannelFlow(q, { section: s, length: 0.1, curve: fast });
        const e = uniformChannelFlow(q, { section: s, length: 0.1, curve: exact });
        const what = `${s.kind} n=${n} x≈${x}`;
        assertClose(f.pressureDrop, e.pressureDrop, { rel: REL, what: `ΔP ${what}` });
        assertClose(f.dPressureDropDFlow, e.dPressureDropDFlow, {
          rel: REL,
          what: `slope ${what}`,
        });
      }
    }
    // A cone whose narrow end lies past the top of the table: its potential is unknown there,
    // so the law integrates by quadrature, nodes inside the table on the master curve.
    const cone = {
      entry: { kind: "circle", radius: 0.004 } as Section,
      exit: { kind: "circle", radius: 0.0002 } as Section,
      length: 0.03,
    };
    const q = flowFor({ kind: "circle", radius: 0.0002 }, (3e12 * 3e4) / 3000);
    const tf = taperedChannelFlow(q, { ...cone, curve: fast });
    const te = taperedChannelFlow(q, { ...cone, curve: exact });
    assertClose(tf.pressureDrop, te.pressureDrop, { rel: REL, what: `straddling cone n=${n}` });
  }
});

Deno.test("Cross master curves: tapered and radial laws match the exact path", () => {
  for (const n of [0.2, 0.45, 0.8]) {
    const fast = crossCurve(6000, { tauStar: 2.5e4, index: n });
    const exact = untagged(fast);
    for (const q of [1e-9, 1e-7, 1e-5, 1e-3]) {
      const cone = {
        entry: { kind: "circle", radius: 0.004 } as Section,
        exit: { kind: "circle", radius: 0.0007 } as Section,
        length: 0.06,
        filledLength: 0.05,
      };
      const tf = taperedChannelFlow(q, { ...cone, curve: fast });
      const te = taperedChannelFlow(q, { ...cone, curve: exact });
      assertClose(tf.pressureDrop, te.pressureDrop, { rel: REL, what: `cone ΔP n=${n} Q=${q}` });
      assertClose(tf.dPressureDropDFlow, te.dPressureDropDFlow, {
        rel: REL,
        what: `cone slope n=${n} Q=${q}`,
      });
      assertClose(tf.wallShearRate, te.wallShearRate, { rel: REL, what: `cone γ̇w n=${n}` });
      const trap = {
        entry: { kind: "trapezoid", topWidth: 0.006, bottomWidth: 0.004, depth: 0.005 } as Section,
        exit: { kind: "trapezoid", topWidth: 0.003, bottomWidth: 0.001, depth: 0.0015 } as Section,
        length: 0.04,
      };
      const pf = taperedChannelFlow(q, { ...trap, curve: fast });
      const pe = taperedChannelFlow(q, { ...trap, curve: exact });
      assertClose(pf.pressureDrop, pe.pressureDrop, { rel: REL, what: `trap ΔP n=${n} Q=${q}` });
      assertClose(pf.dPressureDropDFlow, pe.dPressureDropDFlow, {
        rel: REL,
        what: `trap slope n=${n} Q=${q}`,
      });
      const disk = { gap: 0.002, gateRadius: 0.001, frontRadius: 0.06 };
      const df = radialDiskFlow(q, { ...disk, curve: fast });
      const de = radialDiskFlow(q, { ...disk, curve: exact });
      assertClose(df.pressureDrop, de.pressureDrop, { rel: REL, what: `disk ΔP n=${n} Q=${q}` });
      assertClose(df.dPressureDropDFlow, de.dPressureDropDFlow, {
        rel: REL,
        what: `disk slope n=${n} Q=${q}`,
      });
    }
  }
});

Deno.test("crossWallPotentialInto: wallResponseInto's wall state and stressPotential's H in one solve", () => {
  // The same wall solve, so the wall state must agree to the bit; the potential is taken at the
  // solve's own s instead of ln of the shear rate it returns, which differ by rounding only.
  const random = seededRandom(7);
  let compared = 0;
  for (const n of [0.2, 0.32, 0.6, 0.9]) {
    const curve = crossCurve(3000 * (0.5 + random()), { tauStar: 3e4 + 4e4 * random(), index: n });
    for (const constants of [{ a: 0.25, b: 0.75 }, { a: 0.5, b: 1 }, { a: 0.3, b: 0.8 }]) {
      for (const apparent of [1e-2, 3, 400, 5e4, 2e6]) {
        const together = new Float64Array(4);
        const wall = new Float64Array(3);
        const what = `n ${n}, a ${constants.a}, Γ ${apparent} 1/s`;
        assert.ok(crossWallPotentialInto(curve, apparent, constants, together), what);
        wallResponseInto(curve, apparent, constants, undefined, wall);
        for (let i = 0; i < 3; i++) assert.equal(together[i], wall[i], `${what}: slot ${i}`);
        assertClose(together[3], stressPotential(curve, constants, wall[0], wall[1]), {
          rel: 1e-13,
          what: `${what}: H`,
        });
        compared++;
      }
    }
  }
  assert.equal(compared, 60);
  // Not a tagged Cross curve, no flow: false, and the caller takes the two functions.
  const out = new Float64Array(4);
  const cross = crossCurve(3000, { tauStar: 3e4, index: 0.3 });
  assert.equal(crossWallPotentialInto(untagged(cross), 10, { a: 0.25, b: 0.75 }, out), false);
  assert.equal(crossWallPotentialInto(cross, 0, { a: 0.25, b: 0.75 }, out), false);
});
