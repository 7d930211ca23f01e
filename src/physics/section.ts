/**
 * Cross-sections of runner, gate and sprue channels: area, perimeter, hydraulic
 * diameter, projected width on the parting plane, the open section left by a frozen
 * skin, and interpolation along a taper. All lengths in m, areas in m².
 *
 * Conventions: the parting plane is horizontal; sections that sit in one mold half
 * (half-round, trapezoid, parabolic, D) have their flat side on it.
 *
 * @module
 */

/**
 * A channel cross-section (m).
 *
 * - `circle`: full round of `radius`.
 * - `half_round`: half disk of `radius`, flat side on the parting plane.
 * - `trapezoid`: isosceles; `topWidth` on the parting plane (the wider side,
 *   `0 ≤ bottomWidth ≤ topWidth`), `depth` into the steel.
 * - `parabolic`: region between the parting plane and y = depth·(1 − (2x/width)²).
 * - `rectangle`: `width` × `height`, any aspect ratio (edge gates).
 * - `slit`: idealised gap `gap` of `width` W ≫ H, no side walls.
 * - `ellipse`: full axes `majorAxis` ≥ `minorAxis` (oval tunnel gate); the major axis
 *   lies along the parting plane.
 * - `d_shape`: disk of `radius` cut by a chord at signed distance `flatOffset` from
 *   the centre, −radius < flatOffset < radius. For flatOffset ≥ 0 the kept part holds
 *   the centre (0 = half-round, → radius = full round); negative offsets (less than a
 *   half disk) arise when a half-round or D section loses a frozen skin.
 */
export type Section =
  | { kind: "circle"; radius: number }
  | { kind: "half_round"; radius: number }
  | { kind: "trapezoid"; topWidth: number; bottomWidth: number; depth: number }
  | { kind: "parabolic"; width: number; depth: number }
  | { kind: "rectangle"; width: number; height: number }
  | { kind: "slit"; width: number; gap: number }
  | { kind: "ellipse"; majorAxis: number; minorAxis: number }
  | { kind: "d_shape"; radius: number; flatOffset: number };

/** The kind tag of a {@link Section}. */
export type SectionKind = Section["kind"];

function positive(what: string, value: number): void {
  if (!(value > 0) || !Number.isFinite(value)) {
    throw new RangeError(`Invalid section: ${what} must be a finite number > 0, got ${value}`);
  }
}

/**
 * Throws a RangeError if a section's dimensions are out of domain (non-positive,
 * non-finite, trapezoid bottom wider than top, ellipse minor > major, D offset
 * outside (−radius, radius)).
 */
export function validateSection(s: Section): void {
  switch (s.kind) {
    case "circle":
    case "half_round":
      positive("radius", s.radius);
      return;
    case "trapezoid":
      positive("topWidth", s.topWidth);
      positive("depth", s.depth);
      if (!(s.bottomWidth >= 0 && s.bottomWidth <= s.topWidth)) {
        throw new RangeError(
          `Invalid section: trapezoid bottomWidth must be in [0, topWidth=${s.topWidth}], got ${s.bottomWidth}`,
        );
      }
      return;
    case "parabolic":
      positive("width", s.width);
      positive("depth", s.depth);
      return;
    case "rectangle":
      positive("width", s.width);
      positive("height", s.height);
      return;
    case "slit":
      positive("width", s.width);
      positive("gap", s.gap);
      return;
    case "ellipse":
      positive("majorAxis", s.majorAxis);
      positive("minorAxis", s.minorAxis);
      if (s.minorAxis > s.majorAxis) {
        throw new RangeError(
          `Invalid section: ellipse minorAxis (${s.minorAxis}) must not exceed majorAxis (${s.majorAxis})`,
        );
      }
      return;
    case "d_shape":
      positive("radius", s.radius);
      if (!(s.flatOffset > -s.radius && s.flatOffset < s.radius)) {
        throw new RangeError(
          `Invalid section: d_shape flatOffset must be in (−radius, radius) = (${-s
            .radius}, ${s.radius}), got ${s.flatOffset}`,
        );
      }
      return;
    default:
      throw new TypeError(`Invalid section: unknown kind ${(s as { kind: string }).kind}`);
  }
}

/**
 * Complete elliptic integral of the second kind E(k), by the arithmetic–geometric mean:
 * E = K·(1 − Σ 2^(j−1) c_j²), K = π/(2·AGM(1, √(1−k²))). Abramowitz & Stegun (1964) §17.6.
 */
export function ellipticE(k: number): number {
  let a = 1;
  let g = Math.sqrt(1 - k * k);
  let c = k;
  let sum = 0.5 * c * c;
  let pow = 0.5;
  for (let j = 0; j < 40 && Math.abs(c) > 1e-17; j++) {
    c = 0.5 * (a - g);
    const an = 0.5 * (a + g);
    g = Math.sqrt(a * g);
    a = an;
    pow *= 2;
    sum += pow * c * c;
  }
  return (Math.PI / (2 * a)) * (1 - sum);
}

/** Half-angle φ = acos(e/R) of the arc cut off by a D section's chord. */
function dShapeCutAngle(s: { radius: number; flatOffset: number }): number {
  return Math.acos(s.flatOffset / s.radius);
}

/**
 * Cross-section area, m² (elementary geometry; parabola by Archimedes' quadrature,
 * A = (2/3)·width·depth).
 */
export function sectionArea(s: Section): number {
  validateSection(s);
  switch (s.kind) {
    case "circle":
      return Math.PI * s.radius * s.radius;
    case "half_round":
      return 0.5 * Math.PI * s.radius * s.radius;
    case "trapezoid":
      return 0.5 * (s.topWidth + s.bottomWidth) * s.depth;
    case "parabolic":
      return (2 / 3) * s.width * s.depth;
    case "rectangle":
      return s.width * s.height;
    case "slit":
      return s.width * s.gap;
    case "ellipse":
      return 0.25 * Math.PI * s.majorAxis * s.minorAxis;
    case "d_shape": {
      const r = s.radius;
      const e = s.flatOffset;
      const phi = dShapeCutAngle(s);
      return Math.PI * r * r - r * r * phi + e * Math.sqrt(r * r - e * e);
    }
  }
}

/**
 * Wetted perimeter, m. The slit counts only its two faces (2·width); the ellipse uses
 * the exact 4·a·E(e) (A&S §17.6); the parabola's arc has the closed form
 * (1/k)[kX√(1+k²X²) + asinh(kX)] with k = 8·depth/width², X = width/2.
 */
export function sectionPerimeter(s: Section): number {
  validateSection(s);
  switch (s.kind) {
    case "circle":
      return 2 * Math.PI * s.radius;
    case "half_round":
      return (Math.PI + 2) * s.radius;
    case "trapezoid": {
      const h = 0.5 * (s.topWidth - s.bottomWidth);
      return s.topWidth + s.bottomWidth + 2 * Math.hypot(h, s.depth);
    }
    case "parabolic": {
      const k = (8 * s.depth) / (s.width * s.width);
      const kx = k * 0.5 * s.width;
      const arc = (kx * Math.sqrt(1 + kx * kx) + Math.asinh(kx)) / k;
      return arc + s.width;
    }
    case "rectangle":
      return 2 * (s.width + s.height);
    case "slit":
      return 2 * s.width;
    case "ellipse": {
      const a = 0.5 * s.majorAxis;
      const b = 0.5 * s.minorAxis;
      const ecc = Math.sqrt(Math.max(0, 1 - (b * b) / (a * a)));
      return 4 * a * ellipticE(ecc);
    }
    case "d_shape": {
      const r = s.radius;
      const e = s.flatOffset;
      const phi = dShapeCutAngle(s);
      return 2 * r * (Math.PI - phi) + 2 * Math.sqrt(r * r - e * e);
    }
  }
}

/** Hydraulic diameter Dh = 4A/P, m (slit: 2·gap). */
export function hydraulicDiameter(s: Section): number {
  return (4 * sectionArea(s)) / sectionPerimeter(s);
}

/**
 * Width of the section projected on the parting plane, m (its widest horizontal
 * extent), for the clamp-force area of a runner lying in the plane.
 */
export function partingPlaneWidth(s: Section): number {
  validateSection(s);
  switch (s.kind) {
    case "circle":
    case "half_round":
      return 2 * s.radius;
    case "trapezoid":
      return s.topWidth;
    case "parabolic":
    case "rectangle":
    case "slit":
      return s.width;
    case "ellipse":
      return s.majorAxis;
    case "d_shape":
      return s.flatOffset >= 0
        ? 2 * s.radius
        : 2 * Math.sqrt(s.radius * s.radius - s.flatOffset * s.flatOffset);
  }
}

function closed(s: Section, delta: number): never {
  throw new RangeError(
    `Cannot shrink ${s.kind} section: a frozen layer of ${delta} m closes the channel`,
  );
}

/**
 * The open section left when every wall grows a frozen skin of thickness δ (m): the
 * inward offset of the boundary by δ. Exact for circle, rectangle, slit (gap only),
 * trapezoid (stays a trapezoid or becomes a triangle, bottomWidth 0) and half-round/D
 * (→ `d_shape` with radius R − δ and offset e − δ; a half-round is e = 0). The offset of
 * an ellipse or a parabola is not of the same family; those keep their kind with the
 * vertices offset exactly (ellipse axes − 2δ; parabola depth − 2δ and the corners where
 * the offset curve meets the offset flat side). Throws a RangeError if the skin closes
 * the channel or δ < 0.
 */
export function shrinkSection(s: Section, frozenThickness: number): Section {
  validateSection(s);
  const d = frozenThickness;
  if (!(d >= 0) || !Number.isFinite(d)) {
    throw new RangeError(`Cannot shrink section: frozen thickness must be ≥ 0, got ${d}`);
  }
  if (d === 0) return { ...s };
  switch (s.kind) {
    case "circle":
      if (s.radius <= d) closed(s, d);
      return { kind: "circle", radius: s.radius - d };
    case "half_round":
    case "d_shape": {
      const e = s.kind === "d_shape" ? s.flatOffset : 0;
      const r = s.radius - d;
      const offset = e - d;
      if (!(r > 0) || !(offset > -r)) closed(s, d);
      return { kind: "d_shape", radius: r, flatOffset: offset };
    }
    case "trapezoid": {
      const { topWidth: t, bottomWidth: b, depth: h0 } = s;
      const h = 0.5 * (t - b);
      const side = Math.hypot(h, h0);
      const shift = (d * side) / h0;
      const top = t - (2 * h * d) / h0 - 2 * shift;
      let bottom = b + (2 * h * d) / h0 - 2 * shift;
      let depth = h0 - 2 * d;
      if (bottom < 0) {
        // The offset sides meet above the offset bottom: a triangle.
        depth = ((0.5 * t - shift) * h0) / h - d;
        bottom = 0;
      }
      if (!(top > 0) || !(depth > 0)) closed(s, d);
      return { kind: "trapezoid", topWidth: top, bottomWidth: bottom, depth };
    }
    case "parabolic": {
      const { width: w, depth: h0 } = s;
      const depth = h0 - 2 * d;
      if (!(depth > 0)) closed(s, d);
      // Offset point of the curve y = h0(1 − 4x²/w²) along its inward normal; find where
      // its height equals δ (the offset flat side) by bisection on x ∈ [0, w/2].
      const k = (8 * h0) / (w * w);
      const offsetPoint = (x: number) => {
        const slope = k * x;
        const norm = Math.sqrt(1 + slope * slope);
        return {
          x: x - (d * slope) / norm,
          y: h0 * (1 - (4 * x * x) / (w * w)) - d / norm,
        };
      };
      let lo = 0;
      let hi = 0.5 * w;
      for (let i = 0; i < 80; i++) {
        const mid = 0.5 * (lo + hi);
        if (offsetPoint(mid).y > d) lo = mid;
        else hi = mid;
      }
      const halfWidth = offsetPoint(0.5 * (lo + hi)).x;
      if (!(halfWidth > 0)) closed(s, d);
      return { kind: "parabolic", width: 2 * halfWidth, depth };
    }
    case "rectangle":
      if (s.width <= 2 * d || s.height <= 2 * d) closed(s, d);
      return { kind: "rectangle", width: s.width - 2 * d, height: s.height - 2 * d };
    case "slit":
      if (s.gap <= 2 * d) closed(s, d);
      return { kind: "slit", width: s.width, gap: s.gap - 2 * d };
    case "ellipse":
      if (s.minorAxis <= 2 * d) closed(s, d);
      return { kind: "ellipse", majorAxis: s.majorAxis - 2 * d, minorAxis: s.minorAxis - 2 * d };
  }
}

/**
 * The frozen-skin thickness (m) at which {@link shrinkSection} closes a section: the
 * radius of its largest inscribed circle for round, rectangular and slit sections
 * (half the smaller side), found by bisection on the inward offset for the others
 * (a narrow parabolic or trapezoid channel closes across its width before its depth).
 *
 * @example
 * ```ts
 * closingThickness({ kind: "circle", radius: 0.003 }); // 0.003
 * ```
 */
export function closingThickness(s: Section): number {
  validateSection(s);
  switch (s.kind) {
    case "circle":
      return s.radius;
    case "rectangle":
      return Math.min(s.width, s.height) / 2;
    case "slit":
      return s.gap / 2;
    case "ellipse":
      return s.minorAxis / 2;
    default: {
      const opens = (d: number) => {
        try {
          shrinkSection(s, d);
          return true;
        } catch {
          return false;
        }
      };
      let lo = 0;
      let hi = Math.sqrt(sectionArea(s));
      while (opens(hi)) hi *= 2;
      for (let i = 0; i < 60; i++) {
        const mid = 0.5 * (lo + hi);
        if (opens(mid)) lo = mid;
        else hi = mid;
      }
      return lo;
    }
  }
}

/**
 * The section a fraction t ∈ [0, 1] of the way from `a` to `b`, every dimension linear
 * in t (a linear taper). Both must be the same kind (TypeError otherwise).
 */
export function interpolateSection(a: Section, b: Section, t: number): Section {
  if (a.kind !== b.kind) {
    throw new TypeError(
      `Cannot interpolate sections of different kinds: ${a.kind} and ${b.kind}`,
    );
  }
  if (!(t >= 0 && t <= 1)) {
    throw new RangeError(`Cannot interpolate sections: t must be in [0, 1], got ${t}`);
  }
  const lerp = (x: number, y: number) => x + (y - x) * t;
  switch (a.kind) {
    case "circle":
    case "half_round":
      return { kind: a.kind, radius: lerp(a.radius, (b as typeof a).radius) };
    case "trapezoid": {
      const c = b as typeof a;
      return {
        kind: "trapezoid",
        topWidth: lerp(a.topWidth, c.topWidth),
        bottomWidth: lerp(a.bottomWidth, c.bottomWidth),
        depth: lerp(a.depth, c.depth),
      };
    }
    case "parabolic": {
      const c = b as typeof a;
      return { kind: "parabolic", width: lerp(a.width, c.width), depth: lerp(a.depth, c.depth) };
    }
    case "rectangle": {
      const c = b as typeof a;
      return {
        kind: "rectangle",
        width: lerp(a.width, c.width),
        height: lerp(a.height, c.height),
      };
    }
    case "slit": {
      const c = b as typeof a;
      return { kind: "slit", width: lerp(a.width, c.width), gap: lerp(a.gap, c.gap) };
    }
    case "ellipse": {
      const c = b as typeof a;
      return {
        kind: "ellipse",
        majorAxis: lerp(a.majorAxis, c.majorAxis),
        minorAxis: lerp(a.minorAxis, c.minorAxis),
      };
    }
    case "d_shape": {
      const c = b as typeof a;
      return {
        kind: "d_shape",
        radius: lerp(a.radius, c.radius),
        flatOffset: lerp(a.flatOffset, c.flatOffset),
      };
    }
  }
}
