// The JS API in Node, loaded from www/pkg exactly as the page loads it.
import { test } from "node:test";
import assert from "node:assert/strict";
import { readFileSync } from "node:fs";
import { initSync, solve, version, checkAccuracy, convergenceStudy, compareMethods, fieldView } from "../../www/pkg/ratebook.js";

initSync({ module: readFileSync(new URL("../../www/pkg/ratebook_bg.wasm", import.meta.url)) });

test("version is the crate version", () => {
  assert.match(version(), /^\d+\.\d+\.\d+$/);
});

test("Newton cooling matches its analytic solution", () => {
  // Analytic: T(t) = 22 + 158·exp(-0.0021 t).
  const run = solve("T' = -0.0021*(T - 22)\nT(0) = 180\n", { to: 1200, method: "rk4", step: 1.2 });
  assert.equal(run.status, "finished");
  const last = run.t.length - 1;
  assert.ok(Math.abs(run.t[last] - 1200) < 1e-9);
  const exact = 22 + 158 * Math.exp(-0.0021 * 1200);
  assert.ok(Math.abs(run.values.T[last] - exact) < 1e-8, `${run.values.T[last]} vs ${exact}`);
  assert.ok(run.stats.rhsEvals > 0);
});

test("an unreadable sheet throws an Error with line and column", () => {
  assert.throws(() => solve("T' = -0.0021*(T - 22\nT(0) = 180\n", { to: 10 }), (e) => {
    assert.ok(e instanceof Error);
    assert.equal(e.line, 1);
    assert.equal(typeof e.column, "number");
    return true;
  });
});

test("a report's columns are plain arrays, and a sheet solved again gives the same report", () => {
  const sheet = "k = 0.8\nq = k*sqrt(abs(h))\nh' = -q\nh(0) = 3\nmark when h < 1\n";
  const a = solve(sheet, { to: 5 });
  for (const col of [a.t, ...Object.values(a.values)]) {
    assert.ok(Array.isArray(col));
    assert.equal(col.length, a.t.length);
  }
  assert.deepEqual(Object.keys(a), ["independent", "method", "states", "helpers", "t", "values", "events", "extrema",
    "diagnostics", "status", "reached", "error", "stats"]);
  assert.deepEqual(Object.keys(a.values), ["h", "q"]);
  // The second call reuses the compiled sheet; a third with a new value of k
  // recompiles; both agree with the first exactly (JSON keeps every digit).
  assert.equal(JSON.stringify(solve(sheet, { to: 5 })), JSON.stringify(a));
  const other = solve(sheet, { to: 5, params: { k: 0.5 } });
  assert.notEqual(JSON.stringify(other), JSON.stringify(a));
  assert.equal(JSON.stringify(solve(sheet.replace("k = 0.8", "k = 0.5"), { to: 5 })), JSON.stringify(other));
});

test("settings of the wrong kind are refused in plain words that name the setting", () => {
  const sheet = "y' = -y\ny(0) = 1\n";
  const refused = (settings, pattern) => assert.throws(() => solve(sheet, settings), (e) => {
    assert.ok(e instanceof Error && !(e instanceof WebAssembly.RuntimeError), String(e));
    assert.match(e.message, pattern);
    assert.doesNotMatch(e.message, /JsValue|Reflect|invalid type|expected/);
    return true;
  });
  refused(5, /^the settings must be an object of named settings, such as \{ to: 10 \}, not a number$/);
  refused("to=1", /not a string$/);
  refused([1, 2], /not an array$/);
  refused({ to: 1, at: () => 1 }, /^settings: `at` must be an array, not a function$/);
  refused({ to: "10" }, /^settings: `to` must be a number, not a string$/);
  refused({ to: 1, at: [0, "x"] }, /^settings: `at` must hold a number in each entry$/);
  refused({ to: 1, params: { k: "x" } }, /^settings: `params` must hold a number in each entry$/);
  assert.throws(() => compareMethods(sheet, { to: 1 }, 7), /^Error: the comparison must be an object/);
});

test("a misspelt or former setting name is an Error naming the one meant", () => {
  const COOL = "T' = -0.0021*(T - 22)\nT(0) = 180\n";
  assert.throws(() => solve(COOL, { to: 1, rtoll: 1e-6 }), /unknown setting `rtoll`; did you mean `tolerance.relative`\?/);
  assert.throws(() => solve(COOL, { to: 1, tolerance: { relativ: 1e-6 } }), /unknown setting `tolerance.relativ`; did you mean `tolerance.relative`\?/);
  assert.throws(() => solve(COOL, { to: 1, rtol: 1e-6 }), /the setting `rtol` has a new name: `tolerance.relative`/);
  assert.throws(() => solve(COOL, { to: 1, maxSteps: 10 }), /the setting `maxSteps` has a new name: `stepLimit`/);
  assert.throws(() => solve(COOL, { to: 1, method: "dp54" }), /the method id `dp54` has a new name: `dormand-prince-5`/);
  // The same check runs under the other calls that take run settings.
  for (const call of [checkAccuracy, convergenceStudy, compareMethods, fieldView]) {
    assert.throws(() => call(COOL, { to: 1, atoll: 1e-9 }), /unknown setting `atoll`; did you mean `tolerance.absolute`\?/, call.name);
  }
  const run = solve(COOL, { to: 1, tolerance: { relative: 1e-8, absolute: 1e-10 }, stepLimit: 100, startStep: 0.1, largestStep: 0.5 });
  assert.equal(run.status, "finished");
});
