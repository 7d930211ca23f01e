import type {
  ApiError as ApiErrorBody,
  CalibrationFactorEntry,
  DemoEntry,
  Job,
  JobProgress,
  MaterialEntry,
  SavedEntry,
  ScenarioIssue as Issue,
  SimulationResult,
} from "./wire.ts";

/**
 * The page's client of the service's JSON API (same origin). Every call
 * returns a value or throws an {@link ApiError} carrying the service's error
 * code, message and, for a scenario, its issue list.
 *
 * @module
 */

/** A failed API call. */
export class ApiError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly issues: Issue[] = [],
  ) {
    super(message);
  }
}

const TOKEN_KEY = "evenfill.token";

/** Remember the service's access token (EVENFILL_TOKEN) for this browser tab. */
export function setAccessToken(token: string | null) {
  if (token) sessionStorage.setItem(TOKEN_KEY, token);
  else sessionStorage.removeItem(TOKEN_KEY);
}

/** How long a request may take before the page gives up on it, ms. */
export const TIMEOUTS_MS = {
  /** Listings, health, a scenario, a job's state. */
  read: 8_000,
  /** Validation, saving, starting or cancelling a job. */
  write: 15_000,
  /** A synchronous simulation (the service's own limit is 10 s by default, plus the trip). */
  simulate: 30_000,
} as const;

/** Options of one API call. */
export interface CallOptions {
  /** Give up after this many ms (default by method: {@link TIMEOUTS_MS}). */
  timeoutMs?: number;
  /** Cancels the request (the Cancel button). */
  signal?: AbortSignal;
}

/** Listeners told when a request could not reach the service at all (not an HTTP error). */
const unreachable = new Set<() => void>();

/** Call `listener` whenever a request finds no service (network error or time-out). */
export function onServiceUnreachable(listener: () => void): () => void {
  unreachable.add(listener);
  return () => unreachable.delete(listener);
}

/** The error of a request that got no answer, in plain words. */
export function noAnswerError(error: unknown, timeoutMs: number, cancelled: boolean): ApiError {
  const name = (error as { name?: string } | null)?.name;
  if (cancelled) return new ApiError(0, "cancelled", "Cancelled.");
  if (name === "TimeoutError") {
    return new ApiError(
      0,
      "timeout",
      `The service did not answer within ${
        Math.round(timeoutMs / 1000)
      } s; nothing was changed on the page. Try again, or check that the service is running.`,
    );
  }
  return new ApiError(
    0,
    "network",
    "The service cannot be reached: it may be stopped or restarting. The page checks again by itself.",
  );
}

async function call<T>(
  method: string,
  url: string,
  body?: unknown,
  options: CallOptions = {},
): Promise<T> {
  let response: Response;
  const headers: Record<string, string> = {};
  if (body !== undefined) headers["content-type"] = "application/json";
  const token = sessionStorage.getItem(TOKEN_KEY);
  if (token && method !== "GET") headers.authorization = `Bearer ${token}`;
  const timeoutMs = options.timeoutMs ?? (method === "GET" ? TIMEOUTS_MS.read : TIMEOUTS_MS.write);
  const timeout = AbortSignal.timeout(timeoutMs);
  const signal = options.signal ? AbortSignal.any([timeout, options.signal]) : timeout;
  try {
    response = await fetch(url, {
      method,
      headers,
      signal,
      ...(body === undefined ? {} : { body: JSON.stringify(body) }),
    });
  } catch (error) {
    const cancelled = options.signal?.aborted === true;
    const failure = noAnswerError(error, timeoutMs, cancelled);
    if (!cancelled) { for (const listener of unreachable) listener(); }
    throw failure;
  }
  if (response.status === 204) return undefined as T;
  const text = await response.text();
  let json: unknown = null;
  try {
    json = text ? JSON.parse(text) : null;
  } catch {
    throw new ApiError(
      response.status,
      "bad_response",
      `Not JSON from ${url}: ${text.slice(0, 200)}`,
    );
  }
  if (!response.ok) {
    const e = (json as ApiErrorBody | null)?.error;
    throw new ApiError(
      response.status,
      e?.code ?? "http_" + response.status,
      e?.message ?? `${method} ${url} answered ${response.status}`,
      e?.issues ?? [],
    );
  }
  return json as T;
}

/** The service's endpoints used by the page. */
export const api = {
  health: (timeoutMs = 3_000) =>
    call<{ status: string; version?: string }>("GET", "/api/health", undefined, { timeoutMs }),
  materials: () => call<{ materials: MaterialEntry[] }>("GET", "/api/materials"),
  demos: () => call<{ demos: DemoEntry[] }>("GET", "/api/demos"),
  demo: (id: string) => call<unknown>("GET", `/api/demos/${encodeURIComponent(id)}`),
  scenarios: () => call<{ scenarios: SavedEntry[] }>("GET", "/api/scenarios"),
  scenario: (id: string) =>
    call<SavedEntry & { scenario: unknown }>("GET", `/api/scenarios/${encodeURIComponent(id)}`),
  createScenario: (scenario: unknown) => call<SavedEntry>("POST", "/api/scenarios", scenario),
  updateScenario: (id: string, scenario: unknown) =>
    call<{ id: string; revision: number }>(
      "PUT",
      `/api/scenarios/${encodeURIComponent(id)}`,
      scenario,
    ),
  revisions: (id: string) =>
    call<{ revisions: { revision: number; name: string; created_at: string }[] }>(
      "GET",
      `/api/scenarios/${encodeURIComponent(id)}/revisions`,
    ),
  revision: (id: string, revision: number) =>
    call<{ id: string; revision: number; scenario: unknown }>(
      "GET",
      `/api/scenarios/${encodeURIComponent(id)}/revisions/${revision}`,
    ),
  validate: (scenario: unknown) =>
    call<{ ok: boolean; issues?: Issue[] }>("POST", "/api/validate", scenario),
  simulate: (scenario: unknown, signal?: AbortSignal) =>
    call<SimulationResult>("POST", "/api/simulate?history=1", scenario, {
      timeoutMs: TIMEOUTS_MS.simulate,
      ...(signal ? { signal } : {}),
    }),
  startJob: (scenario: unknown, options: { mode?: string; slopes?: string } = {}) =>
    call<{ id: string; status: string }>("POST", "/api/jobs", {
      kind: "optimize",
      scenario,
      ...(options.mode ? { mode: options.mode } : {}),
      ...(options.slopes ? { slopes: options.slopes } : {}),
    }),
  startCalibration: (scenario: unknown, factors: CalibrationFactorEntry[]) =>
    call<{ id: string; status: string }>("POST", "/api/jobs", {
      kind: "calibrate",
      scenario,
      factors,
    }),
  startWindow: (scenario: unknown, after?: unknown) =>
    call<{ id: string; status: string }>("POST", "/api/jobs", {
      kind: "window",
      scenario,
      ...(after !== undefined ? { after_scenario: after } : {}),
    }),
  job: (id: string) => call<Job>("GET", `/api/jobs/${encodeURIComponent(id)}`),
  cancelJob: (id: string) => call<unknown>("POST", `/api/jobs/${encodeURIComponent(id)}/cancel`),
};

/** Handlers of a job's live events. */
export interface JobWatch {
  onState?: (status: string) => void;
  onProgress?: (progress: JobProgress) => void;
  /** The event stream closed before the job ended (the service may be gone). */
  onStreamLost?: () => void;
}

/**
 * Follow a job until it ends: server-sent events when the browser has them,
 * else (or if the stream drops) polling once a second. Resolves with the
 * final job as `GET /api/jobs/:id` returns it.
 */
export function watchJob(id: string, watch: JobWatch): Promise<Job> {
  return new Promise((resolve, reject) => {
    let finished = false;
    let timer: ReturnType<typeof setTimeout> | undefined;
    let source: EventSource | undefined;
    const finish = async () => {
      if (finished) return;
      finished = true;
      source?.close();
      if (timer !== undefined) clearTimeout(timer);
      try {
        resolve(await api.job(id));
      } catch (error) {
        reject(error);
      }
    };
    const poll = async () => {
      if (finished) return;
      try {
        const job = await api.job(id);
        watch.onState?.(job.status);
        if (job.progress) watch.onProgress?.(job.progress);
        if (job.status === "done" || job.status === "failed" || job.status === "cancelled") {
          finished = true;
          resolve(job);
          return;
        }
      } catch (error) {
        if (error instanceof ApiError && error.status === 404) {
          finished = true;
          reject(error);
          return;
        }
      }
      timer = setTimeout(poll, 1000);
    };
    if (typeof EventSource === "undefined") {
      poll();
      return;
    }
    source = new EventSource(`/api/jobs/${encodeURIComponent(id)}/events`);
    source.addEventListener("state", (e) => {
      try {
        watch.onState?.(JSON.parse((e as MessageEvent).data).status);
      } catch { /* a malformed event is skipped; the final GET is authoritative */ }
    });
    source.addEventListener("progress", (e) => {
      try {
        watch.onProgress?.(JSON.parse((e as MessageEvent).data));
      } catch { /* as above */ }
    });
    source.addEventListener("end", () => finish());
    source.onerror = () => {
      if (finished) return;
      source?.close();
      source = undefined;
      watch.onStreamLost?.();
      poll();
    };
  });
}
