// Small DOM helpers. User text only ever goes in through textContent or
// attribute setters, never as markup.

export const $ = (id) => document.getElementById(id);

/** Make an element: el("td", { class: "num", title: "…" }, "text", child, …). */
export function el(tag, attrs = {}, ...children) {
  const node = document.createElement(tag);
  for (const [k, v] of Object.entries(attrs)) {
    if (v === undefined || v === null || v === false) continue;
    if (k === "class") node.className = v;
    else if (k === "text") node.textContent = v;
    else node.setAttribute(k, v === true ? "" : String(v));
  }
  for (const c of children) node.append(c instanceof Node ? c : document.createTextNode(String(c)));
  return node;
}

/** Offer `blob` as a download named `name`. */
export function download(name, blob) {
  const url = URL.createObjectURL(blob);
  const a = el("a", { href: url, download: name });
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 1000);
}

let noticeTimer = 0;
/**
 * A short message at the top of the page; `bad` for problems. `action`
 * ({ label, run }) adds a button that runs it and closes the message; such a
 * message stays until it is used, dismissed or replaced.
 */
export function notify(message, { bad = false, sticky = false, action = null } = {}) {
  const n = $("notice");
  n.replaceChildren(message);
  if (action) {
    const b = el("button", { type: "button", class: "small", id: "notice-action" }, action.label);
    b.addEventListener("click", () => { n.hidden = true; action.run(); });
    const close = el("button", { type: "button", class: "small link", id: "notice-close", "aria-label": "Dismiss" }, "Dismiss");
    close.addEventListener("click", () => { n.hidden = true; });
    n.append(" ", b, " ", close);
  }
  n.classList.toggle("bad", bad);
  n.hidden = false;
  clearTimeout(noticeTimer);
  if (!sticky && !action) noticeTimer = setTimeout(() => { n.hidden = true; }, 6000);
}

/** An SVG document as a data: URL, for an <img>. */
export const svgUrl = (svg) => "data:image/svg+xml;base64," + btoa(unescape(encodeURIComponent(svg)));

let measures = 0;
/**
 * Run `fn` and record its duration as the User Timing measure `rb:NAME`
 * (performance.getEntriesByName), which the page benchmark reads. The
 * buffer is emptied now and then so that a long session does not grow it.
 */
export function timed(name, fn) {
  const start = performance.now();
  try {
    return fn();
  } finally {
    if (++measures > 5000) { performance.clearMeasures(); measures = 0; }
    performance.measure(`rb:${name}`, { start, end: performance.now() });
  }
}

/** A number for people: `digits` significant digits, no trailing noise. */
export function fmt(v, digits = 6) {
  if (typeof v !== "number") return String(v);
  if (!Number.isFinite(v)) return Number.isNaN(v) ? "NaN" : (v > 0 ? "∞" : "−∞");
  if (v === 0) return "0";
  const a = Math.abs(v);
  if (a >= 1e6 || a < 1e-4) return v.toExponential(digits - 1).replace(/\.?0+e/, "e");
  return String(Number(v.toPrecision(digits)));
}
