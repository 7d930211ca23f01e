import assert from "node:assert/strict";
import { scenarioJsonSchema } from "../../src/model/mod.ts";

Deno.test("the committed JSON Schema equals the one generated from the zod schema", async () => {
  const committed = JSON.parse(
    await Deno.readTextFile(new URL("../../public/schema/scenario.schema.json", import.meta.url)),
  );
  assert.deepEqual(
    committed,
    scenarioJsonSchema(),
    "public/schema/scenario.schema.json is stale: run `deno task schema`",
  );
});

Deno.test("the JSON Schema names the required top-level fields", () => {
  const schema = scenarioJsonSchema() as { required?: string[]; properties?: object };
  for (const field of ["format", "name", "material", "process", "machine", "feed", "nodes"]) {
    assert.ok(schema.required?.includes(field), `required should include ${field}`);
  }
});
