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
    if (job.supersede) postWaiting();
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
    postWaiting();
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

const drop = (job, why) => { finishBusy(job); job.reject(Object.assign(new Error(why), { [why]: true })); };

/**
 * Stop the worker and reject the jobs `dropped(job)` picks with `why`; the
 * others start again in a fresh worker.
 */
function restartWorker(dropped, why) {
  if (!worker) return;
  worker.terminate();
  worker = null;
  const jobs = [...pending.values()];
  pending.clear();
  for (const job of jobs) {
    if (dropped(job)) drop(job, why);
    else post(job);
  }
}

/** Cancel what the worker is doing: it is stopped and started afresh. */
export function cancelAll() {
  if (waiting) { drop(waiting, "cancelled"); waiting = null; }
  restartWorker(() => true, "cancelled");
}

// Superseding jobs: at most one is out in the worker; the newest other one
// waits here (the worker's message queue cannot be taken back).
let waiting = null;
let restartTimer = 0;

const running = () => [...pending.values()].find((j) => j.supersede);

function postWaiting() {
  clearTimeout(restartTimer);
  if (!waiting || running()) return;
  const job = waiting;
  waiting = null;
  job.posted = performance.now();
  post(job);
}

/**
 * Queue superseding `job`: it goes out at once when none is out; else it
 * waits (replacing any job waiting before it), and the one out is stopped,
 * by restarting the worker, once it has been out for RESTART_AFTER_MS.
 */
function supersedeWith(job) {
  if (waiting) drop(waiting, "superseded");
  waiting = job;
  const out = running();
  if (!out) { postWaiting(); return; }
  clearTimeout(restartTimer);
  restartTimer = setTimeout(() => {
    if (running() !== out) return;
    restartWorker((j) => j === out, "superseded");
    postWaiting();
  }, Math.max(0, RESTART_AFTER_MS - (performance.now() - out.posted)));
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
 * job posted with `supersede` makes every earlier one so posted obsolete:
 * one still waiting is rejected with { superseded: true }, and one running
 * is left RESTART_AFTER_MS from its start to finish (a restart costs more
 * than a quick solve) and then stopped the same way, by restarting the
 * worker, so that a long solve never holds up the next one.
 */
export function inWorker(msg, { label = "Solving…", onProgress, supersede = false, quiet = false } = {}) {
  return new Promise((resolve, reject) => {
    const job = { msg: { ...msg, id: nextId++ }, resolve, reject, label, supersede, posted: 0, progress: null, onProgress: (d, n) => {
      job.progress = [d, n];
      onProgress?.(d, n);
      if (busyJob === job) showProgress(job);
    } };
    // Test hook: a deliberate panic armed on the page goes with the next job.
    if (globalThis.ratebookArmTestPanic === true) { globalThis.ratebookArmTestPanic = false; job.msg.armTestPanic = true; }
    // A background job (`quiet`) shows no busy bar.
    if (!quiet) showBusy(job);
    if (supersede) supersedeWith(job); else post(job);
  });
}

/** Whether jobs really go to a worker (false once it proved unable to start). */
export function hasWorker() {
  return !workerBroken && !!sharedSolverModule;
}

export function initRunner() {
  $("busy-cancel").addEventListener("click", cancelAll);
}
