// The accuracy view: how far to trust the answer. The page calls
// renderAccuracy(container, sheet, settings, run) whenever the view is shown or
// the run changes while it is shown. The view asks the solver for an accuracy
// check (checkAccuracy: a more accurate re-solve, an explicit-versus-implicit
// cross check and the pitfall probes), shows the verdict, the cautions, a
// table of every result with its error and trusted digits, the stability
// picture of a fixed-step run, and offers a convergence study and the
// printable report. The check and the study run in the Web Worker (each
// solves the model several times), with the progress bar and its cancel
// button; the page stays usable meanwhile.
//
// showAccuracyLine(sheet, settings, run, { live }) puts the verdict's one-line
// summary above the results on the main screen: the same check, run once the
// result settles, and shared with the Accuracy tab.
import { stabilitySvg, version } from "./solver.js";
import { el, fmt, svgUrl } from "./dom.js";
import { solverSettings } from "./runinfo.js";
import { printReport, saveReport } from "./report.js";
import { inWorker, hasWorker } from "./runner.js";

/** Significant digits the page's results show (results.js prints with fmt(v, 6)). */
export const SHOWN_DIGITS = 6;

const plainName = (s) => s.replace(/`/g, "");

let state = null; // { sheet, settings, report, stability, convergence }

function quantityTable(rep) {
  const head = el("tr", {}, ...["result", "value", "error", "trusted digits", "check value"].map((h) => el("th", {}, h)));
  const rows = rep.quantities.map((q) => el("tr", { class: q.disagrees ? "disagrees" : undefined },
    el("td", {}, plainName(q.sentence.split(" = ")[0])),
    el("td", { class: "num", "data-v": String(q.value) }, q.shown),
    el("td", { class: "num" }, q.error == null ? "unknown" : `± ${q.errorShown}`),
    el("td", { class: "num", "data-digits": String(q.digits) }, q.error == null ? "–" : (q.negligible ? "≈ 0" : String(q.digits))),
    el("td", { class: "num" }, q.check == null ? "–" : fmt(q.check, 10))));
  return el("div", { class: "table-wrap" }, el("table", { class: "numbers", id: "accuracy-table" }, head, ...rows));
}

function pitfallList(rep) {
  if (!rep.pitfalls.length) return el("p", { id: "accuracy-pitfalls", class: "muted" }, "No pitfall found: the run is stable, the rates are well behaved at the start, and no event is merely grazed.");
  return el("div", { id: "accuracy-pitfalls" }, ...rep.pitfalls.map((p) => el("div", { class: `rb-pitfall rb-${p.level}`, "data-code": p.code, role: p.level === "alarm" ? "alert" : undefined },
    el("strong", {}, p.title), " ", el("span", {}, p.message))));
}

function stabilityFigure(rep) {
  const st = rep.stability;
  if (!st) return null;
  const flat = st.points.flatMap((p) => [p[0], p[1]]);
  let svg;
  try {
    svg = stabilitySvg(st.method, `${rep.method.name}, h = ${fmt(st.h, 6)}`, new Float64Array(flat), 560, 380);
  } catch {
    return null;
  }
  state.stability = svg;
  const limit = st.largestStableStep == null ? "any step is stable for these modes" : `largest stable step h = ${fmt(st.largestStableStep, 4)}`;
  return el("figure", { id: "accuracy-stability" },
    el("img", { src: svgUrl(svg), alt: `stability region of ${rep.method.name} with the run's h·λ points`, width: 560, height: 380 }),
    el("figcaption", {}, `Stability region of ${rep.method.name} (shaded): each h·λ of the run, a cross outside, a dot inside; ${limit}.`));
}

function convergencePanel(sheet, settings, rep) {
  const fixed = !rep.method.adaptive;
  const span = Math.abs((settings.to ?? 1) - (rep.t0 ?? 0));
  const hInput = el("input", { id: "conv-h", type: "number", step: "any", min: "0", value: String(fixed ? settings.step : fmt(span / 50, 3)), "aria-label": "largest step h" });
  const target = el("input", { id: "conv-target", type: "number", step: "any", min: "0", placeholder: "e.g. 1e-6", "aria-label": "target error" });
  const out = el("div", { id: "conv-out" });
  const button = el("button", { type: "button", id: "conv-run" }, "Run the convergence study");
  button.addEventListener("click", async () => {
    const h = Number(hInput.value);
    const t = Number(target.value);
    const methods = fixed ? [rep.method.id] : ["euler", "heun", "rk4"];
    const mine = state;
    let study;
    button.disabled = true;
    out.replaceChildren(el("p", { class: "muted", id: "conv-running" }, "Running the study at h, h/2, h/4 and h/8…"));
    try {
      study = await inWorker({ kind: "convergence", sheet, settings: { ...solverSettings(settings), method: methods[0], step: h, methods, target: t > 0 ? t : undefined } },
        { label: "Convergence study…" });
    } catch (e) {
      out.replaceChildren(el("p", { class: e.cancelled ? "muted" : "bad" }, e.cancelled ? "The study was cancelled." : `The study failed: ${e.message}`));
      return;
    } finally {
      button.disabled = false;
    }
    if (state !== mine) return;
    state.convergence = study;
    const rows = study.lines.map((l) => el("tr", {},
      el("td", {}, `${plainName(l.label)}`), el("td", {}, l.methodName),
      el("td", { class: "num" }, l.observed.map((q) => (q == null ? "–" : q.toFixed(2))).join(", ")),
      el("td", { class: "num" }, String(l.order)),
      el("td", { class: "num" }, `${fmt(l.extrapolated, 10)} ± ${fmt(l.extrapolatedError, 1)}`),
      el("td", { class: "num" }, l.stepForTarget == null ? "–" : fmt(l.stepForTarget, 3)),
      el("td", {}, l.offTheory ? "far from theory" : "as expected")));
    out.replaceChildren(
      el("img", { src: svgUrl(study.plot), alt: "error against step size, log-log", width: 640, height: 400 }),
      el("table", { class: "numbers", id: "conv-table" },
        el("tr", {}, ...["result", "method", "observed order (coarse → fine)", "theory", "Richardson limit", "h for target", ""].map((x) => el("th", {}, x))), ...rows),
      ...study.lines.filter((l) => l.offTheory).map((l) => el("p", { class: "rb-pitfall rb-warning" }, plainName(l.sentence))),
      ...study.notes.map((n) => el("p", { class: "muted" }, n)),
      el("p", { class: "muted" }, `Errors are measured as ${study.reference}.`));
  });
  return el("details", { id: "accuracy-convergence", open: fixed ? true : undefined },
    el("summary", {}, fixed ? "Convergence study: h, h/2, h/4, h/8" : "Convergence study of Euler, Heun and RK4 at h, h/2, h/4, h/8"),
    el("p", {}, "Runs the fixed-step method at four steps, each half the one before, and compares the observed order with the theoretical one (1 for Euler, 2 for Heun and the midpoint rule, 4 for RK4). A target error gives the step that reaches it."),
    el("label", {}, "largest step h ", hInput), " ", el("label", {}, "target error ", target), " ", button, out);
}

function cautionTexts() {
  const c = document.querySelector("footer.caution");
  if (!c) return ["Results are only as good as the model and its numbers; where safety is at stake, local codes and licensed professional practice govern."];
  return [...c.querySelectorAll("p")].filter((p) => !p.hidden && p.id !== "version-line" && p.textContent.trim()).map((p) => p.textContent.trim());
}

function timePlotUrl() {
  const c = document.querySelector("#time-view canvas:not(.hover)");
  try { return c && c.width > 0 ? c.toDataURL("image/png") : null; } catch { return null; }
}

/** Everything the printable report needs, from the last check. */
export function reportData() {
  if (!state?.report) return null;
  return {
    sheet: state.sheet,
    settings: state.settings,
    report: state.report,
    stabilitySvg: state.stability,
    convergence: state.convergence,
    timePlotUrl: timePlotUrl(),
    caution: cautionTexts(),
    version: state.report.version ?? version(),
  };
}

let checks = 0;

// The last check asked for: { key, promise }. The Accuracy tab and the line
// on the main screen share it, so one run is checked once.
let lastCheck = null;

function checkFor(sheet, settings, { quiet = false } = {}) {
  const key = JSON.stringify([sheet, settings]);
  if (lastCheck?.key === key) return lastCheck.promise;
  const promise = inWorker({ kind: "accuracy", sheet, settings: { ...solverSettings(settings), shownDigits: SHOWN_DIGITS } }, { label: "Checking the accuracy…", quiet });
  const mine = { key, promise };
  lastCheck = mine;
  // A failed or cancelled check is tried afresh next time.
  promise.catch(() => { if (lastCheck === mine) lastCheck = null; });
  return promise;
}

/** A run this costly (rate evaluations) is checked only on the Accuracy tab, not on every edit. */
const LINE_WORK_LIMIT = 200_000;
/** The line's check waits this long after a result settles (typing makes many). */
const LINE_DELAY_MS = 400;
let lineTimer = 0;
let lineSeq = 0;

function accuracyLine() {
  let line = document.getElementById("accuracy-line");
  if (!line) {
    const details = el("button", { type: "button", class: "small", id: "accuracy-line-details" }, "Details");
    details.addEventListener("click", () => document.getElementById("tab-accuracy")?.click());
    line = el("p", { id: "accuracy-line", class: "accuracy-line", "aria-live": "polite" },
      el("strong", {}, "Accuracy: "), el("span", { id: "accuracy-line-text" }), " ", details);
    document.getElementById("summary")?.before(line);
  }
  return line;
}

function setLine(state, text, alarm = false) {
  const line = accuracyLine();
  line.dataset.state = state;
  line.classList.toggle("rb-alarm", alarm);
  line.querySelector("#accuracy-line-text").textContent = text;
}

/**
 * The one-line accuracy summary on the main screen for the shown run. While
 * a slider moves (`live`) it waits; once the result settles the check runs in
 * the worker and its verdict is shown, with a button to the Accuracy tab.
 * A model whose run is costly is checked only when the tab is opened.
 */
export function showAccuracyLine(sheet, settings, run, { live = false } = {}) {
  clearTimeout(lineTimer);
  const seq = ++lineSeq;
  if (live) { setLine("waiting", "checked again when the slider is let go."); return; }
  // Checked by itself only off the page's thread, and only when cheap.
  if (!hasWorker() || (run?.stats?.rhsEvals ?? 0) > LINE_WORK_LIMIT) {
    setLine("waiting", "open the Accuracy tab to check this run.");
    return;
  }
  setLine("checking", "checking…");
  lineTimer = setTimeout(async () => {
    try {
      const rep = await checkFor(sheet, settings, { quiet: true });
      if (seq === lineSeq) setLine("done", plainName(rep.verdict), rep.alarm);
    } catch (e) {
      if (seq !== lineSeq) return;
      setLine(e.cancelled ? "cancelled" : "failed", e.cancelled ? "the check was cancelled." : `the check could not run: ${e.message}`);
    }
  }, LINE_DELAY_MS);
}

/**
 * Check the run and show the report. The check runs in the worker; a newer
 * call supersedes an older one still running (its result is dropped).
 * Resolves when this call's report (or its failure) is shown.
 */
export async function renderAccuracy(container, sheet, settings, run) {
  // Shown again for the same run: the report on screen still holds.
  const same = state && state.sheet === sheet && JSON.stringify(state.settings) === JSON.stringify(settings);
  if (same && container.dataset.state === "done") return;
  const seq = ++checks;
  let rep;
  container.dataset.state = "checking";
  container.replaceChildren(el("h3", {}, "How far to trust the answer"),
    el("p", { class: "muted", id: "accuracy-checking" }, "Checking: re-solving the model with tighter settings and probing for pitfalls…"));
  try {
    rep = await checkFor(sheet, settings);
  } catch (e) {
    if (seq !== checks) return;
    container.dataset.state = e.cancelled ? "cancelled" : "failed";
    const again = el("button", { type: "button", id: "accuracy-again" }, "Check again");
    again.addEventListener("click", () => renderAccuracy(container, sheet, settings, run));
    container.replaceChildren(el("p", { class: e.cancelled ? "muted" : "bad" },
      e.cancelled ? "The accuracy check was cancelled. " : `The accuracy check could not run: ${e.message} `), again);
    return;
  }
  if (seq !== checks) return;
  container.dataset.state = "done";
  rep.t0 = run?.t?.[0] ?? 0;
  state = { sheet, settings, report: rep, stability: null, convergence: null };
  const print = el("button", { type: "button", id: "report-print" }, "Print report");
  const save = el("button", { type: "button", id: "report-save" }, "Save report");
  print.addEventListener("click", () => printReport(reportData()));
  save.addEventListener("click", () => saveReport(reportData()));
  const notes = rep.notes.length ? el("ul", { class: "diagnostics" }, ...rep.notes.map(([level, m]) => el("li", {}, `${level}: ${m}`))) : null;
  container.replaceChildren(...[
    el("h3", {}, "How far to trust the answer"),
    el("p", { id: "accuracy-verdict", class: rep.alarm ? "rb-verdict rb-alarm" : "rb-verdict", role: rep.alarm ? "alert" : undefined }, rep.verdict),
    pitfallList(rep),
    quantityTable(rep),
    el("p", { class: "muted" }, `Checked by: ${rep.how}. The difference from the check estimates the error of the run shown; trusted digits are those the error leaves standing.`),
    rep.cross ? el("p", { id: "accuracy-cross" }, rep.cross.sentence) : null,
    stabilityFigure(rep),
    notes,
    convergencePanel(sheet, settings, rep),
    el("div", { class: "actions rb-report-actions" }, print, save),
  ].filter(Boolean));
}

