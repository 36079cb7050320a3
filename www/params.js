// Parameters as sliders: every sheet line `name = number` gets a slider
// around its value and an editable number. Moving either rewrites that line
// of the sheet, so the sheet stays the whole model (autosave, links and files
// need nothing more).
import { $, el } from "./dom.js";

const PARAM_LINE = /^(\s*)([A-Za-z_][A-Za-z_0-9]*)(\s*=\s*)([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)(\s*(?:#.*)?)$/;

/** The sheet's numeric parameters: [{ name, value, text, line }] (line 0-based). */
export function findParams(sheet) {
  const out = [];
  sheet.split("\n").forEach((line, i) => {
    const m = PARAM_LINE.exec(line);
    if (m) out.push({ name: m[2], value: Number(m[4]), text: m[4], line: i });
  });
  return out;
}

/** `sheet` with parameter `name`'s number replaced by `text`. */
export function setParam(sheet, name, text) {
  return sheet.split("\n").map((line) => {
    const m = PARAM_LINE.exec(line);
    return m && m[2] === name ? m[1] + m[2] + m[3] + text + m[5] : line;
  }).join("\n");
}

/** A short text for a slider value: 4 significant digits, as a sheet number. */
export function sliderText(v) {
  if (v === 0) return "0";
  const s = Number(v.toPrecision(4));
  return Math.abs(s) >= 1e5 || Math.abs(s) < 1e-3 ? s.toExponential().replace("e+", "e") : String(s);
}

function rangeFor(v) {
  if (v === 0) return [-1, 1];
  return v > 0 ? [0, 2 * v] : [2 * v, 0];
}

let current = [];
let onChange = () => {};

/** Rebuild or refresh the sliders for `sheet`. `changed(sheet, live)` is called as they move. */
export function showParams(sheet, changed) {
  onChange = changed;
  const params = findParams(sheet);
  const same = params.length === current.length && params.every((p, i) => p.name === current[i].name);
  $("params-empty").hidden = params.length > 0;
  if (same) {
    // Refresh the numbers; a slider being dragged keeps its range.
    params.forEach((p, i) => {
      const row = $("params").children[i];
      const [slider, box] = row.querySelectorAll("input");
      if (document.activeElement !== box) box.value = p.text;
      if (document.activeElement !== slider) {
        if (p.value < Number(slider.min) || p.value > Number(slider.max)) setRange(slider, p.value);
        slider.value = String(p.value);
      }
    });
    current = params;
    return;
  }
  current = params;
  $("params").replaceChildren(...params.map((p) => paramRow(p)));
}

function setRange(slider, v) {
  const [lo, hi] = rangeFor(v);
  slider.min = String(lo);
  slider.max = String(hi);
  slider.step = String((hi - lo) / 400);
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
    box.classList.remove("bad");
    const sheet = setParam($("sheet").value, p.name, text.trim());
    onChange(sheet, live);
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
