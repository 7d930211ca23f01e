/**
 * The page's files as the service serves them (`service/static_files.ts`): a weak ETag, 304 on
 * a matching If-None-Match (RFC 9110, 13.1.2 and 15.4.5), gzip for text when the client
 * accepts it (RFC 9110, 12.5.3), and the favicon.
 */
import assert from "node:assert/strict";
import { gunzipSync } from "node:zlib";
import { acceptsGzip, etagMatches, serveStatic } from "../../src/service/static_files.ts";

const publicDir = new URL("../../public/", import.meta.url).pathname;

Deno.test("static: ETag on every file; If-None-Match with it answers 304 without a body", async () => {
  const first = await serveStatic(publicDir, "/style.css", "GET");
  assert.ok(first);
  await first.body?.cancel();
  const etag = first.headers.get("etag");
  assert.match(etag ?? "", /^W\/"[0-9a-f]+-[0-9a-f]+"$/);
  const again = await serveStatic(
    publicDir,
    "/style.css",
    "GET",
    new Headers({ "if-none-match": `"other", ${etag}` }),
  );
  assert.equal(again?.status, 304);
  assert.equal(await again!.text(), "");
  assert.equal(again!.headers.get("etag"), etag);
  const changed = await serveStatic(
    publicDir,
    "/style.css",
    "GET",
    new Headers({ "if-none-match": `W/"0-0"` }),
  );
  assert.equal(changed?.status, 200);
  await changed!.body?.cancel();
});

Deno.test("static: text goes gzip to a client that accepts it, and decompresses to the file", async () => {
  const plain = await Deno.readFile(`${publicDir}app.js`);
  const zipped = await serveStatic(
    publicDir,
    "/app.js",
    "GET",
    new Headers({ "accept-encoding": "br;q=1, gzip;q=0.8" }),
  );
  assert.equal(zipped?.headers.get("content-encoding"), "gzip");
  assert.equal(zipped?.headers.get("vary"), "accept-encoding");
  assert.equal(zipped?.headers.get("content-length"), null);
  const bytes = new Uint8Array(await zipped!.arrayBuffer());
  assert.ok(bytes.length < plain.length / 2, `compressed ${bytes.length} of ${plain.length}`);
  assert.deepEqual(new Uint8Array(gunzipSync(bytes)), plain);
  const refused = await serveStatic(
    publicDir,
    "/app.js",
    "GET",
    new Headers({ "accept-encoding": "gzip;q=0" }),
  );
  assert.equal(refused?.headers.get("content-encoding"), null);
  assert.equal(refused?.headers.get("content-length"), String(plain.length));
  await refused!.body?.cancel();
});

Deno.test("static: the favicon is served as SVG and the page links it", async () => {
  const icon = await serveStatic(publicDir, "/favicon.svg", "GET");
  assert.equal(icon?.headers.get("content-type"), "image/svg+xml");
  assert.match(await icon!.text(), /^<svg /);
  const html = await Deno.readTextFile(`${publicDir}index.html`);
  assert.match(html, /<link rel="icon" href="\/favicon.svg"/);
});

Deno.test("static: header parsing (weak comparison, q=0 refuses)", () => {
  assert.ok(etagMatches('W/"a-1"', 'W/"a-1"'));
  assert.ok(etagMatches('"a-1"', 'W/"a-1"'));
  assert.ok(etagMatches("*", 'W/"a-1"'));
  assert.ok(!etagMatches('"a-2"', 'W/"a-1"'));
  assert.ok(!etagMatches(null, 'W/"a-1"'));
  assert.ok(acceptsGzip("gzip, deflate"));
  assert.ok(acceptsGzip("*"));
  assert.ok(!acceptsGzip("br"));
  assert.ok(!acceptsGzip("gzip;q=0"));
  assert.ok(!acceptsGzip(null));
});
