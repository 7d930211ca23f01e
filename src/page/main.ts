/**
 * The page's entry point (bundled into `public/app.js` by `deno task page`):
 * wires the scenario editor, the run controls, the result views and the
 * change sheet to the service's API. Rendering lives in the pure modules
 * beside this file; this one only holds state and touches the DOM.
 *
 * @module
 */
import { api, ApiError, setAccessToken, watchJob } from "./api.ts";
import { escapeXml as esc, lineChart } from "./chart.ts";
import {
  type DisplayUnits,
  formatNumber,
  formatPressure,
  parseDisplayUnits,
  unitSymbol,
} from "./display_units.ts";
import { checkJsonSyntax, type PlacedIssue, placeIssues } from "./editor_issues.ts";
import { layoutKeyText, layoutSvg } from "./layout_drawing.ts";
import {
  cautionsHtml,
  cavityTableHtml,
  changeSheetHtml,
  changeTableHtml,
  fillChartSvg,
  pathPressureSvg,
  pressChartsSvg,
  primary,
  type ScenarioForViews,
  seriesKeyHtml,
  type Shown,
  STATUS_WORDS,
  summaryHtml,
  verdictHtml,
  warningsHtml,
} from "./results_view.ts";
import { applyFormField, type FormValues, readForm } from "./scenario_form.ts";
import type { DemoEntry, JobProgress, MaterialEntry, SavedEntry } from "./wire.ts";

const $ = <T extends HTMLElement = HTMLElement>(id: string): T => {
  const el = document.getElementById(id);
  if (!el) throw new Error(`The page has no element #${id}`);
  return el as T;
};

type Source =
  | { kind: "demo"; id: string }
  | { kind: "saved"; id: string; revision: number }
  | { kind: "file"; name: string }
  | { kind: "none" };

const state = {
  units: loadUnits(),
  materials: [] as MaterialEntry[],
  demos: [] as DemoEntry[],
  saved: [] as SavedEntry[],
  source: { kind: "none" } as Source,
  issues: [] as PlacedIssue[],
  shown: null as Shown | null,
  ranScenario: null as ScenarioForViews | null,
  jobId: null as string | null,
  progress: [] as JobProgress[],
  /** Imbalance target of the job being run, %. */
  runTarget: null as number | null,
};

function loadUnits(): DisplayUnits {
  try {
    return parseDisplayUnits(JSON.parse(localStorage.getItem("evenfill.units") ?? "null"));
  } catch {
    return parseDisplayUnits(null);
  }
}

// ---------- status line ----------
function say(message: string, kind: "info" | "error" | "ok" = "info") {
  const el = $("status");
  el.textContent = message;
  el.dataset.kind = kind;
}

// ---------- tabs ----------
const TABS = ["scenario", "run", "results", "sheet"] as const;
type Tab = typeof TABS[number];

function showTab(tab: Tab, focus = false) {
  for (const t of TABS) {
    const button = $(`tab-${t}`);
    const panel = $(`panel-${t}`);
    const on = t === tab;
    button.setAttribute("aria-selected", String(on));
    button.tabIndex = on ? 0 : -1;
    panel.hidden = !on;
  }
  document.body.dataset.view = tab;
  if (focus) $(`tab-${tab}`).focus();
  if (location.hash !== `#${tab}`) history.replaceState(null, "", `#${tab}`);
}

function setupTabs() {
  for (const t of TABS) {
    const button = $(`tab-${t}`);
    button.addEventListener("click", () => showTab(t));
    button.addEventListener("keydown", (e) => {
      const k = TABS.indexOf(t);
      let next: number | null = null;
      if (e.key === "ArrowRight") next = (k + 1) % TABS.length;
      if (e.key === "ArrowLeft") next = (k - 1 + TABS.length) % TABS.length;
      if (e.key === "Home") next = 0;
      if (e.key === "End") next = TABS.length - 1;
      if (next !== null) {
        e.preventDefault();
        showTab(TABS[next], true);
      }
    });
  }
  const fromHash = location.hash.slice(1) as Tab;
  showTab(TABS.includes(fromHash) ? fromHash : "scenario");
}

// ---------- units ----------
function setupUnits() {
  for (const key of ["length", "pressure", "force", "temperature"] as const) {
    const select = $<HTMLSelectElement>(`unit-${key}`);
    select.value = state.units[key];
    select.addEventListener("change", () => {
      state.units = parseDisplayUnits({ ...state.units, [key]: select.value });
      localStorage.setItem("evenfill.units", JSON.stringify(state.units));
      refreshForm(true);
      renderPreview();
      renderProgress();
      renderResults();
    });
  }
}

// ---------- editor ----------
const editor = () => $<HTMLTextAreaElement>("scenario-text");

function setEditorText(text: string) {
  editor().value = text;
  renderGutter();
  const value = checkEditor();
  if (value !== null) validateOnService(text, value);
}

let checkTimer: ReturnType<typeof setTimeout> | undefined;
let validated = { text: "", ok: false };
let validation = 0;

function onEditorChange() {
  renderGutter();
  if (checkTimer !== undefined) clearTimeout(checkTimer);
  checkTimer = setTimeout(() => {
    const value = checkEditor();
    if (value !== null) validateOnService(editor().value, value);
  }, 300);
}

/** Ask the service to check the scenario (schema and cross-references); show its issues. */
/**
 * Ask the service whether `text` (parsed: `value`) is a valid scenario and mark the editor.
 * Returns its verdict, or undefined when there is none for this text: the request failed
 * (reported) or the text changed meanwhile.
 */
async function validateOnService(text: string, value: unknown): Promise<boolean | undefined> {
  if (validated.text === text) return validated.ok;
  const ticket = ++validation;
  try {
    const answer = await api.validate(value);
    if (ticket !== validation || editor().value !== text) return undefined;
    validated = { text, ok: answer.ok };
    state.issues = answer.ok ? [] : placeIssues(text, answer.issues ?? []);
    renderIssues();
    showEditorState(
      answer.ok ? "ok" : "error",
      answer.ok
        ? "Scenario is valid."
        : `${state.issues.length} problem${
          state.issues.length === 1 ? "" : "s"
        } (checked by the service).`,
    );
    return answer.ok;
  } catch (error) {
    if (ticket === validation) report(error);
    return undefined;
  }
}

function showEditorState(kind: "ok" | "error" | "info", text: string) {
  $("editor-state").textContent = text;
  $("editor-state").dataset.kind = kind;
}

/**
 * The editor's scenario for an action, or null after saying `message` and pointing at the
 * first syntax problem (the Scenario tab shown).
 */
function editorScenarioOr(message: string): unknown | null {
  const value = checkEditor();
  if (value === null) {
    say(message, "error");
    showTab("scenario");
    goToIssue(0);
  }
  return value;
}

/**
 * Check the editor's JSON syntax now. Returns the scenario object when the
 * text is JSON (the service checks the rest), else null: nothing is sent.
 */
function checkEditor(): unknown | null {
  if (checkTimer !== undefined) clearTimeout(checkTimer);
  const text = editor().value;
  const check = checkJsonSyntax(text);
  if (!check.ok) {
    state.issues = check.issues;
    validated = { text: "", ok: false };
    renderIssues();
    showEditorState("error", "Not valid JSON: nothing will be sent until it is fixed.");
    return null;
  }
  if (validated.text !== text) {
    state.issues = state.issues.filter((i) => i.code !== "invalid_json");
    renderIssues();
    showEditorState("info", "JSON is well formed; checking the scenario…");
  }
  refreshForm(false, check.value);
  renderPreview(check.value);
  return check.value;
}

const LINE_HEIGHT = 20;

function renderGutter() {
  const lines = editor().value.split("\n").length;
  const byLine = new Set(state.issues.map((i) => i.span.line));
  const out: string[] = [];
  for (let k = 1; k <= lines; k++) {
    out.push(byLine.has(k) ? `<span class="bad">${k}</span>` : String(k));
  }
  $("editor-gutter").innerHTML = out.join("\n");
  syncScroll();
}

function renderIssues() {
  renderGutter();
  const marks = $("editor-marks");
  const seen = new Map<number, number>();
  marks.innerHTML = state.issues.map((i, k) => {
    const n = seen.get(i.span.line) ?? 0;
    seen.set(i.span.line, n + 1);
    const top = (i.span.line - 1) * LINE_HEIGHT;
    return `<div class="mark-band" style="top:${top}px"></div>` +
      `<div class="editor-note" role="note" data-line="${i.span.line}" data-at="${
        esc(i.at)
      }" data-index="${k}" style="top:${top + n * LINE_HEIGHT}px">${esc(i.at)}: ${
        esc(i.message)
      }</div>`;
  }).join("");
  const list = $("issue-list");
  list.innerHTML = state.issues.map((i, k) =>
    `<li><button type="button" class="link" data-index="${k}" data-at="${esc(i.at)}">${
      i.code === "invalid_json" ? esc(i.at) : `line ${i.span.line}, <code>${esc(i.at)}</code>`
    }</button> ${esc(i.message)}</li>`
  ).join("");
  list.hidden = state.issues.length === 0;
  syncScroll();
}

function syncScroll() {
  const top = editor().scrollTop;
  $("editor-gutter").scrollTop = top;
  $("editor-marks").style.transform = `translateY(${-top}px)`;
}

function goToIssue(index: number) {
  const issue = state.issues[index];
  if (!issue) return;
  const ta = editor();
  ta.focus();
  ta.setSelectionRange(issue.span.start, Math.max(issue.span.end, issue.span.start + 1));
  ta.scrollTop = Math.max(0, (issue.span.line - 4) * LINE_HEIGHT);
  syncScroll();
}

function setupEditor() {
  const ta = editor();
  ta.addEventListener("input", onEditorChange);
  ta.addEventListener("scroll", syncScroll);
  ta.addEventListener("keydown", (e) => {
    if (
      e.key === "Tab" && !e.shiftKey && !e.ctrlKey && !e.altKey && ta.dataset.tabIndent === "on"
    ) {
      e.preventDefault();
      ta.setRangeText("  ", ta.selectionStart, ta.selectionEnd, "end");
      onEditorChange();
    }
  });
  $("issue-list").addEventListener("click", (e) => {
    const b = (e.target as HTMLElement).closest("button[data-index]") as HTMLElement | null;
    if (b) goToIssue(Number(b.dataset.index));
  });
  $("check").addEventListener("click", async () => {
    const value = editorScenarioOr("Not valid JSON; see the editor.");
    if (value === null) return;
    validated = { text: "", ok: false };
    const ok = await validateOnService(editor().value, value);
    // No verdict: the failure is already reported, or the text has changed since.
    if (ok === undefined) return;
    say(
      ok ? "The scenario is valid." : "The scenario has problems; see the editor.",
      ok ? "ok" : "error",
    );
    if (!ok) goToIssue(0);
  });
  $("format").addEventListener("click", () => {
    const value = checkEditor();
    if (value === null) say("Fix the JSON syntax first.", "error");
    else setEditorText(JSON.stringify(value, null, 2) + "\n");
  });
}

// ---------- form ----------
const FORM_FIELDS: (keyof FormValues)[] = [
  "material",
  "meltTemperature",
  "moldTemperature",
  "injectionKind",
  "injectionValue",
  "mode",
  "maxImbalancePercent",
  "cutters",
];

function currentObject(): unknown | null {
  try {
    return JSON.parse(editor().value);
  } catch {
    return null;
  }
}

function refreshForm(force: boolean, value: unknown = currentObject()) {
  if (value === null || value === undefined) return;
  const f = readForm(value, state.units);
  for (const field of FORM_FIELDS) {
    const el = $<HTMLInputElement | HTMLSelectElement>(`form-${field}`);
    if (!force && document.activeElement === el) continue;
    const v = f[field];
    el.value = v === null ? "" : String(v);
  }
  $("form-inline-material").textContent = f.inlineMaterialName
    ? `This scenario carries its own material: ${f.inlineMaterialName} (edit it in the JSON).`
    : "";
  $<HTMLSelectElement>("form-material").disabled = f.inlineMaterialName !== null;
  $("form-injection-unit").textContent = f.injectionKind === "fill_time_s" ? "s" : "cm³/s";
  for (const id of ["unit-melt", "unit-mold"]) {
    $(id).textContent = unitSymbol(state.units, "temperature");
  }
}

function setupForm() {
  for (const field of FORM_FIELDS) {
    const el = $<HTMLInputElement | HTMLSelectElement>(`form-${field}`);
    el.addEventListener("change", () => {
      const value = currentObject();
      if (value === null) {
        say("Fix the JSON syntax before using the form.", "error");
        return;
      }
      const next = applyFormField(value, field, el.value, state.units);
      setEditorText(JSON.stringify(next, null, 2) + "\n");
    });
  }
}

function renderMaterials() {
  $("form-material").innerHTML = state.materials.map((m) =>
    `<option value="${esc(m.id)}">${esc(m.name)}${
      m.generic && !/generic/i.test(m.name) ? " (generic)" : ""
    }</option>`
  ).join("");
}

// ---------- preview ----------
function renderPreview(value: unknown = currentObject()) {
  const holder = $("preview");
  try {
    const s = value as Parameters<typeof layoutSvg>[0];
    if (!s || !Array.isArray(s.nodes) || !Array.isArray(s.gates) || !Array.isArray(s.cavities)) {
      return;
    }
    holder.innerHTML = layoutSvg(s, { lengthUnit: state.units.length, id: "preview-layout" }) +
      `<p class="note">${esc(layoutKeyText(state.units.length))}</p>`;
  } catch {
    // a half-typed scenario may not draw; the previous drawing stays
  }
}

// ---------- sources ----------
function renderSources() {
  const select = $<HTMLSelectElement>("source");
  const keep = select.value;
  select.innerHTML =
    `<optgroup label="Demo tools">${
      state.demos.map((d) =>
        `<option value="demo:${esc(d.id)}" data-cavities="${d.cavities}">${
          esc(d.name)
        } (${d.cavities} cavities)</option>`
      ).join("")
    }</optgroup>` +
    (state.saved.length
      ? `<optgroup label="Saved scenarios">${
        state.saved.map((s) =>
          `<option value="saved:${esc(s.id)}">${esc(s.name)} (rev ${s.revision}, ${
            esc(s.updated_at.slice(0, 16).replace("T", " "))
          })</option>`
        ).join("")
      }</optgroup>`
      : "");
  if (keep && [...select.options].some((o) => o.value === keep)) select.value = keep;
}

function sourceLabel(): string {
  const s = state.source;
  if (s.kind === "demo") return `demo ${s.id}`;
  if (s.kind === "saved") return `saved scenario ${s.id}, revision ${s.revision}`;
  if (s.kind === "file") return `file ${s.name}`;
  return "new";
}

function renderSourceState() {
  $("source-state").textContent = `Editing: ${sourceLabel()}`;
  const saved = state.source.kind === "saved";
  $("save").textContent = saved ? "Save revision" : "Save";
  $("revisions-box").hidden = !saved;
}

async function openSource(value: string) {
  const [kind, ...rest] = value.split(":");
  const id = rest.join(":");
  try {
    if (kind === "demo") {
      const scenario = await api.demo(id);
      state.source = { kind: "demo", id };
      setEditorText(JSON.stringify(scenario, null, 2) + "\n");
    } else if (kind === "saved") {
      const saved = await api.scenario(id);
      state.source = { kind: "saved", id, revision: saved.revision };
      setEditorText(JSON.stringify(saved.scenario, null, 2) + "\n");
      await loadRevisions();
    }
    renderSourceState();
    say(`Opened ${sourceLabel()}.`);
  } catch (error) {
    report(error);
  }
}

async function loadRevisions() {
  if (state.source.kind !== "saved") return;
  const { revisions } = await api.revisions(state.source.id);
  $("revisions").innerHTML = revisions
    .slice()
    .sort((a, b) => b.revision - a.revision)
    .map((r) =>
      `<option value="${r.revision}">rev ${r.revision} · ${
        esc(r.created_at.slice(0, 19).replace("T", " "))
      }</option>`
    ).join("");
}

async function refreshLists() {
  const [materials, demos, saved] = await Promise.all([
    api.materials(),
    api.demos(),
    api.scenarios(),
  ]);
  state.materials = materials.materials;
  state.demos = demos.demos;
  state.saved = saved.scenarios;
  renderMaterials();
  renderSources();
}

function setupSources() {
  $("open").addEventListener("click", () => openSource($<HTMLSelectElement>("source").value));
  $("file").addEventListener("change", async () => {
    const input = $<HTMLInputElement>("file");
    const file = input.files?.[0];
    if (!file) return;
    state.source = { kind: "file", name: file.name };
    setEditorText(await file.text());
    renderSourceState();
    say(`Loaded ${file.name}.`);
    input.value = "";
  });
  $("download").addEventListener("click", () => {
    const blob = new Blob([editor().value], { type: "application/json" });
    const a = document.createElement("a");
    a.href = URL.createObjectURL(blob);
    const name = (currentObject() as { name?: string } | null)?.name ?? "scenario";
    a.download = `${name.replace(/[^A-Za-z0-9_.-]+/g, "_").slice(0, 60)}.json`;
    a.click();
    setTimeout(() => URL.revokeObjectURL(a.href), 1000);
  });
  $("save").addEventListener("click", () => save(false));
  $("save-new").addEventListener("click", () => save(true));
  $("open-revision").addEventListener("click", async () => {
    if (state.source.kind !== "saved") return;
    const rev = Number($<HTMLSelectElement>("revisions").value);
    try {
      const r = await api.revision(state.source.id, rev);
      setEditorText(JSON.stringify(r.scenario, null, 2) + "\n");
      say(`Opened revision ${rev} (saving makes it the newest revision).`);
    } catch (error) {
      report(error);
    }
  });
}

async function save(asNew: boolean) {
  const scenario = editorScenarioOr("Not saved: the JSON is not valid (see the editor).");
  if (scenario === null) return;
  try {
    if (state.source.kind === "saved" && !asNew) {
      const r = await api.updateScenario(state.source.id, scenario);
      state.source = { kind: "saved", id: state.source.id, revision: r.revision };
    } else {
      const r = await api.createScenario(scenario);
      state.source = { kind: "saved", id: r.id, revision: r.revision };
    }
    state.saved = (await api.scenarios()).scenarios;
    renderSources();
    $<HTMLSelectElement>("source").value = `saved:${state.source.id}`;
    await loadRevisions();
    renderSourceState();
    say(`Saved: ${sourceLabel()}.`, "ok");
  } catch (error) {
    report(error);
  }
}

function report(error: unknown) {
  if (error instanceof ApiError && error.status === 401) {
    const token = globalThis.prompt(
      "This service asks for its access token (EVENFILL_TOKEN) before changes. Token:",
    );
    setAccessToken(token);
    say(token ? "Token set for this tab: try again." : `${error.message} (${error.code})`, "error");
    return;
  }
  if (error instanceof ApiError) {
    if (error.issues.length > 0) {
      state.issues = placeIssues(editor().value, error.issues);
      renderIssues();
      showTab("scenario");
      say(`The service found problems in the scenario: ${error.message}`, "error");
      return;
    }
    say(`${error.message} (${error.code})`, "error");
    return;
  }
  say(String(error), "error");
}

// ---------- run ----------
function setBusy(busy: boolean, job = false) {
  $<HTMLButtonElement>("simulate").disabled = busy;
  $<HTMLButtonElement>("optimize").disabled = busy;
  $<HTMLButtonElement>("cancel").disabled = !(busy && job);
  $<HTMLSelectElement>("run-slopes").disabled = busy;
}

async function simulate() {
  const scenario = editorScenarioOr("Nothing sent: the JSON is not valid (see the editor).");
  if (scenario === null) return;
  setBusy(true);
  $("run-state").textContent = "Simulating…";
  try {
    const result = await api.simulate(scenario);
    state.shown = { kind: "simulation", result };
    state.ranScenario = scenario as ScenarioForViews;
    renderResults();
    $("run-state").textContent = "Simulation done.";
    say("Simulation done.", "ok");
    showTab("results");
  } catch (error) {
    $("run-state").textContent = "Simulation failed.";
    report(error);
  } finally {
    setBusy(false);
  }
}

async function optimize() {
  const scenario = editorScenarioOr("Nothing sent: the JSON is not valid (see the editor).");
  if (scenario === null) return;
  setBusy(true);
  state.progress = [];
  const goals = (scenario as { goals?: { max_imbalance_percent?: number } }).goals;
  state.runTarget = goals?.max_imbalance_percent ?? null;
  renderProgress();
  $("run-state").textContent = "Optimization queued…";
  $("run-panel").dataset.job = "queued";
  try {
    const slopes = $<HTMLSelectElement>("run-slopes").value;
    const started = await api.startJob(scenario, { slopes });
    state.jobId = started.id;
    $("run-panel").dataset.jobId = started.id;
    setBusy(true, true);
    const job = await watchJob(started.id, {
      onState: (status) => {
        $("run-state").textContent = `Optimization ${status}…`;
        $("run-panel").dataset.job = status;
      },
      onProgress: (p) => {
        const last = state.progress[state.progress.length - 1];
        if (!last || last.iteration !== p.iteration || last.simulations !== p.simulations) {
          state.progress.push(p);
        }
        renderProgress();
      },
    });
    $("run-panel").dataset.job = job.status;
    if (job.status === "done" && job.result) {
      state.shown = { kind: "optimization", result: job.result };
      state.ranScenario = scenario as ScenarioForViews;
      renderResults();
      const words = STATUS_WORDS[job.result.status] ?? job.result.status;
      $("run-state").textContent = `Optimization done: ${words}.`;
      say(`Optimization done: ${words}.`, "ok");
      showTab("results");
    } else if (job.status === "cancelled") {
      $("run-state").textContent = "Optimization cancelled.";
      say("Optimization cancelled.");
    } else {
      const message = typeof job.error === "string"
        ? job.error
        : (job.error as { message?: string } | null)?.message ?? "unknown error";
      $("run-state").textContent = `Optimization ${job.status}: ${message}`;
      say(`Optimization ${job.status}: ${message}`, "error");
    }
  } catch (error) {
    $("run-state").textContent = "Optimization could not run.";
    $("run-panel").dataset.job = "failed";
    report(error);
  } finally {
    state.jobId = null;
    setBusy(false);
  }
}

function renderProgress() {
  const p = state.progress[state.progress.length - 1];
  const u = state.units;
  $("progress-figures").innerHTML = p
    ? `<div><dt>iteration</dt><dd data-field="iteration">${p.iteration}</dd></div>` +
      `<div><dt>imbalance</dt><dd>${formatNumber(p.imbalance_percent, 3)} %</dd></div>` +
      `<div><dt>peak pressure</dt><dd>${
        esc(formatPressure(p.feed_pressure_peak_MPa, u))
      }</dd></div>` +
      `<div><dt>runner</dt><dd>${formatNumber(p.runner_volume_cm3, 3)} cm³</dd></div>` +
      `<div><dt>simulations</dt><dd>${p.simulations ?? "–"}</dd></div>`
    : `<div><dt>iteration</dt><dd>–</dd></div>`;
  $("progress-chart").innerHTML = state.progress.length > 0
    ? lineChart([
      {
        label: "imbalance",
        style: 0,
        points: state.progress.map((q) => [q.iteration, q.imbalance_percent]),
      },
    ], {
      title: "Imbalance per iteration",
      xLabel: "iteration",
      yLabel: "imbalance, %",
      markEveryPoint: true,
      integerX: true,
      rules: state.runTarget === null ? [] : [{ y: state.runTarget, label: "target" }],
      width: 420,
      height: 220,
    })
    : "";
}

function setupRun() {
  $("simulate").addEventListener("click", simulate);
  $("optimize").addEventListener("click", optimize);
  $("cancel").addEventListener("click", async () => {
    if (!state.jobId) return;
    try {
      await api.cancelJob(state.jobId);
      $("run-state").textContent = "Cancelling…";
    } catch (error) {
      report(error);
    }
  });
  $("print").addEventListener("click", () => globalThis.print());
}

// ---------- results ----------
function renderResults() {
  const shown = state.shown, scenario = state.ranScenario;
  const results = $("results-body");
  const sheet = $("sheet-body");
  if (!shown || !scenario) {
    results.innerHTML = `<p class="empty">No result yet: simulate or optimize on the Run tab.</p>`;
    sheet.innerHTML =
      `<p class="empty">The change sheet comes from an optimization: run one on the Run tab.</p>`;
    return;
  }
  const ctx = { scenario, units: state.units };
  const r = primary(shown);
  const opt = shown.kind === "optimization" ? shown.result : null;
  const changes = opt?.changes ?? [];
  const layout = (id: string) =>
    layoutSvg(scenario as unknown as Parameters<typeof layoutSvg>[0], {
      lengthUnit: state.units.length,
      changes,
      id,
    });
  const xMax = Math.max(
    ...[opt?.before, r].flatMap((x) => (x?.history ?? []).map((h) => h.time_s ?? 0)),
    0.001,
  );
  const ids = r.cavities.map((c) => `${c.id}${c.name ? ` ${c.name}` : ""}`);
  results.innerHTML =
    `<h2 class="run-title">${esc(scenario.name)} <small>${opt ? "optimization" : "simulation"}${
      r.material ? ` · ${esc(r.material.name)}` : ""
    }</small></h2>` +
    (opt ? verdictHtml(opt) : "") +
    summaryHtml(shown, ctx) +
    `<section class="block"><h3>Layout${opt ? " after the changes" : ""}</h3>${
      layout("results-layout")
    }<p class="note">${esc(layoutKeyText(state.units.length))}</p></section>` +
    `<section class="block"><h3>Fill history</h3>${seriesKeyHtml(ids)}<div class="charts">${
      opt
        ? fillChartSvg(opt.before, { title: "Before", id: "fill-before", xMax }) +
          fillChartSvg(opt.after, { title: "After", id: "fill-after", xMax })
        : fillChartSvg(r, { title: "Cavity fill", id: "fill-result", xMax })
    }</div></section>` +
    `<section class="block">${cavityTableHtml(shown)}</section>` +
    (opt
      ? `<section class="block"><h3>Change list</h3>${
        changeTableHtml(changes, state.units, { id: "change-table" })
      }</section>`
      : "") +
    `<section class="block"><h3>Pressure along each flow path</h3>${
      seriesKeyHtml(ids)
    }<div class="charts">${pathPressureSvg(shown, ctx)}</div></section>` +
    `<section class="block"><h3>Against the press</h3><div class="charts">${
      pressChartsSvg(shown, ctx)
    }</div><p class="muted">Estimates: the press maker's limits and local safety practice come first.</p></section>` +
    `<section class="block two"><div><h3>Warnings</h3>${
      warningsHtml(r)
    }</div><div><h3>Cautions</h3>${cautionsHtml(r)}</div></section>`;
  sheet.innerHTML = opt
    ? changeSheetHtml(opt, {
      toolName: scenario.name,
      date: new Date().toISOString().slice(0, 10),
      layout: layout("sheet-layout") +
        `<p class="note">${esc(layoutKeyText(state.units.length))}</p>`,
      units: state.units,
      scenarioLabel: `${sourceLabel()}; mode ${scenario.goals?.mode ?? "new_tool"}; material ${
        opt.after.material?.name ?? ""
      }`,
    })
    : `<p class="empty">The change sheet comes from an optimization: run one on the Run tab.</p>`;
}

// ---------- start ----------
async function start() {
  setupTabs();
  setupUnits();
  setupEditor();
  setupForm();
  setupSources();
  setupRun();
  setBusy(false);
  renderResults();
  renderProgress();
  try {
    const health = await api.health();
    $("version").textContent = health.version ? `service ${health.version}` : "";
    await refreshLists();
    const first = state.demos[0];
    if (first) await openSource(`demo:${first.id}`);
    $<HTMLSelectElement>("source").value = first ? `demo:${first.id}` : "";
    document.body.dataset.ready = "true";
  } catch (error) {
    report(error);
    document.body.dataset.ready = "error";
  }
}

start();
