// The comparison view: fixed-step methods at h, h/2, h/4 overlaid on the
// adaptive reference, a table of what was compared (the quantity at the end,
// or the stop and event times of a run that `stop when` ends) with each
// run's difference from the reference, and the error against h on log-log
// axes with the fitted slopes. When the errors are at rounding level the
// view says so and fits no order.
import { $, el, fmt } from "./dom.js";
import { Plot, registerPlot, drawPlot } from "./plotkit.js";

const NAMES = { euler: "Euler", heun: "Heun", midpoint: "midpoint", rk4: "RK4" };
const label = (id) => NAMES[id] ?? id;
let report = null;

/** Each method keeps its curve slot (colour and dash) in both plots. */
const slotOf = (method) => report.fits.findIndex((f) => f.method === method);

function describeOverlay() {
  if (!report) return null;
  const plot = new Plot(report.independent, report.quantity);
  const levels = new Map(report.fits.map((f) => [f.method, f.steps.length]));
  report.runs.forEach((r) => {
    const coarsest = report.runs.find((q) => q.method === r.method).step;
    const level = Math.round(Math.log2(coarsest / r.step));
    // Thin for h, thicker for each halving; the finest run carries the label.
    const finest = level === levels.get(r.method) - 1;
    plot.line(finest ? label(r.method) : "", r.t, r.y, slotOf(r.method), level + 1, false, false);
  });
  plot.line("reference", report.reference.t, report.reference.y, -1, 2, false, false);
  for (const e of report.reference.events ?? []) plot.rule(e.t, e.name);
  return plot;
}

function slopeWords(f) {
  if (f.slope !== null && f.slope !== undefined) return `slope ${f.slope.toFixed(2)}`;
  return { rounding: "agrees to rounding", reference: "within the reference's accuracy", events: "events differ" }[f.noSlope] ?? "no slope";
}

function describeOrders() {
  if (!report) return null;
  const plot = new Plot("step h", "|error|");
  plot.log(true, true);
  report.fits.forEach((f) => plot.line(`${label(f.method)}: ${slopeWords(f)}`, f.steps, f.errors, slotOf(f.method), 2, false, true));
  return plot;
}

function showCompareTable() {
  const r = report;
  const events = r.measure === "event-times";
  const several = events && (r.reference.events ?? []).length > 1;
  const heads = ["method", "step h",
    events ? `stop time (${r.independent})` : `${r.quantity} at the end`,
    "difference from reference",
    ...(several ? ["largest event-time difference"] : []),
    "rate evaluations"];
  const head = el("tr", {}, ...heads.map((h) => el("th", { scope: "col" }, h)));
  const row = (run, ref) => el("tr", {},
    el("td", {}, ref ? "adaptive reference" : label(run.method)),
    el("td", { class: "num" }, run.step === null || run.step === undefined ? "adaptive" : fmt(run.step, 4)),
    events
      ? el("td", { class: "num", "data-v": String(run.endT) }, fmt(run.endT, 10))
      : el("td", { class: "num", "data-v": String(run.end) }, fmt(run.end, 10)),
    el("td", { class: "num", "data-v": String(run.difference) }, ref ? "(reference)" : fmt(run.difference, 3)),
    ...(several ? [el("td", { class: "num", "data-v": String(run.error) },
      ref ? "–" : run.mismatched ? `${fmt(run.error, 3)} (${run.mismatched} event${run.mismatched > 1 ? "s" : ""} differ)` : fmt(run.error, 3))] : []),
    el("td", { class: "num" }, String(run.rhsEvals)));
  $("compare-table").replaceChildren(el("thead", {}, head), el("tbody", {}, row(r.reference, true), ...r.runs.map((x) => row(x, false))));
  $("compare-note").textContent = `${r.note} Line width grows as h shrinks: thin for h, thicker for h/2, thickest for h/4.`;
  $("compare-note").dataset.agreement = r.agreement ?? "";
  $("order-caption").textContent = r.agreement
    ? `Error in ${r.measured} against h, both axes logarithmic: no order is fitted, the errors are too small to measure.`
    : `Error in ${r.measured} against h, both axes logarithmic; the fitted slope is each method's observed order.`;
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
  $("compare-note").textContent = "";
  $("order-caption").textContent = "Error against h, both axes logarithmic; the fitted slope is each method's observed order.";
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
  $("compare-table").closest(".table-wrap").after(el("p", { id: "compare-note", class: "muted" }));
  $("compare-run").addEventListener("click", run);
  clearComparison("Choose a quantity and the largest h, then run the comparison.");
}
