// Helpers for tests of the workbench page (additive to harness.mjs).
import { readFileSync } from "node:fs";
import { initSync, solve } from "../../www/pkg/ratebook.js";
import { grid, sheetStart } from "../../www/runinfo.js";

initSync({ module: readFileSync(new URL("../../www/pkg/ratebook_bg.wasm", import.meta.url)) });

/** Wait until the page has loaded its model and drawn it. */
export async function ready(page) {
  await page.waitForFunction(() => document.body.dataset.ready === "1", null, { timeout: 15000 });
}

/** Replace the sheet text as a user would, and wait for the page to take it up. */
export async function setSheet(page, text) {
  await page.fill("#sheet", text);
  await page.waitForTimeout(450);
}

/** The summary's final values, full precision, by name. */
export async function summaryValues(frame) {
  return frame.$$eval("#summary-final tr[data-name]", (rows) =>
    Object.fromEntries(rows.map((r) => [r.dataset.name, Number(r.querySelector("td.num").dataset.v)])));
}

/** The Node API's run for the page's plotted run (same sheet, settings and output grid). */
export function nodeRun(sheet, settings, points = 600) {
  const t0 = sheetStart(sheet);
  return solve(sheet, { ...settings, at: grid(t0, settings.to, Math.abs(settings.to - t0) / points) });
}

/** Click `selector`, catch the download it starts and return its text. */
export async function download(page, selector, encoding = "utf8") {
  const [dl] = await Promise.all([page.waitForEvent("download"), page.click(selector)]);
  return readFileSync(await dl.path(), encoding);
}
