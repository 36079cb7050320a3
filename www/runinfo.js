// Reading a run report: peaks and troughs, events, the output grid.

/** The page's run settings as the solver takes them: without the page's own output `spacing`. */
export function solverSettings(settings) {
  const { spacing, ...rest } = settings ?? {};
  return rest;
}

/**
 * Every quantity's maximum and minimum with its time: [{ name, kind, t, value,
 * located }]. From the solver's located extrema (`{ name, max, tMax, min,
 * tMin }`) when the run has them, else read off the output points (located:
 * false). A value or time that is not a finite number (a helper that
 * overflowed) is left out.
 */
export function extremaOf(run) {
  const finite = (e) => Number.isFinite(e.value) && Number.isFinite(e.t);
  if (run.extrema?.length) {
    return run.extrema.flatMap((e) => [
      { name: e.name, kind: "max", t: e.tMax, value: e.max, located: true },
      { name: e.name, kind: "min", t: e.tMin, value: e.min, located: true },
    ]).filter(finite);
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
  return out.filter(finite);
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
