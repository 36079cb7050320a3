// The look of the plots and what the first screen shows: the opening sheet
// (a slider, a threshold time, a peak, the accuracy verdict's line), curves
// in their slot's colour and dash pattern labelled beside the plot, the
// comparison of a run that `stop when` ends, errors at rounding level, and a
// sheet of extreme numbers that once froze the page.
import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { serveWww, launch, openPage, inkedPixels } from "./harness.mjs";
import { ready, setSheet, summaryValues, download, loadExample } from "./pagekit.mjs";
import { EXAMPLES } from "../../www/examples.js";

let server, context;
before(async () => { server = await serveWww(); context = await launch(); });
after(async () => { await context?.close(); await server?.close(); });

async function runComparison(page) {
  await page.click("#tab-compare");
  await page.click("#compare-run");
  await page.waitForSelector("#compare-table tbody tr", { timeout: 30000 });
}

test("the first screen shows a slider, a threshold time, a peak and the accuracy verdict's line", async () => {
  const { page, errors } = await openPage(context, server.url);
  await ready(page);
  assert.equal(await page.evaluate(() => document.body.dataset.shownExample), EXAMPLES[0].id);
  assert.ok(await page.locator("#params input[type=range]").count() >= 3, "the parameters are sliders");
  const events = await page.$$eval("#summary-events tr", (r) => r.slice(1).map((tr) => tr.children[0].textContent));
  assert.ok(events.length >= 1, "a threshold is crossed");
  const svg = await download(page, '[data-svg="time-plot"]');
  assert.ok(svg.includes(events[0].replace(">", "&gt;")) || svg.includes(events[0]), "the crossing is ruled on the plot");
  assert.match(svg, /peak \d/, "the peak is marked");
  await page.waitForSelector("#accuracy-line[data-state=done]", { timeout: 20000 });
  const line = await page.textContent("#accuracy-line");
  assert.match(line, /^Accuracy: .*(digits|trust)/, line);
  // Its button opens the Accuracy tab, which shows the same verdict.
  await page.click("#accuracy-line-details");
  await page.waitForSelector("#accuracy-view[data-state=done]", { timeout: 20000 });
  assert.equal((await page.textContent("#accuracy-verdict")).replace(/`/g, ""), await page.textContent("#accuracy-line-text"));
  assert.deepEqual(errors, []);
  await page.close();
});

test("curves keep their slot's colour and dash on the canvas and in SVG, labelled beside the plot, no boxed legend", async () => {
  const { page, errors } = await openPage(context, server.url);
  await ready(page);
  await loadExample(page, "batch-series");
  const svg = await download(page, '[data-svg="time-plot"]');
  const curve = (colour) => svg.split("\n").find((l) => l.includes("<polyline") && l.includes(`stroke="${colour}"`) && l.includes('stroke-width="2"'));
  // Slots 0, 1, 2 of src/draw/style.rs: solid teal, violet 10-5, ochre 5-5.
  assert.ok(curve("#14705F") && !curve("#14705F").includes("dasharray"), "A solid, deep teal");
  assert.match(curve("#5239B4") ?? "", /stroke-dasharray="10 5"/, "B violet, long dashes");
  assert.match(curve("#A8832F") ?? "", /stroke-dasharray="5 5"/, "C ochre, short dashes");
  for (const name of ["A", "B", "C"]) assert.ok(svg.split("\n").some((l) => l.trim() === name), `label ${name}`);
  assert.ok((svg.match(/<rect/g) ?? []).length <= 2, "no legend box");
  const pixels = await page.$eval("#time-plot", (c) => {
    const d = c.getContext("2d").getImageData(0, 0, c.width, c.height).data;
    const near = (i, [r, g, b]) => Math.abs(d[i] - r) < 24 && Math.abs(d[i + 1] - g) < 24 && Math.abs(d[i + 2] - b) < 24;
    const n = [0, 0, 0];
    const slots = [[0x14, 0x70, 0x5f], [0x52, 0x39, 0xb4], [0xa8, 0x83, 0x2f]];
    for (let i = 0; i < d.length; i += 4) slots.forEach((s, k) => { if (near(i, s)) n[k]++; });
    return n;
  });
  assert.ok(pixels.every((n) => n > 300), `each curve's colour is on the canvas: ${pixels}`);
  // Print uses the same canvas.
  await page.emulateMedia({ media: "print" });
  assert.equal(await page.isVisible("#time-plot"), true);
  await page.emulateMedia({ media: "screen" });
  assert.deepEqual(errors, []);
  await page.close();
});

test("a run that stop when ends is compared by its stop time, with the methods' own orders", async () => {
  const { page, errors } = await openPage(context, server.url);
  await ready(page);
  await loadExample(page, "tank-draining");
  await runComparison(page);
  const heads = await page.$$eval("#compare-table th", (h) => h.map((x) => x.textContent));
  assert.ok(heads.some((h) => h.startsWith("stop time")), heads.join(" | "));
  assert.match(await page.textContent("#compare-note"), /pins the compared quantity/);
  assert.match(await page.textContent("#order-caption"), /stop time \(h < 0\.05\)/);
  const svg = await download(page, '[data-svg="order-plot"]');
  const slope = (m) => Number(new RegExp(`${m}: slope (-?[\\d.]+)`).exec(svg)?.[1]);
  // Common practice, no source: Euler, Heun and RK4 are of orders 1, 2 and 4.
  for (const [m, p] of [["Euler", 1], ["Heun", 2], ["RK4", 4]]) assert.ok(Math.abs(slope(m) - p) < 0.35, `${m}: ${slope(m)}`);
  assert.deepEqual(errors, []);
  await page.close();
});

test("when every method agrees to rounding the view says so and fits no order", async () => {
  const { page, errors } = await openPage(context, server.url);
  await ready(page);
  await setSheet(page, "# a constant rate: every method is exact\ny' = 1\ny(0) = 3\n");
  await page.waitForFunction(() => !document.getElementById("sheet").value.includes("storm") && document.querySelector("#summary-final tr[data-name=y]"));
  await runComparison(page);
  assert.equal(await page.getAttribute("#compare-note", "data-agreement"), "rounding");
  assert.match(await page.textContent("#compare-note"), /agree with the reference to rounding/);
  const svg = await download(page, '[data-svg="order-plot"]');
  assert.doesNotMatch(svg, /slope -?\d/);
  assert.match(svg, /agrees to rounding/);
  assert.deepEqual(errors, []);
  await page.close();
});

test("a sheet of two states at ±1e308 is drawn and the page keeps answering", async () => {
  const { page, errors } = await openPage(context, server.url);
  await ready(page);
  await setSheet(page, "a' = 0\na(0) = 1e308\nb' = 0\nb(0) = -1e308\n");
  await page.waitForFunction(() => document.querySelector("#summary-final tr[data-name=b]"), null, { timeout: 10000 });
  assert.deepEqual(await summaryValues(page), { a: 1e308, b: -1e308 });
  // The page answers at once, and both views draw the curves.
  const t = Date.now();
  await page.evaluate(() => 1);
  assert.ok(Date.now() - t < 1000, "the page answers within a second");
  assert.ok(await inkedPixels(page, "#time-plot") > 2000);
  // The y axis spans both values, ticked at round numbers.
  const svg = await download(page, '[data-svg="time-plot"]');
  const ticks = svg.split("\n").map((l) => l.trim());
  assert.ok(ticks.includes("1e308") && ticks.includes("-1e308") && ticks.includes("0"), "ticks at -1e308, 0 and 1e308");
  await page.click("#tab-field");
  await page.waitForTimeout(300);
  await page.click("#tab-time");
  assert.deepEqual(errors, []);
  await page.close();
});
