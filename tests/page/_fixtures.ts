/**
 * Full wire objects for the page's tests: a change, a step state and an optimization built
 * from a real simulation's result, each parsed by the wire module's zod schema so that a
 * fixture is always a value the service could send.
 *
 * @module
 */
import {
  type Change,
  ChangeSchema,
  type OptimizationResult,
  OptimizationSchema,
  type SimulationResult,
  type StepState,
  StepStateSchema,
} from "../../src/wire/mod.ts";

/** A step's predicted state; `shots` are [cavity, fill %, mass g]. */
export function stepState(
  imbalance_percent: number,
  shots: [string, number, number][] = [],
  overrides: Partial<StepState> = {},
): StepState {
  return StepStateSchema.parse({
    imbalance_percent,
    feed_pressure_peak_MPa: 100,
    runner_volume_cm3: 6,
    limits_met: true,
    first_full_s: shots.length ? 0.8 : null,
    short_shot: shots.map(([cavity, fill_percent, mass_g]) => ({ cavity, fill_percent, mass_g })),
    ...overrides,
  });
}

/** A change of the list (an existing tool's enlarged runner unless overridden). */
export function change(overrides: Partial<Change> = {}): Change {
  return ChangeSchema.parse({
    element: "R4",
    kind: "runner",
    section: "round",
    dimension: "diameter",
    from_mm: 5,
    to_mm: 7,
    from_in: 0.19685,
    to_in: 0.27559,
    cutter: "7 mm",
    action: "enlarge",
    steel_safe: true,
    mold_half: "both",
    step: 1,
    cut_together: false,
    above_start: false,
    above_start_reason: null,
    after_step: stepState(8.592, [], { limits_met: false }),
    ...overrides,
  });
}

/** An optimization of `result` (before and after alike) with the given fields replaced. */
export function optimization(
  result: SimulationResult,
  overrides: Partial<OptimizationResult> = {},
): OptimizationResult {
  return OptimizationSchema.parse({
    format: "evenfill.optimization/1",
    status: "converged",
    reason: "every limit met",
    would_need: [],
    snapping: null,
    simulations: 12,
    slopes: "tangent",
    before: result,
    continuous: {
      imbalance_percent: 1,
      feed_pressure_peak_MPa: 100,
      runner_volume_cm3: 6,
      limits_met: true,
      violations: [],
      sizes: [],
    },
    after: result,
    changes: [],
    changes_start: null,
    iterations: [],
    after_limits_met: true,
    after_violations: [],
    changes_omitted: null,
    front: [],
    ...overrides,
  });
}
