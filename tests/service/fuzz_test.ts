// Fuzzed request bodies: seeded random mutations of valid scenarios, sent
// through the app's handler. Whatever the body, the answer is a deliberate
// status with the error shape — never a 500.
import assert from "node:assert/strict";
import { mulberry32 } from "../support/seeded_random.ts";
import { testApp } from "./_app.ts";

// deno-lint-ignore no-explicit-any
type Json = any;

const BASES = [
  "../testdata/quick_two_cavity.json",
  "../../scenarios/family_four_housing.json",
  "../../scenarios/hot_drop_eight_caps.json",
  "../../scenarios/two_gate_frame_and_knob.json",
].map((p) => JSON.parse(Deno.readTextFileSync(new URL(p, import.meta.url))));

const WEIRD: unknown[] = [
  0,
  -1,
  1e308,
  -1e-308,
  0.5,
  1e6,
  "",
  "x",
  "12",
  null,
  true,
  false,
  [],
  {},
  [1, 2],
  { a: 1 },
  "S",
  "C1",
  "G1",
  "pbt-unfilled",
  "round",
  "tunnel",
  "hot_drop",
  "steel_safe",
  "🙂",
  "a".repeat(300),
];

/** Every path to a value inside `value` (objects and arrays), root excluded. */
function paths(value: Json, prefix: (string | number)[] = [], out: (string | number)[][] = []) {
  if (value !== null && typeof value === "object") {
    for (const key of Array.isArray(value) ? value.keys() : Object.keys(value)) {
      const p = [...prefix, key];
      out.push(p);
      paths(value[key as keyof typeof value], p, out);
    }
  }
  return out;
}

function mutate(scenario: Json, random: () => number): Json {
  const pick = <T>(xs: readonly T[]): T => xs[Math.floor(random() * xs.length)];
  const all = paths(scenario);
  const path = pick(all);
  const parent = path.slice(0, -1).reduce((v: Json, k) => v[k], scenario);
  const key = path.at(-1)!;
  const value = parent[key];
  const op = random();
  if (op < 0.25 && typeof value === "number") {
    // Valid-looking but extreme sizes: these reach the engine.
    parent[key] = value * pick([0, 0.01, 0.2, 0.9, 1.1, 5, 100, -1]);
  } else if (op < 0.45) {
    parent[key] = structuredClone(pick(WEIRD));
  } else if (op < 0.6) {
    if (Array.isArray(parent)) parent.splice(key as number, 1);
    else delete parent[key];
  } else if (op < 0.7 && Array.isArray(parent)) {
    parent.push(structuredClone(value));
  } else if (op < 0.8 && typeof value === "string") {
    // Swap a reference for another id in the file.
    const ids = all.filter((p) => p.at(-1) === "id").map((p) =>
      p.reduce((v: Json, k) => v[k], scenario)
    );
    parent[key] = ids.length > 0 ? pick(ids) : "";
  } else if (op < 0.9 && value !== null && typeof value === "object" && !Array.isArray(value)) {
    value[pick(["extra", "diameter_mm", "kind", "type", "x"])] = structuredClone(pick(WEIRD));
  } else {
    parent[key] = typeof value === "number" ? String(value) : 42;
  }
  return scenario;
}

function textMutation(text: string, random: () => number): string {
  const at = Math.floor(random() * text.length);
  const r = random();
  if (r < 0.4) return text.slice(0, at);
  if (r < 0.7) {
    return text.slice(0, at) + pick(random, ["{", "]", '"', ",", "\\", "\u0000", "ÿ"]) +
      text.slice(at);
  }
  return text.slice(0, at) + text.slice(at + 1 + Math.floor(random() * 20));
}

function pick<T>(random: () => number, xs: readonly T[]): T {
  return xs[Math.floor(random() * xs.length)];
}

const ALLOWED: Record<string, number[]> = {
  "/api/validate": [200, 400],
  "/api/simulate": [200, 400, 413, 422],
  "/api/scenarios": [201, 400, 413],
  "/api/jobs": [202, 400, 404],
};

Deno.test("fuzz: 3000 mutated scenario bodies never produce a 500", async () => {
  const logged: unknown[] = [];
  const app = await testApp({ simulateLimitMs: 1500, queueLimit: 1_000_000 });
  const seed = 20261202;
  const random = mulberry32(seed);
  const counts: Record<number, number> = {};
  try {
    const handler = (await import("../../src/service/app.ts")).createApp({
      store: app.store,
      config: app.config,
      logError: (_m, e) => logged.push(e),
    });
    for (let n = 0; n < 3000; n++) {
      const baseIndex = n % 4 === 0 ? 0 : Math.floor(random() * BASES.length);
      let scenario = structuredClone(BASES[baseIndex]);
      const rounds = 1 + Math.floor(random() * 3);
      for (let k = 0; k < rounds; k++) scenario = mutate(scenario, random);
      let body = JSON.stringify(scenario);
      if (random() < 0.1) body = textMutation(body, random);
      // The quick scenario's mutations are simulated; the larger demos are
      // validated, saved and submitted (a simulation each would be slow).
      const route = baseIndex === 0
        ? "/api/simulate"
        : pick(random, ["/api/validate", "/api/scenarios", "/api/jobs"]);
      const payload = route === "/api/jobs"
        ? (random() < 0.2 ? body : `{"kind":"optimize","scenario":${body}}`)
        : body;
      const res = await handler(
        new Request(`http://127.0.0.1${route}`, {
          method: "POST",
          body: payload,
          headers: { "content-type": "application/json" },
        }),
      );
      counts[res.status] = (counts[res.status] ?? 0) + 1;
      const text = await res.text();
      const context = `case ${n} (seed ${seed}) ${route}: ${payload.slice(0, 300)}`;
      assert.notEqual(res.status, 500, `${context}\n→ ${text}\n${logged.at(-1)}`);
      assert.ok(ALLOWED[route].includes(res.status), `${context}\n→ ${res.status} ${text}`);
      const json = JSON.parse(text);
      if (res.status >= 400) {
        assert.equal(typeof json.error.code, "string", context);
        assert.ok(!/\n\s+at /.test(text), `no stack trace: ${context}`);
      }
    }
    assert.equal(logged.length, 0);
    // The fuzzer must reach the engine, not only the schema check.
    assert.ok((counts[200] ?? 0) > 100, JSON.stringify(counts));
    assert.ok((counts[400] ?? 0) > 100, JSON.stringify(counts));
  } finally {
    await app.close();
  }
});
