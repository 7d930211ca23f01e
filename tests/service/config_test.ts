import assert from "node:assert/strict";
import { ConfigError, isLoopback, loadConfig } from "../../src/service/config.ts";
import { checkExposure } from "../../src/service/main.ts";

Deno.test("config: defaults bind loopback; flags override the environment", () => {
  const defaults = loadConfig([], {});
  assert.equal(defaults.host, "127.0.0.1");
  assert.equal(defaults.port, 8000);
  assert.equal(defaults.dbPath, "data/evenfill.db");
  assert.equal(defaults.workers, 1);
  assert.equal(defaults.enableTestJobs, false);
  const env = { EVENFILL_PORT: "9001", EVENFILL_DB: "/tmp/x.db", EVENFILL_WORKERS: "3" };
  const fromEnv = loadConfig([], env);
  assert.deepEqual([fromEnv.port, fromEnv.dbPath, fromEnv.workers], [9001, "/tmp/x.db", 3]);
  const flagged = loadConfig(["--port=9002", "--workers", "0", "--job-time-limit-s", "1.5"], env);
  assert.deepEqual([flagged.port, flagged.workers, flagged.jobTimeLimitMs], [9002, 0, 1500]);
  assert.equal(loadConfig(["--enable-test-jobs"], {}).enableTestJobs, true);
});

Deno.test("config: hardening limits have defaults, flags and environment variables", () => {
  const defaults = loadConfig([], {});
  assert.deepEqual(
    [defaults.bodyTimeoutMs, defaults.maxEventStreams, defaults.shutdownDeadlineMs],
    [30_000, 32, 10_000],
  );
  assert.equal(defaults.maxJsonDepth, 64);
  assert.deepEqual(defaults.allowedHosts, []);
  const set = loadConfig(["--body-timeout-ms", "500", "--max-event-streams=4"], {
    EVENFILL_SHUTDOWN_DEADLINE_MS: "1500",
    EVENFILL_ALLOWED_HOSTS: "MoldShop.lan, press-7 ,",
  });
  assert.deepEqual([set.bodyTimeoutMs, set.maxEventStreams, set.shutdownDeadlineMs], [
    500,
    4,
    1500,
  ]);
  assert.deepEqual(set.allowedHosts, ["moldshop.lan", "press-7"]);
  assert.throws(() => loadConfig(["--max-event-streams", "0"], {}), ConfigError);
});

Deno.test("config: bad values and unknown flags are refused with a plain message", () => {
  assert.throws(() => loadConfig(["--port", "http"], {}), ConfigError);
  assert.throws(() => loadConfig(["--port", "70000"], {}), ConfigError);
  assert.throws(() => loadConfig(["--workers", "-1"], {}), ConfigError);
  assert.throws(() => loadConfig(["--colour", "red"], {}), /Unknown option --colour/);
  assert.throws(() => loadConfig(["stray"], {}), ConfigError);
});

Deno.test("config: off loopback the service refuses to start without a token", () => {
  assert.ok(isLoopback("127.0.0.1") && isLoopback("localhost") && isLoopback("::1"));
  assert.ok(!isLoopback("0.0.0.0") && !isLoopback("192.168.1.5"));
  assert.equal(checkExposure(loadConfig([], {})), undefined);
  assert.match(checkExposure(loadConfig(["--host", "0.0.0.0"], {})) ?? "", /EVENFILL_TOKEN/);
  assert.equal(
    checkExposure(loadConfig(["--host", "0.0.0.0"], { EVENFILL_TOKEN: "t0ken" })),
    undefined,
  );
});
