//! Native part of the stiff benchmark (`scripts/bench.d/stiff`): runs every
//! case of `ratebook::problems::stiff::bench_cases`, each timed call solving it
//! [`bench_repeat`] times for about 2 ms (so that building the problem and the
//! JSON of the result vanish in the mean), repeating calls until about 0.2 s
//! has passed, and prints one JSON array with the fastest time per solve.

use std::time::Instant;

use ratebook::problems::bench::bench_repeat;
use ratebook::problems::stiff::bench_cases;

fn main() {
    let mut rows = Vec::new();
    for c in bench_cases() {
        let t0 = Instant::now();
        std::hint::black_box(bench_repeat(c.problem, c.method, c.rtol, c.atol, 1));
        let one = t0.elapsed().as_secs_f64();
        let repeats = (2e-3 / one.max(1e-9)).ceil().clamp(1.0, 10_000.0) as u32;
        let mut best = f64::INFINITY;
        let (mut runs, mut spent) = (0u32, 0.0);
        let mut result = None;
        while runs < 3 || (spent < 0.2 && runs < 2000) {
            let t0 = Instant::now();
            result = bench_repeat(c.problem, c.method, c.rtol, c.atol, repeats);
            let dt = t0.elapsed().as_secs_f64();
            best = best.min(dt);
            spent += dt;
            runs += 1;
        }
        let Some(serde_json::Value::Object(mut row)) = result else {
            eprintln!("bench_stiff: case {c:?} did not run");
            std::process::exit(1);
        };
        row.insert("problem".into(), c.problem.into());
        row.insert("method".into(), c.method.into());
        row.insert("rtol".into(), c.rtol.into());
        row.insert("atol".into(), c.atol.into());
        row.insert("seconds".into(), (best / repeats as f64).into());
        row.insert("runs".into(), runs.into());
        row.insert("repeats".into(), repeats.into());
        rows.push(serde_json::Value::Object(row));
    }
    println!("{}", serde_json::Value::Array(rows));
}
