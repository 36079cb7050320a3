// Slider drags: input events are coalesced into at most one solve and
// redraw per animation frame; only the shown view is redrawn while the
// slider moves, the others when it is let go; the phase plane keeps its
// window under the moving orbit. (Frame times are measured in
// scripts/bench.d/page, never here.)
import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { mkdirSync } from "node:fs";
import { join } from "node:path";
import { ROOT, serveWww, launch, openPage, inkedPixels } from "./harness.mjs";
import { ready, summaryValues, nodeRun, shownSettings, finalValues } from "./pagekit.mjs";

const SHOTS = join(ROOT, "target", "screenshots");
mkdirSync(SHOTS, { recursive: true });
let server, context;
before(async () => { server = await serveWww(); context = await launch(); });
after(async () => { await context?.close(); await server?.close(); });

async function loadExample(page, id) {
  await page.selectOption("#examples", id);
  await page.waitForFunction((id) => document.body.dataset.shownExample === id, id);
}

/** Move slider `id` through `values` as input events, `perFrame` of them per animation frame. */
function drag(page, id, values, perFrame) {
  return page.evaluate(async ({ id, values, perFrame }) => {
    const s = document.getElementById(id);
    const frame = () => new Promise((ok) => requestAnimationFrame(() => ok()));
    await frame();
    performance.clearMeasures();
    for (let i = 0; i < values.length; i++) {
      s.value = String(values[i]);
      s.dispatchEvent(new Event("input"));
      if ((i + 1) % perFrame === 0) await frame();
    }
    await frame();
    await frame();
    const count = (name) => performance.getEntriesByName(`rb:${name}`).length;
    return { frames: count("live-frame"), solves: count("solve"), fieldDraws: count("field-draw"), timeDraws: count("time-view") };
  }, { id, values, perFrame });
}

const canvasHash = (page, sel) => page.$eval(sel, (c) => {
  const d = c.getContext("2d").getImageData(0, 0, c.width, c.height).data;
  let h = 0;
  for (let i = 0; i < d.length; i += 7) h = (h * 31 + d[i]) | 0;
  return h;
});

test("many input events in one frame make one solve, and the last value is the one shown", async () => {
  const { page, errors } = await openPage(context, server.url);
  await ready(page);
  await loadExample(page, "grazers");
  const values = Array.from({ length: 24 }, (_, i) => 0.5 + 0.02 * i);
  const n = await drag(page, "param-r", values, 8);
  assert.equal(n.frames, 3, `24 events at 8 a frame make 3 frames of work: ${JSON.stringify(n)}`);
  assert.equal(n.solves, 3);
  const sheet = await page.inputValue("#sheet");
  const r = /^r\s*=\s*(\S+)/m.exec(sheet)[1];
  assert.ok(Math.abs(Number(r) - 0.96) < 0.005, `the sheet holds the last value (the slider snaps to its steps): ${r}`);
  assert.equal(await page.inputValue(".param-value[aria-label='r value']"), r);
  const { spacing, ...s } = await shownSettings(page);
  assert.deepEqual(await summaryValues(page), finalValues(nodeRun(sheet, s)), "the summary shows the last value's run");
  assert.deepEqual(errors, []);
  await page.close();
});

test("while dragging only the shown view is redrawn; letting go redraws the others", async () => {
  const { page, errors } = await openPage(context, server.url);
  await ready(page);
  await loadExample(page, "grazers");
  await page.click("#tab-field");
  await page.waitForFunction(() => document.getElementById("field-note").textContent.includes("Phase plane"));
  const timeBefore = await canvasHash(page, "#time-plot");
  const windowBefore = JSON.parse(await page.getAttribute("#field-plot", "data-window"));
  const n = await drag(page, "param-r", [0.8, 0.7, 0.6, 0.5], 1);
  assert.equal(n.frames, 4);
  assert.equal(n.fieldDraws, 4, "the phase plane is redrawn on every frame of work");
  assert.equal(await canvasHash(page, "#time-plot"), timeBefore, "the hidden time view is not redrawn while the slider moves");
  assert.deepEqual(JSON.parse(await page.getAttribute("#field-plot", "data-window")), windowBefore, "the window stays put under the moving orbit");
  assert.ok(await inkedPixels(page, "#field-plot") > 8000, "arrows, nullclines and the orbit are drawn");
  await page.screenshot({ path: join(SHOTS, "field-after-drag.png") });
  // Letting go: the time view is redrawn for the new value, the window is fitted again.
  await page.$eval("#param-r", (s) => s.dispatchEvent(new Event("change")));
  await page.waitForFunction((h) => {
    const c = document.getElementById("time-plot");
    const d = c.getContext("2d").getImageData(0, 0, c.width, c.height).data;
    let x = 0;
    for (let i = 0; i < d.length; i += 7) x = (x * 31 + d[i]) | 0;
    return x !== h;
  }, timeBefore);
  const windowAfter = JSON.parse(await page.getAttribute("#field-plot", "data-window"));
  assert.notDeepEqual(windowAfter, windowBefore, "the window is fitted to the new orbit on release");
  await page.click("#tab-time");
  assert.ok(await inkedPixels(page, "#time-plot") > 3000);
  assert.deepEqual(errors, []);
  await page.close();
});
