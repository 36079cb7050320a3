// The solver in a Web Worker, for solves and studies that may take a while.
// It receives the compiled WebAssembly.Module from the page (so it never
// fetches anything) and answers { id, ok, value } or { id, ok: false, error }.
import { initSync, solve, compareMethods, checkAccuracy, convergenceStudy } from "./pkg/ratebook.js";
import { initGuard, guarded } from "./guard.js";

/** A job's progress callback: posts { id, progress: [done, total] } (total 0: unknown). */
const progressOf = (m) => (done, total) => self.postMessage({ id: m.id, progress: [done, total] });

// A panic restarts this worker's solver; the job fails with its message.
const jobs = {
  solve: guarded((m) => solve(m.sheet, m.settings)),
  compare: guarded((m) => compareMethods(m.sheet, m.settings, m.request, progressOf(m))),
  accuracy: guarded((m) => checkAccuracy(m.sheet, m.settings, progressOf(m))),
  convergence: guarded((m) => convergenceStudy(m.sheet, m.settings, progressOf(m))),
};

self.onmessage = (event) => {
  const m = event.data;
  if (m.kind === "init") {
    initSync({ module: m.module });
    initGuard(m.module);
    self.postMessage({ ready: true });
    return;
  }
  try {
    self.postMessage({ id: m.id, ok: true, value: jobs[m.kind](m) });
  } catch (e) {
    self.postMessage({ id: m.id, ok: false, error: { message: String(e?.message ?? e), line: e?.line, column: e?.column } });
  }
};
