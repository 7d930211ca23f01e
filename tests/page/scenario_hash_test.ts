import assert from "node:assert/strict";
import { canonicalScenario, scenarioHash } from "../../src/page/scenario_hash.ts";

const text = await Deno.readTextFile(
  new URL("../../scenarios/family_four_housing.json", import.meta.url),
);

Deno.test("scenario check code: layout does not change it, a value does", () => {
  const tidy = JSON.stringify(JSON.parse(text), null, 2) + "\n";
  const squeezed = JSON.stringify(JSON.parse(text));
  assert.equal(scenarioHash(tidy), scenarioHash(text));
  assert.equal(scenarioHash(squeezed), scenarioHash(text));
  assert.match(scenarioHash(text), /^[0-9a-f]{16}$/);
  const edited = text.replace('"melt_temperature_C": 250', '"melt_temperature_C": 251');
  assert.notEqual(edited, text, "the demo has the edited value");
  assert.notEqual(scenarioHash(edited), scenarioHash(text));
});

Deno.test("scenario check code: a text that is not JSON is hashed as it stands", () => {
  assert.equal(canonicalScenario('{"a": '), '{"a": ');
  assert.notEqual(scenarioHash('{"a": '), scenarioHash('{"a":  '));
});

// FNV-1a 32-bit of the empty string is its offset basis 0x811c9dc5 and of "a" 0xe40c292c
// (reference values of the FNV authors' test suite, isthe.com/chongo/tech/comp/fnv).
Deno.test("scenario check code: the first half is FNV-1a 32-bit", () => {
  assert.equal(scenarioHash("").slice(0, 8), "811c9dc5");
  assert.equal(scenarioHash("a").slice(0, 8), "e40c292c");
});
