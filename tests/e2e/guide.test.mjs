// The guide beside the editor and the editor's help, in Chromium: the guide
// opens and closes (button, F1, Escape) without touching the sheet, is
// searched, puts functions and examples into the sheet; typing a name offers
// completions; a problem is underlined at its column with its message on hover.
import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { mkdirSync } from "node:fs";
import { join } from "node:path";
import { ROOT, SINGLE_FILE_URL, serveWww, launch, openPage } from "./harness.mjs";
import { ready, setSheet } from "./pagekit.mjs";
import { sheetLanguage } from "../../www/pkg/ratebook.js";

const SHOTS = join(ROOT, "target", "screenshots");
mkdirSync(SHOTS, { recursive: true });
let server, context;
before(async () => { server = await serveWww(); context = await launch(); });
after(async () => { await context?.close(); await server?.close(); });

const FREEZER = "# freezer\nk = 0.0008\nroom = 22\ndT/dt = k*(room - T)\nT(0) = -18\n";

const box = (page, sel) => page.$eval(sel, (n) => { const r = n.getBoundingClientRect(); return { left: r.left, right: r.right, top: r.top, bottom: r.bottom }; });

async function typeAtEnd(page, text) {
  await page.click("#sheet");
  await page.keyboard.press("Control+End");
  await page.keyboard.type(text);
}

test("the guide opens beside the editor, by button and by F1, and the sheet stays as it was", async () => {
  const { page, errors } = await openPage(context, server.url);
  await ready(page);
  await setSheet(page, FREEZER);
  assert.equal(await page.isHidden("#guide"), true);
  await page.click("#guide-toggle");
  assert.equal(await page.isVisible("#guide"), true);
  assert.equal(await page.getAttribute("#guide-toggle", "aria-expanded"), "true");
  assert.equal(await page.evaluate(() => document.activeElement.id), "guide-search", "the search box has the focus");
  // Beside the editor, not over it: the editor is in full view and the guide starts right of it.
  const [editor, guide] = [await box(page, ".editor"), await box(page, "#guide")];
  assert.ok(guide.left >= editor.right, `guide at ${guide.left}, editor ends at ${editor.right}`);
  assert.ok(guide.top < editor.bottom && guide.bottom > editor.top, "side by side");
  assert.equal(await page.evaluate(() => { const r = document.querySelector(".editor").getBoundingClientRect();
    return document.elementFromPoint(r.left + r.width / 2, r.top + r.height / 2)?.id; }), "sheet");
  await page.screenshot({ path: join(SHOTS, "guide-open.png") });
  // The editor works while the guide is open.
  await typeAtEnd(page, "# still editable");
  assert.equal(await page.inputValue("#sheet"), FREEZER + "# still editable");
  // F1 closes and opens it; Escape in the guide closes it and gives the editor the focus.
  await page.keyboard.press("F1");
  assert.equal(await page.isHidden("#guide"), true);
  await page.keyboard.press("F1");
  assert.equal(await page.isVisible("#guide"), true);
  await page.keyboard.press("Escape");
  assert.equal(await page.isHidden("#guide"), true);
  assert.equal(await page.evaluate(() => document.activeElement.id), "sheet");
  assert.equal(await page.inputValue("#sheet"), FREEZER + "# still editable");
  // An empty sheet says how to start and where the guide is, unmarked by the "empty" problem.
  await setSheet(page, "");
  assert.match(await page.getAttribute("#sheet", "placeholder"), /dx\/dt = -k\*x[\s\S]*Guide \(F1\)/);
  assert.equal(await page.$$eval("#marks .mark.bad", (r) => r.length), 0);
  assert.match(await page.textContent("#problem"), /empty/);
  // Every function of the solver is listed, in its order.
  await page.click("#guide-toggle");
  assert.deepEqual(await page.$$eval("#guide tr[data-fn]", (rows) => rows.map((r) => r.dataset.fn)), sheetLanguage().functions.map((f) => f.name));
  assert.deepEqual(errors, []);
  await page.close();
});

test("the guide is searched: matches are marked, and a query with no match says so", async () => {
  const { page, errors } = await openPage(context, server.url);
  await ready(page);
  await page.click("#guide-toggle");
  const all = await page.$$eval("#guide .guide-entry", (n) => n.length);
  await page.fill("#guide-search", "acosh");
  assert.deepEqual(await page.$$eval("#guide .guide-entry", (n) => n.map((e) => e.id)), ["guide-functions"]);
  assert.deepEqual(await page.$$eval("#guide tr[data-fn]", (rows) => rows.map((r) => r.dataset.fn)), ["acosh"]);
  assert.equal(await page.textContent("#guide tr[data-fn] mark"), "acosh");
  assert.match(await page.textContent("#guide-count"), /^1 section match/);
  await page.screenshot({ path: join(SHOTS, "guide-search.png") });
  // Several words: every one must occur.
  await page.fill("#guide-search", "stop crossing");
  const ids = await page.$$eval("#guide .guide-entry", (n) => n.map((e) => e.id));
  assert.ok(ids.includes("guide-stop"), ids.join());
  assert.ok(ids.length < all);
  await page.fill("#guide-search", "trusted digits");
  assert.ok((await page.$$eval("#guide .guide-entry", (n) => n.map((e) => e.id))).includes("guide-headline"));
  await page.fill("#guide-search", "qqqzzz");
  assert.equal(await page.$$eval("#guide .guide-entry", (n) => n.length), 0);
  assert.match(await page.textContent("#guide-count"), /Nothing matches/);
  // Escape clears the search first, then closes.
  await page.keyboard.press("Escape");
  assert.equal(await page.inputValue("#guide-search"), "");
  assert.equal(await page.$$eval("#guide .guide-entry", (n) => n.length), all);
  assert.deepEqual(errors, []);
  await page.close();
});

test("a function or an example from the guide goes into the sheet at the caret", async () => {
  const { page, errors } = await openPage(context, server.url);
  await ready(page);
  await setSheet(page, "k = 2\ny' = -k*y\ny(0) = 1\n");
  // The caret after "-k*" on line 2, then a click on hypot in the guide.
  await page.click("#sheet");
  await page.evaluate(() => { const s = document.getElementById("sheet"); const at = s.value.indexOf("y\ny(0)"); s.setSelectionRange(at, at); });
  await page.click("#guide-toggle");
  await page.fill("#guide-search", "hypot");
  await page.click("#guide [data-insert-fn=hypot]");
  assert.equal(await page.inputValue("#sheet"), "k = 2\ny' = -k*hypot(y\ny(0) = 1\n");
  assert.equal(await page.evaluate(() => document.activeElement.id), "sheet", "the editor has the focus back");
  await page.keyboard.press("ArrowRight");
  await page.keyboard.type(", 1)");
  assert.equal(await page.inputValue("#sheet"), "k = 2\ny' = -k*hypot(y, 1)\ny(0) = 1\n");
  // An example goes in on lines of its own, after the caret's line.
  await page.evaluate(() => { const s = document.getElementById("sheet"); s.setSelectionRange(s.value.length, s.value.length); });
  await page.fill("#guide-search", "mark when");
  await page.click("#guide [data-insert-example=mark]");
  const text = await page.inputValue("#sheet");
  assert.ok(text.startsWith("k = 2\ny' = -k*hypot(y, 1)\ny(0) = 1\n# Battery pack"), text);
  assert.ok(text.endsWith("mark when Q < 8\n"), text);
  assert.deepEqual(errors, []);
  await page.close();
});

test("typing a name offers the sheet's own names and the functions; Enter or a click takes one", async () => {
  const { page, errors } = await openPage(context, server.url);
  await ready(page);
  await setSheet(page, FREEZER);
  await typeAtEnd(page, "loss = ro");
  await page.waitForSelector("#sheet-complete:not([hidden])");
  const names = () => page.$$eval("#sheet-complete li", (li) => li.map((n) => n.dataset.name));
  assert.deepEqual((await names())[0], "room", "the sheet's own name comes first");
  assert.ok((await names()).includes("round"), "then the functions");
  assert.equal(await page.getAttribute("#sheet", "aria-activedescendant"), "sheet-complete-0");
  await page.screenshot({ path: join(SHOTS, "guide-complete.png") });
  await page.keyboard.press("Enter");
  assert.equal(await page.isHidden("#sheet-complete"), true);
  assert.equal(await page.inputValue("#sheet"), FREEZER + "loss = room");
  // A function comes with its parenthesis; arrows move through the list.
  await page.keyboard.type(" - 0*co");
  await page.waitForSelector("#sheet-complete:not([hidden])");
  assert.deepEqual(await names(), ["cos", "cosh"]);
  await page.keyboard.press("ArrowDown");
  await page.keyboard.press("Tab");
  assert.equal(await page.inputValue("#sheet"), FREEZER + "loss = room - 0*cosh(");
  await page.keyboard.type("T)");
  // Ctrl+Space lists every name; a click takes one.
  await page.keyboard.type(" + ");
  await page.keyboard.press("Control+Space");
  await page.waitForSelector("#sheet-complete:not([hidden])");
  const every = await names();
  for (const n of ["k", "room", "T", "t", "sqrt", "pi", "e"]) {
    assert.ok(every.includes(n), `${n} in ${every.join()}`);
  }
  await page.click("#sheet-complete li[data-name=k]");
  assert.equal(await page.inputValue("#sheet"), FREEZER + "loss = room - 0*cosh(T) + k");
  // Escape closes the list; nothing is offered in a comment or after a number's exponent.
  await page.keyboard.type("\n# ro");
  assert.equal(await page.isHidden("#sheet-complete"), true);
  await page.keyboard.type("\nq = 1e");
  assert.equal(await page.isHidden("#sheet-complete"), true);
  await page.keyboard.type("5*ro");
  await page.waitForSelector("#sheet-complete:not([hidden])");
  await page.keyboard.press("Escape");
  assert.equal(await page.isHidden("#sheet-complete"), true);
  assert.deepEqual(errors, []);
  await page.close();
});

test("a problem is underlined at its column, and its message shows on hover", async () => {
  const { page, errors } = await openPage(context, server.url);
  await ready(page);
  const sheet = "k = 0.0008\nT' = k*(rooom - T)\nT(0) = -18\n";
  await setSheet(page, sheet);
  await page.waitForSelector("#sheet-squiggle");
  assert.match(await page.textContent("#problem"), /^Line 2, column 9: unknown name "rooom"/);
  assert.equal(await page.textContent("#sheet-squiggle"), "rooom", "the whole name is underlined");
  // At column 9 of line 2: eight characters from the row's start.
  const at = await page.$eval("#sheet-squiggle", (n) => {
    const row = n.parentElement, rows = [...row.parentElement.children];
    const x = n.getBoundingClientRect().left - row.getBoundingClientRect().left;
    const ctx = document.createElement("canvas").getContext("2d");
    const cs = getComputedStyle(document.getElementById("sheet"));
    ctx.font = `${cs.fontSize} ${cs.fontFamily}`;
    return { line: rows.indexOf(row) + 1, chars: x / ctx.measureText("0").width };
  });
  assert.equal(at.line, 2);
  assert.ok(Math.abs(at.chars - 8) < 0.2, `underline starts ${at.chars} characters in`);
  assert.equal(await page.isHidden("#sheet-tip"), true);
  const s = await box(page, "#sheet-squiggle");
  await page.mouse.move((s.left + s.right) / 2, (s.top + s.bottom) / 2);
  await page.waitForSelector("#sheet-tip:not([hidden])");
  const listed = (await page.textContent("#problem")).replace(/^Line 2, column 9: /, "");
  assert.match(listed, /^unknown name "rooom"/);
  assert.equal(await page.textContent("#sheet-tip"), listed, "the tip holds the message");
  const tip = await box(page, "#sheet-tip");
  assert.ok(tip.top >= s.bottom - 1, "the message is under the name, not over it");
  await page.screenshot({ path: join(SHOTS, "guide-hover.png") });
  await page.mouse.move(s.right + 200, s.bottom + 150);
  assert.equal(await page.isHidden("#sheet-tip"), true);
  // From the keyboard: a click on the listed problem puts the caret there, which shows the message too.
  await page.click("#problem li");
  assert.equal(await page.evaluate(() => document.getElementById("sheet").selectionStart), "k = 0.0008\nT' = k*(".length);
  await page.waitForSelector("#sheet-tip:not([hidden])");
  await page.keyboard.press("End");
  assert.equal(await page.isHidden("#sheet-tip"), true, "the caret left the name");
  // The sheet is the user's: nothing was changed by marking it.
  assert.equal(await page.inputValue("#sheet"), sheet);
  // A problem past the end of its line is underlined too (a blank after it).
  await setSheet(page, "T' = -0.5*\nT(0) = 1\n");
  await page.waitForSelector("#sheet-squiggle");
  assert.match(await page.textContent("#problem"), /^Line 1, column \d+: /);
  // Fixed: no underline, no message.
  await setSheet(page, "T' = -0.5*T\nT(0) = 1\n");
  await page.waitForSelector("#problem", { state: "hidden" });
  assert.equal(await page.$("#sheet-squiggle"), null);
  assert.deepEqual(errors, []);
  await page.close();
});

test("single file, offline: the guide and the editor's help work under its CSP; embed mode has no guide", async () => {
  const { page, errors, offRequests } = await openPage(context, SINGLE_FILE_URL, { offline: true });
  await ready(page);
  await page.keyboard.press("F1");
  assert.equal(await page.isVisible("#guide"), true);
  assert.equal(await page.$$eval("#guide tr[data-fn]", (r) => r.length), sheetLanguage().functions.length);
  await page.fill("#guide-search", "limits");
  assert.match(await page.textContent("#guide-limits"), new RegExp(`${sheetLanguage().limits.lines.toLocaleString("en-US").replace(/,/g, " ")} lines`));
  await typeAtEnd(page, "\nz = sq");
  await page.waitForSelector("#sheet-complete:not([hidden])");
  assert.deepEqual(offRequests(), []);
  assert.deepEqual(errors, []);
  await page.close();
  const embed = await openPage(context, SINGLE_FILE_URL + "#embed", { offline: true });
  await ready(embed.page);
  assert.equal(await embed.page.isHidden("#guide-toggle"), true);
  await embed.page.keyboard.press("F1");
  assert.equal(await embed.page.isHidden("#guide"), true);
  assert.deepEqual(embed.errors, []);
  await embed.page.close();
});
