//! Where the driver's time goes (a diagnostic for `scripts/bench.d/solver`,
//! not part of the bench output): for a few cases of the non-stiff bench, the
//! time per solve of the full driver and of a bare loop that runs the same
//! stepper and controller with nothing else (no output, no stiffness test, no
//! blow-up watch), and their ratio. `cargo run --profile bench --example
//! bench_solver_parts`.
//!
//! `bench_solver_parts count WHO PROBLEM METHOD TOL N` runs one case `N` times
//! through the driver (`WHO = driver`) or the hand-written baseline
//! (`WHO = baseline`) and nothing else, for an instruction counter
//! (`valgrind --tool=callgrind`), which, unlike a clock, is not disturbed by
//! other work on the machine.

use std::time::Instant;

use ratebook::problems::by_name;
use ratebook::solve::control::{initial_step, PiController};
use ratebook::problems::nonstiff::bench_rhs;
use ratebook::solve::{method, solve, Settings, Stats, Tolerance};

#[path = "bench_solver/baseline.rs"]
mod baseline;

fn per_solve(mut f: impl FnMut()) -> f64 {
    let t0 = Instant::now();
    f();
    let one = t0.elapsed().as_secs_f64();
    let n = (2e-3 / one.max(1e-9)).ceil().clamp(1.0, 1e4) as u32;
    let mut best = f64::INFINITY;
    let start = Instant::now();
    while start.elapsed().as_secs_f64() < 0.2 {
        let t0 = Instant::now();
        for _ in 0..n {
            f();
        }
        best = best.min(t0.elapsed().as_secs_f64() / n as f64);
    }
    best
}

/// Run one case `n` times through the driver or the baseline.
fn count(args: &[String]) -> Option<()> {
    let [who, name, id, tol, n] = args else { return None };
    let tol: f64 = tol.parse().ok()?;
    let n: u32 = n.parse().ok()?;
    let p = by_name(name)?;
    let m = method(id)?;
    let mut model = (p.make)();
    let settings = Settings { method: id.clone(), to: p.t_end, tol: Tolerance { relative: tol, absolute: tol }, extrema: false, ..Settings::default() };
    for _ in 0..n {
        match who.as_str() {
            "driver" => {
                std::hint::black_box(solve(model.as_mut(), p.t0, &p.y0, &settings).ok()?);
            }
            _ => {
                let f = bench_rhs(name)?;
                let tab = m.tableau()?;
                let r = match p.y0.len() {
                    2 => baseline::baseline::<2>(tab, f, &p.y0, p.t_end, tol, tol).1,
                    3 => baseline::baseline::<3>(tab, f, &p.y0, p.t_end, tol, tol).1,
                    _ => baseline::baseline::<4>(tab, f, &p.y0, p.t_end, tol, tol).1,
                };
                std::hint::black_box(r);
            }
        }
    }
    Some(())
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    if args.get(1).map(String::as_str) == Some("count") {
        if count(&args[2..]).is_none() {
            eprintln!("usage: bench_solver_parts count driver|baseline PROBLEM METHOD TOL N");
            std::process::exit(1);
        }
        return;
    }
    let cases = [("brusselator", "dormand-prince-5", 1e-3), ("brusselator", "dormand-prince-5", 1e-9), ("arenstorf", "dormand-prince-5", 1e-6), ("arenstorf", "dormand-prince-8", 1e-9), ("lorenz", "dormand-prince-8", 1e-6), ("oscillator", "bogacki-shampine-3", 1e-6)];
    println!("| case | driver µs | bare loop µs | driver / bare | steps |");
    println!("|---|---|---|---|---|");
    for (name, id, tol) in cases {
        let Some(p) = by_name(name) else { continue };
        let Some(m) = method(id) else { continue };
        let mut model = (p.make)();
        let settings = Settings { method: id.into(), to: p.t_end, tol: Tolerance { relative: tol, absolute: tol }, extrema: false, ..Settings::default() };
        let mut steps = 0;
        let driver = per_solve(|| {
            let run = solve(model.as_mut(), p.t0, &p.y0, &settings);
            steps = run.map(|r| r.stats.steps).unwrap_or(0);
        });
        let tab = m.tableau().expect("explicit");
        let bare = per_solve(|| {
            let mut st = m.build(p.y0.len());
            let mut stats = Stats::default();
            let tol = settings.tol;
            let mut f0 = vec![0.0; p.y0.len()];
            let mut h = initial_step(model.as_mut(), p.t0, &p.y0, 1.0, m.order, &tol, p.t_end, &mut f0, &mut stats);
            st.seed_slope(&f0);
            let mut ctrl = PiController::new(tab.error_order, tab.control);
            let (mut t, mut y, mut yn) = (p.t0, p.y0.clone(), p.y0.clone());
            while t < p.t_end {
                let hh = h.min(p.t_end - t);
                let Ok(a) = st.attempt(model.as_mut(), t, &y, hh, &tol, &mut yn, &mut stats) else { return };
                let e = a.error.unwrap_or(0.0);
                if e <= 1.0 {
                    st.accept();
                    t += hh;
                    std::mem::swap(&mut y, &mut yn);
                    h = hh * ctrl.accepted(e, hh);
                } else {
                    h = hh * ctrl.rejected(e);
                }
            }
            std::hint::black_box(&y);
        });
        println!("| {name} {id} {tol:e} | {:.2} | {:.2} | {:.2} | {steps} |", driver * 1e6, bare * 1e6, driver / bare);
    }
}
