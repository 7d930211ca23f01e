/**
 * The page's entry point (bundled into `public/app.js` by `deno task page`):
 * wires the scenario editor, the run controls, the result views and the
 * change sheet to the service's API. Rendering lives in the pure modules
 * beside this file; this one only holds state and touches the DOM.
 *
 * @module
 */
import { api, ApiError, onServiceUnreachable, setAccessToken, watchJob } from "./api.ts";
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
  chartEnd,
  elementTableHtml,
  fillChartSvg,
  frontTableHtml,
  pathPressureSvg,
  pressChartsSvg,
  primary,
  type ScenarioForViews,
  seriesKeyHtml,
  shortShotTableHtml,
  type Shown,
  staleBannerHtml,
  statusVerdict,
  summaryHtml,
  verdictHtml,
  warningsHtml,
} from "./results_view.ts";
import {
  factorChoices,
  factorTableHtml,
  FIT_CAUTION,
  fitBarsKeyHtml,
  fitBarsSvg,
  fitSummaryText,
  massUnit,
  scenarioAfterChanges,
  type ShotRow,
  shotRowProblems,
  shotRowsFrom,
  type TrialScenario,
  windowViewHtml,
  withMeasurements,
} from "./calibration_view.ts";
import { applyFormField, type FormValues, readForm } from "./scenario_form.ts";
import { scenarioHash } from "./scenario_hash.ts";
import { HealthMonitor, type ServiceState } from "./service_health.ts";
import type {
  CalibrationResult,
  DemoEntry,
  Iteration,
  MaterialEntry,
  SavedEntry,
  StageProgress,
  WindowJobResult,
} from "./wire.ts";

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
  progress: [] as Iteration[],
  /** Imbalance target of the job being run, %. */
  runTarget: null as number | null,
  /** Where the shown result came from: the scenario's check code, source and name then. */
  ran: null as RunRecord | null,
  /** The result no longer matches the editor's scenario. */
  stale: false,
  /** The simulate request in flight (the Cancel button aborts it). */
  simulating: null as AbortController | null,
  /** The press's hold time for the gate-freeze check, s (page only; not in the scenario). */
  holdTime: loadHoldTime(),
  trial: {
    /** The mass table, and the cavity ids it was laid out for. */
    rows: [] as ShotRow[],
    rowsFor: "",
    /** Ticked factor keys (see factorChoices). */
    factors: new Set<string>(["viscosity"]),
    fit: null as { result: CalibrationResult; hash: string } | null,
    window: null as { result: WindowJobResult; hash: string } | null,
    jobId: null as string | null,
    /** Check code of the calibrated scenario put in the editor. */
    calibratedHash: null as string | null,
  },
};

/** What a result came from, fixed when it was run (not when it is shown). */
interface RunRecord {
  hash: string;
  sourceLabel: string;
  meltTemperature_C: number | null;
  switchoverPercent: number;
  /** The scenario's own hold time (`process.hold_time_s`), s, when it gives one. */
  holdTime_s: number | null;
}

function loadHoldTime(): number | null {
  const v = Number(localStorage.getItem("evenfill.holdTime") ?? "");
  return Number.isFinite(v) && v > 0 ? v : null;
}

/** Remember which scenario (text, source) a result shown from now on belongs to. */
function rememberRun(scenario: unknown, text: string) {
  const s = scenario as {
    process?: { melt_temperature_C?: number; switchover_percent?: number; hold_time_s?: number };
  };
  state.ranScenario = scenario as ScenarioForViews;
  state.ran = {
    hash: scenarioHash(text),
    sourceLabel: sourceLabel(),
    meltTemperature_C: s.process?.melt_temperature_C ?? null,
    switchoverPercent: s.process?.switchover_percent ?? 98,
    holdTime_s: s.process?.hold_time_s ?? null,
  };
  state.stale = false;
}

/** Compare the editor with the shown result's scenario; re-render when that changes. */
function checkStale() {
  const hash = scenarioHash(editor().value);
  const stale = state.ran !== null && hash !== state.ran.hash;
  document.body.dataset.stale = String(stale);
  renderTrialResults(hash);
  if (stale !== state.stale) {
    state.stale = stale;
    renderResults();
  }
}

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
const TABS = ["scenario", "run", "results", "sheet", "trials"] as const;
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
  if (tab === "trials") renderTrials();
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
      if (document.body.dataset.view === "trials") renderTrials();
    });
  }
}

// ---------- editor ----------
const editor = () => $<HTMLTextAreaElement>("scenario-text");

function setEditorText(text: string) {
  editor().value = text;
  renderGutter();
  checkStale();
  const value = checkEditor();
  if (value !== null) validateOnService(text, value);
}

let checkTimer: ReturnType<typeof setTimeout> | undefined;
let validated = { text: "", ok: false };
let validation = 0;

function onEditorChange() {
  renderGutter();
  checkStale();
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
  $("settings").addEventListener("submit", (e) => e.preventDefault());
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
  const calibrated = state.trial.calibratedHash !== null &&
    scenarioHash(editor().value) === state.trial.calibratedHash;
  $("source-state").innerHTML = `Editing: ${esc(sourceLabel())}${
    calibrated
      ? ` <span class="calibrated-mark" id="calibrated-mark">calibrated to weighed short shots</span>`
      : ""
  }`;
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
  say(
    `Something went wrong on the page: ${
      error instanceof Error ? error.message : String(error)
    }. Reload the page if it persists.`,
    "error",
  );
}

// ---------- run ----------
function setBusy(busy: boolean, cancellable = false) {
  $<HTMLButtonElement>("simulate").disabled = busy;
  $<HTMLButtonElement>("optimize").disabled = busy;
  $<HTMLButtonElement>("cancel").disabled = !(busy && cancellable);
  $<HTMLSelectElement>("run-slopes").disabled = busy;
}

async function simulate() {
  const scenario = editorScenarioOr("Nothing sent: the JSON is not valid (see the editor).");
  if (scenario === null) return;
  const text = editor().value;
  const abort = new AbortController();
  state.simulating = abort;
  setBusy(true, true);
  $("run-state").textContent = "Simulating…";
  try {
    const result = await api.simulate(scenario, abort.signal);
    state.shown = { kind: "simulation", result };
    rememberRun(scenario, text);
    checkStale();
    renderResults();
    $("run-state").textContent = "Simulation done.";
    say("Simulation done.", "ok");
    showTab("results");
  } catch (error) {
    const cancelled = error instanceof ApiError && error.code === "cancelled";
    $("run-state").textContent = cancelled ? "Simulation cancelled." : "Simulation failed.";
    if (cancelled) say("Simulation cancelled.");
    else report(error);
  } finally {
    state.simulating = null;
    setBusy(false);
  }
}

async function optimize() {
  const scenario = editorScenarioOr("Nothing sent: the JSON is not valid (see the editor).");
  if (scenario === null) return;
  const text = editor().value;
  setBusy(true);
  state.progress = [];
  const goals = (scenario as { goals?: { max_imbalance_percent?: number } }).goals;
  state.runTarget = goals?.max_imbalance_percent ?? null;
  renderProgress();
  $("run-state").textContent = "Optimization queued…";
  $("run-panel").dataset.job = "queued";
  // Set once the job's final state and result have been handled (data-job follows the stream).
  delete $("run-panel").dataset.settled;
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
        if ("stage" in p) return;
        const last = state.progress[state.progress.length - 1];
        if (!last || last.iteration !== p.iteration || last.simulations !== p.simulations) {
          state.progress.push(p);
        }
        renderProgress();
      },
      onStreamLost: () => health.suspect(),
    });
    $("run-panel").dataset.job = job.status;
    const result = job.result?.format === "evenfill.optimization/1" ? job.result : null;
    if (job.status === "done" && result) {
      state.shown = { kind: "optimization", result };
      rememberRun(scenario, text);
      checkStale();
      renderResults();
      const words = statusVerdict(result).words;
      $("run-state").textContent = `Optimization done: ${words}.`;
      say(`Optimization done: ${words}.`, "ok");
      showTab("results");
    } else if (job.status === "cancelled" && result) {
      // the job wrote the best design it had reached before it stopped
      state.shown = { kind: "optimization", result: { ...result, status: "cancelled" } };
      rememberRun(scenario, text);
      checkStale();
      renderResults();
      $("run-state").textContent = "Optimization cancelled — best design so far shown.";
      say("Optimization cancelled — the best design so far is on the Results tab.");
    } else if (job.status === "cancelled") {
      $("run-state").textContent = "Optimization cancelled before it reached a design.";
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
    $("run-panel").dataset.settled = $("run-panel").dataset.job ?? "unknown";
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
    if (state.simulating) {
      state.simulating.abort();
      return;
    }
    if (!state.jobId) return;
    try {
      await api.cancelJob(state.jobId);
      $("run-state").textContent = "Cancelling…";
    } catch (error) {
      report(error);
    }
  });
  $("print").addEventListener("click", () => {
    if (state.stale) {
      say("The sheet is out of date: it prints marked so. Run again for a current sheet.", "error");
    }
    globalThis.print();
  });
  $("results-body").addEventListener("change", (e) => {
    const input = e.target as HTMLInputElement;
    if (input.id !== "hold-time") return;
    const v = Number(input.value);
    state.holdTime = input.value.trim() !== "" && Number.isFinite(v) && v > 0 ? v : null;
    localStorage.setItem("evenfill.holdTime", state.holdTime === null ? "" : String(v));
    renderResults();
  });
}

// ---------- results ----------
function renderResults() {
  const shown = state.shown, scenario = state.ranScenario, ran = state.ran;
  const results = $("results-body");
  const sheet = $("sheet-body");
  if (!shown || !scenario || !ran) {
    results.innerHTML = `<p class="empty">No result yet: simulate or optimize on the Run tab.</p>`;
    sheet.innerHTML =
      `<p class="empty">The change sheet comes from an optimization: run one on the Run tab.</p>`;
    return;
  }
  const u = state.units;
  const ctx = { scenario, units: u };
  const r = primary(shown);
  const opt = shown.kind === "optimization" ? shown.result : null;
  const changes = opt?.changes ?? [];
  const layout = (id: string, print?: { maxWidthMm: number; maxHeightMm: number }) =>
    layoutSvg(scenario as unknown as Parameters<typeof layoutSvg>[0], {
      lengthUnit: u.length,
      changes,
      id,
      ...(print ? { print } : {}),
    });
  const xMax = chartEnd([opt?.before, r]);
  const ids = r.cavities.map((c) => `${c.id}${c.name ? ` ${c.name}` : ""}`);
  const sw = ran.switchoverPercent;
  const kindWords = opt
    ? opt.status === "cancelled" ? "optimization, cancelled — best design so far" : "optimization"
    : "simulation";
  results.dataset.stale = String(state.stale);
  results.innerHTML = (state.stale ? staleBannerHtml("result") : "") +
    `<h2 class="run-title">${esc(scenario.name)} <small>${esc(kindWords)}${
      r.material ? ` · ${esc(r.material.name)}` : ""
    } · ${esc(ran.sourceLabel)}</small></h2>` +
    (opt ? verdictHtml(opt) : "") +
    summaryHtml(shown, ctx) +
    `<section class="block"><h3>Layout${opt ? " after the changes" : ""}</h3>${
      layout("results-layout")
    }<p class="note">${esc(layoutKeyText(u.length))}</p></section>` +
    `<section class="block"><h3>Filling, up to switchover</h3>${
      seriesKeyHtml(ids)
    }<div class="charts">${
      opt
        ? fillChartSvg(opt.before, {
          title: "Before",
          id: "fill-before",
          xMax,
          switchoverPercent: sw,
        }) +
          fillChartSvg(opt.after, { title: "After", id: "fill-after", xMax, switchoverPercent: sw })
        : fillChartSvg(r, { title: "Cavity fill", id: "fill-result", xMax, switchoverPercent: sw })
    }</div><p class="note">The charts end at switchover (${sw} % of the shot volume), where the press changes from filling at the set rate to holding pressure. A cavity still filling then ends at its fill % at switchover; the hold phase fills the rest.</p></section>` +
    `<section class="block">${cavityTableHtml(shown, u)}</section>` +
    (opt
      ? `<section class="block"><h3>Change list</h3>${
        changeTableHtml(changes, u, {
          id: "change-table",
          start: opt.changes_start,
          omitted: opt.changes_omitted,
        })
      }${shortShotTableHtml(opt, u)}</section>` +
        (opt.front.length
          ? `<section class="block" id="front-panel"><h3>Fewest changes</h3>${
            frontTableHtml(opt, u)
          }</section>`
          : "")
      : "") +
    `<section class="block"><h3>Runners and gates</h3>${
      ran.holdTime_s !== null
        ? `<p class="hold">Hold time ${ran.holdTime_s} s (the scenario's <code>process.hold_time_s</code>): each gate is checked to seal within it.</p>`
        : `<p class="hold"><label for="hold-time">Hold time on the press, s</label> <input id="hold-time" type="number" min="0" step="any" inputmode="decimal" value="${
          state.holdTime ?? ""
        }"> <span class="muted small">not in the scenario (process.hold_time_s): enter it to check each gate seals within it</span></p>`
    }${
      elementTableHtml(r, u, ran.meltTemperature_C, {
        holdTime_s: ran.holdTime_s ?? state.holdTime,
      })
    }</section>` +
    `<section class="block"><h3>Pressure along each flow path</h3>${
      seriesKeyHtml(ids)
    }<div class="charts">${pathPressureSvg(shown, ctx)}</div></section>` +
    `<section class="block"><h3>Against the press</h3><div class="charts">${
      pressChartsSvg(shown, ctx)
    }</div><p class="muted">Filling only, to switchover: the peaks are the figures above. Estimates: the press maker's limits and local safety practice come first.</p></section>` +
    `<section class="block two"><div><h3>Warnings</h3>${
      warningsHtml(r)
    }</div><div><h3>Cautions</h3>${cautionsHtml(r)}</div></section>`;
  sheet.innerHTML = opt
    ? changeSheetHtml(opt, {
      toolName: scenario.name,
      date: new Date().toISOString().slice(0, 10),
      layout: layout("sheet-layout", { maxWidthMm: 112, maxHeightMm: 95 }),
      units: u,
      scenarioLabel: `${ran.sourceLabel}; mode ${scenario.goals?.mode ?? "new_tool"}; material ${
        opt.after.material?.name ?? ""
      }`,
      scenarioCode: ran.hash.slice(0, 8),
      stale: state.stale,
      switchoverPercent: sw,
    })
    : `<p class="empty">The change sheet comes from an optimization: run one on the Run tab.</p>`;
  $<HTMLButtonElement>("print").textContent = state.stale
    ? "Print (marked out of date)"
    : "Print the change sheet";
}

// ---------- trial shots ----------
function trialScenario(): TrialScenario | null {
  const value = currentObject() as TrialScenario | null;
  if (!value || !Array.isArray(value.cavities) || !Array.isArray(value.gates)) return null;
  return value;
}

/** Lay the mass table and the factor list out for the editor's scenario (kept while its cavities stay). */
function renderTrials() {
  $("fit-caution").textContent = FIT_CAUTION;
  const scenario = trialScenario();
  if (!scenario) {
    $("shot-table").innerHTML = `<p class="empty">Fix the scenario's JSON first.</p>`;
    return;
  }
  const key = JSON.stringify([scenario.cavities.map((c) => c.id), state.units.length]);
  if (state.trial.rowsFor !== key) {
    state.trial.rows = shotRowsFrom(scenario, state.units);
    state.trial.rowsFor = key;
  }
  const unit = massUnit(state.units);
  const rows = state.trial.rows;
  const head = rows.map((row, k) =>
    `<th scope="col"><label for="shot-${k}-size">shot ${
      k + 1
    } size, % of full shot</label><br><input id="shot-${k}-size" data-shot="${k}" data-field="size" type="number" min="0" max="100" step="any" inputmode="decimal" value="${
      esc(row.shotPercent)
    }"></th>`
  ).join("");
  const body = scenario.cavities.map((c) =>
    `<tr><th scope="row">${esc(c.id)}${
      c.name ? ` <span class="muted">${esc(c.name)}</span>` : ""
    }</th>${
      rows.map((row, k) =>
        `<td><input aria-label="${esc(c.id)} mass in shot ${
          k + 1
        }, ${unit}" data-shot="${k}" data-cavity="${
          esc(c.id)
        }" type="number" min="0" step="any" inputmode="decimal" value="${
          esc(row.masses[c.id] ?? "")
        }"></td>`
      ).join("")
    }</tr>`
  ).join("");
  $("shot-table").innerHTML =
    `<table class="data shot-table" id="mass-table"><caption>Weighed part mass, ${unit}</caption><thead><tr><th scope="col">cavity</th>${head}</tr></thead><tbody>${body}</tbody></table>`;
  const choices = factorChoices(scenario);
  $("factor-list").innerHTML = choices.map((f) =>
    `<label><input type="checkbox" name="fit-factor" value="${esc(f.key)}"${
      state.trial.factors.has(f.key) ? " checked" : ""
    }> ${esc(f.label)}</label>`
  ).join("");
  renderTrialResults();
}

function renderTrialResults(hash = scenarioHash(editor().value)) {
  const fit = state.trial.fit;
  const u = state.units;
  $("fit-result").innerHTML = fit
    ? (hash !== fit.hash ? staleBannerHtml("fit") : "") +
      `<p>${esc(fitSummaryText(fit.result))}</p>${fitBarsKeyHtml()}<div class="charts">${
        fitBarsSvg(fit.result)
      }</div>${
        factorTableHtml(fit.result, u)
      }<p class="caution">${FIT_CAUTION}</p><div class="toolbar"><button type="button" id="optimize-calibrated" class="primary">Optimize from the calibrated model</button><span class="muted">puts the calibrated scenario in the editor and starts the optimization</span></div>`
    : "";
  const win = state.trial.window;
  $("window-result").innerHTML = win
    ? (hash !== win.hash ? staleBannerHtml("sweep") : "") + windowViewHtml(win.result, u)
    : "";
}

function setTrialBusy(busy: boolean) {
  $<HTMLButtonElement>("run-fit").disabled = busy;
  $<HTMLButtonElement>("run-window").disabled = busy;
  $<HTMLButtonElement>("cancel-trial").disabled = !busy;
}

/** Write the mass table into the editor's scenario; the scenario, or null after saying why not. */
function writeShots(): Record<string, unknown> | null {
  const scenario = editorScenarioOr("Fix the scenario's JSON first (see the editor).") as
    | (TrialScenario & Record<string, unknown>)
    | null;
  if (scenario === null) return null;
  const problems = shotRowProblems(state.trial.rows, scenario);
  if (problems.length > 0) {
    say(problems.join(" "), "error");
    return null;
  }
  const next = withMeasurements(scenario, state.trial.rows, state.units);
  setEditorText(JSON.stringify(next, null, 2) + "\n");
  return next;
}

async function runTrialJob<T>(
  start: () => Promise<{ id: string }>,
  stateId: string,
  words: string,
  onDone: (result: T) => void,
) {
  setTrialBusy(true);
  $(stateId).textContent = `${words}: queued…`;
  try {
    const started = await start();
    state.trial.jobId = started.id;
    const job = await watchJob(started.id, {
      onState: (status) => ($(stateId).textContent = `${words}: ${status}…`),
      onProgress: (p) => {
        const q = p as unknown as StageProgress;
        $(stateId).textContent = q.stage === "window"
          ? `${words}: ${q.done ?? 0} of ${q.total ?? "?"} simulations…`
          : `${words}: round ${(q.iteration ?? 0) + 1}, ${q.simulations} simulations…`;
      },
      onStreamLost: () => health.suspect(),
    });
    if (job.status === "done" && job.result) {
      onDone(job.result as unknown as T);
      $(stateId).textContent = `${words}: done.`;
      say(`${words}: done.`, "ok");
    } else {
      const message = (job.error as { message?: string } | null)?.message ?? job.status;
      $(stateId).textContent = `${words} ${job.status}: ${message}`;
      say(`${words} ${job.status}: ${message}`, job.status === "cancelled" ? "info" : "error");
    }
  } catch (error) {
    $(stateId).textContent = `${words} could not run.`;
    report(error);
  } finally {
    state.trial.jobId = null;
    setTrialBusy(false);
  }
}

async function runFit() {
  const scenario = writeShots();
  if (scenario === null) return;
  const choices = factorChoices(scenario as unknown as TrialScenario);
  const factors = choices.filter((c) => state.trial.factors.has(c.key)).map((c) => c.factor);
  if (factors.length === 0) {
    say("Tick at least one thing that may differ from the model.", "error");
    return;
  }
  const hash = scenarioHash(editor().value);
  await runTrialJob<CalibrationResult>(
    () => api.startCalibration(scenario, factors),
    "fit-state",
    "Fit",
    (result) => {
      state.trial.fit = { result, hash };
      renderTrialResults();
    },
  );
}

async function runWindow() {
  const scenario = editorScenarioOr("Fix the scenario's JSON first (see the editor).");
  if (scenario === null) return;
  const hash = scenarioHash(editor().value);
  const opt = state.shown?.kind === "optimization" && !state.stale ? state.shown.result : null;
  const after = opt && opt.changes.length > 0 && state.ranScenario
    ? scenarioAfterChanges(state.ranScenario, opt.changes)
    : undefined;
  await runTrialJob<WindowJobResult>(
    () => api.startWindow(scenario, after),
    "window-state",
    "Process-window sweep",
    (result) => {
      state.trial.window = { result, hash };
      renderTrialResults();
    },
  );
}

function setupTrials() {
  const table = $("shot-table");
  table.addEventListener("input", (e) => {
    const input = e.target as HTMLInputElement;
    const k = Number(input.dataset.shot);
    const row = state.trial.rows[k];
    if (!row) return;
    if (input.dataset.field === "size") row.shotPercent = input.value;
    else if (input.dataset.cavity) row.masses[input.dataset.cavity] = input.value;
  });
  $("add-shot").addEventListener("click", () => {
    state.trial.rows.push({ shotPercent: "", masses: {} });
    renderTrials();
  });
  $("write-shots").addEventListener("click", () => {
    if (writeShots()) say("The masses are in the scenario's measurements block.", "ok");
  });
  $("factor-list").addEventListener("change", (e) => {
    const box = e.target as HTMLInputElement;
    if (box.checked) state.trial.factors.add(box.value);
    else state.trial.factors.delete(box.value);
  });
  $("run-fit").addEventListener("click", runFit);
  $("run-window").addEventListener("click", runWindow);
  $("cancel-trial").addEventListener("click", async () => {
    if (!state.trial.jobId) return;
    try {
      await api.cancelJob(state.trial.jobId);
    } catch (error) {
      report(error);
    }
  });
  $("fit-result").addEventListener("click", (e) => {
    if ((e.target as HTMLElement).id !== "optimize-calibrated" || !state.trial.fit) return;
    const text = JSON.stringify(state.trial.fit.result.calibrated, null, 2) + "\n";
    state.trial.calibratedHash = scenarioHash(text);
    setEditorText(text);
    renderSourceState();
    showTab("run");
    void optimize();
  });
}

// ---------- service health ----------
const health = new HealthMonitor({
  check: async () => {
    try {
      await api.health();
      return true;
    } catch {
      return false;
    }
  },
  onChange: showServiceState,
});

function showServiceState(now: ServiceState, before: ServiceState) {
  const el = $("service-state");
  document.body.dataset.service = now;
  if (now === "down") {
    el.hidden = false;
    el.dataset.kind = "error";
    el.textContent =
      "The service is not answering (stopped or restarting?). What is on the page stays; checking, saving and running wait until it is back. Checking every 2 s.";
    if (state.jobId) {
      $("run-state").textContent =
        "The service is not answering: the optimization's state is unknown until it is back.";
      $("run-panel").dataset.job = "unknown";
    }
  } else if (now === "up" && before === "down") {
    el.hidden = false;
    el.dataset.kind = "ok";
    el.textContent = "The service is back.";
    if (document.body.dataset.ready !== "true") void loadStart();
  }
}

// ---------- start ----------
async function loadStart() {
  try {
    const about = await api.health();
    $("version").textContent = about.version ? `service ${about.version}` : "";
    await refreshLists();
    if (state.source.kind === "none") {
      const first = state.demos[0];
      if (first) await openSource(`demo:${first.id}`);
      $<HTMLSelectElement>("source").value = first ? `demo:${first.id}` : "";
    }
    document.body.dataset.ready = "true";
  } catch (error) {
    report(error);
    document.body.dataset.ready = "error";
  }
}

async function start() {
  setupTabs();
  setupUnits();
  setupEditor();
  setupForm();
  setupSources();
  setupRun();
  setupTrials();
  setBusy(false);
  renderResults();
  renderProgress();
  onServiceUnreachable(() => health.suspect());
  await loadStart();
  void health.checkNow();
}

start();
