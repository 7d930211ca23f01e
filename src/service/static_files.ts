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

/**
 * Serve a file from `root` for a URL path, or undefined when there is none.
 * The decoded path is resolved against the real path of `root`; anything that
 * lands outside it (`..`, encoded slashes, symlinks) is refused.
 */
export async function serveStatic(
  root: string,
  urlPath: string,
  method: string,
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
  const headers = new Headers({
    "content-type": contentTypeOf(real),
    "content-length": String(info.size),
    "x-content-type-options": "nosniff",
    "cache-control": "no-cache",
  });
  if (method === "HEAD") return new Response(null, { status: 200, headers });
  const file = await Deno.open(real, { read: true });
  return new Response(file.readable, { status: 200, headers });
}
