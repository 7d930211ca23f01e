/**
 * How a long optimizer run is stopped from outside: an `AbortSignal` (a cancel) and a
 * wall-clock deadline, checked between simulations. A stopped run ends with its best
 * design so far and a stated reason; nothing is thrown through the engine.
 *
 * @module
 */

/** Options every long optimizer step takes. */
export interface StopOptions {
  /** Once aborted, the step ends after its current simulation, reporting what it has. */
  signal?: AbortSignal;
  /** Wall-clock instant (ms since the epoch, as `Date.now()`) past which the step ends. */
  deadline?: number;
}

/** Why a step ended early. */
export type StopReason = "cancelled" | "deadline";

/** Whether the step must end now, and why (undefined: go on). */
export function stopReason(o: StopOptions): StopReason | undefined {
  if (o.signal?.aborted) return "cancelled";
  if (o.deadline !== undefined && Date.now() > o.deadline) return "deadline";
  return undefined;
}

/** The words a report uses for a stop reason. */
export function stopText(reason: StopReason): string {
  return reason === "cancelled" ? "cancelled by request" : "stopped at its time limit";
}

/**
 * One turn of the event loop. The simulations are synchronous; an optimizer awaits this
 * between them so that timers (a job process's poll of its cancel flag, which aborts the
 * signal) run during a long optimization.
 */
export function nextTurn(): Promise<void> {
  return new Promise((resolve) => setTimeout(resolve, 0));
}
