// The guide to the sheet: a searchable side panel beside the editor (the
// Guide button or F1), never over it. Every statement form with a short
// example, the functions with their domains, events and switches, the
// limits, and how to read the accuracy verdict.
//
// The list of functions and the limits come from the solver itself
// (sheetLanguage), so the guide cannot drift from the parser; the notes on
// each function are here, and a test checks that there is exactly one note
// per function and that every example and every stated value holds.
//
// Adding a section is one entry in GUIDE_ENTRIES: { id, part, title, forms,
// text, example, checks }. `text` is paragraphs; `code` is marked with
// backticks; `{name}` is replaced by the solver's limit of that name.
import { sheetLanguage } from "./solver.js";
import { $, el } from "./dom.js";
import { insertIntoSheet, setCompletions } from "./editor.js";

/**
 * What each built-in function does, where it has a value and what it gives
 * outside. `checks`: [expression, value] pairs, each verified by a test.
 * `switch`: where the function is not smooth the solver ends a step exactly
 * there (see the entry "Switches").
 */
export const GUIDE_FUNCTIONS = {
  sqrt: { call: "sqrt(x)", does: "square root", domain: "x ≥ 0; NaN below 0", checks: [["sqrt(2.25)", 1.5], ["sqrt(-1)", NaN]] },
  exp: { call: "exp(x)", does: "e to the power x", domain: "any x; ∞ above about 709.78 (too large for a number)", checks: [["exp(0)", 1], ["exp(710)", Infinity]] },
  ln: { call: "ln(x)", does: "natural logarithm", domain: "x > 0; −∞ at 0, NaN below", checks: [["ln(e)", 1], ["ln(0)", -Infinity], ["ln(-1)", NaN]] },
  log: { call: "log(x)", does: "natural logarithm, the same as ln", domain: "x > 0; −∞ at 0, NaN below", checks: [["log(1)", 0], ["log(-1)", NaN]] },
  log10: { call: "log10(x)", does: "base-10 logarithm", domain: "x > 0; −∞ at 0, NaN below", checks: [["log10(1000)", 3], ["log10(0)", -Infinity]] },
  abs: { call: "abs(x)", does: "absolute value", domain: "any x", switch: "at x = 0", checks: [["abs(-2.5)", 2.5]] },
  sin: { call: "sin(x)", does: "sine, x in radians", domain: "any x", checks: [["sin(pi/2)", 1]] },
  cos: { call: "cos(x)", does: "cosine, x in radians", domain: "any x", checks: [["cos(0)", 1]] },
  tan: { call: "tan(x)", does: "tangent, x in radians", domain: "any x; very large near odd multiples of pi/2 (pi/2 itself is not exact, so never ∞)", checks: [["tan(pi/4)", 0.9999999999999999], ["tan(pi/2)", 16331239353195370]] },
  asin: { call: "asin(x)", does: "arcsine, in radians from −pi/2 to pi/2", domain: "−1 ≤ x ≤ 1; NaN outside", checks: [["asin(1)", Math.PI / 2], ["asin(1.01)", NaN]] },
  acos: { call: "acos(x)", does: "arccosine, in radians from 0 to pi", domain: "−1 ≤ x ≤ 1; NaN outside", checks: [["acos(-1)", Math.PI], ["acos(-2)", NaN]] },
  atan: { call: "atan(x)", does: "arctangent, in radians between −pi/2 and pi/2", domain: "any x", checks: [["atan(1)", Math.PI / 4]] },
  sinh: { call: "sinh(x)", does: "hyperbolic sine", domain: "any x; ±∞ beyond about ±710", checks: [["sinh(0)", 0], ["sinh(-711)", -Infinity]] },
  cosh: { call: "cosh(x)", does: "hyperbolic cosine", domain: "any x; ∞ beyond about ±710", checks: [["cosh(0)", 1], ["cosh(711)", Infinity]] },
  tanh: { call: "tanh(x)", does: "hyperbolic tangent, between −1 and 1", domain: "any x", checks: [["tanh(0)", 0], ["tanh(50)", 1]] },
  asinh: { call: "asinh(x)", does: "inverse hyperbolic sine", domain: "any x", checks: [["asinh(0)", 0]] },
  acosh: { call: "acosh(x)", does: "inverse hyperbolic cosine, ≥ 0", domain: "x ≥ 1; NaN below", checks: [["acosh(1)", 0], ["acosh(0.5)", NaN]] },
  atanh: { call: "atanh(x)", does: "inverse hyperbolic tangent", domain: "−1 < x < 1; ±∞ at ±1, NaN beyond", checks: [["atanh(0)", 0], ["atanh(1)", Infinity], ["atanh(2)", NaN]] },
  floor: { call: "floor(x)", does: "largest whole number not above x", domain: "any x", switch: "at every whole number", checks: [["floor(-2.5)", -3], ["floor(2.5)", 2]] },
  ceil: { call: "ceil(x)", does: "smallest whole number not below x", domain: "any x", switch: "at every whole number", checks: [["ceil(-2.5)", -2], ["ceil(2.1)", 3]] },
  round: { call: "round(x)", does: "nearest whole number; halves go away from zero", domain: "any x", switch: "at every half", checks: [["round(2.5)", 3], ["round(-2.5)", -3]] },
  signum: { call: "signum(x)", does: "1 for positive x and for 0, −1 for negative x", domain: "any x", switch: "at x = 0", checks: [["signum(0)", 1], ["signum(-3)", -1]] },
  sign: { call: "sign(x)", does: "1 above 0, 0 at 0, −1 below 0", domain: "any x", switch: "at x = 0", checks: [["sign(0)", 0], ["sign(-3)", -1], ["sign(7)", 1]] },
  heaviside: { call: "heaviside(x)", does: "0 below 0, 1 at 0 and above: a switch that turns on", domain: "any x", switch: "at x = 0", checks: [["heaviside(-0.1)", 0], ["heaviside(0)", 1]] },
  atan2: { call: "atan2(y, x)", does: "angle of the point (x, y) from the positive x axis, from −pi to pi", domain: "any y, x; atan2(0, 0) is 0", checks: [["atan2(1, -1)", 3 * Math.PI / 4], ["atan2(0, 0)", 0]] },
  pow: { call: "pow(x, y)", does: "x to the power y, the same as x^y", domain: "NaN for negative x with a fractional y; ∞ for 0 to a negative power", checks: [["pow(2, 10)", 1024], ["pow(-8, 1/3)", NaN], ["pow(0, -1)", Infinity]] },
  hypot: { call: "hypot(x, y)", does: "sqrt(x^2 + y^2), without overflow in the squares", domain: "any x, y", checks: [["hypot(3, 4)", 5], ["hypot(3e200, 4e200)", 4.9999999999999995e200]] },
  clamp: { call: "clamp(x, lo, hi)", does: "x held between lo and hi: min(max(x, lo), hi)", domain: "any x; with lo > hi the result is hi", switch: "where x crosses lo and where it crosses hi", checks: [["clamp(5, 0, 2)", 2], ["clamp(-1, 0, 2)", 0], ["clamp(1.5, 0, 2)", 1.5]] },
  min: { call: "min(a, b, …)", does: "the smallest argument; one or more", domain: "any; a NaN argument is passed over", switch: "where two arguments cross", checks: [["min(3, 1, 2)", 1], ["min(sqrt(-1), 2)", 2]] },
  max: { call: "max(a, b, …)", does: "the largest argument; one or more", domain: "any; a NaN argument is passed over", switch: "where two arguments cross", checks: [["max(3, 1, 2)", 3], ["max(sqrt(-1), 2)", 2]] },
};

/** The guide, in order. Each entry is one searchable section. */
export const GUIDE_ENTRIES = [
  {
    id: "sheet", part: "The sheet", title: "What a sheet holds",
    text: [
      "One statement per line: parameters, helpers, rates, initial values and events. Definitions may come in any order; ratebook works out the order itself, and a circle of definitions is an error.",
      "Every state needs a rate and an initial value. Press Solve or simply stop typing: the run follows the sheet. A mistake is underlined where it was found; point at it for the message.",
    ],
    example: "# Walk-in freezer after a power cut: the air warms towards the room\nk = 0.0008          # per second\nroom = 22           # deg C\ndT/dt = k*(room - T)\nT(0) = -18\nstop when T > -5\n",
  },
  {
    id: "comments", part: "The sheet", title: "Comments and blank lines", forms: ["# text"],
    text: [
      "`#` starts a comment: the rest of the line is ignored. Blank lines are ignored too. Comments may hold anything, such as units and names in any script.",
      "The statements themselves are plain ASCII. A look-alike character (−, ×, ÷, ², a curly quote) is pointed out with the character to type instead.",
    ],
    example: "# Brine pond: salt mass in kg, t in days\ndS/dt = -0.002*S    # slow seepage\nS(0) = 90000\n",
  },
  {
    id: "parameters", part: "The sheet", title: "Parameters", forms: ["name = number", "name = expression of parameters"],
    text: [
      "A definition that uses only numbers and other parameters is a parameter: a constant of the run.",
      "A line `name = number` also gets a slider under Parameters; moving it rewrites the number in the sheet, so the sheet stays the whole model.",
    ],
    example: "# Supercapacitor bank discharging into a load\nR = 0.8             # ohm\nC = 2.2             # farad\ntau = R*C           # a parameter too: it uses only parameters\ndV/dt = -V/tau\nV(0) = 12\n",
  },
  {
    id: "helpers", part: "The sheet", title: "Helpers", forms: ["name = expression of t or the states"],
    text: [
      "A definition that uses the independent variable or a state is a helper: it is worked out at every moment, plotted and tabled beside the states, and may be used in rates, events and other helpers.",
    ],
    example: "# Generator day tank: fuel volume in m^3, t in s\nA = 0.8                                  # tank floor, m^2\nburn = 0.00004*(1 + 0.5*sin(2*pi*t/86400)) # m^3/s, load swings over the day\nlevel = V/A                              # a helper: it uses the state V\ndV/dt = -burn\nV(0) = 1.2\nmark when level < 0.5\n",
  },
  {
    id: "rate-d", part: "The sheet", title: "Rates written dX/dt", forms: ["dX/dt = expression"],
    text: [
      "The rate of change of the state `X`. The name after the second `d` is the independent variable: `dX/ds` calls it `s`. Every rate of a sheet uses the same one; with none named it is `t`.",
    ],
    example: "# Flywheel spinning down on bearing friction and air drag, w in rad/s\ndw/dt = -0.02 - 0.0004*w^2\nw(0) = 300\nstop when w < 1\n",
  },
  {
    id: "rate-prime", part: "The sheet", title: "Rates written X'", forms: ["X' = expression"],
    text: [
      "The same as `dX/dt`, shorter. The independent variable is `t`, or the one a `dX/ds` line names.",
    ],
    example: "# Compost heap temperature, t in days\nT' = 0.9*exp(-t/12) - 0.05*(T - 10)\nT(0) = 10\n",
  },
  {
    id: "higher-order", part: "The sheet", title: "Higher derivatives", forms: ["X'' = expression", "d2X/dt2 = expression"],
    text: [
      "A second (third, fourth) derivative makes `X`, `X'` (and `X''`, …) states of their own. Expressions may use them by name, and each needs an initial value. The highest order is {order}.",
    ],
    example: "# Sensor mast swaying after a gust, x in mm\nw = 3.1             # rad/s\nz = 0.04            # damping ratio\nx'' = -2*z*w*x' - w^2*x\nx(0) = 25\nx'(0) = 0\n",
  },
  {
    id: "initial", part: "The sheet", title: "Initial values", forms: ["X(t0) = expression", "X'(t0) = expression"],
    text: [
      "The value of a state at the start time `t0`. The run starts at `t0` and goes to End. All initial values share one start time, and both the start time and the value must be constant: numbers and parameters, not states or helpers.",
    ],
    example: "# Stock of a part in a store, from 8 o'clock; t in hours\nq' = -0.3*q\nq(8) = 40\n",
  },
  {
    id: "operators", part: "Expressions", title: "Operators", forms: ["+  -  *  /  %  ^  ( )"],
    text: [
      "`^` is a power and groups from the right: `2^3^2` is `2^9`. It binds tighter than a leading minus: `-x^2` is `-(x^2)`. `%` is the remainder, with the sign of the left side: `-7 % 3` is `-1`.",
      "Multiplication is always written out: `2*x`, never `2x` (which is an error that says so).",
      "A division by zero is no error: `1/0` is ∞ and `0/0` is NaN (not a number). See \"When a value is NaN or ∞\".",
    ],
    checks: [["2^3^2", 512], ["-2^2", -4], ["-7 % 3", -1], ["7 % 2.5", 2], ["1/0", Infinity], ["0/0", NaN]],
  },
  {
    id: "names", part: "Expressions", title: "Numbers, names and constants", forms: ["12  0.5  1.5e-3", "pi  e"],
    text: [
      "Numbers are written with a digit before the point (`0.5`, not `.5`) and may have an exponent (`1.5e-3`). Numbers are double precision: about 16 significant digits, up to about 1.8e308.",
      "Names are letters, digits and `_`, starting with a letter or `_`; capitals count (`T` and `t` differ). A higher derivative (`x'' = …`) makes `x'` the name of a state. `pi` and `e` are the constants; they and the function names cannot be redefined.",
    ],
    checks: [["pi", Math.PI], ["e", Math.E], ["1.5e-3", 0.0015]],
  },
  {
    id: "functions", part: "Expressions", title: "Functions", functions: true,
    text: [
      "Click a function to put it into the sheet at the caret. Arguments are in radians where an angle is meant. Outside its domain a function gives NaN or ∞ rather than an error.",
    ],
  },
  {
    id: "nan", part: "Expressions", title: "When a value is NaN or ∞",
    text: [
      "A rate that comes out NaN or ∞ (a square root of a level gone negative, a logarithm of zero) makes the solver try smaller steps; when that does not help, the run ends there as failed, saying which function left its range, where and when. The Accuracy tab names the pitfall: the solution left the range where its formula has a value.",
      "A helper may be NaN or ∞ without stopping the run, as long as no rate uses it. Guard a formula where its argument can cross its domain, for example `sqrt(max(h, 0))`.",
    ],
  },
  {
    id: "stop", part: "Events and switches", title: "Stop when", forms: ["stop when a < b", "stop when a > b", "stop when a = b"],
    text: [
      "Ends the run the first time the condition becomes true, at the moment it does: the solver locates the crossing between its steps, not at the nearest output time. The summary gives that time and the values then.",
      "The comparisons are `<`, `<=`, `>`, `>=` and `=`. `<` fires when `a - b` falls through zero, `>` when it rises through zero, `=` either way. A condition already true at the start is no crossing, so it does not fire then.",
    ],
    example: "# Header tank filling until the float switch at 1.8 m\nQ = 0.004           # m^3/s pumped in\nA = 2.5             # m^2\nh' = Q/A\nh(0) = 0.3\nstop when h > 1.8\n",
  },
  {
    id: "mark", part: "Events and switches", title: "Mark when", forms: ["mark when a < b"],
    text: [
      "Records every time the condition becomes true and runs on. Each mark is a line across the time view and a row of the summary; up to {events} are recorded in a run.",
    ],
    example: "# Battery pack: mark when it falls below 50 % and 20 %\nI = 12              # A drawn\nQ' = -I/3600        # Ah\nQ(0) = 40\nmark when Q < 20\nmark when Q < 8\n",
  },
  {
    id: "switches", part: "Events and switches", title: "Switches",
    text: [
      "Where a rate is not smooth, the solver ends a step exactly where it changes, so a jump in a rate costs no accuracy. No statement is needed: the formula brings its switches with it.",
      "The switches are: the zero of `x` in `abs`, `sign`, `signum` and `heaviside`; where the arguments of `min` and `max` cross; `lo` and `hi` of `clamp`; every whole number for `floor` and `ceil`, every half for `round`; and wherever `a/b` is a whole number for `a % b`.",
    ],
    example: "# Glasshouse heater on for the first 3 hours; t in hours, T in deg C\nP = 4*heaviside(3 - t)   # kW\nT' = 0.6*P - 0.25*(T - 5)\nT(0) = 5\n",
  },
  {
    id: "limits", part: "Limits", title: "What a sheet and a run may hold",
    text: [
      "A sheet: up to {lines} lines, {expressionChars} characters in one expression, {states} states, and derivatives up to order {order}.",
      "A run: at most {steps} steps, {outputPoints} output points (beyond that the trajectory is thinned, with a note; events, peaks and end values stay exact) and {events} recorded events. No setting can lift these past 100 million steps, 1 000 000 points or 10 million stored values.",
      "A long solve runs in the background with a Cancel button; the page stays usable.",
    ],
  },
  {
    id: "verdict", part: "Reading the accuracy verdict", title: "What the check does",
    text: [
      "The Accuracy tab solves the model again, more accurately, and compares every result: the end values, event times, peaks and low points. An adaptive run is re-solved with both tolerances divided by 100; a fixed-step run at h/2 and h/4, whose three values also give the observed order. The difference from the check estimates the error of the run shown.",
      "An explicit and an implicit method then solve it once more at the run's tolerance (the cross-check), and probes look for the pitfalls below.",
    ],
  },
  {
    id: "headline", part: "Reading the accuracy verdict", title: "The headline and the table",
    text: [
      "\"All 5 results are good to at least 6 digits\" means each result has at least 6 significant digits that its error leaves standing; the least certain one is named.",
      "\"Do not trust these results as they stand\" means the check disagrees with the run by far more than its settings allow, or a pitfall raised an alarm. Tighten the tolerances or shorten the step, and look at the cautions.",
      "In the table, \"value\" is printed to its trusted digits; \"error\" is the estimated size of its error (±); \"trusted digits\" counts the leading digits the error leaves standing (at most 15), ≈ 0 meaning zero to within the run's accuracy; \"unknown\" means the result could not be checked, for example an event the check did not find; \"check value\" is the more accurate run's value.",
    ],
  },
  {
    id: "pitfalls", part: "Reading the accuracy verdict", title: "Pitfalls",
    text: [
      "An alarm (red) means the results cannot be trusted as they stand; a warning means read them with care; a note is for information. Each names the number behind it and what to do.",
      "The pitfalls: the solution may not be unique; it left the range where its formula has a value; it blows up in finite time; the step is too large for stability; the model is stiff; the accuracy settings are too loose for the digits shown; an event is only grazed; the run and the check found different events, or ended differently.",
      "The check measures the numerical error only. Whether the model and its numbers are right is for you to judge.",
    ],
  },
  {
    id: "convergence", part: "Reading the accuracy verdict", title: "The convergence study",
    text: [
      "Runs a fixed-step method at h, h/2, h/4 and h/8 and compares the observed order with the theory: 1 for Euler, 2 for Heun and the midpoint rule, 4 for RK4. \"Far from theory\" means the steps are not yet small enough, or the model is not smooth there (a switch). A target error gives the step that reaches it.",
    ],
  },
];

/** The solver's functions, limits and constants, once. */
let guideLanguage = null;
function language() {
  guideLanguage ??= sheetLanguage();
  return guideLanguage;
}

/** `text` with `{limit}` filled in from the solver's limits. */
function guideFill(text) {
  const limits = language().limits;
  return text.replace(/\{(\w+)\}/g, (m, k) => (k in limits ? limits[k].toLocaleString("en-US").replace(/,/g, " ") : m));
}

/** Lower-case search terms of a query. */
const guideTerms = (q) => q.toLowerCase().split(/\s+/).filter(Boolean);

const guideMatches = (hay, terms) => terms.every((t) => hay.includes(t));

/** Text as nodes: `code` in backticks, search terms marked. */
function guideText(text, terms) {
  const out = [];
  text.split("`").forEach((part, i) => {
    if (!part) return;
    const nodes = guideMark(part, terms);
    out.push(...(i % 2 ? [el("code", {}, ...nodes)] : nodes));
  });
  return out;
}

function guideMark(text, terms) {
  if (!terms.length) return [text];
  const lower = text.toLowerCase();
  const out = [];
  let at = 0;
  while (at < text.length) {
    let best = -1, len = 0;
    for (const t of terms) {
      const i = lower.indexOf(t, at);
      if (i >= 0 && (best < 0 || i < best)) { best = i; len = t.length; }
    }
    if (best < 0) break;
    if (best > at) out.push(text.slice(at, best));
    out.push(el("mark", {}, text.slice(best, best + len)));
    at = best + len;
  }
  if (at < text.length) out.push(text.slice(at));
  return out;
}

/** The functions as rows, in the solver's order, with their notes. */
function functionRows() {
  return language().functions.map((f) => {
    const note = GUIDE_FUNCTIONS[f.name] ?? { call: `${f.name}(…)`, does: "", domain: "" };
    const arity = f.arity == null ? "one or more arguments" : `${f.arity} argument${f.arity === 1 ? "" : "s"}`;
    // Not capitalised: the notes start with names (x, e), and capitals count in a sheet.
    const lines = [`${note.does}.`, `${note.domain}.`];
    if (note.switch) lines.push(`Switch ${note.switch}.`);
    return { name: f.name, call: note.call, arity, lines, hay: `${f.name} ${note.call} ${lines.join(" ")} ${arity}`.toLowerCase() };
  });
}

function entryHay(e) {
  return [e.part, e.title, ...(e.forms ?? []), ...e.text.map(guideFill), e.example ?? ""].join(" ").toLowerCase();
}

function renderEntry(e, terms) {
  const own = guideMatches(entryHay(e), terms);
  let table = null;
  if (e.functions) {
    const rows = functionRows().filter((r) => own || guideMatches(r.hay, terms));
    if (!own && !rows.length) return null;
    table = el("table", { class: "guide-functions" }, ...rows.map((r) => el("tr", { "data-fn": r.name },
      el("td", {}, el("button", { type: "button", class: "guide-fn", "data-insert-fn": r.name, title: `Put ${r.name}( into the sheet at the caret (${r.arity})` }, ...guideMark(r.call, terms))),
      el("td", {}, ...r.lines.flatMap((l, i) => [i ? el("br") : "", el("span", { class: i ? "muted" : null }, ...guideMark(l, terms))])))));
  } else if (!own) {
    return null;
  }
  const example = e.example ? [
    el("pre", { class: "guide-example" }, ...guideMark(e.example, terms)),
    el("button", { type: "button", class: "small", "data-insert-example": e.id }, "Insert into the sheet"),
  ] : [];
  return el("article", { class: "guide-entry", id: `guide-${e.id}` },
    el("h4", {}, ...guideMark(e.title, terms)),
    ...(e.forms ?? []).map((f) => el("p", { class: "guide-form" }, el("code", {}, ...guideMark(f, terms)))),
    ...e.text.map((t) => el("p", {}, ...guideText(guideFill(t), terms))),
    ...(table ? [table] : []),
    ...example);
}

/** Show the entries that match the search box, grouped by part. */
function renderGuide() {
  const terms = guideTerms($("guide-search").value);
  const parts = new Map();
  for (const e of GUIDE_ENTRIES) {
    const node = renderEntry(e, terms);
    if (!node) continue;
    if (!parts.has(e.part)) parts.set(e.part, []);
    parts.get(e.part).push(node);
  }
  const shown = [...parts.values()].reduce((n, list) => n + list.length, 0);
  $("guide-body").replaceChildren(...[...parts].map(([part, nodes]) =>
    el("section", { class: "guide-part" }, el("h3", {}, part), ...nodes)));
  $("guide-count").textContent = !terms.length ? "" : shown
    ? `${shown} section${shown === 1 ? "" : "s"} match.`
    : "Nothing matches; try one word, such as a function name or \"event\".";
}

/** Open or close the guide beside the editor (`open` omitted: toggle). */
export function toggleGuide(open) {
  const panel = $("guide");
  const show = open ?? panel.hidden;
  panel.hidden = !show;
  document.body.classList.toggle("guide-open", show);
  $("guide-toggle").setAttribute("aria-expanded", String(show));
  if (show) $("guide-search").focus();
  else $("sheet").focus();
}

/** Build the guide and wire its button, key and inserts. Call after the solver has started. */
export function initGuide() {
  const fns = language().functions;
  setCompletions(fns.map((f) => ({ name: f.name, detail: GUIDE_FUNCTIONS[f.name]?.call ?? `${f.name}(…)`, fn: true }))
    .concat(language().constants.map((c) => ({ name: c, detail: "constant" }))));
  renderGuide();
  $("guide-search").addEventListener("input", renderGuide);
  $("guide-toggle").addEventListener("click", () => toggleGuide());
  $("guide-close").addEventListener("click", () => toggleGuide(false));
  $("guide").addEventListener("keydown", (e) => {
    if (e.key !== "Escape") return;
    e.preventDefault();
    if (e.target.id === "guide-search" && e.target.value) { e.target.value = ""; renderGuide(); } else toggleGuide(false);
  });
  document.addEventListener("keydown", (e) => {
    if (e.key === "F1" && !document.body.classList.contains("embed")) { e.preventDefault(); toggleGuide(); }
  });
  $("guide-body").addEventListener("click", (e) => {
    const fn = e.target.closest("[data-insert-fn]");
    if (fn) { insertIntoSheet(`${fn.dataset.insertFn}(`); return; }
    const ex = e.target.closest("[data-insert-example]");
    const entry = ex && GUIDE_ENTRIES.find((g) => g.id === ex.dataset.insertExample);
    if (entry) insertIntoSheet(entry.example, { asLines: true });
  });
}
