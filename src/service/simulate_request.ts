import { parseScenario } from "../model/parse_scenario.ts";
import { LIBRARY_MATERIAL_IDS, runScenario } from "../network/simulate_scenario.ts";
import { resultJson } from "../report/result_json.ts";
import type { ScenarioIssue } from "../wire/issue.ts";
import type { SimulationResult } from "../wire/result.ts";

/** Options of {@link simulateRequest}. */
export interface SimulateRequestOptions {
  /** Include the fill history in the result. */
  history: boolean;
  /** Time budget, ms. */
  limitMs: number;
  /** Largest network taken, runners + gates + cavities. */
  maxElements: number;
  /** The simulation to run (default {@link runScenario}); a seam for tests. */
  runScenario?: typeof runScenario;
}

/**
 * What a synchronous simulation answers: the result JSON, or an error with its
 * HTTP status. `logDetail` (an engine exception's stack) is for the service's
 * log, never for the client.
 */
export type SimulateReply =
  | { ok: true; result: SimulationResult }
  | {
    ok: false;
    status: number;
    code: string;
    message: string;
    issues?: ScenarioIssue[];
    logDetail?: string;
  };

/**
 * Validate and simulate one scenario within a size and time budget: the body of
 * `POST /api/simulate`, runnable in the request's thread or in a simulation
 * worker. Never throws: bad input is a 400, an engine exception a 422.
 */
export function simulateRequest(input: unknown, options: SimulateRequestOptions): SimulateReply {
  const parsed = parseScenario(input, { materialIds: LIBRARY_MATERIAL_IDS });
  if (!parsed.ok) {
    const n = parsed.issues.length;
    return {
      ok: false,
      status: 400,
      code: "invalid_scenario",
      message: `The scenario has ${n} problem${n === 1 ? "" : "s"}`,
      issues: parsed.issues,
    };
  }
  const scenario = parsed.scenario;
  const elements = scenario.runners.length + scenario.gates.length + scenario.cavities.length;
  if (elements > options.maxElements) {
    return {
      ok: false,
      status: 413,
      code: "scenario_too_large",
      message:
        `A synchronous simulation takes at most ${options.maxElements} runners, gates and cavities; this one has ${elements}. Use a job instead.`,
    };
  }
  // The fill ends itself at the deadline (a stated reason, not an exception through it).
  const deadline = Date.now() + options.limitMs;
  let outcome;
  try {
    outcome = (options.runScenario ?? runScenario)(scenario, { deadline });
  } catch (error) {
    // Any exception from the engine (one it did not turn into a value): the
    // request fails with its message; the stack goes to the service's log.
    const message = error instanceof Error ? error.message : String(error);
    return {
      ok: false,
      status: 422,
      code: "simulation_failed",
      message: `The simulation stopped on an engine error: ${message}`,
      logDetail: error instanceof Error ? (error.stack ?? message) : message,
    };
  }
  if (!outcome.ok) {
    if (outcome.code === "invalid_scenario") {
      return {
        ok: false,
        status: 400,
        code: "invalid_scenario",
        message: "The scenario's network is not valid",
        issues: outcome.issues,
      };
    }
    if (outcome.code === "stopped") {
      return {
        ok: false,
        status: 422,
        code: "simulation_time_limit",
        message: `The simulation did not finish within ${options.limitMs} ms`,
      };
    }
    return { ok: false, status: 422, code: "simulation_failed", message: outcome.message };
  }
  return { ok: true, result: resultJson(outcome.run, { history: options.history }) };
}
