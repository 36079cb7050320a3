//! The hand-written baseline of the non-stiff benchmark: one explicit
//! embedded pair written out plainly, shared by `bench_solver` and
//! `bench_solver_parts`.

use ratebook::solve::control::PiController;
use ratebook::solve::tableau::{ErrorEstimate, Tableau};

fn rms(e: &[f64], y: &[f64], z: &[f64], rtol: f64, atol: f64) -> f64 {
    let s: f64 = e.iter().zip(y).zip(z).map(|((e, a), b)| (e / (atol + rtol * a.abs().max(b.abs()))).powi(2)).sum();
    (s / e.len() as f64).sqrt()
}

/// The baseline: one explicit embedded pair, written out plainly for `N`
/// states with the rates as a closure. Same initial step rule, same PI
/// controller and FSAL reuse as the driver, none of its generality.
pub fn baseline<const N: usize>(tab: &Tableau, f: impl Fn(f64, &[f64], &mut [f64]), y0: &[f64], t_end: f64, rtol: f64, atol: f64) -> ([f64; N], u64) {
    let s = tab.stages();
    let mut k = vec![[0.0; N]; s];
    let mut y = [0.0; N];
    y.copy_from_slice(y0);
    let mut nfev = 0u64;
    let (e, e3): (Vec<f64>, Vec<f64>) = match &tab.error {
        ErrorEstimate::Embedded { b_hat } => (tab.b.iter().zip(b_hat.iter()).map(|(b, c)| b - c).collect(), vec![]),
        ErrorEstimate::Blended { e5, e3 } => (e5.to_vec(), e3.to_vec()),
        ErrorEstimate::None => return (y, 0),
    };
    // Hairer's initial step (as in the driver).
    f(0.0, &y, &mut k[0]);
    nfev += 1;
    let zero = [0.0; N];
    let d0 = rms(&y, &y, &zero, rtol, atol);
    let d1 = rms(&k[0], &y, &zero, rtol, atol);
    let h0 = if d0 < 1e-5 || d1 < 1e-5 { 1e-6 } else { 0.01 * d0 / d1 }.min(t_end);
    let mut y1 = [0.0; N];
    for i in 0..N {
        y1[i] = y[i] + h0 * k[0][i];
    }
    let mut f1 = [0.0; N];
    f(h0, &y1, &mut f1);
    nfev += 1;
    let mut df = [0.0; N];
    for i in 0..N {
        df[i] = f1[i] - k[0][i];
    }
    let d2 = rms(&df, &y, &zero, rtol, atol) / h0;
    let m = d1.max(d2);
    let h1 = if m <= 1e-15 { (h0 * 1e-3).max(1e-6) } else { (0.01 / m).powf(1.0 / (tab.order as f64 + 1.0)) };
    let mut h = (100.0 * h0).min(h1).min(t_end);
    let mut ctrl = PiController::new(tab.error_order, tab.control);
    let mut t = 0.0;
    // k[0] holds f(0, y0) from the initial step.
    let mut first_ready = true;
    let mut stage = [0.0; N];
    let mut err = [0.0; N];
    let mut err3 = [0.0; N];
    while t < t_end {
        let last = t + h >= t_end;
        if last {
            h = t_end - t;
        }
        if !first_ready {
            f(t, &y, &mut k[0]);
            nfev += 1;
            first_ready = true;
        }
        for i in 1..s {
            stage.copy_from_slice(&y);
            for (j, a) in tab.a[i].iter().enumerate() {
                if *a != 0.0 {
                    for q in 0..N {
                        stage[q] += h * a * k[j][q];
                    }
                }
            }
            let (head, tail) = k.split_at_mut(i);
            let _ = head;
            f(t + tab.c[i] * h, &stage, &mut tail[0]);
            nfev += 1;
        }
        // FSAL: the last stage argument is y_new.
        err.iter_mut().for_each(|x| *x = 0.0);
        err3.iter_mut().for_each(|x| *x = 0.0);
        for (j, kj) in k.iter().enumerate() {
            for q in 0..N {
                err[q] += h * e[j] * kj[q];
                if !e3.is_empty() {
                    err3[q] += h * e3[j] * kj[q];
                }
            }
        }
        let en = rms(&err, &y, &stage, rtol, atol);
        let en = if e3.is_empty() {
            en
        } else {
            let e3n = rms(&err3, &y, &stage, rtol, atol);
            let den = (en * en + 0.01 * e3n * e3n).sqrt();
            if den > 0.0 { en * en / den } else { 0.0 }
        };
        if en <= 1.0 {
            t = if last { t_end } else { t + h };
            y.copy_from_slice(&stage);
            k.swap(0, s - 1);
            h *= ctrl.accepted(en, h);
        } else {
            h *= ctrl.rejected(en);
        }
    }
    (y, nfev)
}

