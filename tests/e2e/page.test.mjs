// The workbench page end to end: editing with located errors, keeping work
// (share link, file, autosave), CSV against the table, plot downloads, the
// comparison view, the single file offline, and embedding in a sandboxed frame.
import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { mkdirSync, readFileSync, writeFileSync, copyFileSync, mkdtempSync } from "node:fs";
import { join } from "node:path";
import { tmpdir } from "node:os";
import { ROOT, SINGLE_FILE, SINGLE_FILE_URL, serveWww, launch, openPage, inkedPixels } from "./harness.mjs";
import { ready, setSheet, summaryValues, nodeRun, download, dialogText } from "./pagekit.mjs";

const SHOTS = join(ROOT, "target", "screenshots");
mkdirSync(SHOTS, { recursive: true });
let server, context;
before(async () => { server = await serveWww(); context = await launch(); });
after(async () => { await context?.close(); await server?.close(); });

const COOLING = "# cooling\nT' = -0.0021*(T - 22)\nT(0) = 180\n";

test("an error is marked on its own line with the message, and fixing it clears the mark", async () => {
  const { page, errors } = await openPage(context, server.url);
  await ready(page);
  const before = await summaryValues(page);
  await setSheet(page, "# a comment\n\nT' = -0.0021*(T - 22\nT(0) = 180\n");
  await page.waitForSelector("#problem:not([hidden])");
  assert.match(await page.textContent("#problem"), /^Line 3, column \d+: /);
  assert.equal(await page.textContent("#gutter .bad"), "3");
  const marked = await page.$$eval("#marks .mark", (rows) => rows.map((r, i) => [i + 1, r.classList.contains("bad"), r.textContent]));
  assert.deepEqual(marked.filter((r) => r[1]).map((r) => r[0]), [3]);
  assert.match(marked[2][2], /◂ /, "the message is shown at the end of its line");
  // The last good result stays on screen.
  assert.deepEqual(await summaryValues(page), before);
  assert.match(await page.textContent("#sheet-state"), /last good result/);
  await page.screenshot({ path: join(SHOTS, "page-error-marked.png") });
  await setSheet(page, COOLING);
  await page.waitForSelector("#problem", { state: "hidden" });
  assert.equal(await page.$$eval("#marks .mark.bad", (r) => r.length), 0);
  assert.deepEqual(errors, []);
  await page.close();
});

test("the summary matches the Node API on the same sheet and settings", async () => {
  const { page } = await openPage(context, server.url);
  await ready(page);
  const sheet = await page.inputValue("#sheet");
  const settings = await page.evaluate(() => ({ to: Number(document.getElementById("to").value), method: document.getElementById("method").value,
    tolerance: { relative: Number(document.getElementById("tol-relative").value), absolute: Number(document.getElementById("tol-absolute").value) } }));
  const run = nodeRun(sheet, settings);
  const shown = await summaryValues(page);
  for (const name of run.states) assert.equal(shown[name], run.values[name].at(-1), name);
  await page.close();
});

test("the CSV matches the table, with a header and CRLF line ends", async () => {
  const { page } = await openPage(context, server.url);
  await ready(page);
  const csv = await download(page, "#csv");
  const lines = csv.split("\r\n");
  assert.equal(lines.at(-1), "", "ends with CRLF");
  const header = lines[0].split(",");
  const cols = await page.$$eval("#table thead th", (th) => th.map((t) => t.textContent));
  assert.deepEqual(header, cols);
  const rows = await page.$$eval("#table tbody tr", (trs) => trs.map((tr) => [...tr.children].map((td) => td.dataset.v)));
  assert.ok(rows.length > 10);
  assert.equal(lines.length - 2, rows.length, "the table shows every row here");
  rows.forEach((r, i) => assert.deepEqual(lines[i + 1].split(","), r, `row ${i}`));
  await page.close();
});

test("a share link restores the sheet, the settings and identical results", async () => {
  const { page } = await openPage(context, server.url);
  await ready(page);
  await setSheet(page, "# shared: a \"quoted\", comma'd <b>comment</b>\nT' = -0.003*(T - 20)\nT(0) = 95\n");
  await page.fill("#to", "777.5");
  await page.dispatchEvent("#to", "change");
  await page.waitForFunction(() => document.querySelector("#summary").textContent.includes("777.5"));
  const want = { sheet: await page.inputValue("#sheet"), values: await summaryValues(page) };
  const link = await dialogText(page, "#share");
  assert.match(link, /#m=[A-Za-z0-9_-]+$/);
  const other = await context.newPage();
  await other.goto(link);
  await ready(other);
  assert.equal(await other.inputValue("#sheet"), want.sheet);
  assert.equal(await other.inputValue("#to"), "777.5");
  assert.deepEqual(await summaryValues(other), want.values);
  assert.equal(await other.$$eval("#summary b", (b) => b.length), 0, "sheet text is never markup");
  await other.close();
  await page.close();
});

test("a damaged share link is refused with a clear message", async () => {
  const { page, errors } = await openPage(context, server.url + "#m=AAAA");
  await ready(page);
  assert.match(await page.textContent("#notice"), /cannot be opened: the link is damaged or cut short/);
  assert.deepEqual(errors, []);
  await page.close();
});

test("save to a file and open it again restores identical results", async () => {
  const { page } = await openPage(context, server.url);
  await ready(page);
  await setSheet(page, "T' = -0.0017*(T - 30)\nT(0) = 140\n");
  await page.fill("#to", "900");
  await page.dispatchEvent("#to", "change");
  await page.waitForFunction(() => document.querySelector("#summary").textContent.includes("t = 900"));
  const want = await summaryValues(page);
  const text = await download(page, "#save-file");
  const saved = JSON.parse(text);
  assert.equal(saved.format, "ratebook-model");
  assert.equal(saved.version, 2);
  assert.deepEqual(Object.keys(saved.settings.tolerance), ["relative", "absolute"]);
  assert.equal(saved.settings.to, 900);
  const dir = mkdtempSync(join(tmpdir(), "ratebook-file-"));
  writeFileSync(join(dir, "m.json"), text);
  await setSheet(page, COOLING);
  await page.waitForFunction(() => !document.querySelector("#summary").textContent.includes("t = 900") || document.getElementById("sheet").value.includes("0.0021"));
  await page.setInputFiles("#open-input", join(dir, "m.json"));
  await page.waitForFunction(() => document.getElementById("sheet").value.includes("0.0017"));
  await page.waitForFunction(() => document.querySelector("#summary").textContent.includes("t = 900"));
  assert.deepEqual(await summaryValues(page), want);
  assert.equal(await page.isVisible("#restore-previous"), true, "the replaced sheet is one click away");
  // A file of another version is refused.
  writeFileSync(join(dir, "v9.json"), JSON.stringify({ ...saved, version: 9 }));
  await page.setInputFiles("#open-input", join(dir, "v9.json"));
  await page.waitForSelector("#notice:not([hidden])");
  assert.match(await page.textContent("#notice"), /version 9/);
  await page.close();
});

test("autosave restores the sheet and settings after a reload", async () => {
  const { page } = await openPage(context, server.url);
  await ready(page);
  await setSheet(page, "T' = -0.0042*(T - 25)\nT(0) = 160\n");
  await page.selectOption("#method", "rk4");
  await page.fill("#step", "2.5");
  await page.dispatchEvent("#step", "change");
  await page.waitForTimeout(400);
  const want = await summaryValues(page);
  await page.reload();
  await ready(page);
  assert.equal(await page.inputValue("#sheet"), "T' = -0.0042*(T - 25)\nT(0) = 160\n");
  assert.equal(await page.inputValue("#method"), "rk4");
  assert.equal(await page.inputValue("#step"), "2.5");
  assert.deepEqual(await summaryValues(page), want);
  await page.evaluate(() => localStorage.clear());
  await page.close();
});

test("PNG and SVG downloads of the time view hold the plot", async () => {
  const { page } = await openPage(context, server.url);
  await ready(page);
  const svg = await download(page, '[data-svg="time-plot"]');
  assert.ok(svg.startsWith("<svg") && svg.includes("<polyline"), "SVG holds the curve");
  const png = await download(page, '[data-png="time-plot"]', "latin1");
  assert.equal(png.slice(1, 4), "PNG");
  await page.close();
});

test("the time view zooms, pans, resets and reads out values under the pointer", async () => {
  const { page } = await openPage(context, server.url);
  await ready(page);
  const box = await page.locator("#time-plot").boundingBox();
  await page.mouse.move(box.x + box.width * 0.5, box.y + box.height * 0.5);
  assert.match(await page.textContent("#readout"), /^t = [\d.]+: {2}d = [\d.]+/);
  const ink0 = await inkedPixels(page, "#time-hover");
  assert.ok(ink0 > 20, "the hover line is drawn");
  await page.mouse.move(0, 0);
  const before = await page.locator("#time-plot").screenshot();
  await page.click("#time-zoom-in");
  await page.click("#time-zoom-in");
  const zoomed = await page.locator("#time-plot").screenshot();
  assert.notDeepEqual(zoomed, before);
  await page.focus("#time-plot");
  await page.keyboard.press("ArrowRight");
  await page.keyboard.press("0");
  const reset = await page.locator("#time-plot").screenshot();
  assert.deepEqual(reset, before, "reset shows the whole run again");
  await page.close();
});

test("the comparison view overlays methods, tabulates them and fits slopes, in a worker", async () => {
  const { page, errors } = await openPage(context, server.url);
  await ready(page);
  await page.click("#tab-compare");
  await page.click("#compare-run");
  await page.waitForSelector("#compare-table tbody tr");
  const rows = await page.$$eval("#compare-table tbody tr", (r) => r.map((tr) => tr.children[0].textContent));
  assert.equal(rows.length, 10);
  assert.equal(rows[0], "adaptive reference");
  assert.ok(await inkedPixels(page, "#compare-plot") > 3000);
  assert.ok(await inkedPixels(page, "#order-plot") > 3000);
  await page.screenshot({ path: join(SHOTS, "page-compare.png"), fullPage: true });
  assert.deepEqual(errors, []);
  await page.close();
});

test("the single file works from file:// with the network blocked: solve, worker, nothing off the page", async () => {
  const { page, errors, offRequests } = await openPage(context, SINGLE_FILE_URL, { offline: true });
  await ready(page);
  assert.ok(await inkedPixels(page, "#time-plot") > 2000);
  await setSheet(page, "T' = -0.0031*(T - 21)\nT(0) = 99\n");
  await page.waitForFunction(() => document.getElementById("sheet").value.includes("99") && document.querySelector("#summary").textContent.length > 0);
  await page.click("#tab-compare");
  await page.click("#compare-run");
  await page.waitForSelector("#compare-table tbody tr");
  await page.evaluate(() => { document.getElementById("dialog-value").value = ""; });
  await page.click("#embed");
  await page.waitForFunction(() => document.getElementById("dialog-value").value.length > 0);
  assert.match(await page.inputValue("#dialog-value"), /^<iframe src="ratebook.html#embed&m=[A-Za-z0-9_-]+" sandbox="allow-scripts"/);
  assert.equal(await page.isVisible("#dialog-download"), true, "the single file is offered for download");
  await page.screenshot({ path: join(SHOTS, "page-single-file.png"), fullPage: true });
  assert.deepEqual(offRequests(), []);
  assert.deepEqual(errors, []);
  await page.close();
});

test("embed mode works inside a sandboxed iframe", async () => {
  const dir = mkdtempSync(join(tmpdir(), "ratebook-wiki-"));
  copyFileSync(SINGLE_FILE, join(dir, "ratebook.html"));
  // The link is made by the page itself.
  const { page: maker } = await openPage(context, SINGLE_FILE_URL);
  await ready(maker);
  await setSheet(maker, "T' = -0.0025*(T - 19)\nT(0) = 120\n");
  await maker.waitForTimeout(400);
  const snippet = await dialogText(maker, "#embed");
  const want = await summaryValues(maker);
  await maker.close();
  writeFileSync(join(dir, "wiki.html"), `<!doctype html><title>wiki</title><h1>Shop notes</h1>${snippet}`);
  const { page, errors, offRequests } = await openPage(context, "file://" + join(dir, "wiki.html"), { offline: true });
  const frame = await (await page.waitForSelector("iframe")).contentFrame();
  await frame.waitForFunction(() => document.body.dataset.ready === "1");
  assert.equal(await frame.evaluate(() => document.body.classList.contains("embed")), true);
  assert.equal(await frame.isVisible("#sheet-readonly"), true);
  assert.match(await frame.textContent("#sheet-readonly"), /0\.0025/);
  assert.equal(await frame.isVisible(".editor"), false);
  assert.deepEqual(await summaryValues(frame), want);
  assert.ok(await inkedPixels(frame, "#time-plot") > 2000);
  await page.screenshot({ path: join(SHOTS, "page-embed.png"), fullPage: true });
  assert.deepEqual(offRequests(), []);
  assert.deepEqual(errors, []);
  await page.close();
});
