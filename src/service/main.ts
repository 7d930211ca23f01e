/**
 * `deno task start`: open the store, serve the app on 127.0.0.1 (by default),
 * and start the service's own worker processes. SIGTERM / SIGINT stop
 * accepting requests, close event streams, wait for open requests up to the
 * shutdown deadline (stuck handlers and slow clients do not keep the process
 * alive), stop the workers gracefully (their jobs go back to the queue), and
 * close the store.
 *
 * @module
 */
import { SqliteStore } from "../store/sqlite_store.ts";
import { createApp, SERVICE_STORE_BUSY_TIMEOUT_MS } from "./app.ts";
import { ConfigError, isLoopback, loadConfig, type ServiceConfig } from "./config.ts";
import { SimulatePool } from "./simulate_pool.ts";
import { WorkerPool } from "./worker_pool.ts";

/** Refuse unsafe configurations: off loopback, a token is required. */
export function checkExposure(config: ServiceConfig): string | undefined {
  if (!isLoopback(config.host) && config.token === undefined) {
    return `Refusing to listen on ${config.host} without EVENFILL_TOKEN: write endpoints need a bearer token off loopback.`;
  }
  return undefined;
}

/** Run the service until SIGTERM/SIGINT; returns the exit code. */
export async function main(args: readonly string[]): Promise<number> {
  let config: ServiceConfig;
  try {
    config = loadConfig(args);
  } catch (error) {
    if (error instanceof ConfigError) {
      console.error(`evenfill service: ${error.message}`);
      return 1;
    }
    throw error;
  }
  const refusal = checkExposure(config);
  if (refusal) {
    console.error(`evenfill service: ${refusal}`);
    return 1;
  }
  const store = SqliteStore.open(config.dbPath, { busyTimeoutMs: SERVICE_STORE_BUSY_TIMEOUT_MS });
  const shutdown = new AbortController();
  const simulatePool = new SimulatePool(config.simulateWorkers, {
    queueTimeoutMs: Math.max(5000, 2 * config.simulateLimitMs),
  });
  const handler = createApp({ store, config, simulatePool, shutdownSignal: shutdown.signal });
  const server = Deno.serve({
    hostname: config.host,
    port: config.port,
    onListen: ({ hostname, port }) => {
      // One machine-readable line: tests and scripts read the port from it.
      console.log(JSON.stringify({ event: "listening", hostname, port, db: config.dbPath }));
    },
  }, handler);
  const pool = new WorkerPool(config);
  pool.start(config.workers);

  const { promise: stopping, resolve } = Promise.withResolvers<string>();
  const signals: Deno.Signal[] = ["SIGTERM", "SIGINT"];
  const onSignal = (signal: Deno.Signal) => () => resolve(signal);
  const listeners = signals.map((s) => [s, onSignal(s)] as const);
  for (const [s, l] of listeners) Deno.addSignalListener(s, l);
  const signal = await stopping;
  console.log(JSON.stringify({ event: "stopping", signal }));
  shutdown.abort();
  let deadline: ReturnType<typeof setTimeout> | undefined;
  const finished = await Promise.race([
    server.shutdown().then(() => true),
    new Promise<false>((resolve) => {
      deadline = setTimeout(() => resolve(false), config.shutdownDeadlineMs);
    }),
  ]);
  clearTimeout(deadline);
  if (!finished) {
    console.log(JSON.stringify({
      event: "shutdown_deadline",
      message: `requests still open after ${config.shutdownDeadlineMs} ms are dropped`,
    }));
  }
  simulatePool.close();
  await pool.stop();
  store.close();
  for (const [s, l] of listeners) Deno.removeSignalListener(s, l);
  console.log(JSON.stringify({ event: "stopped" }));
  return 0;
}

if (import.meta.main) Deno.exit(await main(Deno.args));
