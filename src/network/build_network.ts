import type { Cavity, Gate, Runner, Scenario } from "../model/scenario_schema.ts";
import { pathText, type ScenarioIssue } from "../wire/issue.ts";
import { cm2ToM2, cm3ToM3, degToRad, mmToM } from "../model/units.ts";
import { partingPlaneWidth, type Section, validateSection } from "../physics/mod.ts";
import { geometryVolume } from "./_fill_geometry.ts";
import type {
  ElementGeometry,
  FeedNetwork,
  NetworkCavity,
  NetworkElement,
  NetworkNode,
} from "./feed_network.ts";

/** Result of building the network: the graph, or topology issues with JSON paths. */
export type BuildNetworkResult =
  | { ok: true; network: FeedNetwork }
  | { ok: false; issues: ScenarioIssue[] };

/** Side draft of a trapezoidal runner, per side (common practice, no source: 5–10°). */
export const TRAPEZOID_DRAFT_RAD = degToRad(10);
/** Default included angle of a tunnel gate's cone (common practice, no source). */
export const TUNNEL_TAPER_DEFAULT_DEG = 30;

/**
 * Cross-section of a runner from its scenario fields. Trapezoids and parabolas
 * without explicit depth/width take the section that circumscribes the round of
 * the same diameter (depth = D), so a trapezoid "of 6 mm" holds a 6 mm ball cutter path.
 */
export function runnerSection(
  runner: Pick<Runner, "shape" | "diameter_mm" | "depth_mm" | "width_mm">,
  /** The diameter to use instead of the scenario's, m (a design size). */
  diameter: number = mmToM(runner.diameter_mm),
): Section {
  const d = diameter;
  switch (runner.shape) {
    case "round":
      return { kind: "circle", radius: d / 2 };
    case "half_round":
      return { kind: "half_round", radius: d / 2 };
    case "trapezoid": {
      const depth = runner.depth_mm !== undefined ? mmToM(runner.depth_mm) : d;
      // Trapezoid of depth D whose drafted sides touch a circle of diameter D
      // (tangent-line geometry): bottom = D(1 − sin θ)/cos θ, top = bottom + 2D tan θ.
      const t = TRAPEZOID_DRAFT_RAD;
      const bottom = runner.width_mm !== undefined
        ? mmToM(runner.width_mm) - 2 * depth * Math.tan(t)
        : (d * (1 - Math.sin(t))) / Math.cos(t);
      return {
        kind: "trapezoid",
        topWidth: bottom + 2 * depth * Math.tan(t),
        bottomWidth: bottom,
        depth,
      };
    }
    case "parabolic": {
      const depth = runner.depth_mm !== undefined ? mmToM(runner.depth_mm) : d;
      // The narrowest parabola y = h(1 − (2x/w)²) of depth D that contains the
      // circle of diameter D tangent at its vertex needs w = 2D (curvature 8h/w² ≤ 2/D).
      const width = runner.width_mm !== undefined ? mmToM(runner.width_mm) : 2 * d;
      return { kind: "parabolic", width, depth };
    }
  }
}

function tunnelSection(gate: Extract<Gate, { type: "tunnel" }>, diameter: number): Section {
  switch (gate.section) {
    case "round":
      return { kind: "circle", radius: diameter / 2 };
    case "oval":
      return { kind: "ellipse", minorAxis: diameter, majorAxis: diameter * gate.oval_ratio };
    case "d": {
      const radius = diameter / 2;
      // depth = R + offset
      return { kind: "d_shape", radius, flatOffset: diameter * gate.d_depth_ratio - radius };
    }
  }
}

/**
 * Geometry of a gate from its scenario fields (SI); `size` replaces the scenario's
 * adjustable dimension (edge thickness, pin or tunnel tip diameter), m.
 */
export function gateGeometry(gate: Gate, size: number = gateSize(gate)): ElementGeometry {
  switch (gate.type) {
    case "edge":
      return {
        type: "uniform",
        section: {
          kind: "rectangle",
          width: mmToM(gate.width_mm),
          height: size,
        },
        length: mmToM(gate.land_mm),
      };
    case "pin":
      return {
        type: "uniform",
        section: { kind: "circle", radius: size / 2 },
        length: mmToM(gate.land_mm),
      };
    case "tunnel": {
      const tip = size;
      const length = mmToM(gate.length_mm);
      const angle = degToRad(gate.taper_angle_deg ?? TUNNEL_TAPER_DEFAULT_DEG);
      const entry = gate.entry_diameter_mm !== undefined
        ? mmToM(gate.entry_diameter_mm)
        : tip + 2 * length * Math.tan(angle / 2);
      return {
        type: "tapered",
        entry: tunnelSection(gate, entry),
        exit: tunnelSection(gate, tip),
        length,
      };
    }
  }
}

/**
 * A gate's adjustable size, which also governs its freeze: edge thickness, or the pin or
 * tunnel tip diameter, m.
 */
export function gateSize(gate: Gate): number {
  return mmToM(gate.type === "edge" ? gate.thickness_mm : gate.diameter_mm);
}

/** What a runner's size sets in its network element (the rest is topology). */
export type SizedFields = Pick<
  NetworkElement,
  "geometry" | "volume" | "projectedArea" | "thickness"
>;

/** Geometry, volume, projected area and thickness of a runner of diameter `diameter` (m). */
export function runnerFields(runner: Runner, length: number, diameter: number): SizedFields {
  const section = runnerSection(runner, diameter);
  const geometry: ElementGeometry = { type: "uniform", section, length };
  return {
    geometry,
    volume: geometryVolume(geometry),
    projectedArea: partingPlaneWidth(section) * length,
    thickness: diameter,
  };
}

/** Geometry, volume, projected area and thickness of a gate of size `size` (m, see {@link gateSize}). */
export function gateFields(gate: Gate, size: number): SizedFields {
  const geometry = gateGeometry(gate, size);
  const width = geometry.type === "uniform"
    ? partingPlaneWidth(geometry.section)
    : partingPlaneWidth((geometry as { entry: Section }).entry);
  const length = geometry.type === "uniform" || geometry.type === "tapered" ? geometry.length : 0;
  return {
    geometry,
    volume: geometryVolume(geometry),
    // A tunnel gate runs below the parting plane, into the cavity wall.
    projectedArea: gate.type === "tunnel" ? 0 : width * length,
    thickness: size,
  };
}

/**
 * Flow geometry of a cavity. A radial cavity without a stated gate radius starts its
 * disc at half its first gate's thickness or half its wall, whichever is larger.
 */
export function cavityGeometry(cavity: Cavity, firstGateThickness: number): ElementGeometry {
  const volume = cm3ToM3(cavity.volume_cm3);
  const wall = mmToM(cavity.wall_mm);
  if (cavity.fill_pattern === "radial") {
    const gateRadius = cavity.gate_radius_mm !== undefined
      ? mmToM(cavity.gate_radius_mm)
      : Math.max(firstGateThickness / 2, wall / 2);
    const maxRadius = Math.sqrt(gateRadius * gateRadius + volume / (Math.PI * wall));
    return { type: "radial", gap: wall, gateRadius, maxRadius };
  }
  const flowLength = mmToM(cavity.flow_length_mm!);
  return { type: "strip", width: volume / (wall * flowLength), gap: wall, flowLength };
}

/** Cavity, feed-system and cold-runner volumes of a list of elements, m³. */
export function networkVolumes(
  elements: readonly NetworkElement[],
): Pick<FeedNetwork, "feedSystemVolume" | "coldRunnerVolume" | "cavityVolume"> {
  let feedSystemVolume = 0;
  let coldRunnerVolume = 0;
  let cavityVolume = 0;
  for (const e of elements) {
    if (e.kind === "cavity") cavityVolume += e.volume;
    else {
      feedSystemVolume += e.volume;
      if (!e.heated) coldRunnerVolume += e.volume;
    }
  }
  return { feedSystemVolume, coldRunnerVolume, cavityVolume };
}

/**
 * Build the SI network from a validated scenario. The scenario's own checks
 * (ids, references) have passed; this adds the graph checks: every cavity must be
 * reachable from the feed.
 */
export function buildNetwork(scenario: Scenario): BuildNetworkResult {
  const nodes: NetworkNode[] = [];
  const byId = new Map<string, number>();
  const addNode = (id: string, x: number, y: number, role: NetworkNode["role"]) => {
    const index = nodes.length;
    nodes.push({ id, index, x, y, role });
    // Only the scenario's junctions are looked up by id (runner and gate ends).
    if (role === "junction") byId.set(id, index);
    return index;
  };
  for (const n of scenario.nodes) addNode(n.id, mmToM(n.x_mm), mmToM(n.y_mm), "junction");
  const feedNode = byId.get(scenario.feed.node)!;
  const inlet = addNode("inlet", nodes[feedNode].x, nodes[feedNode].y, "inlet");

  const elements: NetworkElement[] = [];
  const add = (e: Omit<NetworkElement, "index" | "volume"> & { volume?: number }) => {
    const index = elements.length;
    elements.push({ ...e, index, volume: e.volume ?? geometryVolume(e.geometry) });
    return index;
  };

  const feed = scenario.feed;
  const feedIndex = feed.kind === "sprue"
    ? add({
      id: "sprue",
      kind: "feed",
      from: inlet,
      to: feedNode,
      geometry: {
        type: "tapered",
        entry: { kind: "circle", radius: mmToM(feed.entry_diameter_mm) / 2 },
        exit: { kind: "circle", radius: mmToM(feed.exit_diameter_mm) / 2 },
        length: mmToM(feed.length_mm),
      },
      heated: false,
      projectedArea: 0,
      thickness: mmToM(feed.exit_diameter_mm),
      cavity: -1,
    })
    : add({
      id: "hot_drop",
      kind: "feed",
      from: inlet,
      to: feedNode,
      geometry: {
        type: "uniform",
        section: { kind: "circle", radius: mmToM(feed.diameter_mm) / 2 },
        length: mmToM(feed.length_mm),
      },
      heated: true,
      projectedArea: 0,
      thickness: mmToM(feed.diameter_mm),
      cavity: -1,
    });

  // Section geometry the physics can work with (a trapezoid too narrow for its draft, a
  // tunnel whose entry is smaller than its tip …): issues with paths, before anything else.
  const geometryIssues: ScenarioIssue[] = [];
  const checkSections = (sections: Section[], path: (string | number)[], what: string) => {
    for (const section of sections) {
      try {
        validateSection(section);
      } catch (error) {
        if (!(error instanceof RangeError)) throw error;
        geometryIssues.push({
          path,
          at: pathText(path),
          code: "impossible_section",
          message: /trapezoid bottomWidth/.test(error.message)
            ? `${what} is too narrow for its depth: its sides, drafted inward, would meet before the bottom`
            : `${what}: ${error.message.replace(/^Invalid section: /, "")}`,
        });
        return;
      }
    }
  };
  scenario.runners.forEach((r, i) => {
    const field = r.width_mm !== undefined ? "width_mm" : "diameter_mm";
    checkSections([runnerSection(r)], ["runners", i, field], `runner ${r.id}'s ${r.shape} section`);
  });
  scenario.gates.forEach((g, i) => {
    const geometry = gateGeometry(g);
    const sections = geometry.type === "uniform"
      ? [geometry.section]
      : geometry.type === "tapered"
      ? [geometry.entry, geometry.exit]
      : [];
    const field = g.type === "edge" ? "thickness_mm" : "diameter_mm";
    checkSections(sections, ["gates", i, field], `gate ${g.id}'s section`);
  });
  if (geometryIssues.length > 0) return { ok: false, issues: geometryIssues };

  for (const r of scenario.runners) {
    const from = byId.get(r.from)!;
    const to = byId.get(r.to)!;
    const length = r.length_mm !== undefined
      ? mmToM(r.length_mm)
      : Math.hypot(nodes[from].x - nodes[to].x, nodes[from].y - nodes[to].y);
    add({
      id: r.id,
      kind: "runner",
      from,
      to,
      ...runnerFields(r, length, mmToM(r.diameter_mm)),
      heated: false,
      cavity: -1,
    });
  }

  const cavityIndex = new Map(scenario.cavities.map((c, i) => [c.id, i]));
  const cavityNodes = scenario.cavities.map((c) => {
    const gate = scenario.gates.find((g) => g.cavity === c.id);
    const at = gate ? nodes[byId.get(gate.from)!] : nodes[feedNode];
    return addNode(c.id, at.x, at.y, "cavity");
  });
  const gatesOf: number[][] = scenario.cavities.map(() => []);
  for (const g of scenario.gates) {
    const k = cavityIndex.get(g.cavity)!;
    gatesOf[k].push(add({
      id: g.id,
      kind: "gate",
      from: byId.get(g.from)!,
      to: cavityNodes[k],
      ...gateFields(g, gateSize(g)),
      heated: false,
      cavity: k,
    }));
  }

  const cavities: NetworkCavity[] = scenario.cavities.map((c, k) => {
    const volume = cm3ToM3(c.volume_cm3);
    const wall = mmToM(c.wall_mm);
    const element = add({
      id: c.id,
      kind: "cavity",
      from: cavityNodes[k],
      to: -1,
      geometry: cavityGeometry(c, elements[gatesOf[k][0]]?.thickness ?? 0),
      volume,
      heated: false,
      projectedArea: cm2ToM2(c.projected_area_cm2),
      thickness: wall,
      cavity: k,
    });
    return {
      id: c.id,
      name: c.name ?? c.id,
      element,
      gates: gatesOf[k],
      volume,
      projectedArea: cm2ToM2(c.projected_area_cm2),
      wall,
    };
  });

  const issues = reachability(nodes, elements, inlet, scenario);
  if (issues.length > 0) return { ok: false, issues };

  return {
    ok: true,
    network: { nodes, elements, cavities, inlet, feed: feedIndex, ...networkVolumes(elements) },
  };
}

function reachability(
  nodes: readonly NetworkNode[],
  elements: readonly NetworkElement[],
  inlet: number,
  scenario: Scenario,
): ScenarioIssue[] {
  const adjacency: number[][] = nodes.map(() => []);
  for (const e of elements) {
    if (e.to < 0) continue;
    adjacency[e.from].push(e.to);
    adjacency[e.to].push(e.from);
  }
  const seen = new Uint8Array(nodes.length);
  const stack = [inlet];
  seen[inlet] = 1;
  while (stack.length > 0) {
    const n = stack.pop()!;
    for (const m of adjacency[n]) {
      if (!seen[m]) {
        seen[m] = 1;
        stack.push(m);
      }
    }
  }
  const issues: ScenarioIssue[] = [];
  scenario.cavities.forEach((c, i) => {
    const node = nodes.findIndex((n) => n.role === "cavity" && n.id === c.id);
    if (!seen[node]) {
      issues.push({
        path: ["cavities", i, "id"],
        at: `cavities[${i}].id`,
        code: "cavity_unreachable",
        message: `No path of runners and gates leads from the feed to cavity "${c.id}"`,
      });
    }
  });
  scenario.nodes.forEach((n, i) => {
    if (!seen[i]) {
      issues.push({
        path: ["nodes", i, "id"],
        at: `nodes[${i}].id`,
        code: "node_unreachable",
        message: `Node "${n.id}" is not connected to the feed`,
      });
    }
  });
  return issues;
}
