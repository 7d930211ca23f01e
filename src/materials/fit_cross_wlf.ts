/**
 * Fit seven-parameter Cross-WLF constants to measured (T, γ̇, η) points, e.g. capillary
 * rheometer data measured to ISO 11443, by nonlinear least squares on ln η.
 *
 * @module
 */
import type { CrossWlfViscosity, PressureConvention } from "./viscosity.ts";

/** One measured viscosity point, SI. */
export interface ViscosityPoint {
  /** Melt temperature, K. */
  temperatureK: number;
  /** Shear rate (true, Rabinowitsch-corrected), 1/s (> 0). */
  shearRate: number;
  /** Shear viscosity, Pa·s (> 0). */
  viscosity: number;
  /** Gauge pressure, Pa (≥ 0). Default 0. */
  pressurePa?: number;
}

/** Options of {@link fitCrossWlf}. Every field fixed here is held, not fitted. */
export interface FitCrossWlfOptions {
  /** D2 = T* at p = 0, K, held fixed (e.g. the resin's Tg). */
  d2: number;
  /** Ã2, K, held fixed. Default 51.6 K (Williams, Landel & Ferry (1955) JACS 77:3701). */
  a2?: number;
  /**
   * D3, K/Pa. Held fixed at this value (default 0) unless {@link fitPressureShift} is true,
   * when it is the starting value of a fitted D3.
   */
  d3?: number;
  /** Fit D3 too; needs points at two or more pressures. Default false. */
  fitPressureShift?: boolean;
  /** Pressure convention of A2. Default "A2_shifts_with_pressure". */
  convention?: PressureConvention;
  /** Iteration limit of the Levenberg–Marquardt loop. Default 200. */
  maxIterations?: number;
}

/** Stable failure codes of {@link fitCrossWlf}. */
export type FitCrossWlfFailureCode =
  | "invalid_point"
  | "too_few_points"
  | "too_few_temperatures"
  | "too_few_pressures"
  | "did_not_converge";

/** Outcome of {@link fitCrossWlf}. */
export type FitCrossWlfResult =
  | {
    ok: true;
    /** Fitted constants (n, τ*, D1, A1 and, if asked, D3 free; D2, Ã2 as given). */
    parameters: CrossWlfViscosity;
    /** √(mean of (ln η_model − ln η_measured)²), natural log, dimensionless. */
    rmsLogResidual: number;
    /** Levenberg–Marquardt iterations (Jacobian evaluations) used. */
    iterations: number;
  }
  | { ok: false; code: FitCrossWlfFailureCode; message: string };

/** Scale of the fitted D3 parameter, K/Pa, so it is of order one. */
const D3_SCALE = 1e-7;

interface Layout {
  d2: number;
  a2: number;
  d3Fixed: number;
  fitD3: boolean;
  convention: PressureConvention;
}

interface Unpacked {
  n: number;
  tauStar: number;
  d1: number;
  a1: number;
  d3: number;
}

// Parameter vector q = [logit n, ln τ*, ln D1, ln A1, (D3/1e-7)].
function unpack(q: readonly number[], layout: Layout): Unpacked {
  return {
    n: 1 / (1 + Math.exp(-q[0])),
    tauStar: Math.exp(q[1]),
    d1: Math.exp(q[2]),
    a1: Math.exp(q[3]),
    d3: layout.fitD3 ? q[4] * D3_SCALE : layout.d3Fixed,
  };
}

/** ln η at one point and its gradient with respect to q. */
function logViscosity(
  point: ViscosityPoint,
  params: Unpacked,
  layout: Layout,
  gradient: number[] | undefined,
): number {
  const p = point.pressurePa ?? 0;
  const excess = point.temperatureK - (layout.d2 + params.d3 * p);
  const a2 = layout.convention === "A2_shifts_with_pressure"
    ? layout.a2 + params.d3 * p
    : layout.a2;
  const frozen = excess <= 0;
  const shift = frozen ? 0 : excess / (a2 + excess);
  const ln0 = Math.log(params.d1) - params.a1 * shift;
  const m = 1 - params.n;
  const u = m * (ln0 + Math.log(point.shearRate) - Math.log(params.tauStar));
  // softplus(u) = ln(1 + e^u) and σ(u) = e^u/(1 + e^u), both without overflow.
  const softplus = u > 0 ? u + Math.log1p(Math.exp(-u)) : Math.log1p(Math.exp(u));
  const sigma = u > 0 ? 1 / (1 + Math.exp(-u)) : Math.exp(u) / (1 + Math.exp(u));
  if (gradient) {
    const through0 = 1 - sigma * m; // d ln η / d ln η0
    gradient[0] = sigma * u * params.n; // d/d logit n: dn/dq = n(1 − n), du/dn = −u/(1 − n)
    gradient[1] = sigma * m;
    gradient[2] = through0;
    gradient[3] = -params.a1 * shift * through0;
    if (layout.fitD3) {
      let dLn0dD3 = 0;
      if (!frozen) {
        dLn0dD3 = layout.convention === "A2_shifts_with_pressure"
          ? (params.a1 * p) / (a2 + excess) // a2 + excess does not depend on D3
          : (params.a1 * a2 * p) / ((a2 + excess) * (a2 + excess));
      }
      gradient[4] = dLn0dD3 * through0 * D3_SCALE;
    }
  }
  return ln0 - softplus;
}

/** Solve the small dense system A·x = b by Gaussian elimination with partial pivoting. */
function solveDense(a: number[][], b: number[]): number[] | undefined {
  const n = b.length;
  const m = a.map((row, i) => [...row, b[i]]);
  for (let col = 0; col < n; col++) {
    let pivot = col;
    for (let r = col + 1; r < n; r++) if (Math.abs(m[r][col]) > Math.abs(m[pivot][col])) pivot = r;
    if (!(Math.abs(m[pivot][col]) > 0)) return undefined;
    [m[col], m[pivot]] = [m[pivot], m[col]];
    for (let r = col + 1; r < n; r++) {
      const f = m[r][col] / m[col][col];
      for (let c = col; c <= n; c++) m[r][c] -= f * m[col][c];
    }
  }
  const x = new Array<number>(n).fill(0);
  for (let r = n - 1; r >= 0; r--) {
    let s = m[r][n];
    for (let c = r + 1; c < n; c++) s -= m[r][c] * x[c];
    x[r] = s / m[r][r];
  }
  return x;
}

const distinct = (values: number[]): number[] => {
  const sorted = [...values].sort((a, b) => a - b);
  return sorted.filter((v, i) => i === 0 || v - sorted[i - 1] > 1e-9 * Math.abs(v));
};

/** Starting values from the data: slopes at high rate, plateau levels, Cross half-point. */
function initialGuess(points: readonly ViscosityPoint[], layout: Layout): number[] {
  const temperatures = distinct(points.map((p) => p.temperatureK));
  const groups = temperatures.map((t) =>
    points.filter((p) => Math.abs(p.temperatureK - t) <= 1e-9 * t)
      .sort((a, b) => a.shearRate - b.shearRate)
  );
  const slopes: number[] = [];
  for (const g of groups) {
    if (g.length < 2) continue;
    const a = g[g.length - 2];
    const b = g[g.length - 1];
    const d = Math.log(b.shearRate) - Math.log(a.shearRate);
    if (d > 0) slopes.push((Math.log(b.viscosity) - Math.log(a.viscosity)) / d);
  }
  const meanSlope = slopes.length ? slopes.reduce((s, v) => s + v, 0) / slopes.length : -0.7;
  const n = Math.min(0.9, Math.max(0.1, 1 + meanSlope));

  // ln η0 ≈ ln D1 − A1·f, f = x/(Ã2 + x), x = T − D2; η0 ≈ 1.5 × the largest measured η.
  const fs: number[] = [];
  const ys: number[] = [];
  for (const g of groups) {
    const x = g[0].temperatureK - layout.d2;
    if (x <= 0) continue;
    fs.push(x / (layout.a2 + x));
    ys.push(Math.log(1.5 * Math.max(...g.map((p) => p.viscosity))));
  }
  let a1 = 20;
  let lnD1 = ys.length ? ys[0] + a1 * fs[0] : Math.log(1e12);
  if (fs.length >= 2) {
    const fm = fs.reduce((s, v) => s + v, 0) / fs.length;
    const ym = ys.reduce((s, v) => s + v, 0) / ys.length;
    let sxy = 0;
    let sxx = 0;
    for (let i = 0; i < fs.length; i++) {
      sxy += (fs[i] - fm) * (ys[i] - ym);
      sxx += (fs[i] - fm) * (fs[i] - fm);
    }
    const slope = sxx > 0 ? sxy / sxx : 0;
    if (-slope > 1) a1 = -slope;
    lnD1 = ym + a1 * fm;
  }

  // Cross: (η0·γ̇/τ*)^(1−n) = η0/η − 1, so τ* = η0·γ̇/(η0/η − 1)^(1/(1−n)).
  const taus: number[] = [];
  for (const g of groups) {
    const x = g[0].temperatureK - layout.d2;
    const eta0 = Math.exp(lnD1 - a1 * (x > 0 ? x / (layout.a2 + x) : 0));
    for (const p of g) {
      const ratio = eta0 / p.viscosity - 1;
      if (ratio > 0.2) taus.push(Math.log((eta0 * p.shearRate) / Math.pow(ratio, 1 / (1 - n))));
    }
  }
  taus.sort((a, b) => a - b);
  const lnTau = taus.length ? taus[Math.floor(taus.length / 2)] : Math.log(1e5);
  const q = [Math.log(n / (1 - n)), lnTau, lnD1, Math.log(a1)];
  if (layout.fitD3) q.push(layout.d3Fixed / D3_SCALE);
  return q;
}

/**
 * Fit Cross-WLF constants to measured points by nonlinear least squares on ln η.
 * Free: n, τ*, D1, A1 (and D3 when `fitPressureShift`); fixed: D2 and Ã2 (default 51.6 K), and
 * D3 (default 0) otherwise. Parameters are fitted as logit n, ln τ*, ln D1, ln A1, so n stays in
 * (0, 1) and the others positive. Needs more points than free parameters, at least two
 * temperatures above D2 (and two pressures to fit D3). Model per Cross (1965) J. Colloid Sci.
 * 20:417 and Williams, Landel & Ferry (1955) JACS 77:3701 (IM form per Kennedy, *Flow Analysis of
 * Injection Molds*).
 *
 * @example
 * ```ts
 * const fit = fitCrossWlf(points, { d2: 263.15 });
 * if (fit.ok) console.log(fit.parameters.n, fit.rmsLogResidual);
 * ```
 */
export function fitCrossWlf(
  points: readonly ViscosityPoint[],
  options: FitCrossWlfOptions,
): FitCrossWlfResult {
  if (!(options.d2 > 0) || !Number.isFinite(options.d2)) {
    throw new RangeError(`Cannot fit Cross-WLF: D2 must be > 0 K, got ${options.d2}`);
  }
  const layout: Layout = {
    d2: options.d2,
    a2: options.a2 ?? 51.6,
    d3Fixed: options.d3 ?? 0,
    fitD3: options.fitPressureShift ?? false,
    convention: options.convention ?? "A2_shifts_with_pressure",
  };
  if (!(layout.a2 > 0) || !(layout.d3Fixed >= 0)) {
    throw new RangeError(
      `Cannot fit Cross-WLF: need Ã2 > 0 and D3 ≥ 0, got Ã2=${layout.a2}, D3=${layout.d3Fixed}`,
    );
  }
  const maxIterations = options.maxIterations ?? 200;
  const free = layout.fitD3 ? 5 : 4;

  for (const [i, p] of points.entries()) {
    const pressure = p.pressurePa ?? 0;
    if (
      !(p.temperatureK > 0) || !(p.shearRate > 0) || !(p.viscosity > 0) || !(pressure >= 0) ||
      !Number.isFinite(p.temperatureK + p.shearRate + p.viscosity + pressure)
    ) {
      return {
        ok: false,
        code: "invalid_point",
        message:
          `Point ${i} needs T > 0 K, γ̇ > 0, η > 0 and p ≥ 0, got T=${p.temperatureK}, γ̇=${p.shearRate}, η=${p.viscosity}, p=${pressure}`,
      };
    }
  }
  if (points.length <= free) {
    return {
      ok: false,
      code: "too_few_points",
      message: `Need more than ${free} points to fit ${free} parameters, got ${points.length}`,
    };
  }
  const warm = distinct(
    points.filter((p) => p.temperatureK > layout.d2).map((p) => p.temperatureK),
  );
  if (warm.length < 2) {
    return {
      ok: false,
      code: "too_few_temperatures",
      message:
        `Need points at two or more temperatures above D2 = ${layout.d2} K, got ${warm.length}`,
    };
  }
  if (layout.fitD3 && distinct(points.map((p) => p.pressurePa ?? 0)).length < 2) {
    return {
      ok: false,
      code: "too_few_pressures",
      message: "Fitting D3 needs points at two or more pressures",
    };
  }

  const lnMeasured = points.map((p) => Math.log(p.viscosity));
  const residuals = (q: readonly number[], jacobian?: number[][]): number[] => {
    const params = unpack(q, layout);
    return points.map((p, i) => {
      const row = jacobian ? new Array<number>(free).fill(0) : undefined;
      const r = logViscosity(p, params, layout, row) - lnMeasured[i];
      if (jacobian && row) jacobian[i] = row;
      return r;
    });
  };
  const halfSquares = (r: number[]) => 0.5 * r.reduce((s, v) => s + v * v, 0);

  // Levenberg–Marquardt (Marquardt (1963) SIAM J. Appl. Math. 11:431): solve
  // (JᵀJ + λ·diag(JᵀJ))·δ = −Jᵀr; accept δ if the cost falls (λ ÷ 10), else λ × 10 and retry.
  // Stops when the step or the relative cost decrease is at round-off level, the gradient
  // vanishes, or λ exceeds 1e16 (no descent left at working precision); fails after
  // maxIterations Jacobian evaluations.
  let q = initialGuess(points, layout);
  let r = residuals(q);
  let cost = halfSquares(r);
  let lambda = 1e-3;
  let converged = false;
  let iterations = 0;
  while (iterations < maxIterations && !converged) {
    iterations++;
    const jacobian: number[][] = [];
    r = residuals(q, jacobian);
    cost = halfSquares(r);
    const h = Array.from({ length: free }, () => new Array<number>(free).fill(0));
    const g = new Array<number>(free).fill(0);
    for (let i = 0; i < points.length; i++) {
      const row = jacobian[i];
      for (let a = 0; a < free; a++) {
        g[a] += row[a] * r[i];
        for (let b = 0; b < free; b++) h[a][b] += row[a] * row[b];
      }
    }
    const gradientNorm = Math.max(...g.map(Math.abs));
    if (gradientNorm <= 1e-15 * Math.max(1, Math.sqrt(2 * cost))) {
      converged = true;
      break;
    }
    const diagonalFloor = 1e-12 * Math.max(...h.map((row, i) => row[i]));
    let accepted = false;
    while (!accepted) {
      const damped = h.map((row, a) =>
        row.map((v, b) => (a === b ? v + lambda * Math.max(v, diagonalFloor) : v))
      );
      const step = solveDense(damped, g.map((v) => -v));
      if (step && step.every(Number.isFinite)) {
        const trial = q.map((v, i) => v + step[i]);
        const trialR = residuals(trial);
        const trialCost = halfSquares(trialR);
        if (Number.isFinite(trialCost) && trialCost < cost) {
          const decrease = (cost - trialCost) / Math.max(cost, 1e-300);
          const stepNorm = Math.max(...step.map(Math.abs));
          q = trial;
          r = trialR;
          cost = trialCost;
          lambda = Math.max(lambda / 10, 1e-12);
          accepted = true;
          if (stepNorm < 1e-12 || decrease < 1e-14 || cost < 1e-30) converged = true;
          continue;
        }
      }
      lambda *= 10;
      if (lambda > 1e16) {
        converged = true;
        break;
      }
    }
  }
  if (!converged) {
    return {
      ok: false,
      code: "did_not_converge",
      message: `Levenberg–Marquardt did not converge in ${maxIterations} iterations ` +
        `(rms ln-residual ${Math.sqrt((2 * cost) / points.length).toExponential(3)})`,
    };
  }
  const fitted = unpack(q, layout);
  return {
    ok: true,
    parameters: {
      model: "cross_wlf",
      n: fitted.n,
      tauStar: fitted.tauStar,
      d1: fitted.d1,
      d2: layout.d2,
      d3: fitted.d3,
      a1: fitted.a1,
      a2: layout.a2,
      convention: layout.convention,
    },
    rmsLogResidual: Math.sqrt((2 * cost) / points.length),
    iterations,
  };
}
