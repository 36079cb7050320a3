// The accuracy view and the printed report, in Chromium. Screenshots go to
// target/screenshots/ to be looked at.
import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { mkdirSync } from "node:fs";
import { join } from "node:path";
import { ROOT, serveWww, launch, openPage } from "./harness.mjs";
import { ready, setSheet } from "./pagekit.mjs";

const SHOTS = join(ROOT, "target", "screenshots");
mkdirSync(SHOTS, { recursive: true });
let server, context;
before(async () => { server = await serveWww(); context = await launch(); });
after(async () => { await context?.close(); await server?.close(); });

// Our own draining scenario; it reaches the 1 m mark at t = 70.135 s
// (analytic: Torricelli outflow, see tests/study_pitfalls.rs).
const TANK = "A = 1.5\na = 0.004\ng = 9.81\nq = a*sqrt(2*g*h)\ndh/dt = -q/A\nh(0) = 2\nmark when h < 1\n";

async function settle(page, to) {
  await page.fill("#to", String(to));
  await page.dispatchEvent("#to", "change");
  await page.waitForTimeout(450);
}

test("the accuracy view gives a verdict, trusted digits and a report that prints", async () => {
  const { page, errors } = await openPage(context, server.url);
  await ready(page);
  await setSheet(page, TANK);
  await settle(page, 200);
  await page.click("#tab-accuracy");
  await page.waitForSelector("#accuracy-verdict");
  const verdict = await page.textContent("#accuracy-verdict");
  assert.match(verdict, /good to at least \d+ digits/, verdict);
  const rows = await page.$$eval("#accuracy-table tr", (r) => r.slice(1).map((tr) => [...tr.children].map((td) => td.textContent)));
  const ev = rows.find((r) => r[0].startsWith("event h < 1"));
  assert.ok(ev, JSON.stringify(rows));
  assert.ok(Math.abs(Number(ev[1]) - 70.135) < 0.01, ev[1]);
  assert.ok(Number(ev[3]) >= 5, `trusted digits ${ev[3]}`);
  assert.match(await page.textContent("#accuracy-pitfalls"), /No pitfall found/);
  await page.screenshot({ path: join(SHOTS, "accuracy-view.png"), fullPage: true });

  // The printed report: the page prints only the report.
  const html = await page.evaluate(async () => {
    const acc = await import("./accuracy.js");
    const rep = await import("./report.js");
    return rep.reportHtml(acc.reportData());
  });
  for (const want of ["ratebook report", "dh/dt = -q/A", "trusted digits", "good to at least", "licensed", "ratebook 0."]) assert.ok(html.includes(want), want);
  await page.evaluate(() => { window.print = () => { document.body.dataset.printed = document.getElementById("rb-print")?.textContent.length ?? 0; }; });
  await page.click("#report-print");
  assert.ok(Number(await page.evaluate(() => document.body.dataset.printed)) > 200);
  const report = await context.newPage();
  await report.setContent(html);
  await report.screenshot({ path: join(SHOTS, "accuracy-report.png"), fullPage: true });
  await report.close();
  assert.deepEqual(errors, []);
  await page.close();
});

test("an unstable fixed step is shown on the stability region, with a convergence study", async () => {
  const { page, errors } = await openPage(context, server.url);
  await ready(page);
  await setSheet(page, "y' = -1000*(y - cos(t)) - sin(t)\ny(0) = 1\n");
  await page.selectOption("#method", "rk4");
  await page.fill("#step", "0.01");
  await page.dispatchEvent("#step", "change");
  await settle(page, 1);
  await page.click("#tab-accuracy");
  await page.waitForSelector("#accuracy-verdict");
  await page.waitForSelector('#accuracy-pitfalls [data-code="unstable-step"]');
  assert.match(await page.textContent('[data-code="unstable-step"]'), /0\.00279/);
  await page.waitForSelector("#accuracy-stability img");
  await page.screenshot({ path: join(SHOTS, "accuracy-unstable.png"), fullPage: true });
  // A stable step and its convergence study.
  await page.fill("#step", "0.002");
  await page.dispatchEvent("#step", "change");
  await page.waitForTimeout(600);
  await page.click("#tab-time");
  await page.click("#tab-accuracy");
  await page.waitForSelector("#conv-run");
  await page.fill("#conv-target", "1e-8");
  await page.click("#conv-run");
  await page.waitForSelector("#conv-table");
  const orders = await page.$$eval("#conv-table tr", (r) => r.slice(1).map((tr) => tr.children[2].textContent));
  // h·λ = 2 here, inside but near RK4's real stability limit (2.785, mpmath):
  // the halvings approach the asymptotic order 4 from above, not yet within 0.3.
  const last = Number(orders[0].split(", ").at(-1));
  assert.ok(Math.abs(last - 4) < 1.0, orders[0]);
  await page.screenshot({ path: join(SHOTS, "accuracy-convergence.png"), fullPage: true });
  assert.deepEqual(errors, []);
  await page.close();
});
