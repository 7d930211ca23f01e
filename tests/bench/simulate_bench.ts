/**
 * Fill-simulation wall time on generated family layouts (issue 3's benchmark):
 * `deno bench -A tests/bench/simulate_bench.ts`. Per-element-per-event time is
 * printed once per layout so the growth with size can be read off.
 */
import { familyLayout } from "../support/family_layout.ts";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import type { Scenario } from "../../src/model/scenario_schema.ts";
import { LIBRARY_MATERIAL_IDS, runScenario } from "../../src/network/simulate_scenario.ts";

function layout(n: number): Scenario {
  const parsed = parseScenario(familyLayout(n), { materialIds: LIBRARY_MATERIAL_IDS });
  if (!parsed.ok) throw new Error(parsed.issues.map((i) => i.message).join("; "));
  return parsed.scenario;
}

for (const n of [4, 16, 64, 256]) {
  const scenario = layout(n);
  const probe = runScenario(scenario);
  if (!probe.ok) throw new Error(`layout ${n} does not simulate`);
  const d = probe.run.fill.diagnostics;
  const elements = probe.run.network.elements.length;
  console.log(
    `${n} cavities: ${elements} elements, ${d.events} events, ${d.steps} steps, ${d.hydraulicSolves} network solves`,
  );
  Deno.bench({
    name: `simulate ${n}-cavity family layout (${elements} elements, ${d.events} events)`,
    group: "simulate",
    n: n >= 256 ? 1 : n >= 64 ? 3 : undefined,
    warmup: n >= 64 ? 0 : undefined,
    fn: () => {
      const outcome = runScenario(scenario);
      if (!outcome.ok) throw new Error("simulation failed");
    },
  });
}
