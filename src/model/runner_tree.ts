import type { Scenario } from "./scenario_schema.ts";

/**
 * The runners of a scenario as a tree seen from the feed node, by breadth-first search:
 * which runner feeds which, and where each ends. The one walk of the runner system that
 * the design space, the size rules and the reference methods share.
 *
 * @module
 */

/** The runner tree; runners are named by their index in `scenario.runners`. */
export interface RunnerTree {
  /** Runner indices in breadth-first order from the feed (runners not reached are absent). */
  order: number[];
  /** The runner feeding each runner (undefined for one leaving the feed node). */
  parent: Map<number, number | undefined>;
  /** The node id at each runner's downstream end. */
  downNode: Map<number, string>;
  /** The runners leaving each node downstream. */
  children: Map<string, number[]>;
  /** The runner by which each node was first reached (absent for the feed node). */
  arriving: Map<string, number>;
}

/** Walk the runners from the feed node. A runner closing a loop is fed from its first-reached end. */
export function runnerTree(scenario: Pick<Scenario, "feed" | "runners">): RunnerTree {
  const order: number[] = [];
  const parent = new Map<number, number | undefined>();
  const downNode = new Map<number, string>();
  const children = new Map<string, number[]>();
  const arriving = new Map<string, number>();
  const reached = new Set([scenario.feed.node]);
  const queue = [scenario.feed.node];
  while (queue.length > 0) {
    const node = queue.shift()!;
    scenario.runners.forEach((r, k) => {
      if (parent.has(k)) return;
      const other = r.from === node ? r.to : r.to === node ? r.from : undefined;
      if (other === undefined) return;
      parent.set(k, arriving.get(node));
      downNode.set(k, other);
      children.set(node, [...(children.get(node) ?? []), k]);
      order.push(k);
      if (!reached.has(other)) {
        reached.add(other);
        arriving.set(other, k);
        queue.push(other);
      }
    });
  }
  return { order, parent, downNode, children, arriving };
}

/** The runners from the feed to `node`, feed end first (indices). */
export function runnersTo(tree: RunnerTree, node: string): number[] {
  const path: number[] = [];
  for (let k = tree.arriving.get(node); k !== undefined; k = tree.parent.get(k)) path.unshift(k);
  return path;
}

/** For each runner index, the thickest wall of the cavities fed through it, mm. */
export function thickestWallDownstream(
  scenario: Pick<Scenario, "feed" | "runners" | "gates" | "cavities">,
  tree: RunnerTree = runnerTree(scenario),
): Map<number, number> {
  const wall = new Map(scenario.cavities.map((c) => [c.id, c.wall_mm]));
  const result = new Map<number, number>();
  for (const g of scenario.gates) {
    const w = wall.get(g.cavity)!;
    for (const k of runnersTo(tree, g.from)) result.set(k, Math.max(result.get(k) ?? 0, w));
  }
  return result;
}
