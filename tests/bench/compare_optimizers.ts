/**
 * Side-by-side run of the sizing baselines (handbook rules, toolroom loop,
 * Nelder–Mead) and, when present, the SLP optimizer `optimizeBalance` from
 * src/optimize/balance.ts, on the 4-cavity family demo and generated family
 * layouts. Prints one table per run. Not a test and not a `Deno.bench`.
 *
 *   deno run -A tests/bench/compare_optimizers.ts [--large] [--nm-budget N] [--trials N] [--only 4|16|64]
 *
 * `--large` adds familyLayout(64). Defaults: Nelder–Mead 400 simulations, toolroom 60 trials.
 *
 * @module
 */

import { familyLayout } from "../../src/model/family_layout.ts";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import type { Scenario } from "../../src/model/scenario_schema.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";
import {
  type BaselineResult,
  handbookSizing,
  nelderMead,
  toolroomLoop,
} from "../../src/optimize/baselines.ts";
import { designSpace } from "../../src/optimize/design_space.ts";

interface Row {
  case: string;
  method: string;
  imbalancePercent: number;
  runnerMassG: number;
  simulations: number;
  wallTimeS: number;
  feasible: string;
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

function rowOf(label: string, method: string, r: BaselineResult): Row {
  const e = r.evaluation;
  return {
    case: label,
    method,
    imbalancePercent: e?.imbalancePercent ?? NaN,
    runnerMassG: e ? e.runnerVolume * e.run.material.solidDensity * 1e3 : NaN,
    simulations: r.simulations,
    wallTimeS: r.wallTimeMs / 1e3,
    feasible: e
      ? (e.feasible ? "yes" : `no (${summarise(e.violations.map((v) => v.code))})`)
      : "no (failed)",
    reason: r.reason,
  };
}

/**
 * Read the SLP optimizer's result defensively (its shape may still change):
 * `{ ok: true, outcome: { status, after, simulations } }` or `{ ok: false, code, message }`.
 */
function rowOfBalance(label: string, result: unknown, wallTimeS: number): Row {
  const r = (result ?? {}) as Record<string, unknown>;
  const outcome = (r.outcome ?? r) as Record<string, unknown>;
  const e = (outcome.after ?? outcome.evaluation) as Record<string, unknown> | undefined;
  const run = e?.run as { material?: { solidDensity?: number } } | undefined;
  const volume = typeof e?.runnerVolume === "number" ? e.runnerVolume : NaN;
  const stop = [outcome.status, r.code].filter((s) => typeof s === "string").join(" ");
  return {
    case: label,
    method: "SLP (optimizeBalance)",
    imbalancePercent: typeof e?.imbalancePercent === "number" ? e.imbalancePercent : NaN,
    runnerMassG: volume * (run?.material?.solidDensity ?? NaN) * 1e3,
    simulations: typeof outcome.simulations === "number" ? outcome.simulations : NaN,
    wallTimeS,
    feasible: e === undefined
      ? `no (${String(r.message ?? "no result")})`
      : e.feasible === true
      ? "yes"
      : `no (${
        Array.isArray(e.violations)
          ? summarise(e.violations.map((v: { code?: string }) => v.code))
          : ""
      })`,
    reason: stop,
  };
}

async function loadBalance(): Promise<
  ((scenario: Scenario, options: Record<string, unknown>) => unknown) | undefined
> {
  try {
    const path = new URL("../../src/optimize/balance.ts", import.meta.url).href;
    const module = await import(path);
    if (typeof module.optimizeBalance === "function") return module.optimizeBalance;
    console.error("src/optimize/balance.ts has no optimizeBalance export: SLP skipped");
  } catch (error) {
    console.error(
      `SLP optimizer not available (${(error as Error).message.split("\n")[0]}): skipped`,
    );
  }
  return undefined;
}

function printTable(rows: Row[]): void {
  const header = [
    "case",
    "method",
    "imbalance %",
    "runner g",
    "sims",
    "wall s",
    "feasible",
    "stop",
  ];
  const cells = rows.map((r) => [
    r.case,
    r.method,
    r.imbalancePercent.toFixed(2),
    r.runnerMassG.toFixed(2),
    String(r.simulations),
    r.wallTimeS.toFixed(2),
    r.feasible,
    r.reason,
  ]);
  const widths = header.map((h, k) => Math.max(h.length, ...cells.map((c) => c[k].length)));
  const line = (c: string[]) =>
    c.map((s, k) => (k < 2 || k > 5 ? s.padEnd(widths[k]) : s.padStart(widths[k]))).join("  ");
  console.log(line(header));
  console.log(widths.map((w) => "-".repeat(w)).join("  "));
  for (const c of cells) console.log(line(c));
}

const nmBudget = Number(flag("--nm-budget") ?? 400);
const maxTrials = Number(flag("--trials") ?? 60);
const only = flag("--only");
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

const optimizeBalance = await loadBalance();
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
    [`Nelder–Mead (≤ ${nmBudget})`, () => nelderMead(space, { maxSimulations: nmBudget })],
  ];
  for (const [method, run] of runs) {
    console.error(`${label}: ${method} …`);
    const row = rowOf(label, method, run());
    console.error(
      `  ${row.imbalancePercent.toFixed(2)} %, ${row.simulations} sims, ${
        row.wallTimeS.toFixed(1)
      } s`,
    );
    rows.push(row);
  }
  if (optimizeBalance !== undefined) {
    console.error(`${label}: SLP …`);
    const t = performance.now();
    try {
      const result = await optimizeBalance(scenario, {});
      rows.push(rowOfBalance(label, result, (performance.now() - t) / 1e3));
    } catch (error) {
      console.error(`  SLP failed: ${(error as Error).message}`);
    }
  }
}
printTable(rows);
