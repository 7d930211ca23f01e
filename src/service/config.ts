/**
 * Service and worker configuration, from command-line flags over environment
 * variables over defaults.
 *
 * @module
 */

/** Everything the service and its workers are configured with. */
export interface ServiceConfig {
  /** Interface to bind (EVENFILL_HOST, --host; default 127.0.0.1). */
  host: string;
  /** TCP port, 0 for any free one (EVENFILL_PORT, --port; default 8000). */
  port: number;
  /** SQLite database file (EVENFILL_DB, --db; default data/evenfill.db). */
  dbPath: string;
  /** Bearer token for writes and for reads of saved scenarios and jobs (EVENFILL_TOKEN only, never a flag). Required off loopback. */
  token: string | undefined;
  /**
   * Host names (no port) the service answers to besides loopback ones and the
   * bound address (EVENFILL_ALLOWED_HOSTS, --allowed-hosts; comma-separated;
   * default none). Bound to loopback, any other Host header gets 403.
   */
  allowedHosts: string[];
  /** Worker processes the service starts itself (EVENFILL_WORKERS, --workers; default 1). */
  workers: number;
  /** Wall-clock limit of one job attempt, ms (EVENFILL_JOB_TIME_LIMIT_S, --job-time-limit-s; default 300 s). */
  jobTimeLimitMs: number;
  /** Queued jobs beyond which submissions get 429 (EVENFILL_QUEUE_LIMIT, --queue-limit; default 100). */
  queueLimit: number;
  /** Largest accepted request body, bytes (EVENFILL_MAX_BODY_BYTES, --max-body-bytes; default 1 MiB). */
  maxBodyBytes: number;
  /** Deepest nesting of arrays and objects a JSON body may have (default 64). */
  maxJsonDepth: number;
  /** Time a client has to send a whole request body, ms (EVENFILL_BODY_TIMEOUT_MS, --body-timeout-ms; default 30 s); 408 after it. */
  bodyTimeoutMs: number;
  /** Open job event streams beyond which new ones get 503 (EVENFILL_MAX_EVENT_STREAMS, --max-event-streams; default 32). */
  maxEventStreams: number;
  /** How long SIGTERM waits for open requests before the service exits anyway, ms (EVENFILL_SHUTDOWN_DEADLINE_MS, --shutdown-deadline-ms; default 10 s). */
  shutdownDeadlineMs: number;
  /** Time budget of a synchronous simulate, ms (EVENFILL_SIMULATE_LIMIT_MS, --simulate-limit-ms; default 10 s). */
  simulateLimitMs: number;
  /** Web Workers that run synchronous simulations off the event loop (EVENFILL_SIMULATE_WORKERS, --simulate-workers; default 2). */
  simulateWorkers: number;
  /** Largest network a synchronous simulate takes, elements (runners + gates + cavities; default 400). */
  simulateMaxElements: number;
  /** Job lease, ms; a worker renews it every third of this (EVENFILL_LEASE_MS, --lease-ms; default 10 s). */
  leaseMs: number;
  /** How long a stopping worker lets a running job go on before re-queueing it, ms (EVENFILL_SHUTDOWN_GRACE_MS, --shutdown-grace-ms; default 2000). */
  shutdownGraceMs: number;
  /** How long a job has to honour a cancel (its job process writes the best design so far) before it is killed, ms (EVENFILL_CANCEL_GRACE_MS, --cancel-grace-ms; default 5000). */
  cancelGraceMs: number;
  /** Enable the test-only `test_spin` job kind (EVENFILL_ENABLE_TEST_JOBS=1, --enable-test-jobs; default off). */
  enableTestJobs: boolean;
  /** Directory of the static page (default `public/` of this checkout). */
  publicDir: string;
  /** Directory of the demo scenarios (default `scenarios/` of this checkout). */
  scenariosDir: string;
}

const root = new URL("../../", import.meta.url);

/** Defaults, relative to this checkout. */
export function defaultConfig(): ServiceConfig {
  return {
    host: "127.0.0.1",
    port: 8000,
    dbPath: "data/evenfill.db",
    token: undefined,
    allowedHosts: [],
    workers: 1,
    jobTimeLimitMs: 300_000,
    queueLimit: 100,
    maxBodyBytes: 1 << 20,
    maxJsonDepth: 64,
    bodyTimeoutMs: 30_000,
    maxEventStreams: 32,
    shutdownDeadlineMs: 10_000,
    simulateLimitMs: 10_000,
    simulateWorkers: 2,
    simulateMaxElements: 400,
    leaseMs: 10_000,
    shutdownGraceMs: 2000,
    cancelGraceMs: 5000,
    enableTestJobs: false,
    publicDir: new URL("public/", root).pathname,
    scenariosDir: new URL("scenarios/", root).pathname,
  };
}

/** A configuration problem, reported before anything starts. */
export class ConfigError extends Error {
  override name = "ConfigError";
}

function number(name: string, text: string, min: number): number {
  const value = Number(text);
  if (!Number.isFinite(value) || value < min) {
    throw new ConfigError(`${name} must be a number ≥ ${min}, got "${text}"`);
  }
  return value;
}

/**
 * Read the configuration: `--flag value` / `--flag=value` arguments override
 * EVENFILL_* environment variables, which override {@link defaultConfig}.
 * Throws {@link ConfigError} on a bad value.
 */
export function loadConfig(
  args: readonly string[],
  env: Record<string, string | undefined> = Deno.env.toObject(),
): ServiceConfig {
  const config = defaultConfig();
  const flags = new Map<string, string>();
  for (let i = 0; i < args.length; i++) {
    const a = args[i];
    if (!a.startsWith("--")) throw new ConfigError(`Unexpected argument "${a}"`);
    const [name, inline] = a.slice(2).split("=", 2);
    if (name === "enable-test-jobs") flags.set(name, "1");
    else if (inline !== undefined) flags.set(name, inline);
    else if (i + 1 < args.length) flags.set(name, args[++i]);
    else throw new ConfigError(`--${name} needs a value`);
  }
  const get = (flag: string, variable: string) => flags.get(flag) ?? env[variable];
  const known = new Set([
    "host",
    "port",
    "db",
    "workers",
    "job-time-limit-s",
    "queue-limit",
    "max-body-bytes",
    "simulate-limit-ms",
    "simulate-workers",
    "lease-ms",
    "shutdown-grace-ms",
    "cancel-grace-ms",
    "enable-test-jobs",
    "allowed-hosts",
    "body-timeout-ms",
    "max-event-streams",
    "shutdown-deadline-ms",
  ]);
  for (const name of flags.keys()) {
    if (!known.has(name)) throw new ConfigError(`Unknown option --${name}`);
  }
  const host = get("host", "EVENFILL_HOST");
  if (host !== undefined) config.host = host;
  const port = get("port", "EVENFILL_PORT");
  if (port !== undefined) config.port = Math.trunc(number("port", port, 0));
  if (config.port > 65535) throw new ConfigError(`port must be ≤ 65535, got ${config.port}`);
  const db = get("db", "EVENFILL_DB");
  if (db !== undefined) config.dbPath = db;
  const token = env.EVENFILL_TOKEN;
  if (token !== undefined && token !== "") config.token = token;
  const workers = get("workers", "EVENFILL_WORKERS");
  if (workers !== undefined) config.workers = Math.trunc(number("workers", workers, 0));
  const limit = get("job-time-limit-s", "EVENFILL_JOB_TIME_LIMIT_S");
  if (limit !== undefined) config.jobTimeLimitMs = number("job time limit", limit, 0.1) * 1000;
  const queue = get("queue-limit", "EVENFILL_QUEUE_LIMIT");
  if (queue !== undefined) config.queueLimit = Math.trunc(number("queue limit", queue, 1));
  const body = get("max-body-bytes", "EVENFILL_MAX_BODY_BYTES");
  if (body !== undefined) config.maxBodyBytes = Math.trunc(number("max body bytes", body, 1024));
  const simulate = get("simulate-limit-ms", "EVENFILL_SIMULATE_LIMIT_MS");
  if (simulate !== undefined) config.simulateLimitMs = number("simulate limit", simulate, 10);
  const simulateWorkers = get("simulate-workers", "EVENFILL_SIMULATE_WORKERS");
  if (simulateWorkers !== undefined) {
    config.simulateWorkers = Math.trunc(number("simulate workers", simulateWorkers, 1));
  }
  const lease = get("lease-ms", "EVENFILL_LEASE_MS");
  if (lease !== undefined) config.leaseMs = Math.trunc(number("lease", lease, 300));
  const grace = get("shutdown-grace-ms", "EVENFILL_SHUTDOWN_GRACE_MS");
  if (grace !== undefined) config.shutdownGraceMs = Math.trunc(number("shutdown grace", grace, 0));
  const cancelGrace = get("cancel-grace-ms", "EVENFILL_CANCEL_GRACE_MS");
  if (cancelGrace !== undefined) {
    config.cancelGraceMs = Math.trunc(number("cancel grace", cancelGrace, 0));
  }
  const hosts = get("allowed-hosts", "EVENFILL_ALLOWED_HOSTS");
  if (hosts !== undefined) {
    config.allowedHosts = hosts.split(",").map((h) => h.trim().toLowerCase()).filter((h) =>
      h !== ""
    );
  }
  const bodyTimeout = get("body-timeout-ms", "EVENFILL_BODY_TIMEOUT_MS");
  if (bodyTimeout !== undefined) config.bodyTimeoutMs = number("body timeout", bodyTimeout, 10);
  const streams = get("max-event-streams", "EVENFILL_MAX_EVENT_STREAMS");
  if (streams !== undefined) {
    config.maxEventStreams = Math.trunc(number("max event streams", streams, 1));
  }
  const deadline = get("shutdown-deadline-ms", "EVENFILL_SHUTDOWN_DEADLINE_MS");
  if (deadline !== undefined) {
    config.shutdownDeadlineMs = Math.trunc(number("shutdown deadline", deadline, 0));
  }
  const test = get("enable-test-jobs", "EVENFILL_ENABLE_TEST_JOBS");
  config.enableTestJobs = test === "1" || test === "true";
  return config;
}

/** True for a loopback address (127.0.0.0/8, ::1, localhost). */
export function isLoopback(host: string): boolean {
  return host === "localhost" || host === "::1" || host === "[::1]" ||
    /^127\.\d+\.\d+\.\d+$/.test(host);
}
