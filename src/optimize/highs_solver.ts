/**
 * {@link LpSolver} over HiGHS (npm `highs`, MIT; the HiGHS dual simplex of
 * Huangfu & Hall (2018) Math. Prog. Comp. 10:119, compiled to WebAssembly).
 *
 * Each solve: validate → scale rows, columns and objective by powers of two →
 * write a CPLEX-LP-format string → `highs.solve` → unscale → check feasibility
 * on the unscaled model → certify optimality with the returned duals.
 * Tolerances are tightened (`dual_feasibility_tolerance` 1e-10,
 * `primal_feasibility_tolerance` 1e-9) because with default tolerances and
 * unscaled SI coefficients HiGHS has returned "optimal" answers 1.5–26 % off
 * (measured in our own runs; no published source).
 *
 * Format notes, checked against HiGHS 1.15.1 in this package: the reader
 * rejects the range syntax `l <= expr <= u` in a row, so a two-sided row is
 * written as two rows; free variables are written `x free`; a bound with
 * magnitude ≥ 1e20 is treated as infinite by HiGHS.
 *
 * @module
 */

import highsDefault from "highs";
import type { Highs } from "highs";
import {
  certifyOptimality,
  checkSolution,
  type LinearProgram,
  type LpDuals,
  type LpResult,
  type LpSolveOptions,
  type LpSolver,
  type ScaledProgram,
  scaleProgram,
  trivialInfeasibility,
  unscaleDuals,
  unscaleSolution,
  validateProgram,
} from "./lp_solver.ts";

type HighsSolution = ReturnType<Highs["solve"]>;
type HighsLoader = () => Promise<Highs>;
// The package is CommonJS-typed but Deno loads its ES build, whose default export is the loader;
// the types see the whole module, so the loader is taken from either shape.
const highsLoader: HighsLoader = ((highsDefault as unknown as { default?: HighsLoader }).default ??
  highsDefault) as unknown as HighsLoader;

/** Options of {@link createHighsSolver}. */
export interface HighsSolverOptions {
  /** Scale rows, columns and objective before solving (default true; off only for experiments). */
  scale?: boolean;
}

/** Default wall-clock limit per solve, s. */
export const HIGHS_DEFAULT_TIME_LIMIT_SECONDS = 30;
/** Default accepted violation for {@link checkSolution}, dimensionless. */
export const HIGHS_DEFAULT_FEASIBILITY_TOLERANCE = 1e-7;

/** A CPLEX-LP-format model and, for each written row, the index of the row it came from. */
export interface CplexLpText {
  /** Model text; variable j is named `x<j>`, written rows `r<k>`. */
  text: string;
  /** rowOrigin[k] = index in `lp.rows` of written row k. */
  rowOrigin: Int32Array;
}

/**
 * Write `lp` in CPLEX LP format as read by HiGHS, always as a minimisation
 * (a maximisation is written with negated costs). Names are generated
 * (`x0…`, `r0…`), so no user label reaches the file; numbers are printed
 * with `String(number)`, the shortest text that reads back to the same double.
 * Repeated terms of a row are summed; zero terms are dropped; rows with no
 * finite bound, or no nonzero term, are omitted.
 */
export function formatCplexLp(lp: LinearProgram): CplexLpText {
  const sigma = lp.sense === "minimize" ? 1 : -1;
  const lines: string[] = ["Minimize"];
  lines.push(...wrapTerms(" obj:", lp.variables.map((v, j) => [j, sigma * v.cost] as const), true));
  lines.push("Subject To");
  const origin: number[] = [];
  lp.rows.forEach((row, i) => {
    const merged = new Map<number, number>();
    for (const [j, a] of row.terms) merged.set(j, (merged.get(j) ?? 0) + a);
    const terms = [...merged].filter(([, a]) => a !== 0);
    if (terms.length === 0) return;
    const write = (operator: string, bound: number) => {
      const head = ` r${origin.length}:`;
      origin.push(i);
      const body = wrapTerms(head, terms, false);
      body[body.length - 1] += ` ${operator} ${String(bound)}`;
      lines.push(...body);
    };
    if (row.lower === row.upper) write("=", row.lower);
    else {
      if (Number.isFinite(row.lower)) write(">=", row.lower);
      if (Number.isFinite(row.upper)) write("<=", row.upper);
    }
  });
  lines.push("Bounds");
  lp.variables.forEach((v, j) => {
    const name = `x${j}`;
    const lo = Number.isFinite(v.lower);
    const up = Number.isFinite(v.upper);
    if (lo && up && v.lower === v.upper) lines.push(` ${name} = ${String(v.lower)}`);
    else if (lo && up) lines.push(` ${String(v.lower)} <= ${name} <= ${String(v.upper)}`);
    else if (lo) lines.push(` ${name} >= ${String(v.lower)}`);
    else if (up) lines.push(` -inf <= ${name} <= ${String(v.upper)}`);
    else lines.push(` ${name} free`);
  });
  const integers = lp.variables.flatMap((v, j) => (v.integer ? [`x${j}`] : []));
  if (integers.length > 0) {
    lines.push("General");
    for (let k = 0; k < integers.length; k += 8) {
      lines.push(` ${integers.slice(k, k + 8).join(" ")}`);
    }
  }
  lines.push("End", "");
  return { text: lines.join("\n"), rowOrigin: Int32Array.from(origin) };
}

/** Terms as " + 2.5 x3 - 1 x7 …", continued over several lines of at most 8 terms. */
function wrapTerms(
  head: string,
  terms: ReadonlyArray<readonly [number, number]>,
  keepZeros: boolean,
): string[] {
  const lines: string[] = [];
  let line = head;
  let count = 0;
  for (const [j, a] of terms) {
    if (a === 0 && !keepZeros) continue;
    line += ` ${a < 0 ? "-" : "+"} ${String(Math.abs(a))} x${j}`;
    if (++count % 8 === 0) {
      lines.push(line);
      line = "  ";
    }
  }
  // An empty row body is written as 0 x0 so the reader sees an expression.
  if (count === 0) line += " 0 x0";
  lines.push(line);
  return lines;
}

/**
 * Create a HiGHS-backed {@link LpSolver}. The WASM instance is loaded once and
 * reused; if a solve throws, the instance is re-created and the solve retried
 * once. Defaults: time limit {@link HIGHS_DEFAULT_TIME_LIMIT_SECONDS}, accepted
 * violation {@link HIGHS_DEFAULT_FEASIBILITY_TOLERANCE}.
 *
 * @example
 * ```ts
 * const solver = await createHighsSolver();
 * const r = await solver.solve({
 *   sense: "maximize",
 *   variables: [{ name: "x", lower: 0, upper: 4, cost: 1 }],
 *   rows: [],
 * });
 * // r.status === "optimal", r.x[0] === 4
 * ```
 */
export async function createHighsSolver(options: HighsSolverOptions = {}): Promise<LpSolver> {
  let instance = await highsLoader();
  const scale = options.scale ?? true;

  const run = async (text: string, timeLimit: number): Promise<HighsSolution | Error> => {
    const settings = {
      time_limit: timeLimit,
      primal_feasibility_tolerance: 1e-9,
      dual_feasibility_tolerance: 1e-10,
      small_matrix_value: 1e-12,
    };
    try {
      return instance.solve(text, settings);
    } catch (first) {
      instance = await highsLoader();
      try {
        return instance.solve(text, settings);
      } catch (second) {
        instance = await highsLoader();
        return second instanceof Error ? second : new Error(String(second ?? first));
      }
    }
  };

  const solve = async (lp: LinearProgram, solveOptions: LpSolveOptions = {}): Promise<LpResult> => {
    validateProgram(lp);
    const timeLimit = solveOptions.timeLimitSeconds ?? HIGHS_DEFAULT_TIME_LIMIT_SECONDS;
    if (!(timeLimit > 0)) {
      throw new RangeError(`Cannot solve LP: timeLimitSeconds must be > 0, got ${timeLimit}`);
    }
    const tolerance = solveOptions.feasibilityTolerance ?? HIGHS_DEFAULT_FEASIBILITY_TOLERANCE;
    const crossed = trivialInfeasibility(lp);
    if (crossed !== undefined) return { status: "infeasible", message: crossed };
    if (lp.variables.length === 0) {
      return { status: "optimal", x: new Float64Array(0), objective: 0, maxViolation: 0 };
    }
    const scaled = scale ? scaleProgram(lp) : identityScaling(lp);
    const written = formatCplexLp(scaled.program);
    const solution = await run(written.text, timeLimit);
    if (solution instanceof Error) {
      return {
        status: "error",
        code: "solver_failure",
        message: `HiGHS threw: ${solution.message}`,
      };
    }
    switch (solution.Status) {
      case "Optimal":
        return accept(lp, scaled, written, solution, tolerance);
      case "Infeasible":
        return { status: "infeasible", message: "HiGHS proved the program infeasible" };
      case "Unbounded":
        return { status: "unbounded", message: "HiGHS proved the program unbounded" };
      case "Primal infeasible or unbounded":
        return classifyAmbiguous(scaled.program, timeLimit);
      case "Time limit reached":
        return {
          status: "error",
          code: "time_limit",
          message: `HiGHS stopped at the time limit of ${timeLimit} s`,
        };
      default:
        return {
          status: "error",
          code: "solver_failure",
          message: `HiGHS ended with status "${solution.Status}"`,
        };
    }
  };

  /** Presolve could not tell infeasible from unbounded: a zero-cost solve decides feasibility. */
  const classifyAmbiguous = async (
    program: LinearProgram,
    timeLimit: number,
  ): Promise<LpResult> => {
    const feasibility: LinearProgram = {
      ...program,
      variables: program.variables.map((v) => ({ ...v, cost: 0 })),
    };
    const again = await run(formatCplexLp(feasibility).text, timeLimit);
    if (again instanceof Error) {
      return { status: "error", code: "solver_failure", message: `HiGHS threw: ${again.message}` };
    }
    if (again.Status === "Optimal") {
      return {
        status: "unbounded",
        message: "HiGHS: feasible, and presolve found no finite optimum",
      };
    }
    if (again.Status === "Infeasible") {
      return {
        status: "infeasible",
        message: "HiGHS proved the program infeasible (feasibility solve)",
      };
    }
    return {
      status: "error",
      code: "solver_failure",
      message: `HiGHS could not tell infeasible from unbounded (status "${again.Status}")`,
    };
  };

  return { name: "highs", solve };
}

function identityScaling(lp: LinearProgram): ScaledProgram {
  return {
    program: lp,
    rowFactors: new Float64Array(lp.rows.length).fill(1),
    columnFactors: new Float64Array(lp.variables.length).fill(1),
    objectiveFactor: 1,
  };
}

/** Read x and duals, unscale, then accept only a feasible, certified answer. */
function accept(
  lp: LinearProgram,
  scaled: ScaledProgram,
  written: CplexLpText,
  solution: HighsSolution,
  tolerance: number,
): LpResult {
  const n = lp.variables.length;
  const xScaled = new Float64Array(n);
  const dScaled = new Float64Array(n);
  const columns = solution.Columns as Record<string, { Primal?: number; Dual?: number }>;
  for (let j = 0; j < n; j++) {
    const column = columns[`x${j}`];
    if (column === undefined || typeof column.Primal !== "number") {
      return {
        status: "error",
        code: "solver_failure",
        message: `HiGHS returned no value for variable ${j} (${lp.variables[j].name})`,
      };
    }
    xScaled[j] = column.Primal;
    dScaled[j] = column.Dual ?? 0;
  }
  const piScaled = new Float64Array(lp.rows.length);
  const rows = solution.Rows as Array<{ Dual?: number }>;
  rows.forEach((row, k) => {
    if (k < written.rowOrigin.length) piScaled[written.rowOrigin[k]] += row.Dual ?? 0;
  });
  const x = unscaleSolution(scaled, xScaled);
  if (lp.variables.some((v) => v.integer)) return acceptInteger(lp, x, tolerance);
  const duals: LpDuals = unscaleDuals(scaled, { rows: piScaled, columns: dScaled });
  const check = checkSolution(lp, x);
  const broken = violatedAnswer(check, tolerance);
  if (broken) return broken;
  let certificate = certifyOptimality(lp, x, { duals });
  // HiGHS duals can be polluted by scaling round-off on nearly degenerate rows; an independent
  // estimate from the active set settles it before an answer is rejected.
  if (!certificate.certified) certificate = certifyOptimality(lp, x);
  if (!certificate.certified) {
    return {
      status: "error",
      code: "check_failed",
      message: `HiGHS said optimal but optimality is not certified: relative duality gap ` +
        `${certificate.relativeGap}, dual infeasibility ${certificate.dualInfeasibility}`,
    };
  }
  return {
    status: "optimal",
    x,
    objective: check.objective,
    maxViolation: check.maxViolation,
    duals: certificate.duals,
  };
}

/**
 * A mixed-integer answer: integer columns rounded (after checking they are within 1e-6 of an
 * integer), then feasibility checked on the unscaled model. There are no duals to certify
 * optimality with; HiGHS's branch and bound closes its own gap (default 1e-4 relative).
 */
function acceptInteger(lp: LinearProgram, x: Float64Array, tolerance: number): LpResult {
  for (let j = 0; j < x.length; j++) {
    if (!lp.variables[j].integer) continue;
    const r = Math.round(x[j]);
    if (Math.abs(x[j] - r) > 1e-6) {
      return {
        status: "error",
        code: "check_failed",
        message: `HiGHS said optimal but integer variable ${j} (${lp.variables[j].name}) is ${
          x[j]
        }`,
      };
    }
    x[j] = r === 0 ? 0 : r; // no −0
  }
  const check = checkSolution(lp, x);
  const broken = violatedAnswer(check, tolerance);
  if (broken) return broken;
  return { status: "optimal", x, objective: check.objective, maxViolation: check.maxViolation };
}

/** The `check_failed` result for an answer that breaks the program by more than `tolerance`. */
function violatedAnswer(
  check: ReturnType<typeof checkSolution>,
  tolerance: number,
): LpResult | undefined {
  if (check.maxViolation <= tolerance) return undefined;
  return {
    status: "error",
    code: "check_failed",
    message: `HiGHS said optimal but ${check.worst} is violated by ${check.maxViolation} ` +
      `(relative; tolerance ${tolerance})`,
  };
}
