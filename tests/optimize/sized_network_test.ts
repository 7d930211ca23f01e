import assert from "node:assert/strict";
import { parseScenario } from "../../src/model/parse_scenario.ts";
import type { Scenario } from "../../src/model/scenario_schema.ts";
import { buildNetwork } from "../../src/network/build_network.ts";
import { LIBRARY_MATERIAL_IDS } from "../../src/network/simulate_scenario.ts";
import { applyDesign, currentDesign, designSpace } from "../../src/optimize/design_space.ts";
import { sizedNetwork } from "../../src/optimize/sized_network.ts";
import { assertClose } from "../assert_close.ts";
import { familyLayout } from "../support/family_layout.ts";

/**
 * The optimizer's network at any sizes (`sized_network.ts`) against the other way there:
 * the sizes written into the scenario in mm and the network built from it afresh. Both
 * must give the same elements; volumes are also checked against the cylinder's πR²L.
 */

function parse(wire: unknown): Scenario {
  const parsed = parseScenario(wire, { materialIds: LIBRARY_MATERIAL_IDS });
  assert.ok(parsed.ok, JSON.stringify(!parsed.ok && parsed.issues));
  return parsed.scenario;
}

const demos = ["family_four_housing", "hot_drop_eight_caps", "two_gate_frame_and_knob"];

for (const name of demos) {
  Deno.test(`sized network: ${name} at other sizes equals a network built from the scenario`, async () => {
    const url = new URL(`../../scenarios/${name}.json`, import.meta.url);
    const space = designSpace(parse(JSON.parse(await Deno.readTextFile(url))));
    const sized = sizedNetwork(space);
    assert.ok(sized.ok);
    // Every size 17 % up, then every other one 11 % down: nothing special about either.
    const x = currentDesign(space).map((v, j) => v * (j % 2 === 0 ? 1.17 : 0.89));
    const mine = sized.sized.at(x);
    const built = buildNetwork(applyDesign(space, x));
    assert.ok(built.ok);
    const theirs = built.network;
    assert.equal(mine.elements.length, theirs.elements.length);
    mine.elements.forEach((e, i) => {
      const t = theirs.elements[i];
      assert.equal(e.id, t.id);
      // applyDesign rounds to 1 nm (1e-6 mm): the two agree to that.
      assertClose(e.volume, t.volume, { rel: 1e-6, what: `${e.id} volume` });
      assertClose(e.thickness, t.thickness, { rel: 1e-6, what: `${e.id} thickness` });
      assertClose(e.projectedArea, t.projectedArea, {
        rel: 1e-6,
        abs: 1e-15,
        what: `${e.id} projected area`,
      });
    });
    assertClose(mine.coldRunnerVolume, theirs.coldRunnerVolume, { rel: 1e-6, what: "cold" });
    assertClose(mine.feedSystemVolume, theirs.feedSystemVolume, { rel: 1e-6, what: "feed" });
    // Today's sizes give today's network exactly.
    const today = sized.sized.at(currentDesign(space));
    assert.deepEqual(today.elements, sized.sized.base.elements);
  });
}

Deno.test("sized network: a round runner's volume at a new diameter is πD²L/4 (cylinder)", () => {
  const space = designSpace(parse(familyLayout(4, { seed: 2 })));
  const sized = sizedNetwork(space);
  assert.ok(sized.ok);
  const j = space.variables.findIndex((v) => v.kind === "runner");
  assert.ok(j >= 0);
  const before = sized.sized.base.elements.find((e) => e.id === space.variables[j].element)!;
  assert.equal(before.geometry.type, "uniform");
  const length = (before.geometry as { length: number }).length;
  const runner = space.scenario.runners[space.variables[j].index];
  assert.equal(runner.shape, "round", "the generator cuts round runners");
  const d = 7.3e-3;
  const [resized] = sized.sized.elementsAt(j, d);
  assert.equal(resized.index, before.index);
  assertClose(resized.volume, (Math.PI * d * d * length) / 4, { rel: 1e-12, what: "πD²L/4" });
  assert.equal(resized.thickness, d);
  // The direction leaves the base network untouched.
  assert.notEqual(sized.sized.base.elements[before.index].volume, resized.volume);
});

Deno.test("sized network: the cold runner volume moves by exactly the resized element's change", () => {
  const space = designSpace(parse(familyLayout(6, { seed: 3 })));
  const sized = sizedNetwork(space);
  assert.ok(sized.ok);
  const x = currentDesign(space);
  const base = sized.sized.at(x);
  for (let j = 0; j < space.variables.length; j++) {
    const y = Float64Array.from(x);
    y[j] *= 1.25;
    const moved = sized.sized.at(y);
    const [element] = sized.sized.elementsAt(j, y[j]);
    const change = element.volume - base.elements[element.index].volume;
    assertClose(moved.coldRunnerVolume - base.coldRunnerVolume, change, {
      rel: 1e-9,
      abs: 1e-18,
      what: `${space.variables[j].element}: Δ cold volume`,
    });
  }
});
