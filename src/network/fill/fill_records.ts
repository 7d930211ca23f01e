import type { ChannelFlow } from "../../physics/mod.ts";
import type { NetworkElement } from "../feed_network.ts";
import type { FillSample } from "../fill_result.ts";
import type { FillContext } from "./context.ts";
import { cavityFill, type FillState, isFull } from "./fill_state.ts";
import { holdPressures, type Solved } from "./solve_instant.ts";

/** What a fill keeps of its recorded instants: the history, peaks up to switchover, first-full figures. */
export class FillRecorder {
  readonly history: FillSample[] = [];
  /** Peak true wall shear rate per element up to switchover, 1/s. */
  readonly shearPeak: Float64Array;
  /** The same while every cavity is still filling, 1/s. */
  readonly shearPeakEarly: Float64Array;
  /** Peak apparent wall shear rate per element up to switchover, 1/s. */
  readonly apparentPeak: Float64Array;
  feedPressurePeak = 0;
  clampForcePeak = 0;
  /** Each cavity's fill fraction as the first cavity fills. */
  fillAtFirstFull: number[] | undefined;
  /** Each element's pressure drop just as the first cavity fills (every path flowing), Pa. */
  dropsAtFirstFull: Float64Array | undefined;

  constructor(private readonly ctx: FillContext, private readonly state: FillState) {
    const E = ctx.elements.length;
    this.shearPeak = new Float64Array(E);
    this.shearPeakEarly = new Float64Array(E);
    this.apparentPeak = new Float64Array(E);
  }

  /** Record the solved instant `t`: a history sample, and the peaks while t ≤ switchover. */
  record(t: number, s: Solved): void {
    const { ctx, state } = this;
    const { elements } = ctx;
    holdPressures(state, s);
    const feedPressure = s.pressure[ctx.network.inlet];
    const force = clampForce(ctx, state, s);
    let filledVolume = 0;
    for (let i = 0; i < state.fill.length; i++) filledVolume += state.fill[i];
    this.history.push({
      time: t,
      injectedVolume: ctx.injectionRate * t,
      filledVolume,
      feedPressure,
      clampForce: force,
      cavityFill: cavityFill(ctx, state),
    });
    if (t > ctx.switchoverTime * (1 + 1e-12)) return;
    this.feedPressurePeak = Math.max(this.feedPressurePeak, feedPressure);
    this.clampForcePeak = Math.max(this.clampForcePeak, force);
    const beforeFirstFull = state.cavityFullTime.every((x) => Number.isNaN(x));
    s.assembly.branches.forEach((br, k) => {
      // A gate's shear counts once the gate runs full (its cavity filling): while its own
      // front crosses the land, the incompressible model with a 0 Pa front lets a lagging
      // branch draw nearly the whole shot through it for a fraction of a millisecond, a
      // spike the resin's shear limit (a steady-flow figure) is not about.
      if (elements[br.element].kind === "gate" && !isFull(state, br.element)) return;
      const shear = s.channel[k].wallShearRate;
      this.shearPeak[br.element] = Math.max(this.shearPeak[br.element], shear);
      if (beforeFirstFull) {
        this.shearPeakEarly[br.element] = Math.max(this.shearPeakEarly[br.element], shear);
      }
      this.apparentPeak[br.element] = Math.max(
        this.apparentPeak[br.element],
        s.channel[k].apparentWallShearRate,
      );
    });
  }

  /** Note the first cavity full: every cavity's fill fraction and every element's drop. */
  firstFull(s: Solved): void {
    if (this.fillAtFirstFull) return;
    this.fillAtFirstFull = cavityFill(this.ctx, this.state);
    const drops = new Float64Array(this.ctx.elements.length);
    s.assembly.branches.forEach((br, k) => {
      drops[br.element] = s.channel[k].pressureDrop;
    });
    this.dropsAtFirstFull = drops;
  }
}

/**
 * Mold-opening force of a solved instant, N: pressure over each element's projected area on
 * the parting plane (common practice, no source). A through-flow element takes the mean of its end
 * pressures, a filling one its filled share times the mean of its pressure profile, a full
 * cavity (no flow) its inlet pressure over the whole area, a pruned full runner or gate the
 * pressure of its ends.
 */
export function clampForce(ctx: FillContext, state: FillState, s: Solved): number {
  const { elements, network } = ctx;
  let force = 0;
  for (let k = 0; k < s.assembly.branches.length; k++) {
    const br = s.assembly.branches[k];
    const e = elements[br.element];
    if (e.projectedArea === 0) continue;
    const pa = s.pressure[br.a];
    if (br.b >= 0) {
      force += e.projectedArea * (pa + s.pressure[br.b]) / 2;
    } else {
      const f = Math.min(1, state.fill[2 * e.index + br.side] / e.volume);
      force += e.projectedArea * f * pa * meanPressureShare(e, f, s.channel[k], s.flows[k]);
    }
  }
  // A cavity or element still a branch of this assembly (the state just before it filled:
  // the end of a phase is solved on the network it started from) is counted above already.
  const inAssembly = new Uint8Array(elements.length);
  for (const br of s.assembly.branches) inAssembly[br.element] = 1;
  for (const c of network.cavities) {
    if (!isFull(state, c.element) || inAssembly[c.element]) continue;
    const p = s.pressure[elements[c.element].from];
    if (Number.isFinite(p)) force += c.projectedArea * p;
  }
  for (const e of elements) {
    if (e.kind === "cavity" || e.projectedArea === 0 || !isFull(state, e.index)) continue;
    if (inAssembly[e.index]) continue;
    const pa = s.pressure[e.from];
    const pb = s.pressure[e.to];
    const p = Number.isFinite(pa) ? pa : Number.isFinite(pb) ? pb : 0;
    force += e.projectedArea * p;
  }
  return force;
}

/**
 * Share of the inlet pressure that acts, on average, over the filled part of a
 * filling element. A uniform channel's pressure falls linearly to the front (½).
 * A radial disk with a power-law melt of local index n has the profile
 * P(r) ∝ (R^m − r^m)/m, m = 1 − n (Tadmor & Gogos, radial flow between disks), whose
 * area mean over r_g…R in closed form is
 * [R^m(R² − r_g²) − 2(R^(m+2) − r_g^(m+2))/(m+2)] / [(R² − r_g²)(R^m − r_g^m)].
 */
export function meanPressureShare(
  e: NetworkElement,
  fraction: number,
  channel: ChannelFlow,
  flow: number,
): number {
  const g = e.geometry;
  if (g.type !== "radial") return 0.5;
  const rg = g.gateRadius;
  const R = Math.sqrt(rg * rg + fraction * (g.maxRadius * g.maxRadius - rg * rg));
  if (R <= rg * (1 + 1e-9)) return 1;
  const m = Math.max(1 - localIndex(channel, flow), 1e-4);
  const area = R * R - rg * rg;
  const numerator = Math.pow(R, m) * area -
    (2 * (Math.pow(R, m + 2) - Math.pow(rg, m + 2))) / (m + 2);
  return numerator / (area * (Math.pow(R, m) - Math.pow(rg, m)));
}

/** Local power-law index n = dlnΔP/dlnQ of a channel law at its operating point. */
function localIndex(channel: ChannelFlow, flow: number): number {
  if (channel.pressureDrop === 0 || flow === 0) return 1;
  return Math.min(1, Math.max(0.05, (flow * channel.dPressureDropDFlow) / channel.pressureDrop));
}
