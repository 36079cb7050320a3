// The time view: chosen states and helpers against the independent variable,
// with event rules, peak and trough marks, a hover read-out, and zoom/pan.
import { $, el, fmt } from "./dom.js";
import { Plot, registerPlot, drawPlot, canvasPoint, toData, toPixel, insideFrame } from "./plotkit.js";
import { extremaOf, runEnd } from "./runinfo.js";

const tv = { run: null, shown: [], view: null, frame: null, drag: null, colours: new Map() };

/** Colour index of a quantity: stable by its position in the run. */
function colourOf(name) {
  return tv.colours.get(name) ?? 0;
}

function describeTime() {
  const run = tv.run;
  if (!run) return null;
  const names = tv.shown.filter((n) => run.values[n]);
  const plot = new Plot(run.independent, names.length === 1 ? names[0] : "value");
  if (tv.view) plot.window(tv.view.x0, tv.view.x1, tv.view.y0, tv.view.y1);
  for (const n of names) plot.line(n, run.t, run.values[n], colourOf(n), 2, false, false);
  for (const e of run.events ?? []) plot.rule(e.t, e.name);
  const t0 = run.t[0], t1 = runEnd(run);
  const inner = (t) => Math.abs(t - t0) > 1e-9 * Math.abs(t1 - t0) && Math.abs(t - t1) > 1e-9 * Math.abs(t1 - t0);
  for (const x of extremaOf(run)) {
    if (!names.includes(x.name) || !inner(x.t)) continue;
    plot.mark(x.t, x.value, `${x.kind === "max" ? "peak" : "trough"} ${fmt(x.value, 4)}`, x.kind === "max" ? 1 : 2, colourOf(x.name));
  }
  return plot;
}

/** Redraw the time view. */
export function drawTime() {
  tv.frame = drawPlot("time-plot");
  // Test hook: where the plot landed (pixels and data range).
  if (tv.frame) $("time-plot").dataset.frame = JSON.stringify(tv.frame);
  clearHover();
}

/**
 * Show a new run; keep the zoom unless `resetView`. A `live` run (a slider
 * moving) is drawn only when the view is shown; showing it draws it.
 */
export function showRun(run, { resetView = false, live = false } = {}) {
  const prev = tv.run;
  tv.run = run;
  const names = [...run.states, ...run.helpers];
  names.forEach((n, i) => tv.colours.set(n, i));
  const sameModel = prev && prev.states.join() === run.states.join() && prev.helpers.join() === run.helpers.join();
  if (!sameModel) {
    tv.shown = tv.shown.filter((n) => names.includes(n));
    if (!tv.shown.length) tv.shown = run.states.slice(0, 4);
    buildSeriesPicker(names);
    tv.view = null;
  }
  if (resetView) tv.view = null;
  if (live && $("time-view").hidden) return;
  drawTime();
}

/** The names currently shown. */
export const shownSeries = () => tv.shown.slice();

/** Choose which quantities are shown (unknown names are ignored). */
export function setShown(names) {
  if (!tv.run) { tv.shown = names.slice(); return; }
  const all = [...tv.run.states, ...tv.run.helpers];
  tv.shown = names.filter((n) => all.includes(n));
  buildSeriesPicker(all);
  drawTime();
}

function buildSeriesPicker(names) {
  const box = $("series");
  box.replaceChildren(...names.map((n) => {
    const cb = el("input", { type: "checkbox", value: n });
    cb.checked = tv.shown.includes(n);
    cb.addEventListener("change", () => {
      tv.shown = names.filter((m) => (m === n ? cb.checked : tv.shown.includes(m)));
      drawTime();
    });
    const isHelper = !tv.run.states.includes(n);
    return el("label", { class: isHelper ? "chip helper" : "chip", title: isHelper ? "helper" : "state" }, cb, ` ${n}`);
  }));
}

// ---- zoom and pan

function zoom(factor, cx, cy) {
  const f = tv.frame;
  if (!f) return;
  const c = cx === undefined ? { x: (f.x0 + f.x1) / 2, y: (f.y0 + f.y1) / 2 } : toData(f, cx, cy);
  tv.view = { x0: c.x + (f.x0 - c.x) * factor, x1: c.x + (f.x1 - c.x) * factor, y0: c.y + (f.y0 - c.y) * factor, y1: c.y + (f.y1 - c.y) * factor };
  drawTime();
}

function pan(dxFrac, dyFrac) {
  const f = tv.frame;
  if (!f) return;
  const dx = (f.x1 - f.x0) * dxFrac, dy = (f.y1 - f.y0) * dyFrac;
  tv.view = { x0: f.x0 + dx, x1: f.x1 + dx, y0: f.y0 + dy, y1: f.y1 + dy };
  drawTime();
}

/** Back to showing everything. */
export function resetTimeView() {
  tv.view = null;
  drawTime();
}

// ---- hover read-out

function clearHover() {
  const o = $("time-hover");
  o.getContext("2d").clearRect(0, 0, o.width, o.height);
}

/** Values of the shown quantities at x (linear between output points). */
export function valuesAt(run, names, x) {
  const t = run.t;
  const n = t.length;
  if (!n) return [];
  const forward = t[n - 1] >= t[0];
  let lo = 0, hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if ((t[mid] <= x) === forward) lo = mid; else hi = mid;
  }
  const w = t[hi] === t[lo] ? 0 : Math.min(1, Math.max(0, (x - t[lo]) / (t[hi] - t[lo])));
  return names.map((name) => ({ name, value: run.values[name][lo] * (1 - w) + run.values[name][hi] * w }));
}

function hover(px, py) {
  const f = tv.frame, run = tv.run;
  clearHover();
  if (!f || !run || !insideFrame(f, px, py)) { $("readout").textContent = " "; return; }
  const { x } = toData(f, px, py);
  const tMin = Math.min(run.t[0], run.t[run.t.length - 1]), tMax = Math.max(run.t[0], run.t[run.t.length - 1]);
  if (x < tMin || x > tMax) { $("readout").textContent = " "; return; }
  const vals = valuesAt(run, tv.shown.filter((n) => run.values[n]), x);
  const ctx = $("time-hover").getContext("2d");
  ctx.strokeStyle = "#555";
  ctx.setLineDash([3, 3]);
  ctx.beginPath();
  ctx.moveTo(px, f.top);
  ctx.lineTo(px, f.bottom);
  ctx.stroke();
  ctx.setLineDash([]);
  ctx.fillStyle = "#1b1f24";
  for (const v of vals) {
    const p = toPixel(f, x, v.value);
    if (p.py < f.top || p.py > f.bottom) continue;
    ctx.beginPath();
    ctx.arc(px, p.py, 4, 0, 2 * Math.PI);
    ctx.fill();
  }
  // Events under the pointer, named in full (a label with no room on the plot is left out there).
  const near = (run.events ?? []).filter((e) => Math.abs(toPixel(f, e.t, 0).px - px) <= 4);
  const events = near.map((e) => `event “${e.name}” at ${run.independent} = ${fmt(e.t, 6)}`).join(";  ");
  $("readout").textContent = `${run.independent} = ${fmt(x, 6)}:  ` + vals.map((v) => `${v.name} = ${fmt(v.value, 6)}`).join(",  ") + (events ? `;  ${events}` : "");
}

export function initTimeView() {
  registerPlot("time-plot", describeTime);
  const c = $("time-plot");
  c.addEventListener("wheel", (e) => {
    e.preventDefault();
    const p = canvasPoint(c, e);
    zoom(e.deltaY < 0 ? 0.8 : 1.25, p.px, p.py);
  }, { passive: false });
  c.addEventListener("pointerdown", (e) => {
    const p = canvasPoint(c, e);
    if (!tv.frame || !insideFrame(tv.frame, p.px, p.py)) return;
    tv.drag = { ...p, frame: tv.frame };
    c.setPointerCapture(e.pointerId);
  });
  c.addEventListener("pointermove", (e) => {
    const p = canvasPoint(c, e);
    if (tv.drag) {
      const f = tv.drag.frame;
      const a = toData(f, tv.drag.px, tv.drag.py), b = toData(f, p.px, p.py);
      tv.view = { x0: f.x0 - (b.x - a.x), x1: f.x1 - (b.x - a.x), y0: f.y0 - (b.y - a.y), y1: f.y1 - (b.y - a.y) };
      drawTime();
    } else {
      hover(p.px, p.py);
    }
  });
  c.addEventListener("pointerup", () => { tv.drag = null; });
  c.addEventListener("pointerleave", () => { if (!tv.drag) { clearHover(); $("readout").textContent = " "; } });
  c.addEventListener("dblclick", resetTimeView);
  c.addEventListener("keydown", (e) => {
    const keys = { "+": () => zoom(0.8), "=": () => zoom(0.8), "-": () => zoom(1.25), "0": resetTimeView,
      ArrowLeft: () => pan(-0.1, 0), ArrowRight: () => pan(0.1, 0), ArrowUp: () => pan(0, 0.1), ArrowDown: () => pan(0, -0.1) };
    if (keys[e.key]) { e.preventDefault(); keys[e.key](); }
  });
  $("time-zoom-in").addEventListener("click", () => zoom(0.8));
  $("time-zoom-out").addEventListener("click", () => zoom(1.25));
  $("time-reset").addEventListener("click", resetTimeView);
}
