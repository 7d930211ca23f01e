import type { NetworkElement } from "../feed_network.ts";
import {
  factorLaplacian,
  type FillTangent,
  type FillTangentRequest,
  type LinearBranch,
  linearPattern,
} from "../fill_tangent.ts";
import type { Assembly } from "./assemble.ts";
import { branchLaw, type BranchLawCache, branchLawCache, cachedBranchLaw } from "./channel_laws.ts";
import type { FillContext } from "./context.ts";
import type { FillState } from "./fill_state.ts";
import { nodalAnalysisOf, type Solved } from "./solve_instant.ts";

/**
 * Carries the tangent of the fill along the requested directions (the method is in
 * `fill_tangent.ts`): the linearised network at each solved state, an Euler step of δv over
 * each accepted step, the event-time jump at each event, and a sample per recorded instant.
 * It stops at the first full cavity (what the optimizer's split fill times need).
 */
export class TangentCarrier {
  /** Number of directions. */
  readonly m: number;
  private on: boolean;
  /** dv[j][2e + side]: change of each filling side's volume along direction j, m³. */
  private readonly dv: Float64Array[];
  /** Directions that change each element, with the element as rebuilt. */
  private readonly changedBy: { j: number; element: NetworkElement }[][];
  /** The laws of each direction's rebuilt elements, kept while their inputs hold (one cache per direction). */
  private readonly directionLaws: BranchLawCache[];
  private readonly patterns = new WeakMap<
    Assembly,
    { local: LinearBranch[]; symbolic: ReturnType<typeof linearPattern> }
  >();
  /**
   * For the state last evaluated: its filling branches (indices into its branches) and their
   * δQ per direction (`flows[j·P + q]`), and δp at the inlet per direction.
   */
  private flows: { partials: number[]; flows: Float64Array } = {
    partials: [],
    flows: new Float64Array(0),
  };
  private dInlet: Float64Array;
  private readonly cavitySamples: Float64Array[] = [];
  private readonly pressureSamples: Float64Array[] = [];
  private firstFillShift: Float64Array | undefined;

  constructor(
    private readonly ctx: FillContext,
    private readonly state: FillState,
    request: FillTangentRequest | undefined,
  ) {
    const directions = request?.directions ?? [];
    const E = ctx.elements.length;
    this.m = directions.length;
    this.on = this.m > 0;
    this.dv = Array.from({ length: this.m }, () => new Float64Array(2 * E));
    this.changedBy = Array.from({ length: E }, () => []);
    directions.forEach((list, j) => {
      for (const element of list) this.changedBy[element.index].push({ j, element });
    });
    this.dInlet = new Float64Array(this.m);
    this.directionLaws = Array.from({ length: this.m }, () => branchLawCache(E));
  }

  /** Whether the tangent is still being carried. */
  get active(): boolean {
    return this.on;
  }

  /** Stop carrying (the first cavity is full). */
  stop(): void {
    this.on = false;
  }

  /** The linearised network about solved state `s` (before its thermal update), with today's δv. */
  at(s: Solved, t: number): void {
    if (!this.on) return;
    const { ctx, state, m, dv, changedBy } = this;
    const fill = state.fill;
    const branches = s.assembly.branches;
    const K = branches.length;
    let pattern = this.patterns.get(s.assembly);
    if (!pattern) {
      const local = branches.map((br) => ({
        a: s.assembly.local[br.a],
        b: br.b >= 0 ? s.assembly.local[br.b] : -1,
      }));
      // The solves of this assembly analysed the same pattern already (no solve runs while
      // the tangent uses its factor).
      const symbolic = nodalAnalysisOf(ctx, s.assembly) ??
        linearPattern(s.assembly.nodeCount, local);
      pattern = { local, symbolic };
      this.patterns.set(s.assembly, pattern);
    }
    const g = new Float64Array(K);
    for (let k = 0; k < K; k++) g[k] = 1 / s.channel[k].dPressureDropDFlow;
    // Sparse sources: each direction changes its own element's law; every filling branch
    // adds ∂ΔP/∂v·δv. Only the filling branches' δQ are kept (they drive δv).
    const direct: { j: number; k: number; drop: number }[] = [];
    const partials: number[] = [];
    const slopeV: number[] = [];
    const probe = fill.slice(); // one volume at a time moved, then put back
    for (let k = 0; k < K; k++) {
      const br = branches[k];
      const c = s.channel[k];
      for (const { j, element } of changedBy[br.element]) {
        const law = cachedBranchLaw(ctx, state, br, {
          t,
          volumes: fill,
          cache: this.directionLaws[j],
          element,
        });
        const drop = law.resistance(s.flows[k]).pressureDrop - c.pressureDrop;
        direct.push({ j, k, drop });
      }
      if (br.side < 0) continue;
      partials.push(k);
      const index = 2 * br.element + br.side;
      let any = false;
      for (let j = 0; j < m && !any; j++) any = dv[j][index] !== 0;
      if (!any) {
        slopeV.push(0);
        continue;
      }
      const e = ctx.elements[br.element];
      const v = fill[index];
      const dvol = Math.max(Math.abs(v) * 1e-4, e.volume * 1e-7);
      probe[index] = v + dvol;
      slopeV.push(
        (branchLaw(ctx, state, br, t, probe).resistance(s.flows[k]).pressureDrop -
          c.pressureDrop) / dvol,
      );
      probe[index] = v;
    }
    const factor = factorLaplacian(s.assembly.nodeCount, pattern.local, g, pattern.symbolic);
    if (!factor) {
      this.on = false;
      return;
    }
    const P = partials.length;
    const inlet = s.assembly.local[ctx.network.inlet];
    const rhs = new Float64Array(s.assembly.nodeCount);
    const sigma = new Float64Array(P);
    const byDirection: { k: number; drop: number }[][] = Array.from({ length: m }, () => []);
    for (const d of direct) byDirection[d.j].push(d);
    const partialOf = new Int32Array(K).fill(-1);
    partials.forEach((k, q) => (partialOf[k] = q));
    const flows = new Float64Array(m * P);
    const inletChange = new Float64Array(m);
    // Per filling branch: its volume's index in dv, its upstream node, its conductance.
    const sideOf = new Int32Array(P);
    const nodeOf = new Int32Array(P);
    const gOf = new Float64Array(P);
    for (let q = 0; q < P; q++) {
      const k = partials[q];
      sideOf[q] = 2 * branches[k].element + branches[k].side;
      nodeOf[q] = pattern.local[k].a;
      gOf[q] = g[k];
    }
    for (let j = 0; j < m; j++) {
      let source = byDirection[j].length > 0;
      const dvj = dv[j];
      for (let q = 0; q < P; q++) {
        sigma[q] = slopeV[q] * dvj[sideOf[q]];
        if (sigma[q] !== 0) source = true;
      }
      // A direction whose size is still dry moves nothing yet: its δQ and δp stay the
      // zeros a solve with a zero right-hand side would give.
      if (!source) continue;
      rhs.fill(0);
      for (const { k, drop } of byDirection[j]) {
        const q = partialOf[k];
        if (q >= 0) sigma[q] += drop;
        else {
          const { a, b } = pattern.local[k];
          rhs[a] += g[k] * drop;
          if (b >= 0) rhs[b] -= g[k] * drop;
        }
      }
      for (let q = 0; q < P; q++) rhs[nodeOf[q]] += gOf[q] * sigma[q];
      factor.solve(rhs, rhs);
      // A filling branch ends at its front (0 Pa): δQ = g·(δp_a − σ).
      for (let q = 0; q < P; q++) flows[j * P + q] = gOf[q] * (rhs[nodeOf[q]] - sigma[q]);
      inletChange[j] = rhs[inlet];
    }
    this.flows = { partials, flows };
    this.dInlet = inletChange;
  }

  /** Euler step of δv over `dt` with the δQ of the state the step started from. */
  advance(s0: Solved, dt: number): void {
    if (!this.on) return;
    const { partials, flows } = this.flows;
    const P = partials.length;
    partials.forEach((k, q) => {
      const br = s0.assembly.branches[k];
      const index = 2 * br.element + br.side;
      for (let j = 0; j < this.m; j++) this.dv[j][index] += dt * flows[j * P + q];
    });
  }

  /** Shift of each newly full element's fill time along each direction, s. */
  eventShifts(
    s0: Solved,
    before: Float64Array,
    full: readonly number[],
  ): Map<number, Float64Array> {
    const shifts = new Map<number, Float64Array>();
    if (!this.on) return shifts;
    for (const e of full) {
      let flow = 0;
      const sides: number[] = [];
      s0.assembly.branches.forEach((br, k) => {
        if (br.element !== e || br.side < 0) return;
        flow += before[k];
        sides.push(2 * e + br.side);
      });
      if (sides.length === 0 || !(flow > 0)) continue;
      const shift = new Float64Array(this.m);
      for (let j = 0; j < this.m; j++) {
        const grown = this.changedBy[e].find((c) => c.j === j);
        const dVolume = grown ? grown.element.volume - this.ctx.elements[e].volume : 0;
        let held = 0;
        for (const index of sides) held += this.dv[j][index];
        shift[j] = (dVolume - held) / flow;
      }
      shifts.set(e, shift);
    }
    for (const [e, shift] of shifts) {
      if (this.ctx.elements[e].kind === "cavity" && !this.firstFillShift) {
        this.firstFillShift = shift;
      }
    }
    return shifts;
  }

  /** The jump of δv across the events of one step (see `fill_tangent.ts`). */
  jump(s0: Solved, before: Float64Array, after: Solved, shifts: Map<number, Float64Array>): void {
    if (!this.on || shifts.size === 0) return;
    const m = this.m;
    const dv = this.dv;
    const mean = new Float64Array(m);
    for (const shift of shifts.values()) {
      for (let j = 0; j < m; j++) mean[j] += shift[j] / shifts.size;
    }
    const previous = new Map<number, number>();
    s0.assembly.branches.forEach((br, k) => {
      if (br.side >= 0) previous.set(2 * br.element + br.side, before[k]);
    });
    after.assembly.branches.forEach((br, k) => {
      if (br.side < 0) return;
      const index = 2 * br.element + br.side;
      const q1 = after.flows[k];
      const q0 = previous.get(index);
      if (q0 !== undefined) {
        for (let j = 0; j < m; j++) dv[j][index] += (q0 - q1) * mean[j];
        return;
      }
      // A branch that starts here: it starts when the element that wetted its node filled.
      let shift: Float64Array = mean;
      for (const [e, sh] of shifts) {
        const el = this.ctx.elements[e];
        if (el.to === br.a || el.from === br.a) shift = sh;
      }
      for (let j = 0; j < m; j++) dv[j][index] = -q1 * shift[j];
    });
  }

  /** A sample for the history instant just recorded. */
  record(): void {
    if (!this.on) return;
    const cavities = this.ctx.network.cavities;
    const C = cavities.length;
    const cavity = new Float64Array(this.m * C);
    for (let j = 0; j < this.m; j++) {
      const dv = this.dv[j];
      for (let i = 0; i < C; i++) cavity[j * C + i] = dv[2 * cavities[i].element];
    }
    this.cavitySamples.push(cavity);
    this.pressureSamples.push(this.dInlet.slice());
  }

  /** The carried tangent, or undefined when no direction was asked for. */
  result(): FillTangent | undefined {
    if (this.m === 0) return undefined;
    return {
      directions: this.m,
      samples: this.cavitySamples.length,
      cavityVolume: this.cavitySamples,
      feedPressure: this.pressureSamples,
      firstFill: this.firstFillShift,
    };
  }
}
