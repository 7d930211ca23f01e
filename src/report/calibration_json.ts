import type { CalibrationOutcome } from "../calibrate/calibrate.ts";
import { CALIBRATION_FORMAT, type CalibrationResult } from "../wire/calibration.ts";

const finite = (x: number) => (Number.isFinite(x) ? x : null);

/** A finished fit on the wire (`evenfill.calibration/1`): snake_case, units in the names. */
export function calibrationJson(
  fit: Extract<CalibrationOutcome, { ok: true }>,
): CalibrationResult {
  return {
    format: CALIBRATION_FORMAT,
    stopped_because: fit.stoppedBecause,
    iterations: fit.iterations,
    simulations: fit.simulations,
    cost_before: finite(fit.costBefore),
    cost_after: finite(fit.costAfter),
    factors: fit.factors.map((f) => ({
      factor: f.factor,
      name: f.name,
      nominal: f.nominal,
      value: finite(f.value),
      standard_error: finite(f.standardError),
      identified: f.identified,
      at_bound: f.atBound,
      bounds: f.bounds,
    })),
    residuals: fit.residuals.map((r) => ({
      shot: r.shot,
      cavity: r.cavity,
      injected_cm3: finite(r.injectedCm3),
      measured_fill_percent: finite(100 * r.measured),
      before_fill_percent: finite(100 * r.before),
      after_fill_percent: finite(100 * r.after),
    })),
    pressure: fit.pressure
      ? {
        measured_MPa: finite(fit.pressure.measuredMPa),
        before_MPa: finite(fit.pressure.beforeMPa),
        after_MPa: finite(fit.pressure.afterMPa),
      }
      : null,
    calibrated: { ...fit.calibrated },
  };
}
