// The page's own modules in Node, where they need no DOM: the sheet reader
// and what the sliders make of it, link inflation under its limit, and the
// single file's module scoping (scripts/inline.mjs).
import { test } from "node:test";
import assert from "node:assert/strict";
import { readFileSync, writeFileSync, mkdtempSync, mkdirSync } from "node:fs";
import { join } from "node:path";
import { tmpdir } from "node:os";
import { pathToFileURL } from "node:url";
import { deflateRawSync } from "node:zlib";
import { startSolver, readSheet } from "../../www/solver.js";
import { sliderParams, setParam, rangeFor, staleRange } from "../../www/params.js";
import { inflateWithin, readFragment, KeptModelError, MAX_KEPT_BYTES } from "../../www/keep.js";
import { bundle } from "../../scripts/inline.mjs";

startSolver(new WebAssembly.Module(readFileSync(new URL("../../www/pkg/ratebook_bg.wasm", import.meta.url))));

test("readSheet gives the start time as the solver reads it, an expression included", () => {
  // Issue 22, finding 9: `t0 = 6` with `y(t0) = 1` was read as a start of 0.
  assert.equal(readSheet("t0 = 6\ny' = -y\ny(t0) = 1\n").start, 6);
  assert.equal(readSheet("y' = -y\ny(-1.5) = 1\n").start, -1.5);
  const o = readSheet("# decay\nk = 0.25  # per hour\nk2 = 2*k\nr = k2*y\ny' = -r\ny(0) = 8\n");
  assert.deepEqual(o.states, ["y"]);
  assert.deepEqual(o.helpers, ["r"]);
  assert.deepEqual(o.params.map((p) => [p.name, p.value, p.line]), [["k", 0.25, 2], ["k2", 0.5, 3]]);
  assert.equal(o.params[1].literal, undefined, "a parameter defined from others gets no slider");
  // A sheet that cannot be read throws the solver's error with its place.
  assert.throws(() => readSheet("y' = -y\ny(0) = (1\n"), (e) => e.line === 2 && e.column > 0 && /./.test(e.message));
  assert.throws(() => readSheet(42), /the sheet must be a string/);
});

test("sliders rewrite exactly the number the solver read, and find it again after an edit", () => {
  const sheet = "k = 2000   # per second\nc=-3e1\ny' = -k*y + c\ny(0) = 1\n";
  const params = sliderParams(readSheet(sheet));
  assert.deepEqual(params.map((p) => [p.name, p.text, p.line, p.index]), [["k", "2000", 0, 4], ["c", "-3e1", 1, 2]]);
  const k = params[0];
  const once = setParam(sheet, k, "0.002");
  assert.equal(once, sheet.replace("k = 2000", "k = 0.002"));
  assert.equal(setParam(once, k, "0.0021"), sheet.replace("k = 2000", "k = 0.0021"), "the parameter keeps its place as its text changes");
  // The user edited the sheet since: the number is found again by the reader.
  const edited = "# a new first line\n" + once.replace("k = 0.002", "k  =  0.002");
  assert.equal(setParam(edited, k, "5"), edited.replace("k  =  0.002", "k  =  5"));
  // A parameter that is no longer a plain number is left alone.
  assert.equal(setParam("k = 2*3\ny' = -k*y\ny(0) = 1\n", { ...k, line: 0, index: 4, text: "0.1" }, "7"), null);
});

test("a slider's range is always finite and follows a value that moves by orders of magnitude", () => {
  // Issue 22, finding 8.
  for (const v of [1e308, -1e308, Number.MAX_VALUE, 5e-324, 0, 2000, -0.5]) {
    const [lo, hi] = rangeFor(v);
    assert.ok(Number.isFinite(lo) && Number.isFinite(hi) && lo <= v && v <= hi && lo < hi, `${v}: [${lo}, ${hi}]`);
  }
  const [lo, hi] = rangeFor(2000);
  assert.equal(staleRange(lo, hi, 0.002), true, "2000 corrected to 0.002");
  assert.equal(staleRange(lo, hi, 0), true);
  assert.equal(staleRange(lo, hi, 5000), true);
  // Benign: a value the range was made for, or moved within it.
  assert.equal(staleRange(lo, hi, 2000), false);
  assert.equal(staleRange(lo, hi, 150), false);
  assert.equal(staleRange(...rangeFor(0), 0.3), false);
});

test("a link that inflates past the limit is refused as it streams, without inflating it all", async () => {
  // Issue 22, finding 5: 200 MB of spaces deflate to about 200 KB.
  const inner = Buffer.concat([Buffer.from('{"v":1,"sheet":"'), Buffer.alloc(200 << 20, 0x20), Buffer.from('"}')]);
  const bomb = deflateRawSync(inner, { level: 9 });
  assert.ok(bomb.length < MAX_KEPT_BYTES / 2);
  const before = process.memoryUsage().arrayBuffers;
  await assert.rejects(readFragment("#m=" + bomb.toString("base64url")), (e) => e instanceof KeptModelError && /over 1 MB/.test(e.message));
  const grown = process.memoryUsage().arrayBuffers - before;
  assert.ok(grown < 32 << 20, `inflating stopped near the limit (${(grown / 1e6).toFixed(0)} MB held)`);
  assert.equal(await inflateWithin(bomb, MAX_KEPT_BYTES), null);
  // Benign: a link just under the limit inflates whole.
  const near = Buffer.alloc(MAX_KEPT_BYTES - 10, 0x61);
  assert.deepEqual(Buffer.from(await inflateWithin(deflateRawSync(near), MAX_KEPT_BYTES)), near);
  const link = "#m=" + deflateRawSync(Buffer.from(JSON.stringify({ v: 1, sheet: "y' = -y\ny(0) = 1\n", settings: { to: 3 } }))).toString("base64url");
  assert.deepEqual(await readFragment(link), { sheet: "y' = -y\ny(0) = 1\n", settings: { to: 3 } });
  await assert.rejects(readFragment("#m=" + Buffer.from("not deflate at all").toString("base64url")), /damaged/);
});

test("the single file keeps each module's scope: the same top-level name in two modules, renamed imports", async () => {
  const dir = mkdtempSync(join(tmpdir(), "ratebook-scope-"));
  mkdirSync(join(dir, "pkg"));
  writeFileSync(join(dir, "pkg", "lib.js"), "let count = 0;\nexport function next() { return ++count; }\nconst hidden = 'lib';\nexport { hidden as name };\nexport default next;\n");
  writeFileSync(join(dir, "a.js"), 'import { next as bump, name } from "./pkg/lib.js";\nconst hidden = "a";\nexport const fromA = () => [hidden, name, bump()];\n');
  writeFileSync(join(dir, "main.js"), 'import * as lib from "./pkg/lib.js";\nimport first from "./pkg/lib.js";\nimport { fromA } from "./a.js";\nconst hidden = await Promise.resolve("main");\nglobalThis.scopeResult = [hidden, ...fromA(), first(), lib.next(), typeof count];\n');
  const code = bundle(join(dir, "main.js"), dir);
  const file = join(dir, "bundle.mjs");
  writeFileSync(file, code);
  await import(pathToFileURL(file).href);
  // Three modules declare `hidden`; lib's `count` is its own; one instance of lib is shared.
  assert.deepEqual(globalThis.scopeResult, ["main", "a", "lib", 1, 2, 3, "undefined"]);
  // Forms the wrapper cannot keep are refused at build time.
  writeFileSync(join(dir, "bad.js"), "export let x = 1;\n");
  assert.throws(() => bundle(join(dir, "bad.js"), dir), /export form/);
});
