/**
 * Fill-simulation cost against size, as a table: `deno run -A tests/bench/fill_scaling.ts
 * [--large] [--no-profile]` (--large adds 256 cavities, a few minutes). Generated family
 * layouts, seed 1, each simulated by `runScenario` (the fastest of several runs is shown:
 * other load on a shared machine only adds time) without and with the tangent along every
 * design size (directions built as the optimizer builds them: each size raised by
 * TANGENT_RELATIVE_STEP, the network rebuilt, the changed element kept). The cost per element
 * per event is what should stay flat as the tool grows (each event needs solves of the whole
 * wet network, so the total grows with elements × events).
 *
 * "Where the time goes" is measured in the same run: the bench starts itself once more under
 * `--cpu-prof` on the 64-cavity family (one run without, one with the tangent, after a
 * warm-up) and sums the profile's self time by part of the engine.
 * Timings are wall clock on whatever machine runs it; they never go into tests.
 */
import { familyLayout } from "../support/family_layout.ts";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import type { Scenario } from "../../src/model/scenario_schema.ts";
import { buildNetwork } from "../../src/network/build_network.ts";
import type { NetworkElement } from "../../src/network/feed_network.ts";
import { LIBRARY_MATERIAL_IDS, runScenario } from "../../src/network/simulate_scenario.ts";
import { applyDesign, currentDesign, designSpace } from "../../src/optimize/design_space.ts";
import { TANGENT_RELATIVE_STEP } from "../../src/optimize/evaluate_design.ts";

/** Parts of the engine, by the source file a profiled function lives in (first match wins). */
const PARTS: [string, RegExp][] = [
  ["Cross master-curve wall solve (physics/_cross_master.ts)", /physics\/_cross_master\.ts$/],
  ["wall-state dispatch and exact integral (physics/_wall_shear.ts)", /physics\/_wall_shear\.ts$/],
  [
    "channel laws: taper/disk quadrature, sections, Kozicki (physics/)",
    /physics\/(channel_flow|tapered_flow|radial_flow|_local_gradient|section|noncircular|_quadrature)\.ts$/,
  ],
  [
    "thermal: frozen layer, erf⁻¹, heating (physics/thermal.ts, _erf.ts)",
    /physics\/(thermal|_erf)\.ts$/,
  ],
  ["flow curves, Cross-WLF (materials/)", /materials\//],
  ["nodal Newton (network/hydraulic_solve.ts)", /network\/hydraulic_solve\.ts$/],
  ["sparse LDLᵀ (network/sparse_cholesky.ts)", /network\/sparse_cholesky\.ts$/],
  ["tangent (fill/tangent_carrier.ts, fill_tangent.ts)", /(tangent_carrier|fill_tangent)\.ts$/],
  [
    "fill loop: laws set-up, assembly, events, records (network/fill/)",
    /network\/(fill\/|simulate_fill|_fill_geometry)/,
  ],
  ["scenario, network build, figures (model/, network/ rest)", /src\//],
];

function scenarioOf(cavities: number): Scenario {
  const parsed = parseScenario(familyLayout(cavities, { seed: 1 }), {
    materialIds: LIBRARY_MATERIAL_IDS,
  });
  if (!parsed.ok) throw new Error(`${cavities}-cavity layout does not parse`);
  return parsed.scenario;
}

/** One direction per design size, as the optimizer's tangent asks for them. */
function directionsOf(scenario: Scenario): NetworkElement[][] {
  const space = designSpace(scenario);
  const x = currentDesign(space);
  return space.variables.map((v, j) => {
    const y = Float64Array.from(x);
    y[j] *= 1 + TANGENT_RELATIVE_STEP;
    const built = buildNetwork(applyDesign(space, y));
    if (!built.ok) return [];
    return built.network.elements.filter((e) => e.id === v.element && e.kind === v.kind);
  });
}

function run(scenario: Scenario, directions?: NetworkElement[][]) {
  const outcome = runScenario(scenario, directions ? { tangent: { directions } } : {});
  if (!outcome.ok) throw new Error(`simulation failed: ${JSON.stringify(outcome)}`);
  return outcome.run;
}

/** Fastest of `reps` runs after one warm-up run, ms (other load on the machine only adds time). */
function timed(reps: number, body: () => void): number {
  body();
  let best = Infinity;
  for (let i = 0; i < reps; i++) {
    const start = performance.now();
    body();
    best = Math.min(best, performance.now() - start);
  }
  return best;
}

if (Deno.args[0] === "--profile-child") {
  const scenario = scenarioOf(Number(Deno.args[1]));
  const directions = directionsOf(scenario);
  run(scenario);
  run(scenario, directions);
  const marks: Record<string, number> = {};
  let t = performance.now();
  run(scenario);
  marks.plain = performance.now() - t;
  t = performance.now();
  run(scenario, directions);
  marks.tangent = performance.now() - t;
  console.log(JSON.stringify(marks));
  Deno.exit(0);
}

/** Issue 12's targets for one fill of the 64-cavity family, ms: without and with the tangent. */
const TARGET_MS = { plain: 150, tangent: 400 };

const sizes = Deno.args.includes("--large") ? [4, 16, 64, 256] : [4, 16, 64];
const perElementEvent: { n: number; plain: number; tangent: number }[] = [];
let at64: { plain: number; tangent: number } | undefined;
console.log(
  "cavities  elements  events  steps  solves  ms/sim  µs/(el·event)  µs/(el·solve)  dirs" +
    "  ms/sim+tangent  µs/(el·event)+t",
);
for (const n of sizes) {
  const scenario = scenarioOf(n);
  const directions = directionsOf(scenario);
  // Fastest of many: on a shared 2-core machine other load swings single runs by 10-50 %.
  const reps = n >= 256 ? 2 : n >= 64 ? 15 : 10;
  let last = run(scenario);
  const ms = timed(reps, () => (last = run(scenario)));
  const msTangent = timed(reps, () => run(scenario, directions));
  const d = last.fill.diagnostics;
  const elements = last.network.elements.length;
  const perEvent = (t: number) => ((t * 1000) / (elements * d.events)).toFixed(2);
  perElementEvent.push({
    n,
    plain: (ms * 1000) / (elements * d.events),
    tangent: (msTangent * 1000) / (elements * d.events),
  });
  if (n === 64) at64 = { plain: ms, tangent: msTangent };
  console.log(
    [
      String(n).padStart(8),
      String(elements).padStart(9),
      String(d.events).padStart(7),
      String(d.steps).padStart(6),
      String(d.hydraulicSolves).padStart(7),
      ms.toFixed(0).padStart(7),
      perEvent(ms).padStart(14),
      ((ms * 1000) / (elements * d.hydraulicSolves)).toFixed(2).padStart(14),
      String(directions.length).padStart(5),
      msTangent.toFixed(0).padStart(15),
      perEvent(msTangent).padStart(16),
    ].join(" "),
  );
}

// Ratios in this run: against the targets, and each size's cost per element·event against the
// smallest's (flat or falling is what scales).
if (at64) {
  console.log(
    `\n64 cavities against the targets: ${at64.plain.toFixed(0)} ms / ${TARGET_MS.plain} ms = ` +
      `${(at64.plain / TARGET_MS.plain).toFixed(2)}×; with tangent ${
        at64.tangent.toFixed(0)
      } ms / ` +
      `${TARGET_MS.tangent} ms = ${(at64.tangent / TARGET_MS.tangent).toFixed(2)}×`,
  );
}
const first = perElementEvent[0];
console.log(
  "µs/(el·event) against 4 cavities: " +
    perElementEvent.map((r) =>
      `${r.n}: ${(r.plain / first.plain).toFixed(2)} (+t ${(r.tangent / first.tangent).toFixed(2)})`
    ).join(", "),
);

if (!Deno.args.includes("--no-profile")) await whereTheTimeGoes(64);

async function whereTheTimeGoes(cavities: number): Promise<void> {
  const dir = await Deno.makeTempDir({ prefix: "fill_scaling_prof_" });
  try {
    const child = await new Deno.Command(Deno.execPath(), {
      args: [
        "run",
        "-A",
        "--cpu-prof",
        `--cpu-prof-dir=${dir}`,
        new URL(import.meta.url).pathname,
        "--profile-child",
        String(cavities),
      ],
      stdout: "piped",
      stderr: "inherit",
    }).output();
    if (!child.success) throw new Error("profiled run failed");
    const marks = JSON.parse(new TextDecoder().decode(child.stdout));
    const file = [...Deno.readDirSync(dir)].find((f) => f.name.endsWith(".cpuprofile"));
    if (!file) throw new Error("no .cpuprofile written");
    const profile = JSON.parse(Deno.readTextFileSync(`${dir}/${file.name}`));
    const byPart = new Map<string, number>();
    const byFunction = new Map<string, number>();
    const self = new Map<number, number>();
    const deltas: number[] = profile.timeDeltas;
    profile.samples.forEach((id: number, i: number) => {
      self.set(id, (self.get(id) ?? 0) + (deltas[i] ?? 0));
    });
    let total = 0;
    for (const node of profile.nodes) {
      const us = self.get(node.id) ?? 0;
      const { functionName, url, lineNumber } = node.callFrame;
      if (functionName === "(idle)" || functionName === "(program)") continue;
      total += us;
      const path = String(url).replace(/^file:\/\//, "");
      const part = functionName === "(garbage collector)"
        ? "garbage collector"
        : PARTS.find(([, re]) => re.test(path))?.[0] ?? "runtime, tests, other";
      byPart.set(part, (byPart.get(part) ?? 0) + us);
      const name = `${functionName || "(anonymous)"} ${path.split("/").slice(-2).join("/")}:${
        lineNumber + 1
      }`;
      byFunction.set(name, (byFunction.get(name) ?? 0) + us);
    }
    console.log(
      `\nWhere the time goes: ${cavities} cavities, measured now under --cpu-prof (self time of ` +
        `warm-up + one run without and one with the tangent; those two took ` +
        `${marks.plain.toFixed(0)} and ${marks.tangent.toFixed(0)} ms under the profiler)`,
    );
    for (const [part, us] of [...byPart].sort((a, b) => b[1] - a[1])) {
      console.log(`${(100 * us / total).toFixed(1).padStart(6)} %  ${part}`);
    }
    console.log("\nheaviest functions (self time):");
    for (const [name, us] of [...byFunction].sort((a, b) => b[1] - a[1]).slice(0, 8)) {
      console.log(`${(100 * us / total).toFixed(1).padStart(6)} %  ${name}`);
    }
  } finally {
    await Deno.remove(dir, { recursive: true });
  }
}
