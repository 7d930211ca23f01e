import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import { thermalDiffusivity, toMaterial } from "../../src/materials/material.ts";
import { MaterialSchema, type MaterialWire } from "../../src/model/material_schema.ts";

const wire: MaterialWire = {
  id: "test-pp",
  name: "test resin",
  source: "invented for this test",
  viscosity: {
    model: "cross_wlf",
    n: 0.3,
    tau_star_Pa: 3e4,
    D1_Pa_s: 1e14,
    D2_K: 263.15,
    A1: 30,
    A2_K: 51.6,
  },
  melt_density_kg_m3: 750,
  solid_density_kg_m3: 900,
  specific_heat_J_kgK: 2700,
  conductivity_W_mK: 0.17,
  no_flow_temperature_C: 130,
  ejection_temperature_C: 95.5,
  melt_temperature_range_C: [200, 260],
  max_shear_rate_1_s: 1e5,
};

Deno.test("toMaterial converts °C to K once and applies schema defaults", () => {
  // 0 °C = 273.15 K exactly (SI Brochure, 9th ed., §2.3.1).
  const m = toMaterial(wire);
  assertClose(m.noFlowTemperature, 403.15, { abs: 1e-12, what: "no-flow T" });
  assertClose(m.ejectionTemperature, 368.65, { abs: 1e-12, what: "ejection T" });
  assert.deepEqual(m.meltTemperatureRange, [473.15, 533.15]);
  assert.equal(m.moldTemperatureRange, undefined);
  assert.equal(m.generic, false);
  assert.equal(m.maxShearRate, 1e5);
  assert.ok(m.viscosity.model === "cross_wlf");
  assert.equal(m.viscosity.d3, 0);
  assert.equal(m.viscosity.convention, "A2_shifts_with_pressure");
  assert.equal(m.viscosity.d1, 1e14);
  assert.equal(m.viscosity.tauStar, 3e4);
});

Deno.test("toMaterial gives the same result before and after MaterialSchema.parse", () => {
  assert.deepEqual(toMaterial(MaterialSchema.parse(wire)), toMaterial(wire));
});

Deno.test("thermal diffusivity = k/(ρ_melt·cp), by hand", () => {
  // By hand: 0.17 / (750 · 2700) = 0.17 / 2 025 000 = 8.39506e−8 m²/s (definition; Carslaw &
  // Jaeger, Conduction of Heat in Solids, 2nd ed., §1.6).
  assertClose(toMaterial(wire).thermalDiffusivity, 8.39506e-8, { rel: 1e-5, what: "α" });
  assertClose(thermalDiffusivity(0.2, { density: 1000, specificHeat: 2000 }), 1e-7, {
    rel: 1e-15,
    what: "α = 0.2/(1000·2000)",
  });
  assert.throws(() => thermalDiffusivity(0, { density: 1000, specificHeat: 2000 }), RangeError);
});

Deno.test("power-law wire maps to the SI power-law model", () => {
  const m = toMaterial({ ...wire, viscosity: { model: "power_law", K_Pa_sn: 5000, n: 0.35 } });
  assert.deepEqual(m.viscosity, { model: "power_law", consistency: 5000, index: 0.35 });
});
