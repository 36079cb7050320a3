// The Chromium side of scripts/bench.d/user: the page's worker, and both paths in a worker.
import { readFileSync } from "node:fs";
import { pathToFileURL } from "node:url";
const { serveWww, launch, openPage } = await import(pathToFileURL(process.cwd() + "/tests/e2e/harness.mjs"));
const { cases } = JSON.parse(readFileSync("target/bench/user/cases.json", "utf8"));
const server = await serveWww();
const context = await launch();
const { page } = await openPage(context, server.url);
await page.waitForFunction(() => document.body.dataset.ready === "1", null, { timeout: 30000 });
const rows = await page.evaluate(async (cases) => {
  const { wasmBytes } = await import("./pkg/wasm_bytes.js");
  const module = await WebAssembly.compile(await wasmBytes());
  const median = (v) => { const s = [...v].sort((a, b) => a - b); return s[Math.floor(s.length / 2)]; };
  const start = (w) => new Promise((ok) => { w.onmessage = () => ok(); w.postMessage({ kind: "init", module }); });
  // 1. The page's own worker: a job posted, its report back, as the page runs it.
  const pageWorker = new Worker(new URL("./worker.js", location.href), { type: "module" });
  await start(pageWorker);
  let id = 0;
  const job = (msg) => new Promise((ok, no) => {
    const me = ++id;
    pageWorker.onmessage = (e) => { if (e.data.id === me) (e.data.ok ? ok(e.data.value) : no(new Error(e.data.error.message))); };
    pageWorker.postMessage({ ...msg, id: me });
  });
  // 2. A worker running both paths, timing batches of calls (the page's clock
  //    is coarse: about 0.1 ms without cross-origin isolation).
  const src = `import * as rb from ${JSON.stringify(new URL("./pkg/ratebook.js", location.href).href)};
    self.onmessage = (e) => {
      const m = e.data;
      if (m.kind === "init") { rb.initSync({ module: m.module }); self.postMessage({}); return; }
      const { c, s } = m, now = () => performance.now();
      const batch = (f) => { let n = 0; const a = now(); do { f(); n++; } while (now() - a < 20); return (now() - a) / n; };
      batch(() => rb.solve(c.sheet, s));
      const user = [], compiled = [];
      for (let k = 0; k < 7; k++) {
        user.push(batch(() => rb.solve(c.sheet, s)));
        compiled.push(batch(() => rb.bench_stiff_run(c.problem, c.method, c.rtol, c.atol, 1)));
      }
      self.postMessage({ user, compiled });
    };`;
  const ab = new Worker(URL.createObjectURL(new Blob([src], { type: "text/javascript" })), { type: "module" });
  await start(ab);
  const side = (c, s) => new Promise((ok) => { ab.onmessage = (e) => ok(e.data); ab.postMessage({ c, s }); });
  const out = [];
  for (const c of cases) {
    const s = { to: c.to, method: c.method, tolerance: { relative: c.rtol, absolute: c.atol } };
    for (let k = 0; k < 3; k++) await job({ kind: "solve", sheet: c.sheet, settings: s });
    const times = [];
    const t0 = performance.now();
    while (times.length < 9 || (performance.now() - t0 < 300 && times.length < 500)) {
      const a = performance.now();
      await job({ kind: "solve", sheet: c.sheet, settings: s });
      times.push(performance.now() - a);
    }
    const both = await side(c, s);
    // The fastest of each: Chromium has no CPU clock, and on a shared machine
    // most samples include time spent waiting for a core.
    out.push({ problem: c.problem, method: c.method, rtol: c.rtol, pageWorkerMs: Math.min(...times),
      pageWorkerMedianMs: median(times), workerUserMs: Math.min(...both.user), workerCompiledMs: Math.min(...both.compiled) });
  }
  pageWorker.terminate();
  ab.terminate();
  return out;
}, cases);
await context.close();
await server.close();
console.log(JSON.stringify(rows));
