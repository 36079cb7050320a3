// The workbench page: wires the editor, settings, views, results and keeping
// of work around the solver.
import { wasmBytes } from "./pkg/wasm_bytes.js";
import { startSolver, methods, version } from "./solver.js";
import { runJob } from "./jobs.js";
import { $, el, notify, download, timed } from "./dom.js";
import { solverSettings } from "./runinfo.js";
import { EXAMPLES, exampleById } from "./examples.js";
import { initEditor, setProblems, refreshEditor, readOnly } from "./editor.js";
import { initRunner, setModule, inWorker, hasWorker } from "./runner.js";
import { initExports } from "./plotkit.js";
import { initTimeView, showRun, drawTime } from "./timeview.js";
import { initFieldView, showFieldRun, drawField, setFieldAxes } from "./fieldview.js";
import { initCompareView, showComparison, clearComparison, setCompareQuantities } from "./compareview.js";
import { showSummary, showTable, downloadCsv } from "./results.js";
import { showParams } from "./params.js";
import { autosave, loadAutosave, keepPrevious, loadPrevious, watchOtherTabs, shareFragment, readFragment, fileText, readFileText, canAutosave, KeptModelError } from "./keep.js";
import { renderAccuracy, showAccuracyLine } from "./accuracy.js";
import { initGuide } from "./guide.js";

// The page exactly as it arrived, for the single-file download (captured
// before anything below changes the document).
const PRISTINE_PAGE = "<!doctype html>\n" + document.documentElement.outerHTML;
const SINGLE_FILE = ($("worker-src")?.textContent ?? "").trim().length > 0;

const EDIT_DELAY_MS = 300;
// A slider drag solves on the page's thread only for a model whose last
// solve came back from the worker within QUICK_MS, and then under a step
// cap of QUICK_STEPS times that solve's steps: a drag into a much harder
// region hits the cap within a few milliseconds and goes to the worker.
const QUICK_MS = 15;
const QUICK_STEPS = 3;

const solverModule = new WebAssembly.Module(await wasmBytes());
startSolver(solverModule);
setModule(solverModule);
// [id, label, "adaptive" | "fixed"], `auto` first, from the solver's registry.
const METHODS = methods().map((m) => [m.id, m.adaptive ? m.name : `${m.name}, fixed h`, m.adaptive ? "adaptive" : "fixed"]);
METHODS.sort((a, b) => (b[0] === "auto") - (a[0] === "auto"));

const app = {
  good: null,          // { sheet, settings, plotRun, tableRun, kept } of the last good solve
  seq: 0,              // solve requests issued
  shownSeq: 0,         // the request whose result is on screen
  quickSteps: 0,       // > 0: this model solves quickly; a drag may solve here under this step cap
  hadProblem: false,   // the sheet's problem list shows an error
  autosave: "on",      // "on", "off" (no storage here) or "failed" (the last write did not go through)
  otherTab: false,     // this copy of the page is open in another tab as well
  previous: null,      // the kept model "Back to the previous sheet" brings back
  exampleId: "",
  embed: false,
};

// ---- settings

const isFixed = (method) => METHODS.find((m) => m[0] === method)?.[2] === "fixed";

function readSettings() {
  const num = (id) => { const v = $(id).value.trim(); return v === "" ? undefined : Number(v); };
  const method = $("method").value;
  const s = { to: num("to"), method };
  if (isFixed(method)) s.step = num("step"); else s.tolerance = { relative: num("tol-relative"), absolute: num("tol-absolute") };
  const spacing = num("spacing");
  if (spacing !== undefined) s.spacing = spacing;
  return s;
}

/** The settings as kept (all fields, for autosave/links/files). */
function keptSettings() {
  const num = (id) => { const v = $(id).value.trim(); return v === "" ? undefined : Number(v); };
  const tolerance = { relative: num("tol-relative"), absolute: num("tol-absolute") };
  return { to: num("to"), method: $("method").value, tolerance, step: num("step"), spacing: num("spacing") };
}

/** Show settings `s`; returns the method id it asks for when this page has no such method (then `auto` is set). */
function writeSettings(s) {
  const text = (v) => (v !== 0 && Math.abs(v) < 1e-3 ? v.toExponential().replace("e+", "e") : String(v));
  const put = (id, v) => { if (typeof v === "number") $(id).value = text(v); };
  put("to", s.to);
  const known = !s.method || METHODS.some((m) => m[0] === s.method);
  $("method").value = known ? (s.method ?? METHODS[0][0]) : METHODS[0][0];
  put("tol-relative", s.tolerance?.relative);
  put("tol-absolute", s.tolerance?.absolute);
  put("step", s.step);
  $("spacing").value = typeof s.spacing === "number" ? text(s.spacing) : "";
  methodChanged();
  return known ? null : s.method;
}

function methodChanged() {
  const fixed = isFixed($("method").value);
  for (const n of document.querySelectorAll(".settings .fixed")) n.hidden = !fixed;
  for (const n of document.querySelectorAll(".settings .adaptive")) n.hidden = fixed;
}

function checkSettings(s) {
  if (!Number.isFinite(s.to)) return "Set the end of the run (a number).";
  if (isFixed(s.method) && !(s.step > 0)) return "Set the step h (a positive number) for a fixed-step method.";
  if (!isFixed(s.method) && (!(s.tolerance.relative > 0) || !(s.tolerance.absolute > 0))) return "Set the relative and absolute tolerances (positive numbers).";
  if (s.spacing !== undefined && !(s.spacing > 0)) return "The output spacing must be a positive number, or blank for every step.";
  return null;
}

// ---- solving

const hitStepCap = (run) => (run.diagnostics ?? []).some((d) => d.code === "max-steps");

/**
 * The `show` job (jobs.js) for `sheet` and settings `s`: its outline, the
 * plotted run and, unless `live`, the table's run. Solves from typing,
 * opening and settings run in the worker (a newer one supersedes it); a
 * slider drag of a quick model runs here, under a step cap, and goes to the
 * worker when it hits the cap.
 */
async function showJob(sheet, s, live) {
  const msg = { kind: "show", sheet, settings: s, table: !live };
  if (live && app.quickSteps > 0 && hasWorker()) {
    const shown = timed("solve", () => runJob({ ...msg, settings: { ...s, stepLimit: app.quickSteps } }));
    if (!hitStepCap(shown.plot)) return shown;
    app.quickSteps = 0;
  }
  const start = performance.now();
  const shown = await inWorker(msg, { supersede: true });
  const end = performance.now();
  performance.measure("rb:solve", { start, end });
  const steps = shown.plot.stats?.steps ?? 0;
  app.quickSteps = end - start < QUICK_MS && !hitStepCap(shown.plot) ? QUICK_STEPS * steps + 100 : 0;
  return shown;
}

/**
 * Solve the sheet and show it. `live`: a slider is moving, so only the plot
 * and summary are refreshed. Returns a promise that settles when shown.
 */
async function solveAndShow({ live = false, resetView = false } = {}) {
  const sheet = $("sheet").value;
  const s = readSettings();
  const seq = ++app.seq;
  document.body.dataset.settled = "0";
  const bad = checkSettings(s);
  if (bad) { showProblem({ message: bad }); settle(seq); return; }
  let shown;
  try {
    shown = await showJob(sheet, s, live);
    if (seq !== app.seq) return;
  } catch (e) {
    if (seq !== app.seq) return;
    if (e.cancelled) notify("Cancelled; the last result stays on screen.");
    else showProblem(e);
    settle(seq);
    return;
  }
  const { outline, plot: plotRun, table: tableRun } = shown;
  app.good = { sheet, settings: s, plotRun, tableRun: tableRun ?? app.good?.tableRun, kept: keptSettings() };
  app.shownSeq = seq;
  if (!live || app.hadProblem) setProblems([]);
  app.hadProblem = false;
  showSheetState();
  timed("time-view", () => showRun(plotRun, { resetView, live }));
  timed("summary", () => showSummary(plotRun, { method: s.method }));
  showAccuracyLine(sheet, s, plotRun, { live });
  $("summary").dataset.settings = JSON.stringify(s);
  document.body.dataset.shownExample = app.exampleId;
  if (tableRun) showTable(tableRun);
  const names = [...plotRun.states, ...plotRun.helpers];
  setCompareQuantities(names);
  showFieldRun(sheet, solverSettings(s), plotRun, { live });
  if (!live) {
    showParams(outline, paramMoved);
    clearComparison("The model or settings changed: run the comparison again.");
    if (!$("accuracy-view").hidden) showAccuracy();
  }
  settle(seq);
}

/** Test hook: `body[data-settled]` is "1" once the latest request's outcome is on screen. */
function settle(seq) {
  if (seq === app.seq) document.body.dataset.settled = "1";
}

function showProblem(e) {
  const p = { line: e.line, column: e.column, message: String(e.message ?? e) };
  app.hadProblem = true;
  setProblems([p]);
  showSheetState();
}

/** The line beside the sheet's title: a result kept from before, and whether the sheet is autosaved. */
function showSheetState() {
  const parts = [];
  if (app.hadProblem && app.good) parts.push("showing the last good result");
  if (app.autosave === "off") parts.push("autosave is off here (no storage in this frame)");
  if (app.autosave === "failed") parts.push("not autosaved: storage full");
  if (app.otherTab) parts.push("also open in another tab");
  $("sheet-state").textContent = parts.join(" · ");
  document.body.dataset.autosave = app.autosave;
}

let editTimer = 0;
function edited() {
  clearTimeout(editTimer);
  editTimer = setTimeout(() => { solveAndShow(); save(); }, EDIT_DELAY_MS);
}

// A slider drag: input events come faster than frames, so the sheet is
// rewritten at once but solved and drawn at most once per animation frame,
// and never while the previous live solve is still out (a slow model's
// solves go to the worker). Letting go solves and shows everything.
const live = { frame: 0, busy: false, again: false };

function paramMoved(sheet, isLive) {
  $("sheet").value = sheet;
  if (isLive) {
    if (!live.frame) live.frame = requestAnimationFrame(liveFrame);
    return;
  }
  cancelAnimationFrame(live.frame);
  live.frame = 0;
  live.again = false;
  refreshEditor();
  solveAndShow();
  save();
}

async function liveFrame() {
  live.frame = 0;
  if (live.busy) { live.again = true; return; }
  live.busy = true;
  const start = performance.now();
  try {
    timed("editor", () => refreshEditor({ sameLines: true }));
    await solveAndShow({ live: true });
  } finally {
    performance.measure("rb:live-frame", { start, end: performance.now() });
    live.busy = false;
    if (live.again) { live.again = false; live.frame = requestAnimationFrame(liveFrame); }
  }
}

// ---- keeping work

function kept() {
  return { sheet: $("sheet").value, settings: keptSettings() };
}

/**
 * Autosave the sheet and settings (never in embed mode, which only shows a
 * model). A write that fails says so beside the sheet, and once in a notice.
 */
function save() {
  if (app.embed || app.autosave === "off") return;
  const ok = autosave(kept());
  if (!ok && app.autosave !== "failed") {
    notify("Your latest edits could not be autosaved: this browser's storage for pages is full. Use Save to keep the sheet in a file.", { bad: true, sticky: true });
  }
  app.autosave = ok ? "on" : "failed";
  showSheetState();
}

/**
 * Show a kept model (a file, a link, an example, the autosave). The sheet
 * it replaces (`replacing`, the one shown by default) is kept one click
 * away ("Back to the previous sheet") and the notice says so; `opened`
 * names what was opened, for that notice. Opening never writes the
 * autosave, which keeps the user's sheet until the opened one is edited;
 * `save` is for bringing back one of the user's own.
 */
function applyKept(k, { keepOld = true, opened = "", announce = false, replacing = kept(), save: saveIt = false } = {}) {
  const current = replacing;
  const unknown = writeSettings(k.settings);
  if (unknown) {
    // Said first: a notice about the sheet replaced below takes its place.
    notify(`${opened ? `${opened[0].toUpperCase()}${opened.slice(1)}` : "The sheet"} asks for the method “${unknown}”, which this page does not have: it runs with “${METHODS[0][1]}” instead.`, { bad: true, sticky: true });
  }
  if (current && keepOld && current.sheet.trim() && current.sheet !== k.sheet) {
    keepPrevious(current);
    app.previous = current;
    $("restore-previous").hidden = false;
    // Nothing of the user's is at stake when an unedited example goes.
    const edited = !EXAMPLES.some((e) => e.sheet === current.sheet);
    const message = opened
      ? `${opened[0].toUpperCase()}${opened.slice(1)} replaced your sheet. The sheet you had is kept: “Back to the previous sheet” brings it back.`
      : "This is the previous sheet again. The one you just had is kept: “Back to the previous sheet” swaps them back.";
    const also = unknown ? ` It asks for the method “${unknown}”, which this page does not have: it runs with “${METHODS[0][1]}” instead.` : "";
    if (edited || announce) notify(message + also, { bad: !!unknown, action: { label: "Back to the previous sheet", run: restorePrevious } });
  } else if (announce && !unknown) {
    notify(`Opened ${opened}.`);
  }
  $("sheet").value = k.sheet;
  refreshEditor();
  const done = solveAndShow({ resetView: true });
  if (saveIt) save();
  return done;
}

function restorePrevious() {
  const prev = app.previous ?? loadPrevious();
  if (prev) { app.exampleId = ""; applyKept(prev, { save: true }); }
}

function loadExample(id, opts) {
  const ex = exampleById(id);
  if (!ex) return null;
  app.exampleId = id;
  document.body.dataset.shownExample = "";
  const caution = $("model-caution");
  caution.textContent = ex.caution ?? "";
  caution.hidden = !ex.caution;
  if (ex.field) setFieldAxes(ex.field);
  return applyKept({ sheet: ex.sheet, settings: ex.settings }, { opened: `the example “${ex.title}”`, ...opts });
}

function fileBase() {
  return app.exampleId || "ratebook-model";
}

/** Open the model in link fragment `hash` over `replacing` (by default the sheet shown). */
async function openLink(hash, replacing = kept()) {
  try {
    const k = await readFragment(hash);
    if (!k) return false;
    app.exampleId = "";
    await applyKept(k, { opened: "the link", announce: true, replacing });
    return true;
  } catch (e) {
    if (e instanceof KeptModelError) { notify(`This link cannot be opened: ${e.message}.`, { bad: true, sticky: true }); return false; }
    throw e;
  }
}

async function shareLink() {
  const frag = await shareFragment(kept());
  const base = location.href.split("#")[0];
  return { frag, url: `${base}#${frag}` };
}

function showDialog(title, text, value, { downloadable = false } = {}) {
  $("dialog-title").textContent = title;
  $("dialog-text").textContent = text;
  $("dialog-value").value = value;
  const a = $("dialog-download");
  a.hidden = !downloadable;
  const d = $("dialog");
  if (typeof d.showModal === "function") d.showModal(); else d.setAttribute("open", "");
  $("dialog-value").select();
}

// ---- tabs

const TABS = ["time", "field", "compare", "accuracy"];
function selectTab(name, focus = false) {
  for (const t of TABS) {
    const on = t === name;
    $(`tab-${t}`).setAttribute("aria-selected", String(on));
    $(`tab-${t}`).tabIndex = on ? 0 : -1;
    $(`${t}-view`).hidden = !on;
  }
  if (focus) $(`tab-${name}`).focus();
  if (name === "time") drawTime();
  if (name === "field") drawField();
  if (name === "accuracy") showAccuracy();
}

function showAccuracy() {
  if (!app.good) return;
  renderAccuracy($("accuracy-view"), app.good.sheet, app.good.settings, app.good.plotRun);
}

// ---- the comparison study (in the worker: it solves ten times)

async function runComparison() {
  if (!app.good) return;
  const { sheet, settings } = app.good;
  const h = Number($("compare-h").value);
  const request = { quantity: $("compare-state").value || undefined, step: h > 0 ? h : undefined };
  try {
    const rep = await inWorker({ kind: "compare", sheet, settings: solverSettings(settings), request }, { label: "Comparing methods…" });
    showComparison(rep);
  } catch (e) {
    if (!e.cancelled) clearComparison(`The comparison failed: ${e.message}`);
  }
}

// ---- wiring

function initPage() {
  document.title = "ratebook";
  $("version-line").textContent = `ratebook ${version()}`;
  $("method").replaceChildren(...METHODS.map(([id, name]) => el("option", { value: id }, name)));
  $("examples").append(...EXAMPLES.map((e) => el("option", { value: e.id }, e.title)));
  initEditor(edited);
  initGuide();
  initRunner();
  initTimeView();
  initFieldView();
  initCompareView(runComparison);
  initExports(fileBase);

  $("run").addEventListener("click", () => { solveAndShow(); save(); });
  for (const id of ["to", "tol-relative", "tol-absolute", "step", "spacing"]) $(id).addEventListener("change", () => { solveAndShow(); save(); });
  $("method").addEventListener("change", () => { methodChanged(); solveAndShow(); save(); });
  $("examples").addEventListener("change", () => { const id = $("examples").value; $("examples").value = ""; loadExample(id); });
  $("csv").addEventListener("click", () => { if (app.good?.tableRun) downloadCsv(app.good.tableRun, fileBase()); });

  $("save-file").addEventListener("click", () => {
    download(`${fileBase()}.json`, new Blob([fileText(kept(), version())], { type: "application/json" }));
  });
  $("open-file").addEventListener("click", () => $("open-input").click());
  $("open-input").addEventListener("change", async () => {
    const f = $("open-input").files?.[0];
    $("open-input").value = "";
    if (!f) return;
    if (f.size > 1 << 20) { notify("This file cannot be opened: it is over 1 MB.", { bad: true }); return; }
    try {
      app.exampleId = "";
      await applyKept(readFileText(await f.text()), { opened: `the file ${f.name}`, announce: true });
    } catch (e) {
      if (e instanceof KeptModelError) notify(`This file cannot be opened: ${e.message}.`, { bad: true, sticky: true });
      else throw e;
    }
  });
  $("restore-previous").addEventListener("click", restorePrevious);
  $("share").addEventListener("click", async () => {
    const { url } = await shareLink();
    showDialog("Share link", "This link holds the whole model and its settings; opening it restores them exactly. Nothing is uploaded anywhere.", url);
  });
  $("embed").addEventListener("click", async () => {
    const { frag } = await shareLink();
    const snippet = `<iframe src="ratebook.html#embed&${frag}" sandbox="allow-scripts" width="900" height="640" title="ratebook model"></iframe>`;
    if (SINGLE_FILE) {
      const a = $("dialog-download");
      a.href = URL.createObjectURL(new Blob([PRISTINE_PAGE], { type: "text/html" }));
      a.download = "ratebook.html";
    }
    showDialog("Embed in a wiki page", SINGLE_FILE
      ? "Attach the single file (ratebook.html) to the wiki page, then paste this snippet where the model should appear."
      : "Attach dist/ratebook.html (made by scripts/build) to the wiki page, then paste this snippet.", snippet, { downloadable: SINGLE_FILE });
  });
  $("dialog-close").addEventListener("click", () => $("dialog").close?.() ?? $("dialog").removeAttribute("open"));
  $("dialog-copy").addEventListener("click", async () => {
    $("dialog-value").select();
    try { await navigator.clipboard.writeText($("dialog-value").value); notify("Copied."); } catch {
      notify(document.execCommand?.("copy") ? "Copied." : "Select the text and copy it.");
    }
  });

  const tablist = document.querySelector(".tabs");
  tablist.addEventListener("click", (e) => { const t = e.target.closest("[role=tab]"); if (t) selectTab(t.id.slice(4)); });
  tablist.addEventListener("keydown", (e) => {
    const i = TABS.indexOf(document.activeElement?.id?.slice(4));
    if (i < 0) return;
    const next = { ArrowRight: i + 1, ArrowLeft: i - 1, Home: 0, End: TABS.length - 1 }[e.key];
    if (next === undefined) return;
    e.preventDefault();
    selectTab(TABS[(next + TABS.length) % TABS.length], true);
  });
  window.addEventListener("hashchange", () => { openLink(location.hash); });
  window.addEventListener("beforeprint", () => { $("sheet-readonly").textContent = $("sheet").value; });
  if (!canAutosave()) app.autosave = "off";
  showSheetState();
  // Two tabs on one copy share its autosave: say so beside the sheet, and in
  // a notice unless one with something else to say is showing.
  watchOtherTabs((what) => {
    const first = !app.otherTab;
    app.otherTab = true;
    showSheetState();
    if (!(first || what === "saved") || !$("notice").hidden) return;
    notify(what === "saved"
      ? "Another tab with this page has just autosaved its sheet over this one's. A reload brings back whichever tab was edited last: use Save to keep this sheet in a file."
      : "This page is open in another tab too. Both autosave to the same place, so a reload brings back the one edited last: work in one tab, or use Save to keep a sheet in a file.", { bad: true, sticky: true });
  });
}

async function startPage() {
  initPage();
  const hash = location.hash;
  app.embed = /(^#|&)embed(&|$)/.test(hash);
  document.body.classList.toggle("embed", app.embed);
  let loaded = false;
  // A link opened in a new tab replaces the autosaved sheet on screen only:
  // that one stays kept, one click away.
  const saved = app.embed ? null : loadAutosave();
  if (/(^#|&)m=/.test(hash)) loaded = await openLink(hash, saved);
  if (!loaded && saved) { await applyKept(saved, { keepOld: false }); loaded = true; }
  if (!loaded) await loadExample(EXAMPLES[0].id, { keepOld: false });
  if (app.embed) readOnly(true);
  document.body.dataset.readyAt = String(performance.now());
  document.body.dataset.ready = "1";
}

startPage();
