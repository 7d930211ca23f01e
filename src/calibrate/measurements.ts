import { z } from "zod";

/**
 * What a shop measured on today's tool, wire format (metric units in the field names):
 * weighed short shots at known shot sizes, and optionally the injection pressure at
 * switchover of a full shot. Cross-checked against a scenario by {@link checkMeasurements}.
 *
 * @module
 */

const id = z.string().min(1).max(64);

export const ShortShotPartSchema = z.object({
  cavity: id.describe("cavity id"),
  mass_g: z.number().positive().max(1e5).optional().describe("weighed part mass, g"),
  fill_percent: z.number().min(0).max(100).optional().describe(
    "filled share of the part (from mass or a measured flow length), %",
  ),
}).strict().refine((p) => (p.mass_g === undefined) !== (p.fill_percent === undefined), {
  message: "give either mass_g or fill_percent for each part",
});

export const ShortShotSchema = z.object({
  id: id.optional(),
  injected_cm3: z.number().positive().max(1e5).optional().describe(
    "melt volume injected up to the stop (feed system included), cm³",
  ),
  shot_percent: z.number().gt(0).max(100).optional().describe(
    "the same as a share of the full shot (feed system + cavities), %",
  ),
  parts: z.array(ShortShotPartSchema).min(1),
}).strict().refine((s) => (s.injected_cm3 === undefined) !== (s.shot_percent === undefined), {
  message: "give either injected_cm3 or shot_percent for each short shot",
});

export const MeasurementsSchema = z.object({
  short_shots: z.array(ShortShotSchema).min(1),
  full_shot_pressure_MPa: z.number().positive().max(400).optional().describe(
    "measured injection pressure at switchover of a full shot, MPa",
  ),
}).strict();

export type Measurements = z.infer<typeof MeasurementsSchema>;

/** A problem with measurements, with its JSON path (like the scenario's issues). */
export interface MeasurementIssue {
  at: string;
  message: string;
}

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
    const at = `measurements.short_shots[${s}]`;
    const injected = shot.injected_cm3 ?? (shot.shot_percent! / 100) * tool.shotVolumeCm3;
    if (injected > tool.shotVolumeCm3 * (1 + 1e-9)) {
      issues.push({
        at: `${at}.injected_cm3`,
        message: `${injected.toFixed(2)} cm³ is more than the full shot (${
          tool.shotVolumeCm3.toFixed(2)
        } cm³)`,
      });
    }
    const seen = new Set<string>();
    shot.parts.forEach((part, p) => {
      const cavity = tool.cavities.find((c) => c.id === part.cavity);
      if (!cavity) {
        issues.push({ at: `${at}.parts[${p}].cavity`, message: `no cavity "${part.cavity}"` });
        return;
      }
      if (seen.has(part.cavity)) {
        issues.push({ at: `${at}.parts[${p}].cavity`, message: `${part.cavity} given twice` });
      }
      seen.add(part.cavity);
      const full = (cavity.volume_cm3 * tool.solidDensityKgM3) / 1000;
      if (part.mass_g !== undefined && part.mass_g > full) {
        issues.push({
          at: `${at}.parts[${p}].mass_g`,
          message: `${part.mass_g} g is more than the full part (${
            full.toFixed(2)
          } g at solid density)`,
        });
      }
    });
  });
  return issues;
}
