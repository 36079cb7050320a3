//! Plots of extreme numbers: every figure is drawn, promptly, whatever its
//! data or window (huge, infinite, NaN, a single value, a span narrower than
//! the last digit, a span over `f64::MAX`). A sheet with `a(0) = 1e308` and
//! `b(0) = -1e308` once hung the page in the tick loop; here each case runs
//! in its own thread with a time bound, so a hang fails the test instead of
//! stalling it. The bound is generous (a case takes milliseconds): it
//! catches a loop without end, not a slow one.

use std::sync::mpsc;
use std::thread;
use std::time::Duration;

use ratebook::draw::{figure_svg, Figure, Line, Mark, MarkShape, Rule};

const BOUND: Duration = Duration::from_secs(20);
const M: f64 = f64::MAX;
const INF: f64 = f64::INFINITY;
const NAN: f64 = f64::NAN;

fn line(x: &[f64], y: &[f64]) -> Line {
    Line { label: "q".into(), x: x.to_vec(), y: y.to_vec(), colour: 0, width: 2, ..Default::default() }
}

fn fig(lines: Vec<Line>) -> Figure {
    Figure { x_label: "t".into(), y_label: "value".into(), lines, ..Default::default() }
}

/// Every case: a name and a figure.
fn corpus() -> Vec<(String, Figure)> {
    let mut out: Vec<(String, Figure)> = Vec::new();
    let t = [0.0, 0.5, 1.0];
    // The sheet of the report: two constant states at ±1e308.
    out.push(("two states at ±1e308".into(), fig(vec![line(&t, &[1e308; 3]), line(&t, &[-1e308; 3])])));
    let ys: [(&str, [f64; 3]); 14] = [
        ("±MAX", [M, -M, M]),
        ("MAX only", [M, M, M]),
        ("-MAX only", [-M, -M, -M]),
        ("inf and -inf", [INF, -INF, 0.0]),
        ("NaN only", [NAN; 3]),
        ("inf only", [INF; 3]),
        ("zero span at 0", [0.0; 3]),
        ("zero span at 1e308", [1e308; 3]),
        ("subnormal", [5e-324, 1e-323, 0.0]),
        ("one ulp at 1", [1.0, 1.0 + f64::EPSILON, 1.0]),
        ("two units at 1e16", [1e16, 1e16 + 2.0, 1e16]),
        ("a little over 1e307 apart", [-1e307, 1.7e308, 0.0]),
        ("near MAX, tiny span", [M, M - 1e292, M]),
        ("mixed", [NAN, M, -INF]),
    ];
    for (name, y) in ys {
        out.push((format!("y {name}"), fig(vec![line(&t, &y)])));
        out.push((format!("x {name}"), fig(vec![line(&y, &t)])));
        let mut log = fig(vec![line(&y, &y)]);
        (log.log_x, log.log_y) = (true, true);
        out.push((format!("log-log {name}"), log));
    }
    let windows: [(&str, (f64, f64)); 9] = [
        ("narrower than an ulp", (1.0, 1.0 + 1e-15)),
        ("the whole number line", (-M, M)),
        ("subnormal", (0.0, 5e-324)),
        ("at the top", (1e308, M)),
        ("NaN", (NAN, 1.0)),
        ("infinite", (-INF, INF)),
        ("backwards", (1.0, -1.0)),
        ("empty", (3.0, 3.0)),
        ("tiny far out", (1e300, 1e300 * (1.0 + 1e-15))),
    ];
    for (name, w) in windows {
        let mut f = fig(vec![line(&t, &[0.0, 1.0, 2.0])]);
        f.x_range = Some(w);
        f.y_range = Some(w);
        out.push((format!("window {name}"), f.clone()));
        (f.log_x, f.log_y) = (true, true);
        out.push((format!("log window {name}"), f));
    }
    // Rules, marks and a field at the edges of the number line.
    let mut f = fig(vec![line(&t, &[1e308, -1e308, 0.0])]);
    f.rules = [M, -M, NAN, INF, 0.5, 5e-324].iter().map(|&x| Rule { x, label: "alarm".into() }).collect();
    f.marks = [(M, M), (0.5, -M), (NAN, 1.0), (INF, 0.0)]
        .iter()
        .map(|&(x, y)| Mark { x, y, label: "peak".into(), shape: MarkShape::Peak, colour: 1 })
        .collect();
    f.field = (0..100).map(|i| {
        let v = [M, -M, 1e308, 0.0, NAN, INF, 1.0, -1e-300][i % 8];
        [v, -v, v * 0.5, M]
    }).collect();
    f.arrows = true;
    out.push(("rules, marks and field at the edges".into(), f));
    // Long and many curves across a huge range.
    let x: Vec<f64> = (0..2000).map(|i| i as f64).collect();
    let y: Vec<f64> = x.iter().map(|v| if (*v as i64) % 2 == 0 { M } else { -M }).collect();
    let mut f = fig((0..12).map(|k| Line { colour: k, label: format!("curve {k}"), ..line(&x, &y) }).collect());
    f.lines[3].dashed = true;
    out.push(("twelve curves swinging ±MAX".into(), f));
    out
}

/// Run `work` with the bound; `Err` says why it failed.
fn bounded<T: Send + 'static>(work: impl FnOnce() -> T + Send + 'static) -> Result<T, String> {
    let (tx, rx) = mpsc::channel();
    thread::spawn(move || {
        let r = std::panic::catch_unwind(std::panic::AssertUnwindSafe(work));
        let _ = tx.send(r);
    });
    match rx.recv_timeout(BOUND) {
        Ok(Ok(v)) => Ok(v),
        Ok(Err(_)) => Err("panicked".into()),
        Err(_) => Err(format!("did not finish within {BOUND:?} (a loop without end)")),
    }
}

/// Every number in the SVG's coordinates is finite.
fn finite_svg(svg: &str) -> Result<(), String> {
    for bad in ["NaN", "inf", "Infinity"] {
        if svg.contains(&format!("\"{bad}")) || svg.contains(&format!(",{bad}")) || svg.contains(&format!(" {bad},")) {
            return Err(format!("`{bad}` in a coordinate"));
        }
    }
    if !(svg.starts_with("<svg") && svg.trim_end().ends_with("</svg>")) {
        return Err("not a whole SVG document".into());
    }
    Ok(())
}

#[test]
fn every_extreme_figure_is_drawn_promptly() {
    let cases = corpus();
    assert!(cases.len() > 60, "{}", cases.len());
    let mut failures = Vec::new();
    for (name, fig) in cases {
        for (w, h) in [(820u32, 440u32), (40, 30)] {
            let f = fig.clone();
            match bounded(move || figure_svg(&f, w, h)) {
                Ok(Ok(svg)) => {
                    if let Err(e) = finite_svg(&svg) {
                        failures.push(format!("{name} ({w}x{h}): {e}"));
                    }
                }
                // A figure too small for its labels may refuse; it must not hang.
                Ok(Err(e)) if w < 100 => drop(e),
                Ok(Err(e)) => failures.push(format!("{name} ({w}x{h}): {}", e.0)),
                Err(e) => failures.push(format!("{name} ({w}x{h}): {e}")),
            }
        }
    }
    assert!(failures.is_empty(), "{} failures:\n{}", failures.len(), failures.join("\n"));
}

#[test]
fn the_sheet_that_froze_the_page_draws_both_states() {
    // The curves are in the picture: each constant state is a horizontal
    // line inside the frame, not pinned to an edge or lost.
    let t = [0.0, 5.0, 10.0];
    let f = fig(vec![line(&t, &[1e308; 3]), Line { colour: 1, label: "b".into(), ..line(&t, &[-1e308; 3]) }]);
    let svg = bounded(move || figure_svg(&f, 820, 440)).expect("drawn").expect("no error");
    let curves: Vec<&str> = svg.lines().filter(|l| l.contains("<polyline") && l.contains("stroke-width=\"2\"")).collect();
    assert!(curves.len() >= 2, "{svg}");
    let ys: Vec<f64> = curves
        .iter()
        .take(2)
        .map(|l| l.split("points=\"").nth(1).unwrap().split_whitespace().next().unwrap().split(',').nth(1).unwrap().parse().unwrap())
        .collect();
    assert!(ys[0] < ys[1] - 100.0, "1e308 above -1e308 by most of the plot: {ys:?}");
}

#[test]
fn stability_pictures_of_extreme_points_are_drawn_promptly() {
    let points: [(&str, Vec<(f64, f64)>); 5] = [
        ("huge", vec![(-1e308, 0.0), (1e308, 1e308)]),
        ("MAX", vec![(-M, -M), (M, M)]),
        ("NaN and infinity", vec![(NAN, 0.0), (-INF, INF)]),
        ("none", vec![]),
        ("tiny", vec![(-1e-300, 1e-300)]),
    ];
    for (name, hl) in points {
        let r = bounded(move || ratebook::api::study::stability_svg("rk4", "RK4", &hl, 480, 360));
        match r {
            Ok(Ok(svg)) => assert!(finite_svg(&svg).is_ok(), "{name}: {svg}"),
            Ok(Err(e)) => panic!("{name}: {e:?}"),
            Err(e) => panic!("{name}: {e}"),
        }
    }
}
