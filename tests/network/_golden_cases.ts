/**
 * The cases of the fill regression snapshot (`golden_fill_test.ts`): the demos, generated
 * families over several seeds and both gate kinds, isothermal closed-form lines, freeze-off
 * short shots and tangent runs. A snapshot is what the engine computed at a commit, kept to
 * prove a restructuring left every number in place; it is never a reference for correctness
 * (the closed-form and handbook tests are).
 */
import { familyLayout } from "../support/family_layout.ts";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import type { ScenarioWire } from "../../src/model/scenario_schema.ts";
import { buildNetwork } from "../../src/network/build_network.ts";
import type { FillResult } from "../../src/network/fill_result.ts";
import type { NetworkElement } from "../../src/network/feed_network.ts";
import { LIBRARY_MATERIAL_IDS, runScenario } from "../../src/network/simulate_scenario.ts";
import { singleLine, unequalBranches } from "./_scenarios.ts";

export interface GoldenCase {
  name: string;
  wire: ScenarioWire;
  /** Carry the tangent along a 2 % change of each of these runner or gate ids. */
  tangentOf?: string[];
}

function demo(name: string): ScenarioWire {
  return JSON.parse(
    Deno.readTextFileSync(new URL(`../../scenarios/${name}`, import.meta.url)),
  );
}

function withRate(wire: ScenarioWire, rate: number): ScenarioWire {
  const copy = structuredClone(wire);
  copy.process.injection = { flow_rate_cm3_s: rate };
  return copy;
}

/** Every case, in a fixed order. */
export function goldenCases(): GoldenCase[] {
  const cases: GoldenCase[] = [
    { name: "demo four-part", wire: demo("family_four_housing.json") },
    { name: "demo eight caps", wire: demo("hot_drop_eight_caps.json") },
    { name: "demo two-gate", wire: demo("two_gate_frame_and_knob.json") },
    {
      name: "two-gate at 2 cm3/s (gates freeze)",
      wire: withRate(demo("two_gate_frame_and_knob.json"), 2),
    },
    {
      name: "four-part at 5 cm3/s (short shot)",
      wire: withRate(demo("family_four_housing.json"), 5),
    },
    {
      name: "line sprue pin strip",
      wire: singleLine({ feed: "sprue", gate: "pin", cavity: "strip" }),
    },
    {
      name: "line hot drop edge radial",
      wire: singleLine({ feed: "hot_drop", gate: "edge", cavity: "radial" }),
    },
    {
      name: "unequal isothermal + tangent",
      wire: unequalBranches("isothermal"),
      tangentOf: ["R1", "R2", "G1", "G2"],
    },
    { name: "unequal thermal + tangent", wire: unequalBranches("full"), tangentOf: ["R1", "G2"] },
  ];
  for (const count of [4, 6, 8, 16]) {
    for (const seed of [1, 2]) {
      for (const gate of ["tunnel", "edge"] as const) {
        cases.push({
          name: `family ${count} seed ${seed} ${gate}`,
          wire: familyLayout(count, { seed, gate }),
        });
      }
    }
  }
  const tangentFamily = familyLayout(8, { seed: 3 });
  cases.push({
    name: "family 8 seed 3 + tangent",
    wire: tangentFamily,
    tangentOf: [
      ...tangentFamily.runners!.map((r) => r.id),
      ...tangentFamily.gates.map((g) => g.id),
    ],
  });
  return cases;
}

function scaled(wire: ScenarioWire, id: string): ScenarioWire {
  const copy = structuredClone(wire);
  const runner = copy.runners?.find((r) => r.id === id);
  if (runner) {
    runner.diameter_mm *= 1.02;
    return copy;
  }
  const gate = copy.gates.find((g) => g.id === id);
  if (!gate) throw new RangeError(`no runner or gate ${id}`);
  if (gate.type === "edge") gate.thickness_mm *= 1.02;
  else gate.diameter_mm *= 1.02;
  return copy;
}

/** Simulate a case (with its tangent directions, if any). */
export function simulateCase(c: GoldenCase): FillResult {
  const parse = (wire: ScenarioWire) => {
    const parsed = parseScenario(wire, { materialIds: LIBRARY_MATERIAL_IDS });
    if (!parsed.ok) throw new RangeError(`${c.name}: ${JSON.stringify(parsed.issues)}`);
    return parsed.scenario;
  };
  const scenario = parse(c.wire);
  let directions: NetworkElement[][] | undefined;
  if (c.tangentOf) {
    const base = buildNetwork(scenario);
    if (!base.ok) throw new RangeError(`${c.name}: network`);
    directions = c.tangentOf.map((id) => {
      const built = buildNetwork(parse(scaled(c.wire, id)));
      if (!built.ok) throw new RangeError(`${c.name}: network at ${id}`);
      const k = base.network.elements.findIndex((e) => e.id === id);
      return [built.network.elements[k]];
    });
  }
  const outcome = runScenario(scenario, directions ? { tangent: { directions } } : {});
  if (!outcome.ok) throw new RangeError(`${c.name}: ${JSON.stringify(outcome)}`);
  return outcome.run.fill;
}

/**
 * Below these fractions of the feed pressure peak and of the injection rate, a pressure drop
 * or a flow is rounding noise (a dead end's drop, a stagnant branch's flow: 1e-15 of the scale
 * and its sign arbitrary) and is kept as 0, so that the snapshot holds results, not noise.
 */
const NOISE_PRESSURE = 1e-12;
const NOISE_FLOW = 1e-12;

/** Every number of a fill result, flattened in a fixed order (ids and texts left out). */
export function snapshot(fill: FillResult): number[] {
  const pressure = (p: number) =>
    Math.abs(p) < NOISE_PRESSURE * Math.abs(fill.feedPressurePeak) ? 0 : p;
  const flow = (q: number) => Math.abs(q) < NOISE_FLOW * fill.injectionRate ? 0 : q;
  const out: number[] = [
    fill.injectionRate,
    fill.switchoverTime,
    fill.fillTime,
    fill.imbalancePercent,
    fill.feedPressurePeak,
    fill.feedPressureAtSwitchover,
    fill.clampForcePeak,
    fill.history.length,
    fill.diagnostics.steps,
    fill.diagnostics.rejectedSteps,
    fill.diagnostics.hydraulicSolves,
    fill.diagnostics.events,
  ];
  for (const h of fill.history) {
    out.push(
      h.time,
      h.injectedVolume,
      h.filledVolume,
      h.feedPressure,
      h.clampForce,
      ...h.cavityFill,
    );
  }
  for (const e of fill.elements) {
    out.push(
      pressure(e.pressureDropAtSwitchover),
      pressure(e.pressureDropAtFirstFull),
      flow(e.flowAtSwitchover),
      e.wallShearRatePeak,
      e.wallShearRatePeakBeforeFirstFull,
      e.apparentShearRatePeak,
      e.volume,
      e.fullTime,
      e.temperatureAtSwitchover,
      e.frozenLayerAtSwitchover,
      e.frozenShut ? 1 : 0,
    );
  }
  for (const c of fill.cavities) {
    out.push(
      c.fillTime,
      c.fillAtFirstFull,
      c.fillAtSwitchover,
      c.gateShearRatePeak,
      c.gateShearRatePeakBeforeFirstFull,
      pressure(c.gatePressureDrop),
      c.inletPressureAtSwitchover,
    );
  }
  for (const p of fill.paths) {
    out.push(...p.pressureDrops.map(pressure), ...p.pressureDropsAtFirstFull.map(pressure));
  }
  if (fill.tangent) {
    out.push(fill.tangent.directions, fill.tangent.samples);
    for (const v of fill.tangent.cavityVolume) out.push(...v);
    for (const v of fill.tangent.feedPressure) out.push(...v);
    if (fill.tangent.firstFill) out.push(...fill.tangent.firstFill);
  }
  return out;
}
