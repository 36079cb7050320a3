//! Axes: the shown range of each axis (fitted to the data or given), its
//! ticks, and the tick labels.
//!
//! Every range that leaves here is finite, ordered and wide enough to be
//! ticked, whatever the data (huge, infinite, NaN, a single value) or the
//! window asked for, and every loop over ticks is bounded by a count known
//! before it starts: a plot never hangs on its numbers. Spans are taken in
//! halves (`b/2 - a/2`), which is exact and cannot overflow, so data up to
//! ±`f64::MAX` are shown.

use plotters::coord::types::RangedCoordf64;

/// The narrowest span an axis shows, relative to the size of its values:
/// a window narrower than this (a zoom far past what 16 digits resolve) is
/// widened about its middle, so that tick steps stay well above one unit in
/// the last place.
const MIN_RELATIVE_SPAN: f64 = 1e-12;
/// The narrowest span in absolute terms (values near zero).
const MIN_SPAN: f64 = 1e-300;
/// Most ticks of either kind on one axis.
const MAX_TICKS: i64 = 1000;

/// A value on an axis: log10 on a log axis (NaN for non-positive values).
pub(super) fn axis_value(v: f64, log: bool) -> f64 {
    if !log {
        v
    } else if v > 0.0 {
        v.log10()
    } else {
        f64::NAN
    }
}

/// `b - a` divided by two, exact, and finite for any finite `a` and `b`.
fn half_span(a: f64, b: f64) -> f64 {
    b / 2.0 - a / 2.0
}

/// The range of finite values in `v`, padded a little, and widened when it is
/// a single point. Always finite and ordered.
pub fn finite_range<'a>(v: impl IntoIterator<Item = &'a f64>) -> (f64, f64) {
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for &x in v {
        if x.is_finite() {
            lo = lo.min(x);
            hi = hi.max(x);
        }
    }
    if !lo.is_finite() {
        return (0.0, 1.0);
    }
    if half_span(lo, hi) <= f64::EPSILON * hi.abs().max(1.0) * 8.0 {
        let pad = hi.abs().max(1.0) * 0.05;
        return widen(lo - pad, hi + pad);
    }
    let pad = half_span(lo, hi) * 0.08;
    widen(lo - pad, hi + pad)
}

/// `(a, b)` clamped to the finite numbers and at least the narrowest span
/// wide, about its middle.
fn widen(a: f64, b: f64) -> (f64, f64) {
    let (a, b) = (a.max(-f64::MAX), b.min(f64::MAX));
    let need = (a.abs().max(b.abs()) * MIN_RELATIVE_SPAN).max(MIN_SPAN) / 2.0;
    if half_span(a, b) >= need {
        return (a, b);
    }
    let mid = a / 2.0 + b / 2.0;
    let (lo, hi) = ((mid - need).max(-f64::MAX), (mid + need).min(f64::MAX));
    // At the end of the number line the window keeps its width inward.
    if hi == f64::MAX {
        (f64::MAX - 2.0 * need, f64::MAX)
    } else if lo == -f64::MAX {
        (-f64::MAX, -f64::MAX + 2.0 * need)
    } else {
        (lo, hi)
    }
}

/// The shown range on one axis: the figure's own, else fitted to the data;
/// in axis units (log10 on a log axis), finite, ordered and tickable.
pub(super) fn shown_range<'a>(given: Option<(f64, f64)>, log: bool, data: impl Iterator<Item = &'a f64>) -> (f64, f64) {
    let fitted = || {
        let v: Vec<f64> = data.map(|&v| axis_value(v, log)).collect();
        finite_range(v.iter())
    };
    match given {
        Some((a, b)) => {
            let (a, b) = (axis_value(a, log), axis_value(b, log));
            if a.is_finite() && b.is_finite() && b > a {
                widen(a, b)
            } else {
                fitted()
            }
        }
        None => fitted(),
    }
}

/// A tick label: short, with an exponent only where needed.
pub fn tick_label(v: f64) -> String {
    if v == 0.0 || !v.is_finite() {
        return if v == 0.0 { "0".into() } else { format!("{v}") };
    }
    let a = v.abs();
    if !(1e-3..1e5).contains(&a) {
        let s = format!("{v:.2e}");
        // 1.00e3 -> 1e3, 2.50e-4 -> 2.5e-4
        let (m, e) = s.split_once('e').unwrap_or((&s, "0"));
        let m = m.trim_end_matches('0').trim_end_matches('.');
        return format!("{m}e{e}");
    }
    let s = format!("{:.4}", v);
    let s = s.trim_end_matches('0').trim_end_matches('.');
    if s == "-0" {
        "0".into()
    } else {
        s.to_string()
    }
}

/// The label of a log axis's tick at `v` (log10 units), in data units.
pub(super) fn log_tick_label(v: f64) -> String {
    tick_label(10f64.powf(v))
}

/// The multiples of `step` in `lo..=hi`, or none when there would be more
/// than [`MAX_TICKS`] of them or they cannot be counted.
fn multiples(lo: f64, hi: f64, step: f64) -> Vec<f64> {
    let (first, last) = ((lo / step).ceil(), (hi / step).floor());
    if !(first.is_finite() && last.is_finite() && step > 0.0) || last - first >= MAX_TICKS as f64 || first.abs() > 4.5e15 {
        return vec![];
    }
    (first as i64..=last as i64).map(|k| k as f64 * step).collect()
}

/// The smallest step among 1, 2 and 5 times a power of ten that puts at
/// most `most` multiples in `lo..=hi`.
fn round_step(lo: f64, hi: f64, most: usize) -> Option<f64> {
    let raw = half_span(lo, hi) / most.max(1) as f64 * 2.0;
    if !(raw.is_finite() && raw > 0.0) {
        return None;
    }
    let p = 10f64.powf(raw.log10().floor() - 1.0);
    // Eight candidates from a tenth of `raw` up: the last is over ten
    // times it, which puts at most `most` multiples in the range.
    [1.0, 2.0, 5.0, 10.0, 20.0, 50.0, 100.0, 200.0]
        .iter()
        .map(|m| m * p)
        .filter(|s| s.is_finite() && *s > 0.0)
        .find(|&s| {
            let (first, last) = ((lo / s).ceil(), (hi / s).floor());
            first.is_finite() && last.is_finite() && last - first < most as f64
        })
}

/// Ticks of a linear axis: at most `labels` labelled ones at a round step,
/// and the light grid at a fifth, a half or a tenth of it (at most ten times
/// as many).
fn linear_ticks(lo: f64, hi: f64, labels: usize) -> (Vec<f64>, Vec<f64>) {
    let Some(step) = round_step(lo, hi, labels) else { return (vec![], vec![]) };
    let bold = multiples(lo, hi, step);
    let light = [10.0, 5.0, 2.0]
        .iter()
        .map(|d| multiples(lo, hi, step / d))
        .find(|v| !v.is_empty() && v.len() <= labels * 10)
        .unwrap_or_default();
    (bold, light)
}

/// The tick positions of one axis showing `lo..hi` (log10 units on a log
/// axis): labelled (bold) ones, then the light grid between them. A linear
/// axis gets at most `labels` labels at a round step. A log axis is ticked
/// at round numbers in data units: every decade (every k-th when there are
/// too many) with the other whole mantissas as the light grid; else 1, 2 and
/// 5 of each decade; else every whole mantissa; and across less than about a
/// factor of two, evenly spaced round values (steps of 1, 2 or 5 of a power of
/// ten), so that a short log axis reads 8, 9, 10, 20, 30 rather than 7.943,
/// 10, 12.59. A range that is not finite and ordered gets no ticks.
pub(super) fn ticks(lo: f64, hi: f64, log: bool, labels: usize) -> (Vec<f64>, Vec<f64>) {
    if !(lo.is_finite() && hi.is_finite() && hi > lo) {
        return (vec![], vec![]);
    }
    if !log {
        return linear_ticks(lo, hi, labels);
    }
    let slack = 1e-9 * (hi - lo);
    let within = |v: f64| v >= lo - slack && v <= hi + slack;
    // Log10 of any positive double lies in -324..309; a wider window is
    // ticked as a linear axis of exponents.
    if lo < -400.0 || hi > 400.0 {
        return linear_ticks(lo, hi, labels);
    }
    let (e0, e1) = (lo.floor() as i64, hi.ceil() as i64);
    let at = |mantissas: &[f64]| -> Vec<f64> {
        (e0..=e1).flat_map(|e| mantissas.iter().map(move |m| m.log10() + e as f64)).filter(|&v| within(v)).collect()
    };
    const ALL: [f64; 9] = [1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0];
    let decades = at(&[1.0]);
    if decades.len() >= 3 {
        let every = decades.len().div_ceil(labels.max(1)) as i64;
        let bold: Vec<f64> = decades.into_iter().filter(|v| (v.round() as i64).rem_euclid(every) == 0).collect();
        let light = if every == 1 && hi - lo <= 6.0 { at(&ALL[1..]) } else { vec![] };
        return (bold, light);
    }
    let bold = at(&[1.0, 2.0, 5.0]);
    if bold.len() >= 3 {
        let light = at(&ALL).into_iter().filter(|v| !bold.iter().any(|b| (b - v).abs() < 1e-12)).collect();
        return (bold, light);
    }
    let bold = at(&ALL);
    if bold.len() >= 3 {
        return (bold, vec![]);
    }
    // A narrow range: even steps of a round size in data units.
    let (a, b) = (10f64.powf(lo), 10f64.powf(hi));
    if !(a.is_finite() && b.is_finite() && b > a) {
        return (bold, vec![]);
    }
    let raw = (b - a) / 5.0;
    let p = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 5.0, 10.0].iter().map(|m| m * p).find(|&s| s >= raw).unwrap_or(10.0 * p);
    // (10^log10(14) is 13.999999999999998.)
    let (first, last) = ((a / step * (1.0 - 1e-9)).ceil(), (b / step * (1.0 + 1e-9)).floor());
    if !(first.is_finite() && last.is_finite()) || last - first >= MAX_TICKS as f64 || first.abs() > 4.5e15 {
        return (bold, vec![]);
    }
    let bold = (first as i64..=last as i64).map(|k| (k as f64 * step).log10()).filter(|&v| within(v)).collect();
    (bold, vec![])
}

/// Labels on the x axis and on the y axis (at most; a log axis may take fewer).
pub(super) const X_LABELS: usize = 8;
pub(super) const Y_LABELS: usize = 7;

/// One axis of a chart: plotters' f64 axis, ticked by [`ticks`], mapping
/// values to pixels through the half span (so a span over `f64::MAX` maps
/// too). (plotters' own key-point wrapper gives up the label formatter that
/// the mesh needs.)
pub(super) struct Axis {
    lo: f64,
    hi: f64,
    bold: Vec<f64>,
    light: Vec<f64>,
}

impl Axis {
    /// The axis showing `lo..hi` (axis units), with at most `labels` labels.
    pub(super) fn new(lo: f64, hi: f64, log: bool, labels: usize) -> Self {
        let (bold, light) = ticks(lo, hi, log, labels);
        Axis { lo, hi, bold, light }
    }
}

impl plotters::coord::ranged1d::Ranged for Axis {
    type FormatOption = plotters::coord::ranged1d::DefaultFormatting;
    type ValueType = f64;

    fn map(&self, value: &f64, limit: (i32, i32)) -> i32 {
        let half = half_span(self.lo, self.hi);
        if half == 0.0 || !half.is_finite() {
            let inner: RangedCoordf64 = (self.lo..self.hi).into();
            return inner.map(value, limit);
        }
        // plotters' linear map, on halves: the same pixel for any span that
        // does not overflow.
        let logic = (value / 2.0 - self.lo / 2.0) / half;
        let actual = limit.1 - limit.0;
        if actual == 0 {
            return limit.1;
        }
        if logic.is_infinite() {
            return if logic.is_sign_positive() { limit.1 } else { limit.0 };
        }
        if actual > 0 {
            limit.0 + (actual as f64 * logic + 1e-3).floor() as i32
        } else {
            limit.0 + (actual as f64 * logic - 1e-3).ceil() as i32
        }
    }

    fn key_points<Hint: plotters::coord::ranged1d::KeyPointHint>(&self, hint: Hint) -> Vec<f64> {
        if hint.weight().allow_light_points() {
            self.light.clone()
        } else {
            self.bold.clone()
        }
    }

    fn range(&self) -> std::ops::Range<f64> {
        self.lo..self.hi
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn log_axes_are_ticked_at_round_numbers() {
        let data = |lo: f64, hi: f64, labels: usize| -> (Vec<String>, usize) {
            let (bold, light) = ticks(lo.log10(), hi.log10(), true, labels);
            (bold.iter().map(|&v| log_tick_label(v)).collect(), light.len())
        };
        // A step-size axis across a factor of four.
        assert_eq!(data(7.0, 32.0, 8), (vec!["7", "8", "9", "10", "20", "30"].into_iter().map(String::from).collect(), 0));
        // One and a half decades: 1, 2 and 5, with the other mantissas light.
        let (b, l) = data(1.0, 30.0, 8);
        assert_eq!(b, ["1", "2", "5", "10", "20"]);
        assert_eq!(l, 7);
        // Two decades: the decades, the rest light.
        let (b, l) = data(1.0, 100.0, 8);
        assert_eq!(b, ["1", "10", "100"]);
        assert_eq!(l, 16);
        // Nine decades with room for seven labels: every second one.
        let (b, l) = data(1e-8, 1.0, 7);
        assert_eq!(b, ["1e-8", "1e-6", "1e-4", "0.01", "1"]);
        assert_eq!(l, 0);
        // Less than a factor of two: even round steps.
        assert_eq!(data(10.0, 14.0, 8).0, ["10", "11", "12", "13", "14"]);
        assert_eq!(data(0.0021, 0.0029, 8).0, ["0.0022", "0.0024", "0.0026", "0.0028"]);
        // A broken range has none.
        assert_eq!(ticks(f64::NAN, 1.0, true, 8), (vec![], vec![]));
    }

    #[test]
    fn linear_axes_are_ticked_at_round_steps() {
        let labels = |lo: f64, hi: f64| -> Vec<String> { ticks(lo, hi, false, 8).0.iter().map(|&v| tick_label(v)).collect() };
        assert_eq!(labels(0.0, 1.0), ["0", "0.2", "0.4", "0.6", "0.8", "1"]);
        assert_eq!(labels(-48.0, 1248.0), ["0", "200", "400", "600", "800", "1000", "1200"]);
        assert_eq!(labels(0.03, 2.07), ["0.5", "1", "1.5", "2"]);
        let (bold, light) = ticks(0.0, 1.0, false, 8);
        assert!(bold.len() <= 8 && light.len() > bold.len() && light.len() <= 80, "{light:?}");
        // The whole number line: a few ticks, none at infinity.
        let (bold, _) = ticks(-f64::MAX, f64::MAX, false, 8);
        assert!((2..=8).contains(&bold.len()) && bold.iter().all(|v| v.is_finite()), "{bold:?}");
    }

    #[test]
    fn shown_ranges_are_finite_ordered_and_tickable() {
        let fit = |v: &[f64]| shown_range(None, false, v.iter());
        assert_eq!(fit(&[]), (0.0, 1.0));
        assert_eq!(fit(&[f64::NAN, f64::INFINITY]), (0.0, 1.0));
        let (a, b) = fit(&[1e308, -1e308]);
        assert!(a.is_finite() && b.is_finite() && a <= -1e308 && b >= 1e308, "{a} {b}");
        let (a, b) = fit(&[f64::MAX, f64::MAX]);
        assert!(a.is_finite() && b == f64::MAX && a < b);
        // A window narrower than 16 digits resolve is widened about its middle.
        let (a, b) = shown_range(Some((1.0, 1.0 + 1e-15)), false, [].iter());
        assert!(b - a >= 1e-12 * 0.999 && (a + b) / 2.0 - 1.0 < 1e-14, "{a} {b}");
        // A backwards or broken window falls back to the data.
        assert_eq!(shown_range(Some((2.0, 1.0)), false, [0.0, 1.0].iter()), fit(&[0.0, 1.0]));
        assert_eq!(shown_range(Some((f64::NAN, 1.0)), false, [0.0, 1.0].iter()), fit(&[0.0, 1.0]));
    }

    #[test]
    fn tick_labels_are_short() {
        assert_eq!(tick_label(1200.0), "1200");
        assert_eq!(tick_label(0.25), "0.25");
        assert_eq!(tick_label(1e-5), "1e-5");
        assert_eq!(tick_label(2.5e7), "2.5e7");
        assert_eq!(tick_label(-0.00001), "-1e-5");
        assert_eq!(tick_label(0.0), "0");
    }
}
