/**
 * A gate freezing shut during the fill: the instant it shuts, and what the fill does after,
 * must not depend on the step length. Self-convergence, the usual verification of a
 * discretised model (Roache, *Verification and Validation in Computational Science and
 * Engineering*, 1998, ch. 5): the default step tolerance against a sixteenth of it. The case
 * is the four-part demo run slowly (5 cm³/s), where the bezel's tunnel gate G3 freezes off
 * early and its cavity stays short.
 *
 * Measured: G3 shut at 2.037 s (default) and 2.052 s (a sixteenth); peak 81.9 and 81.8 MPa.
 * Before the frozen layer had its own step control: 2.342 s and 85.1 MPa at the default,
 * and at the old default of an earlier commit no freeze at all and 509 MPa.
 */
import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import { parseScenarioText } from "../../src/model/parse_scenario.ts";
import { LIBRARY_MATERIAL_IDS, runScenario } from "../../src/network/simulate_scenario.ts";

function slowFourPart() {
  const text = Deno.readTextFileSync(
    new URL("../../scenarios/family_four_housing.json", import.meta.url),
  );
  const wire = JSON.parse(text);
  wire.process.injection = { flow_rate_cm3_s: 5 };
  const parsed = parseScenarioText(JSON.stringify(wire), { materialIds: LIBRARY_MATERIAL_IDS });
  assert.ok(parsed.ok, JSON.stringify(!parsed.ok && parsed.issues));
  return parsed.scenario;
}

Deno.test("a gate freezing shut: when, and the peak pressure after, agree at the default step tolerance and a sixteenth of it", () => {
  const scenario = slowFourPart();
  const fill = (tolerance: number) => {
    const outcome = runScenario(scenario, { flowChangeTolerance: tolerance });
    assert.ok(outcome.ok, JSON.stringify(!outcome.ok && outcome));
    return outcome.run.fill;
  };
  const coarse = fill(0.02);
  const fine = fill(0.02 / 16);
  const shut = (f: typeof coarse) => f.elements.filter((e) => e.frozenShut).map((e) => e.id).sort();
  assert.deepEqual(shut(coarse), shut(fine));
  assert.ok(shut(fine).includes("G3"), `shut: ${shut(fine).join(", ")}`);
  const at = (f: typeof coarse) => f.elements.find((e) => e.id === "G3")!.frozenShutAt;
  assertClose(at(coarse), at(fine), { rel: 0.03, what: "G3 shut at" });
  assertClose(coarse.feedPressurePeak, fine.feedPressurePeak, { rel: 0.02, what: "peak" });
  assert.equal(coarse.diagnostics.stoppedBecause, "short_shot");
});
