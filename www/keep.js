// Keeping work: autosave in localStorage, share links in the URL fragment,
// and the saved-file format. All three carry the same "kept model":
//   { sheet: string, settings: { to, method, tolerance: { relative, absolute }, step, spacing } }
// The file format is documented in DEVELOPERS.md ("Saved files"). Version 1
// (files, links and autosaves made before the settings were renamed) is read
// and mapped to today's names.

export const FILE_FORMAT = "ratebook-model";
export const FILE_VERSION = 2;
export const MAX_KEPT_BYTES = 1 << 20;


/** A typed problem with a kept model (a file, a link, an autosave). */
export class KeptModelError extends Error {}

const SETTING_KEYS = { to: "number", method: "string", step: "number", spacing: "number" };
const TOLERANCE_KEYS = ["relative", "absolute"];

/** Version 1's method ids, with their ids now (as in src/api/mod.rs, FORMER_METHOD_IDS). */
export const V1_METHOD_IDS = {
  bs32: "bogacki-shampine-3", dp54: "dormand-prince-5", dp853: "dormand-prince-8",
  beuler: "backward-euler", rodas4: "rosenbrock-4", radau5: "radau-iia-5",
};

/** Version 1's settings in today's names: `rtol`/`atol` become `tolerance`, old method ids new ones. */
function fromV1(given) {
  const { rtol, atol, ...rest } = given;
  if (rtol !== undefined || atol !== undefined) rest.tolerance = { relative: rtol, absolute: atol };
  if (Object.hasOwn(V1_METHOD_IDS, rest.method)) rest.method = V1_METHOD_IDS[rest.method];
  return rest;
}

const absent = (v) => v === undefined || v === null || v === "";

function checkNumber(v, what) {
  if (typeof v !== "number" || !Number.isFinite(v)) throw new KeptModelError(`its setting "${what}" is not a valid number`);
  return v;
}

/**
 * Check and normalise a kept model of format `version` (1 or 2); throws
 * KeptModelError with a plain message.
 */
export function checkKept(obj, version = FILE_VERSION) {
  if (!obj || typeof obj !== "object" || Array.isArray(obj)) throw new KeptModelError("it holds no model");
  if (typeof obj.sheet !== "string") throw new KeptModelError("it has no sheet text");
  if (obj.sheet.length > MAX_KEPT_BYTES) throw new KeptModelError("its sheet is over 1 MB");
  const settings = {};
  let given = obj.settings && typeof obj.settings === "object" ? obj.settings : {};
  if (version === 1) given = fromV1(given);
  for (const [k, type] of Object.entries(SETTING_KEYS)) {
    const v = given[k];
    if (absent(v)) continue;
    if (type === "number") checkNumber(v, k);
    else if (typeof v !== type) throw new KeptModelError(`its setting "${k}" is not a valid ${type}`);
    if (type === "string" && !/^[a-z0-9_-]{1,32}$/.test(v)) throw new KeptModelError(`its setting "${k}" is not a method id`);
    settings[k] = v;
  }
  const tol = given.tolerance;
  if (!absent(tol)) {
    if (typeof tol !== "object" || Array.isArray(tol)) throw new KeptModelError(`its setting "tolerance" is not { relative, absolute }`);
    const t = {};
    for (const k of TOLERANCE_KEYS) if (!absent(tol[k])) t[k] = checkNumber(tol[k], `tolerance.${k}`);
    settings.tolerance = t;
  }
  return { sheet: obj.sheet, settings };
}

// ---- localStorage (absent or throwing in a sandboxed frame: then nothing is kept)
//
// Each copy of the page keeps its own: the keys hold the page's address
// without its fragment, so a file on disk at two paths, or a served copy,
// never share an autosave.

/** This copy of the page: its address without query or fragment. */
export const pageCopy = () => location.href.split(/[?#]/)[0];
const autosaveKey = () => `ratebook.autosave.v2 ${pageCopy()}`;
const previousKey = () => `ratebook.previous.v2 ${pageCopy()}`;
// Before keys were per copy, every copy on an origin shared this one; the
// first copy to start takes it over.
const SHARED_AUTOSAVE_KEY = "ratebook.autosave.v1";

/** This tab, in the autosave it writes (another tab's writes are told apart by it). */
export const TAB = Math.random().toString(36).slice(2, 10);

function storage() {
  try {
    const s = window.localStorage;
    s.getItem("ratebook.probe");
    return s;
  } catch {
    return null;
  }
}

/** Whether this page can keep an autosave. */
export function canAutosave() {
  return storage() !== null;
}

/** Store `value` as JSON; false when it could not be written (no storage, or storage full). */
function putJson(key, value) {
  const s = storage();
  if (!s) return false;
  try {
    s.setItem(key, JSON.stringify(value));
    return true;
  } catch {
    return false;
  }
}

/**
 * The format of a kept model in localStorage, which holds no version: 1
 * when its settings use a name or method id of version 1, else today's.
 */
function keptVersion(obj) {
  const s = obj?.settings ?? {};
  return "rtol" in s || "atol" in s || Object.hasOwn(V1_METHOD_IDS, s.method) ? 1 : FILE_VERSION;
}

function getJson(key) {
  const s = storage();
  if (!s) return null;
  try {
    const raw = s.getItem(key);
    if (!raw) return null;
    const obj = JSON.parse(raw);
    return checkKept(obj, keptVersion(obj));
  } catch {
    return null;
  }
}

/** Autosave `kept` for this copy; false when the write failed (storage full or absent). */
export const autosave = (kept) => putJson(autosaveKey(), { ...kept, tab: TAB });

/** This copy's autosave, or null. */
export function loadAutosave() {
  const own = getJson(autosaveKey());
  if (own) return own;
  const shared = getJson(SHARED_AUTOSAVE_KEY);
  if (shared && putJson(autosaveKey(), shared)) storage()?.removeItem(SHARED_AUTOSAVE_KEY);
  return shared;
}

export const keepPrevious = (kept) => putJson(previousKey(), kept);
export const loadPrevious = () => getJson(previousKey());

/**
 * Call `onOther(what)` when another tab shows this copy of the page:
 * `"open"` when one opens (or is found open), `"saved"` when one autosaves
 * over this tab's sheet. Tabs find each other on a BroadcastChannel named
 * after the copy, and by the storage events of the autosave key.
 */
export function watchOtherTabs(onOther) {
  try {
    const channel = new BroadcastChannel(`ratebook ${pageCopy()}`);
    channel.onmessage = (e) => {
      if (e.data?.tab === TAB) return;
      if (e.data?.kind === "hello") channel.postMessage({ kind: "here", tab: TAB });
      onOther("open");
    };
    channel.postMessage({ kind: "hello", tab: TAB });
  } catch {
    // No channel (an old browser, an opaque origin): the storage events below still tell.
  }
  window.addEventListener("storage", (e) => {
    if (e.key !== autosaveKey() || !e.newValue) return;
    try {
      if (JSON.parse(e.newValue).tab !== TAB) onOther("saved");
    } catch {
      // not ours to read
    }
  });
}

// ---- share links: #m=<base64url(deflate-raw(JSON))>

function toBase64Url(bytes) {
  let s = "";
  for (let i = 0; i < bytes.length; i += 0x8000) s += String.fromCharCode(...bytes.subarray(i, i + 0x8000));
  return btoa(s).replace(/\+/g, "-").replace(/\//g, "_").replace(/=+$/, "");
}

function fromBase64Url(text) {
  if (!/^[A-Za-z0-9_-]*$/.test(text)) throw new KeptModelError("the link holds characters a share link never has");
  const s = atob(text.replace(/-/g, "+").replace(/_/g, "/"));
  const out = new Uint8Array(s.length);
  for (let i = 0; i < s.length; i++) out[i] = s.charCodeAt(i);
  return out;
}

async function pipe(bytes, stream) {
  const out = new Response(new Blob([bytes]).stream().pipeThrough(stream));
  return new Uint8Array(await out.arrayBuffer());
}

/**
 * `bytes` inflated (deflate-raw), or null as soon as the output passes
 * `limit` bytes. The input goes in by the kilobyte and each piece's output
 * is counted before the next goes in (deflate inflates a kilobyte to at
 * most about a megabyte), so a small link that would inflate to hundreds
 * of megabytes costs about `limit`, not its full size.
 */
export async function inflateWithin(bytes, limit, piece = 1024) {
  const stream = new DecompressionStream("deflate-raw");
  const writer = stream.writable.getWriter();
  const reader = stream.readable.getReader();
  let stopped = false;
  const feed = (async () => {
    for (let i = 0; i < bytes.length && !stopped; i += piece) {
      await writer.ready;
      await writer.write(bytes.subarray(i, i + piece));
    }
    if (!stopped) await writer.close();
  })();
  feed.catch(() => {}); // a damaged stream also fails the reads below
  const chunks = [];
  let size = 0;
  try {
    for (;;) {
      const { done, value } = await reader.read();
      if (done) break;
      size += value.length;
      if (size > limit) {
        stopped = true;
        reader.cancel().catch(() => {});
        return null;
      }
      chunks.push(value);
    }
  } finally {
    stopped = true;
  }
  await feed;
  const out = new Uint8Array(size);
  let at = 0;
  for (const c of chunks) { out.set(c, at); at += c.length; }
  return out;
}

/** The fragment (without '#') that holds `kept`. */
export async function shareFragment(kept) {
  const json = new TextEncoder().encode(JSON.stringify({ v: FILE_VERSION, ...kept }));
  return "m=" + toBase64Url(await pipe(json, new CompressionStream("deflate-raw")));
}

/** The kept model in a fragment, null when it holds none; throws KeptModelError when it is broken. */
export async function readFragment(hash) {
  const params = new URLSearchParams(hash.replace(/^#/, ""));
  const m = params.get("m");
  if (m === null) return null;
  if (m.length > MAX_KEPT_BYTES) throw new KeptModelError("the link is over 1 MB");
  let json;
  try {
    const bytes = await inflateWithin(fromBase64Url(m), MAX_KEPT_BYTES);
    if (!bytes) throw new KeptModelError("the model in the link is over 1 MB");
    json = JSON.parse(new TextDecoder("utf-8", { fatal: true }).decode(bytes));
  } catch (e) {
    if (e instanceof KeptModelError) throw e;
    throw new KeptModelError("the link is damaged or cut short");
  }
  if (json?.v !== 1 && json?.v !== FILE_VERSION) throw new KeptModelError(`the link is of version ${JSON.stringify(json?.v)}; this page reads versions 1 to ${FILE_VERSION}`);
  return checkKept(json, json.v);
}

// ---- saved files

/** The text of a saved file for `kept`. */
export function fileText(kept, version) {
  return JSON.stringify({ format: FILE_FORMAT, version: FILE_VERSION, ratebook: version, ...kept }, null, 2) + "\n";
}

/** The kept model in a saved file's text; throws KeptModelError. */
export function readFileText(text) {
  if (text.length > MAX_KEPT_BYTES) throw new KeptModelError("the file is over 1 MB");
  let json;
  try {
    json = JSON.parse(text);
  } catch {
    throw new KeptModelError("the file is not JSON (damaged or cut short?)");
  }
  if (json?.format !== FILE_FORMAT) throw new KeptModelError("the file is not a ratebook model");
  if (json.version !== 1 && json.version !== FILE_VERSION) throw new KeptModelError(`the file is of version ${JSON.stringify(json.version)}; this page reads versions 1 to ${FILE_VERSION}`);
  return checkKept(json, json.version);
}
