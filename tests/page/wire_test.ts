import assert from "node:assert/strict";
import { MODES, SLOPE_SOURCES } from "../../src/wire/mod.ts";

// The page takes its wire types from src/wire/ as types only: the bundle must hold none of
// the schema library. zod's code carries its error class and issue codes by these names.
Deno.test("public/app.js holds no zod code (the page imports wire types only)", async () => {
  const bundle = await Deno.readTextFile(new URL("../../public/app.js", import.meta.url));
  for (const mark of ["ZodError", "invalid_type", "safeParse", "_zod"]) {
    assert.ok(!bundle.includes(mark), `app.js contains ${mark}`);
  }
  const wire = await Deno.readTextFile(new URL("../../src/page/wire.ts", import.meta.url));
  assert.doesNotMatch(wire, /^import (?!type)/m, "src/page/wire.ts imports types only");
  assert.doesNotMatch(wire, /^export \{/m, "and re-exports types only");
});

/** The option values of the `<select id="…">` in public/index.html, in order. */
async function options(id: string): Promise<string[]> {
  const html = await Deno.readTextFile(new URL("../../public/index.html", import.meta.url));
  const start = html.indexOf(`<select id="${id}">`);
  assert.ok(start >= 0, `#${id} in index.html`);
  const select = html.slice(start, html.indexOf("</select>", start));
  return [...select.matchAll(/value="([^"]*)"/g)].map((m) => m[1]);
}

// The page spells the modes and slope sources out in its form (no value import of the wire
// enums: they are read off zod schemas); these must be the wire's, in its order.
Deno.test("the page's mode and slope choices are the wire's MODES and SLOPE_SOURCES", async () => {
  assert.deepEqual(await options("form-mode"), [...MODES]);
  assert.deepEqual(await options("run-slopes"), [...SLOPE_SOURCES]);
});
