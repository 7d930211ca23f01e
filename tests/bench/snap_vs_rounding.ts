/**
 * Cutter snapping against plain rounding of the continuous optimum on generated family
 * layouts: for each, the continuous optimum, plain rounding (runners to the nearest metric
 * cutter, gates to the nearest 0.05 mm) and the snapped design, each re-simulated
 * independently and judged on the scenario's goals. Not a test.
 *
 *   deno run -A tests/bench/snap_vs_rounding.ts [cavities=4,6,8] [seeds=1,2] [gates=tunnel,edge]
 *
 * @module
 */
import { familyLayout } from "../support/family_layout.ts";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";
import { optimizeBalance } from "../../src/optimize/balance.ts";
import { judge, plainRounding } from "../optimize/_rounding.ts";

const list = (i: number, fallback: string) => (Deno.args[i] ?? fallback).split(",");
for (const gate of list(2, "tunnel,edge") as ("tunnel" | "edge")[]) {
  for (const cavities of list(0, "4,6,8").map(Number)) {
    for (const seed of list(1, "1,2").map(Number)) {
      const parsed = parseScenario(familyLayout(cavities, { seed, gate }), {
        materialIds: LIBRARY_MATERIAL_IDS,
      });
      if (!parsed.ok) throw new Error(parsed.issues.map((i) => i.message).join("; "));
      const start = performance.now();
      const result = await optimizeBalance(parsed.scenario);
      if (!result.ok) {
        console.log(`${cavities} ${gate} seed ${seed}: ${result.code} ${result.message}`);
        continue;
      }
      const o = result.outcome;
      const s = parsed.scenario;
      const c = judge(s, o.space, o.continuous.x);
      const r = judge(s, o.space, plainRounding(o.space, o.continuous.x));
      const a = judge(s, o.space, o.after.x);
      console.log(
        `${cavities} ${gate} seed ${seed} (${o.status}, ${o.simulations} simulations, ${
          ((performance.now() - start) / 1000).toFixed(1)
        } s): continuous ${c.text}; rounded ${r.text}; snapped ${a.text}`,
      );
    }
  }
}
