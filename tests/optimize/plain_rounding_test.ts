/**
 * Cutter snapping against plain rounding of the continuous optimum (issue 11.4), judged on
 * an independent re-simulation: the sizes are written back into the scenario and simulated
 * here, and the limits are the scenario's goals (imbalance target, the resin's gate-shear
 * limit, a fraction of the press's injection pressure), not the optimizer's own figures.
 * Plain rounding and the judge: `_rounding.ts`.
 */
import assert from "node:assert/strict";
import { optimizeBalance } from "../../src/optimize/balance.ts";
import { continuousJson, optimizationText } from "../../src/report/optimization_report.ts";
import { judge, load, plainRounding } from "./_rounding.ts";

Deno.test("2+2 tunnel-gate family: the snapped design meets every limit and balances no worse than plain rounding", async () => {
  const scenario = load(new URL("../testdata/two_plus_two_tunnel.json", import.meta.url));
  const result = await optimizeBalance(scenario);
  assert.ok(result.ok, JSON.stringify(!result.ok && result));
  const o = result.outcome;
  assert.equal(o.status, "converged", o.reason);
  const continuous = judge(scenario, o.space, o.continuous.x);
  assert.deepEqual(continuous.broken, [], `continuous ${continuous.text}`);

  // Plain rounding stays inside the stated size rules (runner ≥ wall + 1.5 mm, tunnel gate
  // 25–60 % of wall; common practice, no source) with their 3 % slack for a cutter or step.
  const rounded = plainRounding(o.space, o.continuous.x);
  const wall = new Map(scenario.cavities.map((c) => [c.id, c.wall_mm / 1000]));
  o.space.variables.forEach((v, j) => {
    if (v.kind !== "gate") return;
    const w = wall.get(scenario.gates[v.index].cavity)!;
    assert.ok(rounded[j] <= 0.6 * w * 1.03 + 1e-12, `${v.element} rounded beyond the rule`);
    assert.ok(rounded[j] >= 0.25 * w * 0.97 - 1e-12, `${v.element} rounded below the rule`);
  });
  const plain = judge(scenario, o.space, rounded);
  const snapped = judge(scenario, o.space, o.after.x);
  assert.deepEqual(
    snapped.broken,
    [],
    `snapped ${snapped.text}; plain rounding ${plain.text}; ${o.snap?.message}`,
  );
  if (plain.broken.length === 0) {
    // Tolerance: 1e-6 percentage points, far below any cutter step's effect.
    assert.ok(
      snapped.imbalance <= plain.imbalance + 1e-6,
      `snapped ${snapped.text} vs plain rounding ${plain.text}`,
    );
  }

  // The report states the continuous optimum as simulated (its imbalance, limits met).
  const json = continuousJson(o);
  assert.ok(Math.abs(json.imbalance_percent - continuous.imbalance) < 1e-3);
  assert.equal(json.limits_met, true);
  assert.equal(json.sizes.length, o.space.variables.length);
  const text = optimizationText(o);
  const line = text.split("\n").find((l) => l.trimStart().startsWith("continuous"));
  assert.ok(line, text);
  assert.match(line, new RegExp(`imbalance\\s+${continuous.imbalance.toFixed(2)} %`));
  assert.match(line, /limits met/);
  assert.match(
    o.snap?.message ?? "",
    new RegExp(`${continuous.imbalance.toFixed(2)} % continuous \\(every limit met\\)`),
  );
});
