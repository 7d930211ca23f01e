/**
 * Colour contrast of the page, read from public/style.css: text at least 4.5:1 and the focus
 * ring and graphics at least 3:1 against the backgrounds they sit on (WCAG 2.1, success
 * criteria 1.4.3 "Contrast (Minimum)" and 1.4.11 "Non-text Contrast", level AA). Contrast
 * ratio (L1 + 0.05) / (L2 + 0.05) of the relative luminances L = 0.2126 R + 0.7152 G +
 * 0.0722 B, each channel linearised as c/12.92 below 0.03928, else ((c + 0.055)/1.055)^2.4
 * (WCAG 2.1, definitions "contrast ratio" and "relative luminance").
 */
import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import { SERIES_COLOURS } from "../../src/page/chart.ts";

const css = await Deno.readTextFile(new URL("../../public/style.css", import.meta.url));
const screen = css.slice(0, css.indexOf("@media print"));

function rgb(hex: string): [number, number, number] {
  let h = hex.replace("#", "");
  if (h.length === 3) h = [...h].map((c) => c + c).join("");
  assert.match(h, /^[0-9a-fA-F]{6}$/, `a hex colour: ${hex}`);
  return [0, 2, 4].map((i) => parseInt(h.slice(i, i + 2), 16) / 255) as [number, number, number];
}

/** WCAG 2.1 relative luminance of an sRGB colour. */
function relativeLuminance(hex: string): number {
  const [r, g, b] = rgb(hex).map((c) => c <= 0.03928 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4);
  return 0.2126 * r + 0.7152 * g + 0.0722 * b;
}

/** WCAG 2.1 contrast ratio of two colours (1 to 21). */
function contrast(a: string, b: string): number {
  const [hi, lo] = [relativeLuminance(a), relativeLuminance(b)].sort((x, y) => y - x);
  return (hi + 0.05) / (lo + 0.05);
}

const vars = new Map(
  [
    ...css.slice(css.indexOf(":root"), css.indexOf("}", css.indexOf(":root")))
      .matchAll(/--([a-z-]+):\s*(#[0-9a-fA-F]{3,6})\s*;/g),
  ].map((m) => [m[1], m[2]]),
);
const colour = (value: string) => {
  const v = value.trim();
  const m = /^var\(--([a-z-]+)\)$/.exec(v);
  if (m) {
    assert.ok(vars.has(m[1]), `--${m[1]} is defined in :root`);
    return vars.get(m[1])!;
  }
  return v;
};

Deno.test("contrast formula: black on white is 21:1, white on white 1:1, #767676 on white 4.54:1", () => {
  // #767676 on white is the lightest grey meeting 4.5:1 (a commonly quoted value, from memory)
  assertClose(contrast("#000", "#fff"), 21, { rel: 1e-12 });
  assertClose(contrast("#fff", "#fff"), 1, { rel: 1e-12 });
  assertClose(contrast("#767676", "#fff"), 4.54, { abs: 0.01 });
});

const BACKGROUNDS = ["paper", "sheet", "gutter", "note-bg", "stale-bg"];
const TEXT = ["ink", "ink-soft", "trouble", "good", "note-ink", "action"];

Deno.test("every text colour of the page is at least 4.5:1 on every page background", () => {
  for (const fg of TEXT) {
    for (const bg of BACKGROUNDS) {
      const ratio = contrast(vars.get(fg)!, vars.get(bg)!);
      assert.ok(ratio >= 4.5, `--${fg} on --${bg}: ${ratio.toFixed(2)}:1`);
    }
  }
  // white text on the action colour (primary buttons), at rest and hovered
  const hover = /button\.primary:hover[^{]*\{[^}]*background:\s*([^;]+);/.exec(screen)![1];
  for (const bg of [vars.get("action")!, colour(hover)]) {
    assert.ok(contrast("#fff", bg) >= 4.5, `white on ${bg}`);
  }
});

Deno.test("no text colour on screen escapes the check: each `color:` is a checked one", () => {
  const allowed = new Set([...TEXT.map((t) => vars.get(t)!), "#fff", "inherit", "currentColor"]);
  const found = [...screen.matchAll(/(?<![-\w])color:\s*([^;]+);/g)].map((m) => colour(m[1]));
  assert.ok(found.length > 10, "the stylesheet's text colours were found");
  for (const c of found) assert.ok(allowed.has(c), `text colour ${c} is checked`);
  // chart and drawing text fills
  const fills = [
    ...screen.matchAll(
      /(svg\.(?:chart|layout)[^{]*(?:text|label|tick)[^{]*)\{[^}]*fill:\s*([^;]+);/g,
    ),
  ].map((m) => ({ selector: m[1], fill: colour(m[2]) }));
  assert.ok(fills.length >= 3);
  for (const { selector, fill } of fills) {
    // step numbers are white on the ink-filled badge; everything else sits on the sheet
    const bg = selector.includes("step-badge") ? vars.get("ink")! : vars.get("sheet")!;
    assert.ok(contrast(fill, bg) >= 4.5, `${selector.trim()}: ${fill} on ${bg}`);
  }
});

Deno.test("focus ring and graphics are at least 3:1 on the backgrounds", () => {
  const outlines = [...screen.matchAll(/outline:\s*\S+\s+solid\s+([^;]+);/g)].map((m) =>
    colour(m[1])
  );
  assert.ok(outlines.length >= 2, "focus outlines found");
  for (const c of outlines) {
    for (const bg of ["paper", "sheet"]) {
      const ratio = contrast(c, vars.get(bg)!);
      assert.ok(ratio >= 3, `focus ${c} on --${bg}: ${ratio.toFixed(2)}:1`);
    }
  }
  const runner = /svg\.layout \.runner \.body\s*\{[^}]*stroke:\s*([^;]+);/.exec(screen)![1];
  const gate = /svg\.layout \.gate \.body\s*\{[^}]*stroke:\s*([^;]+);/.exec(screen)![1];
  for (const c of [colour(runner), colour(gate), ...SERIES_COLOURS]) {
    const ratio = contrast(c, vars.get("sheet")!);
    assert.ok(ratio >= 3, `graphic ${c} on white: ${ratio.toFixed(2)}:1`);
  }
});
