/**
 * Calibration and process-window cost (issue 14's benchmark):
 * `deno run -A tests/bench/calibrate_bench.ts` (also run by `deno task bench`). Synthetic weighed
 * short shots at 40, 60 and 80 % of the shot come from the model with perturbed factors (a gate
 * at 0.9, the resin lot at 1.1, a branch at 1.05, the melt 4 K hot); the fit starts from today's
 * model. Prints one table: wall ms, simulations and iterations per fit; then the 17-point
 * window sweep's wall ms per tool. Timings only, no assertions.
 */
import { calibrate } from "../../src/calibrate/calibrate.ts";
import type { CalibrationFactor } from "../../src/calibrate/factors.ts";
import type { ScenarioWire } from "../../src/model/scenario_schema.ts";
import { processWindow } from "../../src/window/process_window.ts";
import { familyLayout } from "../support/family_layout.ts";
import { syntheticShots } from "../support/synthetic_shots.ts";

const demo = JSON.parse(
  await Deno.readTextFile(new URL("../../scenarios/family_four_housing.json", import.meta.url)),
) as ScenarioWire;
const tools: { label: string; wire: ScenarioWire }[] = [
  { label: "family_four_housing (4)", wire: demo },
  { label: "familyLayout(16, seed 1)", wire: familyLayout(16, { seed: 1 }) },
];

const pad = (text: string, width: number) => text.padEnd(width);
const num = (value: number, width: number, digits = 0) => value.toFixed(digits).padStart(width);

console.log(
  `${pad("tool", 26)} ${pad("factors", 44)} ${"wall ms".padStart(9)} ${"sims".padStart(5)} ${
    "iter".padStart(5)
  }  fitted`,
);
for (const { label, wire } of tools) {
  const all: { factor: CalibrationFactor; truth: number }[] = [
    { factor: { kind: "gate_size", gate: wire.gates[0].id }, truth: 0.9 },
    { factor: { kind: "viscosity" }, truth: 1.1 },
    {
      factor: { kind: "runner_size", runner: wire.runners![wire.runners!.length - 1].id },
      truth: 1.05,
    },
    { factor: { kind: "melt_temperature" }, truth: 4 },
  ];
  for (const count of [1, 2, 4]) {
    const chosen = all.slice(0, count);
    const factors = chosen.map((c) => c.factor);
    const measurements = syntheticShots(wire, factors, chosen.map((c) => c.truth), [40, 60, 80]);
    const start = performance.now();
    const fit = calibrate(wire, measurements, { factors });
    const ms = performance.now() - start;
    const names = factors.map((f) =>
      f.kind === "gate_size"
        ? `gate ${f.gate}`
        : f.kind === "runner_size"
        ? `runner ${f.runner}`
        : f.kind
    ).join(", ");
    const fitted = fit.ok
      ? fit.factors.map((f) => `${f.value.toFixed(3)}±${f.standardError.toFixed(3)}`).join(" ")
      : `failed: ${fit.code}`;
    console.log(
      `${pad(label, 26)} ${pad(names, 44)} ${num(ms, 9)} ${num(fit.ok ? fit.simulations : 0, 5)} ${
        num(fit.ok ? fit.iterations : 0, 5)
      }  ${fitted}`,
    );
  }
}

console.log(`\n${pad("tool", 26)} ${"window wall ms".padStart(15)} ${"points".padStart(7)}`);
for (const { label, wire } of tools) {
  const start = performance.now();
  const report = processWindow(wire);
  const ms = performance.now() - start;
  console.log(`${pad(label, 26)} ${num(ms, 15)} ${num(report.points.length, 7)}`);
}
