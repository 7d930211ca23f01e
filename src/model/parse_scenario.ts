import type { z } from "zod";
import { pathText, type ScenarioIssue, scenarioIssue, zodIssues } from "../wire/issue.ts";
import { type Scenario, ScenarioSchema } from "./scenario_schema.ts";

export { pathText, type ScenarioIssue } from "../wire/issue.ts";

/** Result of parsing: the scenario with defaults applied, or the list of issues. */
export type ParseScenarioResult =
  | { ok: true; scenario: Scenario }
  | { ok: false; issues: ScenarioIssue[] };

/** Options of {@link parseScenario}. */
export interface ParseScenarioOptions {
  /** Material ids the library knows; a string `material` must be one of them. */
  materialIds: ReadonlySet<string>;
}

/** Ids the network gives the feed element and the injection point; no user id may take them. */
export const RESERVED_IDS: ReadonlySet<string> = new Set(["inlet", "sprue", "hot_drop"]);

const issue = scenarioIssue;

/** The schema library's issues in the scenario's own words. */
function fromZod(error: z.ZodError): ScenarioIssue[] {
  return zodIssues(error, {
    unionWords: {
      injection: {
        code: "injection_form",
        message: "injection must give exactly one of flow_rate_cm3_s (cm³/s) or fill_time_s (s)",
      },
    },
    unionFallback: {
      material: {
        code: "unknown_material",
        message:
          "material must be a library id (see `evenfill materials`) or an inline material object",
      },
    },
    unknownFieldsHint: "(the fields are listed in public/schema/scenario.schema.json)",
  });
}

/**
 * Validate a scenario: the schema (types, ranges, units) and then the
 * cross-references a schema cannot see (ids, topology references, a gate
 * thicker than its wall, size bounds). Never throws on bad input.
 */
export function parseScenario(
  input: unknown,
  options: ParseScenarioOptions,
): ParseScenarioResult {
  const parsed = ScenarioSchema.safeParse(input);
  if (!parsed.success) return { ok: false, issues: fromZod(parsed.error) };
  const scenario = parsed.data;
  const issues = crossCheck(scenario, options);
  return issues.length > 0 ? { ok: false, issues } : { ok: true, scenario };
}

/** Parse JSON text, reporting a syntax error as an issue with its position. */
export function parseScenarioText(
  text: string,
  options: ParseScenarioOptions,
): ParseScenarioResult {
  let json: unknown;
  try {
    // A UTF-8 byte-order mark (some Windows editors write one) is not part of the JSON.
    json = JSON.parse(text.charCodeAt(0) === 0xfeff ? text.slice(1) : text);
  } catch (error) {
    const detail = error instanceof Error ? error.message : String(error);
    return { ok: false, issues: [issue([], "invalid_json", `Not valid JSON: ${detail}`)] };
  }
  return parseScenario(json, options);
}

function crossCheck(s: Scenario, options: ParseScenarioOptions): ScenarioIssue[] {
  const issues: ScenarioIssue[] = [];
  if (typeof s.material === "string" && !options.materialIds.has(s.material)) {
    const known = [...options.materialIds].sort().join(", ");
    issues.push(
      issue(["material"], "unknown_material", `Unknown material "${s.material}"; known: ${known}`),
    );
  }
  if (typeof s.material === "object") {
    const m = s.material;
    // Data that contradict themselves: the part must be solid (ejectable) at a temperature
    // where the melt has already stopped flowing, and a window runs from low to high.
    if (m.ejection_temperature_C >= m.no_flow_temperature_C) {
      issues.push(
        issue(
          ["material", "ejection_temperature_C"],
          "ejection_above_no_flow",
          `Ejection temperature ${m.ejection_temperature_C} °C must be below the no-flow temperature ${m.no_flow_temperature_C} °C (the melt stops flowing before the part is stiff enough to eject)`,
        ),
      );
    }
    for (const key of ["melt_temperature_range_C", "mold_temperature_range_C"] as const) {
      const range = m[key];
      if (range && !(range[0] < range[1])) {
        issues.push(
          issue(
            ["material", key],
            "range_reversed",
            `${key} must run from low to high, got [${range[0]}, ${range[1]}]`,
          ),
        );
      }
    }
    if (m.no_flow_temperature_C >= s.process.melt_temperature_C) {
      issues.push(
        issue(
          ["process", "melt_temperature_C"],
          "melt_below_no_flow",
          `Melt temperature ${s.process.melt_temperature_C} °C is not above the resin's no-flow temperature ${m.no_flow_temperature_C} °C: it cannot flow`,
        ),
      );
    }
    if (m.ejection_temperature_C <= s.process.mold_temperature_C) {
      issues.push(
        issue(
          ["material", "ejection_temperature_C"],
          "ejection_below_mold",
          `Ejection temperature ${m.ejection_temperature_C} °C must be above the mold temperature ${s.process.mold_temperature_C} °C`,
        ),
      );
    }
  }
  if (s.process.melt_temperature_C <= s.process.mold_temperature_C + 20) {
    issues.push(
      issue(
        ["process", "melt_temperature_C"],
        "melt_not_above_mold",
        "Melt temperature must be well above the mold temperature",
      ),
    );
  }

  // One namespace for every id: results name elements by id alone (the feed's own ids too).
  const seen = new Map<string, string>();
  const claim = (value: string, path: (string | number)[]) => {
    const first = seen.get(value);
    if (RESERVED_IDS.has(value)) {
      issues.push(
        issue(
          path,
          "reserved_id",
          `Id "${value}" is reserved: the results name the feed "sprue" or "hot_drop" and the injection point "inlet"; choose another id`,
        ),
      );
    } else if (first !== undefined) {
      issues.push(issue(path, "duplicate_id", `Id "${value}" is already used at ${first}`));
    } else seen.set(value, pathText(path));
  };
  s.nodes.forEach((n, i) => claim(n.id, ["nodes", i, "id"]));
  s.runners.forEach((r, i) => claim(r.id, ["runners", i, "id"]));
  s.gates.forEach((g, i) => claim(g.id, ["gates", i, "id"]));
  s.cavities.forEach((c, i) => claim(c.id, ["cavities", i, "id"]));

  const nodeIds = new Set(s.nodes.map((n) => n.id));
  const cavities = new Map(s.cavities.map((c) => [c.id, c]));
  const needNode = (value: string, path: (string | number)[]) => {
    if (!nodeIds.has(value)) {
      issues.push(issue(path, "unknown_node", `No node with id "${value}"`));
    }
  };
  needNode(s.feed.node, ["feed", "node"]);
  if (s.feed.kind === "sprue" && s.feed.exit_diameter_mm < s.feed.entry_diameter_mm) {
    issues.push(
      issue(
        ["feed", "exit_diameter_mm"],
        "sprue_taper_reversed",
        "A sprue widens towards the parting line: exit diameter must be ≥ entry diameter",
      ),
    );
  }

  const nodes = new Map(s.nodes.map((n) => [n.id, n]));
  s.runners.forEach((r, i) => {
    needNode(r.from, ["runners", i, "from"]);
    needNode(r.to, ["runners", i, "to"]);
    if (r.from === r.to) {
      issues.push(
        issue(
          ["runners", i, "to"],
          "self_loop",
          `Runner "${r.id}" runs from node "${r.from}" into itself`,
        ),
      );
    }
    const a = nodes.get(r.from);
    const b = nodes.get(r.to);
    if (r.length_mm === undefined && a && b && Math.hypot(a.x_mm - b.x_mm, a.y_mm - b.y_mm) < 0.1) {
      issues.push(
        issue(
          ["runners", i, "length_mm"],
          "zero_length",
          `Runner "${r.id}": its nodes coincide, so length_mm must be given`,
        ),
      );
    }
    checkBounds(
      issues,
      ["runners", i],
      r.diameter_mm,
      r.min_diameter_mm,
      r.max_diameter_mm,
      "diameter",
    );
  });

  const gated = new Set<string>();
  s.gates.forEach((g, i) => {
    needNode(g.from, ["gates", i, "from"]);
    const cavity = cavities.get(g.cavity);
    if (!cavity) {
      issues.push(
        issue(["gates", i, "cavity"], "unknown_cavity", `No cavity with id "${g.cavity}"`),
      );
      return;
    }
    gated.add(g.cavity);
    const gateSize = g.type === "edge" ? g.thickness_mm : g.diameter_mm;
    const field = g.type === "edge" ? "thickness_mm" : "diameter_mm";
    if (gateSize > cavity.wall_mm) {
      issues.push(
        issue(
          ["gates", i, field],
          "gate_thicker_than_wall",
          `Gate "${g.id}" is ${gateSize} mm, thicker than the ${cavity.wall_mm} mm wall of cavity "${cavity.id}"`,
        ),
      );
    }
    if (g.type === "edge") {
      checkBounds(
        issues,
        ["gates", i],
        g.thickness_mm,
        g.min_thickness_mm,
        g.max_thickness_mm,
        "thickness",
      );
    } else {
      checkBounds(
        issues,
        ["gates", i],
        g.diameter_mm,
        g.min_diameter_mm,
        g.max_diameter_mm,
        "diameter",
      );
    }
    if (
      g.type === "tunnel" && g.entry_diameter_mm !== undefined &&
      g.entry_diameter_mm < g.diameter_mm
    ) {
      issues.push(
        issue(
          ["gates", i, "entry_diameter_mm"],
          "tunnel_taper_reversed",
          "A tunnel gate narrows towards the cavity: entry diameter must be ≥ tip diameter",
        ),
      );
    }
  });
  s.cavities.forEach((c, i) => {
    if (!gated.has(c.id)) {
      issues.push(
        issue(["cavities", i, "id"], "cavity_without_gate", `No gate feeds cavity "${c.id}"`),
      );
    }
    if (c.fill_pattern === "strip" && c.flow_length_mm === undefined) {
      issues.push(
        issue(
          ["cavities", i, "flow_length_mm"],
          "missing_flow_length",
          `Strip cavity "${c.id}" needs flow_length_mm`,
        ),
      );
    }
    if (c.fill_pattern === "strip" && c.flow_length_mm !== undefined) {
      const widthMm = (c.volume_cm3 * 1000) / (c.wall_mm * c.flow_length_mm);
      if (widthMm < c.wall_mm) {
        issues.push(
          issue(
            ["cavities", i, "flow_length_mm"],
            "strip_narrower_than_wall",
            `Cavity "${c.id}": volume / (wall × flow length) gives a ${
              widthMm.toFixed(2)
            } mm wide strip, narrower than its wall`,
          ),
        );
      }
    }
  });

  const used = new Set<string>([s.feed.node]);
  for (const r of s.runners) used.add(r.from).add(r.to);
  for (const g of s.gates) used.add(g.from);
  s.nodes.forEach((n, i) => {
    if (!used.has(n.id)) {
      issues.push(
        issue(["nodes", i, "id"], "orphan_node", `Node "${n.id}" has no runner, gate or feed`),
      );
    }
  });
  if (Array.isArray(s.goals.cutters)) {
    const sorted = [...s.goals.cutters].sort((x, y) => x - y);
    if (sorted.some((v, k) => k > 0 && v === sorted[k - 1])) {
      issues.push(issue(["goals", "cutters"], "duplicate_cutter", "Cutter list repeats a size"));
    }
  }
  return issues;
}

function checkBounds(
  issues: ScenarioIssue[],
  base: (string | number)[],
  value: number,
  min: number | undefined,
  max: number | undefined,
  what: string,
): void {
  if (min !== undefined && max !== undefined && min > max) {
    issues.push(
      issue(
        [...base, `min_${what}_mm`],
        "bounds_crossed",
        `min_${what}_mm ${min} is above max_${what}_mm ${max}`,
      ),
    );
  }
  if (min !== undefined && value < min) {
    issues.push(
      issue(
        [...base, `${what}_mm`],
        "below_min",
        `${what} ${value} mm is below its min_${what}_mm ${min}`,
      ),
    );
  }
  if (max !== undefined && value > max) {
    issues.push(
      issue(
        [...base, `${what}_mm`],
        "above_max",
        `${what} ${value} mm is above its max_${what}_mm ${max}`,
      ),
    );
  }
}
