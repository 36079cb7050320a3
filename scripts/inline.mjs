// Writes the single-file page: the HTML with its stylesheets, its ES modules
// (ours and the wasm-bindgen glue) and the wasm itself inlined, so that it
// works opened straight from disk with no network.
//
// Each module keeps its own scope, as it has when served: a module graph
// becomes one module script in which every module is the body of its own
// function, run once in dependency order, whose exports are the object it
// returns. An import becomes a `const` read from that object; the code
// itself is unchanged. (Real ES modules cannot be inlined under our CSP:
// a module imported from a data: or blob: URL needs that scheme in
// script-src, which would let any injected script element run.)
//
// The forms understood are the ones the page uses, one statement each:
//   import { a, b as c } from "./x.js";   import * as x from "./x.js";
//   import x from "./x.js";
//   export function|async function|class|const NAME ...;
//   export { a, b as c };   export default NAME;
// Anything else (export let/var, which an importer would read only once,
// export … from, cycles) stops the build with a message.
import { readFileSync, writeFileSync, mkdtempSync } from "node:fs";
import { spawnSync } from "node:child_process";
import { createHash } from "node:crypto";
import { tmpdir } from "node:os";
import { dirname, join, normalize, relative } from "node:path";
import { pathToFileURL } from "node:url";

const importRe = /^[ \t]*import\s+([^;"']*?)\s+from\s+["']([^"']+)["'];?[ \t]*$/gm;

/** A module's text split into its imports, its exports and its body. */
export function readModule(file, code) {
  const fail = (what) => { throw new Error(`inline: ${file}: ${what}`); };
  const imports = [];
  let body = code.replace(importRe, (_, what, from) => {
    if (!from.startsWith(".")) fail(`imports "${from}", which is not a file of the page`);
    imports.push({ what: what.trim(), from });
    return "";
  });
  if (/^[ \t]*import\s*["'(]/m.test(body)) fail("has an import form this script does not inline");
  const exports = [];
  body = body
    .replace(/^export\s+(?:async\s+function\*?|function\*?|class|const)\s+([A-Za-z_$][\w$]*)/gm, (m, name) => {
      exports.push([name, name]);
      return m.replace(/^export\s+/, "");
    })
    .replace(/^export\s*\{([^}]*)\};?[ \t]*$/gm, (_, list) => {
      for (const item of list.split(",").map((x) => x.trim()).filter(Boolean)) {
        const [local, as = local] = item.split(/\s+as\s+/);
        exports.push([as, local]);
      }
      return "";
    })
    .replace(/^export\s+default\s+([A-Za-z_$][\w$]*)\s*;?[ \t]*$/gm, (_, name) => {
      exports.push(["default", name]);
      return "";
    });
  const left = /^export\b.*$/m.exec(body);
  if (left) fail(`has an export form this script does not inline: ${left[0]}`);
  return { imports, exports, body };
}

/** The statement that binds an import's names from module object `obj`. */
function binding(file, what, obj) {
  let m;
  if ((m = /^\*\s+as\s+([A-Za-z_$][\w$]*)$/.exec(what))) return `const ${m[1]} = ${obj};`;
  if ((m = /^\{([\s\S]*)\}$/.exec(what))) {
    const names = m[1].split(",").map((x) => x.trim()).filter(Boolean)
      .map((item) => { const [name, as] = item.split(/\s+as\s+/); return as ? `${name}: ${as}` : name; });
    return `const { ${names.join(", ")} } = ${obj};`;
  }
  if (/^[A-Za-z_$][\w$]*$/.test(what)) return `const ${what} = ${obj}.default;`;
  throw new Error(`inline: ${file}: cannot inline "import ${what}"`);
}

/**
 * One module script for the graph from `entry`: each module wrapped in its
 * own async function (a module may await at its top level), run in
 * dependency order.
 */
export function bundle(entry, root = dirname(entry)) {
  const order = [];
  const ids = new Map();
  const visiting = new Set();
  const visit = (file) => {
    const key = normalize(file);
    if (ids.has(key)) return ids.get(key);
    if (visiting.has(key)) throw new Error(`inline: ${key} is part of an import cycle`);
    visiting.add(key);
    const mod = readModule(key, readFileSync(key, "utf8"));
    const deps = mod.imports.map((i) => ({ ...i, id: visit(join(dirname(key), i.from)) }));
    visiting.delete(key);
    const id = `__module${order.length}`;
    ids.set(key, id);
    order.push({ key, id, mod, deps });
    return id;
  };
  visit(entry);
  const parts = order.map(({ key, id, mod, deps }) => {
    const name = relative(root, key);
    const head = deps.map((d) => binding(name, d.what, d.id)).join("\n");
    const out = mod.exports.map(([as, local]) => (as === local ? local : `${JSON.stringify(as)}: ${local}`)).join(", ");
    return `// ---- ${name}\nconst ${id} = Object.freeze(await (async () => {\n${head}\n${mod.body}\nreturn { ${out} };\n})());`;
  });
  return checked(entry, parts.join("\n"));
}

// A bundle must still parse as one module.
function checked(entry, code) {
  const file = join(mkdtempSync(join(tmpdir(), "ratebook-inline-")), "bundle.mjs");
  writeFileSync(file, code);
  const r = spawnSync(process.execPath, ["--check", file], { encoding: "utf8" });
  if (r.status !== 0) throw new Error(`inline: the bundle of ${entry} does not parse:\n${r.stderr}`);
  return code;
}

// Escape `</script` so inlined code cannot end its own script element.
const safe = (s) => s.replace(/<\/script/gi, "<\\/script");

/** The single file for the page `src`. */
export function inline(src) {
  const root = dirname(src);
  let html = readFileSync(src, "utf8");
  html = html.replace(/<link rel="stylesheet" href="([^"]+)">/g, (_, href) =>
    `<style>\n${readFileSync(join(root, href), "utf8")}</style>`);

  // Worker sources: <script type="text/plain" data-bundle="worker.js"></script>
  html = html.replace(/<script type="text\/plain" id="([^"]+)" data-bundle="([^"]+)"><\/script>/g,
    (_, id, entry) => `<script type="text/plain" id="${id}">\n${safe(bundle(join(root, entry), root))}\n</script>`);

  html = html.replace(/<script type="module" src="([^"]+)"><\/script>/g, (_, s) =>
    `<script type="module">\n${safe(bundle(join(root, s), root))}\n</script>`);

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
  return html;
}

if (import.meta.url === pathToFileURL(process.argv[1]).href) {
  const [src, out] = process.argv.slice(2);
  writeFileSync(out, inline(src));
}
