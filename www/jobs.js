// The solver's jobs, in one table for both places they run: the Web Worker
// (worker.js) and the page's own thread (runner.js, when no worker can
// start, and app.js for a quick model's slider drag). A job is a message
// { kind, ...arguments }; `progress(done, total)` reports as it goes
// (total 0 when not known).
import { solve, readSheet, compareMethods, checkAccuracy, convergenceStudy } from "./solver.js";
import { grid } from "./runinfo.js";

/** Output times of a plotted run. */
export const PLOT_POINTS = 600;

/**
 * What the page shows for `sheet` with the page's run `settings` (with
 * their `spacing`): the sheet's outline (`readSheet`), the plotted run at
 * PLOT_POINTS output times, and with `table` the run at the output
 * spacing (every step when there is none). Throws the sheet's error, with
 * its line and column, before solving anything.
 */
function show({ sheet, settings, table }) {
  const outline = readSheet(sheet);
  const { spacing, ...base } = settings;
  const t0 = outline.start;
  const plot = solve(sheet, { ...base, at: grid(t0, base.to, Math.abs(base.to - t0) / PLOT_POINTS) });
  if (!table) return { outline, plot };
  return { outline, plot, table: solve(sheet, spacing === undefined ? base : { ...base, at: grid(t0, base.to, spacing) }) };
}

const JOBS = {
  show,
  compare: (m, progress) => compareMethods(m.sheet, m.settings, m.request, progress),
  accuracy: (m, progress) => checkAccuracy(m.sheet, m.settings, progress),
  convergence: (m, progress) => convergenceStudy(m.sheet, m.settings, progress),
};

/** Run the job `m` here and return its value; throws the solver's error. */
export function runJob(m, progress) {
  const job = JOBS[m.kind];
  if (!job) throw new Error(`no job of kind "${m.kind}"`);
  // Test hook: a deliberate panic armed on the page travels with its job.
  if (m.armTestPanic) globalThis.ratebookArmTestPanic = true;
  return job(m, progress);
}
