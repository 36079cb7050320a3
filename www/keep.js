// Keeping work: autosave in localStorage, share links in the URL fragment,
// and the saved-file format. All three carry the same "kept model":
//   { sheet: string, settings: { to, method, tolerance: { relative, absolute }, step, spacing } }
// The file format is documented in DEVELOPERS.md ("Saved files"). Version 1
// (files, links and autosaves made before the settings were renamed) is read
// and mapped to today's names.

export const FILE_FORMAT = "ratebook-model";
export const FILE_VERSION = 2;
export const MAX_KEPT_BYTES = 1 << 20;

const AUTOSAVE_KEY = "ratebook.autosave.v2";
const PREVIOUS_KEY = "ratebook.previous.v2";
/** The keys version 1 kept the same things under. */
const V1_KEYS = { [AUTOSAVE_KEY]: "ratebook.autosave.v1", [PREVIOUS_KEY]: "ratebook.previous.v1" };

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

function getJson(key) {
  const s = storage();
  if (!s) return null;
  try {
    const raw = s.getItem(key);
    if (raw) return checkKept(JSON.parse(raw));
    const old = s.getItem(V1_KEYS[key]);
    return old ? checkKept(JSON.parse(old), 1) : null;
  } catch {
    return null;
  }
}

export const autosave = (kept) => putJson(AUTOSAVE_KEY, kept);
export const loadAutosave = () => getJson(AUTOSAVE_KEY);
export const keepPrevious = (kept) => putJson(PREVIOUS_KEY, kept);
export const loadPrevious = () => getJson(PREVIOUS_KEY);

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
    const bytes = await pipe(fromBase64Url(m), new DecompressionStream("deflate-raw"));
    if (bytes.length > MAX_KEPT_BYTES) throw new KeptModelError("the model in the link is over 1 MB");
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
