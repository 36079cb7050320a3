// The field view: the slope field of a one-state model, or the phase plane
// of two chosen states with direction arrows, nullclines and the solution
// curve. A click starts a new curve through that point, integrated forward
// and backward within the window.
import { fieldView } from "./solver.js";
import { $, el, timed } from "./dom.js";
import { Plot, registerPlot, drawPlot, canvasPoint, toData, insideFrame } from "./plotkit.js";

// window: the one the user fixed (by adding curves), else null for
// auto-ranging; held: the window kept while a slider moves, so that the
// arrows stay put under the moving curve (fitted again on release).
const fv = { sheet: "", settings: null, run: null, axes: [], starts: [], window: null, held: null, report: null, frame: null, dirty: true, error: "" };
const CELLS = 24;

function axesFor(run) {
  const st = run.states;
  if (st.length < 2) return [];
  const [x, y] = fv.axes;
  if (st.includes(x) && st.includes(y) && x !== y) return [x, y];
  return [st[0], st[1]];
}

function compute() {
  fv.dirty = false;
  if (!fv.run) return;
  const [x, y] = axesFor(fv.run);
  try {
    const window = fv.window ?? fv.held ?? undefined;
    fv.report = timed("field-numbers", () => fieldView(fv.sheet, fv.settings, { x, y, window, cells: CELLS, starts: fv.starts }));
    fv.error = "";
  } catch (e) {
    fv.report = null;
    fv.error = String(e.message ?? e);
  }
}

function describeField() {
  const rep = fv.report, run = fv.run;
  if (!rep || !run) return null;
  const plot = new Plot(rep.xLabel, rep.yLabel);
  const w = rep.window;
  plot.window(w[0], w[1], w[2], w[3]);
  plot.field(rep.field, rep.kind === "phase");
  rep.nullclines.forEach((n, i) => plot.line(n.label, n.x, n.y, 3 + i, 2, false, false));
  const xs = rep.kind === "phase" ? run.values[rep.xLabel] : run.t;
  plot.line("solution", xs, run.values[rep.yLabel], 0, 3, false, false);
  rep.curves.forEach((c, i) => plot.line(i === 0 ? "added curves" : "", c.x, c.y, 1, 2, false, false));
  for (const s of fv.starts) plot.mark(s[0], s[1], "", 0, 1);
  return plot;
}

/** Redraw the field view (recomputing if the model changed). */
export function drawField() {
  if ($("field-view").hidden) return;
  if (fv.dirty) compute();
  fv.frame = timed("field-draw", () => drawPlot("field-plot"));
  // Test hook: the window shown, in data units.
  if (fv.report) $("field-plot").dataset.window = JSON.stringify(fv.report.window);
  $("field-note").textContent = fv.error
    ? `The field cannot be drawn: ${fv.error}`
    : `${fv.report?.note ?? ""} Click anywhere to start a solution curve through that point.`;
}

/**
 * A new run of the model: redraw if the view is shown. While a slider moves
 * (`live`) the window stays where it was.
 */
export function showFieldRun(sheet, settings, run, { live = false } = {}) {
  const sameStates = fv.run && fv.run.states.join() === run.states.join();
  fv.held = live && sameStates ? (fv.held ?? fv.report?.window?.slice() ?? null) : null;
  fv.sheet = sheet;
  fv.settings = settings;
  fv.run = run;
  fv.dirty = true;
  if (!sameStates) {
    fv.starts = [];
    fv.window = null;
    buildPickers(run);
  }
  drawField();
}

/** Choose the two states of the phase plane (from an example). */
export function setFieldAxes(axes) {
  fv.axes = axes.slice(0, 2);
  fv.starts = [];
  fv.window = null;
}

/** The phase plane's two states, as chosen. */
export const fieldAxes = () => fv.axes.slice();

function buildPickers(run) {
  const phase = run.states.length >= 2;
  for (const id of ["field-x", "field-y"]) $(id).closest("label").hidden = !phase;
  if (!phase) return;
  const [x, y] = axesFor(run);
  fv.axes = [x, y];
  for (const [id, v] of [["field-x", x], ["field-y", y]]) {
    $(id).replaceChildren(...run.states.map((s) => el("option", { value: s }, s)));
    $(id).value = v;
  }
}

function addCurveAt(x, y) {
  // Keep the window fixed once the user starts adding curves.
  if (fv.report) fv.window = fv.report.window.slice();
  fv.starts.push([x, y]);
  fv.dirty = true;
  drawField();
}

export function initFieldView() {
  registerPlot("field-plot", describeField);
  const c = $("field-plot");
  c.addEventListener("click", (e) => {
    const p = canvasPoint(c, e);
    if (!fv.frame || !insideFrame(fv.frame, p.px, p.py)) return;
    const d = toData(fv.frame, p.px, p.py);
    addCurveAt(d.x, d.y);
  });
  c.addEventListener("keydown", (e) => {
    if (e.key !== "Enter" || !fv.report) return;
    const w = fv.report.window;
    addCurveAt((w[0] + w[1]) / 2, (w[2] + w[3]) / 2);
  });
  const pick = () => {
    fv.axes = [$("field-x").value, $("field-y").value];
    fv.starts = [];
    fv.window = null;
    fv.dirty = true;
    drawField();
  };
  $("field-x").addEventListener("change", pick);
  $("field-y").addEventListener("change", pick);
  $("field-clear").addEventListener("click", () => { fv.starts = []; fv.dirty = true; drawField(); });
  $("field-reset").addEventListener("click", () => { fv.starts = []; fv.window = null; fv.dirty = true; drawField(); });
}
