import type { BalanceIteration, BalanceOutcome } from "../optimize/balance.ts";
import { type Change, dualSize, type StepState } from "../optimize/change_list.ts";
import { m3ToCm3, mToInch, mToMm, paToMpa } from "../model/units.ts";
import {
  type Continuous,
  type FrontPointJson,
  type Iteration,
  OPTIMIZATION_FORMAT,
  type OptimizationResult,
  type StepState as StepStateWire,
} from "../wire/optimization.ts";
import { resultJson } from "./result_json.ts";

export { OPTIMIZATION_FORMAT } from "../wire/optimization.ts";

/** One SLP iteration on the wire: the optimization's history and a job's progress. */
export function iterationJson(i: BalanceIteration): Iteration {
  return {
    iteration: i.iteration,
    accepted: i.accepted,
    imbalance_percent: Number(i.imbalancePercent.toFixed(4)),
    feed_pressure_peak_MPa: Number(paToMpa(i.feedPressurePeak).toFixed(3)),
    runner_volume_cm3: Number(m3ToCm3(i.runnerVolume).toFixed(5)),
    simulations: i.simulations,
  };
}

/** Options of {@link optimizationJson}. */
export interface OptimizationJsonOptions {
  /** Include the fill history of the before and after runs (default false). */
  history?: boolean;
  /** The change list in order of work (default: the optimizer's change plan, none if omitted). */
  changes?: Change[];
}

/** The optimization JSON (`evenfill.optimization/1`), with the change list in order of work. */
export function optimizationJson(
  outcome: BalanceOutcome,
  options: OptimizationJsonOptions = {},
): OptimizationResult {
  const changes = options.changes ?? outcome.changes?.steps ?? [];
  const history = options.history ?? false;
  return {
    format: OPTIMIZATION_FORMAT,
    status: outcome.status,
    reason: outcome.reason,
    would_need: outcome.wouldNeed,
    snapping: outcome.snap?.message ?? null,
    simulations: outcome.simulations,
    slopes: outcome.slopes,
    before: resultJson(outcome.before.run, { history }),
    continuous: continuousJson(outcome),
    after: resultJson(outcome.after.run, { history }),
    changes: changes.map((c) => ({
      element: c.element,
      kind: c.kind,
      section: c.section,
      dimension: c.dimension,
      from_mm: Number(mToMm(c.from).toFixed(4)),
      to_mm: Number(mToMm(c.to).toFixed(4)),
      from_in: Number(mToInch(c.from).toFixed(5)),
      to_in: Number(mToInch(c.to).toFixed(5)),
      cutter: c.cutter,
      action: c.action,
      steel_safe: c.steelSafe,
      mold_half: c.moldHalf,
      step: c.step,
      cut_together: c.together,
      above_start: c.aboveStart,
      above_start_reason: c.aboveStartReason ?? null,
      after_step: stepStateJson(c.after),
    })),
    changes_start: outcome.changes?.start ? stepStateJson(outcome.changes.start) : null,
    iterations: outcome.iterations.map((i) => ({
      ...iterationJson(i),
      trust_radius: i.trustRadius,
    })),
    after_limits_met: outcome.after.feasible,
    after_violations: outcome.after.violations.map((v) => v.message),
    changes_omitted: outcome.changesOmitted ?? null,
    front: frontJson(outcome),
  };
}

/** An existing tool's fewest-change front on the wire (masses at the resin's solid density). */
export function frontJson(outcome: BalanceOutcome): FrontPointJson[] {
  const front = outcome.front;
  if (!front) return [];
  const density = outcome.before.run.material.solidDensity;
  return front.points.map((p) => ({
    max_changes: p.changes,
    changed: p.elements,
    imbalance_percent: Number(p.imbalancePercent.toFixed(3)),
    runner_mass_g: Number((p.runnerVolume * density * 1e3).toFixed(3)),
    limits_met: p.feasible,
    change_cost: p.cost,
    chosen: p === front.chosen,
  }));
}

/**
 * A change-list step's predicted state on the wire; the CSV sheet rounds the same way
 * (`change_sheet_csv.ts`), so the two agree number for number.
 */
export function stepStateJson(state: StepState): StepStateWire {
  return {
    imbalance_percent: Number(state.imbalancePercent.toFixed(3)),
    feed_pressure_peak_MPa: Number(paToMpa(state.feedPressurePeak).toFixed(2)),
    runner_volume_cm3: Number(m3ToCm3(state.runnerVolume).toFixed(4)),
    limits_met: state.feasible,
    first_full_s: Number.isFinite(state.firstFullTime)
      ? Number(state.firstFullTime.toFixed(4))
      : null,
    short_shot: state.shortShot.map((c) => ({
      cavity: c.cavity,
      fill_percent: Number((100 * c.fill).toFixed(2)),
      mass_g: Number((1000 * c.mass).toFixed(3)),
    })),
  };
}

/**
 * The continuous optimum (the last design the SLP accepted, before cutter snapping) as it
 * was simulated: its imbalance, peak feed pressure, runner volume, the limits it breaks and
 * its sizes. With `cutters: "continuous"` it is the after design.
 */
export function continuousJson(outcome: BalanceOutcome): Continuous {
  const c = outcome.continuous;
  return {
    imbalance_percent: Number(c.imbalancePercent.toFixed(4)),
    feed_pressure_peak_MPa: Number(paToMpa(c.feedPressurePeak).toFixed(3)),
    runner_volume_cm3: Number(m3ToCm3(c.runnerVolume).toFixed(5)),
    limits_met: c.feasible,
    violations: c.violations.map((v) => v.message),
    sizes: outcome.space.variables.map((v, j) => ({
      element: v.element,
      dimension: v.dimension,
      size_mm: Number(mToMm(c.x[j]).toFixed(4)),
    })),
  };
}

/** A readable before/after, change sheet and stopping reason. */
export function optimizationText(
  outcome: BalanceOutcome,
  changes: Change[] = outcome.changes?.steps ?? [],
): string {
  const b = outcome.before;
  const a = outcome.after;
  const line = (label: string, e: typeof b) =>
    `  ${label.padEnd(10)} imbalance ${
      e.imbalancePercent.toFixed(2).padStart(6)
    } %   peak pressure ${paToMpa(e.feedPressurePeak).toFixed(1).padStart(6)} MPa   runner ${
      m3ToCm3(e.runnerVolume).toFixed(2).padStart(6)
    } cm³   limits ${e.feasible ? "met" : "NOT met"}`;
  const out: string[] = [];
  out.push(
    `evenfill — balancing: ${outcome.space.scenario.name} (mode ${outcome.space.scenario.goals.mode})`,
  );
  // The search's word, and what the sizes printed below do when the two differ.
  const missed = outcome.status === "converged" && !outcome.after.feasible;
  out.push(
    `Status: ${outcome.status}${
      missed ? " (goals not met in cutter sizes)" : ""
    } — ${outcome.reason}`,
  );
  out.push("");
  out.push(line("before", b));
  // The continuous optimum as simulated, when the after design differs from it (cutter sizes).
  const c = outcome.continuous;
  if (c !== a && c.x.some((x, j) => x !== a.x[j])) out.push(line("continuous", c));
  out.push(line("after", a));
  const front = outcome.front?.points ?? [];
  if (front.length > 0) {
    const density = outcome.before.run.material.solidDensity;
    out.push("");
    out.push("Fewest changes (existing tool; continuous sizes, before cutters):");
    for (const p of front) {
      out.push(
        `  ≤ ${String(p.changes).padStart(2)} change${p.changes === 1 ? " " : "s"}  imbalance ${
          p.imbalancePercent.toFixed(2).padStart(6)
        } %   runner ${(p.runnerVolume * density * 1e3).toFixed(1).padStart(7)} g   limits ${
          p.feasible ? "met    " : "NOT met"
        }  ${p === outcome.front?.chosen ? "← chosen " : "         "}${
          p.elements.join(", ") || "none"
        }`,
      );
    }
  }
  if (outcome.snap) out.push(`  cutters: ${outcome.snap.message}`);
  for (const v of a.violations) out.push(`  ! ${v.message}`);
  if (outcome.wouldNeed.length > 0) {
    out.push("");
    out.push("What would make it feasible (linear model, confirm by simulation):");
    for (const w of outcome.wouldNeed) out.push(`  - ${w}`);
  }
  out.push("");
  const newTool = outcome.space.scenario.goals.mode === "new_tool";
  out.push(
    newTool
      ? "Sizes to cut (a new tool: nothing is cut yet; predicted with every size cut)"
      : "Change sheet, in order of work (each step simulated with all before it; " +
        "short shot = each cavity when the first is full)",
  );
  if (changes.length === 0) {
    out.push(
      outcome.changesOmitted ? `  no change plan (${outcome.changesOmitted})` : "  no change",
    );
  }
  out.push(...changeSheetLines(changes, newTool ? undefined : outcome.changes?.start));
  out.push("");
  out.push(`${outcome.iterations.length} SLP iterations, ${outcome.simulations} simulations.`);
  out.push("Cautions");
  for (const c of a.run.cautions) out.push(`  - ${c}`);
  return out.join("\n") + "\n";
}

const ACTION_TEXT: Record<Change["action"], string> = {
  cut_to: "cut to",
  enlarge: "enlarge (steel-safe)",
  add_steel: "ADD STEEL (weld or insert)",
};

/** A state in one line: imbalance, pressure, runner, and each cavity's short shot. */
function stateLines(state: StepState): string[] {
  const shot = state.shortShot.map((c) =>
    `${c.cavity} ${(100 * c.fill).toFixed(1)} % ${(1000 * c.mass).toFixed(3)} g`
  ).join(" · ");
  return [
    `imbalance ${state.imbalancePercent.toFixed(2)} %, ${
      paToMpa(state.feedPressurePeak).toFixed(1)
    } MPa, runner ${m3ToCm3(state.runnerVolume).toFixed(2)} cm³`,
    Number.isFinite(state.firstFullTime)
      ? `short shot at ${state.firstFullTime.toFixed(3)} s: ${shot}`
      : "not simulated",
  ];
}

/**
 * The change sheet's lines: step 0 (today's tool, when given), then each step's changes
 * (the number once for changes cut together), its predicted state and short shot, and
 * the reason when it rises above today's imbalance. A new tool's sizes are "cut to", with
 * the final design's state once at the end.
 */
function changeSheetLines(changes: readonly Change[], start: StepState | undefined): string[] {
  const out: string[] = [];
  const pad = "      ";
  if (start) {
    const [figures, shot] = stateLines(start);
    out.push(`   0. today's tool  → ${figures}`, `${pad}${shot}`);
  }
  changes.forEach((c, k) => {
    const first = k === 0 || changes[k - 1].step !== c.step;
    const last = k === changes.length - 1 || changes[k + 1].step !== c.step;
    const number = first ? `${String(c.step).padStart(2)}.` : "   ";
    const size = c.action === "cut_to"
      ? `${dualSize(c.to)} (drawn ${dualSize(c.from)})`
      : `${dualSize(c.from)} → ${dualSize(c.to)}`;
    out.push(
      `  ${number} ${c.element.padEnd(6)} ${c.kind.padEnd(6)} ${c.section.padEnd(12)} ${
        ACTION_TEXT[c.action]
      } ${c.dimension} ${size}  cutter ${c.cutter}  ${c.moldHalf} half` +
        (c.together && first ? "  (cut together)" : ""),
    );
    if (c.action === "cut_to") return;
    if (last) {
      const [figures, shot] = stateLines(c.after);
      out.push(`${pad}→ ${figures}${c.aboveStart ? "  ABOVE TODAY'S" : ""}`, `${pad}${shot}`);
      if (c.aboveStartReason) out.push(`${pad}! ${c.aboveStartReason}`);
    }
  });
  const final = changes.at(-1);
  if (final?.action === "cut_to") {
    const [figures, shot] = stateLines(final.after);
    out.push(`${pad}→ ${figures}`, `${pad}${shot}`);
  }
  return out;
}
