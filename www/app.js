// The workbench page: loads the solver, solves the sheet, draws the result.
import { initSync, solve, drawTimePlot, version } from "./pkg/ratebook.js";
import { wasmBytes } from "./pkg/wasm_bytes.js";

const DEMO = `# Cast aluminium bracket cooling in shop air
T' = -0.0021*(T - 22)
T(0) = 180
`;

initSync({ module: wasmBytes() });

const $ = (id) => document.getElementById(id);
const sheet = $("sheet");
sheet.value = DEMO;

function settings() {
  return { to: Number($("to").value) };
}

function run() {
  const problem = $("problem");
  try {
    const r = solve(sheet.value, settings());
    drawTimePlot($("time-plot"), sheet.value, settings());
    const last = r.t.length - 1;
    $("summary").textContent = r.states
      .map((s) => `${s} = ${r.values[s][last].toPrecision(6)} at ${r.independent} = ${r.t[last]}`)
      .join("; ");
    problem.hidden = true;
  } catch (e) {
    problem.textContent = e.line ? `Line ${e.line}, column ${e.column}: ${e.message}` : String(e.message ?? e);
    problem.hidden = false;
  }
}

$("run").addEventListener("click", run);
document.title = `ratebook ${version()}`;
run();
