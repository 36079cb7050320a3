// The solver in a Web Worker, for solves and studies that may take a while.
// It receives the compiled WebAssembly.Module from the page (so it never
// fetches anything) and answers { id, ok, value } or { id, ok: false, error }.
import { initSync, solve, compareMethods } from "./pkg/ratebook.js";
import { initGuard, guarded } from "./guard.js";

// A panic restarts this worker's solver; the job fails with its message.
const jobs = {
  solve: guarded((m) => solve(m.sheet, m.settings)),
  compare: guarded((m) => compareMethods(m.sheet, m.settings, m.request, (done, total) => {
    self.postMessage({ id: m.id, progress: [done, total] });
  })),
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
