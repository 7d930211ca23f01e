/**
 * The checks a calibrate or window job's submission gets beyond its schema, so a job the
 * service accepts is one the worker can run: every factor names a gate or runner of the
 * scenario, the scenario carries measurements that fit the tool, a second design is a valid
 * scenario.
 *
 * @module
 */
import { checkMeasurements } from "../calibrate/measurements.ts";
import type { Scenario } from "../model/scenario_schema.ts";
import { buildNetwork } from "../network/build_network.ts";
import { checkScenario, resolveMaterial } from "../network/simulate_scenario.ts";
import { type ScenarioIssue, scenarioIssue } from "../wire/issue.ts";
import type { CalibrationFactorJson } from "../wire/calibration.ts";

/** Problems of a calibrate job: unknown factor ids (`factors[k].gate`), missing or impossible measurements. */
export function calibrateIssues(
  scenario: Scenario,
  factors: readonly CalibrationFactorJson[],
): ScenarioIssue[] {
  const issues: ScenarioIssue[] = [];
  const seen = new Set<string>();
  factors.forEach((f, k) => {
    const key = JSON.stringify(f);
    if (seen.has(key)) {
      issues.push(scenarioIssue(["factors", k], "duplicate_factor", "this factor is given twice"));
    }
    seen.add(key);
    if (f.kind === "gate_size" && !scenario.gates.some((g) => g.id === f.gate)) {
      issues.push(scenarioIssue(
        ["factors", k, "gate"],
        "unknown_gate",
        `the scenario has no gate "${f.gate}" (its gates: ${
          scenario.gates.map((g) => g.id).join(", ")
        })`,
      ));
    }
    if (f.kind === "runner_size" && !(scenario.runners ?? []).some((r) => r.id === f.runner)) {
      const ids = (scenario.runners ?? []).map((r) => r.id);
      issues.push(scenarioIssue(
        ["factors", k, "runner"],
        "unknown_runner",
        `the scenario has no runner "${f.runner}"${
          ids.length > 0 ? ` (its runners: ${ids.join(", ")})` : ""
        }`,
      ));
    }
  });
  if (!scenario.measurements) {
    issues.push(scenarioIssue(
      ["measurements"],
      "no_measurements",
      "a calibration needs weighed short shots: add a measurements block to the scenario",
    ));
    return issues;
  }
  const built = buildNetwork(scenario);
  if (!built.ok) return [...issues, ...built.issues];
  const network = built.network;
  issues.push(...checkMeasurements(scenario.measurements, {
    cavities: network.cavities.map((c) => ({ id: c.id, volume_cm3: c.volume * 1e6 })),
    shotVolumeCm3: (network.feedSystemVolume + network.cavityVolume) * 1e6,
    solidDensityKgM3: resolveMaterial(scenario).solidDensity,
  }));
  return issues;
}

/** Problems of a window job's second design, at `after_scenario…` paths. */
export function afterScenarioIssues(input: unknown): ScenarioIssue[] {
  if (input === undefined) return [];
  const checked = checkScenario(input);
  if (checked.ok) return [];
  return checked.issues.map((i) => scenarioIssue(["after_scenario", ...i.path], i.code, i.message));
}
