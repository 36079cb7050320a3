// Results: the summary (final values, events, peaks and troughs, run
// statistics, diagnostics), the table at the output times, and the CSV.
import { $, el, fmt, download } from "./dom.js";
import { extremaOf, stopEvent } from "./runinfo.js";

const TABLE_ROWS = 2000;

/** A number cell; an absent number (a helper with no finite peak) shows as a dash. */
function num(v, digits = 6) {
  if (typeof v !== "number") return el("td", { class: "num", title: "no finite value" }, "—");
  return el("td", { class: "num", "data-v": String(v) }, fmt(v, digits));
}

function section(title, ...body) {
  return el("div", { class: "summary-block" }, el("h3", {}, title), ...body);
}

/** Fill the summary from `run` (the plotted run) with `settings` and `method` shown. */
export function showSummary(run, { method } = {}) {
  const last = run.t.length - 1;
  const names = [...run.states, ...run.helpers];
  const blocks = [];

  // A stopped run ends at its stop event, which carries every value there.
  const stop = stopEvent(run);
  const endT = stop ? stop.t : run.t[last];
  const endValue = (n) => (stop && Number.isFinite(stop.values?.[n]) ? stop.values[n] : run.values[n][last]);
  const status = stop ? `stopped: ${stop.name}` : ({ finished: "finished", failed: "failed" }[run.status] ?? run.status);
  const finals = el("table", { class: "numbers", id: "summary-final" },
    el("tr", {}, el("th", {}, "quantity"), el("th", {}, "value")),
    ...names.map((n) => el("tr", { "data-name": n }, el("td", {}, n), num(endValue(n), 8))));
  blocks.push(section(`At ${run.independent} = ${fmt(endT, 8)} (${status})`, finals));

  const events = run.events ?? [];
  blocks.push(section("Events",
    events.length
      ? el("table", { class: "numbers", id: "summary-events" },
        el("tr", {}, el("th", {}, "event"), el("th", {}, run.independent)),
        ...events.map((e) => el("tr", {}, el("td", {}, e.name), num(e.t, 8))))
      : el("p", { class: "muted" }, "No event fired.")));

  const ext = extremaOf(run);
  const byName = new Map();
  for (const x of ext) byName.set(x.name, { ...byName.get(x.name), [x.kind]: x });
  const located = ext.every((x) => x.located);
  blocks.push(section("Peaks and troughs",
    el("table", { class: "numbers", id: "summary-extrema" },
      el("tr", {}, el("th", {}, "quantity"), el("th", {}, "highest"), el("th", {}, `at ${run.independent}`), el("th", {}, "lowest"), el("th", {}, `at ${run.independent}`)),
      ...[...byName].map(([n, x]) => el("tr", { "data-name": n }, el("td", {}, n),
        num(x.max?.value), num(x.max?.t), num(x.min?.value), num(x.min?.t)))),
    located ? "" : el("p", { class: "muted" }, "Read off the output points.")));

  const s = run.stats ?? {};
  blocks.push(section("Run",
    el("table", { class: "numbers", id: "summary-stats" },
      ...[["method", method ?? "auto"], ["accepted steps", s.steps], ["rejected steps", s.rejected], ["rate evaluations", s.rhsEvals],
        ["Jacobians", s.jacobians], ["factorizations", s.factorizations]]
        .filter(([, v]) => v !== undefined)
        .map(([k, v]) => el("tr", {}, el("td", {}, k), el("td", { class: "num" }, String(v)))))));

  const diags = run.diagnostics ?? [];
  if (diags.length || run.error) {
    blocks.push(section("Notes from the solver",
      el("ul", { class: "diagnostics" },
        ...(run.error ? [el("li", { class: "error" }, String(run.error.message ?? run.error))] : []),
        ...diags.map((d) => el("li", { class: d.level ?? "info" },
          `${d.level ?? "info"}: ${d.message}` + (Number.isFinite(d.t) ? ` (at ${run.independent} = ${fmt(d.t, 6)})` : ""))))));
  }
  $("summary").replaceChildren(...blocks);
}

/** Columns of a run's table: the independent variable, then states, then helpers. */
function columns(run) {
  return [run.independent, ...run.states, ...run.helpers];
}

function rowValues(run, i) {
  return [run.t[i], ...run.states.map((n) => run.values[n][i]), ...run.helpers.map((n) => run.values[n][i])];
}

/** Fill the table from `run` (the run at the output times). */
export function showTable(run) {
  const cols = columns(run);
  const n = run.t.length;
  const shown = Math.min(n, TABLE_ROWS);
  const head = el("thead", {}, el("tr", {}, ...cols.map((c) => el("th", { scope: "col" }, c))));
  const body = el("tbody");
  for (let i = 0; i < shown; i++) body.append(el("tr", {}, ...rowValues(run, i).map((v) => num(v, 8))));
  $("table").replaceChildren(head, body);
  $("table-note").textContent = shown < n ? `The first ${shown} of ${n} rows; the CSV holds them all.` : `${n} rows at the output times.`;
}

/** One CSV field, quoted per RFC 4180 when it needs it. */
export function csvField(v) {
  const s = typeof v === "number" ? String(v) : String(v ?? "");
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** The run as RFC 4180 CSV: a header row naming the columns, CRLF line ends. */
export function runCsv(run) {
  const lines = [columns(run).map(csvField).join(",")];
  for (let i = 0; i < run.t.length; i++) lines.push(rowValues(run, i).map(csvField).join(","));
  return lines.join("\r\n") + "\r\n";
}

/** Offer the CSV of `run`. */
export function downloadCsv(run, base) {
  download(`${base}.csv`, new Blob([runCsv(run)], { type: "text/csv" }));
}
