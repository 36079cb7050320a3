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
