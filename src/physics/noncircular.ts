/**
 * Equivalent-model constants of non-circular channels: the Newtonian Poiseuille number
 * fRe of each section and the Kozicki geometric constants a, b built on it.
 *
 * Model (Kozicki, Chou & Tiu (1966) Chem. Eng. Sci. 21:665): for any section,
 *   8ū/Dh = (1/(a·τw^(b/a))) ∫₀^τw τ^(b/a − 1)·γ̇(τ) dτ,   τw = Dh·ΔP/(4L),
 * exact for the tube (a = 1/4, b = 3/4) and the slit (a = 1/2, b = 1), and exact for a
 * Newtonian fluid in any section when a + b = fRe/16.
 *
 * Sources of fRe (f = τ̄w/(½ρū²), Re = ρūDh/μ):
 * - circle 16, slit 24, rectangle: Shah & London, *Laminar Flow Forced Convection in
 *   Ducts* (1978), eq. (341), fRe = 24(1 − 1.3553α + 1.9467α² − 1.7012α³ + 0.9564α⁴
 *   − 0.2537α⁵), α = short/long side (their stated accuracy ±0.05 %).
 * - ellipse: exact, from w = (G/4μ)·(a²b²/(a²+b²))·(1 − x²/a² − y²/b²) (Shah & London
 *   §VIII), fRe = 2·Dh²·(a² + b²)/(a²·b²) with semi-axes a, b.
 * - half-round, D, parabolic, trapezoid: tables built by this project from its own
 *   converged finite-difference solutions of ∇²w = −1 (Shortley–Weller, 20 and 40 cells
 *   across the shorter side, Richardson-extrapolated; generator
 *   `tests/physics/_build_fre_tables.ts`, oracle `tests/physics/_poisson_fd.ts`, which
 *   reproduces Shah & London's semicircle 15.767, square 14.227 and 2:1 rectangle 15.548
 *   to about 2e-5). Interpolated by 4-point Lagrange (tensor product for the trapezoid);
 *   outside a table's range the edge value is used (flagged below).
 *
 * Split of a + b into a and b (the ratio c = b/a sets the shear-thinning response):
 * - rectangle and trapezoid: c(α) interpolated (linearly in α) in Kozicki et al.'s
 *   rectangular-duct table, from memory: α = 0, .05, .1, .25, .5, .75, 1 →
 *   a = .5, .4535, .4132, .3212, .2440, .2178, .2121; b = 1, .9513, .9098, .8183, .7276,
 *   .6866, .6771 (these sums agree with Shah & London's fRe/16 to 4e-4, a check on the
 *   recollection). α is short/long side; for a trapezoid the rectangle of the same depth
 *   and mean width.
 * - curved sections (ellipse, half-round, D, parabolic): c = 2 + (c_rect(α) − 2)/
 *   (c_rect(1) − 2), α = short/long side of the bounding box, so that the circle (α = 1)
 *   gets its exact c = 3 and the thin limit the slit's c = 2. This rule is this project's
 *   choice, not a published one; its power-law error is measured in the tests.
 *
 * @module
 */
import { type Section, validateSection } from "./section.ts";
import type { KozickiConstants } from "./_wall_shear.ts";
import { ellipticE } from "./section.ts";

export type { KozickiConstants } from "./_wall_shear.ts";

/** fRe of d_shape at flatOffset/radius = −0.95 … 0.95 step 0.05. */
const D_SHAPE_FRE = [
  15.57221,
  15.58824,
  15.60346,
  15.61793,
  15.63167,
  15.64471,
  15.65707,
  15.66878,
  15.67986,
  15.69033,
  15.70021,
  15.70953,
  15.71830,
  15.72655,
  15.73433,
  15.74161,
  15.74847,
  15.75494,
  15.76105,
  15.76679,
  15.77226,
  15.77753,
  15.78263,
  15.78757,
  15.79262,
  15.79784,
  15.80304,
  15.80871,
  15.81477,
  15.82183,
  15.82941,
  15.83784,
  15.84913,
  15.86153,
  15.87683,
  15.89422,
  15.91579,
  15.94268,
  15.97199,
];
/** fRe of parabolic at u = depth/(depth + width) = 0.05 … 0.95 step 0.025. */
const PARABOLIC_FRE = [
  15.51784,
  15.46876,
  15.39924,
  15.31100,
  15.20731,
  15.09277,
  14.97291,
  14.85372,
  14.74124,
  14.64104,
  14.55802,
  14.49606,
  14.45797,
  14.44540,
  14.45902,
  14.49841,
  14.56231,
  14.64899,
  14.75588,
  14.88035,
  15.01942,
  15.17107,
  15.33191,
  15.49960,
  15.67223,
  15.84728,
  16.02333,
  16.19858,
  16.37170,
  16.54146,
  16.70687,
  16.86703,
  17.02112,
  17.16845,
  17.30834,
  17.44016,
  17.56318,
];
/** fRe of trapezoid, rows bottom/top = 0 … 1 step 0.1, columns u = depth/(depth + top) = 0.05 … 0.95 step 0.05. */
const TRAPEZOID_FRE = [
  [
    12.05488,
    12.19902,
    12.40088,
    12.62888,
    12.85264,
    13.04736,
    13.19640,
    13.29154,
    13.33199,
    13.32246,
    13.26984,
    13.18262,
    13.06926,
    12.93668,
    12.79096,
    12.63695,
    12.47837,
    12.31810,
    12.15828,
  ],
  [
    12.32157,
    12.42452,
    12.58702,
    12.79453,
    13.02939,
    13.27361,
    13.51077,
    13.72715,
    13.91547,
    14.07049,
    14.19148,
    14.28240,
    14.34736,
    14.39058,
    14.41594,
    14.42686,
    14.42622,
    14.41641,
    14.39940,
  ],
  [
    12.97669,
    13.01630,
    13.07337,
    13.15299,
    13.26459,
    13.41723,
    13.61472,
    13.85224,
    14.11800,
    14.39885,
    14.68017,
    14.95299,
    15.21288,
    15.45722,
    15.68544,
    15.89822,
    16.09654,
    16.28150,
    16.45427,
  ],
  [
    13.87492,
    13.85263,
    13.79630,
    13.72102,
    13.66066,
    13.65278,
    13.72681,
    13.89301,
    14.15031,
    14.48159,
    14.86561,
    15.28165,
    15.71447,
    16.15166,
    16.58532,
    17.01136,
    17.42736,
    17.83207,
    18.22501,
  ],
  [
    14.94657,
    14.85462,
    14.67349,
    14.42888,
    14.17826,
    13.98515,
    13.89951,
    13.94801,
    14.13597,
    14.45320,
    14.87708,
    15.38109,
    15.94236,
    16.53931,
    17.15589,
    17.78203,
    18.41084,
    19.03788,
    19.66038,
  ],
  [
    16.15354,
    15.97317,
    15.64366,
    15.21246,
    14.76299,
    14.37976,
    14.12594,
    14.03761,
    14.12789,
    14.38973,
    14.80481,
    15.34582,
    15.98671,
    16.70006,
    17.46303,
    18.25964,
    19.07838,
    19.91139,
    20.75340,
  ],
  [
    17.47025,
    17.16694,
    16.65176,
    16.01363,
    15.36363,
    14.79781,
    14.38355,
    14.15988,
    14.14147,
    14.32715,
    14.70184,
    15.24112,
    15.91926,
    16.70652,
    17.57570,
    18.50602,
    19.48184,
    20.49227,
    21.52978,
  ],
  [
    18.87195,
    18.38457,
    17.63445,
    16.77418,
    15.93356,
    15.20472,
    14.64856,
    14.30067,
    14.17717,
    14.27906,
    14.59593,
    15.10742,
    15.79042,
    16.61562,
    17.55384,
    18.58102,
    19.67827,
    20.83223,
    22.03366,
  ],
  [
    20.31626,
    19.53870,
    18.50756,
    17.43333,
    16.43133,
    15.57137,
    14.90008,
    14.44726,
    14.22858,
    14.24816,
    14.49977,
    14.96778,
    15.63294,
    16.46822,
    17.44440,
    18.53556,
    19.72047,
    20.98395,
    22.31559,
  ],
  [
    21.67190,
    20.46268,
    19.16537,
    17.93312,
    16.82365,
    15.87576,
    15.12200,
    14.58745,
    14.28843,
    14.23237,
    14.41783,
    14.83420,
    15.46679,
    16.29193,
    17.28174,
    18.40963,
    19.65279,
    20.99477,
    22.42449,
  ],
  [
    22.40314,
    20.90386,
    19.50997,
    18.23281,
    17.08972,
    16.10442,
    15.30330,
    14.71194,
    14.35000,
    14.22728,
    14.35000,
    14.71194,
    15.30330,
    16.10442,
    17.08972,
    18.23281,
    19.50997,
    20.90386,
    22.40314,
  ],
];

/** Kozicki et al. (1966) rectangular-duct constants (from memory), by aspect ratio α. */
const KOZICKI_RECT_ALPHA = [0, 0.05, 0.1, 0.25, 0.5, 0.75, 1];
const KOZICKI_RECT_A = [0.5, 0.4535, 0.4132, 0.3212, 0.244, 0.2178, 0.2121];
const KOZICKI_RECT_B = [1, 0.9513, 0.9098, 0.8183, 0.7276, 0.6866, 0.6771];
const KOZICKI_RECT_C = KOZICKI_RECT_A.map((a, i) => KOZICKI_RECT_B[i] / a);
const C_SQUARE = KOZICKI_RECT_C[KOZICKI_RECT_C.length - 1];

/**
 * Value at fractional index x of a uniformly spaced table, by 4-point Lagrange
 * interpolation (cubic, exact on grid points); x is clamped to [0, length − 1].
 */
function lagrange4(table: readonly number[], x: number): number {
  const last = table.length - 1;
  const xc = Math.min(last, Math.max(0, x));
  let i0 = Math.floor(xc) - 1;
  if (i0 < 0) i0 = 0;
  if (i0 > last - 3) i0 = last - 3;
  const t = xc - i0;
  const l0 = (-(t - 1) * (t - 2) * (t - 3)) / 6;
  const l1 = (t * (t - 2) * (t - 3)) / 2;
  const l2 = (-t * (t - 1) * (t - 3)) / 2;
  const l3 = (t * (t - 1) * (t - 2)) / 6;
  return l0 * table[i0] + l1 * table[i0 + 1] + l2 * table[i0 + 2] + l3 * table[i0 + 3];
}

function rectangleC(alpha: number): number {
  for (let i = 1; i < KOZICKI_RECT_ALPHA.length; i++) {
    if (alpha <= KOZICKI_RECT_ALPHA[i]) {
      const t = (alpha - KOZICKI_RECT_ALPHA[i - 1]) /
        (KOZICKI_RECT_ALPHA[i] - KOZICKI_RECT_ALPHA[i - 1]);
      return KOZICKI_RECT_C[i - 1] + t * (KOZICKI_RECT_C[i] - KOZICKI_RECT_C[i - 1]);
    }
  }
  return C_SQUARE;
}

function curvedC(alpha: number): number {
  return 2 + (rectangleC(alpha) - 2) / (C_SQUARE - 2);
}

const aspect = (p: number, q: number) => Math.min(p, q) / Math.max(p, q);

/**
 * Shah & London (1978) eq. (341): fRe of a rectangular duct of aspect α = short/long side
 * (0 < α ≤ 1), accuracy ±0.05 % (their statement).
 */
export function rectangularPoiseuilleNumber(alpha: number): number {
  if (!(alpha > 0 && alpha <= 1)) {
    throw new RangeError(`Cannot compute rectangular fRe: aspect must be in (0, 1], got ${alpha}`);
  }
  const a = alpha;
  return 24 *
    (1 - 1.3553 * a + 1.9467 * a * a - 1.7012 * a ** 3 + 0.9564 * a ** 4 - 0.2537 * a ** 5);
}

/**
 * Newtonian Poiseuille number fRe (dimensionless) of a section: ΔP/L = 2·fRe·μ·ū/Dh².
 * Sources per kind in the module doc. Table-based kinds clamp at their table edges:
 * d_shape flatOffset/radius outside [−0.95, 0.95], parabolic depth/(depth + width)
 * outside [0.05, 0.95], trapezoid depth/(depth + top) outside [0.05, 0.95] (there the
 * clamped value can be off by a few %).
 */
export function poiseuilleNumber(s: Section): number {
  validateSection(s);
  switch (s.kind) {
    case "circle":
      return 16;
    case "slit":
      return 24;
    case "rectangle":
      return rectangularPoiseuilleNumber(aspect(s.width, s.height));
    case "ellipse": {
      const a = s.majorAxis / 2;
      const b = s.minorAxis / 2;
      const ecc = Math.sqrt(Math.max(0, 1 - (b * b) / (a * a)));
      // Dh = 4A/P = πab/(a·E(e)); written out to avoid a cycle with section.ts.
      const dh = (Math.PI * b) / ellipticE(ecc);
      return (2 * dh * dh * (a * a + b * b)) / (a * a * b * b);
    }
    case "half_round":
      return lagrange4(D_SHAPE_FRE, 19);
    case "d_shape":
      return lagrange4(D_SHAPE_FRE, (s.flatOffset / s.radius + 0.95) / 0.05);
    case "parabolic": {
      const u = s.depth / (s.depth + s.width);
      return lagrange4(PARABOLIC_FRE, (u - 0.05) / 0.025);
    }
    case "trapezoid": {
      const beta = s.bottomWidth / s.topWidth;
      const u = s.depth / (s.depth + s.topWidth);
      const x = (u - 0.05) / 0.05;
      const y = beta / 0.1;
      const column = TRAPEZOID_FRE.map((row) => lagrange4(row, x));
      return lagrange4(column, y);
    }
  }
}

/** The ratio c = b/a of a section (dimensionless, 2 ≤ c ≤ ~3.2); see the module doc. */
function shapeRatio(s: Section): number {
  switch (s.kind) {
    case "circle":
      return 3;
    case "slit":
      return 2;
    case "rectangle":
      return rectangleC(aspect(s.width, s.height));
    case "trapezoid":
      return rectangleC(aspect(0.5 * (s.topWidth + s.bottomWidth), s.depth));
    case "ellipse":
      return curvedC(s.minorAxis / s.majorAxis);
    case "half_round":
      return curvedC(0.5);
    case "d_shape": {
      const r = s.radius;
      const e = s.flatOffset;
      const width = e >= 0 ? 2 * r : 2 * Math.sqrt(r * r - e * e);
      return curvedC(aspect(width, r + e));
    }
    case "parabolic":
      return curvedC(aspect(s.width, s.depth));
  }
}

/**
 * Kozicki geometric constants a, b of a section (dimensionless) with a + b = fRe/16:
 * circle (1/4, 3/4) and slit (1/2, 1) exact (Kozicki, Chou & Tiu 1966); other kinds per
 * the module doc. Power-law fluid: γ̇w = ((a + b·n)/n)·8ū/Dh.
 */
export function kozickiConstants(s: Section): KozickiConstants {
  if (s.kind === "circle") return { a: 0.25, b: 0.75 };
  if (s.kind === "slit") return { a: 0.5, b: 1 };
  const sum = poiseuilleNumber(s) / 16;
  const c = shapeRatio(s);
  const a = sum / (1 + c);
  return { a, b: c * a };
}
