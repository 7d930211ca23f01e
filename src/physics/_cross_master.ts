/**
 * Dimensionless master curves of the Kozicki wall integral for a Cross flow curve,
 * private to `physics/`: the fast path of `_wall_shear.ts` for curves tagged `cross`.
 *
 * For τ = τ*·F(x), x = η0·γ̇/τ*, F(x) = x/(1 + x^m), m = 1 − n (Cross (1965) J. Colloid
 * Sci. 20:417), the substitution γ̇ = x·τ* / η0 turns the wall integral of
 * `_wall_shear.ts` (Kozicki, Chou & Tiu (1966) Chem. Eng. Sci. 21:665, eq. 23; for c = 3
 * the Weissenberg–Rabinowitsch–Mooney equation, Bird, Armstrong & Hassager, *Dynamics of
 * Polymeric Liquids* vol. 1, 2nd ed., §5.3) into
 *
 *   a·Γ·η0/τ* = G(x_w) = J(x_w)/F(x_w)^c,   J(x) = ∫₀^x F(t)^(c−1)·t·F'(t) dt,
 *
 * which depends only on n, c = b/a and the dimensionless wall shear rate x_w. The
 * tabulated quantity is R(s) = ln J − c·ln F − s, s = ln x_w, which is bounded: it runs
 * from the Newtonian −ln(c + 1) to the power-law ln(n/(n·c + 1)). Then ln G = R + s and
 * φ' = d ln Γ/d ln γ̇w = 1 + R' = ν·(e^−R − c) with the local index
 * ν = x·F'/F = (1 + n·x^m)/(1 + x^m), so R' at each node is exact given J.
 *
 * J is accumulated on a uniform grid in s over x ∈ [1e-8, 1e12] by 4-point
 * Gauss–Legendre per cell (start value by 8-point panels over 40 units of s below the
 * grid), and R is interpolated by cubic Hermite with those exact node slopes (error
 * h⁴/384·max|R⁗|, h = 0.025). Circle (c = 3) and slit (c = 2) have their own tables;
 * other c in [2, 3.25] are interpolated between tables at 9 Chebyshev points of c
 * (barycentric form, Berrut & Trefethen (2004) SIAM Rev. 46:501), R being analytic in c.
 * φ' is evaluated from the interpolated R by the exact formula above (relative error
 * ≈ (n·c + 1)× that of R), not by differentiating the interpolant.
 *
 * The wall solve (ln g given, s wanted) reads s off an inverse table of the same grid step
 * in ln g, each node solved once by Newton on R, interpolated by Hermite with the slopes
 * ds/d ln g = 1/φ': for a circle, slit or Chebyshev node that is the answer; for other c
 * the inverses, interpolated in c, start Newton on the interpolated R.
 *
 * The stress potential K(s) = ∫ F·φ' ds (so that τ*·ΔK = ∫ τw d ln Γ, what a linear
 * taper's pressure drop needs: `tapered_flow.ts`) is tabulated on the same grid, on first use.
 *
 * Tables are built once per n (a few ms) and kept in a module-level Map; the c-family for
 * general sections is built on first use. Outside the grid, outside n ∈ [0.05, 0.98] or
 * c ∈ [2, 3.25] the caller falls back to the exact integral.
 *
 * @module
 */
import { compositeRule, gaussLegendre } from "./_quadrature.ts";

/** Grid of the tables in s = ln x. */
const S_MIN = Math.log(1e-8);
const S_MAX = Math.log(1e12);
const STEP = 0.025;
const CELLS = Math.ceil((S_MAX - S_MIN) / STEP);
const CELL_RULE = gaussLegendre(4);
/** Quadrature of J below the grid: 40 units of s (integrand ∝ e^((c·n+1)s) at least). */
const HEAD_RULE = compositeRule(Array.from({ length: 41 }, (_, k) => S_MIN - 40 + k), 8);

/** Fast-path domain of n and c (validated by tests/physics/master_curve_test.ts). */
const N_LO = 0.05;
const N_HI = 0.98;
const C_LO = 2;
const C_HI = 3.25;
const C_COUNT = 9;
/** Chebyshev points of the second kind on [C_LO, C_HI], descending, and their weights. */
const C_NODES = Array.from(
  { length: C_COUNT },
  (_, j) => 0.5 * (C_LO + C_HI) + 0.5 * (C_HI - C_LO) * Math.cos((j * Math.PI) / (C_COUNT - 1)),
);
C_NODES[0] = C_HI;
C_NODES[C_COUNT - 1] = C_LO;
const C_WEIGHTS = C_NODES.map((_, j) =>
  (j % 2 === 0 ? 1 : -1) * (j === 0 || j === C_COUNT - 1 ? 0.5 : 1)
);

/** R and R' at the grid nodes s_k = S_MIN + k·STEP, k = 0…CELLS, for one c. */
interface MasterTable {
  readonly r: Float64Array;
  readonly dr: Float64Array;
  /** ln K(s) − s of the stress potential and its slope at the same nodes, built on first use ({@link crossMasterPotential}). */
  k?: Float64Array;
  dk?: Float64Array;
  /** s as a function of ln g, the start of the wall solve, built on first use ({@link inverseOf}). */
  inverse?: InverseTable;
}

/** s at the nodes ln g = lo + k·STEP, k = 0…s.length − 1, and ds/d ln g = 1/φ' there. */
interface InverseTable {
  readonly lo: number;
  readonly s: Float64Array;
  readonly ds: Float64Array;
}

/** The master curves of one n. */
interface CrossMaster {
  readonly n: number;
  circle?: MasterTable;
  slit?: MasterTable;
  family?: MasterTable[];
}

const masters = new Map<number, CrossMaster>();

/** ln F and ln(x²·F') at s = ln x. */
function logParts(s: number, n: number, m: number): { lnF: number; lnW: number } {
  const xm = Math.exp(m * s);
  const lnF = s - Math.log1p(xm);
  // x²·F' = x²(1 + n·x^m)/(1 + x^m)²
  const lnW = 2 * s + Math.log1p(n * xm) - 2 * Math.log1p(xm);
  return { lnF, lnW };
}

/** Tables for several c at once (the integrand's F-dependent parts are shared). */
function buildTables(n: number, cs: readonly number[]): MasterTable[] {
  const m = 1 - n;
  const k = cs.length;
  const integral = new Float64Array(k);
  const { nodes: hn, weights: hw } = HEAD_RULE;
  for (let i = 0; i < hn.length; i++) {
    const { lnF, lnW } = logParts(hn[i], n, m);
    for (let j = 0; j < k; j++) integral[j] += hw[i] * Math.exp((cs[j] - 1) * lnF + lnW);
  }
  const tables = cs.map(() => ({
    r: new Float64Array(CELLS + 1),
    dr: new Float64Array(CELLS + 1),
  }));
  const record = (index: number) => {
    const s = S_MIN + index * STEP;
    const xm = Math.exp(m * s);
    const lnF = s - Math.log1p(xm);
    const nu = (1 + n * xm) / (1 + xm);
    for (let j = 0; j < k; j++) {
      const r = Math.log(integral[j]) - cs[j] * lnF - s;
      tables[j].r[index] = r;
      tables[j].dr[index] = nu * (Math.exp(-r) - cs[j]) - 1;
    }
  };
  record(0);
  const half = 0.5 * STEP;
  for (let cell = 0; cell < CELLS; cell++) {
    const mid = S_MIN + (cell + 0.5) * STEP;
    for (let i = 0; i < CELL_RULE.nodes.length; i++) {
      const { lnF, lnW } = logParts(mid + half * CELL_RULE.nodes[i], n, m);
      const w = half * CELL_RULE.weights[i];
      for (let j = 0; j < k; j++) integral[j] += w * Math.exp((cs[j] - 1) * lnF + lnW);
    }
    record(cell + 1);
  }
  return tables;
}

let lastMaster: CrossMaster | null = null;

function masterOf(n: number): CrossMaster {
  if (lastMaster !== null && lastMaster.n === n) return lastMaster;
  let hit = masters.get(n);
  if (!hit) {
    hit = { n };
    masters.set(n, hit);
  }
  lastMaster = hit;
  return hit;
}

/** Hermite basis at fractional position t in a cell of width STEP. */
function hermite(table: MasterTable, cell: number, t: number): number {
  return hermiteOf(table.r, table.dr, cell, t);
}

/** Cubic Hermite interpolant of nodal values `f` and slopes `df` (per unit s) at t in `cell`. */
function hermiteOf(f: Float64Array, df: Float64Array, cell: number, t: number): number {
  const t2 = t * t;
  const u = 1 - t;
  const u2 = u * u;
  return (1 + 2 * t) * u2 * f[cell] + t * u2 * STEP * df[cell] +
    t2 * (3 - 2 * t) * f[cell + 1] - t2 * u * STEP * df[cell + 1];
}

/**
 * K'(s) = F·φ' = x·F'·(e^−R − c) at s = ln x with R = R(s): the slope of the stress
 * potential (x·F' = F·ν = x(1 + n·x^m)/(1 + x^m)²).
 */
function potentialSlope(s: number, r: number, n: number, c: number): number {
  const x = Math.exp(s);
  const xm = Math.exp((1 - n) * s);
  const xdF = (x * (1 + n * xm)) / ((1 + xm) * (1 + xm));
  return xdF * (Math.exp(-r) - c);
}

/**
 * The stress potential of one table, kept as L(s) = ln K(s) − s (bounded and smooth:
 * 0 at the Newtonian end, linear at the power-law end) with exact node slopes
 * L' = K'/K − 1. K starts at e^S_MIN, the Newtonian potential below the grid (any constant
 * would do: only differences of K have meaning), and is accumulated by 4-point
 * Gauss–Legendre per cell on the Hermite R (error h⁴/384·|R⁗|).
 */
function buildPotential(table: MasterTable, n: number, c: number): void {
  const k = new Float64Array(CELLS + 1);
  const dk = new Float64Array(CELLS + 1);
  let sum = Math.exp(S_MIN);
  const record = (i: number) => {
    const s = S_MIN + i * STEP;
    k[i] = Math.log(sum) - s;
    dk[i] = potentialSlope(s, table.r[i], n, c) / sum - 1;
  };
  record(0);
  for (let cell = 0; cell < CELLS; cell++) {
    for (let i = 0; i < CELL_RULE.nodes.length; i++) {
      const t = 0.5 + 0.5 * CELL_RULE.nodes[i];
      const s = S_MIN + (cell + t) * STEP;
      sum += 0.5 * STEP * CELL_RULE.weights[i] * potentialSlope(s, hermite(table, cell, t), n, c);
    }
    record(cell + 1);
  }
  table.k = k;
  table.dk = dk;
}

/** Barycentric weights for the current c (scratch, reused between calls). */
const LW = new Float64Array(C_COUNT);

/**
 * Tables for (n, c): one table (circle, slit or a Chebyshev node), or the c-family with
 * its barycentric weights for c written into LW; null if c is outside [C_LO, C_HI].
 */
function tablesFor(master: CrossMaster, c: number): MasterTable | MasterTable[] | null {
  if (c === 3) return master.circle ??= buildTables(master.n, [3])[0];
  if (c === 2) return master.slit ??= buildTables(master.n, [2])[0];
  if (!(c >= C_LO && c <= C_HI)) return null;
  const family = master.family ??= buildTables(master.n, C_NODES);
  let total = 0;
  for (let j = 0; j < C_COUNT; j++) {
    if (c === C_NODES[j]) return family[j];
    LW[j] = C_WEIGHTS[j] / (c - C_NODES[j]);
    total += LW[j];
  }
  for (let j = 0; j < C_COUNT; j++) LW[j] /= total;
  return family;
}

/** R(s) (s inside the grid) from one table or from the family weighted by LW. */
function evalR(tables: MasterTable | MasterTable[], s: number): number {
  const pos = (s - S_MIN) / STEP;
  let cell = Math.floor(pos);
  if (cell >= CELLS) cell = CELLS - 1;
  const t = pos - cell;
  if (!Array.isArray(tables)) return hermite(tables, cell, t);
  let sum = 0;
  for (let j = 0; j < C_COUNT; j++) sum += LW[j] * hermite(tables[j], cell, t);
  return sum;
}

/** K(s) (s inside the grid) from one table or from the family weighted by LW. */
function evalK(
  master: CrossMaster,
  c: number,
  tables: MasterTable | MasterTable[],
  s: number,
): number {
  const pos = (s - S_MIN) / STEP;
  let cell = Math.floor(pos);
  if (cell >= CELLS) cell = CELLS - 1;
  const t = pos - cell;
  if (!Array.isArray(tables)) {
    if (!tables.k) buildPotential(tables, master.n, c);
    return Math.exp(hermiteOf(tables.k!, tables.dk!, cell, t) + s);
  }
  let sum = 0;
  for (let j = 0; j < C_COUNT; j++) {
    const table = tables[j];
    if (!table.k) buildPotential(table, master.n, C_NODES[j]);
    sum += LW[j] * Math.exp(hermiteOf(table.k!, table.dk!, cell, t) + s);
  }
  return sum;
}

/**
 * The dimensionless stress potential K(s_w) = ∫ F(x_w) d ln g from s = S_MIN, so that
 * τ*·(K(s₁) − K(s₀)) = ∫ τw d ln Γ between two wall states of one curve and one c
 * (g ∝ Γ; d ln g = φ'·ds). K is tabulated like R, with exact node slopes K' = F·φ', and
 * interpolated in c as R is (analytic in c). NaN outside the tabulated domain.
 */
export function crossMasterPotential(n: number, c: number, s: number): number {
  if (!(n >= N_LO && n <= N_HI) || !(s >= S_MIN && s <= S_MAX)) return NaN;
  const master = masterOf(n);
  const tables = tablesFor(master, c);
  if (!tables) return NaN;
  return evalK(master, c, tables, s);
}

/**
 * Solve G(x_w) = g (g = a·Γ·η0/τ* > 0) for the Cross index n and ratio c = b/a: writes the
 * dimensionless wall state into `out` (0: x_w = η0·γ̇w/τ*; 1: F(x_w) = τw/τ*; 2: the local
 * index ν = d ln τ/d ln γ̇ at the wall; 3: φ' = d ln Γ/d ln γ̇w > 0; 4, when `out` has a
 * fifth slot: s = ln x_w, the argument of {@link crossMasterPotential}) and returns true, or
 * returns false when (n, c, x_w) lies outside the tabulated domain (then use the exact
 * integral).
 */
export function crossMasterSolve(n: number, c: number, g: number, out: Float64Array): boolean {
  if (!(n >= N_LO && n <= N_HI) || !(g > 0) || !Number.isFinite(g)) return false;
  const master = masterOf(n);
  const tables = tablesFor(master, c);
  if (!tables) return false;
  const m = 1 - n;
  const target = Math.log(g);
  const direct = Array.isArray(tables) ? NaN : inverseAt(inverseOf(tables, n, c), target);
  if (!Number.isNaN(direct)) {
    // One table: its inverse's cubic is the root to the tables' own accuracy (the master
    // curve tests agree with the exact integral to 3e-10 either way), so no Newton step is
    // needed; φ' by the exact formula, with R = ln g − s at the root (ln G = R + s), so
    // e^−R = x/g.
    const s = direct;
    const x = Math.exp(s);
    const xm = Math.exp(m * s);
    out[0] = x;
    out[1] = x / (1 + xm);
    const nu = (1 + n * xm) / (1 + xm);
    out[2] = nu;
    out[3] = nu * (x / g - c);
    if (out.length > 4) out[4] = s;
    return true;
  }
  let s = startOf(master, c, tables, target);
  for (let iter = 0; iter < 40; iter++) {
    if (s < S_MIN || s > S_MAX) {
      // Try once from the clamped end; a root outside the grid falls back.
      const edge = s < S_MIN ? S_MIN : S_MAX;
      const r = evalR(tables, edge);
      if ((s < S_MIN && r + edge > target) || (s > S_MAX && r + edge < target)) return false;
      s = edge;
    }
    const r = evalR(tables, s);
    const xm = Math.exp(m * s);
    const nu = (1 + n * xm) / (1 + xm);
    const slope = nu * (Math.exp(-r) - c);
    const step = (target - r - s) / slope;
    s += step;
    if (Math.abs(step) < NEWTON_DONE) {
      if (s < S_MIN || s > S_MAX) return false;
      // R at the new s to first order (R' = φ' − 1; the rest is ≲ step² as well).
      const rFinal = r + (slope - 1) * step;
      const x = Math.exp(s);
      const xmFinal = Math.exp(m * s);
      const nuFinal = (1 + n * xmFinal) / (1 + xmFinal);
      out[0] = x;
      out[1] = x / (1 + xmFinal);
      out[2] = nuFinal;
      out[3] = nuFinal * (Math.exp(-rFinal) - c);
      if (out.length > 4) out[4] = s;
      return true;
    }
  }
  return false;
}

/**
 * A Newton step this small ends the wall solve: convergence is quadratic with
 * |φ''/(2φ')| ≲ 1 (φ' → 1 at both ends of the curve), so the root is then within ~1e-12
 * in s, below the tables' own interpolation error.
 */
const NEWTON_DONE = 1e-6;

/**
 * Start of the wall solve for ln g = `target`: the inverse tables' Hermite value (for the
 * c-family interpolated in c like R, s being analytic in c too), within ~1e-9 of the root, so
 * one Newton step usually ends it; outside the inverse tables the Newtonian start
 * R = −ln(c + 1).
 */
function startOf(
  master: CrossMaster,
  c: number,
  tables: MasterTable | MasterTable[],
  target: number,
): number {
  let start: number;
  if (!Array.isArray(tables)) start = inverseAt(inverseOf(tables, master.n, c), target);
  else {
    start = 0;
    for (let j = 0; j < C_COUNT; j++) {
      start += LW[j] * inverseAt(inverseOf(tables[j], master.n, C_NODES[j]), target);
    }
  }
  return Number.isNaN(start) ? target + Math.log(c + 1) : start;
}

/**
 * s(ln g) from the inverse table's Hermite cubic, or NaN outside the table (or where a node of
 * the cell was clamped to the edge of the R grid).
 */
function inverseAt(inverse: InverseTable, target: number): number {
  const pos = (target - inverse.lo) / STEP;
  const last = inverse.s.length - 1;
  if (!(pos >= 0 && pos <= last)) return NaN;
  let cell = Math.floor(pos);
  if (cell >= last) cell = last - 1;
  const { s, ds } = inverse;
  if (s[cell] <= S_MIN || s[cell + 1] >= S_MAX) return NaN;
  return hermiteOf(s, ds, cell, pos - cell);
}

/**
 * The inverse of ln g = R(s) + s on a uniform grid in ln g from its value at S_MIN, each
 * node solved by Newton on the table from the node before, with slope 1/φ'.
 */
function inverseOf(table: MasterTable, n: number, c: number): InverseTable {
  if (table.inverse) return table.inverse;
  const lo = table.r[0] + S_MIN;
  const hi = table.r[CELLS] + S_MAX;
  const count = Math.floor((hi - lo) / STEP) + 1;
  const s = new Float64Array(count);
  const ds = new Float64Array(count);
  const m = 1 - n;
  let root = S_MIN;
  for (let k = 0; k < count; k++) {
    const target = lo + k * STEP;
    let slope = 1;
    for (let iter = 0; iter < 40; iter++) {
      const r = evalR(table, Math.min(S_MAX, Math.max(S_MIN, root)));
      const xm = Math.exp(m * root);
      slope = ((1 + n * xm) / (1 + xm)) * (Math.exp(-r) - c);
      const step = (target - r - root) / slope;
      root = Math.min(S_MAX, Math.max(S_MIN, root + step));
      if (Math.abs(step) < 1e-13) break;
    }
    s[k] = root;
    ds[k] = 1 / slope;
  }
  return table.inverse = { lo, s, ds };
}
