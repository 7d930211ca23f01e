import { SCENARIO_FORMAT, type ScenarioWire } from "../../src/model/scenario_schema.ts";
import { mulberry32 } from "./seeded_random.ts";

/** Options of {@link familyLayout}. */
export interface FamilyLayoutOptions {
  /** Seed of the deterministic part-size variation (default 1). */
  seed?: number;
  /** Material id (default "pp-homo"). */
  material?: string;
  /** Largest / smallest part volume (default 4: a family mold). 1 gives identical parts. */
  volumeSpread?: number;
  /** Gate type for every cavity (default "tunnel"). */
  gate?: "tunnel" | "edge";
  /** Injection rate, cm³/s (default: the shot in 1.5 s). */
  flowRateCm3PerS?: number;
}

/**
 * An invented N-cavity family layout for tests and benchmarks: a sprue feeding a
 * binary H-tree of round runners (each level halves the span and steps the diameter
 * down by 2^(1/3), the branching rule), a tunnel or edge gate per cavity, parts whose
 * volumes vary by `volumeSpread`. Any N ≥ 1; non-powers of two give an unbalanced tree.
 */
export function familyLayout(cavityCount: number, options: FamilyLayoutOptions = {}): ScenarioWire {
  if (!Number.isInteger(cavityCount) || cavityCount < 1 || cavityCount > 2000) {
    throw new RangeError(
      `Cannot build a family layout: cavity count must be 1…2000, got ${cavityCount}`,
    );
  }
  const random = mulberry32(options.seed ?? 1);
  const spread = options.volumeSpread ?? 4;
  const nodes: NonNullable<ScenarioWire["nodes"]> = [{ id: "S", x_mm: 0, y_mm: 0 }];
  const runners: NonNullable<ScenarioWire["runners"]> = [];
  const gates: ScenarioWire["gates"] = [];
  const cavities: ScenarioWire["cavities"] = [];
  const depth = Math.ceil(Math.log2(Math.max(cavityCount, 1)));
  const rootDiameter = Math.min(12, 4.5 * Math.pow(2, depth / 3));
  let runnerCount = 0;
  let cavityIndex = 0;

  const grow = (
    node: string,
    x: number,
    y: number,
    count: number,
    level: number,
    diameter: number,
  ) => {
    if (count === 1) {
      const k = ++cavityIndex;
      const volume = 3 * Math.pow(spread, random());
      const wall = 1.2 + 0.8 * random();
      const flowLength = 30 + 50 * random();
      cavities.push({
        id: `C${k}`,
        name: `part ${k}`,
        volume_cm3: Number(volume.toFixed(3)),
        projected_area_cm2: Number(((volume / (wall / 10)) * 0.9).toFixed(2)),
        wall_mm: Number(wall.toFixed(2)),
        flow_length_mm: Number(flowLength.toFixed(1)),
        fill_pattern: "strip",
      });
      const gateSize = Number((0.5 * wall).toFixed(2));
      gates.push(
        options.gate === "edge"
          ? {
            id: `G${k}`,
            from: node,
            cavity: `C${k}`,
            type: "edge",
            width_mm: 3,
            thickness_mm: Number((0.65 * wall).toFixed(2)),
            land_mm: 1,
            adjustable: true,
            min_thickness_mm: Number((0.3 * wall).toFixed(2)),
            max_thickness_mm: Number((0.9 * wall).toFixed(2)),
          }
          : {
            id: `G${k}`,
            from: node,
            cavity: `C${k}`,
            type: "tunnel",
            section: "round",
            diameter_mm: gateSize,
            length_mm: 6,
            taper_angle_deg: 30,
            adjustable: true,
            min_diameter_mm: Number((0.25 * wall).toFixed(2)),
            max_diameter_mm: Number((0.6 * wall).toFixed(2)),
          },
      );
      return;
    }
    const span = 25 * Math.pow(2, (depth - level) / 2);
    const horizontal = level % 2 === 0;
    const left = Math.ceil(count / 2);
    const child = Number(Math.max(3, diameter / Math.cbrt(2)).toFixed(2));
    for (const [sign, share] of [[-1, left], [1, count - left]] as const) {
      const id = `N${nodes.length}`;
      const cx = horizontal ? x + sign * span : x;
      const cy = horizontal ? y : y + sign * span;
      nodes.push({ id, x_mm: Number(cx.toFixed(3)), y_mm: Number(cy.toFixed(3)) });
      runners.push({
        id: `R${++runnerCount}`,
        from: node,
        to: id,
        diameter_mm: Number(diameter.toFixed(2)),
        adjustable: true,
        min_diameter_mm: 2,
        max_diameter_mm: 14,
      });
      grow(id, cx, cy, share, level + 1, child);
    }
  };
  grow("S", 0, 0, cavityCount, 0, rootDiameter);

  const shot = cavities.reduce((sum, c) => sum + c.volume_cm3, 0);
  return {
    format: SCENARIO_FORMAT,
    name: `Generated ${cavityCount}-cavity family layout (seed ${options.seed ?? 1})`,
    notes: "Invented by familyLayout() for tests and benchmarks.",
    material: options.material ?? "pp-homo",
    process: {
      melt_temperature_C: 230,
      mold_temperature_C: 40,
      injection: { flow_rate_cm3_s: options.flowRateCm3PerS ?? Number((shot / 1.5).toFixed(3)) },
      switchover_percent: 98,
    },
    machine: { max_injection_pressure_MPa: 200, clamp_force_kN: 50 * cavityCount + 500 },
    feed: {
      kind: "sprue",
      node: "S",
      length_mm: 60,
      entry_diameter_mm: 4,
      exit_diameter_mm: Number(Math.max(6, rootDiameter + 1).toFixed(2)),
    },
    nodes,
    runners,
    gates,
    cavities,
    goals: {
      mode: "new_tool",
      max_imbalance_percent: 2,
      max_pressure_fraction: 0.8,
      cutters: "metric",
    },
  };
}
