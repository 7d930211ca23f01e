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
import { type ScenarioIssue, scenarioIssue, zodIssues } from "../wire/issue.ts";
import type { CalibrationResult } from "../wire/calibration.ts";
import type { OptimizationResult } from "../wire/optimization.ts";
import type { WindowJobResult } from "../wire/window.ts";
import type { Scenario } from "../model/scenario_schema.ts";
import type { runScenario } from "../network/simulate_scenario.ts";
import { checkScenario } from "../network/simulate_scenario.ts";
import { type JobRecord, type JobSummary, type Store, StoreBusyError } from "../store/store.ts";
import { type JobSchema, JobSubmitSchema, type JobSummarySchema } from "./api_schema.ts";
import { isLoopback, type ServiceConfig } from "./config.ts";
import { openApiDocument } from "./openapi.ts";
import { jobEvents } from "./job_events.ts";
import type { SimulatePool } from "./simulate_pool.ts";
import { simulateRequest } from "./simulate_request.ts";
import { afterScenarioIssues, calibrateIssues } from "./study_request.ts";
import { serveStatic } from "./static_files.ts";

/** Version reported by /api/health and the OpenAPI document. */
export const SERVICE_VERSION = "0.1.0";

/**
 * How long the service's store connection waits for another process's lock
 * per statement, ms. The wait blocks the event loop, so it is short; the app
 * retries a few times asynchronously ({@link STORE_RETRIES}) and then answers
 * 503 `store_busy` with Retry-After.
 */
export const SERVICE_STORE_BUSY_TIMEOUT_MS = 50;

/** Asynchronous retries of a store call that found the database locked. */
const STORE_RETRIES = 4;
/** Pause between two of them, ms. */
const STORE_RETRY_MS = 100;

/** Security headers on every API response. */
const API_SECURITY_HEADERS: Record<string, string> = {
  "content-security-policy": "default-src 'none'; frame-ancestors 'none'; base-uri 'none'",
  "x-content-type-options": "nosniff",
  "referrer-policy": "no-referrer",
  "x-frame-options": "DENY",
  "cross-origin-resource-policy": "same-origin",
};

/**
 * Content-Security-Policy of the page and its files: scripts, styles, data and
 * event streams from this origin only, no framing. Inline style attributes are
 * allowed because the page's charts position elements with them.
 */
export const PAGE_CSP = [
  "default-src 'self'",
  "script-src 'self'",
  "style-src 'self' 'unsafe-inline'",
  "img-src 'self' data: blob:",
  "font-src 'self'",
  "connect-src 'self'",
  "object-src 'none'",
  "base-uri 'none'",
  "form-action 'self'",
  "frame-ancestors 'none'",
].join("; ");

const PAGE_SECURITY_HEADERS: Record<string, string> = {
  "content-security-policy": PAGE_CSP,
  "x-content-type-options": "nosniff",
  "referrer-policy": "no-referrer",
  "x-frame-options": "DENY",
};

const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

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

/** Limits of {@link readJson}. */
interface ReadJsonLimits {
  /** Largest body, bytes (413 beyond). */
  maxBytes: number;
  /** Deepest nesting of arrays and objects (400 beyond). */
  maxDepth: number;
  /** Time the client has to send the whole body, ms (408 after). */
  timeoutMs: number;
  /** Aborted when the service shuts down (503). */
  shutdownSignal?: AbortSignal;
}

/** Whether `text` (JSON) nests arrays and objects deeper than `max`; strings are skipped. */
export function jsonNestsDeeperThan(text: string, max: number): boolean {
  let depth = 0;
  let inString = false;
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    if (inString) {
      if (c === 0x5c) i++; // backslash: skip the escaped character
      else if (c === 0x22) inString = false;
    } else if (c === 0x22) inString = true;
    else if (c === 0x5b || c === 0x7b) {
      if (++depth > max) return true;
    } else if (c === 0x5d || c === 0x7d) depth--;
  }
  return false;
}

/** True for `application/json` and `application/<something>+json`, parameters ignored. */
function isJsonMediaType(contentType: string | null): boolean {
  const type = (contentType ?? "").split(";")[0].trim().toLowerCase();
  return type === "application/json" || /^application\/[a-z0-9.+-]+\+json$/.test(type);
}

/**
 * Read a JSON body: 415 unless it is declared `application/json` (a browser's
 * cross-site form or no-preflight fetch cannot send that), 413 beyond the size
 * limit, 408 when it does not arrive in time, 400 if it is not JSON or nests
 * too deeply.
 */
async function readJson(request: Request, limits: ReadJsonLimits): Promise<unknown> {
  const limit = limits.maxBytes;
  if (!isJsonMediaType(request.headers.get("content-type"))) {
    await request.body?.cancel().catch(() => {});
    const got = request.headers.get("content-type");
    throw new HttpError(
      415,
      "unsupported_media_type",
      `Send the body as application/json (got ${got ? `"${got}"` : "no Content-Type"})`,
    );
  }
  const declared = Number(request.headers.get("content-length") ?? "NaN");
  if (Number.isFinite(declared) && declared > limit) {
    await request.body?.cancel().catch(() => {});
    throw new HttpError(413, "payload_too_large", `Request body over the ${limit}-byte limit`);
  }
  const chunks: Uint8Array[] = [];
  let size = 0;
  if (request.body) {
    const reader = request.body.getReader();
    const deadline = Date.now() + limits.timeoutMs;
    let timer: ReturnType<typeof setTimeout> | undefined;
    let onShutdown: (() => void) | undefined;
    const stopped = new Promise<"timeout" | "shutdown">((resolve) => {
      timer = setTimeout(() => resolve("timeout"), Math.max(0, deadline - Date.now()));
      onShutdown = () => resolve("shutdown");
      limits.shutdownSignal?.addEventListener("abort", onShutdown, { once: true });
      if (limits.shutdownSignal?.aborted) resolve("shutdown");
    });
    try {
      while (true) {
        const next = await Promise.race([reader.read(), stopped]);
        if (next === "timeout") {
          await reader.cancel().catch(() => {});
          throw new HttpError(
            408,
            "request_timeout",
            `The request body did not arrive within ${limits.timeoutMs / 1000} s`,
          );
        }
        if (next === "shutdown") {
          await reader.cancel().catch(() => {});
          throw new HttpError(503, "shutting_down", "The service is shutting down", undefined, {
            "retry-after": "5",
          });
        }
        const { done, value } = next;
        if (done) break;
        size += value.byteLength;
        if (size > limit) {
          await reader.cancel().catch(() => {});
          throw new HttpError(
            413,
            "payload_too_large",
            `Request body over the ${limit}-byte limit`,
          );
        }
        chunks.push(value);
      }
    } finally {
      clearTimeout(timer);
      if (onShutdown) limits.shutdownSignal?.removeEventListener("abort", onShutdown);
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
  if (jsonNestsDeeperThan(text, limits.maxDepth)) {
    throw new HttpError(
      400,
      "json_too_deep",
      `Request body nests arrays and objects deeper than ${limits.maxDepth} levels`,
      [scenarioIssue([], "json_too_deep", `Nested deeper than ${limits.maxDepth} levels`)],
    );
  }
  try {
    return JSON.parse(text);
  } catch (error) {
    const detail = error instanceof Error ? error.message : String(error);
    throw new HttpError(400, "invalid_json", `Request body is not valid JSON: ${detail}`, [
      scenarioIssue([], "invalid_json", `Not valid JSON: ${detail}`),
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

function jobSummary(job: JobSummary): z.infer<typeof JobSummarySchema> {
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

function jobView(job: JobRecord): z.infer<typeof JobSchema> {
  // The input passed JobSubmitSchema when it was queued.
  const input = (job.input ?? {}) as Pick<
    z.infer<typeof JobSubmitSchema>,
    "mode" | "slopes" | "scenario_id"
  >;
  return {
    ...jobSummary(job),
    mode: input.mode ?? null,
    slopes: input.slopes ?? null,
    scenario_id: input.scenario_id ?? null,
    time_limit_s: job.time_limit_ms / 1000,
    result: (job.result ?? null) as OptimizationResult | CalibrationResult | WindowJobResult | null,
  };
}

const SCENARIO_ID = /^[A-Za-z0-9_-]{1,64}$/;

/** Each method of `T`, returning a promise. */
type Retrying<T> = {
  [K in keyof T]: T[K] extends (...args: infer A) => infer R ? (...args: A) => Promise<R> : never;
};

/**
 * The store with every call retried a few times, asynchronously, while
 * another process holds the database's lock; then {@link StoreBusyError}.
 */
function retrying(store: Store): Retrying<Store> {
  return new Proxy(store, {
    get(target, key) {
      const method = Reflect.get(target, key);
      if (typeof method !== "function") return method;
      return async (...args: unknown[]) => {
        for (let attempt = 0;; attempt++) {
          try {
            return method.apply(target, args);
          } catch (error) {
            if (!(error instanceof StoreBusyError) || attempt >= STORE_RETRIES) throw error;
          }
          await sleep(STORE_RETRY_MS);
        }
      };
    },
  }) as unknown as Retrying<Store>;
}

/** The host name of a Host header value (`name:port`, `[v6]:port`), lower case; undefined if malformed. */
function hostNameOf(host: string): string | undefined {
  try {
    return new URL(`http://${host}`).hostname.toLowerCase();
  } catch {
    return undefined;
  }
}

/** Build the service's request handler. */
export function createApp(options: AppOptions): Handler {
  const { store, config } = options;
  const db = retrying(store);
  let openStreams = 0;
  const startedAtMs = options.startedAtMs ?? Date.now();
  const logError = options.logError ??
    ((message: string, error: unknown) => console.error(message, error));
  const demos = loadDemos(config.scenariosDir);
  let openApi: string | undefined;

  const boundToLoopback = isLoopback(config.host);
  const knownHost = (name: string) =>
    isLoopback(name) || name === config.host.toLowerCase() || config.allowedHosts.includes(name);

  /**
   * DNS rebinding and cross-site requests. Bound to loopback (or with allowed
   * hosts configured), the Host must be one of ours on every request; on a
   * write, an Origin (browsers send one on every cross-origin write) must be
   * this very origin.
   */
  const checkOrigin = (request: Request, url: URL) => {
    const header = request.headers.get("host");
    const names = [url.hostname.toLowerCase()];
    if (header !== null) names.push(hostNameOf(header) ?? "");
    if (boundToLoopback || config.allowedHosts.length > 0) {
      const bad = names.find((n) => !knownHost(n));
      if (bad !== undefined) {
        throw new HttpError(
          403,
          "forbidden_host",
          `This service does not answer to the host name "${bad}"; use ${
            boundToLoopback ? "127.0.0.1 or localhost" : config.host
          }, or add it to EVENFILL_ALLOWED_HOSTS`,
        );
      }
    }
    const method = request.method;
    if (method === "GET" || method === "HEAD" || method === "OPTIONS") return;
    const origin = request.headers.get("origin");
    if (origin === null) return;
    let same = false;
    try {
      const o = new URL(origin);
      same = (o.protocol === "http:" || o.protocol === "https:") && o.host === url.host;
    } catch {
      same = false; // "null" (sandboxed frames, file: pages) or malformed
    }
    if (!same) {
      throw new HttpError(
        403,
        "forbidden_origin",
        `Writes are only accepted from this service's own page, not from ${origin}`,
      );
    }
  };

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

  const body = (request: Request) =>
    readJson(request, {
      maxBytes: config.maxBodyBytes,
      maxDepth: config.maxJsonDepth,
      timeoutMs: config.bodyTimeoutMs,
      shutdownSignal: options.shutdownSignal,
    });

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
      if (reply.logDetail !== undefined) {
        logError(`Engine error on POST ${url.pathname}:`, reply.logDetail);
      }
      const headers = reply.status === 429 || reply.status === 503
        ? { "retry-after": reply.status === 429 ? "1" : "5" }
        : undefined;
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
        scenarioIssue(["kind"], "unknown_kind", "test_spin is a test-only job kind"),
      ]);
    }
    const scenario = validScenario(submit.scenario);
    const studyIssues = submit.kind === "calibrate"
      ? calibrateIssues(scenario, submit.factors ?? [{ kind: "viscosity" }])
      : submit.kind === "window"
      ? afterScenarioIssues(submit.after_scenario)
      : [];
    if (studyIssues.length > 0) {
      throw new HttpError(
        400,
        "invalid_request",
        `The ${submit.kind} job cannot run: ${studyIssues[0].at}: ${studyIssues[0].message}${
          studyIssues.length > 1 ? ` (and ${studyIssues.length - 1} more)` : ""
        }`,
        studyIssues,
      );
    }
    if (submit.scenario_id !== undefined && !await db.getScenario(submit.scenario_id)) {
      throw new HttpError(404, "not_found", `No saved scenario "${submit.scenario_id}"`);
    }
    const input: Record<string, unknown> = { scenario: submit.scenario };
    if (submit.mode !== undefined) input.mode = submit.mode;
    if (submit.slopes !== undefined) input.slopes = submit.slopes;
    if (submit.kind === "calibrate") input.factors = submit.factors ?? [{ kind: "viscosity" }];
    if (submit.kind === "window") {
      if (submit.window !== undefined) input.window = submit.window;
      if (submit.after_scenario !== undefined) input.after_scenario = submit.after_scenario;
    }
    if (submit.scenario_id !== undefined) input.scenario_id = submit.scenario_id;
    const job = await db.submitJob({
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
      // Saved designs and jobs are the shop's data: with a token set, reading them needs it too.
      if (read !== "GET" || resource === "scenarios" || resource === "jobs") requireToken(request);
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
          queue: await db.countJobs(),
          workers: { alive: (await db.aliveWorkers(config.leaseMs)).length },
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
          if (allow("GET", "POST") === "GET") return json({ scenarios: await db.listScenarios() });
          const raw = await body(request);
          const scenario = validScenario(raw);
          const head = await db.createScenario(nanoid(12), scenarioName(scenario), raw);
          return json(head, 201, { location: `/api/scenarios/${head.id}` });
        }
        if (!SCENARIO_ID.test(id)) throw notFound(`No saved scenario "${id}"`);
        if (sub === undefined) {
          const m = allow("GET", "PUT", "DELETE");
          if (m === "GET") {
            const saved = await db.getScenario(id);
            if (!saved) throw notFound(`No saved scenario "${id}"`);
            return json(saved);
          }
          if (m === "DELETE") {
            if (!await db.deleteScenario(id)) throw notFound(`No saved scenario "${id}"`);
            return new Response(null, { status: 204 });
          }
          if (!await db.getScenario(id)) throw notFound(`No saved scenario "${id}"`);
          const raw = await body(request);
          const head = await db.updateScenario(id, scenarioName(validScenario(raw)), raw);
          if (!head) throw notFound(`No saved scenario "${id}"`);
          return json(head);
        }
        if (sub === "revisions" && extra.length === 0) {
          allow("GET");
          if (subId === undefined) {
            const revisions = await db.listRevisions(id);
            if (!revisions) throw notFound(`No saved scenario "${id}"`);
            return json({ revisions });
          }
          const revision = Number(subId);
          const found = /^[1-9]\d{0,8}$/.test(subId)
            ? await db.getRevision(id, revision)
            : undefined;
          if (!found) throw notFound(`No revision ${subId} of scenario "${id}"`);
          return json(found);
        }
        break;
      }
      case "jobs": {
        if (id === undefined) {
          if (allow("GET", "POST") === "GET") {
            const limit = Math.min(1000, Math.max(1, Number(url.searchParams.get("limit")) || 200));
            return json({ jobs: (await db.listJobs({ limit })).map(jobSummary) });
          }
          return await submitJob(request);
        }
        if (subId !== undefined) break;
        if (sub === undefined) {
          allow("GET");
          const job = await db.getJob(id);
          if (!job) throw notFound(`No job "${id}"`);
          return json(jobView(job));
        }
        if (sub === "cancel") {
          allow("POST");
          const job = await db.requestCancel(id);
          if (!job) throw notFound(`No job "${id}"`);
          return json(
            { id: job.id, status: job.status, cancel_requested: job.cancel_requested },
            202,
          );
        }
        if (sub === "events") {
          allow("GET");
          if (!await db.getJobSummary(id)) throw notFound(`No job "${id}"`);
          if (openStreams >= config.maxEventStreams) {
            throw new HttpError(
              503,
              "too_many_streams",
              `${config.maxEventStreams} event streams are already open; poll /api/jobs/${id} or try again shortly`,
              undefined,
              { "retry-after": "5" },
            );
          }
          openStreams++;
          return jobEvents(store, id, {
            pollMs: options.eventPollMs ?? 200,
            onClose: () => openStreams--,
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

  const handle = async (request: Request, url: URL): Promise<Response> => {
    try {
      checkOrigin(request, url);
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
      const file = await serveStatic(
        config.publicDir,
        url.pathname,
        request.method,
        request.headers,
      );
      if (file) return file;
      throw new HttpError(404, "not_found", `No file ${url.pathname}`);
    } catch (error) {
      if (error instanceof HttpError) return errorResponse(error);
      if (error instanceof StoreBusyError) {
        return errorResponse(
          new HttpError(
            503,
            "store_busy",
            "The database is locked by another process; nothing was changed, try again shortly",
            undefined,
            { "retry-after": "1" },
          ),
        );
      }
      logError(`Unexpected error on ${request.method} ${url.pathname}:`, error);
      return errorResponse(
        new HttpError(500, "internal_error", "Internal error; it has been logged"),
      );
    }
  };

  return async (request: Request): Promise<Response> => {
    let url: URL;
    try {
      url = new URL(request.url);
    } catch {
      return errorResponse(new HttpError(400, "bad_request", "Malformed request URL"));
    }
    const response = await handle(request, url);
    const api = url.pathname === "/api" || url.pathname.startsWith("/api/");
    const extra = api ? API_SECURITY_HEADERS : PAGE_SECURITY_HEADERS;
    for (const [name, value] of Object.entries(extra)) response.headers.set(name, value);
    if (api && !response.headers.has("cache-control")) {
      response.headers.set("cache-control", "no-store");
    }
    return response;
  };
}
