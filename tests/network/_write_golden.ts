/**
 * Rewrites tests/testdata/golden_fill.json from the engine as it is now. Run it only for a
 * deliberate change of the physics, say why in the commit, and never while restructuring:
 *   deno run -A tests/network/_write_golden.ts
 */
import { goldenCases, simulateCase, snapshot } from "./_golden_cases.ts";

const cases = goldenCases().map((c) => ({ name: c.name, values: snapshot(simulateCase(c)) }));
const commit = new TextDecoder().decode(
  new Deno.Command("git", { args: ["rev-parse", "--short", "HEAD"] }).outputSync().stdout,
).trim();
const text = JSON.stringify({
  note:
    "Regression snapshot of the fill engine (not a reference): see tests/network/_golden_cases.ts",
  written_at_commit: commit,
  cases: cases.map((c) => ({
    name: c.name,
    values: c.values.map((v) => (Number.isFinite(v) ? v : String(v))),
  })),
});
Deno.writeTextFileSync(new URL("../testdata/golden_fill.json", import.meta.url), text + "\n");
console.log(`${cases.length} cases, ${cases.reduce((s, c) => s + c.values.length, 0)} numbers`);
