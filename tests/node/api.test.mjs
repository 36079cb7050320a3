// The JS API in Node, loaded from www/pkg exactly as the page loads it.
import { test } from "node:test";
import assert from "node:assert/strict";
import { readFileSync } from "node:fs";
import { initSync, solve, version } from "../../www/pkg/ratebook.js";

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
