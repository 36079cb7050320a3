// Emitted models against the interpreter, in Node, through the same www/pkg
// the page loads: every evaluation a solver can ask for (rates, helpers,
// events, switches, Jacobian, ∂f/∂t, helper rates) must agree bit for bit (Object.is, so
// signed zeros count and any NaN equals any NaN) on a generated corpus of
// sheets covering every function of the sheet language, on every example
// sheet of the page, and on hand-picked edge cases.
import { test } from "node:test";
import assert from "node:assert/strict";
import { existsSync, readFileSync } from "node:fs";
import { initSync, emitCheck, emitModule, setEmitting, solve } from "../../www/pkg/ratebook.js";
import { corpus, points, sameBits } from "./emit_corpus.mjs";

const examplesUrl = new URL("../../www/examples.js", import.meta.url);
const EXAMPLES = existsSync(examplesUrl) ? (await import(examplesUrl)).EXAMPLES : null;
const solver = initSync({ module: readFileSync(new URL("../../www/pkg/ratebook_bg.wasm", import.meta.url)) });
const table = Object.values(solver).find((v) => v instanceof WebAssembly.Table);

/** Check `sheet` at `pts`; returns the number of values compared. */
function check(sheet, pts, live) {
  const r = emitCheck(sheet, pts, live);
  assert.ok(r.emitted, `not emitted:\n${sheet}`);
  assert.equal(r.interpreted.length, r.compiled.length);
  const bad = sameBits(r.interpreted, r.compiled);
  assert.equal(bad, -1, `value ${bad} differs: interpreter ${r.interpreted[bad]}, emitted ${r.compiled[bad]}\n${sheet}`);
  return r;
}

test("the generated corpus: emitted and interpreted agree bit for bit", () => {
  let values = 0;
  const sheets = corpus(0x5eed, 400);
  for (const { sheet, dim } of sheets) values += check(sheet, points(dim, 12, sheet.length)).compiled.length;
  assert.ok(values > 100_000, `only ${values} values compared`);
});

test("every example sheet of the page agrees bit for bit", { skip: !EXAMPLES && "the page has no examples yet" }, () => {
  assert.ok(EXAMPLES.length >= 5);
  for (const ex of EXAMPLES) {
    const { emitted, dim } = emitCheck(ex.sheet, [], null);
    assert.ok(emitted, ex.id);
    // Points near the example's own scale and far from it.
    for (const scale of [1, 50, 1e4]) check(ex.sheet, points(dim, 8, ex.id.length, scale));
  }
});

test("special values: zeros of both signs, infinities, NaN, huge and tiny", () => {
  const sheet = `x' = sign(x) + heaviside(y) + abs(x)*floor(y) - ceil(x) + signum(y) + round(x) + x%y
y' = sqrt(x) + ln(y) + log10(x) + exp(y) + 1/x + y^0.5 + x^-2 + pow(x, y) + hypot(x, y)
z' = min(x, y) + max(x, y, z) + atan2(x, y) + clamp(z, x, y) + asin(x) + acosh(y) + atanh(z)
x(0) = 1
y(0) = 2
z(0) = 3
mark when x > y
`;
  const specials = [0, -0, Infinity, -Infinity, NaN, 1e308, -1e-308, 5e-324, 0.5, -0.5, 1, -1];
  const pts = [];
  for (const a of specials) for (const b of specials) pts.push(0, a, b, specials[(pts.length / 4) % specials.length]);
  check(sheet, pts);
});

test("live parameters are read from memory: setting them needs no new module", () => {
  const sheet = `k = 0.3
c = 2*k
q = c*sqrt(abs(h))
h' = -q + k*sin(t)
h(0) = 4
stop when h < k
`;
  const pts = points(1, 20, 7);
  const once = check(sheet, pts, [["k", 0.7]]);
  const thrice = check(sheet, pts, [["k", 0.7], ["k", 1.9], ["k", 0.25]]);
  // One module after making k live, one for the derivatives, one for the
  // helpers' gradients; none per value.
  assert.equal(once.loads, 4);
  assert.equal(thrice.loads, 4);
  // And the value is used: it changes the rates.
  const other = check(sheet, pts, [["k", 0.25]]);
  assert.deepEqual(Array.from(thrice.compiled), Array.from(other.compiled));
  assert.notDeepEqual(Array.from(once.compiled), Array.from(other.compiled));
});

test("second-order sheets, helpers used by helpers, and a 20-state chain", () => {
  check(`w = 2.5
x'' = -w^2*x - 0.1*x' + cos(t)
x(0) = 1
x'(0) = 0
`, points(2, 30, 3));
  const n = 20;
  let chain = "k = 0.8\n";
  for (let i = 0; i < n; i++) {
    const up = i === 0 ? "sin(t)" : `u${i - 1}`;
    chain += `f${i} = k*(${up} - u${i})\n`;
    chain += `u${i}' = f${i} - 0.01*u${i}^3\n`;
    chain += `u${i}(0) = ${i / 10}\n`;
  }
  chain += "mark when u19 > 0.5\n";
  check(chain, points(n, 10, 11));
});

test("the module is valid wasm and small", () => {
  const bytes = emitModule("h' = -0.004/1.5*sqrt(2*9.81*h)\nh(0) = 2\n");
  assert.ok(WebAssembly.validate(bytes));
  assert.ok(bytes.length < 1000, `${bytes.length} bytes`);
});

test("the interpreter takes over when emitting is off or compilation is refused", () => {
  const sheet = "x' = -x*y + y + sin(y)\ny' = x\nx(0) = 1\ny(0) = 0\n";
  setEmitting(false);
  try {
    assert.equal(emitCheck(sheet, [0, 1, 2], null).emitted, false);
  } finally {
    setEmitting(true);
  }
  const Module = WebAssembly.Module;
  WebAssembly.Module = function () { throw new WebAssembly.CompileError("refused by policy"); };
  try {
    const r = emitCheck(sheet, [0, 1, 2], null);
    assert.equal(r.emitted, false);
    assert.equal(sameBits(r.interpreted, r.compiled), -1);
  } finally {
    WebAssembly.Module = Module;
  }
  assert.equal(emitCheck(sheet, [0, 1, 2], null).emitted, true);
});

test("table slots are reused: many models do not grow the table without bound", () => {
  const sheet = "x' = cos(x)\nx(0) = 1\n";
  check(sheet, [0.5, 0]);
  const before = table.length;
  for (let i = 0; i < 2000; i++) check(sheet, [0.5, i / 100]);
  assert.ok(table.length <= before + 6, `table grew from ${before} to ${table.length}`);
});

/** Every number of a report, in order, for a bitwise comparison. */
function numbers(report) {
  const out = [];
  const walk = (v) => {
    if (typeof v === "number") out.push(v);
    else if (Array.isArray(v)) v.forEach(walk);
    else if (v && typeof v === "object") Object.keys(v).sort().forEach((k) => walk(v[k]));
  };
  walk(report);
  return out;
}

function solveBothWays(sheet, settings) {
  setEmitting(false);
  let interpreted;
  try {
    interpreted = solve(sheet, settings);
  } finally {
    setEmitting(true);
  }
  const emitted = solve(sheet, settings);
  return { interpreted, emitted };
}

test("whole runs through the JS API are bit-identical with emitting on and off", () => {
  // Every example with most methods; the corpus (capped in steps,
  // since random rates can be stiff or blow up) with two.
  const runs = [];
  // rosenbrock-4 and radau-iia-5 call the emitted Jacobian (and rosenbrock-4 ∂f/∂t) too.
  const all = ["dormand-prince-5", "dormand-prince-8", "bogacki-shampine-3", "auto", "heun", "rosenbrock-4", "radau-iia-5"];
  // `spacing` is the page's own setting (its table's grid), not the solver's.
  for (const ex of EXAMPLES ?? []) {
    const { spacing, ...settings } = ex.settings;
    runs.push([ex.id, ex.sheet, settings, all]);
  }
  for (const [i, { sheet }] of corpus(0xab1e, 30).entries()) runs.push([`corpus ${i}`, sheet, { to: 2, stepLimit: 3000 }, ["dormand-prince-5", "heun"]]);
  let compared = 0;
  for (const [name, sheet, settings, methods] of runs) {
    for (const method of methods) {
      const r = solveBothWays(sheet, { ...settings, method, step: settings.step ?? 0.01 });
      assert.equal(r.emitted.status, r.interpreted.status, `${name} ${method}`);
      const a = numbers(r.interpreted), b = numbers(r.emitted);
      assert.equal(sameBits(a, b), -1, `${name} ${method}: reports differ`);
      compared += a.length;
    }
  }
  assert.ok(compared > (EXAMPLES ? 100_000 : 10_000), `only ${compared} numbers compared`);
});
