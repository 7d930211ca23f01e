import type { FlowCurve } from "../../materials/flow_curve.ts";
import {
  type ChannelLaw,
  type ChannelResistance,
  radialDiskFlow,
  type Section,
  shrinkSection,
  type TaperedChannelGeometry,
  taperedChannelGeometry,
  taperedGeometryLaw,
  type UniformChannelGeometry,
  uniformChannelGeometry,
  uniformGeometryLaw,
} from "../../physics/mod.ts";
import {
  frozenLayerThickness,
  frozenLayerThinnerThan,
  rememberedThinnerBound,
  type ThinnerBound,
} from "../../physics/thermal.ts";
import { taperedFilledLength } from "../_fill_geometry.ts";
import type { NetworkElement } from "../feed_network.ts";
import { type Branch, branchSlot } from "./assemble.ts";
import type { FillContext } from "./context.ts";
import { filledVolume, type FillState } from "./fill_state.ts";

/**
 * Least resisting volume of a partly filled element, as a fraction of its volume: keeps the law
 * of an empty branch finite (zero volume would resist nothing). Tiny, because it decides
 * nothing: how a fresh branch resists is {@link FRONT_START_AGE}'s to say.
 */
const MIN_FILLED_FRACTION = 1e-8;
/**
 * A fresh front's least age, as a fraction of the nominal fill time: a branch holding less than
 * its flow × this age resists as if it had been filling at that flow for that long. Near its
 * start a filling length grows as ∫q dt, so fronts that enter fresh branches together split the
 * flow as their laws at volume q·τ do (for power-law tubes q ∝ R³, whatever their lengths);
 * with a fixed least volume instead, the split right after the event is the ratio of those
 * floors, the flows then jump to the real split within the floors' filling time, and the step
 * control halved about ten times and regrew for twenty steps to follow a jump that is not in
 * the physics. A millionth of the fill is far below any step (the step control halts at 1e-9,
 * steps after an event start at 1/2000) and far above the floor.
 */
export const FRONT_START_AGE = 1e-6;
/**
 * The start age's volume is extrapolated from the branch's law at its resisting volume, linear in
 * the volume (exact for a uniform channel, and for any shape while the filled part is short);
 * this share of the element's volume bounds it.
 */
export const START_LINEAR_SHARE = 1e-2;
/** A frozen layer this close to closing a section (fraction of the layer that closes its thinnest section) shuts it. */
export const CLOSURE_FRACTION = 0.95;

/**
 * Whether a full element `e` (side −1) keeps the same frozen layer ({@link frozenAt}) at every
 * instant from `t` on, for as long as the state holds (the layer held, the last flow, the melt
 * temperature): heated, isothermal (no layer), or its contact time has reached half its
 * residence, which then bounds the time the layer grows over (t_c stays residence/2 while the
 * contact time grows). Then its law, a function of its layer, its volume and its melt, does not
 * change either. False for a filling side, whose volume moves.
 */
export function frozenFixedFrom(
  ctx: FillContext,
  state: FillState,
  e: NetworkElement,
  t: number,
  side: -1 | 0 | 1,
): boolean {
  if (side !== -1) return false;
  if (ctx.process.isothermal || e.heated) return true;
  const contact = contactTime(state, e, t, side);
  return Number.isNaN(contact) || contact >= residenceTime(state, e) / 2;
}

/**
 * The wall's mean contact time of element `e` at `t`, s: since the melt first reached it, or,
 * for a full element (side −1), the mean over its length (from first wetting and from full).
 * NaN when neither side has started filling.
 */
function contactTime(state: FillState, e: NetworkElement, t: number, side: -1 | 0 | 1): number {
  const start0 = state.sideStart[2 * e.index];
  const start1 = state.sideStart[2 * e.index + 1];
  if (Number.isNaN(start0) && Number.isNaN(start1)) return NaN;
  const start = Number.isNaN(start0)
    ? start1
    : Number.isNaN(start1)
    ? start0
    : Math.min(start0, start1);
  return side === -1 ? t - (start + state.fullTime[e.index]) / 2 : (t - start) / 2;
}

/** The melt's residence time in element `e` at its last flow, s (Infinity without flow). */
function residenceTime(state: FillState, e: NetworkElement): number {
  const flow = state.lastFlow[e.index];
  return flow > 0 ? filledVolume(state, e.index) / flow : Infinity;
}

/**
 * Frozen-layer thickness of element `e` at `t`, m: the no-flow conduction solution
 * δ = 2·erf⁻¹(θ)·√(α·t_c) (semi-infinite solid, Carslaw & Jaeger, *Conduction of Heat in
 * Solids*, 2nd ed., §2.4) with t_c the shorter of the wall's mean contact time
 * and half the melt's residence time in the element (a flowing channel's thermal boundary layer
 * grows with residence time: Lévêque scaling), never thinner than it already was, and short of
 * closing the section. 0 for heated elements and isothermal runs.
 */
export function frozenAt(
  ctx: FillContext,
  state: FillState,
  e: NetworkElement,
  t: number,
  side: -1 | 0 | 1,
): number {
  if (ctx.process.isothermal || e.heated) return 0;
  const contact = contactTime(state, e, t, side);
  if (Number.isNaN(contact)) return 0;
  const tc = Math.max(0, Math.min(contact, residenceTime(state, e) / 2));
  if (tc === 0) return 0;
  const memo = frozenMemoOf(ctx, state);
  const i = e.index;
  const held = state.frozenHeld[i];
  const temperature = state.temperature[i];
  if (memo.contact[i] === tc && memo.temperature[i] === temperature && memo.held[i] === held) {
    return memo.layer[i];
  }
  const layer = computeFrozen(ctx, temperature, tc, held, ctx.closing[i], memo.bounds[i]);
  memo.contact[i] = tc;
  memo.temperature[i] = temperature;
  memo.held[i] = held;
  memo.layer[i] = layer;
  return layer;
}

/**
 * The last frozen layer worked out per element with its inputs (contact time, melt
 * temperature, layer held): the trials of one step ask again for the full elements, whose
 * contact time is half their residence and does not move within the step. The layer is a pure
 * function of these and of the fill's constants, so a repeat is answered with the same number.
 */
interface FrozenMemo {
  ctx: FillContext;
  contact: Float64Array;
  temperature: Float64Array;
  held: Float64Array;
  layer: Float64Array;
  /** Per element, the erf bound of its last held layer and contact time (a new melt temperature keeps it). */
  bounds: ThinnerBound[];
}

const frozenMemos = new WeakMap<FillState, FrozenMemo>();

/** The memory asked for last, and its state: a fill asks with one state thousands of times. */
let lastMemo: { state: FillState; memo: FrozenMemo } | undefined;

function frozenMemoOf(ctx: FillContext, state: FillState): FrozenMemo {
  if (lastMemo && lastMemo.state === state && lastMemo.memo.ctx === ctx) return lastMemo.memo;
  const known = frozenMemos.get(state);
  if (known && known.ctx === ctx) {
    lastMemo = { state, memo: known };
    return known;
  }
  const E = ctx.elements.length;
  const memo = {
    ctx,
    contact: new Float64Array(E).fill(NaN),
    temperature: new Float64Array(E).fill(NaN),
    held: new Float64Array(E).fill(NaN),
    layer: new Float64Array(E),
    bounds: ctx.elements.map(() => rememberedThinnerBound()),
  };
  frozenMemos.set(state, memo);
  lastMemo = { state, memo };
  return memo;
}

/** {@link frozenAt}'s layer for contact time `tc` > 0 s, melt `temperature` K, `held` m. */
function computeFrozen(
  ctx: FillContext,
  temperature: number,
  tc: number,
  held: number,
  closing: number,
  bound: ThinnerBound,
): number {
  const { process, melt } = ctx;
  const layer = {
    meltTemperature: temperature,
    wallTemperature: process.moldTemperature,
    noFlowTemperature: melt.noFlowTemperature,
    diffusivity: melt.diffusivity,
  };
  // Mostly the layer already held is the thicker (the melt is hotter, or its residence
  // shorter, than when it formed): that is told apart without the erf⁻¹ of a new melt
  // temperature, and the result below would be `held` anyway.
  if (held > 0 && frozenLayerThinnerThan(tc, held, layer, bound)) return held;
  const delta = frozenLayerThickness(tc, layer);
  return Math.max(held, Math.min(delta, CLOSURE_FRACTION * closing));
}

/**
 * The last law built for each branch of one fill (element × side, `branchSlot`), with its
 * inputs. A branch law is a pure function of its element, its frozen layer and filled volume
 * (its geometry) and of the melt temperature and pressure its flow curve is taken at; when all
 * are the same as last time the same law serves again, and when only the melt changed the
 * prepared geometry does. The inputs sit in typed arrays, not in an object per law: a fill
 * keeps about a hundred thousand laws, and every number in an object is a heap allocation of
 * its own. (A memory of each law's recent flows was tried and dropped: its look-ups cost more
 * than the few evaluations they saved.)
 */
export interface BranchLawCache {
  /** Frozen layer (m) and filled volume (m³) the kept law's geometry was built at. */
  readonly delta: Float64Array;
  readonly volume: Float64Array;
  /** Melt temperature (K) and pressure (Pa) of its flow curve (NaN when isothermal). */
  readonly temperature: Float64Array;
  readonly pressure: Float64Array;
  readonly geometry: (BranchGeometry | undefined)[];
  /** The kept law, undefined for none. */
  readonly law: (ChannelLaw | undefined)[];
}

/** An empty cache for a network of `elementCount` elements. */
export function branchLawCache(elementCount: number): BranchLawCache {
  const slots = branchSlot(elementCount, -1);
  return {
    delta: new Float64Array(slots),
    volume: new Float64Array(slots),
    temperature: new Float64Array(slots),
    pressure: new Float64Array(slots),
    geometry: new Array<BranchGeometry | undefined>(slots).fill(undefined),
    law: new Array<ChannelLaw | undefined>(slots).fill(undefined),
  };
}

function curveFor(ctx: FillContext, state: FillState, e: NetworkElement): FlowCurve {
  return ctx.process.isothermal
    ? ctx.isothermalCurve
    : ctx.melt.curveAt(state.temperature[e.index], Math.max(0, state.meanPressure[e.index]));
}

/**
 * {@link branchLaw} through `cache`: the law kept for the branch when its inputs are unchanged,
 * else a new one (kept). Same numbers as {@link branchLaw}. `element` replaces the network's
 * element as there; a cache serves one element per branch (one cache per tangent direction).
 */
export function cachedBranchLaw(
  ctx: FillContext,
  state: FillState,
  branch: Branch,
  at: { t: number; volumes: Float64Array; cache: BranchLawCache; element?: NetworkElement },
): ChannelLaw {
  const { t, volumes, cache } = at;
  const e = at.element ?? ctx.elements[branch.element];
  const temperature = ctx.process.isothermal ? NaN : state.temperature[e.index];
  const pressure = ctx.process.isothermal ? NaN : Math.max(0, state.meanPressure[e.index]);
  let delta: number;
  try {
    delta = frozenAt(ctx, state, e, t, branch.side);
  } catch (error) {
    curveFor(ctx, state, e); // branchLaw's order: a melt the curve refuses is reported first
    throw error;
  }
  const volume = branch.side === -1
    ? e.volume
    : Math.min(Math.max(volumes[2 * e.index + branch.side], 0), e.volume);
  const slot = branchSlot(e.index, branch.side);
  const kept = cache.law[slot];
  const sameGeometry = kept !== undefined && cache.delta[slot] === delta &&
    cache.volume[slot] === volume;
  if (
    sameGeometry &&
    (ctx.process.isothermal ||
      (cache.temperature[slot] === temperature && cache.pressure[slot] === pressure))
  ) return kept;
  const curve = curveFor(ctx, state, e);
  const geometry = sameGeometry
    ? cache.geometry[slot]!
    : branchGeometry(e, { side: branch.side, delta, volume });
  const law = startedLaw(ctx, e, branch.side, volume, geometryLaw(geometry, curve));
  cache.delta[slot] = delta;
  cache.volume[slot] = volume;
  cache.temperature[slot] = temperature;
  cache.pressure[slot] = pressure;
  cache.geometry[slot] = geometry;
  cache.law[slot] = law;
  return law;
}

/**
 * The flow law (flow → pressure drop, wall shear, dΔP/dQ) of one branch at `t`, with its filled
 * volume from `volumes` (`fill` layout of {@link FillState}) and its open section shrunk by the
 * frozen layer. `element` replaces the network's element (a tangent direction's rebuilt size).
 */
export function branchLaw(
  ctx: FillContext,
  state: FillState,
  branch: Branch,
  t: number,
  volumes: Float64Array,
  element?: NetworkElement,
): ChannelLaw {
  const e = element ?? ctx.elements[branch.element];
  const curve = curveFor(ctx, state, e);
  const delta = frozenAt(ctx, state, e, t, branch.side);
  const volume = branch.side === -1
    ? e.volume
    : Math.min(Math.max(volumes[2 * e.index + branch.side], 0), e.volume);
  const law = geometryLaw(branchGeometry(e, { side: branch.side, delta, volume }), curve);
  return startedLaw(ctx, e, branch.side, volume, law);
}

/** The volume a branch's geometry is built at: its filled volume, never below the floor. */
function resistingVolume(e: NetworkElement, side: -1 | 0 | 1, volume: number): number {
  return side === -1 ? e.volume : Math.max(volume, MIN_FILLED_FRACTION * e.volume);
}

/**
 * `law` (built at the branch's resisting volume) with {@link FRONT_START_AGE}: where the flow
 * × the age exceeds the resisting volume, the pressure drop is scaled up to the volume the
 * front would hold at that age, ΔP(Q) = ΔP₀(Q)·|Q|τ/V₀, and dΔP/dQ = f·ΔP₀' + |ΔP₀|·τ/V₀
 * (Q m³/s, τ s, V₀ m³, ΔP Pa). The scaling is that of fully developed flow in a uniform
 * channel, whose drop is proportional to its length (Bird, Armstrong & Hassager, *Dynamics of
 * Polymeric Liquids* vol. 1, 2nd ed., §5.3). The wall shear is the section's, which the scaling
 * leaves alone. A full branch, or one past the linear share, keeps its law.
 */
export function startedLaw(
  ctx: FillContext,
  e: NetworkElement,
  side: -1 | 0 | 1,
  volume: number,
  law: ChannelLaw,
): ChannelLaw {
  const resisting = resistingVolume(e, side, volume);
  const most = START_LINEAR_SHARE * e.volume;
  if (side === -1 || resisting >= most) return law;
  const age = FRONT_START_AGE * ctx.nominalFillTime;
  const rate = age / resisting;
  // Below `kink` the scale is 1; above `cap` the extrapolated volume is held at `most`.
  const kink = 1 / rate;
  const cap = most / age;
  const scaled = <R extends ChannelResistance>(r: R, flow: number): R => {
    const q = Math.abs(flow);
    if (q <= kink) return r;
    const f = (q < cap ? q : cap) * rate;
    const slope = q < cap ? Math.abs(r.pressureDrop) * rate : 0;
    return {
      ...r,
      pressureDrop: f * r.pressureDrop,
      dPressureDropDFlow: f * r.dPressureDropDFlow + slope,
    };
  };
  const started = (flow: number) => scaled(law(flow), flow);
  started.resistance = (flow: number) => scaled(law.resistance(flow), flow);
  started.kinks = [kink, cap] as const;
  return started;
}

/** A branch's geometry prepared for its law: what does not depend on the melt. */
type BranchGeometry =
  | { type: "uniform"; geometry: UniformChannelGeometry }
  | { type: "tapered"; geometry: TaperedChannelGeometry }
  | { type: "radial"; gap: number; gateRadius: number; frontRadius: number };

/** The geometry of element `e` filled from `side` with `volume` (m³) and frozen layer `delta` (m). */
function branchGeometry(
  e: NetworkElement,
  at: { side: -1 | 0 | 1; delta: number; volume: number },
): BranchGeometry {
  const { side, delta } = at;
  const v = resistingVolume(e, side, at.volume);
  const g = e.geometry;
  const fraction = v / e.volume;
  switch (g.type) {
    case "uniform": {
      const section = delta > 0 ? shrinkSection(g.section, delta) : g.section;
      const length = fraction * g.length;
      return { type: "uniform", geometry: uniformChannelGeometry({ section, length }) };
    }
    case "tapered": {
      const [entry, exit] = side === 1 ? [g.exit, g.entry] : [g.entry, g.exit];
      const filledLength = side === -1 ? g.length : taperedFilledLength(entry, exit, g.length, v);
      const open = (s: Section) => (delta > 0 ? shrinkSection(s, delta) : s);
      const shrunkEntry = open(entry);
      const shrunkExit = open(exit);
      return {
        type: "tapered",
        geometry: taperedChannelGeometry({
          entry: shrunkEntry,
          exit: shrunkExit,
          length: g.length,
          filledLength,
        }),
      };
    }
    case "strip": {
      // The front advances along the flow length in a slit of the strip's width.
      const section: Section = { kind: "slit", width: g.width, gap: g.gap - 2 * delta };
      const length = fraction * g.flowLength;
      return { type: "uniform", geometry: uniformChannelGeometry({ section, length }) };
    }
    case "radial": {
      const r0 = g.gateRadius;
      const frontRadius = Math.sqrt(r0 * r0 + v / (Math.PI * g.gap));
      return { type: "radial", gap: g.gap - 2 * delta, gateRadius: r0, frontRadius };
    }
  }
}

/** The law of a prepared branch geometry with flow curve `curve`. */
function geometryLaw(geometry: BranchGeometry, curve: FlowCurve): ChannelLaw {
  switch (geometry.type) {
    case "uniform":
      return uniformGeometryLaw(geometry.geometry, curve);
    case "tapered":
      return taperedGeometryLaw(geometry.geometry, curve);
    case "radial": {
      const { gap, gateRadius, frontRadius } = geometry;
      const law = (flow: number) => radialDiskFlow(flow, { gap, gateRadius, frontRadius, curve });
      law.resistance = law;
      return law;
    }
  }
}
