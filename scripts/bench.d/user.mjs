// The Node side of scripts/bench.d/user (not run on its own by scripts/bench):
// node scripts/bench.d/user.mjs cold K | warm | parts
import { readFileSync } from "node:fs";
// The clock: this process's CPU time (user + system), in ms. On a shared
// machine a solve waits for the CPU for many times its own length; wall time
// then measures the machine's load, CPU time the solve (measured here to
// 1 µs; it also counts V8's own threads, compiling and collecting).
const now = () => { const u = process.cpuUsage(); return (u.user + u.system) / 1000; };
globalThis.ratebookBenchClock = now; // for benchCallParts
const t0 = now();
const bench = process.argv[2] === "parts";
const dir = bench ? "target/bench/emit/pkg" : "www/pkg";
const rb = await import(`${process.cwd()}/${dir}/ratebook.js`);
const bytes = readFileSync(`${dir}/ratebook_bg.wasm`);
const t1 = now();
rb.initSync({ module: bytes });
const t2 = now();
const { cases, twentyLines, twentyLinesTo } = JSON.parse(readFileSync("target/bench/user/cases.json", "utf8"));
const settingsOf = (c) => ({ to: c.to, method: c.method, tolerance: { relative: c.rtol, absolute: c.atol } });
const median = (v) => { const s = [...v].sort((a, b) => a - b); return s[Math.floor(s.length / 2)]; };
const endState = (run) => run.states.map((n) => run.values[n][run.values[n].length - 1]);
// The first call's sheets: the headline problems, and a sheet typed on the page.
const COLD = [
  { name: "arenstorf dp54 1e-6", sheet: cases.find((c) => c.problem === "arenstorf").sheet, settings: { to: 17.0652165601579625588917206249, method: "dormand-prince-5", tolerance: { relative: 1e-6, absolute: 1e-6 } } },
  { name: "robertson auto 1e-6", sheet: cases.find((c) => c.problem === "robertson").sheet, settings: { to: 1e5, method: "auto", tolerance: { relative: 1e-6, absolute: 1e-10 } } },
  { name: "20-line sheet, default settings", sheet: twentyLines, settings: { to: twentyLinesTo } },
];

if (process.argv[2] === "cold") {
  const c = COLD[Number(process.argv[3])];
  const [a, wall] = [now(), performance.now()];
  rb.solve(c.sheet, c.settings);
  const [b, wallFirst] = [now(), performance.now() - wall];
  rb.solve(c.sheet, c.settings);
  const d = now();
  console.log(JSON.stringify({ name: c.name, load: t1 - t0, instantiate: t2 - t1, first: b - a, second: d - b, firstWall: wallFirst }));
} else if (process.argv[2] === "warm") {
  const rows = [];
  for (const c of cases) {
    const s = settingsOf(c);
    // Warm-up of both paths, and the compiled-in path's repeats per timed
    // call (about 2 ms, so that its JSON and set-up vanish in the mean).
    let run = rb.solve(c.sheet, s);
    for (let k = 0; k < 3; k++) rb.solve(c.sheet, s);
    let compiled = JSON.parse(rb.bench_stiff_run(c.problem, c.method, c.rtol, c.atol, 1));
    let a = now();
    rb.bench_stiff_run(c.problem, c.method, c.rtol, c.atol, 1);
    const repeats = Math.min(10000, Math.max(1, Math.ceil(2 / Math.max(now() - a, 1e-6))));
    // Interleaved: one user call, one without extrema (the compiled-in
    // problem's work: it locates none), one compiled-in call, until they had
    // 300 ms and at least 9 samples each.
    const bare = { ...s, extrema: false };
    let plain = rb.solve(c.sheet, bare);
    const user = [], noExtrema = [], inside = [];
    let spent = 0;
    while (user.length < 9 || (spent < 300 && user.length < 2000)) {
      a = now();
      run = rb.solve(c.sheet, s);
      const b = now();
      plain = rb.solve(c.sheet, bare);
      const b2 = now();
      compiled = JSON.parse(rb.bench_stiff_run(c.problem, c.method, c.rtol, c.atol, repeats));
      const d = now();
      user.push(b - a);
      noExtrema.push(b2 - b);
      inside.push((d - b2) / repeats);
      spent += d - a;
    }
    rows.push({
      problem: c.problem, method: c.method, rtol: c.rtol, atol: c.atol, stiff: c.stiff,
      userMs: median(user), userBestMs: Math.min(...user), noExtremaMs: median(noExtrema), noExtremaStats: plain.stats,
      compiledMs: median(inside), samples: user.length,
      status: run.status, y: endState(run), stats: run.stats, points: run.t.length,
      compiledStats: { rhsEvals: compiled.rhsEvals, steps: compiled.steps, rejected: compiled.rejected,
        jacobians: compiled.jacobians, factorizations: compiled.factorizations }, compiledY: compiled.y,
    });
  }
  // Fixed cost of one call on the 20-line sheet: the same sheet and settings
  // again; new parameter values (P, the boiler power); a sheet text never seen
  // before (a changed comment line). Interleaved, median of each.
  const kinds = {
    same: (i) => rb.solve(twentyLines, { to: twentyLinesTo }),
    params: (i) => rb.solve(twentyLines, { to: twentyLinesTo, params: { P: 3000 + (i % 97) } }),
    "new sheet": (i) => rb.solve(twentyLines.replace("# end of sheet", `# end of sheet ${i}`), { to: twentyLinesTo }),
  };
  const fixed = Object.fromEntries(Object.keys(kinds).map((k) => [k, []]));
  for (let i = 0; i < 600; i++) for (const [k, f] of Object.entries(kinds)) { const a = now(); f(i); fixed[k].push(now() - a); }
  const r = rb.solve(twentyLines, { to: twentyLinesTo });
  console.log(JSON.stringify({ rows, fixed: Object.fromEntries(Object.entries(fixed).map(([k, v]) => [k, median(v.slice(20))])),
    twentyLinesStats: r.stats }));
} else if (process.argv[2] === "parts") {
  // Stage by stage (the bench build): the 20-line sheet, then the same with
  // new parameter values, and the headline non-stiff case.
  const arenstorf = cases.find((c) => c.problem === "arenstorf" && c.method === "dormand-prince-5" && c.rtol === 1e-6);
  // A first pass to warm the engine up (its first calls run unoptimised code).
  rb.benchCallParts(twentyLines, { to: twentyLinesTo }, 300);
  rb.benchCallParts(arenstorf.sheet, settingsOf(arenstorf), 30);
  const out = {
    "20-line sheet": rb.benchCallParts(twentyLines, { to: twentyLinesTo }, 300),
    "20-line sheet, new parameter values": rb.benchCallParts(twentyLines, { to: twentyLinesTo, params: { P: 3100 } }, 300),
    "arenstorf dp54 1e-6": rb.benchCallParts(arenstorf.sheet, settingsOf(arenstorf), 30),
  };
  console.log(JSON.stringify(out));
}
