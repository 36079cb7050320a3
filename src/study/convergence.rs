//! Convergence of a fixed-step method: observed order, Richardson
//! extrapolation, and the step needed for a target accuracy.
//!
//! A method of order `p` run with step `h` has global error `e(h) ≈ C hᵖ` once
//! `h` is small enough (the asymptotic range). With values `v_k` at steps
//! `h_k = h / 2ᵏ`, the differences `d_k = v_k − v_(k+1)` shrink by `2ᵖ` from
//! one to the next, so `p ≈ log2(d_k / d_(k+1))`, and the extrapolated value
//! `v_(k+1) + (v_(k+1) − v_k) / (2ᵖ − 1)` cancels the leading error term
//! (Richardson; Hairer, Nørsett & Wanner, *Solving ODEs I*, 2nd ed.,
//! Sec. II.4 and II.9).

/// The observed orders `log2(|d_k| / |d_(k+1)|)` from each consecutive triple
/// of values at steps halving each time. `None` where the differences change
/// sign or vanish: the values are not converging smoothly there.
pub fn observed_orders(values: &[f64]) -> Vec<Option<f64>> {
    let d: Vec<f64> = values.windows(2).map(|w| w[0] - w[1]).collect();
    d.windows(2)
        .map(|w| {
            let (a, b) = (w[0], w[1]);
            let same_sign = (a > 0.0 && b > 0.0) || (a < 0.0 && b < 0.0);
            let r = (a / b).log2();
            (same_sign && r.is_finite()).then_some(r)
        })
        .collect()
}

/// Richardson-extrapolated values from each consecutive pair of values at
/// steps halving each time, assuming order `p`.
pub fn richardson(values: &[f64], p: f64) -> Vec<f64> {
    let f = 2f64.powf(p) - 1.0;
    values.windows(2).map(|w| w[1] + (w[1] - w[0]) / f).collect()
}

/// The least-squares slope of `log(error)` against `log(h)`: the order the
/// errors show. Pairs with a zero or non-finite error are left out; fewer than
/// two usable pairs give `None`.
pub fn fitted_order(h: &[f64], err: &[f64]) -> Option<f64> {
    let pts: Vec<(f64, f64)> =
        h.iter().zip(err).filter(|(h, e)| **h > 0.0 && **e > 0.0 && e.is_finite()).map(|(h, e)| (h.ln(), e.ln())).collect();
    if pts.len() < 2 {
        return None;
    }
    let n = pts.len() as f64;
    let mx = pts.iter().map(|p| p.0).sum::<f64>() / n;
    let my = pts.iter().map(|p| p.1).sum::<f64>() / n;
    let sxx: f64 = pts.iter().map(|p| (p.0 - mx).powi(2)).sum();
    let sxy: f64 = pts.iter().map(|p| (p.0 - mx) * (p.1 - my)).sum();
    (sxx > 0.0).then(|| sxy / sxx)
}

/// What a ladder of values at `h, h/2, h/4, …` says about one quantity.
#[derive(Clone, Debug, PartialEq)]
pub struct Ladder {
    /// The steps, largest first, each half the one before.
    pub h: Vec<f64>,
    /// The quantity at each step.
    pub values: Vec<f64>,
    /// The method's theoretical order.
    pub order: u32,
    /// Observed order from the three finest values, when they converge smoothly.
    pub observed: Option<f64>,
    /// Every observed order, coarse to fine (one per consecutive triple).
    pub observed_all: Vec<Option<f64>>,
    /// The order used for extrapolation and error estimates: the theoretical
    /// one while the observed order is within 0.5 of it (or unobserved); the
    /// observed one when it is far off but sensible (between 0.5 and the
    /// theoretical order plus 1.5).
    pub order_used: f64,
    /// Estimated error of each value (same length as `values`).
    pub errors: Vec<f64>,
    /// The Richardson-extrapolated value from the two finest values.
    pub extrapolated: f64,
    /// Error estimate of the extrapolated value: the last change of the
    /// extrapolations divided by `2^q − 1`, `q` the order at which they
    /// converge; with only two values, a tenth of the finest value's error.
    pub extrapolated_error: f64,
}

impl Ladder {
    /// Analyse `values` at steps `h`, `h/2`, … (at least two) of a method of order `order`.
    pub fn new(h: Vec<f64>, values: Vec<f64>, order: u32) -> Ladder {
        let observed_all = if values.len() >= 3 { observed_orders(&values) } else { Vec::new() };
        let observed = observed_all.last().copied().flatten();
        let p = order as f64;
        let order_used = match observed {
            Some(q) if (q - p).abs() > 0.5 && q >= 0.5 && q <= p + 1.5 => q,
            _ => p,
        };
        let ex = richardson(&values, order_used);
        let extrapolated = ex.last().copied().unwrap_or(f64::NAN);
        let finest_err = match values.len() {
            0 | 1 => f64::NAN,
            n => (values[n - 1] - extrapolated).abs(),
        };
        let n = ex.len();
        let floor = f64::EPSILON * extrapolated.abs();
        let extrapolated_error = if n >= 2 && order_used != p {
            // Extrapolated with the observed order: the last two coincide by construction.
            ex.iter().map(|e| (e - extrapolated).abs()).fold(0.0, f64::max).max(floor)
        } else if n >= 3 {
            // The extrapolations converge at their own order q; the last one's
            // error is its change divided by 2^q − 1.
            let (d1, d2) = (ex[n - 2] - ex[n - 3], ex[n - 1] - ex[n - 2]);
            let q = (d1 / d2).abs().log2();
            let shrink = if q.is_finite() && q > 0.5 && d1 * d2 > 0.0 { 2f64.powf(q) - 1.0 } else { 1.0 };
            (d2.abs() / shrink).max(floor)
        } else if n == 2 {
            (ex[1] - ex[0]).abs().max(floor)
        } else {
            0.1 * finest_err
        };
        let errors = values.iter().map(|v| (v - extrapolated).abs().max(f64::EPSILON * v.abs())).collect();
        Ladder { h, values, order, observed, observed_all, order_used, errors, extrapolated, extrapolated_error }
    }

    /// Whether the observed order is far (more than 0.5) from the theoretical
    /// one, or could not be observed at all.
    pub fn off_theory(&self) -> bool {
        match self.observed {
            Some(q) => (q - self.order as f64).abs() > 0.5,
            None => self.values.len() >= 3 && self.errors.iter().any(|e| *e > 64.0 * f64::EPSILON * self.extrapolated.abs()),
        }
    }

    /// The step that should bring the error of this quantity down to `target`,
    /// from `e(h) ≈ C h^p` fitted at the finest step; `None` when the error
    /// model has nothing to go on.
    pub fn step_for(&self, target: f64) -> Option<f64> {
        let n = self.values.len();
        if n < 2 || !(target > 0.0) {
            return None;
        }
        let (h, e) = (self.h[n - 1], self.errors[n - 1]);
        let h_new = h * (target / e).powf(1.0 / self.order_used);
        (h_new.is_finite() && h_new > 0.0).then_some(h_new)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn synthetic_second_order_ladder() {
        // v(h) = 3 + 0.7 h² + 0.2 h³: order 2 and limit 3 by construction.
        let h: Vec<f64> = (0..4).map(|k| 0.1 / 2f64.powi(k)).collect();
        let v: Vec<f64> = h.iter().map(|h| 3.0 + 0.7 * h * h + 0.2 * h * h * h).collect();
        let l = Ladder::new(h.clone(), v, 2);
        let q = l.observed.unwrap();
        assert!((q - 2.0).abs() < 0.05, "{q}");
        assert!(!l.off_theory());
        assert!((l.extrapolated - 3.0).abs() < 1e-6);
        assert!((l.extrapolated - 3.0).abs() <= 10.0 * l.extrapolated_error);
        // e(h) = 0.7 h² at the finest step: asking for 1e-8 wants h ≈ sqrt(1e-8/0.7).
        let hs = l.step_for(1e-8).unwrap();
        assert!((hs / (1e-8f64 / 0.7).sqrt() - 1.0).abs() < 0.1, "{hs}");
        assert!((fitted_order(&h, &l.errors).unwrap() - 2.0).abs() < 0.1);
    }

    #[test]
    fn erratic_values_are_off_theory() {
        let l = Ladder::new(vec![0.4, 0.2, 0.1, 0.05], vec![1.0, 1.3, 1.1, 1.25], 4);
        assert_eq!(l.observed, None);
        assert!(l.off_theory());
        let l = Ladder::new(vec![0.4, 0.2, 0.1, 0.05], vec![1.0, 1.1, 1.15, 1.175], 4);
        assert!((l.observed.unwrap() - 1.0).abs() < 1e-9);
        assert!(l.off_theory());
    }
}
