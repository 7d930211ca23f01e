import type { Scenario } from "../model/scenario_schema.ts";
import type { FeedNetwork } from "../network/feed_network.ts";

/**
 * The simulations an optimization has already run, so that a design it reaches again is not
 * simulated twice (one cache per run: `evaluate_design.ts`, `withReusedSimulations`). An optimization revisits designs often: every re-balance of a sub-space
 * (the gates with the runners fixed, relax-and-fix's sizes still free, one plan of the
 * fewest-changes front) simulates its own today and its start, which an earlier step has
 * usually simulated already, in another space. The key is therefore physical: the scenario
 * with the sizes the optimizer sets and its `adjustable` flags left out
 * ({@link scenarioFingerprint}), plus the geometry of every element of the design's network
 * (exact numbers: two designs share a key only when their networks are the same to the last
 * bit). A simulation is deterministic, so a hit is the simulation itself.
 *
 * @module
 */

/**
 * A bounded map that forgets the entry used longest ago (least recently used), for
 * simulations keyed by {@link simulationKey}.
 */
export class SimulationCache<T> {
  readonly #entries = new Map<string, T>();
  constructor(readonly capacity: number) {
    if (!(Number.isInteger(capacity) && capacity >= 1)) {
      throw new RangeError(`Cannot make a simulation cache: capacity must be ≥ 1, got ${capacity}`);
    }
  }

  /** The entry of `key` (now the most recently used), or undefined. */
  get(key: string): T | undefined {
    const value = this.#entries.get(key);
    if (value === undefined) return undefined;
    this.#entries.delete(key);
    this.#entries.set(key, value);
    return value;
  }

  /** Store `value` under `key`, forgetting the least recently used entry beyond the capacity. */
  set(key: string, value: T): void {
    this.#entries.delete(key);
    this.#entries.set(key, value);
    while (this.#entries.size > this.capacity) {
      this.#entries.delete(this.#entries.keys().next().value!);
    }
  }

  get size(): number {
    return this.#entries.size;
  }

  clear(): void {
    this.#entries.clear();
  }
}

/**
 * A scenario as text without what a design changes: every runner's diameter, every gate's
 * thickness and diameter, and which of them are adjustable (sub-spaces of one scenario differ
 * in those only). Equal fingerprints and equal networks mean equal simulations.
 */
export function scenarioFingerprint(scenario: Scenario): string {
  return JSON.stringify({
    ...scenario,
    runners: scenario.runners.map((r) => ({ ...r, diameter_mm: undefined, adjustable: undefined })),
    gates: scenario.gates.map((g) => ({
      ...g,
      diameter_mm: undefined,
      thickness_mm: undefined,
      adjustable: undefined,
    })),
  });
}

/** The key of simulating `network` under the scenario of `fingerprint`. */
export function simulationKey(fingerprint: string, network: FeedNetwork): string {
  return `${fingerprint}\n${JSON.stringify(network.elements.map((e) => e.geometry))}`;
}
