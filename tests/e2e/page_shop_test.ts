/**
 * The page as a shop document (issue 15), in a real headless Chromium against the real
 * service: no horizontal page overflow at 390, 768, 1024 and 1440 px; the fill and press
 * charts end at switchover and mark it, with the headline peaks from the same instant; an
 * edited scenario marks Results and the sheet "out of date"; the change sheet of 12 steps
 * prints on one landscape A4 and one Letter page (counted as "/Type /Page" objects of the
 * PDF); a cancelled job that wrote its best design shows it, labelled; a stopped service is
 * said plainly and its return noticed.
 *
 * The 12-step sheet and the cancelled job come from answers to the page's job requests
 * (puppeteer request interception) built from the real service's simulation of the demo: the
 * page's part does not wait for an optimizer to produce those cases.
 *
 * Chromium comes from the Debian package `chromium`; without it this test fails with a
 * message, it never skips silently.
 */
import assert from "node:assert/strict";
import type { HTTPRequest, Page } from "puppeteer-core";
import { launchChromium, requireChromium, setEditor } from "./_browser.ts";
import { Proc, startService } from "./_processes.ts";
import type { OptimizationResult, SimulationResult } from "../../src/page/wire.ts";
import { change, optimization, stepState } from "../page/_fixtures.ts";

const SERVICE = new URL("../../src/service/main.ts", import.meta.url).pathname;
const artifacts = new URL("../../test-artifacts/page/", import.meta.url);

async function ready(page: Page, base: string, width: number) {
  await page.setViewport({ width, height: 844 });
  await page.goto(`${base}/`, { waitUntil: "load" });
  await page.waitForSelector("body[data-ready='true']", { timeout: 30_000 });
  await page.waitForSelector("#editor-state[data-kind='ok']", { timeout: 15_000 });
}

const overflow = (page: Page) =>
  page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);

/** PDF page objects: "/Type /Page" not followed by "s" (the "/Pages" tree node). */
const pdfPages = (pdf: Uint8Array) =>
  (new TextDecoder("latin1").decode(pdf).match(/\/Type\s*\/Page(?![a-zA-Z])/g) ?? []).length;

function plan(
  sim: SimulationResult,
  status: OptimizationResult["status"],
  steps: number,
  elements: string[],
): OptimizationResult {
  // the worst case for the printed page: step 0, a short shot per cavity after every step,
  // the last two changes cut together, one step above today's imbalance with its reason
  const state = (k: number) =>
    stepState(
      10 - k * 0.5,
      sim.cavities.map((c, i) => [c.id, i === 0 ? 100 : 100 - i * 2.5 - k * 0.1, 12.5 - i]),
      { limits_met: k === steps - 1 },
    );
  const changes = Array.from({ length: steps }, (_, k) => {
    const size = 5.5 + 0.5 * (k % 3);
    const together = steps > 2 && k >= steps - 2;
    return change({
      element: elements[k % elements.length],
      from_mm: 5,
      to_mm: size,
      from_in: 5 / 25.4,
      to_in: size / 25.4,
      cutter: `${size} mm`,
      step: together ? steps - 1 : k + 1,
      cut_together: together,
      above_start: k === 1,
      above_start_reason: k === 1
        ? "no single change, set of like changes or pair of changes left keeps the imbalance at or below 10.00 %: the lowest next is 10.40 %"
        : null,
      after_step: state(together ? steps - 1 : k),
    });
  });
  return optimization(sim, {
    status,
    reason: "every limit met and no step the linear model trusts lowers the runner volume further",
    changes,
    changes_start: state(0),
    front: [1, 2].map((k) => ({
      max_changes: k,
      changed: elements.slice(0, k),
      imbalance_percent: 8 - 3 * k,
      runner_mass_g: 8 + k,
      limits_met: k === 2,
      change_cost: k,
      chosen: k === 2,
    })),
  });
}

/** Answer the page's job requests with `job` (status and result) instead of the service. */
async function fakeJob(page: Page, job: { status: string; result: OptimizationResult }) {
  await page.setRequestInterception(true);
  const handler = (r: HTTPRequest) => {
    const url = new URL(r.url());
    if (url.pathname === "/api/jobs" && r.method() === "POST") {
      return r.respond({
        status: 202,
        contentType: "application/json",
        body: JSON.stringify({ id: "fake", status: "queued" }),
      });
    }
    if (url.pathname === "/api/jobs/fake/events") {
      return r.respond({
        status: 200,
        contentType: "text/event-stream",
        body: `event: state\ndata: {"status":"${job.status}"}\n\nevent: end\ndata: {}\n\n`,
      });
    }
    if (url.pathname === "/api/jobs/fake") {
      return r.respond({
        status: 200,
        contentType: "application/json",
        body: JSON.stringify({ id: "fake", progress: null, error: null, ...job }),
      });
    }
    return r.continue();
  };
  page.on("request", handler);
  await page.click("#tab-run");
  await page.click("#optimize");
  // data-settled, not data-job: data-job follows the event stream, which says "cancelled"
  // before the page has fetched the job's result (still to be answered by this handler).
  await page.waitForFunction(
    (s) => document.getElementById("run-panel")?.dataset.settled === s,
    { timeout: 15_000 },
    job.status,
  );
  page.off("request", handler);
  await page.setRequestInterception(false);
}

Deno.test({
  name: "page in Chromium as a shop document: no overflow, switchover, stale, one-page sheet, " +
    "cancelled best design, service health",
  sanitizeOps: false,
  sanitizeResources: false,
  async fn() {
    await requireChromium();
    await Deno.mkdir(artifacts, { recursive: true });
    const dir = await Deno.makeTempDir({ prefix: "evenfill-shop-" });
    const db = `${dir}/e2e.db`;
    let service = await startService(db, ["--workers", "1"]);
    let restarted: Proc | undefined;
    const { browser, dir: userDir } = await launchChromium();
    try {
      const page = await browser.newPage();
      const errors: string[] = [];
      page.on("pageerror", (e) => errors.push(String(e)));

      // --- no horizontal page overflow, every tab, four widths (the 4-cavity demo simulated)
      for (const width of [390, 768, 1024, 1440]) {
        await ready(page, service.base, width);
        await page.click("#tab-run");
        await page.click("#simulate");
        await page.waitForSelector("#cavity-table td[data-which='result']", { timeout: 60_000 });
        for (const tab of ["scenario", "run", "results", "sheet"]) {
          await page.click(`#tab-${tab}`);
          assert.equal(await overflow(page), 0, `${width} px, ${tab}: the page is not wider`);
          const tabsHigh = await page.$eval(".tabs", (el) => el.getBoundingClientRect().height);
          assert.ok(tabsHigh < 60, `${width} px: the tabs sit on one line (${tabsHigh} px)`);
        }
        if (width === 390) {
          await page.screenshot({ path: new URL("shop-390-results.png", artifacts).pathname });
        }
      }

      // --- switchover: marked on the fill and press charts; headline peaks at that instant
      const scenario = JSON.parse(
        await page.$eval("#scenario-text", (el) => (el as HTMLTextAreaElement).value),
      );
      const sim: SimulationResult = await (await fetch(`${service.base}/api/simulate?history=1`, {
        method: "POST",
        headers: { "content-type": "application/json" },
        body: JSON.stringify(scenario),
      })).json();
      const sw = sim.switchover_time_s!;
      assert.ok(sw > 0 && sw < sim.fill_time_s!, "the demo switches over before it is full");
      await page.click("#tab-results");
      for (const chart of ["fill-result", "pressure-chart", "clamp-chart"]) {
        const x = await page.$eval(
          `#${chart} [data-mark='switchover']`,
          (el) => Number((el as HTMLElement).dataset.x),
        );
        assert.equal(x, sw, `${chart}: switchover marked at the result's instant`);
      }
      const headline = await page.$eval(
        "[data-figure='pressure']",
        (el) => Number((el as HTMLElement).dataset.value),
      );
      assert.equal(headline, sim.feed_pressure_peak_MPa);
      assert.equal(sim.feed_pressure_peak_MPa, sim.feed_pressure_at_switchover_MPa);
      const late = sim.cavities.filter((c) => c.fill_time_s! > sw);
      assert.ok(late.length > 0, "a cavity fills after switchover in the demo");
      const ends = await page.$$eval("#fill-result .end-label", (t) => t.map((x) => x.textContent));
      for (const c of late) {
        assert.ok(
          ends.some((e) => e?.startsWith(`${c.id} `) && e.endsWith(" %")),
          `${c.id}'s curve ends with its fill % at switchover: ${ends.join(", ")}`,
        );
      }

      // --- stale: an edit marks Results; undoing it clears the mark
      const good = await page.$eval("#scenario-text", (el) => (el as HTMLTextAreaElement).value);
      assert.equal(await page.$("#results-body .stale-banner"), null, "fresh result unmarked");
      await setEditor(
        page,
        good.replace(/"melt_temperature_C": (\d+)/, '"melt_temperature_C": 1$1'),
      );
      await page.waitForSelector("#results-body .stale-banner", { timeout: 5_000 });
      await setEditor(page, good);
      await page.waitForFunction(() => !document.querySelector("#results-body .stale-banner"), {
        timeout: 5_000,
      });

      // --- the 12-step change sheet prints on one landscape page, A4 and Letter
      const elements = [...(scenario.runners ?? []), ...scenario.gates].map((e) => e.id);
      await fakeJob(page, { status: "done", result: plan(sim, "converged", 12, elements) });
      await page.click("#tab-sheet");
      assert.equal(await page.$$eval("#sheet-changes tbody tr[data-element]", (r) => r.length), 12);
      assert.equal(await page.$$eval("#sheet-changes tbody tr[data-step='0']", (r) => r.length), 1);
      assert.match(await page.$eval("#sheet-layout", (el) => el.outerHTML), /data-scale="/);
      await page.emulateMediaType("print");
      await page.setViewport({ width: 1123, height: 794 }); // A4 landscape at 96 px/in
      await page.screenshot({
        path: new URL("sheet-12-print.png", artifacts).pathname,
        fullPage: true,
      });
      for (const format of ["A4", "Letter"] as const) {
        const pdf = await page.pdf({ format, landscape: true, printBackground: false });
        await Deno.writeFile(new URL(`sheet-12-${format}.pdf`, artifacts), pdf);
        assert.equal(pdfPages(pdf), 1, `the 12-step sheet prints on one ${format} page`);
      }
      const printed = await page.evaluate(() => ({
        layout: !!document.querySelector("#sheet #sheet-layout"),
        steps: document.querySelectorAll("#sheet-changes tbody tr[data-element]").length,
        cautions: document.querySelectorAll("#sheet .cautions li").length,
        signoff: document.querySelectorAll("#sheet .signoff .sign").length,
        revision: document.querySelector("#sheet .rev-block")?.textContent ?? "",
      }));
      assert.ok(printed.layout && printed.steps === 12 && printed.cautions > 0);
      assert.equal(printed.signoff, 4);
      for (const field of ["Tool no.", "Press", "Resin lot", "Revision"]) {
        assert.ok(printed.revision.includes(field), field);
      }
      // stale sheet: marked in print too
      await setEditor(
        page,
        good.replace(/"melt_temperature_C": (\d+)/, '"melt_temperature_C": 1$1'),
      );
      await page.waitForSelector("#sheet[data-stale='true'] .stale-banner", { timeout: 5_000 });
      const banner = await page.$eval(
        "#sheet .stale-banner",
        (el) => ({ shown: getComputedStyle(el).display !== "none", text: el.textContent ?? "" }),
      );
      assert.ok(banner.shown && /Out of date — run again/.test(banner.text));
      await page.emulateMediaType("screen");
      await setEditor(page, good);
      await page.waitForSelector("#sheet[data-stale='false']", { timeout: 5_000 });

      // --- a cancelled job that wrote its best design shows it, labelled
      await fakeJob(page, {
        status: "cancelled",
        result: plan(sim, "iteration_limit", 3, elements),
      });
      await page.click("#tab-results");
      const title = await page.$eval(".run-title", (el) => el.textContent ?? "");
      assert.match(title, /cancelled — best design so far/);
      assert.match(await page.$eval(".verdict", (el) => el.textContent ?? ""), /Cancelled/);
      assert.equal(await page.$$eval("#change-table tbody tr[data-element]", (r) => r.length), 3);
      // an existing tool's fewest-changes table, the plan taken marked once
      assert.deepEqual(
        await page.$$eval("#front-table tbody tr", (r) => r.map((x) => x.dataset.chosen)),
        ["false", "true"],
      );
      // short shots: step 0, step 1, step 2 (the last two changes, cut together)
      assert.deepEqual(
        await page.$$eval("#short-shot-table tbody tr", (r) => r.map((x) => x.dataset.step)),
        ["0", "1", "2"],
      );
      // the optimizer's own words stay behind the advanced fold
      const reasonOpen = await page.$eval(
        ".verdict details.advanced",
        (el) => (el as HTMLDetailsElement).open,
      );
      assert.equal(reasonOpen, false);

      // --- the service stops: said plainly; it comes back on the same port: noticed
      const port = service.port;
      await service.proc.stop();
      await page.waitForSelector("#service-state[data-kind='error']:not([hidden])", {
        timeout: 20_000,
      });
      assert.match(
        await page.$eval("#service-state", (el) => el.textContent ?? ""),
        /not answering/,
      );
      restarted = new Proc(SERVICE, [
        "--host",
        "127.0.0.1",
        "--port",
        String(port),
        "--db",
        db,
      ]);
      await restarted.waitForLine((l) => l.includes('"event":"listening"'), "the restart");
      await page.waitForSelector("#service-state[data-kind='ok']", { timeout: 20_000 });
      service = { ...service, proc: restarted };
      assert.deepEqual(errors, [], "no script errors");
    } finally {
      await browser.close().catch(() => {});
      await service.proc.stop().catch(() => {});
      await Deno.remove(userDir, { recursive: true }).catch(() => {});
      await Deno.remove(dir, { recursive: true }).catch(() => {});
    }
  },
});
