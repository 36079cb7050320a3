// A generated corpus of sheets for the emitted-versus-interpreted tests
// (Node and Chromium): random expressions over every operator and function
// of the sheet language, as rates, helpers, parameters, events and switches.

/** mulberry32: a tiny deterministic generator, numbers in [0, 1). */
export function rng(seed) {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

const NUMS = ["2", "0.5", "3.7", "1.5e-3", "10", "1", "0.25", "7e1", "0", "pi", "e", "k", "c2"];
const FUNCS1 = ["sin", "cos", "tan", "exp", "ln", "log", "log10", "sqrt", "abs", "asin", "acos", "atan",
  "sinh", "cosh", "tanh", "asinh", "acosh", "atanh", "floor", "ceil", "round", "signum", "sign", "heaviside"];
const FUNCS2 = ["atan2", "pow", "hypot"];
const POWERS = ["2", "3", "4", "0.5", "1.5", "-1", "-2", "-0.5", "2.5", "0", "1", "1/3"];

function gen(r, vars, depth) {
  const pick = (xs) => xs[Math.floor(r() * xs.length)];
  if (depth === 0 || r() < 0.25) return r() < 0.35 ? pick(NUMS) : pick(vars);
  const d = depth - 1;
  switch (Math.floor(r() * 14)) {
    case 0: case 1: case 2: case 3: {
      const op = pick(["+", "-", "*", "/"]);
      return r() < 0.5 ? `(${gen(r, vars, d)} ${op} ${gen(r, vars, d)})` : `${gen(r, vars, d)}${op}${gen(r, vars, d)}`;
    }
    case 4: return `-${gen(r, vars, d)}`;
    case 5: return `(${gen(r, vars, d)})^${pick(POWERS)}`;
    case 6: return `${pick(vars)}^${gen(r, vars, Math.min(d, 1))}`;
    case 7: {
      const args = Array.from({ length: 1 + Math.floor(r() * 3) }, () => gen(r, vars, d));
      return `${pick(["min", "max"])}(${args.join(", ")})`;
    }
    case 8: return `${pick(FUNCS2)}(${gen(r, vars, d)}, ${gen(r, vars, d)})`;
    case 9: return `(${gen(r, vars, d)} % ${gen(r, vars, d)})`;
    case 10: return `clamp(${gen(r, vars, d)}, ${gen(r, vars, 0)}, ${gen(r, vars, 1)})`;
    default: return `${pick(FUNCS1)}(${gen(r, vars, d)})`;
  }
}

/**
 * `count` sheets, each `{ sheet, dim }`: three states x, y, z with rates,
 * a helper w used by the rates, parameters k and c2, an event and a
 * second event on a helper.
 */
export function corpus(seed, count) {
  const r = rng(seed);
  const out = [];
  for (let i = 0; i < count; i++) {
    const vars = ["x", "y", "z", "t", "w"];
    const w = gen(r, ["x", "y", "z", "t"], 3);
    const sheet = [
      `k = ${(r() * 4 - 1).toFixed(3)}`,
      `c2 = k^2 + 1`,
      `w = ${w}`,
      `dx/dt = ${gen(r, vars, 5)}`,
      `dy/dt = ${gen(r, vars, 4)}`,
      `dz/dt = ${gen(r, vars, 3)}`,
      "x(0) = 1", "y(0) = 0.5", "z(0) = -1",
      `mark when x > ${gen(r, ["y", "z", "t"], 2)}`,
      `stop when w < -100`,
      "",
    ].join("\n");
    out.push({ sheet, dim: 3 });
  }
  return out;
}

/** `n` points `(t, y[dim])`, flat, in about [-2.5, 2.5]·scale, from `seed`. */
export function points(dim, n, seed, scale = 1) {
  const r = rng(seed * 7919 + 17);
  const out = [];
  for (let i = 0; i < n; i++) {
    out.push(3 * scale * r());
    for (let j = 0; j < dim; j++) out.push((5 * r() - 2.5) * scale);
  }
  return out;
}

/** The first index where `a` and `b` differ in their bits (any NaN equals any NaN), or -1. */
export function sameBits(a, b) {
  if (a.length !== b.length) return Math.min(a.length, b.length);
  for (let i = 0; i < a.length; i++) if (!Object.is(a[i], b[i])) return i;
  return -1;
}
