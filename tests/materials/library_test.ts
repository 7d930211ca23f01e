import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import { materialById, materialIds, MATERIALS } from "../../src/materials/library.ts";
import { toMaterial } from "../../src/materials/material.ts";
import { viscosityAt } from "../../src/materials/viscosity.ts";
import { MaterialSchema } from "../../src/model/material_schema.ts";

const REQUIRED = [
  "pbt-unfilled",
  "pp-homo",
  "abs-general",
  "pc-general",
  "pa66-unfilled",
  "pom-copolymer",
  "hdpe-injection",
];

// Viscosity at the middle of the melt window and 1000 1/s, Pa·s: the usual band for each family
// (from memory / common practice, no single source; most resins 100–600 Pa·s, PA66 and PBT
// lower, PC higher).
const PLAUSIBLE_AT_1000: Record<string, [number, number]> = {
  "pbt-unfilled": [60, 400],
  "pp-homo": [80, 400],
  "abs-general": [100, 600],
  "pc-general": [200, 900],
  "pa66-unfilled": [50, 300],
  "pom-copolymer": [100, 500],
  "hdpe-injection": [100, 600],
};

Deno.test("library holds the required resins, ids unique, lookup works", () => {
  const ids = materialIds();
  assert.equal(new Set(ids).size, ids.length);
  for (const id of REQUIRED) {
    assert.ok(ids.includes(id), `missing ${id}`);
    assert.equal(materialById(id)?.id, id);
  }
  assert.equal(materialById("no-such-resin"), undefined);
});

Deno.test("every library entry passes MaterialSchema.parse and is marked generic", () => {
  for (const m of MATERIALS) {
    const parsed = MaterialSchema.safeParse(m);
    assert.ok(parsed.success, `${m.id}: ${parsed.success ? "" : parsed.error.message}`);
    assert.equal(m.generic, true);
    assert.equal(m.viscosity.model, "cross_wlf");
    assert.match(m.source, /generic/i);
    assert.match(m.source, /ISO 11443/);
    assert.match(m.source, /supplier/);
  }
});

Deno.test("library viscosity at mid melt window and 1000 1/s is in the usual band", () => {
  for (const w of MATERIALS) {
    const m = toMaterial(w);
    const range = m.meltTemperatureRange;
    assert.ok(range, `${m.id} has a melt window`);
    const eta = viscosityAt(m, 1000, { temperature: (range[0] + range[1]) / 2 });
    const [lo, hi] = PLAUSIBLE_AT_1000[m.id];
    assert.ok(eta >= lo && eta <= hi, `${m.id}: η(1000 1/s) = ${eta} Pa·s not in [${lo}, ${hi}]`);
  }
});

Deno.test("library thermal and processing data are physically ordered", () => {
  // Common practice, no source: ejection < no-flow < melt window; mold window below ejection;
  // solid denser than melt; polymer melt diffusivity ≈ 0.5–2 × 10⁻⁷ m²/s (from memory).
  for (const w of MATERIALS) {
    const m = toMaterial(w);
    assert.ok(m.ejectionTemperature < m.noFlowTemperature, `${m.id}: ejection < no-flow`);
    assert.ok(m.noFlowTemperature < m.meltTemperatureRange![0], `${m.id}: no-flow < melt`);
    assert.ok(m.moldTemperatureRange![1] < m.ejectionTemperature, `${m.id}: mold < ejection`);
    assert.ok(m.solidDensity > m.meltDensity, `${m.id}: solid denser than melt`);
    assertClose(m.thermalDiffusivity, 1.25e-7, { abs: 0.75e-7, what: `${m.id} diffusivity` });
    assert.ok(m.viscosity.model === "cross_wlf");
    // The no-flow temperature must lie above T*, or the library melt could not flow there.
    assert.ok(m.viscosity.d2 < m.noFlowTemperature, `${m.id}: D2 < no-flow`);
  }
});

Deno.test("library viscosity falls with temperature and rises with pressure", () => {
  // Common practice / WLF form (Williams, Landel & Ferry 1955): η0 decreases with T; T* = D2 + D3·p
  // rises with p, so η rises with p.
  for (const w of MATERIALS) {
    const m = toMaterial(w);
    const [lo, hi] = m.meltTemperatureRange!;
    const cold = viscosityAt(m, 1000, { temperature: lo });
    const hot = viscosityAt(m, 1000, { temperature: hi });
    const pressed = viscosityAt(m, 1000, { temperature: hi, pressure: 1e8 });
    assert.ok(cold > hot, `${m.id}: η falls with T`);
    assert.ok(pressed > hot, `${m.id}: η rises with p`);
  }
});
