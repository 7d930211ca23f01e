import assert from "node:assert/strict";
import { parseScenario } from "../../../src/model/parse_scenario.ts";
import type { ScenarioWire } from "../../../src/model/scenario_schema.ts";
import { buildNetwork } from "../../../src/network/build_network.ts";
import type { FeedNetwork } from "../../../src/network/feed_network.ts";
import { assemble } from "../../../src/network/fill/assemble.ts";
import { type FillContext, fillContext } from "../../../src/network/fill/context.ts";
import {
  type Solved,
  solveInstant,
  type SolveStats,
  solveStats,
} from "../../../src/network/fill/solve_instant.ts";
import { emptyFillState, type FillState, wetNode } from "../../../src/network/fill/fill_state.ts";
import {
  LIBRARY_MATERIAL_IDS,
  meltModelOf,
  processOf,
  resolveMaterial,
} from "../../../src/network/simulate_scenario.ts";
import { unequalBranches } from "../_scenarios.ts";

/** The unequal-branch tool (hot drop J → R1 → A → G1 → C1, J → R2 → B → G2 → C2), its context and an empty state. */
export function fixture(wire: ScenarioWire = unequalBranches("isothermal")): {
  network: FeedNetwork;
  ctx: FillContext;
  state: FillState;
  element: (id: string) => number;
  node: (id: string) => number;
} {
  const parsed = parseScenario(wire, { materialIds: LIBRARY_MATERIAL_IDS });
  assert.ok(parsed.ok);
  const built = buildNetwork(parsed.scenario);
  assert.ok(built.ok);
  const network = built.network;
  const ctx = fillContext(network, {
    melt: meltModelOf(resolveMaterial(parsed.scenario)),
    process: processOf(parsed.scenario, network),
  });
  const element = (id: string) => network.elements.findIndex((e) => e.id === id);
  const node = (id: string) => network.nodes.findIndex((n) => n.id === id);
  return { network, ctx, state: emptyFillState(ctx), element, node };
}

/** Mark elements full at `t` (their nodes wet, their volume filled from side 0). */
export function markFull(
  f: ReturnType<typeof fixture>,
  ids: string[],
  t = 0,
): void {
  wetNode(f.ctx, f.state, f.network.inlet, 0);
  for (const id of ids) {
    const k = f.element(id);
    const e = f.network.elements[k];
    f.state.fill[2 * k] = e.volume;
    f.state.fullTime[k] = t;
    wetNode(f.ctx, f.state, e.from, t);
    if (e.to >= 0) wetNode(f.ctx, f.state, e.to, t);
    if (e.kind === "cavity") f.state.cavityFullTime[e.cavity] = t;
  }
}

/** The fixture's state solved at `t` on its own assembly (asserts the solve succeeds). */
export function solvedNow(
  f: ReturnType<typeof fixture>,
  t: number,
  stats: SolveStats = solveStats(),
): Solved {
  const s = solveInstant(f.ctx, f.state, stats, {
    t,
    volumes: f.state.fill,
    assembly: assemble(f.ctx, f.state),
  });
  assert.ok(!("failure" in s), "failure" in s ? s.failure : "");
  return s;
}
