//! The zero contour of a function sampled on a grid, by marching squares,
//! joined into long polylines.

use super::Window;

/// The zero contour of `g` sampled on an `(m+1) × (m+1)` node grid over `w`
/// (row-major, `values[j*(m+1) + i]`), by marching squares, joined into
/// polylines separated by NaN pairs (so that a plot strokes a few long lines,
/// not one short segment per cell).
pub fn zero_contour(values: &[f64], w: &Window, m: usize) -> (Vec<f64>, Vec<f64>) {
    let (dx, dy) = ((w[1] - w[0]) / m as f64, (w[3] - w[2]) / m as f64);
    let node = |i: usize, j: usize| values[j * (m + 1) + i];
    let at = |i: usize, j: usize| (w[0] + i as f64 * dx, w[2] + j as f64 * dy);
    // Edges are numbered once for the whole grid: horizontal (i, j)–(i+1, j)
    // first, then vertical (i, j)–(i, j+1). Each edge's crossing is computed
    // once, from its lower node, so that neighbouring cells share it exactly.
    let horizontal = m * (m + 1);
    let h_edge = |i: usize, j: usize| j * m + i;
    let v_edge = |i: usize, j: usize| horizontal + j * (m + 1) + i;
    let crossing = |e: usize| -> (f64, f64) {
        let ((i0, j0), (i1, j1)) = if e < horizontal {
            let (i, j) = (e % m, e / m);
            ((i, j), (i + 1, j))
        } else {
            let (i, j) = ((e - horizontal) % (m + 1), (e - horizontal) / (m + 1));
            ((i, j), (i, j + 1))
        };
        let (a, b) = (node(i0, j0), node(i1, j1));
        let s = a / (a - b);
        let (pa, pb) = (at(i0, j0), at(i1, j1));
        (pa.0 + s * (pb.0 - pa.0), pa.1 + s * (pb.1 - pa.1))
    };
    // Segments of the contour as pairs of edges.
    let mut segments: Vec<[usize; 2]> = Vec::new();
    for j in 0..m {
        for i in 0..m {
            // Corners counter-clockwise from bottom-left; edge k joins corner k and k+1.
            let c = [node(i, j), node(i + 1, j), node(i + 1, j + 1), node(i, j + 1)];
            if c.iter().any(|v| !v.is_finite()) {
                continue;
            }
            let edges = [h_edge(i, j), v_edge(i + 1, j), h_edge(i, j + 1), v_edge(i, j)];
            let cross: Vec<usize> = (0..4).filter(|&k| (c[k] < 0.0) != (c[(k + 1) % 4] < 0.0)).map(|k| edges[k]).collect();
            match cross.len() {
                2 => segments.push([cross[0], cross[1]]),
                4 => {
                    // A saddle cell: pair the crossings by the sign at the centre.
                    let centre = c.iter().sum::<f64>() / 4.0;
                    if (centre < 0.0) == (c[0] < 0.0) {
                        segments.extend([[cross[0], cross[1]], [cross[2], cross[3]]]);
                    } else {
                        segments.extend([[cross[1], cross[2]], [cross[3], cross[0]]]);
                    }
                }
                _ => {}
            }
        }
    }
    let (mut xs, mut ys) = (Vec::new(), Vec::new());
    for chain in chains(&segments) {
        for e in chain {
            let p = crossing(e);
            xs.push(p.0);
            ys.push(p.1);
        }
        xs.push(f64::NAN);
        ys.push(f64::NAN);
    }
    (xs, ys)
}

/// Join segments that share an end (each end is shared by at most two) into
/// chains of ends: open chains first walked from a free end, then closed
/// loops, which repeat their first end at the close.
fn chains(segments: &[[usize; 2]]) -> Vec<Vec<usize>> {
    let mut at: std::collections::HashMap<usize, Vec<usize>> = std::collections::HashMap::new();
    for (k, s) in segments.iter().enumerate() {
        for &e in s {
            at.entry(e).or_default().push(k);
        }
    }
    let mut used = vec![false; segments.len()];
    let mut out = Vec::new();
    let walk = |first: usize, from: usize, used: &mut [bool]| {
        let mut chain = vec![from];
        let (mut seg, mut end) = (first, from);
        loop {
            used[seg] = true;
            let s = segments[seg];
            end = if s[0] == end { s[1] } else { s[0] };
            chain.push(end);
            match at[&end].iter().find(|&&k| !used[k]) {
                Some(&k) => seg = k,
                None => break,
            }
        }
        chain
    };
    // Open chains start where an end belongs to one segment only.
    let mut free: Vec<usize> = at.iter().filter(|(_, v)| v.len() == 1).map(|(&e, _)| e).collect();
    free.sort_unstable();
    for e in free {
        let k = at[&e][0];
        if !used[k] {
            out.push(walk(k, e, &mut used));
        }
    }
    for k in 0..segments.len() {
        if !used[k] {
            out.push(walk(k, segments[k][0], &mut used));
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_circle_contour_is_closed_and_near_the_circle() {
        // g = x² + y² - 1 on [-2,2]²: every crossing within a cell's error of r = 1.
        let m = 60;
        let w = [-2.0, 2.0, -2.0, 2.0];
        let mut v = Vec::new();
        for j in 0..=m {
            for i in 0..=m {
                let (x, y) = (-2.0 + 4.0 * i as f64 / m as f64, -2.0 + 4.0 * j as f64 / m as f64);
                v.push(x * x + y * y - 1.0);
            }
        }
        let (xs, ys) = zero_contour(&v, &w, m);
        let r: Vec<f64> = xs.iter().zip(&ys).filter(|(x, _)| x.is_finite()).map(|(x, y)| x.hypot(*y)).collect();
        assert!(r.len() > 100);
        // One closed loop: a single piece whose last point is its first.
        assert_eq!(xs.iter().filter(|v| v.is_nan()).count(), 1);
        assert_eq!((xs[0], ys[0]), (xs[xs.len() - 2], ys[ys.len() - 2]));
        assert!(r.iter().all(|r| (r - 1.0).abs() < 0.01), "{r:?}");
    }
}
