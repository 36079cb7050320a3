// Writes the single-file page: the HTML with its stylesheets, its ES modules
// (ours and the wasm-bindgen glue) and the wasm itself inlined, so that it
// works opened straight from disk with no network.
//
// Our modules follow one convention that makes this possible without a
// bundler: imports are single `import { ... } from "./x.js";` statements and
// top-level names are unique across modules. Modules are concatenated in
// dependency order with their import lines and `export` keywords removed.
import { readFileSync, writeFileSync, mkdtempSync } from "node:fs";
import { spawnSync } from "node:child_process";
import { createHash } from "node:crypto";
import { tmpdir } from "node:os";
import { dirname, join, normalize } from "node:path";

const [src, out] = process.argv.slice(2);
const root = dirname(src);
let html = readFileSync(src, "utf8");

const importRe = /^\s*import\s+(?:[\s\S]*?)\s+from\s+["'](\.[^"']+)["'];?\s*$/gm;

function stripModule(code) {
  return code
    .replace(importRe, "")
    .replace(/^export\s+default\s+[^;]+;\s*$/gm, "")
    .replace(/^export\s*\{[^}]*\};?\s*$/gm, "")
    .replace(/^export\s+(?=(async\s+)?function|class|const|let|var)/gm, "");
}

// Concatenate a module graph in dependency order (each module once).
function bundle(entry) {
  const seen = new Set();
  const parts = [];
  const visit = (file) => {
    const key = normalize(file);
    if (seen.has(key)) return;
    seen.add(key);
    const code = readFileSync(key, "utf8");
    for (const m of code.matchAll(importRe)) visit(join(dirname(key), m[1]));
    parts.push(`// ---- ${key.slice(root.length + 1)}\n${stripModule(code)}`);
  };
  visit(entry);
  return checked(entry, parts.join("\n"));
}

// A bundle must still parse as one module: this catches two modules that
// declare the same top-level name.
function checked(entry, code) {
  const file = join(mkdtempSync(join(tmpdir(), "ratebook-inline-")), "bundle.mjs");
  writeFileSync(file, code);
  const r = spawnSync(process.execPath, ["--check", file], { encoding: "utf8" });
  if (r.status !== 0) throw new Error(`inline: the bundle of ${entry} does not parse:\n${r.stderr}`);
  return code;
}

// Escape `</script` so inlined code cannot end its own script element.
const safe = (s) => s.replace(/<\/script/gi, "<\\/script");

html = html.replace(/<link rel="stylesheet" href="([^"]+)">/g, (_, href) =>
  `<style>\n${readFileSync(join(root, href), "utf8")}</style>`);

// Worker sources: <script type="text/plain" data-bundle="worker.js"></script>
html = html.replace(/<script type="text\/plain" id="([^"]+)" data-bundle="([^"]+)"><\/script>/g,
  (_, id, entry) => `<script type="text/plain" id="${id}">\n${safe(bundle(join(root, entry)))}\n</script>`);

html = html.replace(/<script type="module" src="([^"]+)"><\/script>/g, (_, s) =>
  `<script type="module">\n${safe(bundle(join(root, s)))}\n</script>`);

// Look for references in the markup only: inlined script text may well hold
// strings such as an <iframe src="…"> snippet for the user to copy.
const markup = html.replace(/(<script\b[^>]*>)[\s\S]*?<\/script>/gi, "$1</script>");
if (/\s(src|href)="(?!data:|#)[^"]*"/.test(markup)) {
  throw new Error("inline: an external reference is left in the single file");
}
// The CSP allows exactly the inlined module scripts, by their sha256, rather
// than any inline script: injected markup could not run a script or handler.
const hashes = [...html.matchAll(/<script type="module">([\s\S]*?)<\/script>/g)]
  .map((m) => `'sha256-${createHash("sha256").update(m[1], "utf8").digest("base64")}'`);
html = html.replace(/(<meta http-equiv="Content-Security-Policy" content="[^"]*?script-src 'self')( 'unsafe-inline')?/,
  (_, head) => `${head} ${hashes.join(" ")}`);
if (!hashes.length || !html.includes(hashes[0])) throw new Error("inline: the CSP does not hold the scripts' hashes");
writeFileSync(out, html);
