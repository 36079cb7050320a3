// The accuracy view. The page calls renderAccuracy(container, sheet,
// settings, run) whenever the view is shown or the run changes while it is
// shown (see DEVELOPERS.md, "The accuracy view hook"). This version re-solves
// with the tolerance tightened 100x (adaptive methods) or h halved (fixed
// step) and states, for each final value, how many digits the two agree to.
import { solve, methods } from "./pkg/ratebook.js";
import { el, fmt } from "./dom.js";

// Read when first needed: the solver is started by app.js after the imports.
const isFixedStep = (id) => methods().some((m) => m.id === id && !m.adaptive);

export function renderAccuracy(container, sheet, settings, run) {
  const fixed = isFixedStep(settings.method);
  const tighter = fixed
    ? { ...settings, step: settings.step / 2 }
    : { ...settings, rtol: (settings.rtol ?? 1e-6) / 100, atol: (settings.atol ?? 1e-9) / 100 };
  let check;
  try {
    check = solve(sheet, tighter);
  } catch (e) {
    container.replaceChildren(el("p", { class: "bad" }, `The check run failed: ${e.message}`));
    return;
  }
  const last = run.t.length - 1, cl = check.t.length - 1;
  const rows = [...run.states, ...run.helpers].map((n) => {
    const a = run.values[n][last], b = check.values[n][cl];
    const err = Math.abs(a - b);
    const scale = Math.max(Math.abs(a), Math.abs(b));
    const digits = err === 0 ? 15 : Math.max(0, Math.floor(-Math.log10(err / (scale || 1))));
    return el("tr", {}, el("td", {}, n), el("td", { class: "num" }, fmt(a, 10)), el("td", { class: "num" }, fmt(b, 10)),
      el("td", { class: "num" }, `± ${fmt(err, 2)}`), el("td", { class: "num" }, `about ${Math.min(digits, 15)}`));
  });
  const how = fixed ? `h halved to ${fmt(tighter.step, 4)}` : `tolerances tightened 100x (rtol ${fmt(tighter.rtol, 2)})`;
  container.replaceChildren(
    el("h3", {}, "How far to trust the final values"),
    el("p", {}, `Checked by re-solving with ${how}. The difference estimates the error of the run shown.`),
    el("table", { class: "numbers", id: "accuracy-table" },
      el("tr", {}, ...["quantity", "run", "check", "difference", "digits"].map((h) => el("th", {}, h))), ...rows));
}
