/**
 * The `fit-material` command of the CLI: read measured viscosity points from a CSV file, fit
 * seven-parameter Cross-WLF constants ({@link fitCrossWlf}), print them with units and the fit's
 * residuals (or JSON), and optionally write a material block that a scenario takes as its inline
 * `material`. Exit codes as the rest of the CLI: 0 done; 1 usage or file error (no file, an
 * unreadable one, a bad option value); 2 the CSV has problems (listed with line numbers) or the
 * points cannot determine the constants; 3 the fit failed or its constants fall outside the
 * material schema.
 *
 * @module
 */
import { fitCrossWlf } from "./materials/fit_cross_wlf.ts";
import { materialById, materialIds } from "./materials/library.ts";
import type { CrossWlfViscosity } from "./materials/viscosity.ts";
import { viscosityAt } from "./materials/viscosity.ts";
import { parseViscosityCsv, type ViscosityCsvPoint } from "./materials/viscosity_csv.ts";
import { type CrossWlfInput, MaterialSchema, type MaterialWire } from "./model/material_schema.ts";
import { kToC, paToMpa } from "./model/units.ts";

/** The options `fit-material` takes (names without `--`). */
export const FIT_MATERIAL_OPTIONS: readonly string[] = [
  "json",
  "write",
  "d2",
  "base",
  "id",
  "name",
];

/** The options of `fit-material` that take a value. */
export const FIT_MATERIAL_VALUED: readonly string[] = ["write", "d2", "base", "id", "name"];

/** Usage lines of `fit-material` for the CLI's help. */
export const FIT_MATERIAL_USAGE =
  `  evenfill fit-material <points.csv> [--base <library id>] [--d2 <K>] [--json]
                        [--write <material.json> [--id <id>] [--name <name>]]
                        (Cross-WLF from measured viscosity points; CSV columns temperature_C,
                        shear_rate_1_s, viscosity_Pa_s, optional pressure_MPa; # comments)`;

/** A fitted point beside its measurement. */
interface Residual {
  point: ViscosityCsvPoint;
  fitted: number;
}

/** The viscosity block of the material wire format for fitted constants. */
function wireViscosity(v: CrossWlfViscosity): CrossWlfInput {
  return {
    model: "cross_wlf",
    n: v.n,
    tau_star_Pa: v.tauStar,
    D1_Pa_s: v.d1,
    D2_K: v.d2,
    D3_K_per_Pa: v.d3,
    A1: v.a1,
    A2_K: v.a2,
    convention: v.convention,
  };
}

function fitJson(
  file: string,
  fit: { parameters: CrossWlfViscosity; rmsLogResidual: number; iterations: number },
  fitted: readonly string[],
  residuals: readonly Residual[],
  written: string | undefined,
) {
  return {
    format: "evenfill.material_fit/1",
    file,
    points: residuals.length,
    iterations: fit.iterations,
    constants: wireViscosity(fit.parameters),
    fitted,
    rms_ln_residual: fit.rmsLogResidual,
    residuals: residuals.map((r) => ({
      line: r.point.line,
      temperature_C: kToC(r.point.temperatureK),
      shear_rate_1_s: r.point.shearRate,
      pressure_MPa: paToMpa(r.point.pressurePa ?? 0),
      measured_Pa_s: r.point.viscosity,
      fitted_Pa_s: r.fitted,
      ln_residual: Math.log(r.fitted / r.point.viscosity),
    })),
    written: written ?? null,
  };
}

function fitText(
  file: string,
  fit: { parameters: CrossWlfViscosity; rmsLogResidual: number; iterations: number },
  fitted: readonly string[],
  residuals: readonly Residual[],
  written: string | undefined,
): string {
  const v = fit.parameters;
  const held = (name: string) => (fitted.includes(name) ? "fitted" : "held");
  const temperatures = new Set(residuals.map((r) => r.point.temperatureK)).size;
  const lines = [
    `evenfill — Cross-WLF fit to ${file} (${residuals.length} points at ${temperatures} temperatures, ${fit.iterations} iterations)`,
    "",
    constantLine("n", v.n.toFixed(4), "power-law index, dimensionless", held("n")),
    constantLine("τ*", `${sig(v.tauStar)} Pa`, "critical shear stress", held("tau_star_Pa")),
    constantLine("D1", `${sig(v.d1)} Pa·s`, "zero-shear viscosity at T*", held("D1_Pa_s")),
    constantLine(
      "D2",
      `${v.d2.toFixed(2)} K (${kToC(v.d2).toFixed(2)} °C)`,
      "T* at p = 0",
      held("D2_K"),
    ),
    constantLine(
      "D3",
      `${sig(v.d3)} K/Pa (${sig(v.d3 * 1e6)} K/MPa)`,
      "pressure shift of T*",
      held("D3_K_per_Pa"),
    ),
    constantLine("A1", sig(v.a1), "WLF constant, dimensionless", held("A1")),
    constantLine("Ã2", `${sig(v.a2)} K`, "WLF constant", held("A2_K")),
    "",
    `  rms ln-residual ${fit.rmsLogResidual.toPrecision(3)} (about ${
      (100 * (Math.exp(fit.rmsLogResidual) - 1)).toFixed(1)
    } % in η)`,
    "",
    "  line     T °C      γ̇ 1/s    p MPa   η measured Pa·s   η fitted Pa·s   fitted/measured − 1",
  ];
  for (const r of residuals) {
    lines.push(
      `  ${String(r.point.line).padStart(4)}  ${
        kToC(r.point.temperatureK).toFixed(1).padStart(7)
      }  ${sig(r.point.shearRate).padStart(9)}  ${
        paToMpa(r.point.pressurePa ?? 0).toFixed(1).padStart(7)
      }  ${sig(r.point.viscosity).padStart(16)}  ${sig(r.fitted).padStart(14)}  ${
        `${(100 * (r.fitted / r.point.viscosity - 1)).toFixed(2)} %`.padStart(20)
      }`,
    );
  }
  if (written) {
    lines.push("", `Material written to ${written}: give it as a scenario's "material".`);
  }
  return lines.join("\n");
}

/** Run `fit-material` on a CSV file with the CLI's parsed options; returns the exit code. */
export async function fitMaterialCommand(
  file: string | undefined,
  flags: ReadonlyMap<string, string | true>,
): Promise<number> {
  if (!file) {
    console.error(`usage:\n${FIT_MATERIAL_USAGE}`);
    return 1;
  }
  const asJson = flags.has("json");
  const value = (name: string): string | undefined => {
    const v = flags.get(name);
    return typeof v === "string" ? v : undefined;
  };
  for (const name of FIT_MATERIAL_VALUED) {
    if (flags.get(name) === true) {
      console.error(`--${name} needs a value`);
      return 1;
    }
  }
  const baseId = value("base");
  const base = baseId === undefined ? undefined : materialById(baseId);
  if (baseId !== undefined && base === undefined) {
    console.error(`--base: "${baseId}" is not a library material (${materialIds().join(", ")})`);
    return 1;
  }
  let d2: number;
  const d2Text = value("d2");
  if (d2Text !== undefined) {
    d2 = Number(d2Text);
    if (!(d2 > 0) || !Number.isFinite(d2)) {
      console.error(`--d2 must be a temperature in K (> 0), got ${d2Text}`);
      return 1;
    }
  } else if (base?.viscosity.model === "cross_wlf") d2 = base.viscosity.D2_K;
  else {
    console.error(
      "fit-material needs D2, the Cross-WLF reference temperature held fixed (usually the resin's glass transition): give --d2 <K> or --base <library id>",
    );
    return 1;
  }
  const write = value("write");
  if (write !== undefined && base === undefined) {
    console.error(
      "--write needs --base <library id>: the CSV gives the viscosity only; densities, thermal and processing data come from the base material",
    );
    return 1;
  }
  if ((flags.has("id") || flags.has("name")) && write === undefined) {
    console.error("--id and --name name the written material: give --write <material.json> too");
    return 1;
  }

  let text: string;
  try {
    text = await Deno.readTextFile(file);
  } catch (error) {
    console.error(`Cannot read ${file}: ${(error as Error).message}`);
    return 1;
  }
  const read = parseViscosityCsv(text);
  if (!read.ok) {
    if (asJson) console.log(JSON.stringify({ ok: false, file, issues: read.issues }, null, 2));
    else {
      console.error(`${file}: ${read.issues.length} problem${read.issues.length === 1 ? "" : "s"}`);
      for (const i of read.issues) {
        console.error(`  ${i.line > 0 ? `line ${i.line}` : "file"}: ${i.message}`);
      }
    }
    return 2;
  }
  const pressures = new Set(read.points.map((p) => p.pressurePa ?? 0));
  const fitPressureShift = pressures.size >= 2;
  const heldD3 = base?.viscosity.model === "cross_wlf" ? base.viscosity.D3_K_per_Pa ?? 0 : 0;
  const fit = fitCrossWlf(read.points, { d2, d3: fitPressureShift ? 0 : heldD3, fitPressureShift });
  if (!fit.ok) {
    const dataProblem = fit.code !== "did_not_converge";
    if (asJson) {
      console.log(JSON.stringify({ ok: false, file, code: fit.code, message: fit.message }));
    } else {console.error(
        `${file}: ${dataProblem ? "" : "the fit failed: "}${fit.message} [${fit.code}]`,
      );}
    return dataProblem ? 2 : 3;
  }
  const fitted = [
    "n",
    "tau_star_Pa",
    "D1_Pa_s",
    "A1",
    ...(fitPressureShift ? ["D3_K_per_Pa"] : []),
  ];
  const residuals = read.points.map((point) => ({
    point,
    fitted: viscosityAt({ viscosity: fit.parameters }, point.shearRate, {
      temperature: point.temperatureK,
      pressure: point.pressurePa ?? 0,
    }),
  }));

  if (write !== undefined && base !== undefined) {
    const id = value("id") ?? `${base.id}-fitted`;
    const material: MaterialWire = {
      ...base,
      id,
      name: value("name") ?? `${base.name}, viscosity fitted to ${basename(file)}`,
      source: `Cross-WLF (n, τ*, D1, A1${
        fitPressureShift ? ", D3" : ""
      }) fitted by evenfill fit-material to ${
        basename(file)
      } (${read.points.length} points, rms ln-residual ${
        fit.rmsLogResidual.toPrecision(3)
      }); D2 ${d2} K held; every other property from the library's "${base.id}": ${base.source}`
        .slice(0, 1000),
      viscosity: wireViscosity(fit.parameters),
    };
    const checked = MaterialSchema.safeParse(material);
    if (!checked.success) {
      console.error(
        `The fitted material is outside the material schema, not written: ${
          checked.error.issues.map((i) => `${i.path.join(".")}: ${i.message}`).join("; ")
        }`,
      );
      return 3;
    }
    try {
      await Deno.writeTextFile(write, JSON.stringify(material, null, 2) + "\n");
    } catch (error) {
      console.error(`Cannot write ${write}: ${(error as Error).message}`);
      return 1;
    }
  }
  if (asJson) {
    console.log(JSON.stringify(fitJson(file, fit, fitted, residuals, write), null, 2));
  } else console.log(fitText(file, fit, fitted, residuals, write));
  return 0;
}

/** Four significant figures, exponential only for very large or small magnitudes. */
function sig(x: number): string {
  const magnitude = Math.abs(x);
  if (x !== 0 && (magnitude >= 1e6 || magnitude < 1e-3)) return x.toExponential(3);
  return String(Number(x.toPrecision(4)));
}

function constantLine(name: string, value: string, what: string, how: string): string {
  return `  ${name.padEnd(3)}  ${value.padEnd(30)} ${what} (${how})`;
}

function basename(path: string): string {
  return path.slice(path.lastIndexOf("/") + 1);
}
