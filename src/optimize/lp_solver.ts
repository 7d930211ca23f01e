/**
 * Linear programs as the optimizer sees them, independent of any solver
 * library, plus the checks every adapter applies to a returned answer:
 * feasibility recomputed on the unscaled model (`checkSolution`) and an
 * optimality certificate from LP duality (`certifyOptimality`).
 *
 * Problem form (one sense, sparse rows, two-sided bounds):
 *
 *     minimize or maximize  c·x
 *     subject to            rowLower_i ≤ a_i·x ≤ rowUpper_i
 *                           lower_j ≤ x_j ≤ upper_j        (±Infinity allowed)
 *
 * Duals use the minimisation form min σ·c·x (σ = +1 minimize, −1 maximize):
 * σc − Aᵀπ = d, with π_i ≥ 0 / d_j ≥ 0 when a lower bound is active and ≤ 0 when
 * an upper bound is active (Lagrangian duality, e.g. Chvátal, *Linear
 * Programming*, 1983, ch. 5 and ch. 8 for bounded variables).
 *
 * @module
 */

/** One decision variable: bounds in the variable's own unit, cost per unit. ±Infinity allowed. */
export interface LpVariable {
  /** Label for messages; need not be unique or a valid identifier. */
  name: string;
  /** Lower bound (may be −Infinity). */
  lower: number;
  /** Upper bound (may be +Infinity). */
  upper: number;
  /** Objective coefficient (finite). */
  cost: number;
  /**
   * Integer-valued (a mixed-integer program). Only the HiGHS adapter solves these (branch
   * and bound); its answer is then checked for feasibility and integrality, not certified
   * optimal by duality.
   */
  integer?: boolean;
}

/** One sparse constraint row: lower ≤ Σ coefficient·x[variable] ≤ upper. */
export interface LpRow {
  /** Label for messages. */
  name: string;
  /** Sparse terms as [variable index, coefficient]; a repeated index adds up. */
  terms: ReadonlyArray<readonly [variable: number, coefficient: number]>;
  /** Row lower bound (−Infinity when one-sided). */
  lower: number;
  /** Row upper bound (+Infinity when one-sided); lower = upper is an equality. */
  upper: number;
}

/** A linear program in the form described in the module header. */
export interface LinearProgram {
  /** Objective sense. */
  sense: "minimize" | "maximize";
  /** Variables, indexed by position. */
  variables: readonly LpVariable[];
  /** Constraint rows. */
  rows: readonly LpRow[];
}

/** Dual values in the minimisation-form convention of the module header. */
export interface LpDuals {
  /** π, one per row. */
  rows: Float64Array;
  /** Reduced costs d = σc − Aᵀπ, one per variable. */
  columns: Float64Array;
}

/** Outcome of a solve; expected failures are values, never throws. */
export type LpResult =
  | {
    status: "optimal";
    /** Primal solution on the unscaled model. */
    x: Float64Array;
    /** c·x recomputed from `x` (not the solver's figure). */
    objective: number;
    /** Worst violation as measured by {@link checkSolution}. */
    maxViolation: number;
    /** Duals when the adapter has them (HiGHS), minimisation-form convention. */
    duals?: LpDuals;
  }
  | { status: "infeasible" | "unbounded"; message: string }
  | {
    status: "error";
    code: "time_limit" | "solver_failure" | "check_failed";
    message: string;
  };

/** Options common to every adapter. */
export interface LpSolveOptions {
  /** Wall-clock limit in seconds (default: adapter-specific, see the adapter). */
  timeLimitSeconds?: number;
  /**
   * Largest violation {@link checkSolution} may report for an answer to be
   * accepted, dimensionless (relative, see there). Default: adapter-specific.
   */
  feasibilityTolerance?: number;
}

/** A solver behind our interface; optimizer code sees only this. */
export interface LpSolver {
  /** Short adapter name for logs ("highs", "javascript-lp-solver"). */
  readonly name: string;
  /** Solve `lp`; resolves to a result value, rejects only on programmer errors. */
  solve(lp: LinearProgram, options?: LpSolveOptions): Promise<LpResult>;
}

/**
 * Throw `RangeError` for a malformed program: NaN anywhere, infinite cost or
 * coefficient, a term pointing at no variable, a bound of +Infinity below or
 * −Infinity above. Crossed finite bounds (lower > upper) are not malformed:
 * the program is infeasible, see {@link trivialInfeasibility}.
 */
export function validateProgram(lp: LinearProgram): void {
  if (lp.sense !== "minimize" && lp.sense !== "maximize") {
    throw new RangeError(
      `Invalid linear program: sense must be minimize or maximize, got ${lp.sense}`,
    );
  }
  const n = lp.variables.length;
  lp.variables.forEach((v, j) => {
    const where = `variable ${j} (${v.name})`;
    if (!Number.isFinite(v.cost)) {
      throw new RangeError(
        `Invalid linear program: cost of ${where} must be finite, got ${v.cost}`,
      );
    }
    checkBounds(v.lower, v.upper, where);
  });
  lp.rows.forEach((row, i) => {
    const where = `row ${i} (${row.name})`;
    checkBounds(row.lower, row.upper, where);
    for (const [j, a] of row.terms) {
      if (!Number.isInteger(j) || j < 0 || j >= n) {
        throw new RangeError(`Invalid linear program: ${where} refers to variable ${j}, have ${n}`);
      }
      if (!Number.isFinite(a)) {
        throw new RangeError(`Invalid linear program: ${where} has coefficient ${a}`);
      }
    }
  });
}

function checkBounds(lower: number, upper: number, where: string): void {
  if (Number.isNaN(lower) || Number.isNaN(upper)) {
    throw new RangeError(`Invalid linear program: ${where} has a NaN bound`);
  }
  if (lower === Infinity || upper === -Infinity) {
    throw new RangeError(
      `Invalid linear program: ${where} has bounds [${lower}, ${upper}] that admit no finite value`,
    );
  }
}

/**
 * Message naming the first variable or row whose bounds cross (lower > upper),
 * or an empty row whose bounds exclude 0; `undefined` if none. Adapters return
 * such programs as infeasible without calling a library.
 */
export function trivialInfeasibility(lp: LinearProgram): string | undefined {
  for (let j = 0; j < lp.variables.length; j++) {
    const v = lp.variables[j];
    if (v.lower > v.upper) {
      return `variable ${j} (${v.name}) has lower ${v.lower} > upper ${v.upper}`;
    }
  }
  for (let i = 0; i < lp.rows.length; i++) {
    const r = lp.rows[i];
    if (r.lower > r.upper) return `row ${i} (${r.name}) has lower ${r.lower} > upper ${r.upper}`;
    if (r.terms.every(([, a]) => a === 0) && (r.lower > 0 || r.upper < 0)) {
      return `row ${i} (${r.name}) has no terms and bounds [${r.lower}, ${r.upper}] exclude 0`;
    }
  }
  return undefined;
}

/** Result of {@link checkSolution}. */
export interface SolutionCheck {
  /** Worst relative violation (0 when feasible); Infinity when x has a non-finite entry. */
  maxViolation: number;
  /** c·x on the unscaled model. */
  objective: number;
  /** Which bound or row is worst, for messages; undefined when nothing is violated. */
  worst?: string;
}

/**
 * Recompute feasibility and objective of `x` on the unscaled model.
 *
 * Violations are relative so that they do not depend on units: a variable's
 * excess over its bound is divided by max(1, |bound|); a row's excess is
 * divided by its term scale max_j |a_ij|·max(1, |x_j|) (1 for an empty row),
 * i.e. it is measured as if the row were scaled to largest |coefficient| = 1.
 */
export function checkSolution(lp: LinearProgram, x: Float64Array): SolutionCheck {
  if (x.length !== lp.variables.length) {
    throw new RangeError(
      `Cannot check solution: x has ${x.length} entries, program has ${lp.variables.length} variables`,
    );
  }
  let maxViolation = 0;
  let worst: string | undefined;
  let objective = 0;
  const note = (violation: number, where: string) => {
    if (violation > maxViolation || Number.isNaN(violation)) {
      maxViolation = Number.isNaN(violation) ? Infinity : violation;
      worst = where;
    }
  };
  lp.variables.forEach((v, j) => {
    const xj = x[j];
    if (!Number.isFinite(xj)) {
      note(Infinity, `variable ${j} (${v.name}) is ${xj}`);
      return;
    }
    objective += v.cost * xj;
    if (xj < v.lower) {
      note(
        (v.lower - xj) / Math.max(1, Math.abs(v.lower)),
        `lower bound of variable ${j} (${v.name})`,
      );
    }
    if (xj > v.upper) {
      note(
        (xj - v.upper) / Math.max(1, Math.abs(v.upper)),
        `upper bound of variable ${j} (${v.name})`,
      );
    }
  });
  lp.rows.forEach((row, i) => {
    const { activity, scale } = rowActivity(row, x);
    if (activity < row.lower) {
      note((row.lower - activity) / scale, `lower bound of row ${i} (${row.name})`);
    }
    if (activity > row.upper) {
      note((activity - row.upper) / scale, `upper bound of row ${i} (${row.name})`);
    }
  });
  return worst === undefined ? { maxViolation, objective } : { maxViolation, objective, worst };
}

function rowActivity(row: LpRow, x: Float64Array): { activity: number; scale: number } {
  let activity = 0;
  let scale = 0;
  for (const [j, a] of row.terms) {
    activity += a * x[j];
    scale = Math.max(scale, Math.abs(a) * Math.max(1, Math.abs(x[j])));
  }
  return { activity, scale: scale > 0 ? scale : 1 };
}

/** A program scaled by {@link scaleProgram}, with the factors to map answers back. */
export interface ScaledProgram {
  /** The scaled program: a'_ij = r_i·a_ij·s_j, c'_j = φ·c_j·s_j, x_j = s_j·x'_j. */
  program: LinearProgram;
  /** r_i, powers of two. */
  rowFactors: Float64Array;
  /** s_j, powers of two (all 1 when column scaling is off). */
  columnFactors: Float64Array;
  /** φ > 0, a power of two (1 when objective scaling is off). */
  objectiveFactor: number;
}

/** Options of {@link scaleProgram}. */
export interface ScaleOptions {
  /** Also scale columns after rows (default true). */
  columns?: boolean;
  /** Also scale the objective to largest |c'_j| ≈ 1 (default true). */
  objective?: boolean;
}

/**
 * Equilibrate a program: each row to largest |coefficient| ≈ 1, then each
 * column, then the objective. Factors are the powers of two nearest to the
 * exact ones, so scaling and unscaling introduce no rounding error and the
 * largest magnitude lands in [1/√2, √2) instead of exactly 1. Common practice
 * (geometric/equilibration scaling), e.g. Tomlin (1975) Math. Programming 9:
 * "On scaling linear programming problems" — from memory.
 */
export function scaleProgram(lp: LinearProgram, options: ScaleOptions = {}): ScaledProgram {
  const n = lp.variables.length;
  const m = lp.rows.length;
  const rowFactors = new Float64Array(m);
  const columnFactors = new Float64Array(n).fill(1);
  lp.rows.forEach((row, i) => {
    let big = 0;
    for (const [, a] of row.terms) big = Math.max(big, Math.abs(a));
    rowFactors[i] = powerOfTwoInverse(big);
  });
  if (options.columns ?? true) {
    const big = new Float64Array(n);
    lp.rows.forEach((row, i) => {
      for (const [j, a] of row.terms) big[j] = Math.max(big[j], Math.abs(a * rowFactors[i]));
    });
    for (let j = 0; j < n; j++) {
      // An integer column keeps its unit: scaling would change which values are integers.
      columnFactors[j] = lp.variables[j].integer ? 1 : powerOfTwoInverse(big[j]);
    }
  }
  let bigCost = 0;
  lp.variables.forEach((
    v,
    j,
  ) => (bigCost = Math.max(bigCost, Math.abs(v.cost * columnFactors[j]))));
  const objectiveFactor = (options.objective ?? true) ? powerOfTwoInverse(bigCost) : 1;
  const program: LinearProgram = {
    sense: lp.sense,
    variables: lp.variables.map((v, j) => ({
      name: v.name,
      lower: v.lower / columnFactors[j],
      upper: v.upper / columnFactors[j],
      cost: v.cost * columnFactors[j] * objectiveFactor,
      ...(v.integer ? { integer: true } : {}),
    })),
    rows: lp.rows.map((row, i) => ({
      name: row.name,
      terms: row.terms.map(([j, a]) => [j, a * rowFactors[i] * columnFactors[j]] as const),
      lower: row.lower * rowFactors[i],
      upper: row.upper * rowFactors[i],
    })),
  };
  return { program, rowFactors, columnFactors, objectiveFactor };
}

function powerOfTwoInverse(magnitude: number): number {
  if (!(magnitude > 0) || !Number.isFinite(magnitude)) return 1;
  return Math.pow(2, -Math.round(Math.log2(magnitude)));
}

/** Map a solution x' of the scaled program back: x_j = s_j·x'_j. */
export function unscaleSolution(scaled: ScaledProgram, xScaled: Float64Array): Float64Array {
  return xScaled.map((y, j) => y * scaled.columnFactors[j]);
}

/** Map duals of the scaled program back: π_i = r_i·π'_i/φ, d_j = d'_j/(φ·s_j). */
export function unscaleDuals(scaled: ScaledProgram, duals: LpDuals): LpDuals {
  const phi = scaled.objectiveFactor;
  return {
    rows: duals.rows.map((p, i) => (p * scaled.rowFactors[i]) / phi),
    columns: duals.columns.map((d, j) => d / (phi * scaled.columnFactors[j])),
  };
}

/** Options of {@link certifyOptimality}. */
export interface CertifyOptions {
  /** Duals to test (minimisation-form convention); estimated from the active set when omitted. */
  duals?: LpDuals;
  /**
   * Accepted duality gap relative to Σ_j |c_j|·max(1, |x_j|), and accepted
   * dual infeasibility relative to max_j |c_j|; dimensionless, default 1e-7.
   */
  tolerance?: number;
  /**
   * A bound counts as active when x is within this relative distance of it
   * (same measure as {@link checkSolution}); used only to estimate duals.
   * Default 1e-6.
   */
  activeTolerance?: number;
}

/** Result of {@link certifyOptimality}. */
export interface OptimalityCertificate {
  /** True when gap and dual infeasibility are both within tolerance. */
  certified: boolean;
  /** Σ |complementary products| relative to the objective scale (≥ 0). */
  relativeGap: number;
  /** Largest multiplier sitting on an infinite bound, relative to max |c_j|. */
  dualInfeasibility: number;
  /** The duals that were tested. */
  duals: LpDuals;
}

/**
 * Certify that a feasible `x` is optimal by LP duality: with reduced costs
 * d = σc − Aᵀπ, the duality gap of (x, π) equals Σ_i π_i⁺(a_i·x − l_i) +
 * π_i⁻(u_i − a_i·x) + Σ_j d_j⁺(x_j − l_j) + d_j⁻(u_j − x_j); weak duality makes
 * x optimal when that sum is 0 and no multiplier sits on an infinite bound
 * (Chvátal, *Linear Programming*, 1983, ch. 5, complementary slackness).
 *
 * Without given duals, π is estimated by non-negative least squares over the
 * generators of the active constraints (Lawson & Hanson, *Solving Least Squares
 * Problems*, 1974, ch. 23): σc is fitted by a non-negative combination of +a_i
 * (row at its lower bound), −a_i (at its upper bound), +e_j / −e_j (variable at
 * its lower / upper bound). An optimal x always admits an exact fit (KKT), so a
 * misfit shows up as a gap or a dual infeasibility. Cost O(n·k²) per NNLS step
 * with k active constraints; intended for programs of a few hundred variables.
 */
export function certifyOptimality(
  lp: LinearProgram,
  x: Float64Array,
  options: CertifyOptions = {},
): OptimalityCertificate {
  const tolerance = options.tolerance ?? 1e-7;
  const sigma = lp.sense === "minimize" ? 1 : -1;
  const duals = options.duals ?? estimateDuals(lp, x, options.activeTolerance ?? 1e-6);
  const n = lp.variables.length;
  const reduced = new Float64Array(n);
  lp.variables.forEach((v, j) => (reduced[j] = sigma * v.cost));
  lp.rows.forEach((row, i) => {
    for (const [j, a] of row.terms) reduced[j] -= a * duals.rows[i];
  });
  let costMax = 0;
  let objectiveScale = 0;
  lp.variables.forEach((v, j) => {
    costMax = Math.max(costMax, Math.abs(v.cost));
    objectiveScale += Math.abs(v.cost) * Math.max(1, Math.abs(x[j]));
  });
  if (costMax === 0) {
    return { certified: true, relativeGap: 0, dualInfeasibility: 0, duals };
  }
  let gap = 0;
  let infeasibility = 0;
  // A multiplier of either sign pairs with the bound on its side; an infinite bound there is
  // dual infeasibility (weighted by the multiplier's scale), never a gap term.
  const account = (
    multiplier: number,
    value: number,
    lower: number,
    upper: number,
    weight: number,
  ) => {
    if (multiplier > 0) {
      if (Number.isFinite(lower)) gap += multiplier * Math.abs(value - lower);
      else infeasibility = Math.max(infeasibility, multiplier * weight);
    } else if (multiplier < 0) {
      if (Number.isFinite(upper)) gap += -multiplier * Math.abs(upper - value);
      else infeasibility = Math.max(infeasibility, -multiplier * weight);
    }
  };
  lp.rows.forEach((row, i) => {
    let activity = 0;
    let big = 0;
    for (const [j, a] of row.terms) {
      activity += a * x[j];
      big = Math.max(big, Math.abs(a));
    }
    account(duals.rows[i], activity, row.lower, row.upper, big);
  });
  lp.variables.forEach((v, j) => account(reduced[j], x[j], v.lower, v.upper, 1));
  const relativeGap = gap / objectiveScale;
  const dualInfeasibility = infeasibility / costMax;
  return {
    certified: relativeGap <= tolerance && dualInfeasibility <= tolerance,
    relativeGap,
    dualInfeasibility,
    duals: { rows: duals.rows, columns: reduced },
  };
}

/** Estimate row duals from the active set by NNLS (see {@link certifyOptimality}). */
function estimateDuals(lp: LinearProgram, x: Float64Array, activeTolerance: number): LpDuals {
  const n = lp.variables.length;
  const sigma = lp.sense === "minimize" ? 1 : -1;
  const target = new Float64Array(n);
  lp.variables.forEach((v, j) => (target[j] = sigma * v.cost));
  // Each generator: a dense column in R^n plus where its weight goes (row i with sign, or none).
  const generators: Float64Array[] = [];
  const owners: Array<{ row: number; factor: number } | undefined> = [];
  lp.rows.forEach((row, i) => {
    const { activity, scale } = rowActivity(row, x);
    let big = 0;
    for (const [, a] of row.terms) big = Math.max(big, Math.abs(a));
    if (big === 0) return;
    const column = new Float64Array(n);
    for (const [j, a] of row.terms) column[j] += a / big;
    if (Number.isFinite(row.lower) && activity - row.lower <= activeTolerance * scale) {
      generators.push(column);
      owners.push({ row: i, factor: 1 / big });
    }
    if (Number.isFinite(row.upper) && row.upper - activity <= activeTolerance * scale) {
      generators.push(column.map((c) => -c));
      owners.push({ row: i, factor: -1 / big });
    }
  });
  lp.variables.forEach((v, j) => {
    for (const side of [1, -1]) {
      const bound = side === 1 ? v.lower : v.upper;
      if (!Number.isFinite(bound)) continue;
      if (side * (x[j] - bound) <= activeTolerance * Math.max(1, Math.abs(bound))) {
        const column = new Float64Array(n);
        column[j] = side;
        generators.push(column);
        owners.push(undefined);
      }
    }
  });
  const weights = nonNegativeLeastSquares(generators, target);
  const rows = new Float64Array(lp.rows.length);
  weights.forEach((w, k) => {
    const owner = owners[k];
    if (owner !== undefined) rows[owner.row] += w * owner.factor;
  });
  const columns = new Float64Array(target);
  lp.rows.forEach((row, i) => {
    for (const [j, a] of row.terms) columns[j] -= a * rows[i];
  });
  return { rows, columns };
}

/**
 * min ‖G·λ − b‖₂ subject to λ ≥ 0, G given by columns. Lawson–Hanson active-set
 * algorithm (Lawson & Hanson 1974, ch. 23, Algorithm NNLS); stops when no
 * inactive column has a positive gradient beyond 1e-12·scale, or after 3k outer
 * steps.
 */
function nonNegativeLeastSquares(columns: Float64Array[], b: Float64Array): Float64Array {
  const k = columns.length;
  const lambda = new Float64Array(k);
  if (k === 0) return lambda;
  const passive = new Uint8Array(k);
  let bNorm = 0;
  for (const v of b) bNorm = Math.max(bNorm, Math.abs(v));
  const threshold = 1e-12 * Math.max(bNorm, 1e-300);
  const residual = new Float64Array(b);
  const dot = (u: Float64Array, v: Float64Array) => {
    let s = 0;
    for (let t = 0; t < u.length; t++) s += u[t] * v[t];
    return s;
  };
  const updateResidual = () => {
    residual.set(b);
    for (let q = 0; q < k; q++) {
      if (lambda[q] === 0) continue;
      const g = columns[q];
      for (let t = 0; t < g.length; t++) residual[t] -= lambda[q] * g[t];
    }
  };
  for (let outer = 0; outer < 3 * k; outer++) {
    let best = -1;
    let bestGradient = threshold;
    for (let q = 0; q < k; q++) {
      if (passive[q]) continue;
      const w = dot(columns[q], residual);
      if (w > bestGradient) {
        bestGradient = w;
        best = q;
      }
    }
    if (best < 0) break;
    passive[best] = 1;
    for (let inner = 0; inner <= k; inner++) {
      const set = [...passive.keys()].filter((q) => passive[q]);
      const s = leastSquares(set.map((q) => columns[q]), b);
      if (s.every((v) => v > 0)) {
        set.forEach((q, t) => (lambda[q] = s[t]));
        break;
      }
      let alpha = 1;
      set.forEach((q, t) => {
        if (s[t] <= 0) alpha = Math.min(alpha, lambda[q] / (lambda[q] - s[t]));
      });
      set.forEach((q, t) => {
        lambda[q] += alpha * (s[t] - lambda[q]);
        if (lambda[q] <= 1e-14 * bNorm) {
          lambda[q] = 0;
          passive[q] = 0;
        }
      });
    }
    updateResidual();
  }
  return lambda;
}

/**
 * Least-squares solution of [columns]·s ≈ b by Householder QR (Golub & Van Loan,
 * *Matrix Computations*, 3rd ed., 1996, §5.3); a column whose pivot falls
 * below 1e-12 of the largest is treated as dependent and gets s = 0.
 */
function leastSquares(columns: Float64Array[], b: Float64Array): Float64Array {
  const p = columns.length;
  const n = b.length;
  const a = columns.map((c) => new Float64Array(c));
  const y = new Float64Array(b);
  const diagonal = new Float64Array(p);
  const rank = Math.min(p, n);
  for (let c = 0; c < rank; c++) {
    const v = a[c];
    let norm = 0;
    for (let t = c; t < n; t++) norm += v[t] * v[t];
    norm = Math.sqrt(norm);
    if (norm === 0) continue;
    const alpha = v[c] > 0 ? -norm : norm;
    v[c] -= alpha;
    let vv = 0;
    for (let t = c; t < n; t++) vv += v[t] * v[t];
    const apply = (u: Float64Array) => {
      let s = 0;
      for (let t = c; t < n; t++) s += v[t] * u[t];
      const f = (2 * s) / vv;
      for (let t = c; t < n; t++) u[t] -= f * v[t];
    };
    for (let d = c + 1; d < p; d++) apply(a[d]);
    apply(y);
    diagonal[c] = alpha;
  }
  let biggest = 0;
  for (const d of diagonal) biggest = Math.max(biggest, Math.abs(d));
  const s = new Float64Array(p);
  for (let c = rank - 1; c >= 0; c--) {
    if (Math.abs(diagonal[c]) <= 1e-12 * biggest) continue;
    let sum = y[c];
    for (let d = c + 1; d < rank; d++) sum -= a[d][c] * s[d];
    s[c] = sum / diagonal[c];
  }
  return s;
}
