// Reading a run report: peaks and troughs, events, the output grid.

function fromEntry(name, e) {
  const out = [];
  const one = (kind, v, t) => { if (Number.isFinite(v) && Number.isFinite(t)) out.push({ name, kind, t, value: v }); };
  if (e.kind || e.which) {
    one(/max|peak/i.test(e.kind ?? e.which) ? "max" : "min", e.value, e.t);
  } else {
    if (e.max && typeof e.max === "object") one("max", e.max.value, e.max.t); else one("max", e.max, e.tMax ?? e.maxT);
    if (e.min && typeof e.min === "object") one("min", e.min.value, e.min.t); else one("min", e.min, e.tMin ?? e.minT);
  }
  return out;
}

/**
 * Every quantity's maximum and minimum with its time: [{ name, kind, t, value,
 * located }]. From the solver's located extrema when the run has them, else
 * read off the output points (located: false).
 */
export function extremaOf(run) {
  const x = run.extrema;
  if (Array.isArray(x) && x.length) return x.flatMap((e) => fromEntry(e.name, e)).map((e) => ({ ...e, located: true }));
  if (x && typeof x === "object" && !Array.isArray(x) && Object.keys(x).length) {
    return Object.entries(x).flatMap(([name, e]) => fromEntry(name, e)).map((e) => ({ ...e, located: true }));
  }
  const out = [];
  for (const name of [...run.states, ...run.helpers]) {
    const v = run.values[name];
    if (!v?.length) continue;
    let hi = 0, lo = 0;
    for (let i = 1; i < v.length; i++) { if (v[i] > v[hi]) hi = i; if (v[i] < v[lo]) lo = i; }
    out.push({ name, kind: "max", t: run.t[hi], value: v[hi], located: false });
    out.push({ name, kind: "min", t: run.t[lo], value: v[lo], located: false });
  }
  return out;
}

/**
 * Output times t0, t0 + s, t0 + 2s, … and `to` itself (at most `cap` + 1 of
 * them; a wider spacing is used when there would be more).
 */
export function grid(t0, to, spacing, cap = 100000) {
  const span = to - t0;
  if (!Number.isFinite(span) || span === 0) return [t0];
  let s = Math.abs(spacing);
  if (!Number.isFinite(s) || s <= 0 || Math.abs(span) / s > cap) s = Math.abs(span) / cap;
  const dir = Math.sign(span);
  const n = Math.floor(Math.abs(span) / s * (1 + 1e-12));
  const out = [];
  for (let i = 0; i <= n; i++) out.push(t0 + dir * i * s);
  if (Math.abs(out[out.length - 1] - to) <= 1e-9 * Math.abs(span)) out[out.length - 1] = to; else out.push(to);
  return out;
}

/** The stop event that ended the run, if one did. */
export function stopEvent(run) {
  return run.status === "stopped" ? (run.events ?? []).at(-1) : undefined;
}

/** Where the run really ended: its stop event, else its last output time. */
export function runEnd(run) {
  return stopEvent(run)?.t ?? run.t[run.t.length - 1];
}
