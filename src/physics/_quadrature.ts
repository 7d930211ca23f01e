/**
 * Gauss–Legendre quadrature rules, private to `physics/`.
 *
 * @module
 */

/** A quadrature rule on [−1, 1]: nodes and weights. */
export interface GaussRule {
  readonly nodes: Float64Array;
  readonly weights: Float64Array;
}

const cache = new Map<number, GaussRule>();

/**
 * The n-point Gauss–Legendre rule on [−1, 1], exact for polynomials of degree 2n − 1.
 * Nodes by Newton's method on Pₙ from the Chebyshev-like initial guess cos(π(i − ¼)/(n + ½)),
 * weights 2/((1 − x²)Pₙ'(x)²). Abramowitz & Stegun (1964) eq. 25.4.29; Press et al.,
 * *Numerical Recipes* (3rd ed.) §4.6. Cached per n.
 */
export function gaussLegendre(n: number): GaussRule {
  const hit = cache.get(n);
  if (hit) return hit;
  if (!Number.isInteger(n) || n < 1 || n > 200) {
    throw new RangeError(
      `Cannot build a Gauss–Legendre rule: n must be an integer in 1..200, got ${n}`,
    );
  }
  const nodes = new Float64Array(n);
  const weights = new Float64Array(n);
  const half = Math.floor((n + 1) / 2);
  for (let i = 1; i <= half; i++) {
    let x = Math.cos((Math.PI * (i - 0.25)) / (n + 0.5));
    let dp = 1;
    for (let iter = 0; iter < 100; iter++) {
      let p0 = 1;
      let p1 = x;
      for (let k = 2; k <= n; k++) {
        const p2 = ((2 * k - 1) * x * p1 - (k - 1) * p0) / k;
        p0 = p1;
        p1 = p2;
      }
      const pn = n === 1 ? x : p1;
      const pnm1 = n === 1 ? 1 : p0;
      dp = (n * (x * pn - pnm1)) / (x * x - 1);
      const dx = pn / dp;
      x -= dx;
      if (Math.abs(dx) < 1e-16) break;
    }
    const w = 2 / ((1 - x * x) * dp * dp);
    nodes[i - 1] = -x;
    nodes[n - i] = x;
    weights[i - 1] = w;
    weights[n - i] = w;
  }
  const rule = { nodes, weights };
  cache.set(n, rule);
  return rule;
}

/** A composite rule on a fixed interval: absolute nodes and weights, ready to sum. */
export interface PanelRule {
  readonly nodes: Float64Array;
  readonly weights: Float64Array;
}

/**
 * Composite Gauss–Legendre rule with `pointsPerPanel` points on each panel between
 * consecutive `breaks` (ascending).
 */
export function compositeRule(breaks: readonly number[], pointsPerPanel: number): PanelRule {
  const g = gaussLegendre(pointsPerPanel);
  const panels = breaks.length - 1;
  const nodes = new Float64Array(panels * pointsPerPanel);
  const weights = new Float64Array(panels * pointsPerPanel);
  let k = 0;
  for (let p = 0; p < panels; p++) {
    const lo = breaks[p];
    const hi = breaks[p + 1];
    const mid = 0.5 * (lo + hi);
    const halfWidth = 0.5 * (hi - lo);
    for (let i = 0; i < pointsPerPanel; i++) {
      nodes[k] = mid + halfWidth * g.nodes[i];
      weights[k] = halfWidth * g.weights[i];
      k++;
    }
  }
  return { nodes, weights };
}
