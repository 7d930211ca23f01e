/**
 * Cross-checks of weighed short shots against a tool (the schema lives in
 * `model/measurements_schema.ts`).
 *
 * @module
 */
import type { Measurements } from "../model/measurements_schema.ts";
import { type ScenarioIssue, scenarioIssue } from "../wire/issue.ts";

export { type Measurements, MeasurementsSchema } from "../model/measurements_schema.ts";

/** A problem with measurements: a scenario issue at its JSON path. */
export type MeasurementIssue = ScenarioIssue;

/**
 * Cross-check measurements against the tool: every cavity known, no part heavier than the
 * full part (solid density × volume), no shot larger than the full shot (cm³, kg/m³).
 */
export function checkMeasurements(
  measurements: Measurements,
  tool: {
    cavities: readonly { id: string; volume_cm3: number }[];
    shotVolumeCm3: number;
    solidDensityKgM3: number;
  },
): MeasurementIssue[] {
  const issues: MeasurementIssue[] = [];
  measurements.short_shots.forEach((shot, s) => {
    const at = ["measurements", "short_shots", s];
    const injected = shot.injected_cm3 ?? (shot.shot_percent! / 100) * tool.shotVolumeCm3;
    if (injected > tool.shotVolumeCm3 * (1 + 1e-9)) {
      issues.push(scenarioIssue(
        [...at, "injected_cm3"],
        "over_full_shot",
        `${injected.toFixed(2)} cm³ is more than the full shot (${
          tool.shotVolumeCm3.toFixed(2)
        } cm³)`,
      ));
    }
    const seen = new Set<string>();
    shot.parts.forEach((part, p) => {
      const cavity = tool.cavities.find((c) => c.id === part.cavity);
      if (!cavity) {
        issues.push(
          scenarioIssue(
            [...at, "parts", p, "cavity"],
            "unknown_cavity",
            `no cavity "${part.cavity}"`,
          ),
        );
        return;
      }
      if (seen.has(part.cavity)) {
        issues.push(
          scenarioIssue(
            [...at, "parts", p, "cavity"],
            "duplicate_cavity",
            `${part.cavity} given twice`,
          ),
        );
      }
      seen.add(part.cavity);
      const full = (cavity.volume_cm3 * tool.solidDensityKgM3) / 1000;
      if (part.mass_g !== undefined && part.mass_g > full) {
        issues.push(scenarioIssue(
          [...at, "parts", p, "mass_g"],
          "over_full_part",
          `${part.mass_g} g is more than the full part (${full.toFixed(2)} g at solid density)`,
        ));
      }
    });
  });
  return issues;
}
