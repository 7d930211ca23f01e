/**
 * First-order (tangent-linear) sensitivities of the transient fill, carried along
 * the simulation itself so that one run gives the change of every cavity's filled
 * volume and of the feed pressure along many directions at once, instead of one
 * extra simulation per direction.
 *
 * The fill is a hybrid system: between events the filled volumes v of the partly
 * filled branches obey dv/dt = Q(v, x), with Q from the steady network at that
 * instant; at an event (an element becomes full) the set of branches changes. The
 * tangent δv along a direction δx therefore has two parts:
 * - between events, dδv/dt = δQ, where δQ solves the network linearised about the
 *   current flows: each branch obeys δQ = g·(δp_a − δp_b − σ), g = 1/(dΔP/dQ), with
 *   σ = ∂ΔP/∂x·δx + ∂ΔP/∂v·δv its pressure-drop change at fixed flow, and mass
 *   balance holds at every free node (the injection rate is prescribed, fronts sit at
 *   0 Pa). That is one weighted-Laplacian system, factored once per step and solved
 *   once per direction;
 * - at an event, the event time moves by δt = (δV_cap − δv)/Q of the branch that
 *   fills, and every state jumps by (Q⁻ − Q⁺)·δt (the sensitivity jump condition of
 *   hybrid systems: Rozenvasser (1967) Automation and Remote Control 28:400; Hiskens &
 *   Pai (2000) IEEE Trans. Circuits Syst. I 47:204). A branch that starts at the event
 *   starts at −Q⁺·δt.
 * It is integrated with the explicit Euler rule on the simulation's own steps.
 * Temperatures and frozen layers are held at the simulation's values (their own
 * change with the sizes is left out), so the tangent is an approximation of the
 * non-isothermal fill and exact to first order in the isothermal one; the optimizer
 * re-simulates every step it takes, so an approximate slope costs iterations, never
 * a wrong answer.
 *
 * @module
 */

import type { NetworkElement } from "./feed_network.ts";
import { analyse, type NumericCholesky, type SymbolicCholesky } from "./sparse_cholesky.ts";

/** Directions along which {@link simulateFill} carries the tangent. */
export interface FillTangentRequest {
  /**
   * One entry per direction: the elements that the direction changes, rebuilt at the
   * changed size (same `index` as in the simulated network). The tangent is the
   * first-order change of the fill for that whole change.
   */
  directions: readonly (readonly NetworkElement[])[];
}

/** The tangent of a fill history, up to the instant the first cavity is full. */
export interface FillTangent {
  /** Number of directions. */
  directions: number;
  /** History samples covered (indices 0 … samples − 1 of `FillResult.history`). */
  samples: number;
  /** `cavityVolume[k][j·C + i]`: change of cavity i's filled volume at sample k along direction j, m³. */
  cavityVolume: Float64Array[];
  /** `feedPressure[k][j]`: change of the feed pressure at sample k along direction j, Pa. */
  feedPressure: Float64Array[];
  /** `firstFill[j]`: change of the instant the first cavity is full along direction j, s (when reached). */
  firstFill?: Float64Array;
}

/** One branch of the linearised network: local node indices, `b` = −1 for a flow front (0 Pa). */
export interface LinearBranch {
  a: number;
  b: number;
}

/**
 * Factor the linearised network's nodal matrix: the Laplacian weighted by each branch's
 * conductance g = 1/(dΔP/dQ), fronts (b = −1) at 0 Pa, the inflow prescribed. A branch whose
 * drop changes by σ at fixed flow then moves the nodes by the solution of A·δp = r with
 * r_a += g·σ, r_b −= g·σ, and its flow by δQ = g·(δp_a − δp_b − σ). `symbolic` is the cached
 * analysis of this branch set (see {@link linearPattern}). Undefined if not positive definite.
 */
export function factorLaplacian(
  nodeCount: number,
  branches: readonly LinearBranch[],
  conductance: Float64Array,
  symbolic: SymbolicCholesky,
): NumericCholesky | undefined {
  const diagonal = new Float64Array(nodeCount);
  const off: number[] = [];
  branches.forEach((br, k) => {
    diagonal[br.a] += conductance[k];
    if (br.b >= 0) {
      diagonal[br.b] += conductance[k];
      off.push(-conductance[k]);
    }
  });
  const factored = symbolic.factor({ diagonal, offDiagonal: off });
  return factored.ok ? factored.factor : undefined;
}

/** Symbolic analysis of the weighted Laplacian of a branch set (entries in branch order, internal branches only). */
export function linearPattern(
  nodeCount: number,
  branches: readonly LinearBranch[],
): SymbolicCholesky {
  const rows: number[] = [];
  const cols: number[] = [];
  for (const br of branches) {
    if (br.b < 0) continue;
    rows.push(br.a);
    cols.push(br.b);
  }
  return analyse({ size: nodeCount, rows, cols });
}
