// The sheet editor: a plain textarea with a line-number gutter and a mirror
// behind it that tints lines with a problem and shows the message at the end
// of the line. The mirror only ever holds text nodes.
import { $, el } from "./dom.js";

const sheet = () => $("sheet");
let problems = [];

/**
 * Redraw the gutter and the mirror for the current text and problems.
 * `sameLines`: only numbers changed (a slider), so the rows keep their
 * places and the scroll need not be read back, which would force a layout.
 */
export function refreshEditor({ sameLines = false } = {}) {
  const lines = sheet().value.split("\n");
  const byLine = new Map(problems.map((p) => [p.line, p]));
  const gutter = $("gutter");
  const marks = $("marks");
  const g = document.createDocumentFragment();
  const m = document.createDocumentFragment();
  lines.forEach((text, i) => {
    const p = byLine.get(i + 1);
    g.append(el("div", { class: p ? "bad" : null, title: p ? p.message : null }, String(i + 1)));
    const row = el("div", { class: p ? "mark bad" : "mark" }, text.length ? text : " ");
    if (p) row.append(el("span", { class: "inline-msg" }, `  ◂ ${p.message}`));
    m.append(row);
  });
  gutter.replaceChildren(g);
  marks.replaceChildren(m);
  // The read-only copy (embed mode, print) always holds the current sheet.
  $("sheet-readonly").textContent = sheet().value;
  if (!sameLines) syncScroll();
}

function syncScroll() {
  const s = sheet();
  $("gutter").scrollTop = s.scrollTop;
  $("marks").scrollTop = s.scrollTop;
  $("marks").scrollLeft = s.scrollLeft;
}

/** Show these problems ({line, column, message}), or none. */
export function setProblems(list) {
  problems = list;
  const ul = $("problem");
  ul.replaceChildren(...list.map((p) =>
    el("li", {}, p.line ? `Line ${p.line}, column ${p.column}: ${p.message}` : p.message)));
  ul.hidden = list.length === 0;
  refreshEditor();
}

/** Put the caret at a line and column (1-based). */
export function goTo(line, column) {
  const s = sheet();
  const lines = s.value.split("\n");
  let pos = 0;
  for (let i = 0; i < line - 1 && i < lines.length; i++) pos += lines[i].length + 1;
  pos += Math.max(0, (column || 1) - 1);
  s.focus();
  s.setSelectionRange(pos, pos);
}

/** Wire the editor; `onEdit` is called (debounced by the caller) after each change. */
export function initEditor(onEdit) {
  const s = sheet();
  s.addEventListener("input", () => { refreshEditor(); onEdit(); });
  s.addEventListener("scroll", syncScroll);
  s.addEventListener("keydown", (e) => {
    // Tab inserts two spaces; Escape then Tab leaves the editor (keyboard users).
    if (e.key === "Tab" && !e.shiftKey && !s.dataset.escaped) {
      e.preventDefault();
      s.setRangeText("  ", s.selectionStart, s.selectionEnd, "end");
      s.dispatchEvent(new Event("input"));
    }
    s.dataset.escaped = e.key === "Escape" ? "1" : "";
  });
  $("problem").addEventListener("click", (e) => {
    const i = [...$("problem").children].indexOf(e.target);
    if (i >= 0 && problems[i]?.line) goTo(problems[i].line, problems[i].column);
  });
  refreshEditor();
}

/** Make the editor read-only (embed mode): the sheet shows as text. */
export function readOnly(on) {
  sheet().readOnly = on;
  $("sheet-readonly").textContent = sheet().value;
  $("sheet-readonly").hidden = !on;
  document.querySelector(".editor").hidden = on;
}
