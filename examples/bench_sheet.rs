//! Speed of compiled sheets against the same formulas written in Rust,
//! measured side by side in one run. Run by `scripts/bench.d/sheet`.
//!
//! Both sides are called through `&mut dyn Problem`, the way a solver calls
//! them. Inputs go through `black_box` so nothing is folded away. Prints a
//! markdown table and writes `target/bench/sheet.json`, to which the script
//! adds the same formulas in wasm under Node.

use ratebook::problem::Problem;
use ratebook::problems::FnProblem;
use ratebook::sheet::compile;
use std::hint::black_box;
use std::time::Instant;

#[path = "bench_sheet/chain.rs"]
mod chain;
use chain::{chain_rates, chain_sheet, CHAIN_PARAMS};

/// Nanoseconds per call of `rhs` for each problem, the best of several
/// short rounds (short, so that some of them run on a quiet machine); the problems take turns within each round, so a change in the
/// machine's load hits them alike.
fn time_rhs(problems: &mut [&mut dyn Problem], y: &[f64], calls: usize) -> Vec<f64> {
    let mut dy = vec![0.0; y.len()];
    let mut best = vec![f64::INFINITY; problems.len()];
    for _ in 0..300 {
        for (p, b) in problems.iter_mut().zip(best.iter_mut()) {
            let start = Instant::now();
            for k in 0..calls {
                p.rhs(black_box(k as f64 * 1e-6), black_box(y), black_box(&mut dy));
            }
            *b = b.min(start.elapsed().as_secs_f64() * 1e9 / calls as f64);
        }
    }
    black_box(&dy);
    best
}

struct Case {
    name: String,
    sheet: String,
    hand: Box<dyn Problem>,
    y: Vec<f64>,
}

fn main() {
    let calls = 20_000;
    let (a, big_a, g) = (black_box(0.004), black_box(1.5), black_box(9.81));
    let xp = black_box(0.3);
    let chain_params = CHAIN_PARAMS.map(black_box);
    let n = 20;
    let cases = vec![
        Case {
            name: "-a/A*sqrt(2*g*h)".into(),
            sheet: "a = 0.004\nA = 1.5\ng = 9.81\ndh/dt = -a/A*sqrt(2*g*h)\nh(0) = 2\n".into(),
            hand: Box::new(FnProblem::new(&["h"], move |_t, y: &[f64], dy: &mut [f64]| {
                dy[0] = -a / big_a * (2.0 * g * y[0]).sqrt();
            })),
            y: vec![2.0],
        },
        Case {
            name: "-x*y + y + sin(y)".into(),
            sheet: "x = 0.3\ndy/dt = -x*y + y + sin(y)\ny(0) = 1\n".into(),
            hand: Box::new(FnProblem::new(&["y"], move |_t, y: &[f64], dy: &mut [f64]| {
                dy[0] = -xp * y[0] + y[0] + y[0].sin();
            })),
            y: vec![1.0],
        },
        Case {
            name: "-g*sin(y) - 0.1*v*abs(v) + 0.2*cos(t)".into(),
            sheet: "g = 9.81\ny' = v\nv' = -g*sin(y) - 0.1*v*abs(v) + 0.2*cos(t)\ny(0) = 1\nv(0) = 0\n".into(),
            hand: Box::new(FnProblem::new(&["y", "v"], move |t, y: &[f64], dy: &mut [f64]| {
                dy[0] = y[1];
                dy[1] = -g * y[0].sin() - 0.1 * y[1] * y[1].abs() + 0.2 * t.cos();
            })),
            y: vec![1.0, 0.2],
        },
        Case {
            name: format!("{n}-state thermal chain"),
            sheet: chain_sheet(n),
            hand: Box::new(FnProblem::new(&vec!["T"; n], move |t, y: &[f64], dy: &mut [f64]| chain_rates(chain_params, t, y, dy))),
            y: (0..n).map(|i| 20.0 + i as f64).collect(),
        },
    ];
    let mut rows = Vec::new();
    println!("| formula | sheet ns/rhs | Rust ns/rhs | ratio |");
    println!("|---|---|---|---|");
    for mut c in cases {
        let mut model = match compile(&c.sheet) {
            Ok(m) => m,
            Err(e) => {
                eprintln!("bench sheet does not compile: {e}");
                std::process::exit(1);
            }
        };
        // Same answer on both sides before timing.
        let (mut d1, mut d2) = (vec![0.0; c.y.len()], vec![0.0; c.y.len()]);
        model.rhs(0.5, &c.y, &mut d1);
        c.hand.rhs(0.5, &c.y, &mut d2);
        let agree = d1.iter().zip(&d2).all(|(x, y)| (x - y).abs() <= 1e-12 * x.abs().max(y.abs()).max(1.0));
        let times = time_rhs(&mut [&mut model, c.hand.as_mut()], &c.y, calls / c.y.len().min(10));
        let (ts, th) = (times[0], times[1]);
        let ratio = ts / th;
        println!("| `{}` | {:.2} | {:.2} | {:.2} |{}", c.name, ts, th, ratio, if agree { "" } else { " values differ!" });
        rows.push(format!(
            "{{\"formula\": {:?}, \"sheet_ns\": {:.3}, \"rust_ns\": {:.3}, \"ratio\": {:.3}, \"tape_len\": {}, \"steps\": {}, \"dim\": {}, \"agree\": {}}}",
            c.name,
            ts,
            th,
            ratio,
            model.rhs_program().insts().len(),
            model.rhs_program().steps(),
            c.y.len(),
            agree
        ));
    }
    let json = format!("{{\"native\": [\n  {}\n], \"wasm\": null}}\n", rows.join(",\n  "));
    let _ = std::fs::create_dir_all("target/bench");
    if let Err(e) = std::fs::write("target/bench/sheet.json", json) {
        eprintln!("could not write target/bench/sheet.json: {e}");
    }
}
