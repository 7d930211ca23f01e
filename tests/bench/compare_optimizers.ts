/**
 * Side-by-side run of the sizing baselines (handbook rules, toolroom loop,
 * Nelder–Mead) and the SLP optimizer `optimizeBalance` (tangent slopes, finite
 * differences, and tangent slopes with the handbook design's imbalance as the
 * target, for the runner mass at equal balance), on the 4-cavity family demo and
 * generated family layouts. Prints one table. Not a test and not a `Deno.bench`.
 *
 *   deno run -A tests/bench/compare_optimizers.ts [--large] [--nm-budget N] [--trials N] [--only 4|16|64] [--no-fd]
 *
 * `--large` adds familyLayout(64). Defaults: Nelder–Mead 400 simulations (0 skips it),
 * toolroom 60 trials. "sims to target" counts simulations until a design first met the
 * imbalance target; for the SLP, at the end of the iteration that accepted it.
 *
 * @module
 */

import { familyLayout } from "../support/family_layout.ts";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import type { Scenario } from "../../src/model/scenario_schema.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";
import {
  type BaselineResult,
  handbookSizing,
  nelderMead,
  toolroomLoop,
} from "../support/baselines.ts";
import { designSpace } from "../../src/optimize/design_space.ts";
import type { DesignEvaluation } from "../../src/optimize/evaluate_design.ts";
import { optimizeBalance, type OptimizeBalanceOptions } from "../../src/optimize/balance.ts";

interface Row {
  case: string;
  method: string;
  imbalancePercent: number;
  runnerMassG: number;
  simulations: number;
  wallTimeS: number;
  feasible: string;
  /** Simulations when the imbalance target was first met / when every limit was first met. */
  toBalanced?: number;
  toFeasible?: number;
  reason: string;
}

function flag(name: string): string | undefined {
  const k = Deno.args.indexOf(name);
  return k >= 0 ? Deno.args[k + 1] : undefined;
}

function parse(wire: unknown, label: string): Scenario {
  const parsed = parseScenario(wire, { materialIds: LIBRARY_MATERIAL_IDS });
  if (!parsed.ok) {
    throw new Error(
      `${label}: invalid scenario: ${parsed.issues.map((i) => i.message).join("; ")}`,
    );
  }
  return parsed.scenario;
}

/** "imbalance, 16×gate_shear": violation codes with their counts. */
function summarise(codes: readonly unknown[]): string {
  const counts = new Map<string, number>();
  for (const c of codes) counts.set(String(c), (counts.get(String(c)) ?? 0) + 1);
  return [...counts].map(([c, k]) => (k > 1 ? `${k}×${c}` : c)).join(", ");
}

function feasibility(e: DesignEvaluation | undefined): string {
  if (!e) return "no (failed)";
  return e.feasible ? "yes" : `no (${summarise(e.violations.map((v) => v.code))})`;
}

function rowOf(label: string, method: string, r: BaselineResult): Row {
  const e = r.evaluation;
  return {
    case: label,
    method,
    imbalancePercent: e?.imbalancePercent ?? NaN,
    runnerMassG: e ? e.runnerVolume * e.run.material.solidDensity * 1e3 : NaN,
    simulations: r.simulations,
    wallTimeS: r.wallTimeMs / 1e3,
    feasible: feasibility(e),
    toBalanced: r.firstBalanced,
    toFeasible: r.firstFeasible,
    reason: r.reason,
  };
}

/** One SLP run; `toBalanced`/`toFeasible` from its iteration history (accepted designs). */
async function slpRow(
  label: string,
  method: string,
  scenario: Scenario,
  options: OptimizeBalanceOptions,
): Promise<Row> {
  const t = performance.now();
  let toBalanced: number | undefined;
  let toFeasible: number | undefined;
  const target = scenario.goals.max_imbalance_percent;
  const result = await optimizeBalance(scenario, {
    ...options,
    onProgress: (i) => {
      if (i.imbalancePercent <= target) toBalanced ??= i.simulations;
      if (i.feasible) toFeasible ??= i.simulations;
    },
  });
  const wallTimeS = (performance.now() - t) / 1e3;
  if (!result.ok) {
    return {
      case: label,
      method,
      imbalancePercent: NaN,
      runnerMassG: NaN,
      simulations: NaN,
      wallTimeS,
      feasible: `no (${result.code})`,
      reason: result.message,
    };
  }
  const o = result.outcome;
  const e = o.after;
  return {
    case: label,
    method,
    imbalancePercent: e.imbalancePercent,
    runnerMassG: e.runnerVolume * e.run.material.solidDensity * 1e3,
    simulations: o.simulations,
    wallTimeS,
    feasible: feasibility(e),
    toBalanced,
    toFeasible,
    reason: `${o.status}; continuous ${o.continuous.imbalancePercent.toFixed(2)} %, ${
      (o.continuous.runnerVolume * o.continuous.run.material.solidDensity * 1e3).toFixed(2)
    } g, ${o.continuous.feasible ? "feasible" : "infeasible"}`,
  };
}

function printTable(rows: Row[]): void {
  const header = [
    "case",
    "method",
    "imbalance %",
    "runner g",
    "sims",
    "wall s",
    "sims to target",
    "sims to all limits",
    "feasible",
    "stop",
  ];
  const count = (n: number | undefined) => (n === undefined ? "never" : String(n));
  const cells = rows.map((r) => [
    r.case,
    r.method,
    r.imbalancePercent.toFixed(2),
    r.runnerMassG.toFixed(2),
    String(r.simulations),
    r.wallTimeS.toFixed(2),
    count(r.toBalanced),
    count(r.toFeasible),
    r.feasible,
    r.reason,
  ]);
  const widths = header.map((h, k) => Math.max(h.length, ...cells.map((c) => c[k].length)));
  const line = (c: string[]) =>
    c.map((s, k) => (k < 2 || k > 7 ? s.padEnd(widths[k]) : s.padStart(widths[k]))).join("  ");
  console.log(line(header));
  console.log(widths.map((w) => "-".repeat(w)).join("  "));
  for (const c of cells) console.log(line(c));
}

const nmBudget = Number(flag("--nm-budget") ?? 400);
const maxTrials = Number(flag("--trials") ?? 60);
const only = flag("--only");
const skipFd = Deno.args.includes("--no-fd");
const cases: [string, () => unknown][] = [
  [
    "demo 4-cavity",
    () =>
      JSON.parse(
        Deno.readTextFileSync(new URL("../../scenarios/family_four_housing.json", import.meta.url)),
      ),
  ],
  // Edge gates: with tunnel gates inside the 25–60 % of wall rule, the generated parts
  // over-shear at the generated rate whatever the sizes, and no method can be feasible.
  ["family 16", () => familyLayout(16, { gate: "edge" })],
];
if (Deno.args.includes("--large")) {
  cases.push(["family 64", () => familyLayout(64, { gate: "edge" })]);
}

const rows: Row[] = [];
for (const [label, make] of cases) {
  if (only !== undefined && !label.includes(only)) continue;
  const scenario = parse(make(), label);
  const space = designSpace(scenario);
  if (space.conflicts.length > 0) {
    console.error(`${label}: bound conflicts: ${space.conflicts.join("; ")}`);
  }
  const runs: [string, () => BaselineResult][] = [
    ["handbook rules", () => handbookSizing(space)],
    [`toolroom loop (≤ ${maxTrials})`, () => toolroomLoop(space, { maxTrials })],
  ];
  if (nmBudget > 0) {
    runs.push([
      `Nelder–Mead (≤ ${nmBudget})`,
      () => nelderMead(space, { maxSimulations: nmBudget }),
    ]);
  }
  let handbook: Row | undefined;
  for (const [method, run] of runs) {
    console.error(`${label}: ${method} …`);
    const row = rowOf(label, method, run());
    handbook ??= row;
    console.error(
      `  ${row.imbalancePercent.toFixed(2)} %, ${row.simulations} sims, ${
        row.wallTimeS.toFixed(1)
      } s`,
    );
    rows.push(row);
  }
  const slp: [string, Scenario, OptimizeBalanceOptions][] = [
    ["SLP, tangent slopes", scenario, { slopes: "tangent" }],
    ["SLP, finite differences", scenario, { slopes: "finite_difference" }],
  ];
  // Runner mass at the handbook design's balance: the same goals with its imbalance as target.
  if (handbook && Number.isFinite(handbook.imbalancePercent)) {
    const equal = structuredClone(scenario);
    equal.goals.max_imbalance_percent = Math.max(
      equal.goals.max_imbalance_percent,
      Math.ceil(handbook.imbalancePercent * 100) / 100,
    );
    slp.push([
      `SLP, tangent, target = handbook's ${equal.goals.max_imbalance_percent} %`,
      equal,
      { slopes: "tangent" },
    ]);
  }
  for (const [method, s, options] of slp) {
    if (skipFd && options.slopes === "finite_difference") continue;
    console.error(`${label}: ${method} …`);
    const row = await slpRow(label, method, s, options);
    console.error(
      `  ${row.imbalancePercent.toFixed(2)} %, ${row.simulations} sims, ${
        row.wallTimeS.toFixed(1)
      } s`,
    );
    rows.push(row);
  }
}
printTable(rows);
