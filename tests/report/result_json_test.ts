import assert from "node:assert/strict";
import { simulateScenario } from "../../src/network/simulate_scenario.ts";
import { resultJson } from "../../src/report/result_json.ts";

/** Every key of a JSON value, with its path. */
function keys(value: unknown, path = ""): string[] {
  if (Array.isArray(value)) return value.flatMap((v, i) => keys(v, `${path}[${i}]`));
  if (value === null || typeof value !== "object") return [];
  return Object.entries(value).flatMap(([k, v]) => [`${path}.${k}`, ...keys(v, `${path}.${k}`)]);
}

Deno.test("result JSON: snake_case keys throughout (units such as MPa or kN may keep their capitals)", async () => {
  const wire = JSON.parse(
    await Deno.readTextFile(new URL("../../scenarios/family_four_housing.json", import.meta.url)),
  );
  const outcome = simulateScenario(wire);
  assert.ok(outcome.ok);
  const json = JSON.parse(JSON.stringify(resultJson(outcome.run, { history: true })));
  const camel = keys(json).filter((path) => /[a-z][A-Z][a-z]/.test(path.split(".").at(-1)!));
  assert.deepEqual(camel, [], "camelCase keys in evenfill.result/1");
  assert.equal(json.diagnostics.stopped_because, "all_full");
  assert.ok(json.diagnostics.network_solves > 0);
});
