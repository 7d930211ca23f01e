/**
 * Fill-simulation cost against size, as a table: `deno run -A tests/bench/fill_scaling.ts
 * [--large]` (--large adds 256 cavities, about a minute). Generated family layouts, seed 1;
 * the cost per element per event is what should stay flat as the tool grows (each event
 * needs one solve of the whole wet network, so the total grows with elements × events).
 * Timings are wall clock on whatever machine runs it; they never go into tests.
 */
import { familyLayout } from "../support/family_layout.ts";
import { simulateScenario } from "../../src/network/simulate_scenario.ts";

const sizes = Deno.args.includes("--large") ? [4, 16, 64, 256] : [4, 16, 64];
console.log(
  "cavities  elements  events  steps  solves   ms/sim  µs/(element·event)  µs/(element·solve)",
);
for (const n of sizes) {
  const wire = familyLayout(n, { seed: 1 });
  simulateScenario(wire); // warm-up
  const reps = n >= 64 ? 1 : 5;
  const start = performance.now();
  let last = simulateScenario(wire);
  for (let i = 1; i < reps; i++) last = simulateScenario(wire);
  const ms = (performance.now() - start) / reps;
  if (!last.ok) throw new Error(`${n}-cavity layout does not simulate`);
  const d = last.run.fill.diagnostics;
  const elements = last.run.network.elements.length;
  console.log(
    [
      String(n).padStart(8),
      String(elements).padStart(9),
      String(d.events).padStart(7),
      String(d.steps).padStart(6),
      String(d.hydraulicSolves).padStart(7),
      ms.toFixed(0).padStart(8),
      ((ms * 1000) / (elements * d.events)).toFixed(2).padStart(19),
      ((ms * 1000) / (elements * d.hydraulicSolves)).toFixed(2).padStart(19),
    ].join(" "),
  );
}
console.log(
  "\nWhere the time goes (deno run --cpu-prof on 64 cavities): the Cross master-curve wall\n" +
    "solve inside each channel law (~45 % with its table look-ups), the taper quadrature of the\n" +
    "tunnel gates (16–18 law points each), and the nodal Newton solves around them.",
);
