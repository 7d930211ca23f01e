import assert from "node:assert/strict";
import { assertClose } from "./assert_close.ts";
import { parseScenario } from "../src/model/parse_scenario.ts";
import { LIBRARY_MATERIAL_IDS } from "../src/network/simulate_scenario.ts";

const cli = new URL("../src/cli.ts", import.meta.url).pathname;
const config = new URL("../deno.json", import.meta.url).pathname;

async function run(args: string[]) {
  const out = await new Deno.Command(Deno.execPath(), {
    args: ["run", "--config", config, "--allow-read", "--allow-write", cli, ...args],
    stdout: "piped",
    stderr: "piped",
    env: { NO_COLOR: "1" },
  }).output();
  const decode = (b: Uint8Array) => new TextDecoder().decode(b);
  return { code: out.code, stdout: decode(out.stdout), stderr: decode(out.stderr) };
}

async function withCsv<T>(text: string, body: (file: string, dir: string) => Promise<T>) {
  const dir = await Deno.makeTempDir();
  try {
    const file = `${dir}/points.csv`;
    await Deno.writeTextFile(file, text);
    return await body(file, dir);
  } finally {
    await Deno.remove(dir, { recursive: true });
  }
}

interface Constants {
  n: number;
  tauStarPa: number;
  d1PaS: number;
  d2K: number;
  d3KPerPa: number;
  a1: number;
  a2K: number;
}

/**
 * Cross-WLF viscosity written out from the published formulas, independent of src/:
 * Cross (1965) J. Colloid Sci. 20:417: η = η0/(1 + (η0·γ̇/τ*)^(1−n));
 * WLF (Williams, Landel & Ferry (1955) JACS 77:3701) in the seven-parameter injection-molding form:
 * η0 = D1·exp(−A1(T − T*)/(A2 + T − T*)), T* = D2 + D3·p, A2 = Ã2 + D3·p.
 */
function crossWlf(c: Constants, temperatureC: number, shearRate: number, pressureMPa: number) {
  const t = temperatureC + 273.15;
  const p = pressureMPa * 1e6;
  const tStar = c.d2K + c.d3KPerPa * p;
  const a2 = c.a2K + c.d3KPerPa * p;
  const eta0 = c.d1PaS * Math.exp((-c.a1 * (t - tStar)) / (a2 + t - tStar));
  return eta0 / (1 + Math.pow((eta0 * shearRate) / c.tauStarPa, 1 - c.n));
}

/** A generic ABS-like resin, invented for this test (Tg about 100 °C, η0(240 °C) about 2 kPa·s). */
const ABS_LIKE: Constants = {
  n: 0.29,
  tauStarPa: 5.0e4,
  d1PaS: 4.4e9,
  d2K: 373.15,
  d3KPerPa: 0,
  a1: 20,
  a2K: 51.6,
};

function csvFrom(c: Constants, pressuresMPa: readonly number[] | undefined): string {
  const lines = [
    "# generated in the test from the Cross-WLF formula",
    pressuresMPa
      ? "temperature_C,shear_rate_1_s,pressure_MPa,viscosity_Pa_s"
      : "temperature_C,shear_rate_1_s,viscosity_Pa_s",
  ];
  for (const temperatureC of [220, 240, 260, 280]) {
    for (const rate of [50, 200, 1000, 5000, 20000, 50000]) {
      for (const pMPa of pressuresMPa ?? [0]) {
        const eta = crossWlf(c, temperatureC, rate, pMPa).toPrecision(12);
        lines.push(
          pressuresMPa
            ? `${temperatureC},${rate},${pMPa},${eta}`
            : `${temperatureC},${rate},${eta}  # T, rate, eta`,
        );
      }
    }
  }
  return lines.join("\n") + "\n";
}

Deno.test("fit-material recovers known Cross-WLF constants from points made with the formula", async () => {
  await withCsv(csvFrom(ABS_LIKE, undefined), async (file) => {
    const r = await run(["fit-material", file, "--d2", "373.15", "--json"]);
    assert.equal(r.code, 0, r.stderr);
    const out = JSON.parse(r.stdout);
    assert.equal(out.format, "evenfill.material_fit/1");
    assert.equal(out.points, 24);
    const k = out.constants;
    // Points carry 12 significant figures and the model is exact for them: the fit must land on
    // the generating constants far inside 1e-4 (D1 and A1 trade off, hence not tighter).
    assertClose(k.n, ABS_LIKE.n, { rel: 1e-4, what: "n" });
    assertClose(k.tau_star_Pa, ABS_LIKE.tauStarPa, { rel: 1e-4, what: "τ*" });
    assertClose(k.D1_Pa_s, ABS_LIKE.d1PaS, { rel: 1e-4, what: "D1" });
    assertClose(k.A1, ABS_LIKE.a1, { rel: 1e-4, what: "A1" });
    assert.equal(k.D2_K, 373.15, "D2 held as given");
    assert.equal(k.A2_K, 51.6, "Ã2 held at the WLF value");
    assert.equal(k.D3_K_per_Pa, 0, "no pressure column: D3 held at 0");
    assert.deepEqual(out.fitted, ["n", "tau_star_Pa", "D1_Pa_s", "A1"]);
    assert.ok(out.rms_ln_residual < 1e-8, `rms ln-residual ${out.rms_ln_residual}`);
    assert.equal(out.residuals.length, 24);
    // Residual rows: the measured values are the file's, and the first data line is line 3.
    assert.equal(out.residuals[0].line, 3);
    assertClose(out.residuals[0].measured_Pa_s, crossWlf(ABS_LIKE, 220, 50, 0), {
      rel: 1e-11,
      what: "measured η as read",
    });
    for (const row of out.residuals) assert.ok(Math.abs(row.ln_residual) < 1e-7);
  });
});

Deno.test("fit-material fits D3 when the points come at several pressures", async () => {
  const withPressure = { ...ABS_LIKE, d3KPerPa: 1.5e-7 };
  await withCsv(csvFrom(withPressure, [0, 50, 100]), async (file) => {
    const r = await run(["fit-material", file, "--d2", "373.15", "--json"]);
    assert.equal(r.code, 0, r.stderr);
    const out = JSON.parse(r.stdout);
    assert.ok(out.fitted.includes("D3_K_per_Pa"));
    assertClose(out.constants.D3_K_per_Pa, 1.5e-7, { rel: 1e-4, what: "D3" });
    assertClose(out.constants.n, 0.29, { rel: 1e-4, what: "n" });
    assertClose(out.constants.A1, 20, { rel: 1e-4, what: "A1" });
    assertClose(out.residuals[1].pressure_MPa, 50, { rel: 1e-12, what: "pressure as read" });
  });
});

Deno.test("fit-material prints the constants with their units and the residual table", async () => {
  await withCsv(csvFrom(ABS_LIKE, undefined), async (file) => {
    const r = await run(["fit-material", file, "--d2", "373.15"]);
    assert.equal(r.code, 0, r.stderr);
    for (const needle of ["n ", "τ*", "Pa·s", "K/Pa", "K/MPa", "A1", "Ã2", "rms ln-residual"]) {
      assert.ok(r.stdout.includes(needle), `missing ${needle}`);
    }
    assert.match(r.stdout, /D2\s+373\.15 K \(100\.00 °C\)/);
    // One residual row per point: 24 rows that start with their line number.
    const rows = r.stdout.split("\n").filter((l) => /^\s+\d+\s+2[2-8]0\.0\s/.test(l));
    assert.equal(rows.length, 24);
  });
});

Deno.test("fit-material --write gives a material a scenario takes inline", async () => {
  await withCsv(csvFrom(ABS_LIKE, undefined), async (file, dir) => {
    const target = `${dir}/abs_fitted.json`;
    const r = await run([
      "fit-material",
      file,
      "--base",
      "abs-general",
      "--d2",
      "373.15",
      "--write",
      target,
      "--id",
      "my-abs",
      "--json",
    ]);
    assert.equal(r.code, 0, r.stderr);
    const out = JSON.parse(r.stdout);
    assert.equal(out.written, target);
    const material = JSON.parse(await Deno.readTextFile(target));
    assert.equal(material.id, "my-abs");
    assert.deepEqual(material.viscosity, out.constants);
    assert.match(material.source, /fitted by evenfill fit-material/);
    const wire = JSON.parse(await Deno.readTextFile("scenarios/family_four_housing.json"));
    wire.material = material;
    wire.process.melt_temperature_C = 240;
    const parsed = parseScenario(wire, { materialIds: LIBRARY_MATERIAL_IDS });
    assert.ok(parsed.ok, JSON.stringify(!parsed.ok && parsed.issues));
  });
});

Deno.test("fit-material on the invented PP example recovers the constants it was made from", async () => {
  // tests/testdata/README.md: made from n = 0.31, τ* = 2.8e4 Pa, D1 = 2.549e13 Pa·s, D2 = 263.15 K,
  // A1 = 28, Ã2 = 51.6 K, with invented scatter of at most ±1.7 % and 3 significant figures.
  const r = await run([
    "fit-material",
    "tests/testdata/pp_viscosity_points.csv",
    "--base",
    "pp-homo",
    "--json",
  ]);
  assert.equal(r.code, 0, r.stderr);
  const out = JSON.parse(r.stdout);
  assert.equal(out.constants.D2_K, 263.15, "D2 from the base material");
  assert.ok(out.rms_ln_residual < Math.log(1.017), `rms ln-residual ${out.rms_ln_residual}`);
  assertClose(out.constants.n, 0.31, { abs: 0.02, what: "n within the scatter" });
  assertClose(out.constants.A1, 28, { rel: 0.1, what: "A1 within the scatter" });
});

Deno.test("fit-material names the line of every bad CSV row and exits 2", async () => {
  const text = [
    "# comment line",
    "temperature_C,shear_rate_1_s,viscosity_Pa_s",
    "230,100,450",
    "230,abc,200",
    "230,1000",
    "",
    "230,3000,-5",
    "230,,40",
    "250,100,380 # a trailing comment is fine",
  ].join("\n");
  await withCsv(text, async (file) => {
    const r = await run(["fit-material", file, "--d2", "263.15"]);
    assert.equal(r.code, 2, r.stderr);
    assert.match(r.stderr, /4 problems/);
    assert.match(r.stderr, /line 4: shear_rate_1_s "abc" is not a number/);
    assert.match(r.stderr, /line 5: 2 fields, the header has 3/);
    assert.match(r.stderr, /line 7: viscosity_Pa_s must be > 0/);
    assert.match(r.stderr, /line 8: shear_rate_1_s is empty/);
    assert.doesNotMatch(r.stderr, /line (3|9):/);
    assert.doesNotMatch(r.stderr, /at .*\.ts:\d+/, "no stack trace");

    const json = await run(["fit-material", file, "--d2", "263.15", "--json"]);
    assert.equal(json.code, 2);
    const issues = JSON.parse(json.stdout).issues.map((i: { line: number }) => i.line);
    assert.deepEqual(issues, [4, 5, 7, 8]);
  });
});

Deno.test("fit-material refuses a bad header with its line", async () => {
  await withCsv(
    "# rheometer export\n\ntemp,shear_rate_1_s,viscosity_Pa_s\n230,100,450\n",
    async (file) => {
      const r = await run(["fit-material", file, "--d2", "263.15"]);
      assert.equal(r.code, 2);
      assert.match(r.stderr, /line 3: header: unknown column "temp"; missing "temperature_C"/);
    },
  );
  await withCsv("# nothing but comments\n", async (file) => {
    const r = await run(["fit-material", file, "--d2", "263.15"]);
    assert.equal(r.code, 2);
    assert.match(r.stderr, /no header line/);
  });
});

Deno.test("fit-material: points at one temperature cannot give A1 (exit 2)", async () => {
  const rows = [50, 200, 1000, 5000, 20000, 50000].map((rate) =>
    `240,${rate},${crossWlf(ABS_LIKE, 240, rate, 0)}`
  );
  await withCsv(
    ["temperature_C,shear_rate_1_s,viscosity_Pa_s", ...rows].join("\n"),
    async (file) => {
      const r = await run(["fit-material", file, "--d2", "373.15"]);
      assert.equal(r.code, 2);
      assert.match(r.stderr, /two or more temperatures/);
    },
  );
});

Deno.test("fit-material option errors: unknown option 2, bad values and missing inputs 1", async () => {
  await withCsv(csvFrom(ABS_LIKE, undefined), async (file, dir) => {
    const unknown = await run(["fit-material", file, "--d2", "373.15", "--units", "dual"]);
    assert.equal(unknown.code, 2);
    assert.match(unknown.stderr, /unknown option --units/);

    const badD2 = await run(["fit-material", file, "--d2", "warm"]);
    assert.equal(badD2.code, 1);
    assert.match(badD2.stderr, /--d2 must be a temperature in K/);

    const noD2 = await run(["fit-material", file]);
    assert.equal(noD2.code, 1);
    assert.match(noD2.stderr, /--d2 <K> or --base/);

    const badBase = await run(["fit-material", file, "--base", "unobtainium"]);
    assert.equal(badBase.code, 1);
    assert.match(badBase.stderr, /not a library material/);

    const writeNoBase = await run([
      "fit-material",
      file,
      "--d2",
      "373.15",
      "--write",
      `${dir}/m.json`,
    ]);
    assert.equal(writeNoBase.code, 1);
    assert.match(writeNoBase.stderr, /--write needs --base/);

    const missing = await run(["fit-material", `${dir}/nope.csv`, "--d2", "373.15"]);
    assert.equal(missing.code, 1);
    assert.match(missing.stderr, /Cannot read/);

    const noFile = await run(["fit-material"]);
    assert.equal(noFile.code, 1);
  });
});

Deno.test("the help lists fit-material", async () => {
  const r = await run(["help"]);
  assert.equal(r.code, 0);
  assert.match(r.stdout, /evenfill fit-material <points\.csv>/);
});
