import type { ScenarioRun } from "../network/simulate_scenario.ts";
import {
  kgToG,
  kToC,
  m3ToCm3,
  mToInch,
  mToMm,
  nToKn,
  nToUsTonForce,
  paToMpa,
  paToPsi,
} from "../model/units.ts";

/** Which unit system a text report shows: metric, or metric with inch/psi/US ton beside it. */
export type UnitSystem = "metric" | "dual";

/** Options of {@link textReport}. */
export interface TextReportOptions {
  /** Default "metric". */
  units?: UnitSystem;
}

const pad = (s: string, n: number) => s.padEnd(n);
const lpad = (s: string, n: number) => s.padStart(n);
const fmt = (x: number, digits = 1) => (Number.isFinite(x) ? x.toFixed(digits) : "—");

/** A compact, readable report of one simulation, units shown on every number. */
export function textReport(run: ScenarioRun, options: TextReportOptions = {}): string {
  const dual = options.units === "dual";
  const { fill, scenario, material, network } = run;
  const pressure = (pa: number) =>
    dual ? `${fmt(paToMpa(pa))} MPa (${fmt(paToPsi(pa), 0)} psi)` : `${fmt(paToMpa(pa))} MPa`;
  const force = (n: number) =>
    dual ? `${fmt(nToKn(n), 0)} kN (${fmt(nToUsTonForce(n), 1)} US ton)` : `${fmt(nToKn(n), 0)} kN`;
  const length = (
    m: number,
  ) => (dual ? `${fmt(mToMm(m), 2)} mm (${fmt(mToInch(m), 3)} in)` : `${fmt(mToMm(m), 2)} mm`);
  const lines: string[] = [];
  lines.push(`evenfill — fill simulation: ${scenario.name}`);
  lines.push(
    `Material: ${material.name} (${material.id})${
      material.generic ? " — generic library data, replace with your grade's" : ""
    }`,
  );
  lines.push(
    `Injection ${
      fmt(m3ToCm3(fill.injectionRate), 1)
    } cm³/s, switchover at ${scenario.process.switchover_percent} % ` +
      `(t = ${fmt(fill.switchoverTime, 3)} s), thermal model: ${
        run.process.isothermal ? "isothermal" : "full"
      }`,
  );
  lines.push("");
  lines.push(
    `Fill time ${fmt(fill.fillTime, 3)} s   imbalance ${
      fmt(fill.imbalancePercent, 2)
    } % (target ≤ ${scenario.goals.max_imbalance_percent} %)`,
  );
  const machine = scenario.machine.max_injection_pressure_MPa * 1e6;
  lines.push(
    `Peak injection pressure ${pressure(fill.feedPressurePeak)} = ${
      fmt((fill.feedPressurePeak / machine) * 100, 0)
    } % of the press's ${pressure(machine)}`,
  );
  lines.push(
    `Peak clamp force ${force(fill.clampForcePeak)} = ${
      fmt((nToKn(fill.clampForcePeak) / scenario.machine.clamp_force_kN) * 100, 0)
    } % of ${force(scenario.machine.clamp_force_kN * 1e3)} (filling only; packing adds)`,
  );
  lines.push(
    `Shot ${fmt(kgToG(run.shotMass), 1)} g; cold runner ${
      fmt(m3ToCm3(network.coldRunnerVolume), 2)
    } cm³ = ${fmt(kgToG(run.runnerMass), 1)} g (${
      fmt((run.runnerMass / run.shotMass) * 100, 1)
    } % of the shot)`,
  );
  lines.push("");
  lines.push("Cavities");
  lines.push(
    `  ${pad("id", 6)}${pad("name", 14)}${lpad("fill s", 8)}${lpad("% at 1st full", 15)}${
      lpad("gate", 6)
    }${lpad("shear 1/s", 11)}${lpad("limit", 9)}${lpad("gate ΔP MPa", 13)}${lpad("mass g", 9)}`,
  );
  const limit = scenario.goals.gate_shear_limit_1_s ?? material.maxShearRate;
  fill.cavities.forEach((c, i) => {
    lines.push(
      `  ${pad(c.id, 6)}${pad(c.name.slice(0, 13), 14)}${lpad(fmt(c.fillTime, 3), 8)}${
        lpad(fmt(c.fillAtFirstFull * 100, 1), 15)
      }${lpad(c.gateAtPeak, 6)}${lpad(fmt(c.gateShearRatePeak, 0), 11)}${lpad(fmt(limit, 0), 9)}${
        lpad(fmt(paToMpa(c.gatePressureDrop), 1), 13)
      }${lpad(fmt(kgToG(run.partMasses[i]), 1), 9)}`,
    );
  });
  lines.push("");
  lines.push("Elements at switchover");
  lines.push(
    `  ${pad("id", 10)}${pad("kind", 8)}${lpad("ΔP MPa", 9)}${lpad("flow cm³/s", 12)}${
      lpad("peak shear 1/s", 16)
    }${lpad("volume cm³", 12)}${lpad("melt °C", 9)}${lpad("frozen mm", 11)}`,
  );
  for (const e of fill.elements) {
    lines.push(
      `  ${pad(e.id, 10)}${pad(e.kind, 8)}${lpad(fmt(paToMpa(e.pressureDropAtSwitchover), 2), 9)}${
        lpad(fmt(m3ToCm3(e.flowAtSwitchover), 2), 12)
      }${lpad(fmt(e.wallShearRatePeak, 0), 16)}${lpad(fmt(m3ToCm3(e.volume), 3), 12)}${
        lpad(fmt(kToC(e.temperatureAtSwitchover), 1), 9)
      }${lpad(fmt(mToMm(e.frozenLayerAtSwitchover), 3), 11)}`,
    );
  }
  lines.push("");
  lines.push("Pressure drop along each flow path at switchover (feed → front; a full cavity holds");
  lines.push("what is left of the feed pressure at its gate)");
  for (const p of fill.paths) {
    const total = p.pressureDrops.reduce((a, b) => a + b, 0);
    const parts = p.elements.map((id, k) => `${id} ${fmt(paToMpa(p.pressureDrops[k]), 1)}`).join(
      " → ",
    );
    const cavity = fill.cavities.find((c) => c.id === p.cavity);
    const full = cavity !== undefined && cavity.fillTime <= fill.switchoverTime;
    const end = full
      ? `  = ${pressure(total)}; full, holding ${pressure(cavity.inletPressureAtSwitchover)}`
      : `  = ${pressure(total)} to the front`;
    lines.push(`  ${p.cavity}: ${parts}${end}`);
  }
  lines.push("");
  lines.push(
    `Freeze and cooling (Menges et al. closed forms): parts ${
      fmt(run.freeze.partCoolingTime, 1)
    } s, cold runner ${
      fmt(run.freeze.runnerCoolingTime, 1)
    } s; cooling set by ${run.freeze.cycleSetBy}`,
  );
  for (const f of run.freeze.entries) {
    lines.push(
      `  ${pad(f.kind, 7)}${pad(f.id, 10)}${lpad(length(f.size), dual ? 24 : 10)}  freeze ${
        lpad(fmt(f.freezeTime, 2), 6)
      } s  cool ${lpad(fmt(f.coolingTime, 2), 6)} s`,
    );
  }
  lines.push("");
  if (run.warnings.length > 0) {
    lines.push("Warnings");
    for (const w of run.warnings) {
      lines.push(`  [${w.severity}] ${w.code}${w.element ? ` (${w.element})` : ""}: ${w.message}`);
    }
    lines.push("");
  }
  lines.push("Cautions");
  for (const c of run.cautions) lines.push(`  - ${c}`);
  const d = fill.diagnostics;
  lines.push("");
  lines.push(
    `Solver: ${d.steps} steps (${d.rejectedSteps} rejected), ${d.events} events, ${d.hydraulicSolves} network solves, ` +
      `≤ ${d.newtonIterationsMax} Newton iterations, worst mass residual ${
        d.worstMassResidual.toExponential(1)
      }, ` +
      `mass balance error ${d.massBalanceError.toExponential(1)}; ${d.message}`,
  );
  return lines.join("\n") + "\n";
}
