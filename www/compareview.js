// The comparison view: fixed-step methods at h, h/2, h/4 overlaid on the
// adaptive reference, a table of end values and their differences from the
// reference, and error against h on log-log axes with the fitted slopes.
import { $, el, fmt } from "./dom.js";
import { Plot, registerPlot, drawPlot } from "./plotkit.js";

const NAMES = { euler: "Euler", heun: "Heun", midpoint: "midpoint", rk4: "RK4", "dormand-prince-5": "adaptive reference (Dormand–Prince 5(4))" };
const label = (id) => NAMES[id] ?? id;
let report = null;

function methodColour(i) {
  return i;
}

function describeOverlay() {
  if (!report) return null;
  const plot = new Plot(report.independent, report.quantity);
  const methods = report.fits.map((f) => f.method);
  report.runs.forEach((r) => {
    const level = Math.round(Math.log2(report.runs.find((q) => q.method === r.method).step / r.step));
    plot.line(`${label(r.method)} h = ${fmt(r.step, 3)}`, r.t, r.y, methodColour(methods.indexOf(r.method)), level === 0 ? 1 : level + 1, level === 0, false);
  });
  plot.line(label("dormand-prince-5"), report.reference.t, report.reference.y, -1, 2, false, false);
  return plot;
}

function describeOrders() {
  if (!report) return null;
  const plot = new Plot("step h", "|error at the end|");
  plot.log(true, true);
  report.fits.forEach((f, i) => {
    const slope = f.slope === null || f.slope === undefined ? "no slope" : `slope ${f.slope.toFixed(2)}`;
    plot.line(`${label(f.method)}: ${slope}`, f.steps, f.errors, methodColour(i), 2, false, true);
  });
  return plot;
}

function showCompareTable() {
  const r = report;
  const head = el("tr", {}, ...["method", "h", `${r.independent} at the end`, `${r.quantity} at the end`, "difference from reference", "rate evaluations"].map((h) => el("th", { scope: "col" }, h)));
  const row = (run, ref) => el("tr", {},
    el("td", {}, label(run.method)),
    el("td", { class: "num" }, run.step === null || run.step === undefined ? "adaptive" : fmt(run.step, 4)),
    el("td", { class: "num" }, fmt(run.endT, 8)),
    el("td", { class: "num", "data-v": String(run.end) }, fmt(run.end, 10)),
    el("td", { class: "num", "data-v": String(run.difference) }, ref ? "(reference)" : fmt(run.difference, 3)),
    el("td", { class: "num" }, String(run.rhsEvals)));
  $("compare-table").replaceChildren(el("thead", {}, head), el("tbody", {}, row(r.reference, true), ...r.runs.map((x) => row(x, false))));
}

/** Show a comparison report. */
export function showComparison(rep) {
  report = rep;
  drawPlot("compare-plot");
  drawPlot("order-plot");
  showCompareTable();
}

/** Forget the comparison (the model changed). */
export function clearComparison(message) {
  report = null;
  for (const id of ["compare-plot", "order-plot"]) {
    const c = $(id);
    c.getContext("2d").clearRect(0, 0, c.width, c.height);
  }
  $("compare-table").replaceChildren(el("caption", { class: "muted" }, message));
}

/** Offer the run's quantities in the picker. */
export function setCompareQuantities(names) {
  const sel = $("compare-state");
  if ([...sel.options].map((o) => o.value).join("\n") === names.join("\n")) return;
  const keep = sel.value;
  sel.replaceChildren(...names.map((n) => el("option", { value: n }, n)));
  if (names.includes(keep)) sel.value = keep;
}

export function initCompareView(run) {
  registerPlot("compare-plot", describeOverlay);
  registerPlot("order-plot", describeOrders);
  $("compare-run").addEventListener("click", run);
  clearComparison("Choose a quantity and the largest h, then run the comparison.");
}
