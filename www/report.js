// The printable accuracy report: one clean page with the sheet, the settings,
// the results with their trusted digits, the verdict, the plots, the caution
// and ratebook's version. Built as DOM (user text only through textContent),
// printed in place, or saved as a standalone HTML file.
import { el, download, svgUrl } from "./dom.js";

const CSS = `
.rb-report { font: 11pt/1.45 system-ui, sans-serif; color: #111; max-width: 48rem; margin: 0 auto; }
.rb-report h1 { font-size: 17pt; margin: 0 0 .2rem; }
.rb-report h2 { font-size: 12.5pt; margin: 1.1rem 0 .35rem; border-bottom: 1px solid #999; }
.rb-report pre { font: 9.5pt/1.35 ui-monospace, monospace; background: #f4f4f4; padding: .5rem; white-space: pre-wrap; }
.rb-report table { border-collapse: collapse; width: 100%; font-size: 10pt; }
.rb-report th, .rb-report td { border-bottom: 1px solid #ccc; padding: .15rem .4rem; text-align: left; vertical-align: top; }
.rb-report td.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
.rb-report .verdict { font-weight: 600; }
.rb-report .alarm { border: 2pt solid #b01c1c; padding: .4rem .6rem; }
.rb-report .pit { margin: .35rem 0; }
.rb-report figure { margin: .6rem 0; break-inside: avoid; }
.rb-report figure img { max-width: 100%; }
.rb-report figcaption { font-size: 9.5pt; color: #444; }
.rb-report .caution { border-left: 2pt solid #000; padding-left: .6rem; }
.rb-report .muted { color: #555; font-size: 9.5pt; }
`;


/** The settings as rows of (name, value). */
function settingRows(rep, settings) {
  const rows = [["method", `${rep.method.name} (${rep.method.id})`], ["run to", `${rep.independent} = ${settings.to}`]];
  if (!rep.method.adaptive) rows.push(["step h", String(settings.step)]);
  else rows.push(["relative tolerance", String(settings.tolerance?.relative ?? 1e-6)], ["absolute tolerance", String(settings.tolerance?.absolute ?? 1e-9)]);
  if (settings.params) for (const [k, v] of Object.entries(settings.params)) rows.push([`parameter ${k}`, String(v)]);
  return rows;
}

/**
 * The report as a DOM node. `data` = { sheet, settings, report, stabilitySvg?,
 * convergence?, timePlotUrl?, caution, version }.
 */
export function reportNode(data) {
  const { sheet, settings, report: rep } = data;
  const table = (head, rows) => el("table", {}, el("tr", {}, ...head.map((h) => el("th", {}, h))), ...rows);
  const parts = [
    el("h1", {}, "ratebook report"),
    el("p", { class: "muted" }, `Made with ratebook ${data.version}.`),
    el("h2", {}, "Sheet"),
    el("pre", {}, sheet),
    el("h2", {}, "Settings"),
    table(["setting", "value"], settingRows(rep, settings).map(([k, v]) => el("tr", {}, el("td", {}, k), el("td", {}, v)))),
    el("h2", {}, "Results and how far to trust them"),
    el("p", { class: rep.alarm ? "verdict alarm" : "verdict" }, rep.verdict),
    table(["result", "value", "error", "trusted digits"], rep.quantities.map((q) => el("tr", {},
      el("td", {}, q.sentence.split(" = ")[0].replace(/`/g, "")),
      el("td", { class: "num" }, q.shown), el("td", { class: "num" }, q.error == null ? "unknown" : `± ${q.errorShown}`),
      el("td", { class: "num" }, q.error == null ? "–" : (q.negligible ? "≈ 0" : String(q.digits)))))),
    el("p", { class: "muted" }, `Checked by: ${rep.how}.`),
  ];
  if (rep.cross) parts.push(el("p", {}, rep.cross.sentence));
  if (rep.pitfalls.length) {
    parts.push(el("h2", {}, "Cautions about this run"));
    for (const p of rep.pitfalls) parts.push(el("p", { class: p.level === "alarm" ? "pit alarm" : "pit" }, el("strong", {}, `${p.title}. `), p.message));
  }
  const figures = [];
  if (data.timePlotUrl) figures.push(el("figure", {}, el("img", { src: data.timePlotUrl, alt: "time plot of the run" }), el("figcaption", {}, "The run against " + rep.independent + ".")));
  if (data.stabilitySvg) figures.push(el("figure", {}, el("img", { src: svgUrl(data.stabilitySvg), alt: "stability region with the h·λ points" }),
    el("figcaption", {}, "Stability region of the method (shaded) and the run's h·λ: a cross lies outside, a dot inside.")));
  if (data.convergence) figures.push(el("figure", {}, el("img", { src: svgUrl(data.convergence.plot), alt: "error against step size, log-log" }),
    el("figcaption", {}, "Error against step size h, log-log; dashed lines have the theoretical slope.")),
    ...data.convergence.lines.map((l) => el("p", {}, l.sentence.replace(/`/g, ""))));
  if (figures.length) parts.push(el("h2", {}, "Plots"), ...figures);
  parts.push(el("h2", {}, "Caution"), el("div", { class: "caution" }, ...data.caution.map((c) => el("p", {}, c))));
  parts.push(el("p", { class: "muted" }, `ratebook ${data.version}`));
  return el("article", { class: "rb-report", id: "rb-report" }, ...parts);
}

/** The report as a standalone HTML document. */
export function reportHtml(data) {
  const node = reportNode(data);
  return `<!doctype html><html lang="en"><head><meta charset="utf-8"><title>ratebook report</title>` +
    `<meta http-equiv="Content-Security-Policy" content="default-src 'none'; style-src 'unsafe-inline'; img-src data:">` +
    `<style>${CSS}</style></head><body>${node.outerHTML}</body></html>`;
}

let reportStyled = false;
function ensureReportStyle() {
  if (reportStyled) return;
  reportStyled = true;
  document.head.append(el("style", {}, CSS + `
#rb-print { display: none; }
@media print {
  body.rb-printing > *:not(#rb-print) { display: none !important; }
  body.rb-printing #rb-print { display: block !important; }
}`));
}

/** Print the report in place: everything else on the page is hidden while printing. */
export function printReport(data) {
  ensureReportStyle();
  document.getElementById("rb-print")?.remove();
  const holder = el("div", { id: "rb-print" }, reportNode(data));
  document.body.append(holder);
  document.body.classList.add("rb-printing");
  const done = () => { document.body.classList.remove("rb-printing"); window.removeEventListener("afterprint", done); };
  window.addEventListener("afterprint", done);
  try { window.print(); } catch { /* printing blocked (a sandboxed frame): the saved report still works */ }
  setTimeout(done, 0);
}

/** Save the report as a standalone HTML file. */
export function saveReport(data) {
  download("ratebook-report.html", new Blob([reportHtml(data)], { type: "text/html" }));
}
