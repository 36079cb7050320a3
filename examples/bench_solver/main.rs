//! Native part of the non-stiff benchmark (`scripts/bench.d/solver`).
//!
//! `bench_solver run`: every case of `ratebook::problems::nonstiff::bench_cases`
//! through the driver (`solve`, as the page runs it) and through a
//! hand-written baseline loop of the same method (the rate function inlined as
//! a closure, fixed-size arrays, no dense output or events), each repeated
//! until about 0.2 s has passed; prints one JSON array with the fastest times.
//! The driver's time is per solve: each timed call runs
//! [`bench_repeat`] with enough solves for about 2 ms, so that finding the
//! problem and writing the JSON vanish in the mean, exactly as the wasm side
//! of the bench script does.
//!
//! `bench_solver plot IN.json OUT.svg`: the work-precision plot (achieved
//! error against rhsEvals) from the merged rows the bench script writes.

use std::time::Instant;

use plotters::prelude::*;
use ratebook::problems::nonstiff::{bench_cases, bench_rhs};
use ratebook::problems::bench::bench_repeat;
use ratebook::solve::method;

mod baseline;
use baseline::baseline;

/// Repeat `f` until about 0.2 s has passed (at least 3 runs); the fastest time.
fn timed<T>(mut f: impl FnMut() -> T) -> (T, f64, u32) {
    let (mut best, mut spent, mut runs) = (f64::INFINITY, 0.0, 0u32);
    let mut out = f();
    while runs < 3 || (spent < 0.2 && runs < 5000) {
        let t0 = Instant::now();
        out = f();
        let dt = t0.elapsed().as_secs_f64();
        best = best.min(dt);
        spent += dt;
        runs += 1;
    }
    (out, best, runs)
}

/// Solves per timed call of the driver: enough for about 2 ms, from the time
/// of one solve.
fn repeats_for(one: f64) -> u32 {
    (2e-3 / one.max(1e-9)).ceil().clamp(1.0, 10_000.0) as u32
}

/// Passes over all the cases; each time reported is the fastest of its
/// passes, so that a burst of other work on the machine during one case's
/// window does not decide its time (the wasm side and SciPy do the same).
const PASSES: usize = 2;

fn run() {
    let mut rows = pass();
    for _ in 1..PASSES {
        for (row, again) in rows.iter_mut().zip(pass()) {
            let (Some(a), Some(b)) = (row["seconds"].as_f64(), again["seconds"].as_f64()) else { continue };
            if b < a {
                row["seconds"] = b.into();
            }
        }
    }
    println!("{}", serde_json::Value::Array(rows));
}

/// One pass over all the cases: the driver's row and the baseline's of each.
fn pass() -> Vec<serde_json::Value> {
    let mut rows = Vec::new();
    for c in bench_cases() {
        // The time of one solve (the second of two, past any one-off warm-up).
        let mut one = f64::INFINITY;
        for _ in 0..2 {
            let t0 = Instant::now();
            std::hint::black_box(bench_repeat(c.problem, c.method, c.rtol, c.atol, 1));
            one = t0.elapsed().as_secs_f64();
        }
        let repeats = repeats_for(one);
        let (result, secs, runs) = timed(|| bench_repeat(c.problem, c.method, c.rtol, c.atol, repeats));
        let secs = secs / repeats as f64;
        let Some(serde_json::Value::Object(mut row)) = result else {
            eprintln!("bench_solver: case {c:?} did not run");
            std::process::exit(1);
        };
        for (k, v) in [("who", "native".into()), ("problem", c.problem.into()), ("method", c.method.into())] {
            row.insert(k.into(), v);
        }
        row.insert("rtol".into(), c.rtol.into());
        row.insert("atol".into(), c.atol.into());
        row.insert("seconds".into(), secs.into());
        row.insert("runs".into(), runs.into());
        row.insert("repeats".into(), repeats.into());
        let reference = ratebook::problems::by_name(c.problem).and_then(|tp| tp.reference);
        row.insert("reference".into(), serde_json::json!(reference));
        rows.push(serde_json::Value::Object(row));
        // The hand-written baseline of the same method.
        let (Some(f), Some(tab), Some(tp)) = (bench_rhs(c.problem), method(c.method).and_then(|m| m.tableau()), ratebook::problems::by_name(c.problem)) else {
            continue;
        };
        let y0 = tp.y0.clone();
        let ((y, nfev), secs, runs) = match y0.len() {
            2 => {
                let ((y, n), s, r) = timed(|| baseline::<2>(tab, f, &y0, tp.t_end, c.rtol, c.atol));
                ((y.to_vec(), n), s, r)
            }
            3 => {
                let ((y, n), s, r) = timed(|| baseline::<3>(tab, f, &y0, tp.t_end, c.rtol, c.atol));
                ((y.to_vec(), n), s, r)
            }
            _ => {
                let ((y, n), s, r) = timed(|| baseline::<4>(tab, f, &y0, tp.t_end, c.rtol, c.atol));
                ((y.to_vec(), n), s, r)
            }
        };
        rows.push(serde_json::json!({
            "who": "baseline", "problem": c.problem, "method": c.method, "rtol": c.rtol, "atol": c.atol,
            "status": "finished", "y": y, "rhsEvals": nfev, "seconds": secs, "runs": runs,
        }));
    }
    rows
}

fn plot(input: &str, output: &str) -> Result<(), Box<dyn std::error::Error>> {
    let v: serde_json::Value = serde_json::from_str(&std::fs::read_to_string(input)?)?;
    let rows = v["rows"].as_array().ok_or("no rows")?;
    let problems = ["arenstorf", "lorenz", "brusselator", "oscillator"];
    let root = SVGBackend::new(output, (1200, 900)).into_drawing_area();
    root.fill(&WHITE)?;
    let panels = root.split_evenly((2, 2));
    let series: [(&str, &str, RGBColor); 5] = [
        ("native", "bogacki-shampine-3", RGBColor(120, 120, 120)),
        ("native", "dormand-prince-5", RGBColor(31, 119, 180)),
        ("native", "dormand-prince-8", RGBColor(214, 39, 40)),
        ("scipy", "RK45", RGBColor(44, 160, 44)),
        ("scipy", "DOP853", RGBColor(148, 103, 189)),
    ];
    for (panel, problem) in panels.iter().zip(problems) {
        let pts = |who: &str, m: &str| -> Vec<(f64, f64)> {
            let mut p: Vec<(f64, f64)> = rows
                .iter()
                .filter(|r| r["who"] == who && r["method"] == m && r["problem"] == problem)
                .filter_map(|r| Some((r["rhsEvals"].as_f64()?, r["error"].as_f64()?.max(1e-16))))
                .collect();
            p.sort_by(|a, b| a.0.total_cmp(&b.0));
            p
        };
        let all: Vec<(f64, f64)> = series.iter().flat_map(|(w, m, _)| pts(w, m)).collect();
        if all.is_empty() {
            continue;
        }
        let (x0, x1) = all.iter().fold((f64::MAX, f64::MIN), |(a, b), p| (a.min(p.0), b.max(p.0)));
        let (y0, y1) = all.iter().fold((f64::MAX, f64::MIN), |(a, b), p| (a.min(p.1), b.max(p.1)));
        let mut chart = ChartBuilder::on(panel)
            .caption(format!("{problem}: achieved error vs rhsEvals"), ("sans-serif", 18))
            .margin(12)
            .x_label_area_size(36)
            .y_label_area_size(60)
            .build_cartesian_2d((x0 * 0.8..x1 * 1.25).log_scale(), (y0 * 0.3..y1 * 3.0).log_scale())?;
        chart.configure_mesh().x_desc("rhsEvals").y_desc("max |y - ref|").y_label_formatter(&|v| format!("{v:.0e}")).draw()?;
        for (who, m, color) in series {
            let p = pts(who, m);
            if p.is_empty() {
                continue;
            }
            let label = if who == "scipy" { format!("SciPy {m}") } else { format!("ratebook {m}") };
            chart.draw_series(LineSeries::new(p.clone(), color.stroke_width(2)))?.label(label).legend(move |(x, y)| {
                PathElement::new(vec![(x, y), (x + 18, y)], color.stroke_width(2))
            });
            chart.draw_series(p.iter().map(|&(x, y)| Circle::new((x, y), 3, color.filled())))?;
        }
        chart.configure_series_labels().background_style(WHITE.mix(0.8)).border_style(BLACK).draw()?;
    }
    root.present()?;
    Ok(())
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    match args.get(1).map(String::as_str) {
        Some("plot") if args.len() == 4 => {
            if let Err(e) = plot(&args[2], &args[3]) {
                eprintln!("bench_solver plot: {e}");
                std::process::exit(1);
            }
        }
        _ => run(),
    }
}
