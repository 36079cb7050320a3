// The sheet editor: a plain textarea with a line-number gutter and a mirror
// behind it that tints lines with a problem, underlines the problem at its
// column (the message shows on hover) and shows the message at the end of the
// line. Typing a name offers completions: the sheet's own names, then the
// functions and constants (Ctrl+Space asks for them). The mirror only ever
// holds text nodes.
import { $, el } from "./dom.js";

const sheet = () => $("sheet");
let problems = [];

/** The message without the solver's "line L, column C: " lead (the page shows the place itself). */
const bareMessage = (m) => String(m).replace(/^line \d+, column \d+: /, "");

const isNameChar = (c) => /[A-Za-z0-9_']/.test(c);

/**
 * Where to underline a problem at 1-based `column` of `text`: the name or
 * number that starts there, else the one character; past the end of the
 * line, one blank after it. Returns [from, to) as string indices.
 */
export function problemSpan(text, column) {
  const from = Math.max(0, Math.min((column || 1) - 1, text.length));
  if (from >= text.length) return [from, from];
  let to = from + 1;
  if (/[A-Za-z_]/.test(text[from])) while (to < text.length && isNameChar(text[to])) to++;
  else if (/[0-9.]/.test(text[from])) while (to < text.length && /[0-9.eE]/.test(text[to])) to++;
  return [from, to];
}

/** A mirror row with a problem: tinted, underlined at its column, the message at its end. */
function badRow(text, p) {
  const row = el("div", { class: "mark bad" });
  if (p.column) {
    const [from, to] = problemSpan(text, p.column);
    row.append(text.slice(0, from), el("span", { class: "squiggle", id: "sheet-squiggle" }, to > from ? text.slice(from, to) : " "), text.slice(to));
  } else {
    row.append(text.length ? text : " ");
  }
  row.append(el("span", { class: "inline-msg" }, `  ◂ ${bareMessage(p.message)}`));
  return row;
}

/**
 * Redraw the gutter and the mirror for the current text and problems.
 * `sameLines`: only numbers changed (a slider), so the rows keep their
 * places and the scroll need not be read back, which would force a layout.
 */
export function refreshEditor({ sameLines = false } = {}) {
  const lines = sheet().value.split("\n");
  // An empty sheet shows its placeholder (how to start); the list below says it is empty.
  const byLine = new Map(sheet().value ? problems.map((p) => [p.line, p]) : []);
  const gutter = $("gutter");
  const marks = $("marks");
  const g = document.createDocumentFragment();
  const m = document.createDocumentFragment();
  lines.forEach((text, i) => {
    const p = byLine.get(i + 1);
    g.append(el("div", { class: p ? "bad" : null, title: p ? p.message : null }, String(i + 1)));
    m.append(p ? badRow(text, p) : el("div", { class: "mark" }, text.length ? text : " "));
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
    el("li", {}, p.line ? `Line ${p.line}, column ${p.column}: ${bareMessage(p.message)}` : p.message)));
  ul.hidden = list.length === 0;
  refreshEditor();
  showTip(false);
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
  caretProblem();
}

// ---- the problem's message on hover

/** Show the message of the underlined problem under it; `over`: the pointer or the caret is on it. */
function showTip(over) {
  const tip = $("sheet-tip");
  const mark = $("sheet-squiggle");
  const p = over && mark && problems.find((q) => q.line && q.column);
  if (!p) { tip.hidden = true; return; }
  const r = mark.getBoundingClientRect();
  const box = tip.parentElement.getBoundingClientRect();
  tip.textContent = bareMessage(p.message);
  tip.hidden = false;
  const left = Math.max(0, Math.min(r.left - box.left, box.width - tip.offsetWidth));
  const below = r.bottom - box.top + 2;
  tip.style.left = `${left}px`;
  tip.style.top = `${below + tip.offsetHeight > box.height ? Math.max(0, r.top - box.top - tip.offsetHeight - 2) : below}px`;
}

function hoverProblem(e) {
  const r = $("sheet-squiggle")?.getBoundingClientRect();
  showTip(r && e.clientX >= r.left - 1 && e.clientX <= r.right + 1 && e.clientY >= r.top - 1 && e.clientY <= r.bottom + 1);
}

/** The caret on the underlined stretch shows the message too (keyboard users). */
function caretProblem() {
  const s = sheet();
  const p = problems.find((q) => q.line && q.column);
  if (!p || pick.open || s.selectionStart !== s.selectionEnd || !s.value) { showTip(false); return; }
  const before = s.value.slice(0, s.selectionStart);
  const line = before.split("\n").length;
  const col = s.selectionStart - (before.lastIndexOf("\n") + 1);
  const [from, to] = problemSpan(s.value.split("\n")[line - 1] ?? "", p.column);
  showTip(line === p.line && col >= from && col <= Math.max(to, from + 1));
}

// ---- completion of names

let known = [];     // the functions and constants: [{ name, detail, fn }]
const pick = { items: [], at: 0, from: 0, open: false };

/** The names completion offers beside the sheet's own: [{ name, detail, fn }]. */
export function setCompletions(list) {
  known = list;
}

/** The sheet's own names, from its left-hand sides: states, their derivatives, definitions, the independent variable. */
export function sheetNames(text) {
  const out = new Map();
  const add = (name, detail) => { if (!out.has(name)) out.set(name, detail); };
  let indep = null, rates = false;
  for (const raw of text.split("\n")) {
    const line = raw.split("#")[0];
    let m;
    if ((m = /^\s*d(\d*)([A-Za-z_]\w*)\s*\/\s*d([A-Za-z_]\w*?)\1\s*=/.exec(line))) {
      const order = Number(m[1] || 1);
      for (let k = 0; k < order; k++) add(m[2] + "'".repeat(k), "state");
      indep ??= m[3];
      rates = true;
    } else if ((m = /^\s*([A-Za-z_]\w*)('+)\s*=/.exec(line))) {
      for (let k = 0; k < m[2].length; k++) add(m[1] + "'".repeat(k), "state");
      rates = true;
    } else if ((m = /^\s*([A-Za-z_]\w*)\s*=\s*(\S*)/.exec(line))) {
      add(m[1], /^[-+]?[0-9.]+([eE][-+]?\d+)?$/.test(m[2].trim()) ? "parameter" : "defined in the sheet");
    }
  }
  if (rates) add(indep ?? "t", "independent variable");
  return [...out].map(([name, detail]) => ({ name, detail }));
}

/** The name being typed before the caret, and where it starts; null in a comment. */
function typedWord(s) {
  const at = s.selectionStart;
  if (at !== s.selectionEnd) return null;
  const lineStart = s.value.lastIndexOf("\n", at - 1) + 1;
  const before = s.value.slice(lineStart, at);
  if (before.includes("#")) return null;
  const m = /[A-Za-z_][A-Za-z0-9_]*'*$/.exec(before);
  if (m && /[0-9.]$/.test(before.slice(0, m.index))) return null;   // an exponent, as in 1e5
  return { word: m ? m[0] : "", from: at - (m ? m[0].length : 0) };
}

/** Open (or refresh) the list for the word before the caret; `asked`: Ctrl+Space, which lists all. */
function offer(asked = false) {
  const s = sheet();
  const w = typedWord(s);
  if (!w || (!w.word && !asked)) { closeOffer(); return; }
  const lower = w.word.toLowerCase();
  const seen = new Set();
  const items = [...sheetNames(s.value), ...known].filter((c) => {
    if (seen.has(c.name) || !c.name.toLowerCase().startsWith(lower)) return false;
    seen.add(c.name);
    return true;
  });
  if (!items.length || (items.length === 1 && items[0].name === w.word && !items[0].fn)) { closeOffer(); return; }
  Object.assign(pick, { items, at: 0, from: w.from, open: true });
  showOffer();
}

function showOffer() {
  const s = sheet();
  const list = $("sheet-complete");
  list.replaceChildren(...pick.items.map((c, i) => el("li", {
    role: "option", id: `sheet-complete-${i}`, "aria-selected": String(i === pick.at), "data-name": c.name,
  }, el("span", { class: "complete-name" }, c.name), el("span", { class: "complete-detail" }, c.detail ?? ""))));
  list.hidden = false;
  s.setAttribute("aria-expanded", "true");
  s.setAttribute("aria-activedescendant", `sheet-complete-${pick.at}`);
  // Place it under the word: the mirror's rows give the line's top, a
  // measured character its column (the editor's font is monospaced).
  const row = s.value.slice(0, pick.from).split("\n").length - 1;
  const col = pick.from - (s.value.lastIndexOf("\n", pick.from - 1) + 1);
  const rowNode = $("marks").children[row];
  const cs = getComputedStyle(s);
  const ctx = document.createElement("canvas").getContext("2d");
  ctx.font = `${cs.fontSize} ${cs.fontFamily}`;
  const charW = ctx.measureText("0").width;
  const body = list.parentElement;
  const top = (rowNode ? rowNode.offsetTop + rowNode.offsetHeight : 0) - s.scrollTop;
  const left = parseFloat(cs.paddingLeft) + col * charW - s.scrollLeft;
  list.style.left = `${Math.max(0, Math.min(left, body.clientWidth - list.offsetWidth))}px`;
  list.style.top = `${top + list.offsetHeight > body.clientHeight ? Math.max(0, top - (rowNode?.offsetHeight ?? 0) - list.offsetHeight) : top}px`;
  list.children[pick.at]?.scrollIntoView({ block: "nearest" });
}

function closeOffer() {
  if (!pick.open) return;
  pick.open = false;
  $("sheet-complete").hidden = true;
  sheet().setAttribute("aria-expanded", "false");
  sheet().removeAttribute("aria-activedescendant");
}

/** Put the chosen name in place of the word typed so far (a function with its opening parenthesis). */
function acceptOffer(i = pick.at) {
  const c = pick.items[i];
  closeOffer();
  if (!c) return;
  const s = sheet();
  const text = c.fn && s.value[s.selectionStart] !== "(" ? `${c.name}(` : c.name;
  s.setRangeText(text, pick.from, s.selectionStart, "end");
  pick.accepted = true;
  s.dispatchEvent(new Event("input"));
}

/** Keys while the list is open; true when the key was used. */
function offerKey(e) {
  if (!pick.open) return false;
  const n = pick.items.length;
  if (e.key === "ArrowDown" || e.key === "ArrowUp") {
    pick.at = (pick.at + (e.key === "ArrowDown" ? 1 : n - 1)) % n;
    showOffer();
  } else if (e.key === "Enter" || e.key === "Tab") {
    acceptOffer();
  } else if (e.key === "Escape") {
    closeOffer();
  } else {
    if (/^(Arrow(Left|Right)|Home|End|Page(Up|Down))$/.test(e.key)) closeOffer();
    return false;
  }
  e.preventDefault();
  return true;
}

/**
 * Put `text` into the sheet at the caret, as if typed (the caret stays where
 * it was while focus was elsewhere). `asLines`: on lines of its own, after
 * the caret's line.
 */
export function insertIntoSheet(text, { asLines = false } = {}) {
  const s = sheet();
  if (s.readOnly) return;
  let at = s.selectionStart, end = s.selectionEnd;
  if (asLines) {
    const v = s.value;
    const lineStart = v.lastIndexOf("\n", at - 1) + 1;
    const found = v.indexOf("\n", end);
    const lineEnd = found < 0 ? v.length : found;
    const body = text.replace(/\n$/, "");
    const blank = !v.slice(lineStart, lineEnd).trim();
    at = end = blank ? lineStart : lineEnd;
    text = `${blank ? "" : "\n"}${body}${found < 0 ? "\n" : ""}`;
  }
  s.focus();
  s.setRangeText(text, at, end, "end");
  s.dispatchEvent(new Event("input"));
}

/** Wire the editor; `onEdit` is called (debounced by the caller) after each change. */
export function initEditor(onEdit) {
  const s = sheet();
  s.addEventListener("input", (e) => {
    refreshEditor();
    onEdit();
    if (pick.accepted) pick.accepted = false;
    else if (e.inputType?.startsWith("insert") && /[A-Za-z0-9_']$/.test(e.data ?? "")) offer();
    else if (pick.open) offer();
  });
  s.addEventListener("scroll", () => { syncScroll(); closeOffer(); $("sheet-tip").hidden = true; });
  s.addEventListener("blur", closeOffer);
  s.addEventListener("click", closeOffer);
  s.addEventListener("mousemove", hoverProblem);
  s.addEventListener("mouseleave", () => showTip(false));
  s.addEventListener("keyup", (e) => { if (!/^(Shift|Control|Alt|Meta)$/.test(e.key)) caretProblem(); });
  $("sheet-complete").addEventListener("mousedown", (e) => {
    const li = e.target.closest("li[data-name]");
    e.preventDefault();
    if (li) acceptOffer([...li.parentElement.children].indexOf(li));
  });
  s.addEventListener("keydown", (e) => {
    if (offerKey(e)) return;
    if (e.key === " " && e.ctrlKey) { e.preventDefault(); offer(true); return; }
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
