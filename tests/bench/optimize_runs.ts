/**
 * Whole optimize runs, phase by phase: the three demos (`scenarios/*.json`) and generated
 * families (`tests/support/family_layout.ts`: 6, 8 and 16 cavities with tunnel gates, seeds
 * 1–3; 4 with tunnel and 5 with edge gates, seeds 1–3, whose few runners take the cutter step
 * to relax-and-fix; 8 cavities with edge gates, seeds 1–3, and 16 with edge gates, seed 1), each run
 * through `optimizeBalance` as the command line does, with the simulations and wall time of
 * every phase (`src/optimize/run_meter.ts`), where the time goes (simulation, LP/MIP, the
 * rest), and what the run found. Not a test: timings never go into tests. Each phase counts
 * its own work, its inner phases' excluded: the cutter snapping an existing tool's
 * fewest-changes step runs is in the cutter columns, the gates' relax-and-fix inside a
 * cutter round in "relax".
 *
 *   deno run -A tests/bench/optimize_runs.ts [--only gen16,family_four] [--repeat N] [--json out.json]
 *
 * `--only` keeps the cases whose name contains one of the words; `--repeat N` runs each case N
 * times and shows its fastest run (the counts and results of every run must agree, or it says
 * so); `--json` also writes the rows to a file, to compare two versions case by case.
 *
 * @module
 */
import { parseScenario, parseScenarioText } from "../../src/model/parse_scenario.ts";
import type { Scenario } from "../../src/model/scenario_schema.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";
import { optimizeBalance } from "../../src/optimize/balance.ts";
import { createHighsSolver } from "../../src/optimize/highs_solver.ts";
import {
  meteredSolver,
  type MeterPhase,
  readMeter,
  resetMeter,
} from "../../src/optimize/run_meter.ts";
import { familyLayout } from "../support/family_layout.ts";

/** The phases as the table prints them, in run order. */
const PHASES: [MeterPhase, string][] = [
  ["fewest_changes", "fewest"],
  ["continuous", "slp"],
  ["cutter_nearest", "nearest"],
  ["cutter_rounds", "rounds"],
  ["relax_and_fix", "relax"],
  ["changes", "plan"],
];

interface Row {
  name: string;
  mode: string;
  simulations: Record<string, number>;
  seconds: Record<string, number>;
  /** Simulations the outcome reports, and those the meter counted. */
  reported: number;
  counted: number;
  totalSeconds: number;
  simulationSeconds: number;
  lpSeconds: number;
  lpSolves: number;
  status: string;
  imbalancePercent: number;
  feasible: boolean;
  runnerVolumeCm3: number;
}

function flag(name: string): string | undefined {
  const k = Deno.args.indexOf(name);
  return k >= 0 ? Deno.args[k + 1] : undefined;
}

const only = flag("--only")?.split(",");
const repeat = Number(flag("--repeat") ?? 1);
const jsonOut = flag("--json");

function demo(name: string): () => Scenario {
  return () => {
    const text = Deno.readTextFileSync(new URL(`../../scenarios/${name}.json`, import.meta.url));
    const parsed = parseScenarioText(text, { materialIds: LIBRARY_MATERIAL_IDS });
    if (!parsed.ok) throw new Error(`${name}: ${parsed.issues.map((i) => i.message).join("; ")}`);
    return parsed.scenario;
  };
}

function family(cavities: number, seed: number, gate?: "edge"): () => Scenario {
  return () => {
    const parsed = parseScenario(familyLayout(cavities, { seed, gate }), {
      materialIds: LIBRARY_MATERIAL_IDS,
    });
    if (!parsed.ok) throw new Error(parsed.issues.map((i) => i.message).join("; "));
    return parsed.scenario;
  };
}

const CASES: [string, () => Scenario][] = [
  ["family_four_housing", demo("family_four_housing")],
  ["hot_drop_eight_caps", demo("hot_drop_eight_caps")],
  ["two_gate_frame_and_knob", demo("two_gate_frame_and_knob")],
  ...[6, 8, 16].flatMap((n) =>
    [1, 2, 3].map((seed): [string, () => Scenario] => [`gen${n} s${seed}`, family(n, seed)])
  ),
  // Few runners (at most RELAX_AND_FIX_MAX_RUNNERS): the cutter step ends in relax-and-fix.
  ...[1, 2, 3].map((seed): [string, () => Scenario] => [`gen4 s${seed}`, family(4, seed)]),
  ...[1, 2, 3].map((seed): [string, () => Scenario] => [
    `gen5e s${seed}`,
    family(5, seed, "edge"),
  ]),
  // Edge gates: continuous optima that meet every limit, whose cutter sizes are the hard part.
  ...[1, 2, 3].map((seed): [string, () => Scenario] => [
    `gen8e s${seed}`,
    family(8, seed, "edge"),
  ]),
  ["gen16e s1", family(16, 1, "edge")],
];

const solver = meteredSolver(await createHighsSolver());

async function runCase(name: string, scenario: Scenario): Promise<Row> {
  resetMeter();
  const start = performance.now();
  const result = await optimizeBalance(scenario, { solver });
  const totalSeconds = (performance.now() - start) / 1000;
  if (!result.ok) throw new Error(`${name}: ${result.code}: ${result.message}`);
  const o = result.outcome;
  const meter = readMeter();
  const simulations: Record<string, number> = {};
  const seconds: Record<string, number> = {};
  let counted = 0;
  let simulationSeconds = 0;
  let lpSeconds = 0;
  let lpSolves = 0;
  for (const tally of meter.values()) {
    counted += tally.simulations;
    simulationSeconds += tally.simulationSeconds;
    lpSeconds += tally.lpSeconds;
    lpSolves += tally.lpSolves;
  }
  for (const [phase, label] of PHASES) {
    simulations[label] = meter.get(phase)?.simulations ?? 0;
    seconds[label] = meter.get(phase)?.seconds ?? 0;
  }
  return {
    name,
    mode: scenario.goals.mode,
    simulations,
    seconds,
    reported: o.simulations,
    counted,
    totalSeconds,
    simulationSeconds,
    lpSeconds,
    lpSolves,
    status: o.status,
    imbalancePercent: o.after.imbalancePercent,
    feasible: o.after.feasible,
    runnerVolumeCm3: o.after.runnerVolume * 1e6,
  };
}

/** What must agree between repeated runs of one case (timings aside). */
function outcomeKey(r: Row): string {
  return JSON.stringify([
    r.simulations,
    r.reported,
    r.status,
    r.imbalancePercent.toFixed(6),
    r.feasible,
    r.runnerVolumeCm3.toFixed(6),
  ]);
}

const pad = (s: string | number, w: number) => String(s).padStart(w);
const labels = PHASES.map(([, label]) => label);
const header = [
  "case".padEnd(24),
  pad("mode", 10),
  ...labels.map((l) => pad(l, 7)),
  pad("sims", 5),
  "|",
  ...labels.map((l) => pad(l, 7)),
  pad("total s", 8),
  pad("sim s", 7),
  pad("LP s", 6),
  pad("other", 6),
  "|",
  pad("status", 15),
  pad("imbal %", 8),
  pad("cutters", 8),
  pad("runner cm³", 10),
].join(" ");
console.log(`simulations by phase | seconds by phase (fastest of ${repeat}) | result`);
console.log(header);

const rows: Row[] = [];
for (const [name, make] of CASES) {
  if (only && !only.some((word) => name.includes(word))) continue;
  const scenario = make();
  let fastest: Row | undefined;
  const keys = new Set<string>();
  for (let k = 0; k < repeat; k++) {
    const row = await runCase(name, scenario);
    keys.add(outcomeKey(row));
    if (!fastest || row.totalSeconds < fastest.totalSeconds) fastest = row;
  }
  const r = fastest!;
  rows.push(r);
  const other = r.totalSeconds - r.simulationSeconds - r.lpSeconds;
  console.log(
    [
      r.name.padEnd(24),
      pad(r.mode, 10),
      ...labels.map((l) => pad(r.simulations[l], 7)),
      pad(r.reported, 5),
      "|",
      ...labels.map((l) => pad(r.seconds[l].toFixed(2), 7)),
      pad(r.totalSeconds.toFixed(2), 8),
      pad(r.simulationSeconds.toFixed(2), 7),
      pad(r.lpSeconds.toFixed(2), 6),
      pad(other.toFixed(2), 6),
      "|",
      pad(r.status, 15),
      pad(r.imbalancePercent.toFixed(3), 8),
      pad(r.feasible ? "met" : "NOT met", 8),
      pad(r.runnerVolumeCm3.toFixed(3), 10),
    ].join(" ") +
      (r.counted !== r.reported ? `  (counted ${r.counted} simulations)` : "") +
      (keys.size > 1 ? "  (repeated runs disagree)" : ""),
  );
}

const sum = (pick: (r: Row) => number) => rows.reduce((s, r) => s + pick(r), 0);
const total = sum((r) => r.totalSeconds);
const simulation = sum((r) => r.simulationSeconds);
const lp = sum((r) => r.lpSeconds);
const share = (t: number) => `${t.toFixed(1)} s (${((100 * t) / total).toFixed(0)} %)`;
console.log(
  `where the time goes: ${total.toFixed(1)} s in all; simulation ${share(simulation)} over ${
    sum((r) => r.counted)
  } simulations, LP/MIP ${share(lp)} over ${sum((r) => r.lpSolves)} solves, other ${
    share(total - simulation - lp)
  }`,
);
if (jsonOut) Deno.writeTextFileSync(jsonOut, JSON.stringify(rows, null, 2) + "\n");
