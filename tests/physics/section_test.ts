import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import {
  closingThickness,
  hydraulicDiameter,
  interpolateSection,
  partingPlaneWidth,
  type Section,
  sectionArea,
  sectionPerimeter,
  shrinkSection,
} from "../../src/physics/section.ts";

/** Boundary polygon of a section (counter-clockwise), sampled densely; independent geometry. */
function boundary(s: Section, n = 20000): [number, number][] {
  const pts: [number, number][] = [];
  const arc = (r: number, t0: number, t1: number) => {
    for (let i = 0; i <= n; i++) {
      const t = t0 + ((t1 - t0) * i) / n;
      pts.push([r * Math.cos(t), r * Math.sin(t)]);
    }
  };
  switch (s.kind) {
    case "circle":
      arc(s.radius, 0, 2 * Math.PI);
      break;
    case "half_round":
      arc(s.radius, Math.PI, 2 * Math.PI);
      break;
    case "d_shape": {
      const phi = Math.asin(s.flatOffset / s.radius); // chord end angle above the x axis
      arc(s.radius, Math.PI - phi, 2 * Math.PI + phi);
      break;
    }
    case "trapezoid":
      pts.push(
        [-s.topWidth / 2, 0],
        [-s.bottomWidth / 2, -s.depth],
        [s.bottomWidth / 2, -s.depth],
        [s.topWidth / 2, 0],
      );
      break;
    case "parabolic":
      for (let i = 0; i <= n; i++) {
        const x = -s.width / 2 + (s.width * i) / n;
        pts.push([x, -s.depth * (1 - (2 * x / s.width) ** 2)]);
      }
      break;
    case "rectangle":
      pts.push([0, 0], [s.width, 0], [s.width, s.height], [0, s.height]);
      break;
    case "ellipse":
      for (let i = 0; i <= n; i++) {
        const t = (2 * Math.PI * i) / n;
        pts.push([(s.majorAxis / 2) * Math.cos(t), (s.minorAxis / 2) * Math.sin(t)]);
      }
      break;
    case "slit":
      throw new TypeError("no polygon for a slit");
  }
  return pts;
}

function polygon(pts: [number, number][]): { area: number; perimeter: number } {
  let area = 0;
  let perimeter = 0;
  for (let i = 0; i < pts.length; i++) {
    const [x0, y0] = pts[i];
    const [x1, y1] = pts[(i + 1) % pts.length];
    area += x0 * y1 - x1 * y0;
    perimeter += Math.hypot(x1 - x0, y1 - y0);
  }
  return { area: Math.abs(area) / 2, perimeter };
}

const samples: Section[] = [
  { kind: "circle", radius: 0.003 },
  { kind: "half_round", radius: 0.004 },
  { kind: "trapezoid", topWidth: 0.007, bottomWidth: 0.005, depth: 0.006 },
  { kind: "trapezoid", topWidth: 0.004, bottomWidth: 0, depth: 0.003 },
  { kind: "parabolic", width: 0.01, depth: 0.005 },
  { kind: "rectangle", width: 0.004, height: 0.001 },
  { kind: "ellipse", majorAxis: 0.003, minorAxis: 0.0012 },
  { kind: "d_shape", radius: 0.002, flatOffset: 0.0012 },
  { kind: "d_shape", radius: 0.002, flatOffset: -0.0008 },
];

Deno.test("area and perimeter agree with a dense boundary polygon (shoelace)", () => {
  // Independent oracle: shoelace formula on 20 000 boundary points (chord error ~1e-8 rel).
  for (const s of samples) {
    const p = polygon(boundary(s));
    assertClose(sectionArea(s), p.area, { rel: 1e-7, what: `${s.kind} area` });
    assertClose(sectionPerimeter(s), p.perimeter, { rel: 1e-7, what: `${s.kind} perimeter` });
  }
});

Deno.test("hydraulic diameter: circle 2R, slit 2H, square side", () => {
  // Definition Dh = 4A/P (Shah & London 1978, ch. 1).
  assertClose(hydraulicDiameter({ kind: "circle", radius: 0.002 }), 0.004, { rel: 1e-15 });
  assertClose(hydraulicDiameter({ kind: "slit", width: 0.05, gap: 0.001 }), 0.002, { rel: 1e-15 });
  assertClose(hydraulicDiameter({ kind: "rectangle", width: 0.003, height: 0.003 }), 0.003, {
    rel: 1e-15,
  });
});

Deno.test("trapezoid circumscribing a round of diameter D has 4/(π cos θ) of its volume", () => {
  // Geometry used: isosceles trapezoid of depth D whose sides, drafted θ from the vertical,
  // are tangent to the circle of diameter D (the usual trapezoidal runner). Pitot's theorem
  // for a tangential quadrilateral gives top + bottom = 2·side = 2D/cos θ and
  // top − bottom = 2D·tan θ, so A = D²/cos θ and A/A_round = 4/(π cos θ).
  // 5° → 1.2781, 10° → 1.2929 ("about 30 % more runner volume", common practice).
  const D = 0.006;
  for (const deg of [5, 10]) {
    const th = (deg * Math.PI) / 180;
    const s: Section = {
      kind: "trapezoid",
      topWidth: D / Math.cos(th) + D * Math.tan(th),
      bottomWidth: D / Math.cos(th) - D * Math.tan(th),
      depth: D,
    };
    // The circle (centre at depth D/2) is tangent to a side: distance from centre to side = D/2.
    const [x0, y0, x1, y1] = [s.topWidth / 2, 0, s.bottomWidth / 2, -D];
    const dist = Math.abs((y1 - y0) * 0 - (x1 - x0) * (-D / 2 - y0) + x1 * y0 - y1 * x0) /
      Math.hypot(x1 - x0, y1 - y0);
    assertClose(dist, D / 2, { rel: 1e-12, what: "inscribed circle touches the side" });
    const ratio = sectionArea(s) / (Math.PI * D * D / 4);
    assertClose(ratio, 4 / (Math.PI * Math.cos(th)), { rel: 1e-12, what: `trapezoid ${deg}°` });
    assert.ok(ratio > 1.27 && ratio < 1.3);
  }
});

Deno.test("parabolic runner containing the round: area 16/(3π) of the round", () => {
  // Geometry used: depth D, width 2D — the narrowest parabola of depth D that contains the
  // circle of diameter D (vertex curvature 8D/W² = 2/D). Archimedes: A = (2/3)·W·depth,
  // so A/A_round = (4D²/3)/(πD²/4) = 16/(3π) ≈ 1.698.
  const D = 0.006;
  const s: Section = { kind: "parabolic", width: 2 * D, depth: D };
  assertClose(sectionArea(s) / (Math.PI * D * D / 4), 16 / (3 * Math.PI), { rel: 1e-12 });
});

Deno.test("parting-plane width", () => {
  // Widest horizontal extent (elementary geometry).
  assert.equal(partingPlaneWidth({ kind: "circle", radius: 0.002 }), 0.004);
  assert.equal(partingPlaneWidth({ kind: "trapezoid", topWidth: 7, bottomWidth: 5, depth: 6 }), 7);
  assertClose(
    partingPlaneWidth({ kind: "d_shape", radius: 5, flatOffset: -3 }),
    8,
    { rel: 1e-15, what: "chord of a minor segment, 2√(25 − 9)" },
  );
});

Deno.test("shrinkSection: offsets are δ from every original wall", () => {
  const delta = 0.0003;
  // Circle and rectangle: exact by definition of the inward offset.
  assert.deepEqual(shrinkSection({ kind: "circle", radius: 0.003 }, delta), {
    kind: "circle",
    radius: 0.0027,
  });
  const rect = shrinkSection({ kind: "rectangle", width: 0.004, height: 0.002 }, delta);
  assert.ok(rect.kind === "rectangle");
  assertClose(rect.height, 0.0014, { rel: 1e-12 });
  // Trapezoid: the new bottom corner lies δ from the old side, bottom and (depth) top.
  const t = { kind: "trapezoid", topWidth: 0.008, bottomWidth: 0.005, depth: 0.006 } as const;
  const ts = shrinkSection(t, delta);
  assert.ok(ts.kind === "trapezoid");
  const lineDistance = (px: number, py: number) => {
    const [x0, y0, x1, y1] = [t.topWidth / 2, 0, t.bottomWidth / 2, -t.depth];
    return Math.abs((x1 - x0) * (y0 - py) - (x0 - px) * (y1 - y0)) / Math.hypot(x1 - x0, y1 - y0);
  };
  assertClose(lineDistance(ts.bottomWidth / 2, -t.depth + delta), delta, { rel: 1e-10 });
  assertClose(lineDistance(ts.topWidth / 2, -delta), delta, { rel: 1e-10 });
  // Half-round → circle of R − δ cut at −δ (the erosion of an intersection of convex sets is
  // the intersection of the erosions: disk(R) ⊖ δ = disk(R − δ), {y ≤ 0} ⊖ δ = {y ≤ −δ}).
  const hr = shrinkSection({ kind: "half_round", radius: 0.004 }, delta);
  assert.deepEqual(hr, { kind: "d_shape", radius: 0.004 - delta, flatOffset: -delta });
  // Parabola: the new corner is at distance δ from the original curve (numerical minimum).
  const p = { kind: "parabolic", width: 0.01, depth: 0.005 } as const;
  const ps = shrinkSection(p, delta);
  assert.ok(ps.kind === "parabolic");
  assertClose(ps.depth, p.depth - 2 * delta, { rel: 1e-12 });
  const cx = ps.width / 2;
  const cy = delta; // depth below the parting plane
  let best = Infinity;
  for (let i = 0; i <= 200000; i++) {
    const x = (p.width / 2) * (i / 200000);
    const y = p.depth * (1 - (2 * x / p.width) ** 2);
    best = Math.min(best, Math.hypot(x - cx, y - cy));
  }
  assertClose(best, delta, { rel: 1e-6, what: "parabola corner offset" });
  assert.throws(() => shrinkSection({ kind: "circle", radius: 0.001 }, 0.001), RangeError);
  assert.throws(() => shrinkSection({ kind: "slit", width: 1, gap: 0.002 }, 0.0011), RangeError);
  assert.throws(() => shrinkSection({ kind: "circle", radius: 0.001 }, -1e-4), RangeError);
});

Deno.test("interpolateSection is linear in every dimension and needs one kind", () => {
  const a: Section = { kind: "trapezoid", topWidth: 0.008, bottomWidth: 0.004, depth: 0.006 };
  const b: Section = { kind: "trapezoid", topWidth: 0.004, bottomWidth: 0.002, depth: 0.002 };
  const m = interpolateSection(a, b, 0.25);
  assert.ok(m.kind === "trapezoid");
  assertClose(m.topWidth, 0.007, { rel: 1e-12 });
  assertClose(m.depth, 0.005, { rel: 1e-12 });
  assert.throws(
    () => interpolateSection(a, { kind: "circle", radius: 0.002 }, 0.5),
    TypeError,
  );
});

Deno.test("invalid sections throw RangeError", () => {
  assert.throws(() => sectionArea({ kind: "circle", radius: 0 }), RangeError);
  assert.throws(
    () => sectionArea({ kind: "trapezoid", topWidth: 1, bottomWidth: 2, depth: 1 }),
    RangeError,
  );
  assert.throws(() => sectionArea({ kind: "d_shape", radius: 1, flatOffset: 1 }), RangeError);
  assert.throws(() => sectionArea({ kind: "ellipse", majorAxis: 1, minorAxis: 2 }), RangeError);
});

Deno.test("closingThickness: the frozen skin that closes a section (inscribed circle)", () => {
  // Elementary geometry: the largest circle inside a half disk of radius r has radius r/2;
  // inside a rectangle, half its smaller side; inside a circle, the radius.
  assertClose(closingThickness({ kind: "half_round", radius: 4e-3 }), 2e-3, {
    rel: 1e-9,
    what: "half-round",
  });
  assert.equal(closingThickness({ kind: "rectangle", width: 3e-3, height: 1e-3 }), 0.5e-3);
  assert.equal(closingThickness({ kind: "circle", radius: 2e-3 }), 2e-3);
  // Narrow and wide parabolic, and a trapezoid: just below the thickness the section stays
  // open, just above it shrinkSection reports it closed.
  for (
    const s of [
      { kind: "parabolic", width: 0.5e-3, depth: 0.5e-3 },
      { kind: "parabolic", width: 8e-3, depth: 2e-3 },
      { kind: "trapezoid", topWidth: 6e-3, bottomWidth: 1e-3, depth: 5e-3 },
    ] as const
  ) {
    const d = closingThickness(s);
    assert.ok(d > 0);
    shrinkSection(s, d * (1 - 1e-6));
    assert.throws(() => shrinkSection(s, d * (1 + 1e-6)), RangeError, s.kind);
  }
  // A narrow parabola closes across its width well before half its depth.
  assert.ok(closingThickness({ kind: "parabolic", width: 0.5e-3, depth: 0.5e-3 }) < 0.25e-3);
});
