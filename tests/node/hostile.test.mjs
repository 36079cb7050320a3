// Hostile settings, sheets and calls through the JS API in Node: each must
// come back promptly with a result or an Error, within the step, output and
// event caps (checked on sizes and work counters, never on wall time), and a
// panic must leave a solver that can be made usable again.
import { test } from "node:test";
import assert from "node:assert/strict";
import { readFileSync } from "node:fs";
import { initSync, solve, testPanic, dropInstance, compareMethods, fieldView, checkAccuracy, convergenceStudy, stabilityRegion, stabilitySvg, Plot } from "../../www/pkg/ratebook.js";
import { initGuard, guarded, SolverPanic, panicsRecovered } from "../../www/guard.js";

const module = new WebAssembly.Module(readFileSync(new URL("../../www/pkg/ratebook_bg.wasm", import.meta.url)));
initSync({ module });
initGuard(module);

const DECAY = "k = 0.3\ndy/dt = -k*y\ny(0) = 2\n";
const SWING = "w = 2\nx'' = -w^2*x\nx(0) = 1\nx'(0) = 0\nmark when x > 0\n";
// The defaults of the caps (src/solve/mod.rs, Settings::default).
const MAX_STEPS = 1e6, MAX_OUTPUT = 200000, MAX_EVENTS = 10000;

function bounded(r) {
  assert.ok(r.stats.steps <= MAX_STEPS, `${r.stats.steps} steps`);
  assert.ok(r.t.length <= MAX_OUTPUT, `${r.t.length} points`);
  assert.ok(r.events.length <= MAX_EVENTS + 1);
  for (const name of [...r.states, ...r.helpers]) assert.equal(r.values[name].length, r.t.length);
  assert.ok(r.stats.rhsEvals <= 40 * (r.stats.steps + r.stats.rejected) + 100, JSON.stringify(r.stats));
  return r;
}

function refused(sheet, settings, pattern) {
  assert.throws(() => solve(sheet, settings), (e) => {
    assert.ok(e instanceof Error, `not an Error: ${e}`);
    assert.ok(!(e instanceof WebAssembly.RuntimeError), `the solver aborted: ${e.message}`);
    if (pattern) assert.match(e.message, pattern);
    return true;
  });
}

test("h = 1e-300 stops at the step cap with a decimated trajectory", () => {
  const r = bounded(solve(DECAY, { to: 10, method: "rk4", step: 1e-300 }));
  assert.equal(r.status, "failed");
  assert.equal(r.stats.steps, MAX_STEPS);
  assert.ok(r.diagnostics.some((d) => d.code === "decimated"));
  assert.equal(r.diagnostics.at(-1).code, "max-steps");
});

test("to = 1e300 ends within the caps, forward and backward", () => {
  for (const [sheet, to] of [[DECAY, 1e300], [SWING, 1e300], [DECAY, -1e300]]) {
    const r = bounded(solve(sheet, { to }));
    assert.ok(["finished", "failed"].includes(r.status));
  }
  const r = bounded(solve(SWING, { to: 1e300, method: "euler", step: 0.01 }));
  assert.equal(r.status, "failed");
});

test("a relative tolerance of 0 runs on the absolute one alone; both zero is refused", () => {
  const r = bounded(solve(DECAY, { to: 10, tolerance: { relative: 0, absolute: 1e-9 } }));
  assert.equal(r.status, "finished");
  // Analytic: y(10) = 2·exp(-3).
  assert.ok(Math.abs(r.values.y.at(-1) - 2 * Math.exp(-3)) < 1e-7);
  refused(DECAY, { to: 10, tolerance: { relative: 0, absolute: 0 } }, /both be zero/);
});

test("ten million output times are refused with the limit", () => {
  const n = 1e7;
  const at = new Array(n);
  for (let i = 0; i < n; i++) at[i] = i / n;
  refused(DECAY, { to: 1, at }, /10000000 output times/);
  refused(DECAY, { to: 1, at, outputLimit: 1e300 }, /output/);
});

test("enormous caps are refused rather than obeyed", () => {
  refused(SWING, { to: 1e300, stepLimit: 1e300 }, /`stepLimit`/);
  refused(SWING, { to: 1, outputLimit: 1e300 }, /`outputLimit`/);
  refused(SWING, { to: 1, eventLimit: 1e300 }, /`eventLimit`/);
});

test("NaN, infinite and negative values anywhere are refused", () => {
  for (const v of [NaN, Infinity, -Infinity, -1, -1e-300]) {
    refused(DECAY, { to: Number.isFinite(v) ? NaN : v });
    for (const key of ["startStep", "largestStep", "stepLimit", "outputLimit", "eventLimit"]) {
      refused(DECAY, { to: 1, [key]: v }, new RegExp(`\`${key}\``));
    }
    refused(DECAY, { to: 1, tolerance: { relative: v } }, /`tolerance.relative`/);
    refused(DECAY, { to: 1, tolerance: { absolute: v } }, /`tolerance.absolute`/);
    refused(DECAY, { to: 1, method: "rk4", step: v });
    refused(DECAY, { to: 1, at: [0, v, 1] });
  }
  // A NaN parameter override is refused with the parameter named.
  for (const v of [NaN, Infinity]) refused(DECAY, { to: 1, params: { k: v } }, /`k`.*finite/);
  // NaN from the sheet itself.
  refused("dy/dt = -y\ny(0) = sqrt(-1)\n", { to: 1 });
  const s = bounded(solve("k = 0/0\ndy/dt = -k*y\ny(0) = 1\n", { to: 1 }));
  assert.equal(s.status, "failed");
});

test("settings of the wrong shape are refused, not obeyed", () => {
  refused(DECAY, { to: "ten" }, /settings/);
  refused(DECAY, { to: 1, at: "0,1" }, /settings/);
  refused(DECAY, { to: 1, at: [0, "x", 1] }, /settings/);
  refused(DECAY, { to: 1, params: { k: "2" } }, /settings/);
  refused(DECAY, { to: 1, params: { nope: 2 } }, /no parameter/);
  refused(DECAY, { to: 1, method: "<img src=x onerror=alert(1)>" }, /unknown method/);
  refused(DECAY, 42);
  refused(DECAY, {});
  refused(DECAY, { to: 1, tolerance: 1e-6 }, /relative, absolute/);
  // Unknown keys, __proto__ among them, are refused by name.
  refused(DECAY, JSON.parse('{"to": 1, "__proto__": {"stepLimit": 1}}'), /unknown setting `__proto__`/);
  refused(DECAY, { to: 1, bogus: true }, /unknown setting `bogus`; the settings are to, method, step/);
  assert.equal(bounded(solve(DECAY, { to: 1 })).status, "finished");
});

test("sheets of the wrong type or size give an Error", () => {
  for (const sheet of [undefined, null, 42, {}, [], ""]) {
    assert.throws(() => solve(sheet, { to: 1 }), (e) => e instanceof Error && !(e instanceof WebAssembly.RuntimeError), String(sheet));
  }
  assert.throws(() => solve(42, { to: 1 }), /sheet must be a string/);
  const huge = "dy/dt = -y\ny(0) = 1\n" + "# filler\n".repeat(120000);
  refused(huge, { to: 1 }, /line/);
  const long = `dy/dt = -y${" + 0*y".repeat(4000)}\ny(0) = 1\n`;
  refused(long, { to: 1 });
});

test("every export refuses arguments of the wrong type with an Error, and the solver goes on", () => {
  const clean = (f, pattern, what) => assert.throws(f, (e) => {
    assert.ok(e instanceof Error, `${what}: not an Error: ${e}`);
    assert.ok(!(e instanceof WebAssembly.RuntimeError), `${what}: the solver aborted: ${e.message}`);
    assert.match(e.message, pattern, what);
    return true;
  });
  for (const bad of [undefined, null, 42, {}, [], true, Symbol.iterator, () => "x", 10n]) {
    const what = typeof bad === "symbol" ? "a symbol" : String(bad);
    clean(() => compareMethods(bad, { to: 1 }), /sheet must be a string/, `compareMethods(${what})`);
    clean(() => fieldView(bad, { to: 1 }), /sheet must be a string/, `fieldView(${what})`);
    clean(() => checkAccuracy(bad, { to: 1 }), /sheet must be a string/, `checkAccuracy(${what})`);
    clean(() => convergenceStudy(bad, { to: 1, step: 0.1 }), /sheet must be a string/, `convergenceStudy(${what})`);
    clean(() => stabilityRegion(bad, [0, 0]), /method must be a string/, `stabilityRegion(${what})`);
    clean(() => stabilitySvg("rk4", bad, [0, 0], 100, 100), /title must be a string/, `stabilitySvg(${what})`);
    clean(() => new Plot(bad, "y"), /x label must be a string/, `new Plot(${what})`);
    const p = new Plot("x", "y");
    clean(() => p.line(bad, [0, 1], [0, 1], 0, 1, false, false), /label must be a string/, `line label ${what}`);
    clean(() => p.mark(0, 0, bad, 0, 0), /label must be a string/, `mark label ${what}`);
    clean(() => p.rule(0, bad), /label must be a string/, `rule label ${what}`);
    if (!Array.isArray(bad)) {
      clean(() => p.line("a", bad, [0, 1], 0, 1, false, false), /array of numbers/, `line x ${what}`);
      clean(() => p.field(bad, true), /array of numbers/, `field ${what}`);
      clean(() => stabilityRegion("rk4", bad), /array of numbers/, `stabilityRegion points ${what}`);
    }
    // The same plot still takes good input and draws.
    p.line("a", [0, 1], new Float64Array([0, 1]), 0, 1, false, false);
    assert.match(p.svg(200, 150), /<svg/);
    p.free();
  }
  // Arrays holding something other than numbers are refused too.
  const p = new Plot("x", "y");
  clean(() => p.line("a", [0, "1"], [0, 1], 0, 1, false, false), /array of numbers/, "a string in x");
  clean(() => p.field([0, 0, 1, {}], true), /array of numbers/, "an object in the field");
  // Drawing needs a canvas; in Node there is none, and that is an Error too.
  clean(() => p.draw({ width: 10 }), /canvas/, "draw on a non-canvas");
  p.free();
  // Good calls still work after all of that.
  assert.equal(compareMethods(DECAY, { to: 1 }, { step: 0.1 }).runs.length > 0, true);
  assert.equal(fieldView(DECAY, { to: 1 }).kind, "slope");
  assert.equal(bounded(solve(DECAY, { to: 1 })).status, "finished");
});

test("the accuracy check and the convergence study report progress: unknown total, then an estimate", () => {
  const seen = [];
  checkAccuracy(DECAY, { to: 400, tolerance: { relative: 1e-11 } }, (done, total) => seen.push([done, total]));
  assert.ok(seen.length >= 1);
  assert.ok(seen.slice(0, -1).every(([, total]) => total === 0), "the check cannot tell its total beforehand");
  assert.ok(seen.at(-1)[0] === seen.at(-1)[1] && seen.at(-1)[1] > 0, "the last report is complete");
  const conv = [];
  convergenceStudy(DECAY, { to: 10, method: "rk4", step: 0.001 }, (done, total) => conv.push([done, total]));
  // RK4: 10 000 steps at h, 1 + 2 + 4 + 8 times that in all, four stages each.
  assert.ok(conv.length > 10);
  assert.ok(conv.every(([, total]) => total === 10000 * 15 * 4));
  assert.ok(conv.every(([d], i) => i === 0 || d >= conv[i - 1][0]), "done only grows");
  assert.deepEqual(conv.at(-1), [600000, 600000]);
  // A progress argument that is not a function is ignored.
  assert.ok(convergenceStudy(DECAY, { to: 1, method: "rk4", step: 0.1 }, 42).lines.length > 0);
});

test("200 states solve within the caps", () => {
  let sheet = "k = 2\n";
  for (let i = 0; i < 200; i++) sheet += `du${i}/dt = k*(${i ? `u${i - 1}` : "1"} - u${i})\nu${i}(0) = 0\n`;
  const r = bounded(solve(sheet, { to: 10, stepLimit: 20000 }));
  assert.equal(r.status, "finished");
  assert.equal(r.states.length, 200);
  // Stored values stay within 10 million (points × columns).
  assert.ok(r.t.length * 200 <= 1e7);
});

test("output is decimated with a note; events are capped with a warning", () => {
  const r = bounded(solve(SWING, { to: 100, method: "euler", step: 1e-4, outputLimit: 1000 }));
  assert.ok(r.t.length <= 1000);
  assert.equal(r.t.at(-1), 100);
  assert.ok(r.diagnostics.some((d) => d.code === "decimated"));
  const e = bounded(solve(SWING, { to: 1000, eventLimit: 3 }));
  assert.equal(e.events.length, 3);
  assert.ok(e.diagnostics.some((d) => d.code === "max-events"));
});

test("the test panic is inert unless armed", () => {
  assert.equal(testPanic(), false);
  assert.equal(bounded(solve(DECAY, { to: 1 })).status, "finished");
});

test("after a panic the hook has the message and a new instance works", () => {
  globalThis.ratebookArmTestPanic = true;
  assert.throws(() => testPanic(), (e) => e instanceof WebAssembly.RuntimeError);
  assert.match(globalThis.ratebookPanic, /deliberate test panic/);
  assert.equal(globalThis.ratebookArmTestPanic, false, "one arming makes one panic");
  dropInstance();
  initSync({ module });
  assert.equal(bounded(solve(DECAY, { to: 1 })).status, "finished");
});

test("guarded calls turn a panic into a SolverPanic and restart the solver", () => {
  const before = panicsRecovered();
  const guardedSolve = guarded(solve);
  globalThis.ratebookArmTestPanic = true;
  assert.throws(() => guardedSolve(DECAY, { to: 1 }), (e) => {
    assert.ok(e instanceof SolverPanic);
    assert.match(e.message, /deliberate test panic/);
    assert.match(e.message, /sheet is kept/);
    return true;
  });
  assert.equal(panicsRecovered(), before + 1);
  // The restarted solver gives the same answer as before, bit for bit.
  const a = guardedSolve(DECAY, { to: 3 });
  const b = solve(DECAY, { to: 3 });
  assert.deepEqual(a.values.y, b.values.y);
  // Ordinary errors pass through untouched.
  assert.throws(() => guardedSolve("dy/dt = -y\n", { to: 1 }), (e) => !(e instanceof SolverPanic) && e.line === 1);
});
