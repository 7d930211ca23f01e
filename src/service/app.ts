/**
 * The HTTP application: a `(Request) => Promise<Response>` handler over a
 * {@link Store}. It parses, calls the engine or the store, and maps outcomes to
 * status codes; nothing else. `main.ts` serves it; tests call it directly.
 *
 * @module
 */
import { nanoid } from "nanoid";
import type { z } from "zod";
import { MATERIALS } from "../materials/library.ts";
import { pathText, type ScenarioIssue } from "../model/parse_scenario.ts";
import type { Scenario } from "../model/scenario_schema.ts";
import type { runScenario } from "../network/simulate_scenario.ts";
import { checkScenario } from "../network/simulate_scenario.ts";
import type { JobRecord, JobSummary, Store } from "../store/store.ts";
import { JobSubmitSchema } from "./api_schema.ts";
import type { ServiceConfig } from "./config.ts";
import { openApiDocument } from "./openapi.ts";
import { jobEvents } from "./job_events.ts";
import type { SimulatePool } from "./simulate_pool.ts";
import { simulateRequest } from "./simulate_request.ts";
import { serveStatic } from "./static_files.ts";

/** Version reported by /api/health and the OpenAPI document. */
export const SERVICE_VERSION = "0.1.0";

/** Options of {@link createApp}. */
export interface AppOptions {
  store: Store;
  config: ServiceConfig;
  /** Epoch ms the service started (default: now). */
  startedAtMs?: number;
  /** Aborted when the service shuts down: open event streams close. */
  shutdownSignal?: AbortSignal;
  /** How often an event stream polls the store, ms (default 200). */
  eventPollMs?: number;
  /** Runs `POST /api/simulate` off the event loop (the service uses one); without it, in the request's thread. */
  simulatePool?: SimulatePool;
  /** The simulation run in the request's thread (default the engine's); a seam for tests. */
  runScenario?: typeof runScenario;
  /** Where unexpected errors are logged (default console.error). */
  logError?: (message: string, error: unknown) => void;
}

/** A request handler. */
export type Handler = (request: Request) => Promise<Response>;

class HttpError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly issues?: ScenarioIssue[],
    readonly headers?: Record<string, string>,
  ) {
    super(message);
  }
}

const JSON_HEADERS = { "content-type": "application/json; charset=utf-8" };

function json(body: unknown, status = 200, headers: Record<string, string> = {}): Response {
  return new Response(JSON.stringify(body), { status, headers: { ...JSON_HEADERS, ...headers } });
}

function errorResponse(e: HttpError): Response {
  const error: Record<string, unknown> = { code: e.code, message: e.message };
  if (e.issues) error.issues = e.issues;
  return json({ error }, e.status, e.headers);
}

function zodIssues(error: z.ZodError): ScenarioIssue[] {
  return error.issues.map((i) => {
    const path = i.path.map((p) => (typeof p === "symbol" ? String(p) : p));
    return { path, at: pathText(path), code: i.code, message: i.message };
  });
}

/** Read a body up to `limit` bytes; 413 beyond it, 400 if it is not JSON. */
async function readJson(request: Request, limit: number): Promise<unknown> {
  const declared = Number(request.headers.get("content-length") ?? "NaN");
  if (Number.isFinite(declared) && declared > limit) {
    await request.body?.cancel().catch(() => {});
    throw new HttpError(413, "payload_too_large", `Request body over the ${limit}-byte limit`);
  }
  const chunks: Uint8Array[] = [];
  let size = 0;
  if (request.body) {
    const reader = request.body.getReader();
    while (true) {
      const { done, value } = await reader.read();
      if (done) break;
      size += value.byteLength;
      if (size > limit) {
        await reader.cancel().catch(() => {});
        throw new HttpError(413, "payload_too_large", `Request body over the ${limit}-byte limit`);
      }
      chunks.push(value);
    }
  }
  const bytes = new Uint8Array(size);
  let offset = 0;
  for (const c of chunks) {
    bytes.set(c, offset);
    offset += c.byteLength;
  }
  let text: string;
  try {
    text = new TextDecoder("utf-8", { fatal: true }).decode(bytes);
  } catch {
    throw new HttpError(400, "invalid_json", "Request body is not UTF-8 text");
  }
  try {
    return JSON.parse(text);
  } catch (error) {
    const detail = error instanceof Error ? error.message : String(error);
    throw new HttpError(400, "invalid_json", `Request body is not valid JSON: ${detail}`, [
      { path: [], at: "$", code: "invalid_json", message: `Not valid JSON: ${detail}` },
    ]);
  }
}

function validScenario(input: unknown): Scenario {
  const parsed = checkScenario(input);
  if (!parsed.ok) {
    throw new HttpError(
      400,
      "invalid_scenario",
      `The scenario has ${parsed.issues.length} problem${parsed.issues.length === 1 ? "" : "s"}`,
      parsed.issues,
    );
  }
  return parsed.scenario;
}

function timingSafeEqual(a: string, b: string): boolean {
  const x = new TextEncoder().encode(a);
  const y = new TextEncoder().encode(b);
  let diff = x.length ^ y.length;
  for (let i = 0; i < Math.max(x.length, y.length); i++) diff |= (x[i] ?? 0) ^ (y[i] ?? 0);
  return diff === 0;
}

interface Demo {
  id: string;
  name: string;
  cavities: number;
  text: string;
}

function loadDemos(dir: string): Demo[] {
  const demos: Demo[] = [];
  let entries: Deno.DirEntry[];
  try {
    entries = [...Deno.readDirSync(dir)];
  } catch {
    return demos;
  }
  for (const entry of entries) {
    if (!entry.isFile || !entry.name.endsWith(".json")) continue;
    const text = Deno.readTextFileSync(`${dir}/${entry.name}`);
    const wire = JSON.parse(text) as { name?: string; cavities?: unknown[] };
    demos.push({
      id: entry.name.slice(0, -".json".length),
      name: String(wire.name ?? entry.name),
      cavities: Array.isArray(wire.cavities) ? wire.cavities.length : 0,
      text,
    });
  }
  return demos.sort((a, b) => a.id.localeCompare(b.id));
}

function jobSummary(job: JobSummary) {
  return {
    id: job.id,
    kind: job.kind,
    name: job.name,
    status: job.status,
    attempts: job.attempts,
    created_at: job.created_at,
    started_at: job.started_at,
    finished_at: job.finished_at,
    cancel_requested: job.cancel_requested,
    progress: job.progress,
    error: job.error,
  };
}

function jobView(job: JobRecord) {
  const input = (job.input ?? {}) as { mode?: string; slopes?: string; scenario_id?: string };
  return {
    ...jobSummary(job),
    mode: input.mode ?? null,
    slopes: input.slopes ?? null,
    scenario_id: input.scenario_id ?? null,
    time_limit_s: job.time_limit_ms / 1000,
    result: job.result ?? null,
  };
}

const SCENARIO_ID = /^[A-Za-z0-9_-]{1,64}$/;

/** Build the service's request handler. */
export function createApp(options: AppOptions): Handler {
  const { store, config } = options;
  const startedAtMs = options.startedAtMs ?? Date.now();
  const logError = options.logError ??
    ((message: string, error: unknown) => console.error(message, error));
  const demos = loadDemos(config.scenariosDir);
  let openApi: string | undefined;

  const requireToken = (request: Request) => {
    if (config.token === undefined) return;
    const header = request.headers.get("authorization") ?? "";
    const match = /^Bearer (.+)$/i.exec(header);
    if (!match || !timingSafeEqual(match[1].trim(), config.token)) {
      throw new HttpError(401, "unauthorized", "This endpoint needs a bearer token", undefined, {
        "www-authenticate": 'Bearer realm="evenfill"',
      });
    }
  };

  const body = (request: Request) => readJson(request, config.maxBodyBytes);

  const scenarioName = (s: Scenario) => s.name;

  const simulate = async (request: Request, url: URL): Promise<Response> => {
    const input = await body(request);
    const simulateOptions = {
      history: url.searchParams.get("history") === "1",
      limitMs: config.simulateLimitMs,
      maxElements: config.simulateMaxElements,
    };
    const reply = options.simulatePool
      ? await options.simulatePool.run(input, simulateOptions)
      : simulateRequest(input, { ...simulateOptions, runScenario: options.runScenario });
    if (!reply.ok) {
      const headers = reply.status === 429 ? { "retry-after": "1" } : undefined;
      throw new HttpError(reply.status, reply.code, reply.message, reply.issues, headers);
    }
    return json(reply.result);
  };

  const submitJob = async (request: Request): Promise<Response> => {
    const raw = await body(request);
    const parsed = JobSubmitSchema.safeParse(raw);
    if (!parsed.success) {
      throw new HttpError(
        400,
        "invalid_request",
        "The job request is not valid",
        zodIssues(parsed.error),
      );
    }
    const submit = parsed.data;
    if (submit.kind === "test_spin" && !config.enableTestJobs) {
      throw new HttpError(400, "invalid_request", "Job kind test_spin is only enabled for tests", [
        {
          path: ["kind"],
          at: "kind",
          code: "unknown_kind",
          message: "test_spin is a test-only job kind",
        },
      ]);
    }
    const scenario = validScenario(submit.scenario);
    if (submit.scenario_id !== undefined && !store.getScenario(submit.scenario_id)) {
      throw new HttpError(404, "not_found", `No saved scenario "${submit.scenario_id}"`);
    }
    const input: Record<string, unknown> = { scenario: submit.scenario };
    if (submit.mode !== undefined) input.mode = submit.mode;
    if (submit.slopes !== undefined) input.slopes = submit.slopes;
    if (submit.scenario_id !== undefined) input.scenario_id = submit.scenario_id;
    const job = store.submitJob({
      id: nanoid(),
      kind: submit.kind,
      name: scenarioName(scenario),
      input,
      time_limit_ms: config.jobTimeLimitMs,
    }, { maxQueued: config.queueLimit });
    if (job === false) {
      throw new HttpError(
        429,
        "queue_full",
        `The job queue is full (${config.queueLimit} waiting); try again later`,
        undefined,
        { "retry-after": "5" },
      );
    }
    return json({ id: job.id, status: job.status, created_at: job.created_at }, 202, {
      location: `/api/jobs/${job.id}`,
    });
  };

  const route = async (request: Request, url: URL): Promise<Response> => {
    const method = request.method;
    const parts = url.pathname.split("/").filter((p) => p !== "").slice(1).map((p) => {
      try {
        return decodeURIComponent(p);
      } catch {
        throw new HttpError(404, "not_found", "No such resource");
      }
    });
    const allow = (...methods: string[]) => {
      const read = method === "HEAD" ? "GET" : method;
      if (!methods.includes(read)) {
        throw new HttpError(405, "method_not_allowed", `${method} is not allowed here`, undefined, {
          allow: methods.join(", "),
        });
      }
      if (read !== "GET") requireToken(request);
      return read;
    };
    const [resource, id, sub, subId, ...extra] = parts;
    const notFound = (what: string) => new HttpError(404, "not_found", what);

    switch (resource) {
      case "health": {
        if (id !== undefined) break;
        allow("GET");
        return json({
          status: "ok",
          version: SERVICE_VERSION,
          uptime_s: Math.round((Date.now() - startedAtMs) / 100) / 10,
          queue: store.countJobs(),
          workers: { alive: store.aliveWorkers(config.leaseMs).length },
        });
      }
      case "materials": {
        if (id !== undefined) break;
        allow("GET");
        return json({ materials: MATERIALS });
      }
      case "demos": {
        if (sub !== undefined) break;
        allow("GET");
        if (id === undefined) {
          return json({ demos: demos.map(({ id, name, cavities }) => ({ id, name, cavities })) });
        }
        const demo = demos.find((d) => d.id === id);
        if (!demo) throw notFound(`No demo scenario "${id}"`);
        return new Response(demo.text, { headers: JSON_HEADERS });
      }
      case "openapi.json": {
        if (id !== undefined) break;
        allow("GET");
        openApi ??= JSON.stringify(openApiDocument(SERVICE_VERSION));
        return new Response(openApi, { headers: JSON_HEADERS });
      }
      case "validate": {
        if (id !== undefined) break;
        allow("POST");
        const parsed = checkScenario(await body(request));
        return json(parsed.ok ? { ok: true } : { ok: false, issues: parsed.issues });
      }
      case "simulate": {
        if (id !== undefined) break;
        allow("POST");
        return await simulate(request, url);
      }
      case "scenarios": {
        if (id === undefined) {
          if (allow("GET", "POST") === "GET") return json({ scenarios: store.listScenarios() });
          const raw = await body(request);
          const scenario = validScenario(raw);
          const head = store.createScenario(nanoid(12), scenarioName(scenario), raw);
          return json(head, 201, { location: `/api/scenarios/${head.id}` });
        }
        if (!SCENARIO_ID.test(id)) throw notFound(`No saved scenario "${id}"`);
        if (sub === undefined) {
          const m = allow("GET", "PUT", "DELETE");
          if (m === "GET") {
            const saved = store.getScenario(id);
            if (!saved) throw notFound(`No saved scenario "${id}"`);
            return json(saved);
          }
          if (m === "DELETE") {
            if (!store.deleteScenario(id)) throw notFound(`No saved scenario "${id}"`);
            return new Response(null, { status: 204 });
          }
          if (!store.getScenario(id)) throw notFound(`No saved scenario "${id}"`);
          const raw = await body(request);
          const head = store.updateScenario(id, scenarioName(validScenario(raw)), raw);
          if (!head) throw notFound(`No saved scenario "${id}"`);
          return json(head);
        }
        if (sub === "revisions" && extra.length === 0) {
          allow("GET");
          if (subId === undefined) {
            const revisions = store.listRevisions(id);
            if (!revisions) throw notFound(`No saved scenario "${id}"`);
            return json({ revisions });
          }
          const revision = Number(subId);
          const found = /^[1-9]\d{0,8}$/.test(subId) ? store.getRevision(id, revision) : undefined;
          if (!found) throw notFound(`No revision ${subId} of scenario "${id}"`);
          return json(found);
        }
        break;
      }
      case "jobs": {
        if (id === undefined) {
          if (allow("GET", "POST") === "GET") {
            const limit = Math.min(1000, Math.max(1, Number(url.searchParams.get("limit")) || 200));
            return json({ jobs: store.listJobs({ limit }).map(jobSummary) });
          }
          return await submitJob(request);
        }
        if (subId !== undefined) break;
        if (sub === undefined) {
          allow("GET");
          const job = store.getJob(id);
          if (!job) throw notFound(`No job "${id}"`);
          return json(jobView(job));
        }
        if (sub === "cancel") {
          allow("POST");
          const job = store.requestCancel(id);
          if (!job) throw notFound(`No job "${id}"`);
          return json(
            { id: job.id, status: job.status, cancel_requested: job.cancel_requested },
            202,
          );
        }
        if (sub === "events") {
          allow("GET");
          if (!store.getJobSummary(id)) throw notFound(`No job "${id}"`);
          return jobEvents(store, id, {
            pollMs: options.eventPollMs ?? 200,
            // Event streams end on the client's disconnect or on service shutdown.
            signal: options.shutdownSignal
              ? AbortSignal.any([request.signal, options.shutdownSignal])
              : request.signal,
          });
        }
        break;
      }
    }
    throw notFound(`No API route ${url.pathname}`);
  };

  return async (request: Request): Promise<Response> => {
    let url: URL;
    try {
      url = new URL(request.url);
    } catch {
      return errorResponse(new HttpError(400, "bad_request", "Malformed request URL"));
    }
    try {
      if (url.pathname === "/api" || url.pathname.startsWith("/api/")) {
        return await route(request, url);
      }
      if (request.method !== "GET" && request.method !== "HEAD") {
        throw new HttpError(
          405,
          "method_not_allowed",
          `${request.method} is not allowed here`,
          undefined,
          {
            allow: "GET, HEAD",
          },
        );
      }
      const file = await serveStatic(config.publicDir, url.pathname, request.method);
      if (file) return file;
      throw new HttpError(404, "not_found", `No file ${url.pathname}`);
    } catch (error) {
      if (error instanceof HttpError) return errorResponse(error);
      logError(`Unexpected error on ${request.method} ${url.pathname}:`, error);
      return errorResponse(
        new HttpError(500, "internal_error", "Internal error; it has been logged"),
      );
    }
  };
}
