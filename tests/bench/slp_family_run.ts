/**
 * One SLP run on a generated family layout (edge gates), with per-iteration progress:
 * for measuring the optimizer's cost at 16 or 64 cavities. Not a test.
 *
 *   deno run -A tests/bench/slp_family_run.ts [cavities=16]
 *
 * @module
 */
import { familyLayout } from "../support/family_layout.ts";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";
import { optimizeBalance } from "../../src/optimize/balance.ts";

const cavities = Number(Deno.args[0] ?? 16);
const parsed = parseScenario(familyLayout(cavities, { gate: "edge" }), {
  materialIds: LIBRARY_MATERIAL_IDS,
});
if (!parsed.ok) throw new Error(parsed.issues.map((i) => i.message).join("; "));
const start = performance.now();
const result = await optimizeBalance(parsed.scenario, {
  onProgress: (i) =>
    console.log(
      `iteration ${i.iteration} ${i.accepted ? "accepted" : "rejected"}: imbalance ${
        i.imbalancePercent.toFixed(2)
      } %, ${i.simulations} simulations, ${((performance.now() - start) / 1000).toFixed(1)} s`,
    ),
});
if (!result.ok) throw new Error(result.message);
const o = result.outcome;
console.log(
  `${cavities} cavities: ${o.status} (${o.reason}); imbalance ${
    o.before.imbalancePercent.toFixed(2)
  } → ${o.after.imbalancePercent.toFixed(2)} %, runner ${
    (o.before.runnerVolume * 1e6).toFixed(2)
  } → ${(o.after.runnerVolume * 1e6).toFixed(2)} cm³, limits ${
    o.after.feasible ? "met" : "not met"
  }, ${o.simulations} simulations, ${((performance.now() - start) / 1000).toFixed(1)} s`,
);
