// Emitted models in Chromium, under the page's own Content-Security-Policy:
// they compile with 'wasm-unsafe-eval' and nothing broader, agree bit for bit
// with the interpreter on the generated corpus and every example sheet, work
// the same in a Web Worker, and give way to the interpreter when compilation
// is refused.
import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { existsSync, readFileSync } from "node:fs";
import { join } from "node:path";
import { WWW, serveWww, launch, openPage } from "./harness.mjs";
import { corpus, points } from "../node/emit_corpus.mjs";

let server, context;
before(async () => { server = await serveWww(); context = await launch(); });
after(async () => { await context?.close(); await server?.close(); });

/** Load the solver into the page (a no-op if the page already has). */
async function solverPage() {
  const opened = await openPage(context, server.url);
  await opened.page.evaluate(async () => {
    const rb = await import("/pkg/ratebook.js");
    const { wasmBytes } = await import("/pkg/wasm_bytes.js");
    rb.initSync({ module: await wasmBytes() });
    globalThis.rb = rb;
  });
  return opened;
}

/** In the page: check each `{ sheet, pts }`; returns the failures, or [] when all agree bit for bit. */
function checkAll(cases) {
  const out = [];
  let values = 0;
  for (const { sheet, pts } of cases) {
    const r = globalThis.rb.emitCheck(sheet, pts, null);
    values += r.compiled.length;
    if (!r.emitted) { out.push(`not emitted: ${sheet}`); continue; }
    const a = r.interpreted, b = r.compiled;
    for (let i = 0; i < a.length; i++) {
      if (!Object.is(a[i], b[i])) { out.push(`value ${i}: ${a[i]} vs ${b[i]} in ${sheet}`); break; }
    }
  }
  return { failures: out, values };
}

test("the CSP allows 'wasm-unsafe-eval' and nothing broader", () => {
  const html = readFileSync(join(WWW, "index.html"), "utf8");
  const csp = html.match(/http-equiv="Content-Security-Policy" content="([^"]*)"/)?.[1] ?? "";
  const scriptSrc = csp.split(";").map((s) => s.trim()).find((s) => s.startsWith("script-src")) ?? "";
  assert.match(scriptSrc, /'wasm-unsafe-eval'/);
  assert.doesNotMatch(csp, /'unsafe-eval'/);
});

test("the corpus and every example agree bit for bit in the page", async () => {
  const { page, errors } = await solverPage();
  const cases = corpus(0xc0de, 150).map(({ sheet, dim }) => ({ sheet, pts: points(dim, 10, sheet.length) }));
  const { failures, values } = await page.evaluate(checkAll, cases);
  assert.deepEqual(failures, []);
  assert.ok(values > 30_000, `only ${values} values compared`);
  if (existsSync(join(WWW, "examples.js"))) {
    const examples = await page.evaluate(async () => {
      const { EXAMPLES } = await import("/examples.js");
      return EXAMPLES.map((e) => ({ sheet: e.sheet, dim: globalThis.rb.emitCheck(e.sheet, [], null).dim }));
    });
    assert.ok(examples.length >= 5, `${examples.length} examples`);
    const ex = examples.flatMap(({ sheet, dim }) => [1, 50, 1e4].map((scale) => ({ sheet, pts: points(dim, 8, sheet.length, scale) })));
    assert.deepEqual((await page.evaluate(checkAll, ex)).failures, []);
  }
  assert.deepEqual(errors, []);
  await page.close();
});

test("a Web Worker emits and installs modules the same way", async () => {
  const { page, errors } = await solverPage();
  const sheet = "g = 9.81\ny' = v\nv' = -g*sin(y) - 0.1*v*abs(v) + 0.2*cos(t)\ny(0) = 1\nv(0) = 0\nmark when y < 0\n";
  const pts = points(2, 50, 5);
  const [inPage, inWorker] = await page.evaluate(async ({ sheet, pts }) => {
    const main = globalThis.rb.emitCheck(sheet, pts, null);
    const code = `
      import * as rb from "${location.origin}/pkg/ratebook.js";
      self.onmessage = (e) => {
        rb.initSync({ module: e.data.module });
        const r = rb.emitCheck(e.data.sheet, e.data.pts, null);
        self.postMessage({ emitted: r.emitted, interpreted: Array.from(r.interpreted), compiled: Array.from(r.compiled) });
      };`;
    const w = new Worker(URL.createObjectURL(new Blob([code], { type: "text/javascript" })), { type: "module" });
    const { wasmBytes } = await import("/pkg/wasm_bytes.js");
    const module = await WebAssembly.compile(await wasmBytes());
    const reply = await new Promise((ok, fail) => { w.onmessage = (e) => ok(e.data); w.onerror = (e) => fail(String(e.message)); w.postMessage({ module, sheet, pts }); });
    w.terminate();
    return [{ emitted: main.emitted, compiled: Array.from(main.compiled) }, reply];
  }, { sheet, pts });
  assert.equal(inPage.emitted, true);
  assert.equal(inWorker.emitted, true);
  assert.ok(inWorker.compiled.every((v, i) => Object.is(v, inWorker.interpreted[i])));
  assert.ok(inWorker.compiled.every((v, i) => Object.is(v, inPage.compiled[i])));
  assert.deepEqual(errors, []);
  await page.close();
});

test("when compilation is refused the interpreter gives the same values", async () => {
  const { page, errors } = await solverPage();
  const sheet = "x' = -x*y + y + sin(y)\ny' = x - heaviside(x)\nx(0) = 1\ny(0) = 0\n";
  const r = await page.evaluate(({ sheet, pts }) => {
    const Module = WebAssembly.Module;
    WebAssembly.Module = function () { throw new EvalError("WebAssembly compilation is not allowed here"); };
    try {
      const refused = globalThis.rb.emitCheck(sheet, pts, null);
      return { emitted: refused.emitted, same: refused.interpreted.every((v, i) => Object.is(v, refused.compiled[i])) };
    } finally {
      WebAssembly.Module = Module;
    }
  }, { sheet, pts: points(2, 20, 9) });
  assert.deepEqual(r, { emitted: false, same: true });
  assert.deepEqual(errors, []);
  await page.close();
});
