import assert from "node:assert/strict";
import { HealthMonitor, type ServiceState } from "../../src/page/service_health.ts";

/** A monitor on a hand-driven clock: `tick()` runs the pending timer. */
function rig(answers: boolean[]) {
  const changes: [ServiceState, ServiceState][] = [];
  let pending: { run: () => void; ms: number } | null = null;
  let checks = 0;
  const monitor = new HealthMonitor({
    check: () => Promise.resolve(answers[Math.min(checks++, answers.length - 1)]),
    onChange: (now, before) => changes.push([now, before]),
    upIntervalMs: 5000,
    downIntervalMs: 2000,
    setTimer: (run, ms) => {
      pending = { run, ms };
      return 1;
    },
    clearTimer: () => {
      pending = null;
    },
  });
  return {
    monitor,
    changes,
    get pending() {
      return pending;
    },
    get checks() {
      return checks;
    },
    async tick() {
      const p = pending!;
      pending = null;
      p.run();
      await monitor.checkNow();
    },
  };
}

Deno.test("health: up, then one failed check says down, then the first answer says up", async () => {
  const r = rig([true, false, false, true]);
  await r.monitor.checkNow();
  assert.equal(r.monitor.state, "up");
  assert.equal(r.pending?.ms, 5000, "checks every 5 s while up");
  await r.tick();
  assert.equal(r.monitor.state, "down");
  assert.equal(r.pending?.ms, 2000, "checks every 2 s while down");
  await r.tick();
  assert.equal(r.monitor.state, "down");
  await r.tick();
  assert.equal(r.monitor.state, "up");
  assert.deepEqual(r.changes, [["up", "unknown"], ["down", "up"], ["up", "down"]]);
});

Deno.test("health: a suspicion checks at once, without waiting for the interval", async () => {
  const r = rig([true, false]);
  await r.monitor.checkNow();
  assert.equal(r.checks, 1);
  r.monitor.suspect();
  await r.monitor.checkNow(); // coalesced with the suspicion's check
  assert.equal(r.checks, 2);
  assert.equal(r.monitor.state, "down");
});

Deno.test("health: a check that throws counts as down; stop ends the checks", async () => {
  const monitor = new HealthMonitor({
    check: () => Promise.reject(new Error("refused")),
    onChange: () => {},
    setTimer: () => 1,
    clearTimer: () => {},
  });
  await monitor.checkNow();
  assert.equal(monitor.state, "down");
  monitor.stop();
  await monitor.checkNow();
  assert.equal(monitor.state, "down");
});
