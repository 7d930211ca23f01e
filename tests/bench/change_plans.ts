/**
 * What the change plan costs and how it reads on the press, on the three demos and two
 * generated families (in trim mode): the number of changes, how many of them are
 * reductions and how many the sheet marks "add steel" (weld or insert: an existing tool's
 * reductions; a new tool has none), the imbalance of today's
 * tool and the largest imbalance after any step, the steps above the start, the runner
 * mass of the final design and the simulations the plan took. Not a test.
 *
 *   deno run -A tests/bench/change_plans.ts [--designs FILE]
 *
 * With `--designs FILE` the before and after designs are read from FILE when it exists
 * (else optimized and written there), so that two versions of the plan are compared on
 * the same designs.
 *
 * @module
 */
import { parseScenario } from "../../src/model/parse_scenario.ts";
import type { Scenario } from "../../src/model/scenario_schema.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";
import { optimizeBalance } from "../../src/optimize/balance.ts";
import { planChanges } from "../../src/optimize/change_list.ts";
import { designSpace } from "../../src/optimize/design_space.ts";
import { type DesignEvaluation, evaluateDesign } from "../../src/optimize/evaluate_design.ts";
import { familyLayout } from "../support/family_layout.ts";

function parse(wire: unknown): Scenario {
  const parsed = parseScenario(wire, { materialIds: LIBRARY_MATERIAL_IDS });
  if (!parsed.ok) throw new Error(parsed.issues.map((i) => i.message).join("; "));
  return parsed.scenario;
}

const demo = (file: string) =>
  parse(JSON.parse(Deno.readTextFileSync(new URL(`../../scenarios/${file}`, import.meta.url))));
const trimFamily = (n: number, seed: number) => {
  const s = parse(familyLayout(n, { seed }));
  s.goals.mode = "trim";
  return s;
};

const cases: [string, () => Scenario][] = [
  ["family_four_housing", () => demo("family_four_housing.json")],
  ["hot_drop_eight_caps", () => demo("hot_drop_eight_caps.json")],
  ["two_gate_frame_and_knob", () => demo("two_gate_frame_and_knob.json")],
  ["gen 6 seed 2 trim", () => trimFamily(6, 2)],
  ["gen 8 seed 3 trim", () => trimFamily(8, 3)],
];

const designsAt = Deno.args.indexOf("--designs");
const designsFile = designsAt >= 0 ? Deno.args[designsAt + 1] : undefined;
type Saved = Record<string, { before: number[]; after: number[] }>;
let saved: Saved = {};
try {
  if (designsFile) saved = JSON.parse(Deno.readTextFileSync(designsFile));
} catch (e) {
  if (!(e instanceof Deno.errors.NotFound)) throw e;
}

const rows: string[][] = [[
  "case",
  "mode",
  "changes",
  "reductions",
  "add steel",
  "start imb %",
  "max step imb %",
  "steps above start",
  "runner g",
  "simulations",
  "plan s",
]];
for (const [name, make] of cases) {
  const scenario = make();
  const space = designSpace(scenario);
  let before: DesignEvaluation;
  let after: DesignEvaluation;
  const known = saved[name];
  if (known) {
    const b = evaluateDesign(space, Float64Array.from(known.before));
    const a = evaluateDesign(space, Float64Array.from(known.after));
    if (!b.ok || !a.ok) throw new Error(`${name}: a saved design did not simulate`);
    before = b.evaluation;
    after = a.evaluation;
  } else {
    const result = await optimizeBalance(scenario, { withoutChanges: true });
    if (!result.ok) throw new Error(`${name}: ${result.code} ${result.message}`);
    before = result.outcome.before;
    after = result.outcome.after;
    saved[name] = { before: [...before.x], after: [...after.x] };
  }
  const start = performance.now();
  const plan = await planChanges(space, before, after, undefined);
  const seconds = (performance.now() - start) / 1000;
  const imbalances = plan.steps.map((s) => s.after.imbalancePercent);
  const maxStep = Math.max(...imbalances);
  rows.push([
    name,
    scenario.goals.mode,
    String(plan.steps.length),
    String(plan.steps.filter((s) => s.to < s.from).length),
    String(plan.steps.filter((s) => s.action === "add_steel").length),
    before.imbalancePercent.toFixed(2),
    maxStep.toFixed(2),
    String(imbalances.filter((i) => i > before.imbalancePercent * (1 + 1e-9)).length),
    (after.run.runnerMass * 1000).toFixed(2),
    String(plan.simulations),
    seconds.toFixed(1),
  ]);
}
if (designsFile) Deno.writeTextFileSync(designsFile, JSON.stringify(saved));

const widths = rows[0].map((_, c) => Math.max(...rows.map((r) => r[c].length)));
for (const r of rows) {
  console.log(
    r.map((cell, c) => c === 0 ? cell.padEnd(widths[c]) : cell.padStart(widths[c])).join("  "),
  );
}
