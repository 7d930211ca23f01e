import {
  buildNetwork,
  cavityGeometry,
  gateFields,
  networkVolumes,
  runnerFields,
  type SizedFields,
} from "../network/build_network.ts";
import type { FeedNetwork, NetworkElement } from "../network/feed_network.ts";
import type { DesignSpace } from "./design_space.ts";

/**
 * The feed network of a design space as a function of its sizes, in SI: the network is
 * built once from the scenario, and a design only replaces the elements its sizes set
 * (a runner's or gate's geometry, volume, projected area and thickness; a radial cavity
 * whose disc starts at its first gate). No scenario is cloned and no size goes through
 * millimetres, so a design evaluation and each tangent direction cost a few object copies.
 *
 * @module
 */

/** A design space's network at any sizes. */
export interface SizedNetwork {
  /** The network today (the scenario's own sizes). */
  readonly base: FeedNetwork;
  /** The network with sizes `x` (m, in the space's variable order). */
  at(x: ArrayLike<number>): FeedNetwork;
  /** The elements variable `j` sets, at size `size` (m), with the base network's indices. */
  elementsAt(j: number, size: number): NetworkElement[];
}

/** Outcome of {@link sizedNetwork}: the scenario's network must build. */
export type SizedNetworkOutcome =
  | { ok: true; sized: SizedNetwork }
  | { ok: false; message: string };

/** What one size sets: element indices in the base network and how to resize each. */
interface SizeTarget {
  index: number;
  fields: (size: number) => SizedFields | Pick<NetworkElement, "geometry">;
}

const cache = new WeakMap<DesignSpace, SizedNetworkOutcome>();

/** The sized network of a design space (built once per space, then cached). */
export function sizedNetwork(space: DesignSpace): SizedNetworkOutcome {
  const known = cache.get(space);
  if (known) return known;
  const outcome = buildSized(space);
  cache.set(space, outcome);
  return outcome;
}

function buildSized(space: DesignSpace): SizedNetworkOutcome {
  const scenario = space.scenario;
  const built = buildNetwork(scenario);
  if (!built.ok) {
    return { ok: false, message: built.issues.map((i) => `${i.at}: ${i.message}`).join("; ") };
  }
  const base = built.network;
  const indexOf = (id: string, kind: NetworkElement["kind"]) =>
    base.elements.findIndex((e) => e.id === id && e.kind === kind);
  const targets: SizeTarget[][] = space.variables.map((v) => {
    const index = indexOf(v.element, v.kind);
    const element = base.elements[index];
    if (v.kind === "runner") {
      const runner = scenario.runners[v.index];
      const length = (element.geometry as { length: number }).length;
      return [{ index, fields: (size) => runnerFields(runner, length, size) }];
    }
    const gate = scenario.gates[v.index];
    const own: SizeTarget = { index, fields: (size) => gateFields(gate, size) };
    // A radial disc without a stated gate radius starts at its first gate's half thickness.
    const cavity = scenario.cavities[element.cavity];
    const first = base.cavities[element.cavity].gates[0] === index;
    if (cavity.fill_pattern !== "radial" || cavity.gate_radius_mm !== undefined || !first) {
      return [own];
    }
    const cavityIndex = base.cavities[element.cavity].element;
    return [own, {
      index: cavityIndex,
      fields: (size) => ({ geometry: cavityGeometry(cavity, size) }),
    }];
  });
  const resized = (target: SizeTarget, size: number): NetworkElement => ({
    ...base.elements[target.index],
    ...target.fields(size),
  });
  return {
    ok: true,
    sized: {
      base,
      at(x) {
        const elements = base.elements.slice();
        targets.forEach((list, j) => {
          for (const target of list) elements[target.index] = resized(target, x[j]);
        });
        return { ...base, elements, ...networkVolumes(elements) };
      },
      elementsAt: (j, size) => targets[j].map((target) => resized(target, size)),
    },
  };
}
