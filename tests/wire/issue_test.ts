import assert from "node:assert/strict";
import { z } from "zod";
import { pathText, scenarioIssue, zodIssues } from "../../src/wire/issue.ts";
import { JobSubmitSchema } from "../../src/service/api_schema.ts";

Deno.test("pathText: keys joined by dots, indices in brackets, $ for the root", () => {
  assert.equal(pathText([]), "$");
  assert.equal(pathText(["gates", 2, "thickness_mm"]), "gates[2].thickness_mm");
  assert.equal(pathText([0, "id"]), "[0].id");
  assert.deepEqual(scenarioIssue(["a", 1], "c", "m"), {
    path: ["a", 1],
    at: "a[1]",
    code: "c",
    message: "m",
  });
});

Deno.test("zodIssues: plain words, absolute paths, the closest union alternative, options for the field's own words", () => {
  const submit = JobSubmitSchema.safeParse({ scenario: {}, mode: "rebuild" });
  assert.ok(!submit.success);
  const issues = zodIssues(submit.error);
  const kind = issues.find((i) => i.at === "kind");
  assert.ok(kind && /optimize/.test(kind.message) && !/^Invalid input/.test(kind.message));
  assert.ok(
    issues.some((i) => i.at === "mode" && /new_tool/.test(i.message)),
    JSON.stringify(issues),
  );

  const Shape = z.object({
    size: z.union([
      z.object({ d_mm: z.number() }).strict(),
      z.object({ w_mm: z.number(), h_mm: z.number() }),
    ]),
    injection: z.union([z.object({ a: z.number() }), z.object({ b: z.number() })]),
  }).strict();
  const bad = Shape.safeParse({ size: { w_mm: 2 }, injection: {}, extra: 1 });
  assert.ok(!bad.success);
  const mapped = zodIssues(bad.error, {
    prefix: ["tool"],
    unionWords: { injection: { code: "injection_form", message: "give a or b" } },
    unknownFieldsHint: "(see the schema)",
  });
  const byAt = Object.fromEntries(mapped.map((i) => [i.at, i]));
  assert.equal(byAt["tool.size.h_mm"]?.code, "missing", JSON.stringify(mapped));
  assert.equal(byAt["tool.injection"]?.message, "give a or b");
  assert.equal(byAt["tool"]?.message, 'unknown field "extra" (see the schema)');
});
