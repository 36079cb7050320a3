// Every worked example loads, solves and draws, with the same numbers as the
// Node API; the field view; parameters as sliders; print and keyboard basics.
import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { mkdirSync } from "node:fs";
import { join } from "node:path";
import { ROOT, serveWww, launch, openPage, inkedPixels } from "./harness.mjs";
import { ready, settled, summaryValues, nodeRun, shownSettings, finalValues, download } from "./pagekit.mjs";
import { EXAMPLES } from "../../www/examples.js";

const SHOTS = join(ROOT, "target", "screenshots");
mkdirSync(SHOTS, { recursive: true });
let server, context;
before(async () => { server = await serveWww(); context = await launch(); });
after(async () => { await context?.close(); await server?.close(); });

async function loadExample(page, id) {
  await page.selectOption("#examples", id);
  await page.waitForFunction((id) => document.body.dataset.shownExample === id, id);
}

test("there are at least eight worked examples, each with its own scenario", () => {
  assert.ok(EXAMPLES.length >= 8);
  assert.equal(new Set(EXAMPLES.map((e) => e.title)).size, EXAMPLES.length);
});

for (const ex of EXAMPLES) {
  test(`example "${ex.title}" loads, solves and draws the Node API's numbers`, async () => {
    const { page, errors } = await openPage(context, server.url);
    await ready(page);
    await loadExample(page, ex.id);
    assert.equal(await page.isHidden("#problem"), true, await page.textContent("#problem"));
    assert.ok(await inkedPixels(page, "#time-plot") > 3000, "the time view shows curves");
    const settings = await shownSettings(page);
    const { spacing, ...solverSettings } = settings;
    const run = nodeRun(await page.inputValue("#sheet"), solverSettings);
    assert.notEqual(run.status, "failed", run.error);
    assert.deepEqual(await summaryValues(page), finalValues(run));
    const events = await page.$$eval("#summary-events tr", (r) => r.slice(1).map((tr) => [tr.children[0].textContent, Number(tr.children[1].dataset.v)]));
    assert.deepEqual(events, run.events.map((e) => [e.name, e.t]));
    if (ex.caution) assert.equal(await page.textContent("#model-caution"), ex.caution);
    await page.screenshot({ path: join(SHOTS, `example-${ex.id}.png`) });
    assert.deepEqual(errors, []);
    await page.close();
  });
}

test("field view: a one-state example shows slope segments and a click adds a curve", async () => {
  const { page, errors } = await openPage(context, server.url);
  await ready(page);
  await loadExample(page, "water-heater");
  await page.click("#tab-field");
  await page.waitForFunction(() => document.getElementById("field-note").textContent.includes("Slope field"));
  const before = await inkedPixels(page, "#field-plot");
  assert.ok(before > 8000, "slope segments are drawn");
  assert.equal(await page.isHidden("#field-x"), true, "no state picker for one state");
  const box = await page.locator("#field-plot").boundingBox();
  await page.mouse.click(box.x + box.width * 0.6, box.y + box.height * 0.25);
  const after = await inkedPixels(page, "#field-plot");
  assert.ok(after > before + 300, `the click added a curve (${before} -> ${after})`);
  await page.screenshot({ path: join(SHOTS, "field-slope.png") });
  assert.deepEqual(errors, []);
  await page.close();
});

test("field view: a two-state example shows arrows, nullclines and the orbit; a click adds a curve", async () => {
  const { page, errors } = await openPage(context, server.url);
  await ready(page);
  await loadExample(page, "grazers");
  await page.click("#tab-field");
  await page.waitForFunction(() => document.getElementById("field-note").textContent.includes("Phase plane of b and p"));
  // Nullcline colours (palette 3 and 4) are on the canvas.
  const colours = await page.$eval("#field-plot", (c) => {
    const d = c.getContext("2d").getImageData(0, 0, c.width, c.height).data;
    const near = (i, r, g, b) => Math.abs(d[i] - r) < 30 && Math.abs(d[i + 1] - g) < 30 && Math.abs(d[i + 2] - b) < 30;
    let purple = 0, olive = 0, blue = 0;
    for (let i = 0; i < d.length; i += 4) {
      if (near(i, 0x8e, 0x3b, 0x9e)) purple++;
      if (near(i, 0x9a, 0x7b, 0x12)) olive++;
      if (near(i, 0x1f, 0x5f, 0xa8)) blue++;
    }
    return { purple, olive, blue };
  });
  assert.ok(colours.purple > 300 && colours.olive > 300, `nullclines drawn: ${JSON.stringify(colours)}`);
  assert.ok(colours.blue > 1000, "the solution orbit is drawn");
  const svg = await download(page, '[data-svg="field-plot"]');
  assert.ok((svg.match(/<polyline/g) ?? []).length > 2 * 24 * 24, "arrows (shaft and head) for each of the 24x24 samples");
  assert.match(svg, /b(&apos;|&#39;|')\s*= 0/, "nullclines are labelled");
  assert.match(svg, /p(&apos;|&#39;|')\s*= 0/, "nullclines are labelled");
  const before = await inkedPixels(page, "#field-plot");
  const box = await page.locator("#field-plot").boundingBox();
  await page.mouse.click(box.x + box.width * 0.45, box.y + box.height * 0.45);
  assert.ok(await inkedPixels(page, "#field-plot") > before + 300, "the click added a curve");
  // Pick other axes: the picker offers the states.
  assert.deepEqual(await page.$$eval("#field-x option", (o) => o.map((x) => x.value)), ["b", "p"]);
  await page.screenshot({ path: join(SHOTS, "field-phase.png") });
  assert.deepEqual(errors, []);
  await page.close();
});

test("a parameter slider rewrites its sheet line and re-solves while dragging", async () => {
  const { page, errors } = await openPage(context, server.url);
  await ready(page);
  await loadExample(page, "rc-timer");
  const before = await summaryValues(page);
  const slider = page.locator("#param-R");
  await slider.focus();
  for (let i = 0; i < 20; i++) await page.keyboard.press("ArrowRight");
  await settled(page);
  const sheet = await page.inputValue("#sheet");
  const r = Number(/^R\s*=\s*(\S+)/m.exec(sheet)[1]);
  assert.ok(r > 4700, `R moved up: ${r}`);
  assert.equal(await page.inputValue(".param-value[aria-label='R value']"), /^R\s*=\s*(\S+)/m.exec(sheet)[1]);
  const after = await summaryValues(page);
  assert.ok(after.v < before.v, "a larger R charges more slowly");
  // The number box takes an exact value.
  await page.fill(".param-value[aria-label='C value']", "1e-4");
  await page.press(".param-value[aria-label='C value']", "Enter");
  await page.waitForFunction(() => /^C\s*=\s*1e-4/m.test(document.getElementById("sheet").value));
  await settled(page);
  const { spacing, ...s } = await shownSettings(page);
  assert.deepEqual(await summaryValues(page), finalValues(nodeRun(await page.inputValue("#sheet"), s)));
  assert.deepEqual(errors, []);
  await page.close();
});

test("the tabs work from the keyboard and the print layout keeps the report", async () => {
  const { page } = await openPage(context, server.url);
  await ready(page);
  await page.focus("#tab-time");
  await page.keyboard.press("ArrowRight");
  assert.equal(await page.evaluate(() => document.activeElement.id), "tab-field");
  assert.equal(await page.isVisible("#field-view"), true);
  await page.keyboard.press("End");
  assert.equal(await page.isVisible("#accuracy-view"), true);
  await page.waitForSelector("#accuracy-table");
  await page.keyboard.press("Home");
  await page.emulateMedia({ media: "print" });
  assert.equal(await page.isVisible("#sheet-readonly"), true, "the sheet is printed");
  assert.equal(await page.isVisible(".actions"), false);
  assert.equal(await page.isVisible("#time-plot"), true);
  await page.screenshot({ path: join(SHOTS, "page-print.png"), fullPage: true });
  await page.close();
});
