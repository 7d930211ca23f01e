import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";
import { currentDesign, designSpace } from "../../src/optimize/design_space.ts";
import { evaluateDesign } from "../../src/optimize/evaluate_design.ts";
import { unequalBranches } from "../network/_scenarios.ts";

// The split fill time of cavity i is where its intake near a reference instant, held, would
// fill it: t_ref + (1 − f_i)/rate_i, with f_i its fill fraction at t_ref and rate_i its mean
// intake (fraction per s) over [0.9·t_ref, t_ref]; t_ref is when the cavities together hold 95 %
// of their volume, or 98 % of the first cavity's fill time if that comes sooner (the contract in
// DesignEvaluation's JSDoc). Worked out here from the run's own history, linear between samples.

for (const thermal of ["isothermal", "full"] as const) {
  Deno.test(`split fill times (${thermal}) are the hand extrapolation from the fill history`, () => {
    const parsed = parseScenario(unequalBranches(thermal), { materialIds: LIBRARY_MATERIAL_IDS });
    assert.ok(parsed.ok);
    const space = designSpace(parsed.scenario);
    const outcome = evaluateDesign(space, currentDesign(space));
    assert.ok(outcome.ok, !outcome.ok ? outcome.message : "");
    const e = outcome.evaluation;
    const history = e.fill.history;
    const volumes = e.network.cavities.map((c) => c.volume);
    const total = volumes[0] + volumes[1];
    const held = (k: number) =>
      history[k].cavityFill[0] * volumes[0] + history[k].cavityFill[1] * volumes[1];

    // t_ref: the first crossing of 95 % held, capped at 98 % of the first fill.
    const firstFull = Math.min(...e.fill.cavities.map((c) => c.fillTime));
    let tShare = Infinity;
    for (let k = 1; k < history.length; k++) {
      if (held(k) >= 0.95 * total && held(k) > held(k - 1)) {
        const w = (0.95 * total - held(k - 1)) / (held(k) - held(k - 1));
        tShare = history[k - 1].time + w * (history[k].time - history[k - 1].time);
        break;
      }
    }
    const tRef = Math.min(tShare, 0.98 * firstFull);
    const fillAt = (t: number, i: number) => {
      const k = history.findIndex((s) => s.time >= t);
      assert.ok(k > 0, `t = ${t} inside the history`);
      const a = history[k - 1];
      const b = history[k];
      return a.cavityFill[i] +
        ((t - a.time) / (b.time - a.time)) * (b.cavityFill[i] - a.cavityFill[i]);
    };
    // The cavities are unequal (20 and 30 cm³ on equal branches): the split times differ.
    const expected = [0, 1].map((i) => {
      const f = fillAt(tRef, i);
      const rate = (f - fillAt(0.9 * tRef, i)) / (0.1 * tRef);
      assert.ok(rate > 0 && f > 0.05, `cavity ${i} is filling at t_ref`);
      return tRef + (1 - f) / rate;
    });
    for (const i of [0, 1]) {
      // Same arithmetic on the same samples; only the order of operations may differ.
      assertClose(e.splitFillTimes[i], expected[i], { rel: 1e-9, what: `split time ${i}` });
    }
    assert.ok(Math.abs(expected[0] - expected[1]) > 1e-3 * expected[1], "unequal cavities");
    // At a constant injection rate the laggard takes the whole flow once the other cavity is
    // full, so it fills no later than its held-intake estimate, and the last fill is (cavities + feed
    // system)/Q, switchover at 100 %.
    const last = Math.max(...e.fillTimes);
    assert.ok(last <= Math.max(...expected) * (1 + 1e-9), `${last} vs ${Math.max(...expected)}`);
    assertClose(last, (total + e.network.feedSystemVolume) / 40e-6, {
      rel: 1e-6,
      what: "last fill at V/Q (40 cm³/s)",
    });
  });
}
