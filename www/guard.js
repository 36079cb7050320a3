// A panic in the solver must never leave the page dead. A Rust panic aborts
// the wasm instance: the call throws a WebAssembly.RuntimeError and every
// later call into that instance is unsafe. The panic hook (src/web/guard.rs)
// leaves the message in globalThis.ratebookPanic; this module makes a fresh
// instance from the same compiled module and turns the abort into a plain
// error with that message. The page's own state (the sheet, its settings and
// the autosave) lives in JavaScript and is untouched.
import { initSync, dropInstance } from "./pkg/ratebook.js";

let guardModule = null;
let panicCount = 0;

/**
 * Remember the compiled solver module to re-instantiate from. An abort that
 * escapes unguarded (an event handler calling the solver directly) still
 * gets a fresh instance, when it reaches the global error handlers.
 */
export function initGuard(module) {
  const first = guardModule === null;
  guardModule = module;
  if (first && typeof globalThis.addEventListener === "function") {
    const onAbort = (e) => { if (isAbort(e)) recoverSolver(); };
    globalThis.addEventListener("error", (ev) => onAbort(ev.error));
    globalThis.addEventListener("unhandledrejection", (ev) => onAbort(ev.reason));
  }
}

/** The error a guarded call throws after a panic (the solver is usable again). */
export class SolverPanic extends Error {
  constructor(message) {
    super(message);
    this.name = "SolverPanic";
    this.panic = true;
  }
}

/** Whether `e` is the abort of a wasm instance. */
export function isAbort(e) {
  return typeof WebAssembly !== "undefined" && e instanceof WebAssembly.RuntimeError;
}

/** Make a fresh instance after a panic; returns the panic's message. */
export function recoverSolver() {
  const reported = globalThis.ratebookPanic;
  globalThis.ratebookPanic = undefined;
  panicCount += 1;
  dropInstance();
  initSync({ module: guardModule });
  return typeof reported === "string" && reported ? reported : "ratebook: internal error in the solver";
}

/** How many panics this page has recovered from. */
export function panicsRecovered() {
  return panicCount;
}

/**
 * `fn` guarded: an abort inside it re-instantiates the solver and throws a
 * SolverPanic carrying the panic's message; any other error passes through.
 */
export function guarded(fn) {
  return (...args) => {
    try {
      return fn(...args);
    } catch (e) {
      if (!isAbort(e) || !guardModule) throw e;
      throw new SolverPanic(`${recoverSolver()}. The solver was restarted; your sheet is kept.`);
    }
  };
}
