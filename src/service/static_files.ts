const CONTENT_TYPES: Record<string, string> = {
  ".html": "text/html; charset=utf-8",
  ".js": "text/javascript; charset=utf-8",
  ".mjs": "text/javascript; charset=utf-8",
  ".css": "text/css; charset=utf-8",
  ".json": "application/json; charset=utf-8",
  ".svg": "image/svg+xml",
  ".png": "image/png",
  ".ico": "image/x-icon",
  ".txt": "text/plain; charset=utf-8",
  ".map": "application/json; charset=utf-8",
  ".woff2": "font/woff2",
};

/** Content type of a file name by its extension (octet-stream when unknown). */
export function contentTypeOf(name: string): string {
  const dot = name.lastIndexOf(".");
  return (dot >= 0 && CONTENT_TYPES[name.slice(dot).toLowerCase()]) || "application/octet-stream";
}

/** Content types worth compressing (text); images and fonts are compressed already. */
function compressible(type: string): boolean {
  return /^(text\/|application\/json|image\/svg\+xml)/.test(type);
}

/** True when `If-None-Match` names `etag` (or is `*`); weak comparison (RFC 9110, 13.1.2). */
export function etagMatches(ifNoneMatch: string | null, etag: string): boolean {
  if (!ifNoneMatch) return false;
  const bare = (t: string) => t.trim().replace(/^W\//, "");
  return ifNoneMatch.split(",").some((t) => t.trim() === "*" || bare(t) === bare(etag));
}

/** True when the client accepts gzip (`Accept-Encoding`, a q of 0 refuses it). */
export function acceptsGzip(acceptEncoding: string | null): boolean {
  return (acceptEncoding ?? "").split(",").some((part) => {
    const [coding, ...params] = part.trim().toLowerCase().split(";");
    if (coding.trim() !== "gzip" && coding.trim() !== "*") return false;
    const q = params.map((p) => p.trim()).find((p) => p.startsWith("q="));
    return q === undefined || Number(q.slice(2)) > 0;
  });
}

/**
 * Serve a file from `root` for a URL path, or undefined when there is none.
 * The decoded path is resolved against the real path of `root`; anything that
 * lands outside it (`..`, encoded slashes, symlinks) is refused. Every file
 * carries a weak ETag of its size and modification time; a request whose
 * `If-None-Match` names it gets 304 without a body. Text files go gzip-compressed
 * to a client that accepts it (`Vary: Accept-Encoding`).
 */
export async function serveStatic(
  root: string,
  urlPath: string,
  method: string,
  requestHeaders: Headers = new Headers(),
): Promise<Response | undefined> {
  let decoded: string;
  try {
    decoded = decodeURIComponent(urlPath);
  } catch {
    return undefined;
  }
  if (decoded.includes("\0") || decoded.includes("\\")) return undefined;
  const parts = decoded.split("/").filter((p) => p !== "");
  if (parts.some((p) => p === ".." || p === "." || p.startsWith("."))) return undefined;
  let rootReal: string;
  try {
    rootReal = await Deno.realPath(root);
  } catch {
    return undefined;
  }
  let target = [rootReal, ...parts].join("/");
  let real: string;
  let info: Deno.FileInfo;
  try {
    real = await Deno.realPath(target);
    info = await Deno.stat(real);
    if (info.isDirectory) {
      target = `${real}/index.html`;
      real = await Deno.realPath(target);
      info = await Deno.stat(real);
    }
  } catch {
    return undefined;
  }
  if (!info.isFile || !(real === rootReal || real.startsWith(rootReal + "/"))) return undefined;
  const type = contentTypeOf(real);
  const gzip = compressible(type);
  const etag = `W/"${info.size.toString(16)}-${(info.mtime?.getTime() ?? 0).toString(16)}"`;
  const headers = new Headers({
    "content-type": type,
    "x-content-type-options": "nosniff",
    "cache-control": "no-cache",
    etag,
  });
  if (gzip) headers.set("vary", "accept-encoding");
  if (etagMatches(requestHeaders.get("if-none-match"), etag)) {
    return new Response(null, { status: 304, headers });
  }
  const compress = gzip && acceptsGzip(requestHeaders.get("accept-encoding"));
  if (compress) headers.set("content-encoding", "gzip");
  else headers.set("content-length", String(info.size));
  if (method === "HEAD") return new Response(null, { status: 200, headers });
  const file = await Deno.open(real, { read: true });
  const body = compress ? file.readable.pipeThrough(new CompressionStream("gzip")) : file.readable;
  return new Response(body, { status: 200, headers });
}
