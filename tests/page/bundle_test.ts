import assert from "node:assert/strict";

// public/app.js is committed (the service serves files, it builds nothing);
// this fails when the page's sources changed without `deno task page`.
Deno.test("public/app.js is the bundle of src/page/main.ts (run `deno task page`)", async () => {
  const root = new URL("../../", import.meta.url);
  const out = await Deno.makeTempFile({ suffix: ".js" });
  try {
    const run = await new Deno.Command(Deno.execPath(), {
      args: [
        "bundle",
        "--quiet",
        "--platform=browser",
        "--format=iife",
        "-o",
        out,
        "src/page/main.ts",
      ],
      cwd: root,
      stdout: "piped",
      stderr: "piped",
    }).output();
    assert.equal(run.code, 0, new TextDecoder().decode(run.stderr));
    const fresh = await Deno.readTextFile(out);
    const committed = await Deno.readTextFile(new URL("public/app.js", root));
    assert.ok(
      fresh === committed,
      "public/app.js is stale: run `deno task page` and commit it",
    );
  } finally {
    await Deno.remove(out);
  }
});
