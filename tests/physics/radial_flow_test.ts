import assert from "node:assert/strict";
import { assertClose, relativeDeviation } from "../assert_close.ts";
import { newtonianCurve, powerLawCurve } from "../../src/materials/flow_curve.ts";
import { radialDiskFlow } from "../../src/physics/radial_flow.ts";
import { untagged } from "./_curves.ts";

const report: string[] = [];
function close(actual: number, expected: number, rel: number, what: string) {
  report.push(`${what}: ${relativeDeviation(actual, expected).toExponential(2)}`);
  assertClose(actual, expected, { rel, what });
}

const H = 0.002;
const rg = 0.001;

Deno.test("centre-gated disk vs the power-law closed form (numerical path)", () => {
  // Tadmor & Gogos, Principles of Polymer Processing (2nd ed.), radial flow between disks;
  // Tadmor & Gogos (2nd ed.), radial flow: P = (2K/H)[(2n+1)Q/(πnH²)]ⁿ (R_f^(1−n) − r_g^(1−n))/(1−n).
  const K = 1.2e4;
  for (const n of [0.25, 0.5, 0.8]) {
    for (const Rf of [0.0015, 0.02, 0.15]) {
      const Q = 2e-5;
      const r = radialDiskFlow(Q, {
        gap: H,
        gateRadius: rg,
        frontRadius: Rf,
        curve: untagged(powerLawCurve(K, n)),
      });
      const p = ((2 * K) / H) * Math.pow(((2 * n + 1) * Q) / (Math.PI * n * H * H), n) *
        (Math.pow(Rf, 1 - n) - Math.pow(rg, 1 - n)) / (1 - n);
      close(r.pressureDrop, p, 1e-8, `disk n=${n}`);
      close(r.dPressureDropDFlow, (n * p) / Q, 1e-8, `disk slope n=${n}`);
      // Gate wall shear: slit law at width 2πr_g, true = (2n+1)/(3n)·6Q/(2πr_g H²).
      close(
        r.wallShearRate,
        ((2 * n + 1) / (3 * n)) * (6 * Q) / (2 * Math.PI * rg * H * H),
        1e-8,
        "gate wall shear",
      );
    }
  }
});

Deno.test("centre-gated disk, Newtonian: 6μQ·ln(R_f/r_g)/(πH³)", () => {
  // Tadmor & Gogos (2nd ed.), radial flow (n → 1 limit of the above).
  const mu = 300;
  const Q = 1e-5;
  const Rf = 0.08;
  for (const curve of [newtonianCurve(mu), untagged(newtonianCurve(mu))]) {
    const r = radialDiskFlow(Q, { gap: H, gateRadius: rg, frontRadius: Rf, curve });
    close(r.pressureDrop, (6 * mu * Q * Math.log(Rf / rg)) / (Math.PI * H ** 3), 1e-9, "disk μ");
  }
  const z = radialDiskFlow(Q, {
    gap: H,
    gateRadius: rg,
    frontRadius: rg,
    curve: newtonianCurve(mu),
  });
  assert.equal(z.pressureDrop, 0);
  assert.throws(
    () =>
      radialDiskFlow(Q, { gap: H, gateRadius: rg, frontRadius: rg / 2, curve: newtonianCurve(mu) }),
    RangeError,
  );
});

// The deviations each case saw, printed on request (EVENFILL_REPORT=1); not a check.
if (Deno.env.get("EVENFILL_REPORT")) {
  Deno.test("radial report", () => {
    console.log(report.map((r) => "  " + r).join("\n"));
  });
}
