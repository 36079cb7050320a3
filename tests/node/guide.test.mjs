// The in-page guide against the solver: it describes exactly the functions
// the parser accepts, every value it states is the value the solver gives,
// every example is a sheet that runs, and its limits are the solver's.
import { test } from "node:test";
import assert from "node:assert/strict";
import { readFileSync } from "node:fs";
import { initSync, solve, sheetLanguage } from "../../www/pkg/ratebook.js";
import { GUIDE_ENTRIES, GUIDE_FUNCTIONS } from "../../www/guide.js";

initSync({ module: readFileSync(new URL("../../www/pkg/ratebook_bg.wasm", import.meta.url)) });

const lang = sheetLanguage();

/** The value of a constant expression, as a helper of a one-state sheet computes it. */
function value(expr) {
  const run = solve(`v = (${expr}) + 0*t\ny' = 0\ny(0) = 0\n`, { to: 1, method: "rk4", step: 1 });
  assert.equal(run.status, "finished", expr);
  return run.values.v[0];
}

/** Equal, NaN to NaN, or within a few units in the last place (the guide's values are typed in decimal). */
function same(got, want) {
  if (Number.isNaN(want) || !Number.isFinite(want) || want === 0) return Object.is(got, want) || (want === 0 && got === 0);
  return Math.abs(got - want) <= 4 * Number.EPSILON * Math.abs(want);
}

test("the guide has a note for exactly the functions the parser accepts", () => {
  const names = lang.functions.map((f) => f.name).sort();
  assert.deepEqual(Object.keys(GUIDE_FUNCTIONS).sort(), names);
  assert.ok(names.length >= 30, "the solver lists its functions");
  // Every function the solver lists is one the parser takes, with that many arguments.
  for (const f of lang.functions) {
    const args = Array.from({ length: f.arity ?? 2 }, (_, i) => String(i + 1)).join(", ");
    assert.doesNotThrow(() => value(`${f.name}(${args})`), f.name);
  }
  // A name that is not listed is refused.
  assert.throws(() => value("cbrt(8)"), /unknown function/);
});

test("each note writes its function with the solver's number of arguments", () => {
  for (const f of lang.functions) {
    const call = GUIDE_FUNCTIONS[f.name].call;
    assert.ok(call.startsWith(`${f.name}(`), call);
    const inner = call.slice(f.name.length + 1, -1);
    if (f.arity == null) assert.match(inner, /…/, `${f.name} takes one or more arguments`);
    else assert.equal(inner.split(",").length, f.arity, call);
  }
});

test("every value the guide states is the value the solver gives", () => {
  const checks = [...Object.values(GUIDE_FUNCTIONS), ...GUIDE_ENTRIES].flatMap((g) => g.checks ?? []);
  assert.ok(checks.length >= 50, `${checks.length} checks`);
  for (const [expr, want] of checks) {
    const got = value(expr);
    assert.ok(same(got, want), `${expr} gives ${got}, the guide says ${want}`);
  }
});

test("every example in the guide is a sheet that runs", () => {
  const examples = GUIDE_ENTRIES.filter((e) => e.example);
  assert.ok(examples.length >= 10);
  for (const e of examples) {
    const run = solve(e.example, { to: 1 });
    assert.notEqual(run.status, "failed", `${e.id}: ${run.error}`);
    assert.ok(run.states.length > 0, e.id);
  }
});

test("the guide's entries are one each, with the fields the panel shows", () => {
  const ids = GUIDE_ENTRIES.map((e) => e.id);
  assert.equal(new Set(ids).size, ids.length, "ids are unique");
  for (const e of GUIDE_ENTRIES) {
    assert.ok(e.part && e.title && Array.isArray(e.text) && e.text.length, e.id);
    for (const t of e.text) {
      for (const [, k] of t.matchAll(/\{(\w+)\}/g)) assert.ok(k in lang.limits, `${e.id}: {${k}} is a limit the solver states`);
    }
  }
});

test("a name the guide's text writes as code is one the sheet language knows, or one of its example", () => {
  // Catches a renamed function left behind in the prose.
  const placeholders = new Set(["x", "y", "a", "b", "lo", "hi", "t", "s", "X", "T", "t0", "d", "_"]);
  const known = new Set([...lang.functions.map((f) => f.name), ...lang.constants]);
  for (const e of GUIDE_ENTRIES) {
    const own = new Set((e.example ?? "").match(/[A-Za-z_]\w*/g) ?? []);
    for (const t of e.text) {
      for (const [, name] of t.matchAll(/`([A-Za-z_]\w*)`/g)) {
        assert.ok(known.has(name) || placeholders.has(name) || own.has(name), `${e.id}: \`${name}\` is not a function, a constant or a name of its example`);
      }
    }
  }
});

test("the guide states the limits the README promises", () => {
  const readme = readFileSync(new URL("../../README.md", import.meta.url), "utf8");
  const limits = GUIDE_ENTRIES.find((e) => e.id === "limits").text.join(" ");
  const ceilings = "No setting can lift these past 100 million steps, 1 000 000 points or 10 million stored values.";
  assert.ok(limits.includes(ceilings) && readme.includes(ceilings));
  const spaced = (n) => n.toLocaleString("en-US").replace(/,/g, " ");
  assert.ok(readme.includes(`at most ${spaced(lang.limits.steps)} steps by default`));
  assert.ok(readme.includes(`at most ${spaced(lang.limits.outputPoints)} output points`));
  assert.ok(readme.includes(`at most ${spaced(lang.limits.events)} recorded events`));
});

test("what the guide says of NaN and of events holds", () => {
  // "A rate that comes out NaN … the run ends there as failed, saying which function left its range, where and when."
  const rate = solve("y' = -sqrt(y)\ny(0) = 1\n", { to: 5 }); // exact: y = (1 - t/2)^2, zero at t = 2
  assert.equal(rate.status, "failed");
  assert.ok(Math.abs(rate.t.at(-1) - 2) < 1e-3, `ends at t = ${rate.t.at(-1)}`);
  assert.match(rate.error, /sqrt/);
  assert.match(rate.error, /dy\/dt/);
  // "A helper may be NaN or ∞ without stopping the run, as long as no rate uses it."
  const helper = solve("y' = -1\ny(0) = 1\nq = sqrt(y)\n", { to: 5 });
  assert.equal(helper.status, "finished");
  assert.ok(Number.isNaN(helper.values.q.at(-1)));
  // "A condition already true at the start is no crossing, so it does not fire then."
  const already = solve("y' = -1\ny(0) = 1\nstop when y < 5\n", { to: 3 });
  assert.equal(already.status, "finished");
  assert.equal(already.events.length, 0);
  // "`<` fires when a - b falls through zero, `>` when it rises": y = 1 - t falls through 0.5 at t = 0.5.
  const falling = solve("y' = -1\ny(0) = 1\nmark when y > 0.5\nmark when y < 0.5\n", { to: 1 });
  assert.deepEqual(falling.events.map((e) => e.name), ["y < 0.5"]);
  assert.ok(Math.abs(falling.events[0].t - 0.5) < 1e-12);
});
