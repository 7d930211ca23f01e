import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import {
  escapeXml,
  linearScale,
  lineChart,
  niceDomain,
  niceStep,
  seriesStyle,
  tickLabel,
} from "../../src/page/chart.ts";

// Nice steps (1, 2, 2.5, 5 × 10ⁿ): common practice in axis labelling, no source.

Deno.test("niceStep picks 1, 2, 2.5 or 5 × 10ⁿ", () => {
  assert.equal(niceStep(0, 10, 5), 2);
  assert.equal(niceStep(0, 1, 5), 0.2);
  assert.equal(niceStep(0, 100, 4), 25);
  assert.equal(niceStep(0, 2.9, 6), 0.5);
  assert.equal(niceStep(5, 5, 5), 1);
});

Deno.test("niceDomain covers the data with whole steps", () => {
  const d = niceDomain(0.03, 2.94, 6);
  assert.deepEqual(d.domain, [0, 3]);
  assert.deepEqual(d.ticks, [0, 0.5, 1, 1.5, 2, 2.5, 3]);
  const flat = niceDomain(4, 4, 5);
  assert.ok(flat.domain[1] > flat.domain[0]);
  const negative = niceDomain(-3, 7, 5);
  assert.ok(negative.domain[0] <= -3 && negative.domain[1] >= 7);
});

Deno.test("linearScale maps ends to ends and survives a zero-width domain", () => {
  const s = linearScale([0, 100], [300, 20]);
  assertClose(s(0), 300, { abs: 1e-12 });
  assertClose(s(50), 160, { abs: 1e-12 });
  assert.ok(Number.isFinite(linearScale([3, 3], [0, 10])(3)));
});

Deno.test("tick labels show the decimals the step needs", () => {
  assert.equal(tickLabel(0.5, 0.5), "0.5");
  assert.equal(tickLabel(2, 1), "2");
  assert.equal(tickLabel(0.25, 0.25), "0.25");
  assert.equal(tickLabel(100, 25), "100");
});

Deno.test("seven series differ in colour, dash and marker (black-and-white print)", () => {
  const styles = Array.from({ length: 7 }, (_, k) => seriesStyle(k));
  assert.equal(new Set(styles.map((s) => s.colour)).size, 7);
  assert.equal(new Set(styles.map((s) => s.dash)).size, 7);
  assert.equal(new Set(styles.map((s) => s.marker)).size, 7);
  // no rainbow scale: every colour is from the Okabe–Ito set (Okabe & Ito 2008), orange and sky
  // blue darkened to reach 3:1 on white (WCAG 2.1, 1.4.11; tests/page/contrast_test.ts)
  const okabeIto = ["#0072B2", "#D55E00", "#009E73", "#CC79A7", "#B07800", "#3C8DC5", "#000000"];
  for (const s of styles) assert.ok(okabeIto.includes(s.colour));
});

Deno.test("lineChart: one path per series, rules, escaped labels", () => {
  const svg = lineChart([
    { label: "C1 <base>", style: 0, points: [[0, 0], [1, 50], [2, 100]] },
    { label: "C2", style: 1, points: [[0, 0], [2, 80]] },
  ], { xLabel: "time, s", yLabel: "fill, %", rules: [{ y: 90, label: "limit" }] });
  assert.equal((svg.match(/<path d="M/g) ?? []).length, 2);
  assert.ok(svg.includes("C1 &lt;base&gt;"));
  assert.ok(svg.includes(">limit<"));
  assert.ok(svg.startsWith("<svg") && svg.endsWith("</svg>"));
  assert.equal(escapeXml(`a&"'`), "a&amp;&quot;&#39;");
});

Deno.test("integer x axis (iterations): ticks at whole numbers only", () => {
  const svg = lineChart([{ label: "i", style: 0, points: [[1, 5], [2, 3], [3, 2]] }], {
    xLabel: "iteration",
    yLabel: "%",
    integerX: true,
  });
  const xTicks = [...svg.matchAll(/class="tick"[^>]*text-anchor="middle">([^<]*)<\/text>/g)].map((
    m,
  ) => m[1]);
  assert.ok(xTicks.length >= 3);
  for (const t of xTicks) assert.match(t, /^-?\d+$/);
});
