// The solver as the page's modules call it. Every export of the wasm that
// computes goes through the panic guard (guard.js): a panic restarts the
// solver and comes back as an ordinary error, never as a dead instance.
// Only the Plot class (plotkit.js) is used directly; an abort inside it is
// recovered by the guard's global handlers.
import { initSync, solve as solveRaw, readSheet as readSheetRaw, compareMethods as compareRaw, checkAccuracy as accuracyRaw,
  convergenceStudy as convergenceRaw, fieldView as fieldRaw, stabilitySvg as stabilityRaw, methods as methodsRaw, version as versionRaw,
  sheetLanguage as sheetLanguageRaw } from "./pkg/ratebook.js";
import { initGuard, guarded } from "./guard.js";

/** Start the solver from its compiled module (the page and each worker do this once). */
export function startSolver(module) {
  initSync({ module });
  initGuard(module);
}

export const solve = guarded(solveRaw);
export const readSheet = guarded(readSheetRaw);
export const compareMethods = guarded(compareRaw);
export const checkAccuracy = guarded(accuracyRaw);
export const convergenceStudy = guarded(convergenceRaw);
export const fieldView = guarded(fieldRaw);
export const stabilitySvg = guarded(stabilityRaw);
export const methods = guarded(methodsRaw);
export const version = guarded(versionRaw);
export const sheetLanguage = guarded(sheetLanguageRaw);
