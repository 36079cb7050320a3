// Shared plot plumbing: frames returned by the drawing code, pointer to data
// mapping, and PNG/SVG export of any plot on the page.
import { Plot } from "./pkg/ratebook.js";
import { download } from "./dom.js";

/** Frame array from Plot.draw as an object. */
export function frameOf(a) {
  return { left: a[0], top: a[1], right: a[2], bottom: a[3], x0: a[4], x1: a[5], y0: a[6], y1: a[7] };
}

/** Canvas pixel coordinates of a pointer event. */
export function canvasPoint(canvas, event) {
  const r = canvas.getBoundingClientRect();
  return { px: (event.clientX - r.left) * canvas.width / r.width, py: (event.clientY - r.top) * canvas.height / r.height };
}

// Spans are taken in halves (b/2 - a/2): exact, and finite even for a frame
// across the whole number line, where b - a would overflow.
const half = (a, b) => b / 2 - a / 2;
/** `from + f·(to - from)` for f in [0, 1]; bit for bit the plain formula unless the span overflows. */
const along = (from, to, f) => {
  const d = f * half(from, to);
  return Number.isFinite(2 * d) ? from + 2 * d : from + d + d;
};

/** Data coordinates of canvas pixel (px, py) in `frame`. */
export function toData(frame, px, py) {
  return {
    x: along(frame.x0, frame.x1, (px - frame.left) / (frame.right - frame.left)),
    y: along(frame.y1, frame.y0, (py - frame.top) / (frame.bottom - frame.top)),
  };
}

/** Canvas pixel of data point (x, y) in `frame`. */
export function toPixel(frame, x, y) {
  return {
    px: frame.left + half(frame.x0, x) / half(frame.x0, frame.x1) * (frame.right - frame.left),
    py: frame.top + half(y, frame.y1) / half(frame.y0, frame.y1) * (frame.bottom - frame.top),
  };
}

/** Whether pixel (px, py) is inside the plotting area. */
export function insideFrame(frame, px, py) {
  return px >= frame.left && px <= frame.right && py >= frame.top && py <= frame.bottom;
}

// Each plot on the page registers how to describe itself, so that the PNG and
// SVG downloads are the same drawing.
const describers = new Map();

/** Register `describe() -> Plot | null` for the canvas with this id. */
export function registerPlot(id, describe) {
  describers.set(id, describe);
}

/** Draw the plot of canvas `id` now; returns its frame or null. */
export function drawPlot(id) {
  const plot = describers.get(id)?.();
  if (!plot) return null;
  try {
    return frameOf(plot.draw(document.getElementById(id)));
  } finally {
    plot.free();
  }
}

/** The SVG text of the plot of canvas `id`, or null. */
export function plotSvg(id) {
  const canvas = document.getElementById(id);
  const plot = describers.get(id)?.();
  if (!plot) return null;
  try {
    return plot.svg(canvas.width, canvas.height);
  } finally {
    plot.free();
  }
}

/** Wire every [data-png] and [data-svg] button. `base()` names the files. */
export function initExports(base) {
  document.addEventListener("click", (e) => {
    const b = e.target.closest?.("[data-png],[data-svg]");
    if (!b) return;
    if (b.dataset.png) {
      const canvas = document.getElementById(b.dataset.png);
      canvas.toBlob((blob) => blob && download(`${base()}-${b.dataset.png}.png`, blob), "image/png");
    } else {
      const svg = plotSvg(b.dataset.svg);
      if (svg) download(`${base()}-${b.dataset.svg}.svg`, new Blob([svg], { type: "image/svg+xml" }));
    }
  });
}

export { Plot };
