import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import {
  forceFromKn,
  formatFlowRate,
  formatLength,
  formatMass,
  formatNumber,
  formatPressure,
  formatVolume,
  groupThousands,
  lengthFromMm,
  lengthToMm,
  METRIC_UNITS,
  parseDisplayUnits,
  pressureFromMpa,
  temperatureFromC,
  temperatureToC,
} from "../../src/page/display_units.ts";

// Conversion factors are exact by definition: 1 in = 25.4 mm; 1 bar = 0.1 MPa;
// 1 psi = 6894.757293168 Pa; 1 tonne-force = 9.80665 kN; 1 US ton-force = 2000 lbf
// = 8.896443230521 kN; °F = 1.8·°C + 32 (NIST SP 811, appendix B).

Deno.test("length: mm ↔ inch by the exact 25.4", () => {
  assertClose(lengthFromMm(25.4, "in"), 1, { rel: 1e-15 });
  assertClose(lengthFromMm(6, "in"), 6 / 25.4, { rel: 1e-15 });
  assertClose(lengthToMm(0.25, "in"), 6.35, { rel: 1e-15 });
  assert.equal(lengthFromMm(6, "mm"), 6);
});

Deno.test("pressure: MPa → bar and psi", () => {
  assertClose(pressureFromMpa(100, "bar"), 1000, { rel: 1e-15 });
  assertClose(pressureFromMpa(1, "psi"), 145.0377377, { rel: 1e-9 });
  assert.equal(pressureFromMpa(42, "MPa"), 42);
});

Deno.test("force: kN → tonne-force and US ton-force", () => {
  assertClose(forceFromKn(9.80665, "tf"), 1, { rel: 1e-15 });
  assertClose(forceFromKn(8.896443230521, "tonUS"), 1, { rel: 1e-12 });
});

Deno.test("temperature: °C ↔ °F", () => {
  assertClose(temperatureFromC(100, "F"), 212, { abs: 1e-12 });
  assertClose(temperatureFromC(-40, "F"), -40, { abs: 1e-12 });
  assertClose(temperatureToC(482, "F"), 250, { abs: 1e-12 });
});

Deno.test("formatting: toolroom decimals and missing values", () => {
  assert.equal(formatLength(6, "mm"), "6");
  assert.equal(formatLength(1.25, "mm"), "1.25");
  assert.equal(formatLength(6, "in"), "0.2362");
  assert.equal(formatLength(null, "in"), "–");
  assert.equal(formatNumber(21075.8, 3), "21,076");
  assert.equal(formatNumber(2.80778, 3), "2.81");
  assert.equal(formatNumber(0.0123, 2), "0.012");
  assert.equal(formatPressure(100, { ...METRIC_UNITS, pressure: "bar" }), "1,000 bar");
  assert.equal(formatPressure(1, { ...METRIC_UNITS, pressure: "psi" }), "145 psi");
});

Deno.test("saved unit choices: unknown values fall back to metric", () => {
  assert.deepEqual(parseDisplayUnits(null), METRIC_UNITS);
  assert.deepEqual(parseDisplayUnits({ length: "in", pressure: "atm", force: "tf" }), {
    ...METRIC_UNITS,
    length: "in",
    force: "tf",
  });
});

// 1 in = 25.4 mm exactly, so 1 in³ = 16.387064 cm³; 1 lb = 453.59237 g and 1 oz = 1/16 lb
// = 28.349523125 g exactly (NIST SP 811, 2008, appendix B.8).
Deno.test("US units: volume in in³, mass in oz (lb from a pound), flow in in³/s", () => {
  const us = { ...METRIC_UNITS, length: "in" as const };
  assert.equal(formatVolume(16.387064, us), "1.00 in³");
  assert.equal(formatVolume(16.387064, METRIC_UNITS), "16.4 cm³");
  assert.equal(formatMass(28.349523125, us), "1.00 oz");
  assert.equal(formatMass(453.59237 * 2, us), "2.00 lb");
  assert.equal(formatMass(120.5, METRIC_UNITS), "121 g");
  assert.equal(formatFlowRate(16.387064 * 3, us), "3.00 in³/s");
  assert.equal(formatFlowRate(30, METRIC_UNITS), "30.0 cm³/s");
});

Deno.test("inch values are rounded once, from mm", () => {
  // 5 mm = 0.196850… in: 0.1969. Rounding 0.19685 (already rounded) again gives 0.1968.
  assert.equal(formatLength(5, "in"), "0.1969");
  assert.notEqual(formatLength(5, "in"), (0.19685).toFixed(4));
});

Deno.test("thousands separators: commas between groups of three, decimals untouched", () => {
  assert.equal(groupThousands("1234567.125"), "1,234,567.125");
  assert.equal(groupThousands("-1000"), "-1,000");
  assert.equal(groupThousands("999"), "999");
  assert.equal(formatNumber(151109, 3), "151,109");
  assert.equal(formatNumber(1234.5678, 6), "1,234.57");
  assert.equal(formatPressure(100, { ...METRIC_UNITS, pressure: "psi" }), "14,504 psi");
});
