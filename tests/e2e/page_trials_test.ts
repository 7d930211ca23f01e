/**
 * The Trial shots tab in a real headless Chromium against the real service and its worker:
 * weighed masses typed into the table (synthetic: the model with gate G1 narrowed to 0.9, made
 * here), the fit run as a job, the before/after bars and the factor table shown, the
 * calibrated model optimized with one click, and the process-window chart drawn; no horizontal
 * overflow at 390 px. Fails, never skips, without Chromium.
 */
import assert from "node:assert/strict";
import type { Page } from "puppeteer-core";
import { launchChromium, requireChromium, setEditor } from "./_browser.ts";
import { startService } from "./_processes.ts";
import { unequalBranches } from "../network/_scenarios.ts";
import { syntheticShots } from "../support/synthetic_shots.ts";

const artifacts = new URL("../../test-artifacts/page/", import.meta.url);

/** Type into an input as a user would (input event). */
async function type(page: Page, selector: string, value: string) {
  await page.$eval(selector, (el, v) => {
    const input = el as HTMLInputElement;
    input.value = v as string;
    input.dispatchEvent(new Event("input", { bubbles: true }));
  }, value);
}

const overflow = (page: Page) =>
  page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);

Deno.test({
  name:
    "page in Chromium, Trial shots: masses in, fit, bars and factors, optimize the calibrated model, process window",
  sanitizeOps: false,
  sanitizeResources: false,
  async fn() {
    await requireChromium();
    await Deno.mkdir(artifacts, { recursive: true });
    const dir = await Deno.makeTempDir({ prefix: "evenfill-trials-" });
    const service = await startService(`${dir}/e2e.db`, ["--workers", "1"]);
    const { browser, dir: userDir } = await launchChromium();
    try {
      const page = await browser.newPage();
      const errors: string[] = [];
      page.on("pageerror", (e) => errors.push(String(e)));
      await page.setViewport({ width: 1280, height: 900 });
      await page.goto(`${service.base}/`, { waitUntil: "load" });
      await page.waitForSelector("body[data-ready='true']", { timeout: 30_000 });

      const tool = unequalBranches("isothermal");
      tool.process.switchover_percent = 98;
      tool.name = "two unequal branches, trial shots";
      await setEditor(page, JSON.stringify(tool, null, 2));
      await page.waitForSelector("#editor-state[data-kind='ok']", { timeout: 15_000 });

      // Weighed masses: the model itself with gate G1's opening at 0.9 of its drawn size.
      const shots = syntheticShots(tool, [{ kind: "gate_size", gate: "G1" }], [0.9], [55, 80], {
        masses: true,
      });
      await page.click("#tab-trials");
      await page.waitForSelector("#mass-table");
      assert.match(await page.$eval("#fit-caution", (el) => el.textContent ?? ""), /weigh several/);
      await page.click("#add-shot");
      for (const [k, s] of shots.short_shots.entries()) {
        await type(page, `#shot-${k}-size`, String(s.shot_percent));
        for (const part of s.parts) {
          await type(
            page,
            `input[data-shot='${k}'][data-cavity='${part.cavity}']`,
            String(part.mass_g),
          );
        }
      }
      // Factors: the gate G1 only.
      await page.click("input[name='fit-factor'][value='viscosity']");
      await page.click("input[name='fit-factor'][value='gate:G1']");
      const ticked = await page.$$eval(
        "input[name='fit-factor']:checked",
        (els) => els.map((e) => (e as HTMLInputElement).value),
      );
      assert.deepEqual(ticked, ["gate:G1"]);
      await page.click("#run-fit");
      await page.waitForSelector("#fit-factors", { timeout: 120_000 });

      // The masses went into the scenario's measurements block.
      const written = JSON.parse(
        await page.$eval("#scenario-text", (el) => (el as HTMLTextAreaElement).value),
      );
      assert.equal(written.measurements.short_shots.length, 2);
      assert.equal(written.measurements.short_shots[1].parts[0].cavity, "C1");

      // Before/after bars: one group per part, three bars each; after matches weighed.
      const bars = await page.$$eval("#fit-bars rect.bar", (els) =>
        els.map((e) => ({
          series: (e as SVGElement).dataset.series,
          value: Number((e as SVGElement).dataset.value),
        })));
      assert.equal(bars.length, 3 * 4, "2 shots × 2 cavities × (weighed, before, after)");
      for (let k = 0; k < bars.length; k += 3) {
        assert.deepEqual(bars.slice(k, k + 3).map((b) => b.series), [
          "measured",
          "before",
          "after",
        ]);
        assert.ok(
          Math.abs(bars[k + 2].value - bars[k].value) <=
            Math.abs(bars[k + 1].value - bars[k].value),
          "after the fit the model is at least as close to the weighed fill as before",
        );
      }
      assert.ok(
        bars.some((b, k) => b.series === "before" && Math.abs(b.value - bars[k - 1].value) > 0.5),
        "the narrowed gate shows before the fit",
      );
      const row = await page.$eval("#fit-factors tbody tr", (el) => ({
        factor: (el as HTMLElement).dataset.factor,
        identified: (el as HTMLElement).dataset.identified,
        cells: [...el.querySelectorAll("th, td")].map((c) => c.textContent ?? ""),
      }));
      assert.equal(row.factor, "gate G1 size");
      assert.equal(row.identified, "true");
      assert.match(row.cells[0], /Gate G1 effective opening/);
      const value = Number(/× ([\d.]+)/.exec(row.cells[1])![1]);
      const se = Number(/± ([\d.]+)/.exec(row.cells[2])![1]);
      assert.ok(Math.abs(value - 0.9) <= Math.max(se, 0.0005), `${value} ± ${se}`);
      await page.screenshot({
        path: new URL("trials-fit.png", artifacts).pathname,
        fullPage: true,
      });

      // The process window of today's design.
      await page.click("#run-window");
      await page.waitForSelector("#window-imbalance", { timeout: 120_000 });
      assert.equal(await page.$$eval("#window-imbalance rect.range", (e) => e.length), 1);
      assert.equal(await page.$$eval("#window-shear rect.range", (e) => e.length), 1);
      assert.equal(await page.$$eval("#window-effects rect.effect", (e) => e.length), 4);
      assert.match(
        await page.$eval(".window-words", (el) => el.textContent ?? ""),
        /Today's tool: imbalance between/,
      );

      // 390 px: nothing wider than the screen, the tabs on one line.
      await page.setViewport({ width: 390, height: 844 });
      assert.equal(await overflow(page), 0, "390 px, trial shots: the page is not wider");
      const tabsHigh = await page.$eval(".tabs", (el) => el.getBoundingClientRect().height);
      assert.ok(tabsHigh < 60, `390 px: the tabs sit on one line (${tabsHigh} px)`);
      await page.screenshot({
        path: new URL("trials-390.png", artifacts).pathname,
        fullPage: true,
      });
      await page.setViewport({ width: 1280, height: 900 });

      // Optimize from the calibrated model: it is in the editor, marked, and optimized.
      await page.click("#optimize-calibrated");
      await page.waitForSelector("#calibrated-mark", { timeout: 5_000 });
      const calibrated = JSON.parse(
        await page.$eval("#scenario-text", (el) => (el as HTMLTextAreaElement).value),
      );
      assert.match(calibrated.name, /\(calibrated\)$/);
      // G1 is drawn 1.4 mm (tests/network/_scenarios.ts); calibrated, it is the fitted share of it.
      assert.ok(
        Math.abs(calibrated.gates[0].diameter_mm / 1.4 - value) <= 0.001,
        `G1 ${calibrated.gates[0].diameter_mm} mm, fitted × ${value}`,
      );
      await page.waitForFunction(
        () =>
          ["queued", "running", "done"].includes(
            document.getElementById("run-panel")?.dataset.job ?? "",
          ),
        { timeout: 30_000 },
      );
      const jobs = (await (await fetch(`${service.base}/api/jobs`)).json()).jobs as {
        id: string;
        kind: string;
        name: string;
      }[];
      const optimizing = jobs.find((j) => j.kind === "optimize");
      assert.equal(
        optimizing?.name,
        `${tool.name} (calibrated)`,
        "the calibrated model is optimized",
      );
      await page.click("#cancel");
      // The fit now belongs to the scenario before calibration: marked out of date.
      await page.click("#tab-trials");
      await page.waitForSelector("#fit-result .stale-banner");
      assert.deepEqual(errors, []);
    } finally {
      await browser.close().catch(() => {});
      await service.proc.stop().catch(() => {});
      await Deno.remove(userDir, { recursive: true }).catch(() => {});
      await Deno.remove(dir, { recursive: true }).catch(() => {});
    }
  },
});
