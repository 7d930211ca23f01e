import { createApp, type Handler, SERVICE_STORE_BUSY_TIMEOUT_MS } from "../../src/service/app.ts";
import { defaultConfig, type ServiceConfig } from "../../src/service/config.ts";
import { SqliteStore } from "../../src/store/sqlite_store.ts";

/** A handler over a fresh temporary database and a small public/ tree, for in-process tests. */
export interface TestApp {
  handler: Handler;
  store: SqliteStore;
  config: ServiceConfig;
  dir: string;
  /** Call the handler with a path (and init), like Hono's app.request(). */
  request(path: string, init?: RequestInit): Promise<Response>;
  /** POST/PUT JSON. */
  send(method: string, path: string, body: unknown, headers?: HeadersInit): Promise<Response>;
  close(): Promise<void>;
}

export async function testApp(overrides: Partial<ServiceConfig> = {}): Promise<TestApp> {
  const dir = await Deno.makeTempDir({ prefix: "evenfill-app-" });
  const publicDir = `${dir}/public`;
  await Deno.mkdir(`${publicDir}/css`, { recursive: true });
  await Deno.writeTextFile(`${publicDir}/index.html`, "<!doctype html><title>evenfill</title>");
  await Deno.writeTextFile(`${publicDir}/app.js`, "console.log('evenfill');");
  await Deno.writeTextFile(`${publicDir}/css/site.css`, "body{}");
  await Deno.writeTextFile(`${dir}/secret.txt`, "outside public");
  const config: ServiceConfig = {
    ...defaultConfig(),
    dbPath: `${dir}/test.db`,
    publicDir,
    ...overrides,
  };
  // As the service opens it: a short busy timeout, retried by the app.
  const store = SqliteStore.open(config.dbPath, { busyTimeoutMs: SERVICE_STORE_BUSY_TIMEOUT_MS });
  const handler = createApp({ store, config, eventPollMs: 20, logError: () => {} });
  const request = (path: string, init?: RequestInit) =>
    handler(new Request(`http://127.0.0.1${path}`, init));
  return {
    handler,
    store,
    config,
    dir,
    request,
    send: (method, path, body, headers = {}) =>
      request(path, {
        method,
        body: typeof body === "string" ? body : JSON.stringify(body),
        headers: {
          "content-type": "application/json",
          ...Object.fromEntries(new Headers(headers)),
        },
      }),
    close: async () => {
      store.close();
      await Deno.remove(dir, { recursive: true });
    },
  };
}

export const DEMO_PATH = new URL("../../scenarios/family_four_housing.json", import.meta.url);
export const QUICK_PATH = new URL("../testdata/quick_two_cavity.json", import.meta.url);

export async function readJson(url: URL): Promise<Record<string, unknown>> {
  return JSON.parse(await Deno.readTextFile(url));
}

/** Read an SSE response to its end as [event, parsed data] pairs. */
// deno-lint-ignore no-explicit-any
export async function readEvents(res: Response): Promise<[string, any][]> {
  const text = await res.text();
  // deno-lint-ignore no-explicit-any
  const events: [string, any][] = [];
  for (const block of text.split("\n\n")) {
    const event = /^event: (.*)$/m.exec(block)?.[1];
    const data = /^data: (.*)$/m.exec(block)?.[1];
    if (event && data) events.push([event, JSON.parse(data)]);
  }
  return events;
}
