/**
 * Flow curves: the shear stress of a melt as a function of shear rate at one
 * temperature and pressure, τ(γ̇) = η(γ̇)·γ̇. Every channel law in `physics/`
 * takes one of these, so any generalized-Newtonian model plugs in.
 *
 * @module
 */

/** Shear-thinning melt at a fixed temperature and pressure. All SI. Methods are called on the curve. */
export interface FlowCurve {
  /** Shear viscosity η(γ̇), Pa·s, for shear rate γ̇ ≥ 0 in 1/s. */
  viscosity(shearRate: number): number;
  /** Shear stress τ = η(γ̇)·γ̇, Pa. Strictly increasing in γ̇. */
  stress(shearRate: number): number;
  /** dτ/dγ̇, Pa·s (> 0). */
  stressSlope(shearRate: number): number;
  /** Set when the curve is an exact power law τ = K·γ̇ⁿ (n = 1: Newtonian). */
  readonly powerLaw?: { readonly consistency: number; readonly index: number };
  /**
   * Set when the curve is exactly the Cross model η = η0/(1 + (η0·γ̇/τ*)^(1−n)) (η0 in
   * Pa·s, τ* in Pa, 0 < n < 1); the channel laws then use tabulated master curves.
   */
  readonly cross?: {
    readonly zeroShearViscosity: number;
    readonly tauStar: number;
    readonly index: number;
  };
}

/** Newtonian fluid, τ = μ·γ̇ (μ in Pa·s). */
export function newtonianCurve(viscosity: number): FlowCurve {
  if (!(viscosity > 0)) {
    throw new RangeError(`Cannot build a Newtonian curve: viscosity must be > 0, got ${viscosity}`);
  }
  return {
    viscosity: () => viscosity,
    stress: (g) => viscosity * g,
    stressSlope: () => viscosity,
    powerLaw: { consistency: viscosity, index: 1 },
  };
}

/**
 * Power-law fluid τ = K·γ̇ⁿ (K in Pa·sⁿ, 0 < n ≤ 1). Ostwald–de Waele; Bird,
 * Armstrong & Hassager, *Dynamics of Polymeric Liquids* vol. 1, ch. 5.
 */
export function powerLawCurve(consistency: number, index: number): FlowCurve {
  if (!(consistency > 0)) {
    throw new RangeError(`Cannot build a power-law curve: K must be > 0, got ${consistency}`);
  }
  if (!(index > 0 && index <= 1)) {
    throw new RangeError(`Cannot build a power-law curve: n must be in (0, 1], got ${index}`);
  }
  return {
    viscosity: (g) => consistency * Math.pow(g, index - 1),
    stress: (g) => consistency * Math.pow(g, index),
    stressSlope: (g) => consistency * index * Math.pow(g, index - 1),
    powerLaw: { consistency, index },
  };
}

/**
 * Cross model at fixed T and p: η = η0 / (1 + (η0·γ̇/τ*)^(1−n)).
 * Cross (1965) J. Colloid Sci. 20:417. η0 in Pa·s, τ* in Pa, 0 < n < 1.
 */
export function crossCurve(
  zeroShearViscosity: number,
  options: { tauStar: number; index: number },
): FlowCurve {
  const eta0 = zeroShearViscosity;
  const { tauStar, index: n } = options;
  if (!(eta0 > 0) || !(tauStar > 0) || !(n > 0 && n < 1)) {
    throw new RangeError(
      `Cannot build a Cross curve: need η0 > 0, τ* > 0, 0 < n < 1, got η0=${eta0}, τ*=${tauStar}, n=${n}`,
    );
  }
  return new CrossCurve(eta0, tauStar, n);
}

/**
 * A Cross curve as one object with its methods on the prototype: a fill builds one per
 * element and melt state (about 10⁵ per 64-cavity fill), so closures per curve were garbage.
 */
class CrossCurve implements FlowCurve {
  readonly cross: {
    readonly zeroShearViscosity: number;
    readonly tauStar: number;
    readonly index: number;
  };
  private readonly m: number;

  constructor(private readonly eta0: number, private readonly tauStar: number, n: number) {
    this.m = 1 - n;
    this.cross = { zeroShearViscosity: eta0, tauStar, index: n };
  }

  viscosity(g: number): number {
    return this.eta0 / (1 + Math.pow((this.eta0 * g) / this.tauStar, this.m));
  }

  stress(g: number): number {
    return this.viscosity(g) * g;
  }

  stressSlope(g: number): number {
    // d/dγ̇ [η0 γ̇ / (1 + x^m)], x = η0 γ̇ / τ*  →  η0 (1 + n x^m) / (1 + x^m)²
    const xm = Math.pow((this.eta0 * g) / this.tauStar, this.m);
    return (this.eta0 * (1 + this.cross.index * xm)) / ((1 + xm) * (1 + xm));
  }
}
