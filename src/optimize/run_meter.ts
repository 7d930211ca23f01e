import type { LpSolver } from "./lp_solver.ts";

/**
 * Where an optimization's time goes, for benchmarks: a process-wide tally, per phase of the
 * run, of wall time, design simulations (`evaluateDesign`, counted whoever calls it) and LP
 * solves (through {@link meteredSolver}). The optimizer marks its phases with
 * {@link inPhase}; nothing in the program reads the tally. Phases nest (the gates'
 * relax-and-fix inside a cutter round counts as relax-and-fix); each phase's `seconds` is its
 * own, its inner phases' excluded. One run at a time: the tally does not tell concurrent
 * runs apart.
 *
 * @module
 */

/** The phases an optimization is tallied by (`other`: outside any marked phase). */
export type MeterPhase =
  | "fewest_changes"
  | "continuous"
  | "cutter_nearest"
  | "cutter_rounds"
  | "relax_and_fix"
  | "changes"
  | "other";

/** One phase's tally. */
export interface PhaseTally {
  /** Wall time inside the phase, its inner phases' excluded, s. */
  seconds: number;
  simulations: number;
  /** Wall time of those simulations, s. */
  simulationSeconds: number;
  lpSolves: number;
  /** Wall time of those LP solves, s. */
  lpSeconds: number;
}

const tallies = new Map<MeterPhase, PhaseTally>();
let current: MeterPhase = "other";
let since = performance.now();

function tallyOf(phase: MeterPhase): PhaseTally {
  let tally = tallies.get(phase);
  if (!tally) {
    tallies.set(
      phase,
      tally = { seconds: 0, simulations: 0, simulationSeconds: 0, lpSolves: 0, lpSeconds: 0 },
    );
  }
  return tally;
}

/** Charge the wall time since the last switch to the current phase, then switch to `next`. */
function switchTo(next: MeterPhase): void {
  const now = performance.now();
  tallyOf(current).seconds += (now - since) / 1000;
  since = now;
  current = next;
}

/** Run `work` as phase `phase` (restoring the outer phase after it, even on a throw). */
export async function inPhase<T>(phase: MeterPhase, work: () => Promise<T> | T): Promise<T> {
  const outer = current;
  switchTo(phase);
  try {
    return await work();
  } finally {
    switchTo(outer);
  }
}

/** Count one design simulation of `seconds` in the current phase. */
export function recordSimulation(seconds: number): void {
  const tally = tallyOf(current);
  tally.simulations++;
  tally.simulationSeconds += seconds;
}

/** The tally so far, per phase that saw any time or work. */
export function readMeter(): Map<MeterPhase, PhaseTally> {
  switchTo(current);
  return new Map([...tallies].map(([phase, tally]) => [phase, { ...tally }]));
}

/** Start a new tally (before a run). */
export function resetMeter(): void {
  tallies.clear();
  current = "other";
  since = performance.now();
}

/** `solver` with every solve counted and timed in the current phase. */
export function meteredSolver(solver: LpSolver): LpSolver {
  return {
    name: solver.name,
    async solve(lp, options) {
      const start = performance.now();
      try {
        return await solver.solve(lp, options);
      } finally {
        const tally = tallyOf(current);
        tally.lpSolves++;
        tally.lpSeconds += (performance.now() - start) / 1000;
      }
    },
  };
}
