// Parameters as sliders: every parameter whose definition is a plain number
// (`k = 0.5`) gets a slider around its value and an editable number. Moving
// either rewrites that number in the sheet, so the sheet stays the whole
// model (autosave, links and files need nothing more). Which parameters
// there are, and where their numbers stand, comes from the solver's own
// reader (`readSheet`): the page never parses the sheet itself.
import { $, el } from "./dom.js";
import { readSheet } from "./solver.js";

/**
 * The sheet's slider parameters from its outline (readSheet):
 * [{ name, value, text, line, index }], `line` 0-based, `index` where the
 * number starts in that line.
 */
export function sliderParams(outline) {
  return outline.params.filter((p) => p.literal)
    .map((p) => ({ name: p.name, value: p.value, text: p.literal.text, line: p.line - 1, index: p.literal.index }));
}

/** Whether parameter `p`'s number stands where it says in `lines`. */
const standsIn = (lines, p) => lines[p.line]?.startsWith(p.text, p.index) ?? false;

/**
 * `sheet` with parameter `p`'s number replaced by `text`, or null when the
 * sheet no longer has that parameter as a plain number. When the sheet was
 * edited since `p` was read, it is read again.
 */
export function setParam(sheet, p, text) {
  let lines = sheet.split("\n");
  if (!standsIn(lines, p)) {
    let now;
    try { now = sliderParams(readSheet(sheet)).find((q) => q.name === p.name); } catch { return null; }
    if (!now) return null;
    Object.assign(p, now);
  }
  const line = lines[p.line];
  lines[p.line] = line.slice(0, p.index) + text + line.slice(p.index + p.text.length);
  p.text = text;
  return lines.join("\n");
}

/** A short text for a slider value: 4 significant digits, as a sheet number. */
export function sliderText(v) {
  if (v === 0) return "0";
  const s = Number(v.toPrecision(4));
  return Math.abs(s) >= 1e5 || Math.abs(s) < 1e-3 ? s.toExponential().replace("e+", "e") : String(s);
}

/** A slider's range around `v`: [0, 2v] (or [2v, 0]), [-1, 1] around 0; always finite. */
export function rangeFor(v) {
  if (v === 0 || !Number.isFinite(v)) return [-1, 1];
  const far = Math.min(2 * Math.abs(v), Number.MAX_VALUE);
  return v > 0 ? [0, far] : [-far, 0];
}

/**
 * Whether a slider over [lo, hi] no longer suits `v`: `v` lies outside, or
 * the range is orders of magnitude wider than `v` (its steps would jump
 * far past it: 2000 corrected to 0.002).
 */
export function staleRange(lo, hi, v) {
  return !(v >= lo && v <= hi) || hi - lo > 100 * (v === 0 ? 1 : Math.abs(v));
}

let current = [];
let onChange = () => {};

/**
 * Rebuild or refresh the sliders for the sheet with `outline` (readSheet).
 * `changed(sheet, live)` is called as they move.
 */
export function showParams(outline, changed) {
  onChange = changed;
  const params = sliderParams(outline);
  const same = params.length === current.length && params.every((p, i) => p.name === current[i].name);
  $("params-empty").hidden = params.length > 0;
  if (same) {
    // Refresh the numbers; a slider being dragged keeps its range.
    params.forEach((p, i) => {
      Object.assign(current[i], p);
      const row = $("params").children[i];
      const [slider, box] = row.querySelectorAll("input");
      if (document.activeElement !== box) box.value = p.text;
      if (document.activeElement !== slider) {
        if (staleRange(Number(slider.min), Number(slider.max), p.value)) setRange(slider, p.value);
        slider.value = String(p.value);
      }
    });
    return;
  }
  current = params;
  $("params").replaceChildren(...params.map((p) => paramRow(p)));
}

function setRange(slider, v) {
  const [lo, hi] = rangeFor(v);
  slider.min = String(lo);
  slider.max = String(hi);
  slider.step = String((hi - lo) / 400 || "any");
}

function paramRow(p) {
  const id = `param-${p.name}`;
  const slider = el("input", { type: "range", id, "aria-label": `${p.name} slider` });
  setRange(slider, p.value);
  slider.value = String(p.value);
  const box = el("input", { type: "text", inputmode: "decimal", class: "param-value", value: p.text, "aria-label": `${p.name} value`, spellcheck: "false" });
  const apply = (text, live) => {
    const v = Number(text);
    if (text.trim() === "" || !Number.isFinite(v)) { box.classList.add("bad"); return; }
    const sheet = setParam($("sheet").value, p, text.trim());
    box.classList.toggle("bad", sheet === null);
    if (sheet !== null) onChange(sheet, live);
  };
  slider.addEventListener("input", () => {
    const text = sliderText(Number(slider.value));
    box.value = text;
    apply(text, true);
  });
  slider.addEventListener("change", () => { setRange(slider, Number(slider.value)); slider.value = box.value; apply(box.value, false); });
  box.addEventListener("change", () => { apply(box.value, false); setRange(slider, Number(box.value)); slider.value = box.value; });
  box.addEventListener("keydown", (e) => { if (e.key === "Enter") box.dispatchEvent(new Event("change")); });
  return el("div", { class: "param" }, el("label", { for: id, class: "param-name" }, p.name), slider, box);
}
