// The solver in a Web Worker, for solves and studies that may take a while.
// It receives the compiled WebAssembly.Module from the page (so it never
// fetches anything) and answers { id, ok, value } or { id, ok: false, error },
// with { id, progress: [done, total] } as a job goes (total 0: unknown).
import { startSolver } from "./solver.js";
import { runJob } from "./jobs.js";

self.onmessage = (event) => {
  const m = event.data;
  if (m.kind === "init") {
    startSolver(m.module);
    self.postMessage({ ready: true });
    return;
  }
  try {
    self.postMessage({ id: m.id, ok: true, value: runJob(m, (done, total) => self.postMessage({ id: m.id, progress: [done, total] })) });
  } catch (e) {
    self.postMessage({ id: m.id, ok: false, error: { message: String(e?.message ?? e), line: e?.line, column: e?.column } });
  }
};
