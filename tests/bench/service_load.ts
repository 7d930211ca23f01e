/**
 * Loopback load benchmark of the service (not a `deno bench` file: it starts
 * real processes). Bounded in request count and time, 127.0.0.1 only.
 *
 *   deno run -A tests/bench/service_load.ts [--requests 4000] [--seconds 15]
 *
 * Reports requests/s for GET /api/health and POST /api/simulate (the 4-cavity
 * demo), health latency while simulations run, jobs/minute through one and two workers (the quick two-cavity test
 * scenario), and the peak RSS of the service, its workers and job processes.
 *
 * @module
 */
import { Proc, startService, waitForJob } from "../e2e/_processes.ts";

const args = new Map<string, string>();
for (let i = 0; i < Deno.args.length; i += 2) {
  args.set(Deno.args[i].replace(/^--/, ""), Deno.args[i + 1]);
}
const REQUESTS = Number(args.get("requests") ?? 4000);
const SECONDS = Number(args.get("seconds") ?? 15);
const JOBS = Number(args.get("jobs") ?? 20);

const demo = await Deno.readTextFile(
  new URL("../../scenarios/family_four_housing.json", import.meta.url),
);
const quick = JSON.parse(
  await Deno.readTextFile(new URL("../testdata/quick_two_cavity.json", import.meta.url)),
);

/** Resident set size of a process, MiB (Linux /proc), or 0 when it is gone. */
async function rssMiB(pid: number): Promise<number> {
  try {
    const status = await Deno.readTextFile(`/proc/${pid}/status`);
    const kb = Number(/VmRSS:\s+(\d+)/.exec(status)?.[1] ?? 0);
    return kb / 1024;
  } catch {
    return 0; // the process has just ended
  }
}

async function childrenOf(pid: number): Promise<number[]> {
  try {
    const text = await Deno.readTextFile(`/proc/${pid}/task/${pid}/children`);
    return text.trim().split(/\s+/).filter((s) => s !== "").map(Number);
  } catch {
    return [];
  }
}

/** Samples peak RSS of the service, its workers (children) and job processes (grandchildren). */
function sampler(servicePid: number) {
  const peak = { service: 0, worker: 0, job: 0 };
  let running = true;
  const loop = (async () => {
    while (running) {
      peak.service = Math.max(peak.service, await rssMiB(servicePid));
      for (const w of await childrenOf(servicePid)) {
        peak.worker = Math.max(peak.worker, await rssMiB(w));
        for (const j of await childrenOf(w)) peak.job = Math.max(peak.job, await rssMiB(j));
      }
      await new Promise((r) => setTimeout(r, 50));
    }
  })();
  return {
    peak,
    stop: async () => {
      running = false;
      await loop;
      return peak;
    },
  };
}

/** Fire `total` requests with `concurrency` in flight, stopping early at the time budget. */
async function load(
  name: string,
  make: () => Promise<Response>,
  total: number,
  concurrency: number,
  seconds: number,
) {
  const latencies: number[] = [];
  let sent = 0;
  let failed = 0;
  const deadline = performance.now() + seconds * 1000;
  const start = performance.now();
  await Promise.all(Array.from({ length: concurrency }, async () => {
    while (sent < total && performance.now() < deadline) {
      sent++;
      const t = performance.now();
      const res = await make();
      await res.arrayBuffer();
      if (!res.ok) failed++;
      latencies.push(performance.now() - t);
    }
  }));
  const elapsed = (performance.now() - start) / 1000;
  latencies.sort((a, b) => a - b);
  const q = (p: number) =>
    latencies[Math.min(latencies.length - 1, Math.floor(p * latencies.length))];
  const row = {
    name,
    requests: latencies.length,
    failed,
    concurrency,
    seconds: Number(elapsed.toFixed(2)),
    rps: Number((latencies.length / elapsed).toFixed(1)),
    p50_ms: Number(q(0.5).toFixed(2)),
    p99_ms: Number(q(0.99).toFixed(2)),
  };
  console.log(JSON.stringify(row));
  return row;
}

async function withService<T>(args: string[], fn: (base: string, proc: Proc) => Promise<T>) {
  const dir = await Deno.makeTempDir({ prefix: "evenfill-bench-" });
  const service = await startService(`${dir}/bench.db`, args);
  try {
    return await fn(service.base, service.proc);
  } finally {
    await service.proc.stop();
    await Deno.remove(dir, { recursive: true });
  }
}

await withService(["--workers", "0"], async (base, proc) => {
  const s = sampler(proc.pid);
  await load("GET /api/health", () => fetch(`${base}/api/health`), REQUESTS, 32, SECONDS);
  await load(
    "POST /api/simulate (family_four_housing)",
    () => fetch(`${base}/api/simulate`, { method: "POST", body: demo }),
    Math.max(50, Math.floor(REQUESTS / 10)),
    4,
    SECONDS,
  );
  // Health checks while simulations run: the simulations are in Web Workers,
  // so the event loop keeps answering.
  const simulations = load(
    "POST /api/simulate, alongside health checks",
    () => fetch(`${base}/api/simulate`, { method: "POST", body: demo }),
    Math.max(50, Math.floor(REQUESTS / 20)),
    4,
    SECONDS,
  );
  await load(
    "GET /api/health while simulations run",
    () => fetch(`${base}/api/health`),
    Math.floor(REQUESTS / 4),
    2,
    SECONDS,
  );
  await simulations;
  const peak = await s.stop();
  console.log(
    JSON.stringify({ name: "rss during HTTP load", service_MiB: Number(peak.service.toFixed(1)) }),
  );
});

for (const workers of [1, 2]) {
  await withService(["--workers", String(workers)], async (base, proc) => {
    // Let the workers register before the clock starts.
    while ((await (await fetch(`${base}/api/health`)).json()).workers.alive < workers) {
      await new Promise((r) => setTimeout(r, 100));
    }
    const s = sampler(proc.pid);
    const start = performance.now();
    const ids: string[] = [];
    for (let i = 0; i < JOBS; i++) {
      const res = await fetch(`${base}/api/jobs`, {
        method: "POST",
        body: JSON.stringify({ kind: "optimize", scenario: quick }),
      });
      ids.push((await res.json()).id);
    }
    let done = 0;
    for (const id of ids) {
      if ((await waitForJob(base, id, undefined, SECONDS * 40_000)).status === "done") done++;
    }
    const minutes = (performance.now() - start) / 60_000;
    const peak = await s.stop();
    console.log(JSON.stringify({
      name: `jobs through ${workers} worker${workers > 1 ? "s" : ""} (quick_two_cavity)`,
      jobs: JOBS,
      done,
      seconds: Number((minutes * 60).toFixed(1)),
      jobs_per_minute: Number((JOBS / minutes).toFixed(1)),
      service_rss_MiB: Number(peak.service.toFixed(1)),
      worker_rss_MiB: Number(peak.worker.toFixed(1)),
      job_process_rss_MiB: Number(peak.job.toFixed(1)),
    }));
  });
}
