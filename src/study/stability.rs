//! Drawing the stability region `{z : |R(z)| ≤ 1}` of a method: a frame that
//! holds it, the stable set as horizontal runs and the boundary as segments.
//! The stability function itself ([`StabilityFunction`]) lives with the
//! solvers in [`crate::solve::stability`].

pub use crate::solve::stability::{StabilityFunction, C64};

impl StabilityFunction {
    /// A box `(re_min, re_max, im_min, im_max)` that frames the region of an
    /// explicit method, or a window around the origin for an implicit one,
    /// widened to include `points`.
    pub fn frame(&self, points: &[C64]) -> (f64, f64, f64, f64) {
        let (mut x0, mut x1, mut y0, mut y1) = if self.is_explicit() {
            let mut b = (-0.5f64, 0.5f64, -0.5f64, 0.5f64);
            for k in 0..90 {
                let phi = std::f64::consts::PI * (0.5 + k as f64 / 89.0);
                let d = C64::from_polar(1.0, phi);
                if let Some(r) = self.stable_reach(d) {
                    let z = d * r;
                    b = (b.0.min(z.re), b.1.max(z.re), b.2.min(z.im), b.3.max(z.im));
                }
            }
            let m = b.3.max(-b.2);
            (b.0, b.1, -m, m)
        } else {
            (-5.0, 5.0, -5.0, 5.0)
        };
        for p in points.iter().filter(|p| p.re.is_finite() && p.im.is_finite()) {
            x0 = x0.min(p.re);
            x1 = x1.max(p.re);
            y0 = y0.min(p.im);
            y1 = y1.max(p.im);
        }
        let pad = 0.08 * (x1 - x0).max(y1 - y0);
        (x0 - pad, x1 + pad, y0 - pad, y1 + pad)
    }

    /// The stable set on a `cols × rows` grid over `frame`, as horizontal runs
    /// `(im, re_from, re_to)`: one rectangle per run fills the region compactly.
    pub fn runs(&self, frame: (f64, f64, f64, f64), cols: usize, rows: usize) -> Vec<(f64, f64, f64)> {
        let (x0, x1, y0, y1) = frame;
        let dx = (x1 - x0) / cols as f64;
        let dy = (y1 - y0) / rows as f64;
        let mut out = Vec::new();
        for r in 0..rows {
            let im = y0 + (r as f64 + 0.5) * dy;
            let mut start = None;
            for c in 0..=cols {
                let stable = c < cols && self.is_stable(C64::new(x0 + (c as f64 + 0.5) * dx, im));
                match (stable, start) {
                    (true, None) => start = Some(c),
                    (false, Some(s)) => {
                        out.push((im, x0 + s as f64 * dx, x0 + c as f64 * dx));
                        start = None;
                    }
                    _ => {}
                }
            }
        }
        out
    }

    /// The boundary `|R(z)| = 1` inside `frame`, as line segments found by
    /// marching squares on a `cols × rows` grid of `|R| − 1`, each end placed by
    /// linear interpolation.
    pub fn boundary(&self, frame: (f64, f64, f64, f64), cols: usize, rows: usize) -> Vec<[(f64, f64); 2]> {
        let (x0, x1, y0, y1) = frame;
        let dx = (x1 - x0) / cols as f64;
        let dy = (y1 - y0) / rows as f64;
        let v: Vec<f64> = (0..=rows)
            .flat_map(|r| (0..=cols).map(move |c| (c, r)))
            .map(|(c, r)| (self.growth(C64::new(x0 + c as f64 * dx, y0 + r as f64 * dy)) - 1.0).clamp(-1e6, 1e6))
            .collect();
        let at = |c: usize, r: usize| v[r * (cols + 1) + c];
        let pt = |c: usize, r: usize| (x0 + c as f64 * dx, y0 + r as f64 * dy);
        let mut segs = Vec::new();
        for r in 0..rows {
            for c in 0..cols {
                let corners = [(c, r), (c + 1, r), (c + 1, r + 1), (c, r + 1)];
                let mut cross = Vec::with_capacity(4);
                for k in 0..4 {
                    let (a, b) = (corners[k], corners[(k + 1) % 4]);
                    let (va, vb) = (at(a.0, a.1), at(b.0, b.1));
                    if (va <= 0.0) != (vb <= 0.0) {
                        let w = va / (va - vb);
                        let (pa, pb) = (pt(a.0, a.1), pt(b.0, b.1));
                        cross.push((pa.0 + w * (pb.0 - pa.0), pa.1 + w * (pb.1 - pa.1)));
                    }
                }
                if cross.len() == 2 {
                    segs.push([cross[0], cross[1]]);
                } else if cross.len() == 4 {
                    segs.push([cross[0], cross[1]]);
                    segs.push([cross[2], cross[3]]);
                }
            }
        }
        segs
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn euler() -> StabilityFunction {
        StabilityFunction::explicit(&[&[]], &[1.0])
    }

    #[test]
    fn euler_boundary_is_the_unit_circle_about_minus_one() {
        let f = euler();
        let frame = f.frame(&[]);
        assert!(frame.0 < -2.0 && frame.1 > 0.0 && frame.3 > 1.0, "{frame:?}");
        let segs = f.boundary(frame, 120, 90);
        assert!(segs.len() > 100);
        for s in &segs {
            for p in s {
                let r = ((p.0 + 1.0).powi(2) + p.1.powi(2)).sqrt();
                assert!((r - 1.0).abs() < 0.03, "{p:?}");
            }
        }
        // Runs cover an area close to π (the unit disc).
        let (cols, rows) = (200, 200);
        let dy = (frame.3 - frame.2) / rows as f64;
        let area: f64 = f.runs(frame, cols, rows).iter().map(|r| (r.2 - r.1) * dy).sum();
        assert!((area - std::f64::consts::PI).abs() < 0.05, "{area}");
    }
}
