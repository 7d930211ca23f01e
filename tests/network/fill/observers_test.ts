import assert from "node:assert/strict";
import { assertClose } from "../../assert_close.ts";
import { clampForce, meanPressureShare } from "../../../src/network/fill/fill_records.ts";
import { updateMeltTemperature } from "../../../src/network/fill/melt_temperature.ts";
import type { NetworkElement } from "../../../src/network/feed_network.ts";
import { simulateFill } from "../../../src/network/simulate_fill.ts";
import { singleLine, unequalBranches } from "../_scenarios.ts";
import { fixture, markFull, solvedNow } from "./_fixture.ts";

/**
 * The unequal-branch tool with C1 full and C2 filling, solved with C2 at `filledShare` of its
 * volume: the solved state and the clamp force by hand for C2 at `countedShare`. Cavities
 * 100 cm²; round runners Ø5 (40 and 120 mm) and pin gates Ø1.4 × 1 mm project d × L; C2's
 * filled strip carries half its inlet pressure (linear to the 0 Pa front).
 */
function handClamp(filledShare: number, countedShare: number) {
  const f = fixture();
  markFull(f, ["hot_drop", "R1", "R2", "G1", "G2", "C1"]);
  const c2 = f.element("C2");
  f.state.sideStart[2 * c2] = 0;
  f.state.fill[2 * c2] = filledShare * f.network.elements[c2].volume;
  const s = solvedNow(f, 1);
  const p = (id: string) => s.pressure[f.node(id)];
  const pC2 = p("C2");
  const expected = 0.01 * p("C1") + 0.01 * countedShare * pC2 / 2 + 5e-3 * 0.04 * p("A") +
    1.4e-3 * 1e-3 * p("A") + 5e-3 * 0.12 * (p("J") + p("B")) / 2 +
    1.4e-3 * 1e-3 * (p("B") + pC2) / 2;
  return { f, c2, s, expected };
}

Deno.test("clampForce: pressure × projected area, element by element, by hand", () => {
  const { f, s, expected } = handClamp(0.25, 0.25);
  assertClose(clampForce(f.ctx, f.state, s), expected, { rel: 1e-12, what: "clamp force" });
});

Deno.test("clampForce at the end of filling: the last cavity, full now but solved as the branch it filled as, counts once", () => {
  // The end of the fill is solved on the network the last step started from (the cavity a
  // front at 0 Pa), then the cavity is marked full. By hand as above, the cavity's share
  // being the strip's ½·p over its whole area, and nothing more for it being full.
  const { f, c2, s, expected } = handClamp(0.999, 1);
  f.state.fill[2 * c2] = f.network.elements[c2].volume;
  f.state.fullTime[c2] = 1;
  f.state.cavityFullTime[f.network.elements[c2].cavity] = 1;
  assertClose(clampForce(f.ctx, f.state, s), expected, { rel: 1e-12, what: "clamp force" });
});

Deno.test("meanPressureShare: ½ on a strip; on a radial disk the area mean of (R^m − r^m), by quadrature", () => {
  const strip = { geometry: { type: "strip" } } as unknown as NetworkElement;
  const flat = {
    pressureDrop: 1,
    dPressureDropDFlow: 1,
    wallShearRate: 0,
    apparentWallShearRate: 0,
    wallShearStress: 0,
  };
  assert.equal(meanPressureShare(strip, 0.3, flat, 1), 0.5);
  const rg = 1e-3;
  const rMax = 40e-3;
  const disk = {
    geometry: { type: "radial", gateRadius: rg, maxRadius: rMax, gap: 2e-3 },
  } as unknown as NetworkElement;
  const n = 0.38;
  // A channel law with dlnΔP/dlnQ = n at Q = 1.
  const law = {
    pressureDrop: 1,
    dPressureDropDFlow: n,
    wallShearRate: 0,
    apparentWallShearRate: 0,
    wallShearStress: 0,
  };
  const fraction = 0.5;
  const R = Math.sqrt(rg * rg + fraction * (rMax * rMax - rg * rg));
  const m = 1 - n;
  // Midpoint rule for ∫ P(r)·2πr dr / (π(R² − rg²)), P(r)/P(rg) = (R^m − r^m)/(R^m − rg^m).
  const N = 200000;
  let sum = 0;
  for (let i = 0; i < N; i++) {
    const r = rg + ((i + 0.5) * (R - rg)) / N;
    sum += ((R ** m - r ** m) / (R ** m - rg ** m)) * 2 * r * ((R - rg) / N);
  }
  assertClose(meanPressureShare(disk, fraction, law, 1), sum / (R * R - rg * rg), {
    rel: 1e-6,
    what: "radial share",
  });
});

Deno.test("updateMeltTemperature: an element's melt is its inlet temperature plus half ΔP/(ρ·cp)", () => {
  const f = fixture(unequalBranches("full"));
  markFull(f, ["hot_drop", "R1", "R2"]);
  for (const id of ["G1", "G2"]) f.state.sideStart[2 * f.element(id)] = 0;
  const s = solvedNow(f, 0.01);
  updateMeltTemperature(f.ctx, f.state, s);
  const rho = f.ctx.melt.meltDensity;
  const cp = f.ctx.melt.specificHeat;
  const drop = (id: string) =>
    s.channel[s.assembly.branches.findIndex((b) => b.element === f.element(id))]
      .pressureDrop;
  const feed = f.ctx.process.feedTemperature;
  // The hot drop starts at the tip temperature; R1 starts at the hot drop's exit.
  assertClose(
    f.state.temperature[f.element("hot_drop")],
    feed + drop("hot_drop") / (rho * cp) / 2,
    {
      rel: 1e-12,
      what: "hot drop",
    },
  );
  const atJ = feed + drop("hot_drop") / (rho * cp);
  assertClose(f.state.temperature[f.element("R1")], atJ + drop("R1") / (rho * cp) / 2, {
    rel: 1e-12,
    what: "R1",
  });
});

Deno.test("simulateFill: an aborted signal or a past deadline ends the run with its reason, not a throw", () => {
  const f = fixture();
  const controller = new AbortController();
  controller.abort("user pressed cancel");
  const options = { melt: f.ctx.melt, process: f.ctx.process };
  const cancelled = simulateFill(f.network, { ...options, signal: controller.signal });
  assert.equal(cancelled.diagnostics.stoppedBecause, "cancelled");
  assert.match(cancelled.diagnostics.message, /user pressed cancel/);
  const late = simulateFill(f.network, { ...options, deadline: Date.now() - 1 });
  assert.equal(late.diagnostics.stoppedBecause, "deadline");
  let calls = 0;
  const partway = new AbortController();
  const stopped = simulateFill(f.network, {
    ...options,
    signal: partway.signal,
    onProgress: () => {
      if (++calls === 5) partway.abort("enough");
    },
  });
  assert.equal(stopped.diagnostics.stoppedBecause, "cancelled");
  assert.equal(stopped.diagnostics.steps, 5);
});

Deno.test("sampleVolumes: a step lands on each requested injected volume; one cavity's fill there is (V − feed system)/V_cavity", () => {
  const wire = singleLine({ feed: "hot_drop", gate: "pin", cavity: "strip" });
  const f = fixture(wire);
  const feed = f.network.feedSystemVolume;
  const cavity = f.network.cavities[0].volume;
  const volumes = [feed + 0.3 * cavity, feed + 0.75 * cavity, feed + 2 * cavity];
  const r = simulateFill(f.network, {
    melt: f.ctx.melt,
    process: f.ctx.process,
    sampleVolumes: volumes,
  });
  assert.equal(r.samples?.length, 3);
  // Mass balance of an incompressible melt (by hand): all that is not in the feed system is in C1.
  assertClose(r.samples![0].cavityFill[0], 0.3, { rel: 1e-9, what: "30 %" });
  assertClose(r.samples![1].cavityFill[0], 0.75, { rel: 1e-9, what: "75 %" });
  assert.equal(r.samples![2].cavityFill[0], 1, "past the end: full");
});

Deno.test("updateMeltTemperature: a branch whose flow is rounding noise keeps its melt temperature; one just above it is updated", () => {
  const f = fixture(unequalBranches("full"));
  markFull(f, ["hot_drop", "R1", "R2"]);
  for (const id of ["G1", "G2"]) f.state.sideStart[2 * f.element(id)] = 0;
  const s = solvedNow(f, 0.01);
  const r2 = s.assembly.branches.findIndex((b) => b.element === f.element("R2"));
  const withR2Flow = (q: number) => {
    const flows = s.flows.slice();
    flows[r2] = q;
    return { ...s, channel: s.channel, flows };
  };
  const Q = f.ctx.injectionRate;
  f.state.temperature[f.element("R2")] = 123.4;
  updateMeltTemperature(f.ctx, f.state, withR2Flow(1e-14 * Q));
  assert.equal(f.state.temperature[f.element("R2")], 123.4);
  // R1 carries its real flow and is updated: above the tip temperature by its heating.
  assert.ok(f.state.temperature[f.element("R1")] > f.ctx.process.feedTemperature);
  updateMeltTemperature(f.ctx, f.state, withR2Flow(1e-9 * Q));
  assert.notEqual(f.state.temperature[f.element("R2")], 123.4);
});
