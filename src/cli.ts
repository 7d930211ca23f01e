/**
 * Command-line entry: `simulate`, `validate`, `materials`, `schema` over scenario
 * files, `fit-material` over viscosity CSV files. Exit codes: 0 done, 1 usage error,
 * 2 invalid scenario or CSV (issues on stderr), 3 the simulation failed.
 *
 * @module
 */
import { MATERIALS } from "./materials/library.ts";
import { scenarioJsonSchema } from "./model/json_schema.ts";
import { parseScenarioText } from "./model/parse_scenario.ts";
import { MODES, ModeSchema, SLOPE_SOURCES, SlopeSourceSchema } from "./wire/enums.ts";
import type { ScenarioIssue } from "./wire/issue.ts";
import type { Scenario } from "./model/scenario_schema.ts";
import { checkScenario, LIBRARY_MATERIAL_IDS, runScenario } from "./network/simulate_scenario.ts";
import { calibrate } from "./calibrate/calibrate.ts";
import { calibrationJson } from "./report/calibration_json.ts";
import type { CalibrationFactor } from "./calibrate/factors.ts";
import { processWindow } from "./window/process_window.ts";
import { fillHistoryCsv } from "./report/fill_csv.ts";
import { resultJson } from "./report/result_json.ts";
import { textReport } from "./report/text_report.ts";
import { optimizeBalance } from "./optimize/balance.ts";
import { optimizationJson, optimizationText } from "./report/optimization_report.ts";
import { changeSheetCsv } from "./report/change_sheet_csv.ts";
import { windowJson } from "./report/window_json.ts";
import {
  FIT_MATERIAL_OPTIONS,
  FIT_MATERIAL_USAGE,
  FIT_MATERIAL_VALUED,
  fitMaterialCommand,
} from "./fit_material_command.ts";

const USAGE = `evenfill — runner balancing for multi-cavity and family molds

usage:
  evenfill simulate <scenario.json> [--json] [--history] [--csv] [--units metric|dual]
  evenfill optimize <scenario.json> [--mode new_tool|trim|steel_safe] [--json] [--history] [--csv]
                    [--slopes tangent|finite_difference]
  evenfill validate <scenario.json> [--json]
  evenfill calibrate <scenario.json> --factors viscosity,gate:G2,runner:R4,melt [--json]
                     [--write <calibrated.json>]   (fits the model to the scenario's measurements)
  evenfill window <scenario.json> [--json]   (imbalance and gate shear across the process window)
  evenfill materials
${FIT_MATERIAL_USAGE}
  evenfill schema [--write <path>]

exit codes: 0 done (optimize: converged; the report flags a cutter-size design that misses a
limit); 1 usage or file error; 2 the scenario (fit-material: the CSV) has problems, or an
unknown option (listed, with their JSON paths or line numbers; as JSON with --json); 3 the
simulation, the optimization or the fit failed;
4 optimize ended infeasible, at its iteration limit or cancelled — the report says why.

(with Deno: deno task simulate scenarios/family_four_housing.json)`;

/** The options each command takes; any other is an error. */
const OPTIONS: Record<string, readonly string[]> = {
  simulate: ["json", "history", "csv", "units"],
  optimize: ["json", "history", "csv", "mode", "slopes", "units"],
  validate: ["json"],
  calibrate: ["json", "factors", "write"],
  window: ["json"],
  materials: [],
  "fit-material": FIT_MATERIAL_OPTIONS,
  schema: ["write"],
};

interface Args {
  positional: string[];
  flags: Map<string, string | true>;
}

/** Write every byte: one writeSync may write fewer than it is given (a pipe, a large sheet). */
function writeAllSync(out: { writeSync(p: Uint8Array): number }, bytes: Uint8Array): void {
  for (let done = 0; done < bytes.length;) done += out.writeSync(bytes.subarray(done));
}

function parseArgs(argv: readonly string[]): Args {
  const positional: string[] = [];
  const flags = new Map<string, string | true>();
  const valued = new Set(["units", "write", "mode", "slopes", "factors", ...FIT_MATERIAL_VALUED]);
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    if (a.startsWith("--")) {
      const [name, inline] = a.slice(2).split("=", 2);
      if (inline !== undefined) flags.set(name, inline);
      else if (valued.has(name) && i + 1 < argv.length) flags.set(name, argv[++i]);
      else flags.set(name, true);
    } else positional.push(a);
  }
  return { positional, flags };
}

let issuesAsJson = false;

function stripBom(text: string): string {
  return text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
}

/** "viscosity,gate:G2,runner:R4,melt" → factors, or a message saying what is wrong. */
function parseFactors(text: string): CalibrationFactor[] | string {
  const factors: CalibrationFactor[] = [];
  for (const part of text.split(",").map((p) => p.trim()).filter(Boolean)) {
    const [kind, id] = part.split(":", 2);
    if (kind === "viscosity") factors.push({ kind: "viscosity" });
    else if (kind === "melt") factors.push({ kind: "melt_temperature" });
    else if (kind === "gate" && id) factors.push({ kind: "gate_size", gate: id });
    else if (kind === "runner" && id) factors.push({ kind: "runner_size", runner: id });
    else return `--factors: "${part}" is not viscosity, melt, gate:<id> or runner:<id>`;
  }
  return factors.length > 0 ? factors : "--factors: give at least one factor";
}

function calibrationText(
  fit: Extract<ReturnType<typeof calibrate>, { ok: true }>,
  written: string | undefined,
): string {
  const lines = [
    `evenfill — calibration to weighed short shots (${fit.stoppedBecause}, ${fit.iterations} iterations, ${fit.simulations} simulations)`,
    "",
    "  factor               value    ± std. error   identified",
  ];
  for (const f of fit.factors) {
    lines.push(
      `  ${f.name.padEnd(20)} ${f.value.toFixed(4).padStart(7)}   ± ${
        f.standardError.toFixed(4).padEnd(9)
      }   ${f.identified ? "yes" : "NO — the data cannot tell it; left near nominal"}${
        f.atBound ? " (at its bound)" : ""
      }`,
    );
  }
  lines.push("", "  shot  cavity  injected cm³   measured %   model before %   after %");
  for (const r of fit.residuals) {
    lines.push(
      `  ${String(r.shot + 1).padStart(4)}  ${r.cavity.padEnd(6)}  ${
        r.injectedCm3.toFixed(2).padStart(12)
      }   ${(100 * r.measured).toFixed(1).padStart(10)}   ${
        (100 * r.before).toFixed(1).padStart(14)
      }   ${(100 * r.after).toFixed(1).padStart(7)}`,
    );
  }
  if (fit.pressure) {
    lines.push(
      "",
      `  full-shot pressure: measured ${fit.pressure.measuredMPa.toFixed(1)} MPa, model ${
        fit.pressure.beforeMPa.toFixed(1)
      } → ${fit.pressure.afterMPa.toFixed(1)} MPa`,
    );
  }
  if (written) {
    lines.push("", `Calibrated scenario written to ${written}: optimize runs on it unchanged.`);
  }
  lines.push(
    "",
    "A calibrated model reproduces today's shots; it is still a 1-D model. Cut one step, re-measure, then decide.",
  );
  return lines.join("\n");
}

function windowText(report: ReturnType<typeof processWindow>): string {
  const lines = [
    "evenfill — the design across the process window (2⁴ corners + centre)",
    "",
    `  imbalance ${report.imbalanceRange[0].toFixed(2)} … ${report.imbalanceRange[1].toFixed(2)} %`,
    `  peak gate shear ${report.gateShearRange[0].toFixed(0)} … ${
      report.gateShearRange[1].toFixed(0)
    } 1/s`,
    "",
    "  what moves the balance (high − low corners, percentage points):",
  ];
  for (const e of report.effects) {
    lines.push(
      `    ${e.factor.padEnd(10)} ${e.imbalancePoints >= 0 ? "+" : ""}${
        e.imbalancePoints.toFixed(2)
      }`,
    );
  }
  for (const f of report.failures) lines.push(`  ! ${JSON.stringify(f.levels)}: ${f.message}`);
  return lines.join("\n");
}

function printIssues(file: string, issues: readonly ScenarioIssue[]): void {
  if (issuesAsJson) {
    console.log(JSON.stringify({ ok: false, file, issues }, null, 2));
    return;
  }
  console.error(`${file}: ${issues.length} problem${issues.length === 1 ? "" : "s"}`);
  for (const i of issues) console.error(`  ${i.at}: ${i.message} [${i.code}]`);
}

type ReadResult = { scenario: Scenario } | { scenario?: undefined; exit: 1 | 2; message?: string };

async function readScenario(file: string | undefined): Promise<ReadResult> {
  if (!file) return { exit: 1, message: USAGE };
  let text: string;
  try {
    text = await Deno.readTextFile(file);
  } catch (error) {
    return { exit: 1, message: `Cannot read ${file}: ${(error as Error).message}` };
  }
  const parsed = parseScenarioText(text, { materialIds: LIBRARY_MATERIAL_IDS });
  if (!parsed.ok) {
    printIssues(file, parsed.issues);
    return { exit: 2 };
  }
  // The network checks simulate makes (reachability, section shapes), so validate agrees.
  const checked = checkScenario(parsed.scenario);
  if (!checked.ok) {
    printIssues(file, checked.issues);
    return { exit: 2 };
  }
  return { scenario: parsed.scenario };
}

/** Run the CLI with the given arguments; returns the process exit code. */
export async function main(argv: readonly string[]): Promise<number> {
  const [command, ...rest] = argv;
  const args = parseArgs(rest);
  const known = OPTIONS[command];
  if (known) {
    const unknown = [...args.flags.keys()].filter((f) => !known.includes(f));
    if (unknown.length > 0) {
      console.error(
        `evenfill ${command}: unknown option${unknown.length === 1 ? "" : "s"} ${
          unknown.map((f) => `--${f}`).join(", ")
        } (it takes ${known.length > 0 ? known.map((f) => `--${f}`).join(", ") : "none"})`,
      );
      return 2;
    }
  }
  issuesAsJson = args.flags.has("json");
  switch (command) {
    case "simulate": {
      const read = await readScenario(args.positional[0]);
      if (read.scenario === undefined) {
        if (read.message) console.error(read.message);
        return read.exit;
      }
      const units = args.flags.get("units") ?? "metric";
      if (units !== "metric" && units !== "dual") {
        console.error(`--units must be metric or dual, got ${units}`);
        return 1;
      }
      const quiet = args.flags.has("json") || args.flags.has("csv");
      let lastShown = -1;
      const outcome = runScenario(read.scenario, {
        onProgress: (f) => {
          const tenth = Math.floor(f * 10);
          if (!quiet && Deno.stderr.isTerminal() && tenth > lastShown) {
            lastShown = tenth;
            Deno.stderr.writeSync(new TextEncoder().encode(`\rfilling… ${tenth * 10} %`));
          }
        },
      });
      if (lastShown >= 0) Deno.stderr.writeSync(new TextEncoder().encode("\r\x1b[K"));
      if (!outcome.ok) {
        if (outcome.code === "invalid_scenario") {
          printIssues(args.positional[0], outcome.issues);
          return 2;
        }
        console.error(`Simulation failed: ${outcome.message}`);
        return 3;
      }
      if (args.flags.has("csv")) console.log(fillHistoryCsv(outcome.run).trimEnd());
      else if (args.flags.has("json")) {
        console.log(
          JSON.stringify(resultJson(outcome.run, { history: args.flags.has("history") }), null, 2),
        );
      } else console.log(textReport(outcome.run, { units }).trimEnd());
      return 0;
    }
    case "optimize": {
      const read = await readScenario(args.positional[0]);
      if (read.scenario === undefined) {
        if (read.message) console.error(read.message);
        return read.exit;
      }
      const mode = args.flags.get("mode");
      if (mode !== undefined) {
        const known = ModeSchema.safeParse(mode);
        if (!known.success) {
          console.error(
            `--mode must be ${MODES.slice(0, -1).join(", ")} or ${MODES.at(-1)}, got ${mode}`,
          );
          return 1;
        }
        read.scenario.goals.mode = known.data;
      }
      const slopes = SlopeSourceSchema.safeParse(args.flags.get("slopes") ?? "tangent");
      if (!slopes.success) {
        console.error(
          `--slopes must be ${SLOPE_SOURCES.join(" or ")}, got ${args.flags.get("slopes")}`,
        );
        return 1;
      }
      const result = await optimizeBalance(read.scenario, {
        slopes: slopes.data,
        onProgress: (i) =>
          console.error(
            `iteration ${i.iteration}: ${i.accepted ? "accepted" : "rejected"}, imbalance ${
              i.imbalancePercent.toFixed(2)
            } %, peak ${(i.feedPressurePeak / 1e6).toFixed(1)} MPa, runner ${
              (i.runnerVolume * 1e6).toFixed(2)
            } cm³, ${i.simulations} simulations`,
          ),
      });
      if (!result.ok) {
        console.error(`Optimization failed (${result.code}): ${result.message}`);
        return 3;
      }
      const changes = result.outcome.changes?.steps ?? [];
      if (args.flags.has("csv")) {
        writeAllSync(
          Deno.stdout,
          new TextEncoder().encode(
            changeSheetCsv(changes, { start: result.outcome.changes?.start }),
          ),
        );
      } else if (args.flags.has("json")) {
        const json = optimizationJson(result.outcome, {
          history: args.flags.has("history"),
          changes,
        });
        console.log(JSON.stringify(json, null, 2));
      } else console.log(optimizationText(result.outcome, changes).trimEnd());
      return result.outcome.status === "converged" ? 0 : 4;
    }
    case "calibrate": {
      const file = args.positional[0];
      const read = await readScenario(file);
      if (read.scenario === undefined) {
        if (read.message) console.error(read.message);
        return read.exit;
      }
      const wire = JSON.parse(stripBom(await Deno.readTextFile(file!)));
      if (!read.scenario.measurements) {
        console.error(`${file}: no "measurements" block to calibrate against`);
        return 2;
      }
      const factors = parseFactors(String(args.flags.get("factors") ?? "viscosity"));
      if (typeof factors === "string") {
        console.error(factors);
        return 1;
      }
      const fit = calibrate(wire, read.scenario.measurements, { factors });
      if (!fit.ok) {
        if (fit.code === "invalid_measurements") {
          printIssues(file!, fit.issues);
          return 2;
        }
        console.error(`Calibration failed: ${fit.message}`);
        return 3;
      }
      const write = args.flags.get("write");
      if (typeof write === "string") {
        await Deno.writeTextFile(write, JSON.stringify(fit.calibrated, null, 2) + "\n");
      }
      if (args.flags.has("json")) console.log(JSON.stringify(calibrationJson(fit), null, 2));
      else console.log(calibrationText(fit, typeof write === "string" ? write : undefined));
      return 0;
    }
    case "window": {
      const file = args.positional[0];
      const read = await readScenario(file);
      if (read.scenario === undefined) {
        if (read.message) console.error(read.message);
        return read.exit;
      }
      const report = processWindow(JSON.parse(stripBom(await Deno.readTextFile(file!))));
      if (args.flags.has("json")) console.log(JSON.stringify(windowJson(report), null, 2));
      else console.log(windowText(report));
      return 0;
    }
    case "validate": {
      const read = await readScenario(args.positional[0]);
      if (read.scenario === undefined) {
        if (read.message) console.error(read.message);
        return read.exit;
      }
      console.log(
        `${
          args.positional[0]
        }: valid (${read.scenario.cavities.length} cavities, ${read.scenario.runners.length} runners, ${read.scenario.gates.length} gates)`,
      );
      return 0;
    }
    case "materials": {
      for (const m of MATERIALS) console.log(`${m.id.padEnd(18)} ${m.name}`);
      console.log(
        "\nGeneric, representative data: replace with your grade's (supplier, or measured to ISO 11443).",
      );
      return 0;
    }
    case "fit-material":
      return await fitMaterialCommand(args.positional[0], args.flags);
    case "schema": {
      const text = JSON.stringify(scenarioJsonSchema(), null, 2) + "\n";
      const target = args.flags.get("write");
      if (typeof target === "string") {
        await Deno.writeTextFile(target, text);
        console.error(`wrote ${target}`);
      } else console.log(text.trimEnd());
      return 0;
    }
    case undefined:
    case "help":
    case "--help":
      console.log(USAGE);
      return command === undefined ? 1 : 0;
    default:
      console.error(`Unknown command "${command}".\n\n${USAGE}`);
      return 1;
  }
}

if (import.meta.main) Deno.exit(await main(Deno.args));
