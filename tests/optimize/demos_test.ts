/**
 * Every demo scenario, optimized as shipped, must meet its own goals, and the
 * check must not trust the optimizer's own evaluation: the final sizes are
 * written back into the scenario and simulated again from scratch here.
 *
 * The limits are the scenario's goals (imbalance target, the resin's or the
 * scenario's gate-shear limit, a fraction of the press's injection pressure);
 * the cutter series are the ball-end catalogues of `optimize/cutters.ts`
 * (common practice, no source) and a 0.05 mm step for gates (common practice,
 * no source).
 */
import assert from "node:assert/strict";
import { materialById } from "../../src/materials/library.ts";
import { parseScenarioText } from "../../src/model/parse_scenario.ts";
import type { Scenario } from "../../src/model/scenario_schema.ts";
import { LIBRARY_MATERIAL_IDS, runScenario } from "../../src/network/simulate_scenario.ts";
import { optimizeBalance } from "../../src/optimize/balance.ts";
import { cutterCatalogue } from "../../src/optimize/cutters.ts";
import { applyDesign } from "../../src/optimize/design_space.ts";
import { judge, plainRounding } from "./_rounding.ts";

const DEMOS = ["family_four_housing", "hot_drop_eight_caps", "two_gate_frame_and_knob"];

/**
 * Demos whose cutter-size design is known to miss a limit, and says so. The four-part family:
 * since the sprue-exit rule (issue 13.3) R1 and R2 stay 0.5 mm under the 7 mm sprue exit, so
 * 6 mm in metric cutters; the continuous optimum (R1 at 6.5 mm) meets every limit, but no cutter
 * design found does. Such a demo is held to what can be checked outside the program: the
 * continuous optimum meets every limit on its own re-simulation; the report names exactly the
 * limits the re-simulation of the cutter design breaks; and that design breaks no more limits
 * than plain rounding (below, for every demo). How far it misses is the optimizer's own figure,
 * not a bound to test against (it moved from 6.55 % to 8.21 % when the fill's step control
 * changed, with the same cutter strategy).
 */
const KNOWN_MISSES = new Set(["family_four_housing"]);

function load(name: string): Scenario {
  const text = Deno.readTextFileSync(new URL(`../../scenarios/${name}.json`, import.meta.url));
  const parsed = parseScenarioText(text, { materialIds: LIBRARY_MATERIAL_IDS });
  assert.ok(parsed.ok, `${name}: ${JSON.stringify(!parsed.ok && parsed.issues)}`);
  return parsed.scenario;
}

/** Runner ids and the runner each is fed by (breadth-first from the feed node). */
function feedingRunner(s: Scenario): Map<string, string> {
  const parent = new Map<string, string>();
  const reachedBy = new Map<string, string | undefined>([[s.feed.node, undefined]]);
  const queue = [s.feed.node];
  const seen = new Set<string>();
  while (queue.length > 0) {
    const node = queue.shift()!;
    for (const r of s.runners) {
      if (seen.has(r.id)) continue;
      const other = r.from === node ? r.to : r.to === node ? r.from : undefined;
      if (other === undefined) continue;
      seen.add(r.id);
      const up = reachedBy.get(node);
      if (up !== undefined) parent.set(r.id, up);
      if (!reachedBy.has(other)) {
        reachedBy.set(other, r.id);
        queue.push(other);
      }
    }
  }
  return parent;
}

for (const name of DEMOS) {
  Deno.test(`demo ${name}: optimized sizes meet every goal on an independent re-simulation`, async () => {
    const scenario = load(name);
    const result = await optimizeBalance(scenario);
    assert.ok(result.ok, JSON.stringify(!result.ok && result));
    const o = result.outcome;
    assert.equal(o.status, "converged", o.reason);

    const final = applyDesign(o.space, o.after.x);
    const run = runScenario(final);
    assert.ok(run.ok, JSON.stringify(!run.ok && run));
    const fill = run.run.fill;
    const goals = scenario.goals;

    const times = fill.cavities.map((c) => c.fillTime);
    const imbalance = (Math.max(...times) - Math.min(...times)) / Math.max(...times) * 100;
    const material = typeof scenario.material === "string"
      ? materialById(scenario.material)!
      : undefined;
    const shearLimit = goals.gate_shear_limit_1_s ?? material!.max_shear_rate_1_s;
    const overShear = fill.cavities.filter((c) => c.gateShearRatePeak > shearLimit);
    if (!KNOWN_MISSES.has(name)) {
      assert.ok(
        imbalance <= goals.max_imbalance_percent,
        `imbalance ${imbalance.toFixed(3)} % > ${goals.max_imbalance_percent} %`,
      );
      for (const c of overShear) {
        assert.fail(
          `${c.id}: gate shear ${c.gateShearRatePeak.toFixed(0)} 1/s > ${shearLimit} 1/s`,
        );
      }
    } else {
      // A known, reported miss: the continuous optimum meets every limit when re-simulated,
      // and the report names exactly what the re-simulation of the cutter design breaks.
      const continuous = runScenario(applyDesign(o.space, o.continuous.x));
      assert.ok(continuous.ok);
      const cFill = continuous.run.fill;
      const cTimes = cFill.cavities.map((c) => c.fillTime);
      const cImbalance = (Math.max(...cTimes) - Math.min(...cTimes)) / Math.max(...cTimes) * 100;
      assert.ok(cImbalance <= goals.max_imbalance_percent, `continuous ${cImbalance.toFixed(3)} %`);
      assert.ok(cFill.cavities.every((c) => c.gateShearRatePeak <= shearLimit * (1 + 1e-9)));
      const missesBalance = imbalance > goals.max_imbalance_percent;
      assert.equal(o.after.feasible, !missesBalance && overShear.length === 0);
      assert.equal(o.after.violations.some((v) => v.code === "imbalance"), missesBalance);
      const reported = o.after.violations.filter((v) => v.code === "gate_shear").map((v) =>
        v.element
      ).sort();
      assert.deepEqual(reported, overShear.map((c) => c.gateAtPeak).sort());
      assert.match(o.reason, o.after.feasible ? /./ : /does not/);
    }
    const pressureLimitPa = goals.max_pressure_fraction *
      scenario.machine.max_injection_pressure_MPa * 1e6;
    assert.ok(
      fill.feedPressurePeak <= pressureLimitPa,
      `peak ${(fill.feedPressurePeak / 1e6).toFixed(1)} MPa > ${pressureLimitPa / 1e6} MPa`,
    );

    // Never worse than plain rounding of the continuous optimum (issue 11.4): no more limits
    // broken on the re-simulation, and when both meet every limit, no worse balance
    // (tolerance 1e-6 percentage points).
    const plain = judge(scenario, o.space, plainRounding(o.space, o.continuous.x));
    const snapped = judge(scenario, o.space, o.after.x);
    assert.ok(
      snapped.broken.length <= plain.broken.length &&
        (plain.broken.length > 0 || snapped.imbalance <= plain.imbalance + 1e-6),
      `snapped ${snapped.text} vs plain rounding ${plain.text}`,
    );

    // Cuttable sizes: runners from the catalogue, gates on the 0.05 mm step — every size of a
    // new tool, and every size an existing tool's plan changes (the rest stay as they are).
    const catalogue = cutterCatalogue(goals.cutters);
    assert.equal(catalogue.kind, "discrete");
    if (catalogue.kind !== "discrete") return;
    const changed = (j: number) => Math.abs(o.after.x[j] - o.space.variables[j].current) > 1e-12;
    for (const [j, v] of o.space.variables.entries()) {
      if (goals.mode !== "new_tool" && !changed(j)) continue;
      if (v.kind === "runner") {
        const d = final.runners[v.index].diameter_mm;
        assert.ok(
          catalogue.cutters.some((c) => Math.abs(c.size * 1000 - d) < 1e-6),
          `${v.element}: ${d} mm is not a catalogue cutter`,
        );
      } else {
        const g = final.gates[v.index];
        const size = g.type === "edge" ? g.thickness_mm : g.diameter_mm!;
        assert.ok(
          Math.abs(size / 0.05 - Math.round(size / 0.05)) < 1e-6,
          `${v.element}: ${size} mm is not on the 0.05 mm step`,
        );
      }
    }
    // Feed order: no runner smaller than a runner it feeds.
    const parent = feedingRunner(final);
    const diameter = new Map(final.runners.map((r) => [r.id, r.diameter_mm]));
    for (const [child, up] of parent) {
      assert.ok(
        diameter.get(up)! >= diameter.get(child)! - 1e-9,
        `${up} (${diameter.get(up)} mm) feeds the larger ${child} (${diameter.get(child)} mm)`,
      );
    }
    // Size rules (issue 13.3), by the re-simulation's own warnings: no runner within 0.5 mm of the
    // sprue exit it leaves, none cooling longer than the ratio allows, unless an existing tool
    // already did at today's size (a rule never forces a change, but nothing grows past it).
    for (const w of run.run.warnings) {
      if (w.code !== "sprue_exit_below_margin" && w.code !== "runner_cooling_over_ratio") continue;
      const k = final.runners.findIndex((r) => r.id === w.element);
      if (k < 0) continue; // the sprue itself: not a size the optimizer sets
      assert.ok(
        goals.mode !== "new_tool" &&
          final.runners[k].diameter_mm <= scenario.runners[k].diameter_mm + 1e-9,
        `${w.element}: ${w.message}`,
      );
    }
    // Steel-safe: nothing below today's size, and the change list says so.
    if (goals.mode === "steel_safe") {
      o.space.variables.forEach((v, j) => {
        assert.ok(o.after.x[j] >= v.current * (1 - 1e-9), `${v.element} below today's size`);
      });
      assert.ok(o.changes, `no change plan: ${o.changesOmitted}`);
      for (const c of o.changes.steps) assert.equal(c.steelSafe, true, `${c.element} shrinks`);
    }
  });
}
