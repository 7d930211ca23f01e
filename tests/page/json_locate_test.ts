import assert from "node:assert/strict";
import { lineColumn, locateJson, pathKey, spanForPath } from "../../src/page/json_locate.ts";
import { checkJsonSyntax, placeIssues } from "../../src/page/editor_issues.ts";

const text = `{
  "name": "t",
  "gates": [
    { "id": "G1", "thickness_mm": 1.4 },
    { "id": "G2", "thickness_mm": -1 }
  ],
  "goals": {}
}`;

Deno.test("locateJson reads what JSON.parse reads", () => {
  const located = locateJson(text);
  assert.ok(located.ok);
  assert.deepEqual(located.value, JSON.parse(text));
  const samples = [
    "[]",
    "{}",
    '"a\\u00e9\\n"',
    "-0.5e-3",
    '[1, true, false, null, {"a": [2]}]',
    '  {"x" : 1 }  ',
  ];
  for (const s of samples) {
    const r = locateJson(s);
    assert.ok(r.ok, s);
    assert.deepEqual(r.value, JSON.parse(s), s);
  }
});

Deno.test("a field's span starts at its key, on its line", () => {
  const located = locateJson(text);
  assert.ok(located.ok);
  const span = spanForPath(located.spans, ["gates", 1, "thickness_mm"]);
  assert.equal(span.line, 5);
  assert.equal(text.slice(span.start, span.end), '"thickness_mm": -1');
});

Deno.test("a missing field points at its parent; the root at line 1", () => {
  const located = locateJson(text);
  assert.ok(located.ok);
  const span = spanForPath(located.spans, ["goals", "mode"]);
  assert.equal(span.line, 7);
  assert.equal(spanForPath(located.spans, []).line, 1);
  assert.equal(spanForPath(located.spans, ["nodes", 3, "x_mm"]).line, 1);
});

Deno.test("syntax errors carry their line and column", () => {
  const bad = text.replace('"thickness_mm": 1.4 }', '"thickness_mm": 1.4, }');
  const r = locateJson(bad);
  assert.equal(r.ok, false);
  if (r.ok) return;
  assert.equal(r.span.line, 4);
  assert.match(r.message, /quoted field name/);
  const missingComma = locateJson('{\n  "a": 1\n  "b": 2\n}');
  assert.equal(missingComma.ok, false);
  if (!missingComma.ok) {
    assert.equal(missingComma.span.line, 3);
    assert.equal(missingComma.span.column, 3);
  }
  for (const s of ["", "{", '{"a": }', "[1 2]", "01", '"open', "{} x", "nul"]) {
    const res = locateJson(s);
    assert.equal(res.ok, false, s);
    assert.throws(() => JSON.parse(s));
  }
});

Deno.test("checkJsonSyntax gives one invalid_json issue at the error", () => {
  const check = checkJsonSyntax('{\n  "name": "x",\n  "nodes": [\n}');
  assert.equal(check.ok, false);
  if (check.ok) return;
  assert.equal(check.issues.length, 1);
  assert.equal(check.issues[0].code, "invalid_json");
  assert.equal(check.issues[0].span.line, 4);
});

Deno.test("service issues land on their fields, in text order", () => {
  const placed = placeIssues(text, [
    { at: "goals.mode", path: ["goals", "mode"], code: "x", message: "m" },
    {
      at: "gates[1].thickness_mm",
      path: ["gates", 1, "thickness_mm"],
      code: "too_small",
      message: "gate thickness must be > 0 mm",
    },
  ]);
  assert.deepEqual(placed.map((p) => p.span.line), [5, 7]);
});

Deno.test("pathKey and lineColumn", () => {
  assert.equal(pathKey(["gates", 2, "thickness_mm"]), "gates[2].thickness_mm");
  assert.equal(pathKey([]), "$");
  assert.deepEqual(lineColumn("ab\ncd", 4), { line: 2, column: 2 });
  // Every offset of a text with empty lines and a trailing newline, against counting by hand:
  // the line is 1 + the newlines before the offset, the column 1 + the distance past the last.
  const text = '{\n\n  "a": 1,\n"b": [2,\n3]\n}\n';
  for (let offset = 0; offset <= text.length + 2; offset++) {
    const before = text.slice(0, offset);
    const line = before.split("\n").length;
    const column = before.length - (before.lastIndexOf("\n") + 1) + 1;
    assert.deepEqual(lineColumn(text, offset), { line, column }, `offset ${offset}`);
  }
});
