// Helpers for tests of the workbench page (additive to harness.mjs).
import { readFileSync } from "node:fs";
import { initSync, solve, readSheet } from "../../www/pkg/ratebook.js";
import { grid } from "../../www/runinfo.js";

initSync({ module: readFileSync(new URL("../../www/pkg/ratebook_bg.wasm", import.meta.url)) });

/** Wait until the page has loaded its model and drawn it. */
export async function ready(page) {
  await page.waitForFunction(() => document.body.dataset.ready === "1", null, { timeout: 15000 });
}

/** Wait until the outcome of the page's latest solve request is on screen (solves run in a worker). */
export async function settled(page) {
  await page.waitForFunction(() => document.body.dataset.settled === "1", null, { timeout: 30000 });
}

/**
 * Replace the sheet as a paste does: the new text, then one input event.
 * (Playwright's fill types a textarea line by line, an input event a line.)
 */
export function pasteSheet(page, text) {
  return page.evaluate((t) => {
    const s = document.getElementById("sheet");
    s.focus();
    s.value = t;
    s.dispatchEvent(new InputEvent("input", { inputType: "insertFromPaste" }));
  }, text);
}

/** Replace the sheet text as a user would, and wait for the page to take it up and show its result. */
export async function setSheet(page, text) {
  await page.fill("#sheet", text);
  await page.waitForTimeout(400);
  await settled(page);
}

/** The summary's final values, full precision, by name. */
export async function summaryValues(frame) {
  return frame.$$eval("#summary-final tr[data-name]", (rows) =>
    Object.fromEntries(rows.map((r) => [r.dataset.name, Number(r.querySelector("td.num").dataset.v)])));
}

/** The Node API's run for the page's plotted run (same sheet, settings and output grid). */
export function nodeRun(sheet, settings, points = 600) {
  const t0 = readSheet(sheet).start;
  return solve(sheet, { ...settings, at: grid(t0, settings.to, Math.abs(settings.to - t0) / points) });
}

/** Click `selector`, catch the download it starts and return its text. */
export async function download(page, selector, encoding = "utf8") {
  const [dl] = await Promise.all([page.waitForEvent("download"), page.click(selector)]);
  return readFileSync(await dl.path(), encoding);
}

/** Click `selector` (share or embed) and return the text its dialog offers. */
export async function dialogText(frame, selector) {
  await frame.evaluate(() => { document.getElementById("dialog-value").value = ""; });
  await frame.click(selector);
  await frame.waitForFunction(() => document.getElementById("dialog-value").value.length > 0);
  const v = await frame.inputValue("#dialog-value");
  await frame.click("#dialog-close");
  return v;
}

/** The settings of the run the page shows, as it passed them to the solver. */
export async function shownSettings(frame) {
  return JSON.parse(await frame.getAttribute("#summary", "data-settings"));
}

/** The final values the summary should show for `run`: at its stop event, else at its last output time. */
export function finalValues(run) {
  const stop = run.status === "stopped" ? run.events.at(-1) : null;
  return Object.fromEntries([...run.states, ...run.helpers].map((n) => [n, stop ? stop.values[n] : run.values[n].at(-1)]));
}
