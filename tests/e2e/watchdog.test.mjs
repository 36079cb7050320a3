// The watchdog: a corpus of extreme sheets, settings and links, each given
// to a fresh page as a user or a link would give it. After each, the page
// must keep answering: a trivial evaluate round trip comes back within 1 s,
// again and again for a few seconds (a frozen page never answers), and the
// page then still solves an ordinary sheet. This checks liveness, not speed:
// the bound is far above any page's ordinary answer time. Each case has a
// browser of its own, so that a page frozen by one cannot hold up the next.
import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { deflateRawSync } from "node:zlib";
import { serveWww, launch, openPage } from "./harness.mjs";
import { ready, settled, summaryValues, pasteSheet } from "./pagekit.mjs";

let server;
before(async () => { server = await serveWww(); });
after(async () => { await server?.close(); });

const sleep = (ms) => new Promise((ok) => setTimeout(ok, ms));
const link = (kept) => "m=" + deflateRawSync(Buffer.from(JSON.stringify({ v: 1, ...kept }))).toString("base64url");

// A forced chain of 200 states, stiff (rates from 1 to 1000), for `auto` to End 30.
let CHAIN = "# forced chain of 200 stages\nf = 1000\ndx0/dt = f*(sin(t) - x0)\nx0(0) = 0\n";
for (let i = 1; i < 200; i++) CHAIN += `dx${i}/dt = ${1 + 5 * i}*(x${i - 1} - x${i})\nx${i}(0) = 0\n`;

// 200 MB of spaces inside a link's JSON: about 200 KB deflated, well under
// the link limit, but 200 times the model limit inflated.
const BOMB = "m=" + deflateRawSync(Buffer.concat([Buffer.from('{"v":1,"sheet":"'), Buffer.alloc(200 << 20, 0x20), Buffer.from('"}')]), { level: 9 }).toString("base64url");

const CASES = [
  // The plot's tick loop never ends on this span until the draw fix lands
  // (issue 22, finding 1); reported as a known failure until then.
  { name: "two constant states at ±1e308 (the plot's span overflows)", sheet: "a' = 0\na(0) = 1e308\nb' = 0\nb(0) = -1e308\n",
    todo: "frozen in the plot's tick loop until the draw fix for finding 1 lands" },
  { name: "a parameter of 1e308 on a slider", sheet: "k = 1e308\ny' = -y + k*0\ny(0) = 1\n" },
  { name: "a state of 1e308 that grows", sheet: "y' = y\ny(0) = 1e308\n" },
  { name: "End = 1e300", sheet: "y' = -y\ny(0) = 1\n", settings: { to: "1e300" } },
  { name: "End = 1e300 on a fixed step", sheet: "y' = -y\ny(0) = 1\n", settings: { method: "rk4", step: "1e-6", to: "1e300" } },
  { name: "a fixed step of 5e-324", sheet: "y' = -y\ny(0) = 1\n", settings: { method: "euler", step: "5e-324", to: "1" } },
  { name: "tolerances at the edge (relative 1e-300, absolute 5e-324)", sheet: "y' = -y\ny(0) = 1\n", settings: { "tol-relative": "1e-300", "tol-absolute": "5e-324", to: "1e6" } },
  { name: "output spacing of 1e-12 over 1e6", sheet: "y' = -y\ny(0) = 1\n", settings: { to: "1e6", spacing: "1e-12" } },
  { name: "an event that fires millions of times", sheet: "y' = cos(1000*t)\ny(0) = 0\nmark when y > 0\n", settings: { to: "1e5" } },
  { name: "the 200-state stiff chain pasted", sheet: CHAIN, settings: { to: "30" } },
  { name: "the 200-state stiff chain, then typing a note", sheet: CHAIN, settings: { to: "30" }, typed: "# note" },
  { name: "a start time written as an expression, far out", sheet: "t0 = 1e300\ny' = -y\ny(t0) = 1\n" },
  // Known: 1998 parameters build 1998 slider rows at once, which took over
  // 1 s on a loaded machine (passes on an idle one); the sliders want a cap.
  { name: "a sheet of 2000 lines", sheet: Array.from({ length: 1998 }, (_, i) => `p${i} = ${i}`).join("\n") + "\ny' = -y\ny(0) = 1\n",
    todo: "1998 slider rows are built at once: over 1 s under load" },
  { name: "a link with settings that are not numbers (NaN)", hash: link({ sheet: "y' = -y\ny(0) = 1\n", settings: { to: "NaN", rtol: "NaN" } }) },
  { name: "a link with extreme settings", hash: link({ sheet: "y' = -y\ny(0) = 1e308\n", settings: { to: 1e300, method: "rk4", step: 1e-300 } }) },
  // Opened as a new page: setting a 1 MB fragment in a page costs the browser
  // itself about a second, outside the page's thread.
  { name: "a link just over 1 MB, opened", opened: "m=" + "A".repeat((1 << 20) + 16) },
  { name: "a decompression bomb link (200 MB inflated)", hash: BOMB },
];

/** Fail unless `page` answers a trivial evaluate within 1 s, over and over for `ms`. */
async function keepsAnswering(page, label, ms = 3000) {
  const end = Date.now() + ms;
  while (Date.now() < end) {
    const answered = await Promise.race([page.evaluate(() => 1 + 1).then((v) => v === 2), sleep(1000).then(() => false)]);
    assert.ok(answered, `the page did not answer within 1 s after: ${label}`);
    await sleep(150);
  }
}

async function applySettings(page, settings) {
  if (settings.method) await page.selectOption("#method", settings.method);
  for (const [id, v] of Object.entries(settings)) {
    if (id === "method") continue;
    await page.evaluate(([id, v]) => {
      const input = document.getElementById(id);
      input.value = v;
      input.dispatchEvent(new Event("change"));
    }, [id, v]);
  }
}

for (const c of CASES) {
  test(`watchdog: ${c.name}`, { todo: c.todo }, async () => {
    const context = await launch();
    try {
      const { page } = await openPage(context, c.opened ? `${server.url}#${c.opened}` : server.url);
      await ready(page);
      if (c.settings) await applySettings(page, c.settings);
      if (c.sheet) await pasteSheet(page, c.sheet);
      if (c.typed) { await page.focus("#sheet"); await page.keyboard.press("Control+End"); await page.keyboard.type(c.typed, { delay: 60 }); }
      if (c.hash) await page.evaluate((h) => { location.hash = h; }, c.hash);
      await keepsAnswering(page, c.name);
      // And the page still works: an ordinary sheet solves and shows.
      await page.evaluate(() => document.getElementById("busy-cancel").click());
      await applySettings(page, { method: "auto", to: "2", "tol-relative": "1e-6", "tol-absolute": "1e-9", spacing: "" });
      await pasteSheet(page, "# control\ny' = -y\ny(0) = 1\n");
      await sleep(400);
      await settled(page);
      const y = (await summaryValues(page)).y;
      assert.ok(Math.abs(y - Math.exp(-2)) < 1e-5, `y(2) = ${y}, exp(-2) analytic`);
    } finally {
      await Promise.race([context.close(), sleep(15000)]);
    }
  });
}
