// Long studies run in the Web Worker with a progress bar and a cancel
// button, and the page stays usable; event labels close in time do not
// overlap; opening a file over unsaved edits says where the old sheet went.
// Screenshots go to target/screenshots/ to be looked at.
import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { mkdirSync, writeFileSync, mkdtempSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { ROOT, serveWww, launch, openPage } from "./harness.mjs";
import { ready, setSheet, download } from "./pagekit.mjs";
import { initSync, convergenceStudy } from "../../www/pkg/ratebook.js";

const SHOTS = join(ROOT, "target", "screenshots");
mkdirSync(SHOTS, { recursive: true });
let server, context;
before(async () => { server = await serveWww(); context = await launch(); });
after(async () => { await context?.close(); await server?.close(); });

// An undamped mount ringing for a long time at tight tolerances: its
// accuracy check re-solves it several times over (seconds of work).
const RINGING = "w = 3\nx'' = -w^2*x\nx(0) = 1\nx'(0) = 0\n";

async function settings(page, values) {
  for (const [id, v] of Object.entries(values)) {
    await page.fill(`#${id}`, String(v));
    await page.dispatchEvent(`#${id}`, "change");
  }
  await page.waitForTimeout(450);
}

/** Whether the page's own thread answers while `#busy` is still shown. */
async function answersWhileBusy(page) {
  const busy = await page.evaluate(() => !document.getElementById("busy").hidden);
  return busy && (await page.isVisible("#busy"));
}

test("the accuracy check runs in the worker: the page answers meanwhile, and cancel stops it", async () => {
  const { page, errors } = await openPage(context, server.url);
  await ready(page);
  await setSheet(page, RINGING);
  await settings(page, { to: 3000, "tol-relative": "1e-10", "tol-absolute": "1e-12" });
  await page.click("#tab-accuracy");
  await page.waitForSelector("#accuracy-checking");
  await page.waitForSelector("#busy:not([hidden])");
  // The bar moves with the work done (its total is not known beforehand).
  await page.waitForFunction(() => /evaluations so far/.test(document.getElementById("busy-text").textContent));
  assert.equal(await page.getAttribute("#busy-bar", "value"), null, "an indeterminate bar");
  assert.ok(await answersWhileBusy(page), "the page's thread is free while the check runs");
  // The sheet can be scrolled and read meanwhile; the tab strip works.
  await page.click("#tab-time");
  await page.click("#tab-accuracy");
  assert.ok(await page.isVisible("#busy"));
  await page.screenshot({ path: join(SHOTS, "accuracy-checking-in-worker.png") });
  await page.click("#busy-cancel");
  await page.waitForSelector("#accuracy-again");
  assert.match(await page.textContent("#accuracy-view"), /cancelled/);
  assert.equal(await page.isHidden("#busy"), true);
  // A shorter run is checked to the end by a fresh worker.
  await settings(page, { to: 20 });
  await page.waitForSelector("#accuracy-verdict");
  assert.equal(await page.getAttribute("#accuracy-view", "data-state"), "done");
  assert.deepEqual(errors, []);
  await page.close();
});

test("the convergence study shows a determinate progress bar in the worker and the Node API's numbers", async () => {
  const { page, errors } = await openPage(context, server.url);
  await ready(page);
  await setSheet(page, RINGING);
  await settings(page, { to: 60, "tol-relative": "1e-6", "tol-absolute": "1e-9" });
  await page.click("#tab-accuracy");
  await page.click("#accuracy-convergence summary");
  await page.waitForSelector("#conv-run");
  await page.fill("#conv-h", "0.001");
  await page.click("#conv-run");
  await page.waitForSelector("#busy:not([hidden])");
  await page.waitForFunction(() => Number(document.getElementById("busy").dataset.progress) > 0.05);
  const bar = await page.$eval("#busy-bar", (b) => ({ value: b.getAttribute("value"), max: b.max, text: document.getElementById("busy-text").textContent }));
  assert.ok(bar.value !== null && Number(bar.value) > 0, "a determinate bar");
  // Euler, Heun and RK4 at 60 000 steps and its halvings: (1 + 2 + 4) stages × 15 × 60 000.
  assert.equal(bar.max, 7 * 15 * 60000);
  assert.match(bar.text, /Convergence study… \d+%/);
  assert.ok(await answersWhileBusy(page));
  await page.screenshot({ path: join(SHOTS, "convergence-progress.png") });
  const before = Number(await page.evaluate(() => document.getElementById("busy").dataset.progress));
  await page.waitForFunction((b) => Number(document.getElementById("busy").dataset.progress) > b || document.getElementById("busy").hidden, before);
  await page.waitForSelector("#conv-table", { timeout: 120000 });
  assert.equal(await page.isHidden("#busy"), true);
  const shown = await page.$$eval("#conv-table tr", (r) => r.slice(1).map((tr) => tr.children[4].textContent));
  initSync({ module: (await import("node:fs")).readFileSync(new URL("../../www/pkg/ratebook_bg.wasm", import.meta.url)) });
  const node = convergenceStudy(RINGING, { to: 60, tolerance: { relative: 1e-6, absolute: 1e-9 }, method: "euler", step: 0.001, methods: ["euler", "heun", "rk4"] });
  assert.equal(shown.length, node.lines.length);
  const fmt = (v) => String(Number(v.toPrecision(10)));
  shown.forEach((cell, i) => assert.ok(cell.startsWith(fmt(node.lines[i].extrapolated).slice(0, 6)), `${cell} vs ${node.lines[i].extrapolated}`));
  // Started again and cancelled: the panel says so, the button works again.
  await page.click("#conv-run");
  await page.waitForSelector("#busy:not([hidden])");
  await page.click("#busy-cancel");
  await page.waitForFunction(() => /cancelled/.test(document.getElementById("conv-out").textContent));
  assert.equal(await page.isEnabled("#conv-run"), true);
  assert.deepEqual(errors, []);
  await page.close();
});

// Four alarm settings passed within seconds of each other, and one later.
const ALARMS = `# Sump level rising past its alarm settings
dL/dt = 0.02*(5 - L)
L(0) = 0
mark when L > 1
mark when L > 1.05
mark when L > 1.1
mark when L > 1.15
mark when L > 3
`;

test("event labels close in time are staggered, not overlapped, on screen, in SVG and in print", async () => {
  const { page, errors } = await openPage(context, server.url);
  await ready(page);
  await setSheet(page, ALARMS);
  await settings(page, { to: 120 });
  const svg = await download(page, '[data-svg="time-plot"]');
  // Every <text> that is an event label, with its position.
  const labels = [...svg.matchAll(/<text x="(-?[\d.]+)" y="(-?[\d.]+)"[^>]*>\s*(L &gt; [\d.]+)\s*<\/text>/g)]
    .map((m) => ({ x: Number(m[1]), y: Number(m[2]), text: m[3] }));
  assert.ok(labels.length >= 4, `labels drawn: ${JSON.stringify(labels)}`);
  assert.ok(new Set(labels.map((l) => l.y)).size >= 3, "close labels are put in rows");
  // Within one row, no label starts before the one to its left has ended
  // (a label is under 7 px a character at 12 px, a generous bound).
  for (const a of labels) for (const b of labels) {
    if (a === b || a.y !== b.y || b.x < a.x) continue;
    assert.ok(b.x - a.x >= a.text.replace("&gt;", ">").length * 5, `"${a.text}" and "${b.text}" overlap: ${a.x} and ${b.x}`);
  }
  // The hover read-out names the events under the pointer.
  const ev = await page.$$eval("#summary-events tr", (r) => r.slice(1).map((tr) => Number(tr.children[1].dataset.v)));
  assert.equal(ev.length, 5);
  const f = JSON.parse(await page.getAttribute("#time-plot", "data-frame"));
  const box = await page.locator("#time-plot").boundingBox();
  const cw = await page.$eval("#time-plot", (c) => c.width);
  const px = f.left + (ev[1] - f.x0) / (f.x1 - f.x0) * (f.right - f.left);
  await page.mouse.move(box.x + px * box.width / cw, box.y + box.height / 2);
  assert.match(await page.textContent("#readout"), /event “L > 1\.05” at t = /);
  await page.screenshot({ path: join(SHOTS, "time-events.png") });
  await page.emulateMedia({ media: "print" });
  await page.screenshot({ path: join(SHOTS, "time-events-print.png"), fullPage: true });
  await page.emulateMedia({ media: "screen" });
  assert.deepEqual(errors, []);
  await page.close();
});

test("opening a file over unsaved edits says the old sheet is kept, and one click brings it back", async () => {
  const { page, errors } = await openPage(context, server.url);
  await ready(page);
  const mine = "# my unsaved work\nk = 0.2\ndx/dt = -k*x\nx(0) = 10\n";
  await setSheet(page, mine);
  const dir = mkdtempSync(join(tmpdir(), "ratebook-open-"));
  const file = join(dir, "pump-test.json");
  writeFileSync(file, JSON.stringify({ format: "ratebook-model", version: 1, sheet: "# from a file\ndz/dt = -z\nz(0) = 2\n", settings: { to: 4 } }));
  await page.setInputFiles("#open-input", file);
  await page.waitForFunction(() => document.getElementById("sheet").value.startsWith("# from a file"));
  await page.waitForSelector("#notice:not([hidden])");
  const text = await page.textContent("#notice");
  assert.match(text, /the file pump-test\.json replaced your sheet/i);
  assert.match(text, /sheet you had is kept/);
  assert.match(text, /Back to the previous sheet/);
  await page.screenshot({ path: join(SHOTS, "notice-previous-kept.png") });
  // The notice stays until used (it is not a passing message).
  await page.waitForTimeout(6500);
  assert.ok(await page.isVisible("#notice-action"));
  await page.click("#notice-action");
  await page.waitForFunction((s) => document.getElementById("sheet").value === s, mine);
  assert.deepEqual(errors, []);
  await page.close();
});
