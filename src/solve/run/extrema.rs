//! The largest and smallest value of every state and helper over the run:
//! the values at each step's end, and the turning points inside each step,
//! located on the continuous extension.

use super::step::{sign, StepView, SAMPLES};
use crate::problem::Problem;
use crate::solve::locate::golden_max;
use crate::solve::Extremum;

/// Running maximum and minimum of one quantity.
#[derive(Clone, Copy)]
struct Peak {
    max: f64,
    t_max: f64,
    min: f64,
    t_min: f64,
}

impl Peak {
    fn new(v: f64, t: f64) -> Self {
        Peak { max: v, t_max: t, min: v, t_min: t }
    }

    fn see(&mut self, v: f64, t: f64) {
        if v > self.max {
            self.max = v;
            self.t_max = t;
        }
        if v < self.min {
            self.min = v;
            self.t_min = t;
        }
    }
}

/// The extrema of a run so far: one [`Peak`] per state, then per helper.
pub(super) struct Extrema {
    peaks: Vec<Peak>,
    dim: usize,
    n_helpers: usize,
    dir: f64,
    helpers: Vec<f64>,
    /// Scratch of the search: sample times and rates.
    times: Vec<f64>,
    rates: Vec<f64>,
}

impl Extrema {
    /// Starting from the values at `(t0, y0)`.
    pub fn new(problem: &mut dyn Problem, t0: f64, y0: &[f64], dir: f64) -> Self {
        let n_helpers = problem.helper_names().len();
        let mut helpers = vec![0.0; n_helpers];
        if n_helpers > 0 {
            problem.helpers(t0, y0, &mut helpers);
        }
        let peaks = y0.iter().chain(&helpers).map(|&v| Peak::new(v, t0)).collect();
        Extrema { peaks, dim: y0.len(), n_helpers, dir, helpers, times: Vec::new(), rates: Vec::new() }
    }

    /// Peaks and troughs in `(t, t_end]`: of the states at the roots of the
    /// dense output's slope, and of the helpers at the roots of their rates
    /// along the dense output ([`Problem::helper_rates`]), or by
    /// golden-section search between samples when the model has no helper
    /// rates.
    pub fn in_step(&mut self, view: &StepView, problem: &mut dyn Problem, t_end: f64) {
        let (n, nh, h) = (self.dim, self.n_helpers, view.h);
        let w = n + nh;
        let mut times = std::mem::take(&mut self.times);
        times.clear();
        times.push(view.t);
        for j in 1..SAMPLES {
            let tau = view.t + h * j as f64 / SAMPLES as f64;
            if (tau - t_end) * self.dir < 0.0 {
                times.push(tau);
            }
        }
        times.push(t_end);
        // Row k: the states' slopes at times[k], then (with helper rates) the helpers' rates.
        let mut rates = std::mem::take(&mut self.rates);
        rates.clear();
        rates.resize(times.len() * w, 0.0);
        let mut ys = vec![0.0; n];
        let mut has_rates = nh > 0;
        for (k, &tau) in times.iter().enumerate() {
            let row = &mut rates[k * w..(k + 1) * w];
            view.stepper.dense_slope((tau - view.t) / h, h, &mut row[..n]);
            if has_rates {
                view.dense_at(tau, &mut ys);
                let (dy, hr) = row.split_at_mut(n);
                has_rates = problem.helper_rates(tau, &ys, dy, hr);
            }
        }
        // End value of every quantity.
        view.dense_at(t_end, &mut ys);
        self.see_point(problem, t_end, &ys);
        // The rates of states and (when the model has them) helpers on the dense output.
        let slopes = |p: &mut dyn Problem, tt: f64, y: &[f64], out: &mut [f64]| {
            view.stepper.dense_slope((tt - view.t) / h, h, &mut out[..n]);
            if out.len() > n {
                let (dy, hr) = out.split_at_mut(n);
                p.helper_rates(tt, y, dy, hr);
            }
        };
        let located = if has_rates { w } else { n };
        let mut hv = vec![0.0; nh];
        for i in 0..located {
            for j in 1..times.len() {
                let (a, b) = (rates[(j - 1) * w + i], rates[j * w + i]);
                if a.is_finite() && b.is_finite() && a != 0.0 && b != 0.0 && sign(a) != sign(b) {
                    let (ta, tb) = view.root(problem, slopes, i, if i < n { n } else { w }, times[j - 1], times[j], a, b);
                    let tm = 0.5 * (ta + tb);
                    view.dense_at(tm, &mut ys);
                    let v = if i < n {
                        ys[i]
                    } else {
                        problem.helpers(tm, &ys, &mut hv);
                        hv[i - n]
                    };
                    self.peaks[i].see(v, tm);
                }
            }
        }
        if nh > 0 && !has_rates {
            self.helper_peaks_by_values(view, problem, &times);
        }
        self.times = times;
        self.rates = rates;
    }

    /// Count the state `y` at `t`, and its helpers there, toward the peaks
    /// and troughs.
    pub fn see_point(&mut self, problem: &mut dyn Problem, t: f64, y: &[f64]) {
        for (p, v) in self.peaks.iter_mut().zip(y) {
            p.see(*v, t);
        }
        if self.n_helpers > 0 {
            problem.helpers(t, y, &mut self.helpers);
            for (p, v) in self.peaks[self.dim..].iter_mut().zip(&self.helpers) {
                p.see(*v, t);
            }
        }
    }

    /// Helper peaks without helper rates: golden-section search around each
    /// sample that is larger (smaller) than its neighbours.
    fn helper_peaks_by_values(&mut self, view: &StepView, problem: &mut dyn Problem, times: &[f64]) {
        let (n, nh) = (self.dim, self.n_helpers);
        let mut ys = vec![0.0; n];
        let mut vals = vec![0.0; times.len() * nh];
        for (k, &tau) in times.iter().enumerate() {
            view.dense_at(tau, &mut ys);
            problem.helpers(tau, &ys, &mut vals[k * nh..(k + 1) * nh]);
        }
        let mut hv = vec![0.0; nh];
        for m in 0..nh {
            for j in 1..times.len().saturating_sub(1) {
                let (a, b, c) = (vals[(j - 1) * nh + m], vals[j * nh + m], vals[(j + 1) * nh + m]);
                for s in [1.0, -1.0] {
                    if s * b > s * a && s * b >= s * c {
                        let (ta, tc) = (times[j - 1], times[j + 1]);
                        let (tm, v) = golden_max(
                            |tau| {
                                view.dense_at(tau, &mut ys);
                                problem.helpers(tau, &ys, &mut hv);
                                s * hv[m]
                            },
                            ta.min(tc),
                            ta.max(tc),
                        );
                        self.peaks[n + m].see(s * v, tm);
                    }
                }
            }
        }
    }

    /// The extrema, named by `names` (the states', then the helpers').
    pub fn finish<'n>(self, names: impl Iterator<Item = &'n String>) -> Vec<Extremum> {
        self.peaks
            .iter()
            .zip(names)
            .map(|(p, name)| Extremum { name: name.clone(), max: p.max, t_max: p.t_max, min: p.min, t_min: p.t_min })
            .collect()
    }
}
