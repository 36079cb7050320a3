// The page loads, solves its demo model and draws it, served and from file://,
// with no request leaving its own origin.
import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { mkdirSync } from "node:fs";
import { join } from "node:path";
import { ROOT, SINGLE_FILE_URL, serveWww, launch, openPage, inkedPixels } from "./harness.mjs";

const SHOTS = join(ROOT, "target", "screenshots");
mkdirSync(SHOTS, { recursive: true });
let server, context;
before(async () => { server = await serveWww(); context = await launch(); });
after(async () => { await context?.close(); await server?.close(); });

for (const [where, url, offline] of [["served", () => server.url, false], ["single file", () => SINGLE_FILE_URL, true]]) {
  test(`${where}: the demo curve is drawn and nothing leaves the origin`, async () => {
    const { page, errors, offRequests } = await openPage(context, url(), { offline });
    await page.waitForFunction(() => document.querySelector("#summary")?.textContent.length > 0);
    assert.ok(await inkedPixels(page, "#time-plot") > 2000, "the time view has no curve");
    await page.screenshot({ path: join(SHOTS, `foundation-${where.replace(" ", "-")}.png`) });
    assert.deepEqual(offRequests(), []);
    assert.deepEqual(errors, []);
    await page.close();
  });
}

test("a bad sheet shows a located message and the page stays usable", async () => {
  const { page, errors } = await openPage(context, server.url);
  await page.waitForFunction(() => document.querySelector("#summary")?.textContent.length > 0);
  await page.fill("#sheet", "T' = -0.0021*(T - 22\nT(0) = 180\n");
  await page.click("#run");
  const msg = await page.textContent("#problem");
  assert.match(msg, /line 1/i);
  await page.fill("#sheet", "T' = -0.0021*(T - 22)\nT(0) = 180\n");
  await page.click("#run");
  assert.equal(await page.isHidden("#problem"), true);
  assert.deepEqual(errors, []);
  await page.close();
});
