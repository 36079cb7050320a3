// Shared browser-test harness: Debian's Chromium driven by playwright-core,
// a static server for www/ on 127.0.0.1 (port 0), and a request log.
import { createServer } from "node:http";
import { readFile } from "node:fs/promises";
import { extname, join, normalize, resolve } from "node:path";
import { mkdtempSync } from "node:fs";
import { tmpdir } from "node:os";
import { chromium } from "playwright-core";

export const ROOT = resolve(new URL("../..", import.meta.url).pathname);
export const WWW = join(ROOT, "www");
export const SINGLE_FILE = join(ROOT, "dist", "ratebook.html");
export const SINGLE_FILE_URL = "file://" + SINGLE_FILE;

const TYPES = { ".html": "text/html", ".js": "text/javascript", ".mjs": "text/javascript",
  ".css": "text/css", ".wasm": "application/wasm", ".json": "application/json", ".svg": "image/svg+xml" };

/** Serve www/ on 127.0.0.1 at a free port. Resolves to { url, close }. */
export async function serveWww() {
  const server = createServer(async (req, res) => {
    try {
      const path = decodeURIComponent(new URL(req.url, "http://x").pathname);
      let file = normalize(join(WWW, path));
      if (!file.startsWith(WWW)) throw new Error("outside");
      if (path.endsWith("/")) file = join(file, "index.html");
      const body = await readFile(file);
      res.writeHead(200, { "content-type": TYPES[extname(file)] ?? "application/octet-stream" });
      res.end(body);
    } catch {
      res.writeHead(404);
      res.end();
    }
  });
  await new Promise((ok) => server.listen(0, "127.0.0.1", ok));
  const { port } = server.address();
  return { url: `http://127.0.0.1:${port}/`, close: () => new Promise((ok) => server.close(ok)) };
}

/** Launch Debian's Chromium with a fresh profile. */
export async function launch() {
  const profile = mkdtempSync(join(tmpdir(), "ratebook-e2e-"));
  return chromium.launchPersistentContext(profile, {
    executablePath: "/usr/bin/chromium",
    headless: true,
    viewport: { width: 1280, height: 860 },
    args: ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
      "--disable-background-networking", "--disable-component-update", "--disable-sync"],
  });
}

/**
 * Open `url` in a new page of `context`, logging every request and every
 * console error. With `offline`, any request off the page's own origin is
 * aborted (it is still logged).
 */
export async function openPage(context, url, { offline = false } = {}) {
  const page = await context.newPage();
  const requests = [];
  const errors = [];
  const origin = new URL(url).origin;
  page.on("request", (r) => requests.push(r.url()));
  page.on("console", (m) => { if (m.type() === "error") errors.push(m.text()); });
  page.on("pageerror", (e) => errors.push(String(e)));
  if (offline) {
    await page.route("**/*", (route) => {
      const u = route.request().url();
      return sameOrigin(u, origin) ? route.continue() : route.abort();
    });
  }
  await page.goto(url);
  return { page, requests, errors, offRequests: () => requests.filter((u) => !sameOrigin(u, origin)) };
}

function sameOrigin(u, origin) {
  if (u.startsWith("data:") || u.startsWith("blob:")) return true;
  if (origin === "null" || origin.startsWith("file:")) return u.startsWith("file:");
  return new URL(u).origin === origin;
}

/** Number of non-white pixels on a canvas (proof that something was drawn). */
export async function inkedPixels(page, selector) {
  return page.$eval(selector, (c) => {
    const d = c.getContext("2d").getImageData(0, 0, c.width, c.height).data;
    let n = 0;
    for (let i = 0; i < d.length; i += 4) if (d[i] < 200 || d[i + 1] < 200 || d[i + 2] < 200) n++;
    return n;
  });
}
