import assert from "node:assert/strict";
import { simulateScenario } from "../../src/network/simulate_scenario.ts";
import { resultJson } from "../../src/report/result_json.ts";
import { ResultSchema } from "../../src/wire/result.ts";
import { z } from "zod";

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

/** The key paths of a JSON Schema's objects, array items as `[]`. */
function schemaKeys(schema: Record<string, unknown>, path = ""): string[] {
  const props = schema.properties as Record<string, Record<string, unknown>> | undefined;
  const items = schema.items as Record<string, unknown> | undefined;
  const branches = (schema.anyOf ?? []) as Record<string, unknown>[];
  return [
    ...Object.entries(props ?? {}).flatMap((
      [k, v],
    ) => [`${path}.${k}`, ...schemaKeys(v, `${path}.${k}`)]),
    ...(items ? schemaKeys(items, `${path}[]`) : []),
    ...branches.flatMap((b) => schemaKeys(b, path)),
  ];
}

Deno.test("result JSON: its key set is the wire schema's, and holds the stable names", async () => {
  const wire = JSON.parse(
    await Deno.readTextFile(new URL("../../scenarios/family_four_housing.json", import.meta.url)),
  );
  const outcome = simulateScenario(wire);
  assert.ok(outcome.ok);
  const json = JSON.parse(JSON.stringify(resultJson(outcome.run, { history: true })));
  const actual = new Set(keys(json).map((k) => k.replace(/\[\d+\]/g, "[]")));
  const schema = z.toJSONSchema(ResultSchema, { target: "draft-2020-12" }) as Record<
    string,
    unknown
  >;
  const declared = new Set(schemaKeys(schema));
  assert.deepEqual([...actual].filter((k) => !declared.has(k)), [], "keys the schema lacks");
  assert.deepEqual([...declared].filter((k) => !actual.has(k)), [], "schema keys the result lacks");
  // The names the result JSON keeps stable (README); written out here, not taken from the code.
  for (
    const name of [
      ".format",
      ".fill_time_s",
      ".imbalance_percent",
      ".feed_pressure_peak_MPa",
      ".clamp_force_peak_kN",
      ".shot_mass_g",
      ".runner_volume_cm3",
      ".runner_mass_g",
      ".cavities[].id",
      ".cavities[].fill_time_s",
      ".cavities[].fill_percent_at_first_full",
      ".cavities[].gate_shear_rate_peak_1_s",
      ".cavities[].gate_shear_limit_1_s",
      ".cavities[].mass_g",
      ".elements[].id",
      ".elements[].kind",
      ".elements[].pressure_drop_end_MPa",
      ".elements[].wall_shear_rate_peak_1_s",
      ".elements[].volume_cm3",
      ".freeze",
      ".warnings[].code",
      ".warnings[].element",
      ".warnings[].message",
      ".cautions",
      ".diagnostics",
    ]
  ) assert.ok(declared.has(name) && actual.has(name), name);
  assert.equal(json.format, "evenfill.result/1");
});
