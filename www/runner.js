// Where jobs run (jobs.js). Solves and studies go to a Web Worker, with a
// progress bar and a cancel button, so the page never freezes; only a quick
// model's slider drag solves on the page's thread (app.js). The worker is
// built from the inlined bundle in the single file (a blob URL, which works
// from file:// and in a sandboxed frame) or from worker.js when served.
import { $ } from "./dom.js";
import { runJob } from "./jobs.js";

let sharedSolverModule = null;
let worker = null;
let workerBroken = false;
let nextId = 1;
const RESTART_AFTER_MS = 100;
const pending = new Map();

/** Give the runner the compiled solver module (shared with the worker). */
export function setModule(module) {
  sharedSolverModule = module;
}

let bundleUrl = null;
function workerUrl() {
  const src = $("worker-src")?.textContent ?? "";
  if (!src.trim()) return new URL("./worker.js", import.meta.url);
  bundleUrl ??= URL.createObjectURL(new Blob([src], { type: "text/javascript" }));
  return bundleUrl;
}

function startWorker() {
  if (worker || workerBroken || !sharedSolverModule) return worker;
  try {
    worker = new Worker(workerUrl(), { type: "module" });
  } catch {
    workerBroken = true;
    return null;
  }
  worker.onmessage = (e) => {
    const m = e.data;
    const job = pending.get(m.id);
    if (!job) return;
    if (m.progress) { job.onProgress?.(m.progress[0], m.progress[1]); return; }
    pending.delete(m.id);
    finishBusy(job);
    if (m.ok) job.resolve(m.value);
    else job.reject(Object.assign(new Error(m.error.message), m.error));
  };
  worker.onerror = (e) => {
    // A worker that cannot start (for example a served page inside a
    // sandboxed frame): run its jobs here instead.
    e.preventDefault?.();
    workerBroken = true;
    const jobs = [...pending.values()];
    pending.clear();
    worker?.terminate();
    worker = null;
    for (const job of jobs) { finishBusy(job); runHere(job); }
  };
  worker.postMessage({ kind: "init", module: sharedSolverModule });
  return worker;
}

function runHere(job) {
  try {
    job.resolve(runJob(job.msg, job.onProgress));
  } catch (e) {
    job.reject(e);
  }
}

// ---- the busy bar

let busyJob = null;
function showBusy(job) {
  job.timer = setTimeout(() => {
    busyJob = job;
    $("busy").hidden = false;
    showProgress(job);
  }, 100);
}

/**
 * The bar for `job`'s last progress report `[done, total]`: determinate when
 * the total is known (total > 0), else moving, with the work done so far.
 */
function showProgress(job) {
  const bar = $("busy-bar");
  const [done, total] = job.progress ?? [0, 0];
  if (total > 0) {
    bar.max = total;
    bar.value = Math.min(done, total);
    $("busy-text").textContent = `${job.label} ${Math.floor(100 * Math.min(done, total) / total)}%`;
  } else {
    bar.removeAttribute("value");
    $("busy-text").textContent = done > 0 ? `${job.label} (${done.toLocaleString("en")} evaluations so far)` : job.label;
  }
  $("busy").dataset.progress = total > 0 ? String(done / total) : "";
}

function finishBusy(job) {
  clearTimeout(job.timer);
  if (busyJob === job) { busyJob = null; $("busy").hidden = true; }
}

/**
 * Stop the worker and reject the jobs `drop` picks with `why`; the others
 * start again in a fresh worker.
 */
function restartWorker(drop, why) {
  if (!worker) return;
  worker.terminate();
  worker = null;
  const jobs = [...pending.values()];
  pending.clear();
  for (const job of jobs) {
    if (drop(job)) { finishBusy(job); job.reject(Object.assign(new Error(why), { [why]: true })); }
    else post(job);
  }
}

/** Cancel what the worker is doing: it is stopped and started afresh. */
export function cancelAll() {
  restartWorker(() => true, "cancelled");
}

function post(job) {
  const w = startWorker();
  if (!w) { finishBusy(job); runHere(job); return; }
  pending.set(job.msg.id, job);
  w.postMessage(job.msg);
}

/**
 * Run a job ({ kind, ...args }, see jobs.js) in the worker. Resolves to its
 * value; rejects with the solver's error, or with { cancelled: true }. A
 * job posted with `supersede` makes every earlier one posted so obsolete
 * (the caller ignores their results): when one of those has been out for
 * over RESTART_AFTER_MS, the worker is restarted and they are rejected with
 * { superseded: true }, so that a long solve never holds up the next one.
 * (Quicker ones are left to finish: a restart costs more than they do.)
 */
export function inWorker(msg, { label = "Solving…", onProgress, supersede = false } = {}) {
  const now = performance.now();
  if (supersede && [...pending.values()].some((j) => j.supersede && now - j.posted > RESTART_AFTER_MS)) {
    restartWorker((j) => j.supersede, "superseded");
  }
  return new Promise((resolve, reject) => {
    const job = { msg: { ...msg, id: nextId++ }, resolve, reject, label, supersede, posted: now, progress: null, onProgress: (d, n) => {
      job.progress = [d, n];
      onProgress?.(d, n);
      if (busyJob === job) showProgress(job);
    } };
    // Test hook: a deliberate panic armed on the page goes with the next job.
    if (globalThis.ratebookArmTestPanic === true) { globalThis.ratebookArmTestPanic = false; job.msg.armTestPanic = true; }
    showBusy(job);
    post(job);
  });
}

/** Whether jobs really go to a worker (false once it proved unable to start). */
export function hasWorker() {
  return !workerBroken && !!sharedSolverModule;
}

export function initRunner() {
  $("busy-cancel").addEventListener("click", cancelAll);
}
