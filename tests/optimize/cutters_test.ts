import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import {
  cutterCatalogue,
  nearest,
  neighbouringSizes,
  roundUp,
} from "../../src/optimize/cutters.ts";

const MM = 1e-3; // 1 mm = 1e-3 m, SI definition.
const INCH = 25.4e-3; // 1 in = 25.4 mm exactly (international yard and pound, 1959).

// Series: common practice, no source (stock ball-end mill sizes), as listed in the brief.
Deno.test("metric catalogue: 2, 2.5, 3, 3.5, 4, then whole mm to 13", () => {
  const c = cutterCatalogue("metric");
  assert.ok(c.kind === "discrete");
  const expected = [2, 2.5, 3, 3.5, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13];
  assert.equal(c.cutters.length, expected.length);
  expected.forEach((mm, k) => {
    assertClose(c.cutters[k].size, mm * MM, { rel: 1e-15, what: `${mm} mm` });
    assert.equal(c.cutters[k].label, `${mm} mm`);
  });
});

Deno.test("inch catalogue: 3/32 … 1/2 in, labels as fractions, 1 in = 25.4 mm exactly", () => {
  const c = cutterCatalogue("inch");
  assert.ok(c.kind === "discrete");
  const labels = [
    "3/32",
    "1/8",
    "5/32",
    "3/16",
    "7/32",
    "1/4",
    "9/32",
    "5/16",
    "11/32",
    "3/8",
    "7/16",
    "1/2",
  ];
  assert.deepEqual(c.cutters.map((k) => k.label), labels.map((l) => `${l} in`));
  // 5/16 in = 7.9375 mm; 1/2 in = 12.7 mm; 3/32 in = 2.38125 mm (exact decimal conversions).
  assertClose(c.cutters[7].size, 7.9375 * MM, { rel: 1e-15, what: "5/16 in" });
  assertClose(c.cutters[11].size, 12.7 * MM, { rel: 1e-15, what: "1/2 in" });
  assertClose(c.cutters[0].size, 2.38125 * MM, { rel: 1e-15, what: "3/32 in" });
  assertClose(c.cutters[5].size, 0.25 * INCH, { rel: 1e-15, what: "1/4 in" });
});

Deno.test("user list in mm: sorted, de-duplicated, labelled; bad lists throw", () => {
  const c = cutterCatalogue([6, 5.5, 3, 5.5]);
  assert.ok(c.kind === "discrete" && c.system === "custom");
  assert.deepEqual(c.cutters.map((k) => k.label), ["3 mm", "5.5 mm", "6 mm"]);
  assert.throws(() => cutterCatalogue([]), RangeError);
  assert.throws(() => cutterCatalogue([3, -1]), RangeError);
  assert.throws(() => cutterCatalogue([3, NaN]), RangeError);
});

Deno.test("neighbouring sizes: below/above strictly, exact within 1 nm, none past the ends", () => {
  const c = cutterCatalogue("metric");
  const mid = neighbouringSizes(c, 5.3 * MM);
  assert.equal(mid.below?.label, "5 mm");
  assert.equal(mid.above?.label, "6 mm");
  assert.equal(mid.exact, undefined);
  const hit = neighbouringSizes(c, 0.0035);
  assert.equal(hit.exact?.label, "3.5 mm");
  assert.equal(hit.below?.label, "3 mm");
  assert.equal(hit.above?.label, "4 mm");
  const small = neighbouringSizes(c, 1 * MM);
  assert.equal(small.below, undefined);
  assert.equal(small.above?.label, "2 mm");
  const big = neighbouringSizes(c, 14 * MM);
  assert.equal(big.above, undefined);
  assert.equal(big.below?.label, "13 mm");
  assert.throws(() => neighbouringSizes(c, 0), RangeError);
  assert.throws(() => neighbouringSizes(c, Infinity), RangeError);
});

Deno.test("roundUp never returns a smaller cutter; above the largest it fails explicitly", () => {
  for (const spec of ["metric", "inch"] as const) {
    const c = cutterCatalogue(spec);
    assert.ok(c.kind === "discrete");
    const largest = c.cutters[c.cutters.length - 1].size;
    for (let mm = 0.5; mm * MM <= largest + 1e-12; mm += 0.05) {
      const r = roundUp(c, mm * MM);
      assert.ok(r.ok, `${spec} ${mm} mm`);
      assert.ok(r.cutter.size >= mm * MM - 1e-9, `${spec}: ${r.cutter.label} < ${mm} mm`);
    }
    const over = roundUp(c, largest * 1.01);
    assert.ok(!over.ok && over.code === "above_largest");
  }
  const inch = cutterCatalogue("inch");
  const r = roundUp(inch, 7.5 * MM); // between 9/32 in = 7.14375 mm and 5/16 in = 7.9375 mm
  assert.ok(r.ok && r.cutter.label === "5/16 in");
});

Deno.test("nearest: closest diameter, ties to the larger, clamps past the ends with a flag", () => {
  const c = cutterCatalogue("metric");
  assert.equal(nearest(c, 5.4 * MM).cutter.label, "5 mm");
  assert.equal(nearest(c, 5.6 * MM).cutter.label, "6 mm");
  assert.equal(nearest(c, 2.25 * MM).cutter.label, "2.5 mm"); // tie → larger (common practice, no source)
  const below = nearest(c, 1 * MM);
  assert.equal(below.cutter.label, "2 mm");
  assert.equal(below.outside, "below_smallest");
  const above = nearest(c, 20 * MM);
  assert.equal(above.cutter.label, "13 mm");
  assert.equal(above.outside, "above_largest");
});

Deno.test("continuous catalogue offers every size", () => {
  const c = cutterCatalogue("continuous");
  const r = roundUp(c, 5.37 * MM);
  assert.ok(r.ok);
  assertClose(r.cutter.size, 5.37 * MM, { rel: 1e-15, what: "continuous size" });
  assert.equal(r.cutter.label, "5.37 mm");
  assert.equal(nearest(c, 7 * MM).outside, undefined);
});
