// Where solves run. Short solves run on the page's thread (live sliders need
// them within a frame); anything that may take longer than about 100 ms goes
// to a Web Worker, with a progress bar and a cancel button, so the page never
// freezes. The worker is built from the inlined bundle in the single file
// (a blob URL, which works from file:// and in a sandboxed frame) or from
// worker.js when served.
import { $ } from "./dom.js";

let sharedSolverModule = null;
let worker = null;
let workerBroken = false;
let nextId = 1;
const pending = new Map();

/** Give the runner the compiled solver module (shared with the worker). */
export function setModule(module) {
  sharedSolverModule = module;
}

function workerUrl() {
  const src = $("worker-src")?.textContent ?? "";
  if (src.trim()) return URL.createObjectURL(new Blob([src], { type: "text/javascript" }));
  return new URL("./worker.js", import.meta.url);
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

let localFns = {};
/** The page-thread versions of the worker's jobs (same names). */
export function setLocal(fns) {
  localFns = fns;
}

function runHere(job) {
  try {
    job.resolve(localFns[job.msg.kind](job.msg, job.onProgress));
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

/** Cancel what the worker is doing: it is stopped and started afresh. */
export function cancelAll() {
  if (!worker) return;
  worker.terminate();
  worker = null;
  const jobs = [...pending.values()];
  pending.clear();
  for (const job of jobs) { finishBusy(job); job.reject(Object.assign(new Error("cancelled"), { cancelled: true })); }
}

/**
 * Run a job ({ kind, ...args }) in the worker. Resolves to its value; rejects
 * with the solver's error, or with { cancelled: true }.
 */
export function inWorker(msg, { label = "Solving…", onProgress } = {}) {
  return new Promise((resolve, reject) => {
    const job = { msg: { ...msg, id: nextId++ }, resolve, reject, label, progress: null, onProgress: (d, n) => {
      job.progress = [d, n];
      onProgress?.(d, n);
      if (busyJob === job) showProgress(job);
    } };
    const w = startWorker();
    if (!w) { runHere(job); return; }
    pending.set(job.msg.id, job);
    showBusy(job);
    w.postMessage(job.msg);
  });
}

/** Whether jobs really go to a worker (false once it proved unable to start). */
export function hasWorker() {
  return !workerBroken && !!sharedSolverModule;
}

export function initRunner() {
  $("busy-cancel").addEventListener("click", cancelAll);
}
