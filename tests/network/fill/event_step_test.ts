import assert from "node:assert/strict";
import { assertClose } from "../../assert_close.ts";
import { eventStep } from "../../../src/network/fill/event_step.ts";
import { solveStats } from "../../../src/network/fill/solve_instant.ts";
import { fixture, markFull, solvedNow } from "./_fixture.ts";

Deno.test("eventStep: a step aimed at the feed's capacity lands on it exactly, at t = V/Q", () => {
  const f = fixture();
  markFull(f, []);
  const stats = solveStats();
  const s0 = solvedNow(f, 0, stats);
  const out = eventStep(f.ctx, f.state, stats, s0, {
    h: 1,
    landAt: f.ctx.switchoverTime,
    flowChangeTolerance: 0.02,
  });
  assert.equal(out.kind, "step");
  if (out.kind !== "step") return;
  const feed = f.network.elements[f.element("hot_drop")];
  // Hot drop Ø6 × 30 mm at 40 cm³/s: full at πr²L/Q (mass balance, by hand).
  const expected = (Math.PI * 3e-3 ** 2 * 30e-3) / 40e-6;
  assertClose(f.state.time, expected, { rel: 1e-9, what: "event time" });
  assert.deepEqual(out.newlyFull, [feed.index]);
  assertClose(f.state.fill[2 * feed.index], feed.volume, { rel: 1e-12, what: "snapped volume" });
  assert.ok(out.aimedAtEvent);
});

Deno.test("eventStep: a step that would cross switchover ends on it", () => {
  const f = fixture();
  markFull(f, ["hot_drop", "R1", "R2", "G1", "G2"]);
  for (const id of ["C1", "C2"]) f.state.sideStart[2 * f.element(id)] = 0;
  const stats = solveStats();
  const s0 = solvedNow(f, 0, stats);
  f.state.time = f.ctx.switchoverTime - 1e-4;
  const out = eventStep(f.ctx, f.state, stats, s0, {
    h: 1,
    landAt: f.ctx.switchoverTime,
    flowChangeTolerance: 0.5,
  });
  assert.equal(out.kind, "step");
  if (out.kind !== "step") return;
  assert.ok(out.onLanding);
  assertClose(f.state.time, f.ctx.switchoverTime, { rel: 1e-12, what: "switchover" });
  // Σ filled grows by Q·Δt (Heun conserves the injected volume exactly).
  let filled = 0;
  for (const v of f.state.fill) filled += v;
  const feedSystem = f.network.feedSystemVolume;
  assertClose(filled - feedSystem, 40e-6 * 1e-4, { rel: 1e-9, what: "volume injected" });
});

Deno.test("eventStep: no filling branch left is reported, not stepped", () => {
  const f = fixture();
  markFull(f, ["hot_drop", "R1", "R2", "G1", "G2", "C1", "C2"]);
  const stats = solveStats();
  const s0 = solvedNow(f, 0, stats);
  assert.equal(
    eventStep(f.ctx, f.state, stats, s0, { h: 1, landAt: Infinity, flowChangeTolerance: 0.02 })
      .kind,
    "no_open_branch",
  );
});
