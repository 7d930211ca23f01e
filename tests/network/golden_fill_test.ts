import assert from "node:assert/strict";
import { goldenCases, simulateCase, snapshot } from "./_golden_cases.ts";

// A regression snapshot, not a reference: it holds the engine's own numbers at one commit
// (tests/testdata/golden_fill.json, written by _write_golden.ts) so that restructuring the
// fill simulation provably changes none of them. Correctness is checked elsewhere against
// closed forms and handbook values.
const golden: { cases: { name: string; values: (number | string)[] }[] } = JSON.parse(
  Deno.readTextFileSync(new URL("../testdata/golden_fill.json", import.meta.url)),
);
const REL = 1e-9;
const ABS = 1e-18;

for (const c of goldenCases()) {
  Deno.test(`golden fill: ${c.name} matches the snapshot to 1e-9 relative`, () => {
    const stored = golden.cases.find((g) => g.name === c.name);
    assert.ok(stored, `no snapshot for ${c.name}: run tests/network/_write_golden.ts`);
    const values = snapshot(simulateCase(c));
    assert.equal(values.length, stored.values.length, `${c.name}: number of values`);
    for (let i = 0; i < values.length; i++) {
      const expected: number | string = stored.values[i];
      const actual = values[i];
      if (typeof expected === "string") {
        assert.equal(String(actual), expected, `${c.name}: value ${i}`);
        continue;
      }
      assert.ok(
        Math.abs(actual - expected) <= ABS + REL * Math.abs(expected),
        `${c.name}: value ${i} is ${actual}, snapshot ${expected}`,
      );
    }
  });
}
