// Plots of extreme sheets in Node: `Plot.svg()` comes back with a whole SVG
// document, in a bounded time. Each drawing runs in a worker thread that is
// terminated after the bound, so a drawing that never ends fails the test
// instead of hanging it. (The sheet with a(0) = 1e308 and b(0) = -1e308
// once looped for ever in the tick code.)
import { test } from "node:test";
import assert from "node:assert/strict";
import { Worker } from "node:worker_threads";

const BOUND_MS = 20000;
const PKG = new URL("../../www/pkg/", import.meta.url).href;

/** Solve `sheet` and draw every state against t, as the time view does, in a worker; resolves to the SVG. */
function drawInWorker(sheet, settings) {
  const code = `
    const { parentPort, workerData } = require("node:worker_threads");
    const { readFileSync } = require("node:fs");
    (async () => {
      const m = await import(workerData.pkg + "ratebook.js");
      m.initSync({ module: readFileSync(new URL(workerData.pkg + "ratebook_bg.wasm")) });
      const run = m.solve(workerData.sheet, workerData.settings);
      const plot = new m.Plot(run.independent, "value");
      run.states.forEach((s, i) => plot.line(s, run.t, run.values[s], i, 2, false, false));
      for (const e of run.events) plot.rule(e.t, e.name);
      const svg = plot.svg(820, 440);
      plot.free();
      parentPort.postMessage({ svg, status: run.status });
    })().catch((e) => parentPort.postMessage({ error: String(e?.message ?? e) }));`;
  return new Promise((resolve, reject) => {
    const w = new Worker(code, { eval: true, workerData: { pkg: PKG, sheet, settings } });
    const timer = setTimeout(() => { w.terminate(); reject(new Error(`no drawing within ${BOUND_MS} ms`)); }, BOUND_MS);
    w.once("message", (m) => { clearTimeout(timer); w.terminate(); m.error ? reject(new Error(m.error)) : resolve(m); });
    w.once("error", (e) => { clearTimeout(timer); reject(e); });
  });
}

const SHEETS = [
  ["two constant states at ±1e308", "a' = 0\na(0) = 1e308\nb' = 0\nb(0) = -1e308\n"],
  ["one state at the largest double", "a' = 0\na(0) = 1.7976931348623157e308\n"],
  ["a state overflowing to infinity", "y' = y^2\ny(0) = 1\n"],
  ["a span under one unit in the last place", "y' = 1e-300\ny(0) = 1\n"],
  ["a subnormal state", "y' = 0\ny(0) = 5e-324\n"],
];

for (const [name, sheet] of SHEETS) {
  test(`the plot of ${name} is drawn`, async () => {
    const { svg } = await drawInWorker(sheet, { to: 10 });
    assert.ok(svg.startsWith("<svg") && svg.trimEnd().endsWith("</svg>"), svg.slice(0, 200));
    assert.doesNotMatch(svg, /NaN|Infinity|inf,|"inf/);
  });
}
