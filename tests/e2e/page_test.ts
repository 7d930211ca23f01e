/**
 * The page in a real headless Chromium against the real service on
 * 127.0.0.1 (its own temp database and worker): bad JSON is caught at its
 * field and nothing is sent; the 4-cavity demo is optimized through the page
 * and its per-cavity numbers and change list equal the API's; units switch;
 * the change sheet prints. Screenshots go to test-artifacts/page/ (gitignored).
 *
 * Chromium comes from the Debian package `chromium` (`.ci/run` installs it).
 * Without it this test fails with a message: it never skips silently.
 */
import assert from "node:assert/strict";
import type { Browser, HTTPRequest, Page } from "puppeteer-core";
import { launchChromium, setEditor } from "./_browser.ts";
import { formatMass, formatNumber, METRIC_UNITS } from "../../src/page/display_units.ts";
import type { Job } from "../../src/page/wire.ts";

const root = new URL("../../", import.meta.url);
const artifacts = new URL("test-artifacts/page/", root);

interface Service {
  base: string;
  process: Deno.ChildProcess;
  log: string[];
  dir: string;
}

async function startService(): Promise<Service> {
  const dir = await Deno.makeTempDir({ prefix: "evenfill-e2e-" });
  const process = new Deno.Command(Deno.execPath(), {
    args: ["run", "-A", "src/service/main.ts", "--port", "0", "--db", `${dir}/e2e.db`],
    cwd: root,
    stdout: "piped",
    stderr: "piped",
    env: { NO_COLOR: "1" },
  }).spawn();
  const log: string[] = [];
  const { promise: listening, resolve, reject } = Promise.withResolvers<number>();
  const timer = setTimeout(() => reject(new Error("service did not start in 60 s")), 60_000);
  (async () => {
    const lines = process.stdout.pipeThrough(new TextDecoderStream());
    let buffer = "";
    for await (const chunk of lines) {
      buffer += chunk;
      let nl: number;
      while ((nl = buffer.indexOf("\n")) >= 0) {
        const line = buffer.slice(0, nl);
        buffer = buffer.slice(nl + 1);
        log.push(line);
        try {
          const event = JSON.parse(line);
          if (event.event === "listening") resolve(event.port);
        } catch { /* not a JSON line */ }
      }
    }
    reject(new Error(`service exited before listening:\n${log.join("\n")}`));
  })();
  (async () => {
    for await (const chunk of process.stderr.pipeThrough(new TextDecoderStream())) {
      log.push(chunk.trimEnd());
    }
  })();
  try {
    const port = await listening;
    return { base: `http://127.0.0.1:${port}`, process, log, dir };
  } finally {
    clearTimeout(timer);
  }
}

async function stopService(service: Service) {
  try {
    service.process.kill("SIGTERM");
  } catch { /* already gone */ }
  const timeout = setTimeout(() => {
    try {
      service.process.kill("SIGKILL");
    } catch { /* gone */ }
  }, 10_000);
  await service.process.status;
  clearTimeout(timeout);
  await Deno.remove(service.dir, { recursive: true }).catch(() => {});
}

async function shot(page: Page, name: string, fullPage = true) {
  await Deno.mkdir(artifacts, { recursive: true });
  await page.screenshot({ path: new URL(`${name}.png`, artifacts).pathname, fullPage });
}

function lineOf(text: string, offset: number): number {
  return text.slice(0, offset).split("\n").length;
}

Deno.test({
  name: "page in Chromium: bad JSON stays in the page; optimize the 4-cavity demo; units; print",
  sanitizeOps: false,
  sanitizeResources: false,
  async fn() {
    const service = await startService();
    let browser: Browser | undefined;
    let userDir: string | undefined;
    try {
      ({ browser, dir: userDir } = await launchChromium());
      const page = await browser.newPage();
      await page.setViewport({ width: 1400, height: 1000 });
      const consoleErrors: string[] = [];
      page.on("pageerror", (e) => consoleErrors.push(String(e)));
      const apiRequests: string[] = [];
      page.on("request", (r) => {
        if (r.url().includes("/api/")) apiRequests.push(`${r.method()} ${r.url()}`);
      });
      await page.goto(`${service.base}/`, { waitUntil: "load" });
      await page.waitForSelector("body[data-ready='true']", { timeout: 30_000 });

      // --- choose the 4-cavity demo
      const demos = (await (await fetch(`${service.base}/api/demos`)).json()).demos as {
        id: string;
        cavities: number;
      }[];
      const four = demos.find((d) => d.cavities === 4);
      assert.ok(four, "the service lists a 4-cavity demo");
      const value = await page.$eval(
        "#source option[data-cavities='4']",
        (o) => (o as HTMLOptionElement).value,
      );
      await page.select("#source", value);
      await page.click("#open");
      const demo = await (await fetch(`${service.base}/api/demos/${four.id}`)).json();
      await page.waitForFunction(
        (name) =>
          (document.getElementById("scenario-text") as HTMLTextAreaElement).value
            .includes(name),
        {},
        demo.name,
      );
      await page.waitForSelector("#editor-state[data-kind='ok']", { timeout: 15_000 });
      await shot(page, "1-scenario");

      // --- bad JSON: the message sits at the field, and nothing is sent
      const good = await page.$eval("#scenario-text", (el) => (el as HTMLTextAreaElement).value);
      const cut = good.indexOf('"diameter_mm": 6,') + '"diameter_mm": 6'.length;
      const bad = good.slice(0, cut) + good.slice(cut + 1); // drop the comma
      const nextToken = cut + bad.slice(cut).search(/\S/);
      const expectedLine = lineOf(bad, nextToken);
      apiRequests.length = 0;
      await setEditor(page, bad);
      await page.waitForSelector(".editor-note", { timeout: 5_000 });
      const note = await page.$eval(".editor-note", (el) => ({
        line: Number((el as HTMLElement).dataset.line),
        text: el.textContent ?? "",
      }));
      assert.equal(note.line, expectedLine, "the note sits on the line of the error");
      assert.match(note.text, /Expected “,” or “}”/);
      const gutterMark = await page.$eval(".editor-gutter .bad", (el) => el.textContent);
      assert.equal(Number(gutterMark), expectedLine);
      await page.click("#save");
      await page.click("#tab-run");
      await page.click("#simulate");
      await page.click("#tab-run");
      await page.click("#optimize");
      await new Promise((r) => setTimeout(r, 800));
      assert.deepEqual(apiRequests, [], "bad JSON: nothing was sent to the service");
      assert.match(await page.$eval("#status", (el) => el.textContent ?? ""), /Nothing sent/);
      await shot(page, "2-bad-json");

      // --- a schema problem found by the service also points at its field
      const negative = good.replace('"thickness_mm": 1.1', '"thickness_mm": -1.1');
      await setEditor(page, negative);
      await page.waitForSelector(".editor-note[data-at='gates[1].thickness_mm']", {
        timeout: 10_000,
      });
      const fieldLine = await page.$eval(
        ".editor-note[data-at='gates[1].thickness_mm']",
        (el) => Number((el as HTMLElement).dataset.line),
      );
      assert.equal(fieldLine, lineOf(negative, negative.indexOf('"thickness_mm": -1.1')));

      // --- restore the demo and optimize it through the page
      await setEditor(page, good);
      await page.waitForSelector("#editor-state[data-kind='ok']", { timeout: 10_000 });

      // --- Check: the service's verdict; a request that fails is reported as a failure,
      // never as "problems in the scenario"
      const status = () => page.$eval("#status", (el) => el.textContent ?? "");
      await page.click("#check");
      await page.waitForFunction(
        () => document.querySelector("#status")?.textContent === "The scenario is valid.",
        { timeout: 10_000 },
      );
      await page.setRequestInterception(true);
      const failValidate = (r: HTTPRequest) =>
        r.url().includes("/api/validate") ? r.abort() : r.continue();
      page.on("request", failValidate);
      await page.click("#check");
      await page.waitForFunction(
        () => (document.querySelector("#status") as HTMLElement | null)?.dataset.kind === "error",
        { timeout: 10_000 },
      );
      assert.doesNotMatch(await status(), /has problems/);
      page.off("request", failValidate);
      await page.setRequestInterception(false);
      await page.click("#tab-run");
      await page.click("#optimize");
      await page.waitForFunction(
        () => {
          const job = document.getElementById("run-panel")?.dataset.job;
          return job === "done" || job === "failed" || job === "cancelled";
        },
        { timeout: 180_000, polling: 250 },
      );
      const jobStatus = await page.$eval("#run-panel", (el) => (el as HTMLElement).dataset.job);
      assert.equal(
        jobStatus,
        "done",
        `job ended ${jobStatus}; service log:\n${service.log.join("\n")}`,
      );
      const jobId = await page.$eval("#run-panel", (el) => (el as HTMLElement).dataset.jobId);
      assert.ok(jobId);
      await page.click("#tab-run");
      const progressShown = await page.$$eval("#progress-chart svg path[d^='M']", (x) => x.length);
      assert.ok(progressShown > 0, "live progress was shown");
      await shot(page, "3-run-progress");
      await page.click("#tab-results");
      await page.waitForSelector("#cavity-table");

      const job: Job = await (await fetch(`${service.base}/api/jobs/${jobId}`)).json();
      assert.equal(job.status, "done");
      assert.ok(job.result?.format === "evenfill.optimization/1", "an optimization's result");
      const result = job.result;

      // per-cavity numbers on the page equal the API's
      for (const which of ["before", "after"] as const) {
        for (const c of result[which].cavities) {
          for (
            const [field, digits] of [
              ["fill_time_s", 4],
              ["fill_percent_at_first_full", 4],
              ["mass_g", 4],
            ] as const
          ) {
            const selector =
              `#cavity-table td[data-cavity='${c.id}'][data-field='${field}'][data-which='${which}']`;
            const cell = await page.$eval(selector, (el) => ({
              raw: (el as HTMLElement).dataset.value,
              text: el.textContent ?? "",
            }));
            assert.equal(cell.raw, String(c[field]), `${which} ${c.id} ${field} raw`);
            assert.equal(
              cell.text,
              field === "mass_g"
                ? formatMass(c[field], METRIC_UNITS, digits)
                : formatNumber(c[field], digits),
              `${which} ${c.id} ${field} shown`,
            );
          }
          const shear = await page.$eval(
            `#cavity-table td[data-cavity='${c.id}'][data-field='gate_shear_rate_peak_1_s'][data-which='${which}']`,
            (el) => (el as HTMLElement).dataset.value,
          );
          assert.equal(shear, String(c.gate_shear_rate_peak_1_s));
        }
      }
      // the change list equals the API's, in order
      const rows = await page.$$eval(
        "#change-table tbody tr[data-element]",
        (trs) =>
          trs.map((tr) => {
            const t = tr as HTMLElement;
            const q = (f: string) => t.querySelector(`[data-field='${f}']`) as HTMLElement;
            return {
              step: Number(t.dataset.step),
              element: t.dataset.element,
              from_mm: Number(q("from").dataset.mm),
              to_mm: Number(q("to").dataset.mm),
              to_text: q("to").textContent,
              cutter: q("cutter").textContent,
              action: q("steel").dataset.action,
            };
          }),
      );
      assert.deepEqual(
        rows.map((r) => [r.step, r.element, r.from_mm, r.to_mm, r.cutter, r.action]),
        result.changes.map((c) => [c.step, c.element, c.from_mm, c.to_mm, c.cutter, c.action]),
      );
      // the imbalance after each step once (a new tool's: the design with every size cut, once)
      const imbalances = await page.$$eval(
        "#change-table tbody tr[data-element] [data-field='imbalance']",
        (tds) => tds.map((td) => Number((td as HTMLElement).dataset.value)),
      );
      const stepEnds = result.changes.filter((c, k, all) =>
        k === all.length - 1 || all[k + 1].step !== c.step
      );
      assert.deepEqual(
        imbalances,
        result.changes.every((c) => c.action === "cut_to")
          ? [result.changes[0].after_step.imbalance_percent]
          : stepEnds.map((c) => c.after_step.imbalance_percent),
      );
      assert.ok(rows.length > 0, "the demo's optimization proposes changes");
      const cautions = await page.$$eval("#results-body .cautions li", (li) => li.length);
      assert.equal(cautions, result.after.cautions.length, "every caution is shown");
      await shot(page, "4-results");

      // --- inch units
      await page.select("#unit-length", "in");
      const first = result.changes[0];
      const toText = await page.$eval(
        `#change-table tr[data-step='${first.step}'] [data-field='to']`,
        (el) => el.textContent ?? "",
      );
      assert.ok(
        toText.startsWith(`${(first.to_mm / 25.4).toFixed(4)} in`),
        `inch size shown, rounded once from mm: ${toText} (API ${first.to_mm} mm)`,
      );
      const label = await page.$eval(
        `#results-layout [data-id='${first.element}'] text.label`,
        (el) => el.textContent ?? "",
      );
      assert.ok(
        label.includes((first.from_mm / 25.4).toFixed(4)),
        `drawing label in inch: ${label}`,
      );
      await page.select("#unit-pressure", "psi");
      await shot(page, "5-results-inch-psi");

      // --- change sheet, printed
      await page.click("#tab-sheet");
      await page.waitForSelector("#sheet");
      await page.emulateMediaType("print");
      const printed = await page.evaluate(() => ({
        masthead: getComputedStyle(document.querySelector(".masthead")!).display,
        tabs: getComputedStyle(document.querySelector(".tabs")!).display,
        sheet: getComputedStyle(document.getElementById("sheet")!).display,
        rows: document.querySelectorAll("#sheet-changes tbody tr[data-element]").length,
        signoff: document.querySelectorAll(".signoff .sign").length,
      }));
      assert.equal(printed.masthead, "none");
      assert.equal(printed.tabs, "none");
      assert.notEqual(printed.sheet, "none");
      assert.equal(printed.rows, result.changes.length);
      assert.ok(printed.signoff >= 2);
      await shot(page, "6-change-sheet-print");
      await page.pdf({ path: new URL("change-sheet.pdf", artifacts).pathname, format: "A4" });
      await page.emulateMediaType("screen");

      // --- save, edit through the form (°F shown, °C stored), save a revision
      await page.select("#unit-temperature", "F");
      await page.click("#tab-scenario");
      await page.click("#save");
      await page.waitForFunction(
        () =>
          /saved scenario .+, revision 1/.test(
            document.getElementById("source-state")!.textContent ?? "",
          ),
        { timeout: 15_000 },
      );
      const meltShown = await page.$eval(
        "#form-meltTemperature",
        (el) => (el as HTMLInputElement).value,
      );
      assert.equal(Number(meltShown), demo.process.melt_temperature_C * 1.8 + 32);
      await page.$eval("#form-meltTemperature", (el) => {
        const input = el as HTMLInputElement;
        input.value = "500"; // °F = 260 °C
        input.dispatchEvent(new Event("change", { bubbles: true }));
      });
      await page.waitForFunction(
        () =>
          (document.getElementById("scenario-text") as HTMLTextAreaElement).value
            .includes('"melt_temperature_C": 260'),
        { timeout: 5_000 },
      );
      await page.click("#save");
      await page.waitForFunction(
        () => /revision 2/.test(document.getElementById("source-state")!.textContent ?? ""),
        { timeout: 15_000 },
      );
      const saved = (await (await fetch(`${service.base}/api/scenarios`)).json()).scenarios;
      assert.equal(saved.length, 1);
      const revisions = (await (await fetch(
        `${service.base}/api/scenarios/${saved[0].id}/revisions`,
      )).json()).revisions;
      assert.equal(revisions.length, 2);
      const stored = (await (await fetch(`${service.base}/api/scenarios/${saved[0].id}`)).json())
        .scenario;
      assert.equal(stored.process.melt_temperature_C, 260, "files and API stay metric");

      // --- start an optimization and cancel it
      await page.click("#tab-run");
      await page.click("#optimize");
      await page.waitForFunction(
        () => !(document.getElementById("cancel") as HTMLButtonElement).disabled,
        { timeout: 15_000 },
      );
      await page.click("#cancel");
      await page.waitForFunction(
        () => {
          const job = document.getElementById("run-panel")?.dataset.job;
          return job === "cancelled" || job === "done" || job === "failed";
        },
        { timeout: 60_000, polling: 250 },
      );
      assert.equal(
        await page.$eval("#run-panel", (el) => (el as HTMLElement).dataset.job),
        "cancelled",
      );

      // --- keyboard: the view tabs follow the arrow keys
      await page.focus("#tab-scenario");
      await page.keyboard.press("ArrowRight");
      assert.equal(
        await page.$eval("#tab-run", (el) => el.getAttribute("aria-selected")),
        "true",
      );
      assert.equal(await page.evaluate(() => document.activeElement?.id), "tab-run");
      await page.keyboard.press("ArrowLeft");

      // --- load a file, simulate it through the page, compare with the API
      const file = new URL("scenarios/two_gate_frame_and_knob.json", root).pathname;
      const input = await page.$("#file");
      await (input as unknown as { uploadFile(path: string): Promise<void> }).uploadFile(file);
      const fileScenario = JSON.parse(await Deno.readTextFile(file));
      await page.waitForFunction(
        (name) =>
          (document.getElementById("scenario-text") as HTMLTextAreaElement).value
            .includes(name),
        { timeout: 10_000 },
        fileScenario.name,
      );
      await page.click("#tab-run");
      await page.click("#simulate");
      await page.waitForSelector("#cavity-table td[data-which='result']", { timeout: 60_000 });
      const direct = await (await fetch(`${service.base}/api/simulate?history=1`, {
        method: "POST",
        headers: { "content-type": "application/json" },
        body: JSON.stringify(fileScenario),
      })).json();
      for (const c of direct.cavities) {
        const raw = await page.$eval(
          `#cavity-table td[data-cavity='${c.id}'][data-field='fill_time_s'][data-which='result']`,
          (el) => (el as HTMLElement).dataset.value,
        );
        assert.equal(raw, String(c.fill_time_s), `simulated ${c.id} fill time`);
      }
      await shot(page, "7-simulation-from-file");

      assert.deepEqual(consoleErrors, [], "no script errors on the page");
    } finally {
      await browser?.close().catch(() => {});
      if (userDir) await Deno.remove(userDir, { recursive: true }).catch(() => {});
      await stopService(service);
    }
  },
});
