import type { ScenarioWire } from "../../src/model/scenario_schema.ts";

/** A power-law test fluid (K = 7500 Pa·sⁿ, n = 0.38), invented for verification runs. */
export function powerLawFluid(K = 7500, n = 0.38) {
  return {
    id: "verification-power-law",
    name: "power-law verification fluid",
    source: "invented for closed-form checks",
    viscosity: { model: "power_law" as const, K_Pa_sn: K, n },
    melt_density_kg_m3: 1000,
    solid_density_kg_m3: 1100,
    specific_heat_J_kgK: 2000,
    conductivity_W_mK: 0.2,
    no_flow_temperature_C: 180,
    ejection_temperature_C: 120,
    max_shear_rate_1_s: 50000,
  };
}

/** One hot drop or sprue → one runner → one gate → one cavity; isothermal, switchover 100 %. */
export function singleLine(options: {
  feed: "sprue" | "hot_drop";
  gate: "pin" | "edge";
  cavity: "strip" | "radial";
  flowRate?: number;
  K?: number;
  n?: number;
}): ScenarioWire {
  return {
    format: "evenfill.scenario/1",
    name: "single line verification",
    material: powerLawFluid(options.K, options.n),
    process: {
      melt_temperature_C: 230,
      mold_temperature_C: 40,
      injection: { flow_rate_cm3_s: options.flowRate ?? 20 },
      switchover_percent: 100,
      thermal: "isothermal",
    },
    machine: { max_injection_pressure_MPa: 250, clamp_force_kN: 2000 },
    feed: options.feed === "sprue"
      ? { kind: "sprue", node: "S", length_mm: 60, entry_diameter_mm: 4, exit_diameter_mm: 7 }
      : { kind: "hot_drop", node: "S", length_mm: 40, diameter_mm: 5 },
    nodes: [{ id: "S", x_mm: 0, y_mm: 0 }, { id: "J", x_mm: 50, y_mm: 0 }],
    runners: [{ id: "R1", from: "S", to: "J", diameter_mm: 6 }],
    gates: [
      options.gate === "pin"
        ? { id: "G1", from: "J", cavity: "C1", type: "pin", diameter_mm: 1.2, land_mm: 1 }
        : {
          id: "G1",
          from: "J",
          cavity: "C1",
          type: "edge",
          width_mm: 4,
          thickness_mm: 1.5,
          land_mm: 1,
        },
    ],
    cavities: [
      options.cavity === "strip"
        ? {
          id: "C1",
          volume_cm3: 20,
          projected_area_cm2: 100,
          wall_mm: 2,
          flow_length_mm: 100,
          fill_pattern: "strip",
        }
        : {
          id: "C1",
          volume_cm3: 20,
          projected_area_cm2: 100,
          wall_mm: 2,
          fill_pattern: "radial",
          gate_radius_mm: 1,
        },
    ],
  };
}

/** Hot drop → J → runners R1 (40 mm) and R2 (120 mm) → pin gates → strip cavities of 20 and 30 cm³. */
export function unequalBranches(thermal: "isothermal" | "full"): ScenarioWire {
  const cavity = (id: string, volume: number) => ({
    id,
    volume_cm3: volume,
    projected_area_cm2: 100,
    wall_mm: 2,
    flow_length_mm: 100,
    fill_pattern: "strip" as const,
  });
  const adjustable = { adjustable: true, min_diameter_mm: 1, max_diameter_mm: 12 };
  return {
    format: "evenfill.scenario/1",
    name: "unequal branches for the derivative check",
    material: thermal === "isothermal" ? powerLawFluid(7500, 0.38) : "abs-general",
    process: {
      melt_temperature_C: 240,
      mold_temperature_C: 50,
      injection: { flow_rate_cm3_s: 40 },
      switchover_percent: 100,
      thermal,
    },
    machine: { max_injection_pressure_MPa: 250, clamp_force_kN: 2000 },
    feed: { kind: "hot_drop", node: "J", length_mm: 30, diameter_mm: 6 },
    nodes: [
      { id: "J", x_mm: 0, y_mm: 0 },
      { id: "A", x_mm: -40, y_mm: 0 },
      { id: "B", x_mm: 120, y_mm: 0 },
    ],
    runners: [
      { id: "R1", from: "J", to: "A", diameter_mm: 5, ...adjustable },
      { id: "R2", from: "J", to: "B", diameter_mm: 5, ...adjustable },
    ],
    gates: [
      {
        id: "G1",
        from: "A",
        cavity: "C1",
        type: "pin",
        diameter_mm: 1.4,
        land_mm: 1,
        ...adjustable,
      },
      {
        id: "G2",
        from: "B",
        cavity: "C2",
        type: "pin",
        diameter_mm: 1.4,
        land_mm: 1,
        ...adjustable,
      },
    ],
    cavities: [cavity("C1", 20), cavity("C2", 30)],
  };
}
