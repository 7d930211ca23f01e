/**
 * Thermal helpers, pure SI (m, s, K, Pa, kg/m³, J/(kg·K), m²/s): frozen-layer growth,
 * adiabatic viscous heating, and closed-form cooling times.
 *
 * @module
 */
import { erf, erfInv } from "./_erf.ts";

export { erf, erfc, erfInv } from "./_erf.ts";

/**
 * First positive zero of the Bessel function J0, λ₁ = 2.404825557695773.
 * Abramowitz & Stegun, *Handbook of Mathematical Functions* (1964), Table 9.5.
 */
export const BESSEL_J0_FIRST_ZERO = 2.404825557695773;

/**
 * Exponent constant of the cylinder mean-temperature cooling time, 4λ₁² ≈ 23.1327
 * (Menges, Michaeli & Mohren, *How to Make Injection Molds*, print 23.13): with D = 2R the
 * first series term decays as exp(−λ₁²·αt/R²) = exp(−4λ₁²·αt/D²).
 */
export const CYLINDER_MEAN_EXPONENT = 4 * BESSEL_J0_FIRST_ZERO * BESSEL_J0_FIRST_ZERO;

/**
 * Amplitude of the first term of the cylinder mean-temperature series, 4/λ₁² ≈ 0.69166
 * (Menges, Michaeli & Mohren print 0.6917): the centre-line term 2/(λ₁J1(λ₁))·J0(λ₁r/R)
 * averaged over the section (∫₀¹ 2r·J0(λ₁r) dr = 2J1(λ₁)/λ₁) gives 4/λ₁².
 */
export const CYLINDER_MEAN_AMPLITUDE = 4 / (BESSEL_J0_FIRST_ZERO * BESSEL_J0_FIRST_ZERO);

function requirePositive(what: string, name: string, value: number): void {
  if (!(value > 0) || !Number.isFinite(value)) {
    throw new RangeError(`Cannot compute ${what}: ${name} must be > 0, got ${value}`);
  }
}

function requireFinite(what: string, name: string, value: number): void {
  if (!Number.isFinite(value)) {
    throw new RangeError(`Cannot compute ${what}: ${name} must be finite, got ${value}`);
  }
}

/** Options of {@link frozenLayerThickness}. Temperatures in K. */
export interface FrozenLayerOptions {
  /** Melt temperature T_m, K. */
  meltTemperature: number;
  /** Mold wall temperature T_w, K. */
  wallTemperature: number;
  /** No-flow temperature T_nf, K. */
  noFlowTemperature: number;
  /** Melt thermal diffusivity α, m²/s (> 0). */
  diffusivity: number;
}

/**
 * Frozen-layer thickness δ = 2·erf⁻¹(θ)·√(α·t), m, after contact time t (s, ≥ 0), with
 * θ = (T_nf − T_w)/(T_m − T_w): the depth where the semi-infinite conduction profile
 * T = T_w + (T_m − T_w)·erf(x/(2√(αt))) reaches T_nf (Carslaw & Jaeger, *Conduction of Heat in
 * Solids*, 2nd ed., §2.4). Returns 0 when the wall is at or above T_nf (θ ≤ 0) or t = 0, and
 * Infinity when the melt itself is at or below T_nf (the whole channel is frozen; callers cap
 * the layer at the channel's half-size).
 */
export function frozenLayerThickness(contactTime: number, options: FrozenLayerOptions): number {
  const theta = frozenLayerTheta(contactTime, options);
  if (theta === Infinity || theta === 0) return theta;
  return 2 * rememberedErfInv(theta) * Math.sqrt(options.diffusivity * contactTime);
}

/**
 * Whether {@link frozenLayerThickness} at `contactTime` (s) returns less than `thickness`
 * (m, > 0), mostly without its erf⁻¹: δ < s ⟺ θ < erf(s/(2√(α·t))) (erf increases). When
 * erf⁻¹(θ) is not remembered the test is taken on that side with a margin of 1e-9 relative
 * on each of z and erf(z), far above their rounding, so a true answer is always right; within
 * the margin it answers false and the caller computes δ. Throws as frozenLayerThickness does.
 */
export function frozenLayerThinnerThan(
  contactTime: number,
  thickness: number,
  options: FrozenLayerOptions,
  bound?: ThinnerBound,
): boolean {
  const theta = frozenLayerTheta(contactTime, options);
  if (theta === Infinity || theta === 0) return theta < thickness;
  const root = Math.sqrt(options.diffusivity * contactTime);
  const remembered = knownErfInv(theta);
  if (!Number.isNaN(remembered)) return 2 * remembered * root < thickness;
  return theta < (bound ? bound.value(root, thickness) : thinnerBound(root, thickness));
}

/**
 * The bound θ is compared with in {@link frozenLayerThinnerThan}, erf(z)·(1 − 1e-9) with
 * z = s/(2√(α·t))·(1 − 1e-9), asked with root = √(α·t) (m) and the thickness s (m): it does not
 * depend on the melt, so a caller that asks again at the same root and thickness with another
 * melt temperature may keep it.
 */
export interface ThinnerBound {
  value(root: number, thickness: number): number;
}

/** erf(z)·(1 − 1e-9), z = thickness/(2·root)·(1 − 1e-9), root = √(α·t). */
function thinnerBound(root: number, thickness: number): number {
  const z = (thickness / (2 * root)) * (1 - 1e-9);
  return erf(z) * (1 - 1e-9);
}

/** A {@link ThinnerBound} that remembers its last answer. */
export function rememberedThinnerBound(): ThinnerBound {
  let lastRoot = NaN;
  let lastThickness = NaN;
  let last = NaN;
  return {
    value(root: number, thickness: number): number {
      if (root !== lastRoot || thickness !== lastThickness) {
        last = thinnerBound(root, thickness);
        lastRoot = root;
        lastThickness = thickness;
      }
      return last;
    },
  };
}

/**
 * θ = (T_nf − T_w)/(T_m − T_w) of {@link frozenLayerThickness} after its argument checks,
 * or its special results: Infinity when the melt is at or below T_nf, 0 when the wall is at
 * or above T_nf or t = 0.
 */
function frozenLayerTheta(contactTime: number, options: FrozenLayerOptions): number {
  const what = "frozen-layer thickness";
  if (!(contactTime >= 0) || !Number.isFinite(contactTime)) {
    throw new RangeError(`Cannot compute ${what}: contact time must be ≥ 0 s, got ${contactTime}`);
  }
  const { meltTemperature: tm, wallTemperature: tw, noFlowTemperature: tnf } = options;
  requireFinite(what, "melt temperature", tm);
  requireFinite(what, "wall temperature", tw);
  requireFinite(what, "no-flow temperature", tnf);
  requirePositive(what, "diffusivity", options.diffusivity);
  if (tm <= tnf) return Infinity;
  if (tw >= tnf || contactTime === 0) return 0;
  return (tnf - tw) / (tm - tw);
}

/**
 * erf⁻¹ of recent arguments (a fill asks for the same θ at every trial of a step): a
 * direct-mapped table of 1024 slots indexed by the argument's bits.
 */
const ERF_INV_KEYS = new Float64Array(1024).fill(NaN);
const ERF_INV_VALUES = new Float64Array(1024);
const BITS = new Float64Array(1);
const BITS_WORDS = new Uint32Array(BITS.buffer);

function slotOf(x: number): number {
  BITS[0] = x;
  return (BITS_WORDS[0] ^ BITS_WORDS[1]) & 1023;
}

function rememberedErfInv(x: number): number {
  const slot = slotOf(x);
  if (ERF_INV_KEYS[slot] === x) return ERF_INV_VALUES[slot];
  const y = erfInv(x);
  ERF_INV_KEYS[slot] = x;
  ERF_INV_VALUES[slot] = y;
  return y;
}

/** erf⁻¹(x) if it is remembered, else NaN. */
function knownErfInv(x: number): number {
  const slot = slotOf(x);
  return ERF_INV_KEYS[slot] === x ? ERF_INV_VALUES[slot] : NaN;
}

/** Options of {@link adiabaticHeating}. */
export interface AdiabaticHeatingOptions {
  /** Melt density ρ, kg/m³ (> 0). */
  density: number;
  /** Melt specific heat cp, J/(kg·K) (> 0). */
  specificHeat: number;
}

/**
 * Adiabatic temperature rise ΔT = ΔP/(ρ·cp), K, for a pressure drop ΔP in Pa (≥ 0): the upper
 * bound when all viscous work stays in the melt (energy balance; Tadmor & Gogos, *Principles
 * of Polymer Processing*, 2nd ed.).
 */
export function adiabaticHeating(pressureDrop: number, options: AdiabaticHeatingOptions): number {
  const what = "adiabatic heating";
  if (!(pressureDrop >= 0) || !Number.isFinite(pressureDrop)) {
    throw new RangeError(
      `Cannot compute ${what}: pressure drop must be ≥ 0 Pa, got ${pressureDrop}`,
    );
  }
  requirePositive(what, "density", options.density);
  requirePositive(what, "specific heat", options.specificHeat);
  return pressureDrop / (options.density * options.specificHeat);
}

/** Options of the cooling-time functions. Temperatures in K. */
export interface CoolingTimeOptions {
  /** Thermal diffusivity α, m²/s (> 0). */
  diffusivity: number;
  /** Melt (initial) temperature T_m, K. */
  meltTemperature: number;
  /** Mold wall temperature T_w, K. */
  moldTemperature: number;
  /** Target (ejection or freeze) temperature T_e, K; at or below T_w it is never reached (Infinity). */
  ejectionTemperature: number;
}

function temperatureRatio(what: string, options: CoolingTimeOptions): number {
  const { meltTemperature: tm, moldTemperature: tw, ejectionTemperature: te } = options;
  requireFinite(what, "melt temperature", tm);
  requireFinite(what, "mold temperature", tw);
  requireFinite(what, "ejection temperature", te);
  requirePositive(what, "diffusivity", options.diffusivity);
  if (!(te > tw)) return Infinity;
  return (tm - tw) / (te - tw);
}

/**
 * Cooling time of a plate of thickness s (m, cooled on both faces) until its centre line reaches
 * T_e, s: t = s²/(π²α)·ln[(4/π)(T_m − T_w)/(T_e − T_w)] — first term of the Fourier series
 * (Menges, Michaeli & Mohren, *How to Make Injection Molds*, 3rd ed., cooling-time chapter).
 * Returns 0 when the logarithm is ≤ 0 (the melt already starts near T_e; the one-term form
 * does not apply there) and Infinity when T_e ≤ T_w (never reached).
 */
export function plateCoolingTime(thickness: number, options: CoolingTimeOptions): number {
  const what = "plate cooling time";
  requirePositive(what, "thickness", thickness);
  const ratio = temperatureRatio(what, options);
  const log = Math.log((4 / Math.PI) * ratio);
  if (!(log > 0)) return 0;
  return (thickness * thickness) / (Math.PI * Math.PI * options.diffusivity) * log;
}

/**
 * Cooling time of a plate of thickness s (m) until its mean temperature reaches T_e, s:
 * t = s²/(π²α)·ln[(8/π²)(T_m − T_w)/(T_e − T_w)] (first term of the mean-temperature series;
 * Menges, Michaeli & Mohren, *How to Make Injection Molds*). Do not mix with the centre-line form.
 * Returns 0 when the logarithm is ≤ 0, Infinity when T_e ≤ T_w.
 */
export function plateMeanCoolingTime(thickness: number, options: CoolingTimeOptions): number {
  const what = "plate mean cooling time";
  requirePositive(what, "thickness", thickness);
  const ratio = temperatureRatio(what, options);
  const log = Math.log((8 / (Math.PI * Math.PI)) * ratio);
  if (!(log > 0)) return 0;
  return (thickness * thickness) / (Math.PI * Math.PI * options.diffusivity) * log;
}

/**
 * Cooling time of a long cylinder of diameter D (m) until its mean temperature reaches T_e, s:
 * t = D²/(23.13·α)·ln[0.6917·(T_m − T_w)/(T_e − T_w)] (Menges, Michaeli & Mohren, *How to Make
 * Injection Molds*), here with the exact constants 4λ₁² and 4/λ₁² (λ₁ the first zero of J0,
 * {@link CYLINDER_MEAN_EXPONENT}, {@link CYLINDER_MEAN_AMPLITUDE}). Returns 0 when the logarithm
 * is ≤ 0, Infinity when T_e ≤ T_w (never reached).
 */
export function cylinderCoolingTime(diameter: number, options: CoolingTimeOptions): number {
  const what = "cylinder cooling time";
  requirePositive(what, "diameter", diameter);
  const ratio = temperatureRatio(what, options);
  const log = Math.log(CYLINDER_MEAN_AMPLITUDE * ratio);
  if (!(log > 0)) return 0;
  return (diameter * diameter) / (CYLINDER_MEAN_EXPONENT * options.diffusivity) * log;
}

/** J1(λ₁), the Bessel function of the first kind, order 1, at the first zero of J0 (A&S Table 9.5 gives J1(j0,1) = 0.5191474973). */
export const BESSEL_J1_AT_J0_FIRST_ZERO = 0.5191474972894669;
/** Centre-line amplitude of the cylinder's first series term, 2/(λ₁·J1(λ₁)) = 1.6020. */
export const CYLINDER_CENTRE_AMPLITUDE = 2 / (BESSEL_J0_FIRST_ZERO * BESSEL_J1_AT_J0_FIRST_ZERO);

/**
 * Time for the axis of a long cylinder (diameter D, m) to cool from Tm to Te with its
 * surface held at Tw: the first term of the series solution,
 * t = D²/(4λ₁²α)·ln[(2/(λ₁J1(λ₁)))·(Tm−Tw)/(Te−Tw)] = D²/(23.13α)·ln[1.602(Tm−Tw)/(Te−Tw)]
 * (Carslaw & Jaeger, *Conduction of Heat in Solids*, 2nd ed., §7.6). The centre-line
 * counterpart of {@link cylinderCoolingTime}'s mean-temperature form (Menges, Michaeli &
 * Mohren): compare it with {@link plateCoolingTime}, which is also centre-line. Returns 0 when
 * the logarithm is ≤ 0, Infinity when Te ≤ Tw. Units: s.
 */
export function cylinderCentreCoolingTime(diameter: number, options: CoolingTimeOptions): number {
  const what = "cylinder centre-line cooling time";
  requirePositive(what, "diameter", diameter);
  const ratio = temperatureRatio(what, options);
  const log = Math.log(CYLINDER_CENTRE_AMPLITUDE * ratio);
  if (!(log > 0)) return 0;
  return (diameter * diameter) / (CYLINDER_MEAN_EXPONENT * options.diffusivity) * log;
}
