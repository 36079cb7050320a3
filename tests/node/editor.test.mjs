// The editor's pure helpers: which names a sheet offers for completion, and
// which stretch of a line a problem's column underlines.
import { test } from "node:test";
import assert from "node:assert/strict";
import { sheetNames, problemSpan } from "../../www/editor.js";

test("completion offers the sheet's states, derivatives, definitions and independent variable", () => {
  const sheet = [
    "# drag = 5 is only a comment",
    "m = 80            # kg",
    "drag = 0.3*v^2",
    "d2x/ds2 = -g + drag/m",
    "v = x'",
    "dE/ds = v",
    "q''' = 0",
    "x(0) = 1",
    "stop when x < 0",
  ].join("\n");
  assert.deepEqual(sheetNames(sheet), [
    { name: "m", detail: "parameter" },
    { name: "drag", detail: "defined in the sheet" },
    { name: "x", detail: "state" },
    { name: "x'", detail: "state" },
    { name: "v", detail: "defined in the sheet" },
    { name: "E", detail: "state" },
    { name: "q", detail: "state" },
    { name: "q'", detail: "state" },
    { name: "q''", detail: "state" },
    { name: "s", detail: "independent variable" },
  ]);
  // With no d…/d… line the independent variable is t; with no rate there is none.
  assert.ok(sheetNames("y' = -y\n").some((n) => n.name === "t"));
  assert.deepEqual(sheetNames("k = 2\n"), [{ name: "k", detail: "parameter" }]);
});

test("a problem underlines the name or number at its column, else one character", () => {
  const line = "T' = k*(rooom - 2.5e3)";
  assert.deepEqual(problemSpan(line, 9), [8, 13]);           // rooom
  assert.equal(line.slice(...problemSpan(line, 17)), "2.5e3");
  assert.equal(line.slice(...problemSpan(line, 8)), "(");
  assert.equal("x'' = 1".slice(...problemSpan("x'' = 1", 1)), "x''");
  // Past the end of the line (a value missing at the end): an empty span there.
  assert.deepEqual(problemSpan("T' = -0.5*", 11), [10, 10]);
  assert.deepEqual(problemSpan("T' = -0.5*", 99), [10, 10]);
  assert.deepEqual(problemSpan("", 1), [0, 0]);
});
