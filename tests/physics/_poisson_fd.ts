/**
 * Test oracle: the Newtonian fully developed duct flow ∇²w = −1 (w = 0 on the wall)
 * solved by finite differences on a square grid, with Shortley–Weller irregular stars at
 * the curved or slanted wall (second order; Shortley & Weller (1938) J. Appl. Phys.
 * 9:334; Collatz, *The Numerical Treatment of Differential Equations*), SOR iteration,
 * and Richardson extrapolation in h. Gives the Poiseuille number
 * fRe = Dh²·A / (2∫w dA) of a convex section (Shah & London (1978) ch. 2 definition:
 * f = τ̄w/(½ρū²), Re = ρūDh/μ, so fRe = 2Dh²(G/μ)… with G/μ = 1 here).
 *
 * Independent of the code under test except for the exact area and perimeter.
 */
import { hydraulicDiameter, type Section, sectionArea } from "../../src/physics/section.ts";

/** A convex region described by its horizontal and vertical chords. */
interface Region {
  x0: number;
  x1: number;
  y0: number;
  y1: number;
  /** [xl, xr] of the chord at height y, or null if y misses the region. */
  xRange(y: number): [number, number] | null;
  /** [yb, yt] of the chord at abscissa x, or null. */
  yRange(x: number): [number, number] | null;
}

function region(s: Section): Region {
  switch (s.kind) {
    case "circle":
    case "half_round":
    case "d_shape": {
      const r = s.radius;
      const e = s.kind === "circle" ? r : s.kind === "half_round" ? 0 : s.flatOffset;
      return {
        x0: -r,
        x1: r,
        y0: -r,
        y1: e,
        xRange: (y) => {
          if (y <= -r || y >= e) return null;
          const c = Math.sqrt(r * r - y * y);
          return [-c, c];
        },
        yRange: (x) => {
          if (Math.abs(x) >= r) return null;
          const c = Math.sqrt(r * r - x * x);
          const top = Math.min(c, e);
          return -c < top ? [-c, top] : null;
        },
      };
    }
    case "trapezoid": {
      const { topWidth: t, bottomWidth: b, depth: d } = s;
      const h = 0.5 * (t - b);
      return {
        x0: -t / 2,
        x1: t / 2,
        y0: 0,
        y1: d,
        xRange: (y) => {
          if (y <= 0 || y >= d) return null;
          const hw = t / 2 - (h * y) / d;
          return [-hw, hw];
        },
        yRange: (x) => {
          const ax = Math.abs(x);
          if (ax >= t / 2) return null;
          if (ax <= b / 2) return [0, d];
          return [0, ((t / 2 - ax) * d) / h];
        },
      };
    }
    case "parabolic": {
      const { width: w, depth: d } = s;
      return {
        x0: -w / 2,
        x1: w / 2,
        y0: 0,
        y1: d,
        xRange: (y) => {
          if (y <= 0 || y >= d) return null;
          const hw = (w / 2) * Math.sqrt(1 - y / d);
          return [-hw, hw];
        },
        yRange: (x) => {
          if (Math.abs(x) >= w / 2) return null;
          return [0, d * (1 - (4 * x * x) / (w * w))];
        },
      };
    }
    case "rectangle": {
      const a = s.width / 2;
      const b = s.height / 2;
      return {
        x0: -a,
        x1: a,
        y0: -b,
        y1: b,
        xRange: (y) => (Math.abs(y) < b ? [-a, a] : null),
        yRange: (x) => (Math.abs(x) < a ? [-b, b] : null),
      };
    }
    case "ellipse": {
      const a = s.majorAxis / 2;
      const b = s.minorAxis / 2;
      return {
        x0: -a,
        x1: a,
        y0: -b,
        y1: b,
        xRange: (y) => {
          if (Math.abs(y) >= b) return null;
          const c = a * Math.sqrt(1 - (y * y) / (b * b));
          return [-c, c];
        },
        yRange: (x) => {
          if (Math.abs(x) >= a) return null;
          const c = b * Math.sqrt(1 - (x * x) / (a * a));
          return [-c, c];
        },
      };
    }
    case "slit":
      throw new TypeError("slit has no finite cross-section to solve");
  }
}

/** ∫w dA on one grid with `cells` intervals across the shorter side of the bounding box. */
function flowIntegral(g: Region, cells: number): number {
  const h = Math.min(g.x1 - g.x0, g.y1 - g.y0) / cells;
  const nx = Math.ceil((g.x1 - g.x0) / h) + 1;
  const ny = Math.ceil((g.y1 - g.y0) / h) + 1;
  const index = new Int32Array(nx * ny).fill(-1);
  const xs: number[] = [];
  const ys: number[] = [];
  const tol = 1e-9 * h;
  for (let j = 0; j < ny; j++) {
    const y = g.y0 + j * h;
    const xr = g.xRange(y);
    if (!xr) continue;
    for (let i = 0; i < nx; i++) {
      const x = g.x0 + i * h;
      const yr = g.yRange(x);
      if (!yr) continue;
      if (x - xr[0] > tol && xr[1] - x > tol && y - yr[0] > tol && yr[1] - y > tol) {
        index[j * nx + i] = xs.length;
        xs.push(x);
        ys.push(y);
      }
    }
  }
  const m = xs.length;
  const nb = new Int32Array(4 * m);
  const coef = new Float64Array(4 * m);
  const diag = new Float64Array(m);
  for (let k = 0; k < m; k++) {
    const x = xs[k];
    const y = ys[k];
    const i = Math.round((x - g.x0) / h);
    const j = Math.round((y - g.y0) / h);
    const [xl, xr] = g.xRange(y)!;
    const [yb, yt] = g.yRange(x)!;
    const hE = Math.min(h, xr - x);
    const hW = Math.min(h, x - xl);
    const hN = Math.min(h, yt - y);
    const hS = Math.min(h, y - yb);
    const cE = 2 / (hE * (hE + hW));
    const cW = 2 / (hW * (hE + hW));
    const cN = 2 / (hN * (hN + hS));
    const cS = 2 / (hS * (hN + hS));
    diag[k] = cE + cW + cN + cS;
    nb[4 * k] = hE < h ? -1 : index[j * nx + i + 1];
    nb[4 * k + 1] = hW < h ? -1 : index[j * nx + i - 1];
    nb[4 * k + 2] = hN < h ? -1 : index[(j + 1) * nx + i];
    nb[4 * k + 3] = hS < h ? -1 : index[(j - 1) * nx + i];
    coef[4 * k] = cE;
    coef[4 * k + 1] = cW;
    coef[4 * k + 2] = cN;
    coef[4 * k + 3] = cS;
  }
  const w = new Float64Array(m);
  const omega = 2 / (1 + Math.sin(Math.PI / cells));
  for (let sweep = 0; sweep < 200000; sweep++) {
    let change = 0;
    let size = 0;
    for (let k = 0; k < m; k++) {
      let sum = 1;
      for (let q = 0; q < 4; q++) {
        const n = nb[4 * k + q];
        if (n >= 0) sum += coef[4 * k + q] * w[n];
      }
      const next = w[k] + omega * (sum / diag[k] - w[k]);
      change = Math.max(change, Math.abs(next - w[k]));
      size = Math.max(size, Math.abs(next));
      w[k] = next;
    }
    if (change <= 1e-14 * size) break;
  }
  // Row integrals (trapezoid rule through the wall points, where w = 0), then over y.
  const rowY: number[] = [];
  const rowL: number[] = [];
  for (let j = 0; j < ny; j++) {
    const y = g.y0 + j * h;
    const xr = g.xRange(y);
    if (!xr) continue;
    let prevX = xr[0];
    let prevW = 0;
    let sum = 0;
    for (let i = 0; i < nx; i++) {
      const k = index[j * nx + i];
      if (k < 0) continue;
      sum += 0.5 * (xs[k] - prevX) * (w[k] + prevW);
      prevX = xs[k];
      prevW = w[k];
    }
    sum += 0.5 * (xr[1] - prevX) * prevW;
    rowY.push(y);
    rowL.push(sum);
  }
  let total = 0;
  let prevY = g.y0;
  let prevL = 0;
  for (let r = 0; r < rowY.length; r++) {
    total += 0.5 * (rowY[r] - prevY) * (rowL[r] + prevL);
    prevY = rowY[r];
    prevL = rowL[r];
  }
  total += 0.5 * (g.y1 - prevY) * prevL;
  return total;
}

/** Result of a converged FD run. */
export interface PoiseuilleEstimate {
  /** Richardson-extrapolated fRe. */
  fRe: number;
  /** fRe on the coarse and fine grids (for the convergence statement). */
  coarse: number;
  fine: number;
}

/**
 * Newtonian Poiseuille number of a section by FD on grids of `cells` and 2·`cells`
 * intervals across the shorter side of the bounding box, extrapolated as (4·fine − coarse)/3.
 */
export function poiseuilleNumberFd(s: Section, cells = 40): PoiseuilleEstimate {
  const g = region(s);
  const a = sectionArea(s);
  const dh = hydraulicDiameter(s);
  const qc = flowIntegral(g, cells);
  const qf = flowIntegral(g, 2 * cells);
  const coarse = (dh * dh * a) / (2 * qc);
  const fine = (dh * dh * a) / (2 * qf);
  const q = (4 * qf - qc) / 3;
  return { fRe: (dh * dh * a) / (2 * q), coarse, fine };
}
