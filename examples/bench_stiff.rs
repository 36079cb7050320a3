//! Native part of the stiff benchmark (`scripts/bench.d/stiff`): runs every
//! case of `ratebook::problems::stiff::bench_cases`, repeating each until about
//! 0.2 s has passed, and prints one JSON array with the fastest wall time.

use std::time::Instant;

use ratebook::problems::stiff::{bench_cases, bench_run};

fn main() {
    let mut rows = Vec::new();
    for c in bench_cases() {
        let mut best = f64::INFINITY;
        let (mut runs, mut spent) = (0u32, 0.0);
        let mut result = None;
        while runs < 3 || (spent < 0.2 && runs < 2000) {
            let t0 = Instant::now();
            result = bench_run(c.problem, c.method, c.rtol, c.atol);
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
        row.insert("seconds".into(), best.into());
        row.insert("runs".into(), runs.into());
        rows.push(serde_json::Value::Object(row));
    }
    println!("{}", serde_json::Value::Array(rows));
}
