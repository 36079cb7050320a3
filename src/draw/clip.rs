//! Clipping curves to the plotting area, and cutting a stroke into the
//! dashes of its pattern.
//!
//! plotters pins points outside the chart to its border instead of clipping
//! them, so every curve is clipped here first, in axis units.

/// Split a polyline into runs of segments clipped to the box (Liang–Barsky
/// per segment). Non-finite points break the line.
pub fn clip_polyline(
    pts: impl IntoIterator<Item = (f64, f64)>,
    (x0, x1): (f64, f64),
    (y0, y1): (f64, f64),
) -> Vec<Vec<(f64, f64)>> {
    let mut runs: Vec<Vec<(f64, f64)>> = Vec::new();
    let mut current: Vec<(f64, f64)> = Vec::new();
    let mut prev: Option<(f64, f64)> = None;
    let flush = |current: &mut Vec<(f64, f64)>, runs: &mut Vec<Vec<(f64, f64)>>| {
        if current.len() >= 2 {
            runs.push(std::mem::take(current));
        } else {
            current.clear();
        }
    };
    for p in pts {
        if !(p.0.is_finite() && p.1.is_finite()) {
            flush(&mut current, &mut runs);
            prev = None;
            continue;
        }
        if let Some(a) = prev {
            match clip_segment(a, p, (x0, x1), (y0, y1)) {
                Some((s, e, starts_inside, ends_inside)) => {
                    if !starts_inside || current.is_empty() {
                        flush(&mut current, &mut runs);
                        current.push(s);
                    }
                    current.push(e);
                    if !ends_inside {
                        flush(&mut current, &mut runs);
                    }
                }
                None => flush(&mut current, &mut runs),
            }
        }
        prev = Some(p);
    }
    flush(&mut current, &mut runs);
    runs
}

/// Whether `p` lies in the box (edges included).
pub(super) fn inside(p: (f64, f64), (x0, x1): (f64, f64), (y0, y1): (f64, f64)) -> bool {
    p.0 >= x0 && p.0 <= x1 && p.1 >= y0 && p.1 <= y1
}

/// Clip segment a–b to the box. Returns the clipped ends and whether each end
/// is the original point. Worked on halves of every coordinate, which gives
/// the same numbers (halving is exact) and keeps `b - a` finite for any
/// finite points.
fn clip_segment(
    a: (f64, f64),
    b: (f64, f64),
    (x0, x1): (f64, f64),
    (y0, y1): (f64, f64),
) -> Option<((f64, f64), (f64, f64), bool, bool)> {
    let h = |v: f64| v / 2.0;
    let (ha, hb) = ((h(a.0), h(a.1)), (h(b.0), h(b.1)));
    let (dx, dy) = (hb.0 - ha.0, hb.1 - ha.1);
    let (mut t0, mut t1) = (0.0f64, 1.0f64);
    for (p, q) in [(-dx, ha.0 - h(x0)), (dx, h(x1) - ha.0), (-dy, ha.1 - h(y0)), (dy, h(y1) - ha.1)] {
        if p == 0.0 {
            if q < 0.0 {
                return None;
            }
        } else {
            let r = q / p;
            if p < 0.0 {
                t0 = t0.max(r);
            } else {
                t1 = t1.min(r);
            }
        }
    }
    if t0 > t1 {
        return None;
    }
    let at = |t: f64| ((ha.0 + t * dx) * 2.0, (ha.1 + t * dy) * 2.0);
    Some((if t0 == 0.0 { a } else { at(t0) }, if t1 == 1.0 { b } else { at(t1) }, t0 == 0.0, t1 == 1.0))
}

/// The "on" pieces of a stroke along `points` (pixels) for the dash
/// `pattern` (alternating on and off lengths; empty for solid, which gives
/// the stroke whole). At most `MAX_DASHES` pieces: a longer stroke is left
/// solid past them.
pub fn dashes(points: &[(f64, f64)], pattern: &[f64]) -> Vec<Vec<(f64, f64)>> {
    const MAX_DASHES: usize = 20_000;
    let period: f64 = pattern.iter().sum();
    if pattern.is_empty() || !(period.is_finite() && period > 0.0) || points.len() < 2 {
        return if points.len() >= 2 { vec![points.to_vec()] } else { vec![] };
    }
    let mut out: Vec<Vec<(f64, f64)>> = Vec::new();
    let (mut k, mut left, mut on) = (0usize, pattern[0], true);
    let mut piece = vec![points[0]];
    for w in points.windows(2) {
        let (a, b) = (w[0], w[1]);
        let len = (b.0 - a.0).hypot(b.1 - a.1);
        if !len.is_finite() {
            continue;
        }
        let mut done = 0.0;
        while len - done > left && out.len() < MAX_DASHES {
            done += left;
            let f = done / len;
            let p = (a.0 + f * (b.0 - a.0), a.1 + f * (b.1 - a.1));
            if on {
                piece.push(p);
                out.push(std::mem::take(&mut piece));
            } else {
                piece = vec![p];
            }
            on = !on;
            k = (k + 1) % pattern.len();
            left = pattern[k];
        }
        left -= len - done;
        if on {
            piece.push(b);
        }
    }
    if on && piece.len() >= 2 {
        out.push(piece);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn zoomed_curves_are_clipped_not_pinned_to_the_border() {
        // A line from (0,0) to (10,10) shown in [2,4]x[2,4] must enter at (2,2)
        // and leave at (4,4).
        let runs = clip_polyline([(0.0, 0.0), (10.0, 10.0)], (2.0, 4.0), (2.0, 4.0));
        assert_eq!(runs, vec![vec![(2.0, 2.0), (4.0, 4.0)]]);
        // Leaving and re-entering makes two runs; NaN breaks a run.
        let runs = clip_polyline([(0.0, 0.0), (1.0, 5.0), (2.0, 0.0), (3.0, f64::NAN), (4.0, 0.0), (4.5, 0.5)], (0.0, 5.0), (0.0, 1.0));
        assert_eq!(runs.len(), 3, "{runs:?}");
        assert_eq!(runs[2], vec![(4.0, 0.0), (4.5, 0.5)]);
        // Entirely outside: nothing.
        assert!(clip_polyline([(5.0, 5.0), (6.0, 6.0)], (0.0, 1.0), (0.0, 1.0)).is_empty());
    }

    #[test]
    fn segments_across_the_whole_number_line_are_clipped_to_finite_points() {
        let m = f64::MAX;
        let runs = clip_polyline([(-m, -m), (m, m)], (-1.0, 1.0), (-1.0, 1.0));
        assert_eq!(runs.len(), 1);
        for &(x, y) in &runs[0] {
            assert!(x.is_finite() && y.is_finite() && x.abs() <= 1.0 + 1e-9 && y.abs() <= 1.0 + 1e-9, "{runs:?}");
        }
        let runs = clip_polyline([(0.0, -m), (1.0, m)], (0.0, 1.0), (-m, m));
        assert_eq!(runs, vec![vec![(0.0, -m), (1.0, m)]]);
    }

    #[test]
    fn strokes_are_cut_into_their_dashes() {
        // 30 px straight, pattern 10 on, 5 off: on 0-10, 15-25, and 30.
        let d = dashes(&[(0.0, 0.0), (30.0, 0.0)], &[10.0, 5.0]);
        assert_eq!(d, vec![vec![(0.0, 0.0), (10.0, 0.0)], vec![(15.0, 0.0), (25.0, 0.0)]]);
        // A dash goes round a corner.
        let d = dashes(&[(0.0, 0.0), (6.0, 0.0), (6.0, 6.0)], &[8.0, 2.0]);
        assert_eq!(d[0], vec![(0.0, 0.0), (6.0, 0.0), (6.0, 2.0)]);
        // Solid: the whole stroke.
        assert_eq!(dashes(&[(0.0, 0.0), (1.0, 1.0)], &[]).len(), 1);
        // A very long stroke stops cutting after a bounded number of dashes.
        assert!(dashes(&[(0.0, 0.0), (1e12, 0.0)], &[1.0, 1.0]).len() <= 20_001);
    }
}
