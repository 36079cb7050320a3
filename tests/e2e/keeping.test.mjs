// The user's sheet is never lost or silently replaced, and what the page
// reads of a sheet is what the solver reads (issue 22, findings 3, 8, 9, 10):
// autosave per copy of the page, never overwritten by opening a link or an
// embed; a failed write and a second tab are said on the page; slider
// ranges follow the value; the start time and parameters come from the
// solver's own reader; an unknown method in a link is named. Each alarm has
// its benign control beside it.
import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { copyFileSync, mkdtempSync, mkdirSync } from "node:fs";
import { join } from "node:path";
import { tmpdir } from "node:os";
import { deflateRawSync } from "node:zlib";
import { ROOT, SINGLE_FILE, serveWww, launch, openPage } from "./harness.mjs";
import { ready, settled, summaryValues, pasteSheet } from "./pagekit.mjs";

const SHOTS = join(ROOT, "target", "screenshots");
mkdirSync(SHOTS, { recursive: true });
let server, context;
before(async () => { server = await serveWww(); context = await launch(); });
after(async () => { await context?.close(); await server?.close(); });

const link = (kept) => "m=" + deflateRawSync(Buffer.from(JSON.stringify({ v: 1, ...kept }))).toString("base64url");
const sleep = (ms) => new Promise((ok) => setTimeout(ok, ms));

/** Paste `text` as the sheet (one input event) and wait for its result. */
async function paste(page, text) {
  await pasteSheet(page, text);
  await sleep(400);
  await settled(page);
}

/** This page's autosaved sheet, as stored. */
const autosaved = (page) => page.evaluate(() => {
  const raw = localStorage.getItem(`ratebook.autosave.v2 ${location.href.split(/[?#]/)[0]}`);
  return raw ? JSON.parse(raw).sheet : null;
});

const MINE = "# my work, autosaved\nr = 0.05\ndx/dt = r*x\nx(0) = 10\n";
const THEIRS = { sheet: "# from a link\ndz/dt = -z\nz(0) = 2\n", settings: { to: 4 } };

test("a share link opened in a new tab shows its model and keeps the autosaved sheet one click away", async () => {
  const { page: mine } = await openPage(context, server.url);
  await ready(mine);
  await mine.evaluate(() => localStorage.clear());
  await paste(mine, MINE);
  assert.equal(await autosaved(mine), MINE);
  await mine.close();
  // A new tab opens a link: its model shows, the autosave still holds mine.
  const { page } = await openPage(context, `${server.url}#${link(THEIRS)}`);
  await ready(page);
  assert.equal(await page.inputValue("#sheet"), THEIRS.sheet);
  assert.equal(await autosaved(page), MINE, "opening a link does not write the autosave");
  assert.match(await page.textContent("#notice"), /link replaced your sheet.*Back to the previous sheet/s);
  await page.screenshot({ path: join(SHOTS, "link-over-autosave.png") });
  await page.click("#restore-previous");
  await page.waitForFunction((s) => document.getElementById("sheet").value === s, MINE);
  await page.close();
  // An embed of the same link, opened as a page, shows it and writes nothing, even when a slider moves.
  const { page: embed } = await openPage(context, `${server.url}#embed&${link({ sheet: "k = 2\ny' = -k*y\ny(0) = 1\n", settings: { to: 3 } })}`);
  await ready(embed);
  await embed.evaluate(() => { const s = document.getElementById("param-k"); s.value = "3"; s.dispatchEvent(new Event("input")); s.dispatchEvent(new Event("change")); });
  await settled(embed);
  assert.match(await embed.inputValue("#sheet"), /k = 3/);
  assert.equal(await autosaved(embed), MINE, "an embed never writes the autosave");
  await embed.close();
  // Benign control: edits in an ordinary tab are autosaved as before.
  const { page: again } = await openPage(context, server.url);
  await ready(again);
  assert.equal(await again.inputValue("#sheet"), MINE, "a reload brings back the autosave");
  await paste(again, MINE + "# one more line\n");
  assert.equal(await autosaved(again), MINE + "# one more line\n");
  await again.close();
});

test("two copies of the single file at different paths keep two autosaves", async () => {
  const dirs = [mkdtempSync(join(tmpdir(), "ratebook-copy-a-")), mkdtempSync(join(tmpdir(), "ratebook-copy-b-"))];
  const urls = dirs.map((d) => { copyFileSync(SINGLE_FILE, join(d, "ratebook.html")); return `file://${join(d, "ratebook.html")}`; });
  const { page: a } = await openPage(context, urls[0]);
  await ready(a);
  await paste(a, "# copy A\ny' = -y\ny(0) = 1\n");
  await a.close();
  const { page: b } = await openPage(context, urls[1]);
  await ready(b);
  assert.notEqual(await b.inputValue("#sheet"), "# copy A\ny' = -y\ny(0) = 1\n", "copy B does not open copy A's sheet");
  await paste(b, "# copy B\ny' = -2*y\ny(0) = 1\n");
  await b.close();
  // Benign control: each copy brings back its own.
  for (const [url, want] of [[urls[0], "# copy A\ny' = -y\ny(0) = 1\n"], [urls[1], "# copy B\ny' = -2*y\ny(0) = 1\n"]]) {
    const { page } = await openPage(context, url);
    await ready(page);
    assert.equal(await page.inputValue("#sheet"), want);
    await page.close();
  }
});

test("with the browser's storage full, an edit that cannot be autosaved says so", async () => {
  const { page } = await openPage(context, server.url);
  await ready(page);
  try {
    // Benign control first: a write that goes through says nothing.
    await paste(page, "# saved fine\ny' = -y\ny(0) = 1\n");
    assert.equal(await page.getAttribute("body", "data-autosave"), "on");
    assert.doesNotMatch(await page.textContent("#sheet-state"), /not autosaved/);
    // Fill the origin's storage to the last byte.
    await page.evaluate(() => {
      for (let size = 1 << 20, i = 0; size >= 1; size = Math.floor(size / 2)) {
        try { for (;;) localStorage.setItem(`junk${i++}`, "x".repeat(size)); } catch { /* full at this size */ }
      }
    });
    await paste(page, "# this edit does not fit in the storage any more\ny' = -y\ny(0) = 1\n");
    assert.equal(await page.getAttribute("body", "data-autosave"), "failed");
    assert.match(await page.textContent("#sheet-state"), /not autosaved: storage full/);
    assert.match(await page.textContent("#notice"), /could not be autosaved.*storage.*full.*Save/s);
    await page.screenshot({ path: join(SHOTS, "autosave-storage-full.png") });
    // Room again: the next edit is kept, and the warning goes.
    await page.evaluate(() => { for (const k of Object.keys(localStorage)) if (k.startsWith("junk")) localStorage.removeItem(k); });
    await paste(page, "# room again\ny' = -y\ny(0) = 1\n");
    assert.equal(await page.getAttribute("body", "data-autosave"), "on");
    assert.doesNotMatch(await page.textContent("#sheet-state"), /not autosaved/);
  } finally {
    await page.evaluate(() => { for (const k of Object.keys(localStorage)) if (k.startsWith("junk")) localStorage.removeItem(k); });
    await page.close();
  }
});

test("a second tab on the same copy is detected and both say so; one tab alone says nothing", async () => {
  const { page: one } = await openPage(context, server.url);
  await ready(one);
  await sleep(300);
  assert.doesNotMatch(await one.textContent("#sheet-state"), /another tab/, "benign: one tab");
  const { page: two } = await openPage(context, server.url);
  await ready(two);
  for (const p of [one, two]) await p.waitForFunction(() => /another tab/.test(document.getElementById("sheet-state").textContent));
  assert.match(await two.textContent("#notice"), /open in another tab too/);
  // An autosave from one tab is told to the other.
  await one.evaluate(() => { document.getElementById("notice").hidden = true; });
  await paste(two, "# written in tab two\ny' = -y\ny(0) = 1\n");
  await one.waitForFunction(() => /just autosaved its sheet over this one/.test(document.getElementById("notice").textContent));
  await one.screenshot({ path: join(SHOTS, "two-tabs.png") });
  await one.close();
  await two.close();
});

test("a slider's range follows a value corrected by orders of magnitude, and stays finite", async () => {
  const { page } = await openPage(context, server.url);
  await ready(page);
  await paste(page, "k = 2000\ny' = -k*y/2000\ny(0) = 1\n");
  await paste(page, "k = 0.002\ny' = -k*y/2000\ny(0) = 1\n");
  await page.focus("#param-k");
  await page.keyboard.press("ArrowRight");
  await settled(page);
  const k = Number(/^k = (\S+)/m.exec(await page.inputValue("#sheet"))[1]);
  assert.ok(k > 0.002 && k < 0.0021, `one arrow key moves k by a small step, not to 10: k = ${k}`);
  await paste(page, "k = 1e308\ny' = -y + 0*k\ny(0) = 1\n");
  const range = await page.$eval("#param-k", (s) => [s.min, s.max, s.step].map(Number));
  assert.ok(range.every(Number.isFinite), `finite range: ${range}`);
  assert.equal(await page.inputValue(".param-value[aria-label='k value']"), "1e308");
  // Benign: a drag within a range the value was made for keeps the range.
  await paste(page, "k = 2\ny' = -k*y\ny(0) = 1\n");
  const [lo, hi] = await page.$eval("#param-k", (s) => [s.min, s.max].map(Number));
  await paste(page, "k = 2.5\ny' = -k*y\ny(0) = 1\n");
  assert.deepEqual(await page.$eval("#param-k", (s) => [s.min, s.max].map(Number)), [lo, hi]);
  await page.close();
});

test("a start time written as an expression solves as in the API, and parameters come from the solver's reader", async () => {
  const { page } = await openPage(context, server.url);
  await ready(page);
  await page.evaluate(() => { const to = document.getElementById("to"); to.value = "10"; to.dispatchEvent(new Event("change")); });
  await paste(page, "t0 = 6\nk = 1\ny' = -k*y\ny(t0) = 1\n");
  assert.equal(await page.isHidden("#problem"), true, await page.textContent("#problem"));
  const y = (await summaryValues(page)).y;
  assert.ok(Math.abs(y - Math.exp(-4)) < 1e-6, `y(10) = ${y}, exp(-4) analytic`);
  // The sliders are the parameters whose value is a plain number: t0 and k, not k2.
  await paste(page, "t0 = 6\nk = 1\nk2 = 2*k\ny' = -k2*y\ny(t0) = 1\n");
  assert.deepEqual(await page.$$eval(".param .param-name", (l) => l.map((x) => x.textContent)), ["t0", "k"]);
  await page.close();
});

test("a link with a method this page does not have says so and names it; a known one says nothing of the kind", async () => {
  const { page } = await openPage(context, `${server.url}#${link({ sheet: "y' = -y\ny(0) = 1\n", settings: { to: 2, method: "no-such-method" } })}`);
  await ready(page);
  assert.match(await page.textContent("#notice"), /method “no-such-method”, which this page does not have: it runs with/);
  assert.equal(await page.inputValue("#method"), "auto");
  await page.close();
  const { page: ok } = await openPage(context, `${server.url}#${link({ sheet: "y' = -y\ny(0) = 1\n", settings: { to: 2, method: "rk4", step: 0.01 } })}`);
  await ready(ok);
  assert.equal(await ok.inputValue("#method"), "rk4");
  assert.doesNotMatch(await ok.textContent("#notice"), /does not have/);
  await ok.close();
});

test("a helper that overflows gives a well-formed peaks table, never 'undefined'", async () => {
  const { page } = await openPage(context, server.url);
  await ready(page);
  await paste(page, "y' = 1\ny(0) = 0\nh = exp(1000*y)\n");
  const text = await page.textContent("#summary-extrema");
  assert.doesNotMatch(text, /undefined|NaN/);
  // Benign: the state's own peak is a number as usual.
  assert.ok(Number(await page.$eval("#summary-extrema tr[data-name='y'] td.num", (td) => td.dataset.v)) > 0);
  await page.close();
});
