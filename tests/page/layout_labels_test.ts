/**
 * Label placement of the layout drawing: on every demo (scenarios/*.json) and on a generated
 * 16-cavity family, in mm and in inch, plain and with a change on every runner and gate (step
 * badges), no two label boxes intersect, every cavity is named and every step badge is drawn.
 * The boxes are the drawing's own estimate of its text (0.6 em per character, 1.25 em a line),
 * written on each label as `data-box` in SVG units.
 */
import assert from "node:assert/strict";
import { layoutSvg } from "../../src/page/layout_drawing.ts";
import type { DrawingChange, DrawingScenario } from "../../src/page/layout_drawing.ts";
import { familyLayout } from "../support/family_layout.ts";

const dir = new URL("../../scenarios/", import.meta.url);
const tools: [string, DrawingScenario][] = [];
for await (const entry of Deno.readDir(dir)) {
  if (!entry.name.endsWith(".json")) continue;
  tools.push([entry.name, JSON.parse(await Deno.readTextFile(new URL(entry.name, dir)))]);
}
tools.sort((a, b) => a[0].localeCompare(b[0]));
tools.push(["familyLayout(16, { seed: 1 })", familyLayout(16, { seed: 1 }) as DrawingScenario]);

type Rect = [number, number, number, number];

function boxes(svg: string): Rect[] {
  return [...svg.matchAll(/class="tag[^"]*" data-box="([^"]+)"/g)].map((m) =>
    m[1].split(" ").map(Number) as Rect
  );
}

const intersects = (a: Rect, b: Rect) => a[0] < b[2] && b[0] < a[2] && a[1] < b[3] && b[1] < a[3];

function everyChange(s: DrawingScenario): DrawingChange[] {
  const ids = [...(s.runners ?? []).map((r) => r.id), ...s.gates.map((g) => g.id)];
  return ids.map((element, k) => ({ element, from_mm: 4, to_mm: 4.5, step: k + 1 }));
}

Deno.test("layout labels: no two label boxes intersect on the demos and a 16-cavity family", () => {
  assert.ok(tools.length >= 4, "three demos and the generated family");
  for (const [name, s] of tools) {
    for (const lengthUnit of ["mm", "in"] as const) {
      for (const changes of [[], everyChange(s)]) {
        const svg = layoutSvg(s, { lengthUnit, changes });
        const b = boxes(svg);
        const labelled = s.cavities.length + s.gates.length + (s.runners ?? []).length + 1;
        assert.ok(b.length >= labelled, `${name}: ${b.length} labels for ${labelled} things`);
        for (let i = 0; i < b.length; i++) {
          for (let j = i + 1; j < b.length; j++) {
            assert.ok(
              !intersects(b[i], b[j]),
              `${name} (${lengthUnit}, ${changes.length} changes): labels ${i} and ${j} overlap: ${
                b[i]
              } / ${b[j]}`,
            );
          }
        }
        // every cavity is named (its id inside or beside it), every step badge is drawn
        for (const c of s.cavities) {
          assert.match(svg, new RegExp(`>${c.id}( [^<]*)?</text>`), `${name}: ${c.id} named`);
          if (c.name) assert.ok(svg.includes(c.name), `${name}: ${c.name} shown`);
        }
        const badges = [...svg.matchAll(/class="step-badge"/g)].length;
        assert.equal(badges, changes.length, `${name}: one badge per step`);
      }
    }
  }
});

Deno.test("layout labels: the intersection test itself sees an overlap", () => {
  assert.ok(intersects([0, 0, 2, 2], [1, 1, 3, 3]));
  assert.ok(!intersects([0, 0, 1, 1], [1, 0, 2, 1]), "touching is not overlapping");
});
