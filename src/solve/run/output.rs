//! The output points of a run: every accepted step (thinned to every other
//! point whenever the cap is reached), or exactly the `at` times from the
//! continuous extension.

use super::step::StepView;
use crate::problem::Problem;
use crate::solve::{Diagnostic, Level, Settings};

/// Room reserved up front for a run without `at` times, so that a short run
/// does not grow its columns push by push: up to this many stored values…
const RESERVE_VALUES: usize = 4096;
/// …and between this many…
const RESERVE_MIN_POINTS: usize = 16;
/// …and this many points.
const RESERVE_MAX_POINTS: usize = 256;

/// The output columns of a run so far.
pub(super) struct Output<'a> {
    t: Vec<f64>,
    states: Vec<Vec<f64>>,
    helpers: Vec<Vec<f64>>,
    helpers_buf: Vec<f64>,
    /// Output every `stride`-th step: a power of two (1, then doubled by each
    /// thinning), so that the test is a mask rather than a division.
    stride: u64,
    /// The output times asked for, and the next one due.
    at: Option<&'a [f64]>,
    at_next: usize,
    max_output: usize,
    dir: f64,
}

impl<'a> Output<'a> {
    /// The columns for a run of `settings` from `(t0, y0)`, with the first
    /// point (or every `at` time equal to `t0`) recorded.
    pub fn new(problem: &mut dyn Problem, t0: f64, y0: &[f64], settings: &'a Settings, dir: f64) -> Self {
        let (dim, n_helpers) = (y0.len(), problem.helper_names().len());
        let at = settings.at.as_deref();
        let points = match at {
            Some(at) => at.len(),
            None => (RESERVE_VALUES / (dim + n_helpers + 1)).clamp(RESERVE_MIN_POINTS, RESERVE_MAX_POINTS).min(settings.max_output),
        };
        let column = || Vec::with_capacity(points);
        let mut out = Output {
            t: column(),
            states: (0..dim).map(|_| column()).collect(),
            helpers: (0..n_helpers).map(|_| column()).collect(),
            helpers_buf: vec![0.0; n_helpers],
            stride: 1,
            at,
            at_next: 0,
            max_output: settings.max_output,
            dir,
        };
        match at {
            None => out.record(problem, t0, y0),
            Some(at) => {
                let k = at.iter().take_while(|&&x| x == t0).count();
                for _ in 0..k {
                    out.record(problem, t0, y0);
                }
                out.at_next = k;
            }
        }
        out
    }

    fn record(&mut self, problem: &mut dyn Problem, t: f64, y: &[f64]) {
        if !self.helpers_buf.is_empty() {
            problem.helpers(t, y, &mut self.helpers_buf);
        }
        self.t.push(t);
        for (col, v) in self.states.iter_mut().zip(y) {
            col.push(*v);
        }
        for (col, v) in self.helpers.iter_mut().zip(&self.helpers_buf) {
            col.push(*v);
        }
    }

    /// The output of an accepted step that ends at `t_end` in `y_end` (the
    /// step's end, or a stop event's point): the `at` times up to `t_end`,
    /// or the end point when it is due (every `stride`-th step, and the
    /// `last` one).
    #[allow(clippy::too_many_arguments)]
    pub fn after_step(
        &mut self,
        view: &StepView,
        problem: &mut dyn Problem,
        t_end: f64,
        y_end: &[f64],
        last: bool,
        step_index: u64,
        diagnostics: &mut Vec<Diagnostic>,
    ) {
        if let Some(at) = self.at {
            let mut ys = vec![0.0; y_end.len()];
            let first = self.at_next;
            let due = at[first..].iter().take_while(|&&x| (x - t_end) * self.dir <= 0.0).count();
            self.at_next = first + due;
            for &tau in &at[first..first + due] {
                view.dense_at(tau, &mut ys);
                let yc = ys.clone();
                self.record(problem, tau, &yc);
            }
        } else if last || step_index & (self.stride - 1) == 0 {
            self.record(problem, t_end, y_end);
            if self.t.len() >= self.max_output {
                self.thin(diagnostics);
            }
        }
    }

    /// The run ended at `(t, y)`: without `at` times its end is the last point.
    pub fn finish(&mut self, problem: &mut dyn Problem, t: f64, y: &[f64], diagnostics: &mut Vec<Diagnostic>) {
        if self.at.is_none() && self.t.last() != Some(&t) {
            self.record(problem, t, y);
            if self.t.len() > self.max_output {
                self.thin(diagnostics);
            }
        }
    }

    /// Times, states and helpers.
    pub fn into_columns(self) -> (Vec<f64>, Vec<Vec<f64>>, Vec<Vec<f64>>) {
        (self.t, self.states, self.helpers)
    }

    /// Keep every other output point (the first and the last kept).
    fn thin(&mut self, diagnostics: &mut Vec<Diagnostic>) {
        let n = self.t.len();
        let keep = |i: usize| i % 2 == 0 || i + 1 == n;
        let thin = |v: &mut Vec<f64>| {
            let mut i = 0;
            v.retain(|_| {
                let k = keep(i);
                i += 1;
                k
            });
        };
        thin(&mut self.t);
        self.states.iter_mut().for_each(thin);
        self.helpers.iter_mut().for_each(thin);
        self.stride *= 2;
        let message = format!(
            "the run took more steps than the {} output points kept; every {}th step is shown (the events, peaks and end values are exact)",
            self.max_output, self.stride
        );
        if self.stride == 2 {
            diagnostics.push(Diagnostic { level: Level::Info, code: "decimated", message, t: None });
        } else if let Some(d) = diagnostics.iter_mut().find(|d| d.code == "decimated") {
            d.message = message;
        }
    }
}
