/**
 * {@link LpSolver} over javascript-lp-solver 1.0.3 (npm, MIT), a dense-tableau
 * simplex in plain JavaScript. Kept as a dependency-light fallback and a second
 * opinion; HiGHS is the primary adapter.
 *
 * Limits (measured in our own runs), and what this adapter does:
 * - Its variables are ≥ 0 and its presolve assumes so even for "unrestricted"
 *   ones (it called feasible problems infeasible). Every variable is rewritten:
 *   x = lower + y (finite lower; a finite upper becomes the row y ≤ upper − lower),
 *   x = upper − y (only an upper bound), x = y⁺ − y⁻ (free), a fixed x is a constant.
 * - On degenerate LPs (all constraints active at δ = 0, usual near SLP
 *   convergence) it returned δ = 0 as "optimal" in 15 of 15 cases. Every
 *   answer is therefore checked on the unscaled model ({@link checkSolution})
 *   and certified by duality ({@link certifyOptimality}, duals estimated from
 *   the active set since the library has none); a failure is `check_failed`,
 *   never "optimal".
 * - Its "infeasible" and "unbounded" verdicts come without a certificate and
 *   are passed on as such (the message says so).
 * - `timeout` applies to MIPs only, so `timeLimitSeconds` cannot interrupt a
 *   solve; a solve that overran is still returned if it passes the checks.
 *   Cycling made it hang at 100–200 variables, so programs with more than
 *   `maxVariables` (default 80) transformed variables are refused
 *   (`solver_failure`) instead of risking a hang (a 100-variable degenerate
 *   box LP did not return within 300 s here).
 * - Values are rounded to its `precision` (default 1e-8, absolute) and zero
 *   values are omitted (read as 0), hence the looser default tolerance
 *   {@link SIMPLEX_JS_DEFAULT_FEASIBILITY_TOLERANCE}.
 * - No duals are returned.
 *
 * @module
 */

import * as lpModule from "javascript-lp-solver";
import {
  certifyOptimality,
  checkSolution,
  type LinearProgram,
  type LpResult,
  type LpSolveOptions,
  type LpSolver,
  trivialInfeasibility,
  validateProgram,
} from "../../src/optimize/lp_solver.ts";

/** The runtime shape we use; the package's own types disagree with its runtime export. */
export interface SimplexJsRuntime {
  /** `solver.Solve(model, precision)` of javascript-lp-solver: a flat result object. */
  Solve(model: unknown, precision?: number): Record<string, number | boolean | undefined>;
}
// deno-lint-ignore no-explicit-any
const runtime: SimplexJsRuntime = (lpModule as any).default ?? lpModule;

/** Default accepted violation for {@link checkSolution}, dimensionless (covers the 1e-8 rounding). */
export const SIMPLEX_JS_DEFAULT_FEASIBILITY_TOLERANCE = 1e-6;
/** Default largest transformed program accepted (variables after shifting/splitting). */
export const SIMPLEX_JS_DEFAULT_MAX_VARIABLES = 80;

/** Options of {@link createSimplexJsSolver}. */
export interface SimplexJsSolverOptions {
  /** Refuse programs with more transformed variables than this (default 80). */
  maxVariables?: number;
  /** The library's pivot and rounding precision, absolute (default 1e-8, its own default). */
  precision?: number;
  /** Accepted relative duality gap for the optimality certificate (default 1e-6). */
  optimalityTolerance?: number;
  /** Stand-in for the library (tests of the safeguards); default the real one. */
  library?: SimplexJsRuntime;
}

/** How original variable j is expressed in library variables: x_j = offset + Σ sign·y. */
interface Substitution {
  offset: number;
  parts: Array<{ name: string; sign: number }>;
}

/**
 * Create a javascript-lp-solver-backed {@link LpSolver} (see the module header
 * for its limits and safeguards).
 */
export function createSimplexJsSolver(options: SimplexJsSolverOptions = {}): LpSolver {
  const maxVariables = options.maxVariables ?? SIMPLEX_JS_DEFAULT_MAX_VARIABLES;
  const precision = options.precision ?? 1e-8;
  const optimalityTolerance = options.optimalityTolerance ?? 1e-6;
  const library = options.library ?? runtime;

  const solve = (lp: LinearProgram, solveOptions: LpSolveOptions = {}): Promise<LpResult> => {
    validateProgram(lp);
    if (lp.variables.some((v) => v.integer)) {
      return Promise.resolve({
        status: "error",
        code: "solver_failure",
        message: "the javascript-lp-solver adapter does not take integer variables: use HiGHS",
      });
    }
    const tolerance = solveOptions.feasibilityTolerance ?? SIMPLEX_JS_DEFAULT_FEASIBILITY_TOLERANCE;
    const crossed = trivialInfeasibility(lp);
    if (crossed !== undefined) return Promise.resolve({ status: "infeasible", message: crossed });
    return Promise.resolve(run(lp, tolerance));
  };

  const run = (lp: LinearProgram, tolerance: number): LpResult => {
    const { model, substitutions, count, conflict } = buildModel(lp);
    if (conflict !== undefined) return { status: "infeasible", message: conflict };
    if (count > maxVariables) {
      return {
        status: "error",
        code: "solver_failure",
        message:
          `javascript-lp-solver refused: ${count} variables after shifting/splitting exceed ` +
          `maxVariables ${maxVariables} (it cycles on large LPs)`,
      };
    }
    let raw: Record<string, number | boolean | undefined>;
    try {
      raw = library.Solve(model, precision);
    } catch (error) {
      return {
        status: "error",
        code: "solver_failure",
        message: `javascript-lp-solver threw: ${
          error instanceof Error ? error.message : String(error)
        }`,
      };
    }
    if (raw.feasible !== true) {
      return {
        status: "infeasible",
        message: "javascript-lp-solver reported infeasible (unverified)",
      };
    }
    if (raw.bounded === false) {
      return {
        status: "unbounded",
        message: "javascript-lp-solver reported unbounded (unverified)",
      };
    }
    const x = new Float64Array(lp.variables.length);
    substitutions.forEach((s, j) => {
      let value = s.offset;
      for (const part of s.parts) {
        const y = raw[part.name];
        value += part.sign * (typeof y === "number" ? y : 0);
      }
      x[j] = value;
    });
    const check = checkSolution(lp, x);
    if (!(check.maxViolation <= tolerance)) {
      return {
        status: "error",
        code: "check_failed",
        message: `javascript-lp-solver said optimal but ${check.worst} is violated by ` +
          `${check.maxViolation} (relative; tolerance ${tolerance})`,
      };
    }
    const certificate = certifyOptimality(lp, x, {
      tolerance: optimalityTolerance,
      activeTolerance: Math.max(1e-6, 10 * precision),
    });
    if (!certificate.certified) {
      return {
        status: "error",
        code: "check_failed",
        message: `javascript-lp-solver said optimal but optimality is not certified: relative ` +
          `duality gap ${certificate.relativeGap}, dual infeasibility ${certificate.dualInfeasibility}`,
      };
    }
    return { status: "optimal", x, objective: check.objective, maxViolation: check.maxViolation };
  };

  return { name: "javascript-lp-solver", solve };
}

/** Translate to the library's JSON model with every library variable ≥ 0. */
function buildModel(lp: LinearProgram): {
  model: unknown;
  substitutions: Substitution[];
  count: number;
  conflict?: string;
} {
  let conflict: string | undefined;
  const variables: Record<string, Record<string, number>> = {};
  const constraints: Record<string, { min?: number; max?: number; equal?: number }> = {};
  const substitutions: Substitution[] = lp.variables.map((v, j) => {
    const lo = Number.isFinite(v.lower);
    const up = Number.isFinite(v.upper);
    if (lo && up && v.lower === v.upper) return { offset: v.lower, parts: [] };
    if (lo) {
      const name = `y${j}`;
      variables[name] = { objective: v.cost };
      if (up) {
        constraints[`u${j}`] = { max: v.upper - v.lower };
        variables[name][`u${j}`] = 1;
      }
      return { offset: v.lower, parts: [{ name, sign: 1 }] };
    }
    if (up) {
      variables[`y${j}`] = { objective: -v.cost };
      return { offset: v.upper, parts: [{ name: `y${j}`, sign: -1 }] };
    }
    variables[`p${j}`] = { objective: v.cost };
    variables[`n${j}`] = { objective: -v.cost };
    return { offset: 0, parts: [{ name: `p${j}`, sign: 1 }, { name: `n${j}`, sign: -1 }] };
  });
  lp.rows.forEach((row, i) => {
    if (!Number.isFinite(row.lower) && !Number.isFinite(row.upper)) return;
    const name = `r${i}`;
    let shift = 0;
    let used = false;
    for (const [j, a] of row.terms) {
      const s = substitutions[j];
      shift += a * s.offset;
      for (const part of s.parts) {
        const column = variables[part.name];
        column[name] = (column[name] ?? 0) + part.sign * a;
        used = true;
      }
    }
    if (!used) {
      if (shift < row.lower || shift > row.upper) {
        conflict ??= `row ${i} (${row.name}) holds only fixed variables, value ${shift} outside ` +
          `[${row.lower}, ${row.upper}]`;
      }
      return;
    }
    constraints[name] = row.lower === row.upper ? { equal: row.lower - shift } : {
      ...(Number.isFinite(row.lower) ? { min: row.lower - shift } : {}),
      ...(Number.isFinite(row.upper) ? { max: row.upper - shift } : {}),
    };
  });
  const model = {
    optimize: "objective",
    opType: lp.sense === "minimize" ? "min" : "max",
    constraints,
    variables,
    options: { tolerance: 0, exitOnCycles: true },
  };
  const count = Object.keys(variables).length;
  return conflict === undefined
    ? { model, substitutions, count }
    : { model, substitutions, count, conflict };
}
