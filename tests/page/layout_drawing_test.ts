import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import { layoutGeometry, layoutSvg, niceLengthStep } from "../../src/page/layout_drawing.ts";

const demo = JSON.parse(
  await Deno.readTextFile(new URL("../../scenarios/family_four_housing.json", import.meta.url)),
);

Deno.test("runners are drawn at their diameter between their nodes (1 unit = 1 mm)", () => {
  const g = layoutGeometry(demo);
  const r1 = g.runners.find((r) => r.id === "R1")!;
  assert.deepEqual([r1.x1, r1.y1, r1.x2, r1.y2], [0, 0, -40, 0]);
  assert.equal(r1.width_mm, 6);
});

Deno.test("cavity circle areas are proportional to volume and do not overlap", () => {
  const g = layoutGeometry(demo);
  const byId = new Map(g.cavities.map((c) => [c.id, c]));
  // C1 38 cm³, C4 8 cm³: area ratio 38/8
  assertClose((byId.get("C1")!.r / byId.get("C4")!.r) ** 2, 38 / 8, { rel: 1e-12 });
  for (const a of g.cavities) {
    for (const b of g.cavities) {
      if (a === b) continue;
      assert.ok(Math.hypot(a.x - b.x, a.y - b.y) >= a.r + b.r, `${a.id} overlaps ${b.id}`);
    }
  }
  // C1's gate leaves NA (-40, 35), reached by R3 going +y: the cavity sits above it
  const c1 = byId.get("C1")!;
  assertClose(c1.x, -40, { abs: 1e-9 });
  assert.ok(c1.y > 35 + c1.r);
});

Deno.test("a cavity with two gates sits between them, each gate ending on its rim", () => {
  const frame = JSON.parse(
    Deno.readTextFileSync(
      new URL("../../scenarios/two_gate_frame_and_knob.json", import.meta.url),
    ),
  );
  const g = layoutGeometry(frame);
  const c1 = g.cavities.find((c) => c.id === "C1")!;
  for (const gate of g.gates.filter((x) => x.id === "G1" || x.id === "G2")) {
    assertClose(Math.hypot(gate.x2 - c1.x, gate.y2 - c1.y), c1.r, { rel: 1e-9 });
  }
});

Deno.test("every element is labelled with its id and size; changes show before → after", () => {
  const svg = layoutSvg(demo, {
    changes: [{ element: "R2", from_mm: 6, to_mm: 4, step: 1 }, {
      element: "G3",
      from_mm: 0.8,
      to_mm: 1.5,
      step: 2,
    }],
  });
  for (const id of ["R1", "R3", "R4", "R5", "R6", "G1", "G2", "G4", "C1", "C2", "C3", "C4"]) {
    assert.ok(svg.includes(`data-id="${id}"`), id);
  }
  assert.ok(svg.includes("R1 ⌀6<"));
  assert.ok(svg.includes("R2 ⌀6 → 4<"));
  assert.ok(svg.includes("G3 ⌀0.8 → 1.5<"));
  assert.ok(svg.includes("G1 t 1.4 × 4<"));
  assert.equal((svg.match(/class="runner changed"|class="gate changed"/g) ?? []).length, 2);
  const inch = layoutSvg(demo, { lengthUnit: "in" });
  assert.ok(inch.includes("R1 ⌀0.2362<"));
});

Deno.test("scale bar: a round length in the chosen unit", () => {
  assert.equal(niceLengthStep(37, "mm"), 50);
  assertClose(niceLengthStep(37, "in"), 50.8, { rel: 1e-12 }); // 2 in
});

Deno.test("scale bar label is a round number in inch too", () => {
  const svg = layoutSvg(demo, { lengthUnit: "in" });
  assert.match(svg, /class="scale-bar".*>2 in<\/text>/);
});

Deno.test("gate labels sit next to their gates", () => {
  const svg = layoutSvg(demo);
  const g1 = /data-id="G1">.*?<text class="label" x="([-\d.]+)" y="([-\d.]+)"/.exec(svg);
  assert.ok(g1);
  // G1 runs from NA (-40, 35) towards C1 above it; its label is within 30 mm of the node
  assert.ok(Math.hypot(Number(g1[1]) + 40, -Number(g1[2]) - 35) < 30, `G1 label at ${g1[1]}`);
});

Deno.test("a cavity placed by the scenario (x_mm, y_mm) is drawn centred there, its gate ending on its rim", () => {
  const placed = structuredClone(demo);
  const c1 = placed.cavities.find((c: { id: string }) => c.id === "C1");
  c1.x_mm = -90;
  c1.y_mm = 60;
  const g = layoutGeometry(placed);
  const drawn = g.cavities.find((c) => c.id === "C1")!;
  assert.deepEqual([drawn.x, drawn.y], [-90, 60]);
  const gate = g.gates.find((x) => x.id === "G1")!;
  assertClose(Math.hypot(gate.x2 - drawn.x, gate.y2 - drawn.y), drawn.r, { rel: 1e-9 });
  // the other cavities keep their place beyond their gates
  const c4 = g.cavities.find((c) => c.id === "C4")!;
  assert.ok(c4.y < -35 - c4.r);
});
