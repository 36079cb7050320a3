//! Plots, drawn once for any plotters backend: the canvas in the page, SVG
//! natively (for exports and tests).
//!
//! Every view of the page describes what it wants as a [`Figure`] (lines,
//! marks, event rules, a direction field) and [`figure`] draws it. The same
//! figure drawn on the SVG backend is the SVG download, so the two always
//! agree.

use plotters::coord::types::RangedCoordf64;
use plotters::coord::Shift;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use plotters::prelude::*;

pub mod study;
pub mod text;

/// Why a plot could not be drawn.
#[derive(Debug)]
pub struct DrawError(pub String);

impl<E: std::error::Error + Send + Sync> From<DrawingAreaErrorKind<E>> for DrawError {
    fn from(e: DrawingAreaErrorKind<E>) -> Self {
        DrawError(e.to_string())
    }
}

/// Colours of successive curves: a palette of our own, readable on white.
pub const PALETTE: [RGBColor; 6] = [
    RGBColor(0x1f, 0x5f, 0xa8),
    RGBColor(0xc8, 0x55, 0x1b),
    RGBColor(0x2e, 0x8b, 0x57),
    RGBColor(0x8e, 0x3b, 0x9e),
    RGBColor(0x9a, 0x7b, 0x12),
    RGBColor(0x4a, 0x4a, 0x4a),
];

/// Ink for reference curves, rules and labels.
const INK: RGBColor = RGBColor(0x1b, 0x1f, 0x24);
/// Ink for direction-field segments.
const FIELD_INK: RGBColor = RGBColor(0x8a, 0x94, 0x9e);

/// The colour for a palette index; negative means the ink colour.
pub fn colour(index: i32) -> RGBColor {
    if index < 0 {
        INK
    } else {
        PALETTE[index as usize % PALETTE.len()]
    }
}

/// The range of finite values in `v`, padded a little, and widened when it is
/// a single point.
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
    if hi - lo <= f64::EPSILON * hi.abs().max(1.0) * 16.0 {
        let pad = hi.abs().max(1.0) * 0.05;
        return (lo - pad, hi + pad);
    }
    let pad = (hi - lo) * 0.04;
    (lo - pad, hi + pad)
}

/// One polyline of a figure.
#[derive(Clone, Debug, Default)]
pub struct Line {
    /// Legend label; empty for none.
    pub label: String,
    /// Abscissae.
    pub x: Vec<f64>,
    /// Ordinates (same length as `x`; non-finite values break the line).
    pub y: Vec<f64>,
    /// Palette index, or negative for ink.
    pub colour: i32,
    /// Stroke width in pixels.
    pub width: u32,
    /// Drawn dashed.
    pub dashed: bool,
    /// Each point also gets a dot (for sparse data such as error-vs-h).
    pub dots: bool,
}

/// The shape of a [`Mark`].
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum MarkShape {
    /// A filled dot (an event crossing, a start point).
    Dot,
    /// An upward triangle (a peak).
    Peak,
    /// A downward triangle (a trough).
    Trough,
}

/// A labelled point of a figure.
#[derive(Clone, Debug)]
pub struct Mark {
    /// Abscissa.
    pub x: f64,
    /// Ordinate.
    pub y: f64,
    /// Text beside the mark; empty for none.
    pub label: String,
    /// Shape.
    pub shape: MarkShape,
    /// Palette index, or negative for ink.
    pub colour: i32,
}

/// A vertical rule across the plot (an event time), labelled at the top.
#[derive(Clone, Debug)]
pub struct Rule {
    /// Where, on the x axis.
    pub x: f64,
    /// Text at the top of the rule.
    pub label: String,
}

/// Everything one plot shows. Ranges absent are fitted to the data.
#[derive(Clone, Debug, Default)]
pub struct Figure {
    /// The x axis's label.
    pub x_label: String,
    /// The y axis's label.
    pub y_label: String,
    /// Shown x range, in data units (before any log transform).
    pub x_range: Option<(f64, f64)>,
    /// Shown y range, in data units (before any log transform).
    pub y_range: Option<(f64, f64)>,
    /// Logarithmic x axis (base 10; non-positive values are dropped).
    pub log_x: bool,
    /// Logarithmic y axis.
    pub log_y: bool,
    /// Polylines.
    pub lines: Vec<Line>,
    /// Labelled points.
    pub marks: Vec<Mark>,
    /// Vertical rules.
    pub rules: Vec<Rule>,
    /// A direction field: `(x, y, dx, dy)` per sample, drawn as short
    /// segments of equal length on screen through each sample.
    pub field: Vec<[f64; 4]>,
    /// Field segments get arrow heads (phase plane) rather than none (slope field).
    pub arrows: bool,
}

/// Where a figure landed on its backend, so that the page can map pointer
/// positions back to data: the plotting area in backend pixels and the data
/// range it shows (log10 units on a log axis).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Frame {
    /// Left edge of the plotting area, pixels.
    pub left: f64,
    /// Top edge.
    pub top: f64,
    /// Right edge.
    pub right: f64,
    /// Bottom edge.
    pub bottom: f64,
    /// Data x at the left edge.
    pub x0: f64,
    /// Data x at the right edge.
    pub x1: f64,
    /// Data y at the bottom edge.
    pub y0: f64,
    /// Data y at the top edge.
    pub y1: f64,
}

impl Frame {
    /// The frame as `[left, top, right, bottom, x0, x1, y0, y1]`.
    pub fn to_array(self) -> [f64; 8] {
        [self.left, self.top, self.right, self.bottom, self.x0, self.x1, self.y0, self.y1]
    }

    /// The backend position, in fractional pixels, of the point `(x, y)` in
    /// axis units (log10 on a log axis).
    pub fn pixel(&self, x: f64, y: f64) -> (f64, f64) {
        let sx = (self.right - self.left) / (self.x1 - self.x0);
        let sy = (self.bottom - self.top) / (self.y1 - self.y0);
        (self.left + (x - self.x0) * sx, self.bottom - (y - self.y0) * sy)
    }
}

/// A backend that strokes some paths itself, in fractional pixels (the
/// page's canvas): the direction field's many strokes as one path, far faster
/// than one element each, and the curves without plotters' rounding of every
/// point to a whole pixel, which shows as small steps along a sloping line.
pub trait Strokes {
    /// The direction field's strokes, in pixels, in [`FIELD_CSS`].
    fn field(&mut self, strokes: &[Vec<(i32, i32)>]);
    /// One unbroken run of a curve, in fractional pixels, `width` pixels
    /// wide, dashed 6 on, 4 off when `dashed`.
    fn curve(&mut self, points: &[(f64, f64)], colour: RGBColor, width: u32, dashed: bool);
    /// Whether the figure should draw a marker ([`ANCHOR`], a one-pixel
    /// square) on the backend where the strokes belong, for a backend that
    /// splices them in afterwards (SVG). No by default.
    fn anchor(&self) -> bool {
        false
    }
}

/// The fill of the marker drawn for [`Strokes::anchor`]; no figure uses it.
pub const ANCHOR: RGBColor = RGBColor(0x01, 0x02, 0x03);

/// A value on an axis: log10 on a log axis (NaN for non-positive values).
fn axis_value(v: f64, log: bool) -> f64 {
    if !log {
        v
    } else if v > 0.0 {
        v.log10()
    } else {
        f64::NAN
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

fn log_tick_label(v: f64) -> String {
    tick_label(10f64.powf(v))
}

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
        } else if inside(p, (x0, x1), (y0, y1)) {
            // a lone first point; the segment to the next point starts it
        }
        prev = Some(p);
    }
    flush(&mut current, &mut runs);
    runs
}

fn inside(p: (f64, f64), (x0, x1): (f64, f64), (y0, y1): (f64, f64)) -> bool {
    p.0 >= x0 && p.0 <= x1 && p.1 >= y0 && p.1 <= y1
}

/// Clip segment a–b to the box. Returns the clipped ends and whether each end
/// is the original point.
fn clip_segment(
    a: (f64, f64),
    b: (f64, f64),
    (x0, x1): (f64, f64),
    (y0, y1): (f64, f64),
) -> Option<((f64, f64), (f64, f64), bool, bool)> {
    let (dx, dy) = (b.0 - a.0, b.1 - a.1);
    let (mut t0, mut t1) = (0.0f64, 1.0f64);
    for (p, q) in [(-dx, a.0 - x0), (dx, x1 - a.0), (-dy, a.1 - y0), (dy, y1 - a.1)] {
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
    let at = |t: f64| (a.0 + t * dx, a.1 + t * dy);
    Some((if t0 == 0.0 { a } else { at(t0) }, if t1 == 1.0 { b } else { at(t1) }, t0 == 0.0, t1 == 1.0))
}

/// The shown range on one axis: the figure's own, else fitted to the data.
fn shown_range<'a>(given: Option<(f64, f64)>, log: bool, data: impl Iterator<Item = &'a f64>) -> (f64, f64) {
    let fitted = || {
        let v: Vec<f64> = data.map(|&v| axis_value(v, log)).collect();
        finite_range(v.iter())
    };
    match given {
        Some((a, b)) => {
            let (a, b) = (axis_value(a, log), axis_value(b, log));
            if a.is_finite() && b.is_finite() && b > a {
                (a, b)
            } else {
                fitted()
            }
        }
        None => fitted(),
    }
}

/// The tick positions of one axis showing `lo..hi` (log10 units on a log
/// axis): labelled (bold) ones, then the light grid between them. A linear
/// axis takes plotters' own choice for `labels` labels. A log axis is ticked
/// at round numbers in data units: every decade (every k-th when there are
/// too many) with the other whole mantissas as the light grid; else 1, 2 and
/// 5 of each decade; else every whole mantissa; and across less than about a
/// factor of two, evenly spaced round values (steps of 1, 2 or 5 of a power of
/// ten), so that a short log axis reads 8, 9, 10, 20, 30 rather than 7.943,
/// 10, 12.59.
fn ticks(lo: f64, hi: f64, log: bool, labels: usize) -> (Vec<f64>, Vec<f64>) {
    use plotters::coord::ranged1d::{BoldPoints, LightPoints};
    if !log {
        let r: RangedCoordf64 = (lo..hi).into();
        return (r.key_points(BoldPoints(labels)), r.key_points(LightPoints::new(labels, labels * 10)));
    }
    if !(lo.is_finite() && hi.is_finite() && hi > lo) {
        return (vec![], vec![]);
    }
    let slack = 1e-9 * (hi - lo);
    let within = |v: f64| v >= lo - slack && v <= hi + slack;
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
    let raw = (b - a) / 5.0;
    let p = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 5.0, 10.0].iter().map(|m| m * p).find(|&s| s >= raw).unwrap_or(10.0 * p);
    // (10^log10(14) is 13.999999999999998.)
    let first = (a / step * (1.0 - 1e-9)).ceil() as i64;
    let last = (b / step * (1.0 + 1e-9)).floor() as i64;
    let bold = (first..=last).map(|k| (k as f64 * step).log10()).filter(|&v| within(v)).collect();
    (bold, vec![])
}

/// Labels on the x axis and on the y axis (at most; a log axis may take fewer).
const X_LABELS: usize = 8;
const Y_LABELS: usize = 7;

/// One axis of a figure's chart: plotters' f64 axis, ticked by [`ticks`].
/// (plotters' own key-point wrapper gives up the label formatter that the
/// mesh needs.)
struct Axis {
    inner: RangedCoordf64,
    bold: Vec<f64>,
    light: Vec<f64>,
}

impl Axis {
    fn new(lo: f64, hi: f64, log: bool, labels: usize) -> Self {
        let (bold, light) = ticks(lo, hi, log, labels);
        Axis { inner: (lo..hi).into(), bold, light }
    }
}

impl plotters::coord::ranged1d::Ranged for Axis {
    type FormatOption = plotters::coord::ranged1d::DefaultFormatting;
    type ValueType = f64;

    fn map(&self, value: &f64, limit: (i32, i32)) -> i32 {
        self.inner.map(value, limit)
    }

    fn key_points<Hint: plotters::coord::ranged1d::KeyPointHint>(&self, hint: Hint) -> Vec<f64> {
        if hint.weight().allow_light_points() {
            self.light.clone()
        } else {
            self.bold.clone()
        }
    }

    fn range(&self) -> std::ops::Range<f64> {
        self.inner.range()
    }
}

/// Draw `fig` on `root`, filling it. Returns where the plotting area landed.
pub fn figure<DB: DrawingBackend>(root: &DrawingArea<DB, Shift>, fig: &Figure) -> Result<Frame, DrawError>
where
    DB::ErrorType: 'static,
{
    figure_with(root, fig, None)
}

/// [`figure`], with the direction field's strokes ([`field_strokes`]) and
/// the curves handed to `strokes` when given, in their place between the grid
/// and the marks.
pub fn figure_with<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    fig: &Figure,
    mut strokes: Option<&mut dyn Strokes>,
) -> Result<Frame, DrawError>
where
    DB::ErrorType: 'static,
{
    root.fill(&WHITE)?;
    let xs = fig
        .lines
        .iter()
        .flat_map(|l| l.x.iter())
        .chain(fig.marks.iter().map(|m| &m.x))
        .chain(fig.field.iter().map(|f| &f[0]));
    let (x0, x1) = shown_range(fig.x_range, fig.log_x, xs);
    let ys = fig
        .lines
        .iter()
        .flat_map(|l| l.y.iter())
        .chain(fig.marks.iter().map(|m| &m.y))
        .chain(fig.field.iter().map(|f| &f[1]));
    let (y0, y1) = shown_range(fig.y_range, fig.log_y, ys);
    // Event labels go in rows above the plot; lay them out on the area the
    // chart will have, to know how many rows to leave room for.
    let (w, _) = root.dim_in_pixel();
    let planned = (MARGIN + Y_LABEL_AREA) as f64..(w as i32 - MARGIN) as f64;
    let rows = rule_labels(fig, planned, (x0, x1)).iter().flatten().map(|l| l.row + 1).max().unwrap_or(0);
    let mut chart = ChartBuilder::on(root)
        .margin(MARGIN)
        .margin_top(if fig.rules.is_empty() { MARGIN } else { 8 + RULE_ROW * rows.max(1) as i32 })
        .x_label_area_size(40)
        .y_label_area_size(Y_LABEL_AREA)
        .build_cartesian_2d(Axis::new(x0, x1, fig.log_x, X_LABELS), Axis::new(y0, y1, fig.log_y, Y_LABELS))?;
    let x_fmt = if fig.log_x { log_tick_label } else { tick_label };
    let y_fmt = if fig.log_y { log_tick_label } else { tick_label };
    let x_fmt = move |v: &f64| x_fmt(*v);
    let y_fmt = move |v: &f64| y_fmt(*v);
    chart
        .configure_mesh()
        .x_desc(fig.x_label.as_str())
        .y_desc(fig.y_label.as_str())
        .x_label_formatter(&x_fmt)
        .y_label_formatter(&y_fmt)
        .x_labels(X_LABELS)
        .y_labels(Y_LABELS)
        .axis_desc_style(("sans-serif", 15).into_font().color(&INK))
        .label_style(("sans-serif", 12).into_font().color(&INK))
        .light_line_style(RGBColor(0xee, 0xee, 0xee))
        .bold_line_style(RGBColor(0xd8, 0xd8, 0xd8))
        .draw()?;

    let (px, py) = chart.plotting_area().get_pixel_range();
    let frame = Frame {
        left: px.start as f64,
        top: py.start as f64,
        right: px.end as f64,
        bottom: py.end as f64,
        x0,
        x1,
        y0,
        y1,
    };

    let field = field_strokes(fig, &frame);
    match strokes.as_deref_mut() {
        Some(st) => {
            if st.anchor() {
                root.draw(&Rectangle::new([(0, 0), (1, 1)], ANCHOR.filled()))?;
            }
            st.field(&field)
        }
        None => draw_field(root, &field)?,
    }

    let mut legend = Vec::new();
    for l in &fig.lines {
        let c = colour(l.colour);
        let style = c.stroke_width(l.width.max(1));
        let pts = l.x.iter().zip(&l.y).map(|(&x, &y)| (axis_value(x, fig.log_x), axis_value(y, fig.log_y)));
        let runs = clip_polyline(pts.clone(), (x0, x1), (y0, y1));
        if !runs.is_empty() && !l.label.is_empty() {
            legend.push(text::LegendEntry { label: &l.label, colour: c, width: l.width, dashed: l.dashed });
        }
        for run in runs {
            if let Some(st) = strokes.as_deref_mut() {
                let px: Vec<(f64, f64)> = run.iter().map(|&(x, y)| frame.pixel(x, y)).collect();
                st.curve(&px, c, l.width.max(1), l.dashed);
            } else if l.dashed {
                chart.draw_series(DashedLineSeries::new(run, 6, 4, style))?;
            } else {
                chart.draw_series(LineSeries::new(run, style))?;
            }
        }
        if l.dots {
            let inside_pts: Vec<(f64, f64)> = pts
                .filter(|&(x, y)| x.is_finite() && y.is_finite() && inside((x, y), (x0, x1), (y0, y1)))
                .collect();
            chart.draw_series(inside_pts.into_iter().map(|p| Circle::new(p, 3, c.filled())))?;
        }
    }

    let labels = rule_labels(fig, frame.left..frame.right, (x0, x1));
    for (r, place) in fig.rules.iter().zip(&labels) {
        let x = axis_value(r.x, fig.log_x);
        if !(x.is_finite() && x >= x0 && x <= x1) {
            continue;
        }
        chart.draw_series(DashedLineSeries::new(vec![(x, y0), (x, y1)], 4, 4, RULE_INK.stroke_width(1)))?;
        // A label that found no room is left out; the summary and the
        // hover read-out name every event.
        let Some(place) = place.filter(|p| p.row < rows.max(1)) else { continue };
        let top = frame.top as i32 - 4 - RULE_ROW * (place.row as i32 + 1);
        let style = ("sans-serif", RULE_FONT).into_font().color(&RULE_INK);
        root.draw(&Text::new(r.label.clone(), (place.left, top), style))?;
    }

    for m in &fig.marks {
        let p = (axis_value(m.x, fig.log_x), axis_value(m.y, fig.log_y));
        if !(p.0.is_finite() && p.1.is_finite() && inside(p, (x0, x1), (y0, y1))) {
            continue;
        }
        let c = colour(m.colour);
        let (bx, by) = chart.backend_coord(&p);
        match m.shape {
            MarkShape::Dot => root.draw(&Circle::new((bx, by), 4, c.filled()))?,
            MarkShape::Peak => root.draw(&Polygon::new(vec![(bx, by - 6), (bx - 5, by + 3), (bx + 5, by + 3)], c.filled()))?,
            MarkShape::Trough => {
                root.draw(&Polygon::new(vec![(bx, by + 6), (bx - 5, by - 3), (bx + 5, by - 3)], c.filled()))?
            }
        }
        if !m.label.is_empty() {
            let dy = if m.shape == MarkShape::Trough { 6 } else { -18 };
            let right = (bx as f64) > frame.left + 0.8 * (frame.right - frame.left);
            let style = ("sans-serif", 12).into_font().color(&INK);
            let style = if right { style.pos(Pos::new(HPos::Right, VPos::Top)) } else { style };
            root.draw(&Text::new(m.label.clone(), (if right { bx - 6 } else { bx + 6 }, by + dy), style))?;
        }
    }

    let area = (frame.left as i32, frame.top as i32, frame.right as i32, frame.bottom as i32);
    text::legend(root, &legend, area, text::Corner::UpperRight)?;
    root.present()?;
    Ok(frame)
}

/// Margin around the chart, pixels.
const MARGIN: i32 = 12;
/// Width of the y axis's label area, pixels.
const Y_LABEL_AREA: i32 = 64;
/// Event-rule labels: font size and the height of one row of them, pixels.
const RULE_FONT: f64 = 12.0;
const RULE_ROW: i32 = 15;
/// Most rows of event labels above a plot; labels that fit in none are left out.
pub const RULE_ROWS: usize = 3;
/// Ink of event rules and their labels.
const RULE_INK: RGBColor = RGBColor(0x7a, 0x30, 0x20);

/// Where one event label goes: its left edge in pixels and its row above
/// the plot (0 nearest).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct LabelPlace {
    /// Left edge of the text, pixels.
    pub left: i32,
    /// Row, counted up from the plot's top edge.
    pub row: usize,
}

/// Lay out the labels of `fig`'s rules over the plotting area `px` (pixels)
/// showing `xs` (axis units): each label just right of its rule, or just
/// left when that runs past the right edge; in the lowest of [`RULE_ROWS`]
/// rows where it overlaps no other label. `None` for a rule off the axis or
/// a label that fits in no row.
pub fn rule_labels(fig: &Figure, px: std::ops::Range<f64>, (x0, x1): (f64, f64)) -> Vec<Option<LabelPlace>> {
    const GAP: i32 = 6;
    let mut ends = [i32::MIN; RULE_ROWS]; // right end of the last label in each row
    // (rule, left edge, width), from left to right.
    let mut order: Vec<(usize, i32, i32)> = fig
        .rules
        .iter()
        .enumerate()
        .filter_map(|(i, r)| {
            let x = axis_value(r.x, fig.log_x);
            if !(x.is_finite() && x >= x0 && x <= x1 && x1 > x0) {
                return None;
            }
            let bx = (px.start + (x - x0) / (x1 - x0) * (px.end - px.start)).round() as i32;
            let w = text::text_width(&r.label, RULE_FONT) as i32;
            let left = if (bx + 3 + w) as f64 > px.end { (bx - 3 - w).max(px.start as i32 - Y_LABEL_AREA) } else { bx + 3 };
            Some((i, left, w))
        })
        .collect();
    order.sort_by_key(|&(i, left, _)| (left, i));
    let mut out = vec![None; fig.rules.len()];
    for (i, left, w) in order {
        if let Some(row) = (0..RULE_ROWS).find(|&k| ends[k] + GAP <= left) {
            ends[row] = left + w;
            out[i] = Some(LabelPlace { left, row });
        }
    }
    out
}

/// Pixel strokes of a figure's direction field: one equal-length segment on
/// screen through each sample, plus its arrow head (`[barb, tip, barb]`)
/// when the figure asks for arrows.
pub fn field_strokes(fig: &Figure, frame: &Frame) -> Vec<Vec<(i32, i32)>> {
    let mut out = Vec::with_capacity(fig.field.len() * if fig.arrows { 2 } else { 1 });
    if fig.field.is_empty() {
        return out;
    }
    let w = frame.right - frame.left;
    let h = frame.bottom - frame.top;
    let sx = w / (frame.x1 - frame.x0);
    let sy = h / (frame.y1 - frame.y0);
    // Segment length: a little under the sample spacing.
    let n = (fig.field.len() as f64).sqrt().max(1.0);
    let len = (w.min(h) / n * 0.7).clamp(4.0, 30.0);
    let px = |x: f64, y: f64| (x.round() as i32, y.round() as i32);
    for s in &fig.field {
        let (x, y) = (axis_value(s[0], fig.log_x), axis_value(s[1], fig.log_y));
        if !(x.is_finite() && y.is_finite() && inside((x, y), (frame.x0, frame.x1), (frame.y0, frame.y1))) {
            continue;
        }
        let (ux, uy) = (s[2] * sx, -s[3] * sy);
        let norm = ux.hypot(uy);
        if !norm.is_finite() {
            continue;
        }
        let (cx, cy) = frame.pixel(x, y);
        if norm == 0.0 {
            // A rest point: a dot.
            out.push(vec![px(cx - 1.0, cy), px(cx + 1.0, cy)]);
            continue;
        }
        let (dx, dy) = (ux / norm * len / 2.0, uy / norm * len / 2.0);
        let tip = px(cx + dx, cy + dy);
        out.push(vec![px(cx - dx, cy - dy), tip]);
        if fig.arrows {
            // Two barbs at the head, 25° off the shaft, 35% of its length.
            let (hx, hy) = (-dx * 0.7, -dy * 0.7);
            let (c, sn) = (0.906f64, 0.423f64);
            let l = px(cx + dx + hx * c - hy * sn, cy + dy + hx * sn + hy * c);
            let r = px(cx + dx + hx * c + hy * sn, cy + dy - hx * sn + hy * c);
            out.push(vec![l, tip, r]);
        }
    }
    out
}

/// The colour of direction-field strokes, as CSS (for a backend that strokes them itself).
pub const FIELD_CSS: &str = "#8a949e";

fn draw_field<DB: DrawingBackend>(root: &DrawingArea<DB, Shift>, strokes: &[Vec<(i32, i32)>]) -> Result<(), DrawError>
where
    DB::ErrorType: 'static,
{
    let style = FIELD_INK.stroke_width(1);
    for s in strokes {
        root.draw(&PathElement::new(s.clone(), style))?;
    }
    Ok(())
}

/// Draw `fig` as an SVG document of `width` × `height` pixels, its curves
/// in fractional pixels as on the canvas.
pub fn figure_svg(fig: &Figure, width: u32, height: u32) -> Result<String, DrawError> {
    let mut svg = String::new();
    let mut strokes = SvgStrokes::default();
    {
        let root = text::measured(SVGBackend::with_string(&mut svg, (width, height)));
        figure_with(&root, fig, Some(&mut strokes))?;
    }
    Ok(strokes.splice(svg))
}

/// The SVG's own strokes: the field and the curves as `<polyline>`
/// elements, spliced in at the [`ANCHOR`] marker.
#[derive(Default)]
struct SvgStrokes(String);

impl SvgStrokes {
    fn polyline(&mut self, points: impl Iterator<Item = (f64, f64)>, stroke: &str, width: u32, dashed: bool) {
        use std::fmt::Write;
        let _ = write!(self.0, r#"<polyline fill="none" stroke="{stroke}" stroke-width="{width}" stroke-linejoin="round""#);
        if dashed {
            self.0.push_str(r#" stroke-dasharray="6 4""#);
        }
        self.0.push_str(r#" points=""#);
        for (x, y) in points {
            let _ = write!(self.0, "{},{} ", round2(x), round2(y));
        }
        self.0.push_str("\"/>\n");
    }

    /// `svg` with the marker replaced by the strokes.
    fn splice(self, svg: String) -> String {
        let fill = format!(r#"fill="{}""#, hex(ANCHOR));
        let Some(at) = svg.find(&fill) else { return svg };
        let (Some(start), Some(len)) = (svg[..at].rfind('<'), svg[at..].find("/>")) else { return svg };
        let mut out = String::with_capacity(svg.len() + self.0.len());
        out.push_str(&svg[..start]);
        out.push_str(&self.0);
        out.push_str(svg[at + len + 2..].trim_start_matches('\n'));
        out
    }
}

/// A colour as plotters' SVG backend writes it, `#RRGGBB`.
fn hex(c: RGBColor) -> String {
    format!("#{:02X}{:02X}{:02X}", c.0, c.1, c.2)
}

/// `v` to two decimals, without trailing zeros.
fn round2(v: f64) -> String {
    let s = format!("{v:.2}");
    s.trim_end_matches('0').trim_end_matches('.').to_string()
}

impl Strokes for SvgStrokes {
    fn field(&mut self, strokes: &[Vec<(i32, i32)>]) {
        for s in strokes {
            self.polyline(s.iter().map(|&(x, y)| (x as f64, y as f64)), FIELD_CSS, 1, false);
        }
    }

    fn curve(&mut self, points: &[(f64, f64)], c: RGBColor, width: u32, dashed: bool) {
        self.polyline(points.iter().copied(), &hex(c), width, dashed);
    }

    fn anchor(&self) -> bool {
        true
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn decay() -> Figure {
        let x: Vec<f64> = (0..50).map(|i| i as f64 * 0.1).collect();
        let y: Vec<f64> = x.iter().map(|t| (-t).exp()).collect();
        Figure {
            x_label: "t".into(),
            y_label: "level".into(),
            lines: vec![Line { label: "h".into(), x, y, colour: 0, width: 2, ..Default::default() }],
            ..Default::default()
        }
    }

    #[test]
    fn svg_has_the_curve_labels_and_legend() {
        let svg = figure_svg(&decay(), 400, 300).unwrap();
        assert!(svg.contains("<polyline"), "no curve in {svg}");
        assert!(svg.lines().any(|l| l.trim() == "t"), "no x label");
        assert!(svg.lines().any(|l| l.trim() == "level"), "no y label");
        assert!(svg.lines().any(|l| l.trim() == "h"), "no legend entry");
        assert!(svg.starts_with("<svg") && svg.trim_end().ends_with("</svg>"));
    }

    #[test]
    fn frame_maps_the_plotting_area_to_the_data_range() {
        let mut fig = decay();
        fig.x_range = Some((1.0, 3.0));
        fig.y_range = Some((0.0, 0.5));
        let mut svg = String::new();
        let frame = {
            let root = SVGBackend::with_string(&mut svg, (400, 300)).into_drawing_area();
            figure(&root, &fig).unwrap()
        };
        assert_eq!((frame.x0, frame.x1, frame.y0, frame.y1), (1.0, 3.0, 0.0, 0.5));
        assert!(frame.left > 40.0 && frame.right <= 400.0 && frame.top < frame.bottom && frame.bottom < 300.0);
    }

    #[test]
    fn a_backend_with_its_own_strokes_gets_the_curves_in_fractional_pixels() {
        #[derive(Default)]
        struct Record(Vec<(Vec<(f64, f64)>, RGBColor, u32, bool)>);
        impl Strokes for Record {
            fn field(&mut self, _: &[Vec<(i32, i32)>]) {}
            fn curve(&mut self, points: &[(f64, f64)], colour: RGBColor, width: u32, dashed: bool) {
                self.0.push((points.to_vec(), colour, width, dashed));
            }
        }
        // A straight line across the whole shown range, 31 points.
        let x: Vec<f64> = (0..=30).map(|i| i as f64 / 30.0).collect();
        let fig = Figure {
            lines: vec![Line { label: "ramp".into(), y: x.iter().map(|v| 2.0 * v).collect(), x, colour: 1, width: 2, dashed: true, ..Default::default() }],
            x_range: Some((0.0, 1.0)),
            y_range: Some((0.0, 2.0)),
            ..Default::default()
        };
        let mut svg = String::new();
        let mut rec = Record::default();
        let frame = {
            let root = SVGBackend::with_string(&mut svg, (400, 300)).into_drawing_area();
            figure_with(&root, &fig, Some(&mut rec)).unwrap()
        };
        assert_eq!(rec.0.len(), 1);
        let (pts, colour, width, dashed) = &rec.0[0];
        assert_eq!((*colour, *width, *dashed), (super::colour(1), 2, true));
        assert_eq!(pts.len(), 31);
        // The ends at the frame's corners, every point on the straight line
        // between them, and most of them between whole pixels.
        assert_eq!(pts[0], (frame.left, frame.bottom));
        assert_eq!(pts[30], (frame.right, frame.top));
        for (i, &(px, py)) in pts.iter().enumerate() {
            let f = i as f64 / 30.0;
            assert!((px - (frame.left + f * (frame.right - frame.left))).abs() < 1e-9);
            assert!((py - (frame.bottom - f * (frame.bottom - frame.top))).abs() < 1e-9);
        }
        assert!(pts.iter().filter(|p| p.0.fract() != 0.0 || p.1.fract() != 0.0).count() > 20);
        // The curve is not drawn a second time by the backend itself: only
        // the legend's sample is left in its colour.
        let c = super::colour(1);
        let ink = format!("stroke=\"#{:02X}{:02X}{:02X}\"", c.0, c.1, c.2);
        let mut plain = String::new();
        {
            let root = SVGBackend::with_string(&mut plain, (400, 300)).into_drawing_area();
            figure(&root, &fig).unwrap();
        }
        assert!(svg.matches(&ink).count() + 30 <= plain.matches(&ink).count(), "{} {}", svg.matches(&ink).count(), plain.matches(&ink).count());
        // The SVG export splices the same curve in, in fractional pixels and
        // dashed, where the marker was (under the legend), and the marker is gone.
        let export = figure_svg(&fig, 400, 300).unwrap();
        let curve = export.lines().find(|l| l.contains("stroke-dasharray=\"6 4\"")).expect("the dashed curve");
        assert!(curve.contains(&ink) && curve.contains('.'), "{curve}");
        let points = curve.split("points=\"").nth(1).and_then(|p| p.split('"').next()).unwrap_or("");
        assert_eq!(points.split_whitespace().filter(|p| p.contains(',')).count(), 31, "{curve}");
        assert!(!export.contains("#010203"));
        let line_of = |f: &dyn Fn(&str) -> bool| export.lines().position(f);
        assert!(line_of(&|l| l == curve) < line_of(&|l| l.trim() == "ramp"), "the curve goes under the legend");
    }

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
    fn field_segments_rules_and_marks_are_drawn() {
        let mut fig = Figure { x_label: "x".into(), y_label: "v".into(), arrows: true, ..Default::default() };
        for i in 0..10 {
            for j in 0..10 {
                let (x, y) = (i as f64 - 4.5, j as f64 - 4.5);
                fig.field.push([x, y, y, -x]);
            }
        }
        fig.rules.push(Rule { x: 0.0, label: "x = 0".into() });
        fig.marks.push(Mark { x: 1.0, y: 1.0, label: "peak 1".into(), shape: MarkShape::Peak, colour: 1 });
        let svg = figure_svg(&fig, 500, 400).unwrap();
        // 100 shafts + 100 heads, plus the mesh lines.
        assert!(svg.matches("<polyline").count() >= 200, "field not drawn");
        assert!(svg.contains("x = 0") && svg.contains("peak 1"));
        assert!(svg.contains("<polygon"), "no peak mark");
    }

    #[test]
    fn log_axes_drop_non_positive_values_and_label_in_data_units() {
        let fig = Figure {
            x_label: "h".into(),
            y_label: "error".into(),
            log_x: true,
            log_y: true,
            lines: vec![Line {
                label: "Euler".into(),
                x: vec![0.1, 0.05, 0.025, 0.0],
                y: vec![1e-2, 5e-3, 2.5e-3, -1.0],
                colour: 0,
                width: 2,
                dots: true,
                ..Default::default()
            }],
            ..Default::default()
        };
        let mut svg = String::new();
        let frame = {
            let root = SVGBackend::with_string(&mut svg, (400, 300)).into_drawing_area();
            figure(&root, &fig).unwrap()
        };
        assert!(frame.x0 < 0.1f64.log10() && frame.x1 > 0.025f64.log10());
        assert!(svg.contains("<circle"), "no dots");
        assert!(!svg.contains("NaN"));
    }

    fn rules_at(xs: &[f64], label: &str) -> Figure {
        Figure { rules: xs.iter().map(|&x| Rule { x, label: label.into() }).collect(), ..Default::default() }
    }

    #[test]
    fn event_labels_close_in_time_are_staggered_not_overlapped() {
        // Three events a few pixels apart: three rows, none overlapping.
        let fig = rules_at(&[10.0, 10.5, 11.0], "h < 0.05 m");
        let places = rule_labels(&fig, 100.0..700.0, (0.0, 100.0));
        let rows: Vec<usize> = places.iter().map(|p| p.unwrap().row).collect();
        assert_eq!(rows, vec![0, 1, 2]);
        // Far apart: all in the first row.
        let fig = rules_at(&[10.0, 40.0, 70.0], "mark");
        assert!(rule_labels(&fig, 100.0..700.0, (0.0, 100.0)).iter().all(|p| p.unwrap().row == 0));
        // Within one row no two labels overlap.
        let fig = rules_at(&(0..40).map(|i| i as f64 * 2.5).collect::<Vec<_>>(), "T > 60");
        let places = rule_labels(&fig, 100.0..700.0, (0.0, 100.0));
        let w = text::text_width("T > 60", RULE_FONT) as i32;
        for row in 0..RULE_ROWS {
            let mut lefts: Vec<i32> = places.iter().flatten().filter(|p| p.row == row).map(|p| p.left).collect();
            lefts.sort();
            assert!(lefts.windows(2).all(|w2| w2[1] - w2[0] >= w), "row {row}: {lefts:?}");
        }
    }

    #[test]
    fn labels_that_fit_in_no_row_are_left_out_and_the_rest_drawn() {
        let fig = rules_at(&[50.0; 6], "dose 2");
        let places = rule_labels(&fig, 100.0..700.0, (0.0, 100.0));
        assert_eq!(places.iter().flatten().count(), RULE_ROWS);
        assert_eq!(places.iter().filter(|p| p.is_none()).count(), 6 - RULE_ROWS);
        // Near the right edge a label goes to the left of its rule.
        let fig = rules_at(&[99.0], "tank empty");
        let p = rule_labels(&fig, 100.0..700.0, (0.0, 100.0))[0].unwrap();
        assert!(p.left + text::text_width("tank empty", RULE_FONT) as i32 <= 694);
        // Off the axis: no place.
        assert_eq!(rule_labels(&rules_at(&[150.0], "x"), 100.0..700.0, (0.0, 100.0)), vec![None]);
        // In the SVG each shown label appears once, none twice.
        let mut fig = decay();
        fig.rules = rules_at(&[1.0, 1.02, 1.04, 1.06, 1.08], "alarm").rules;
        let svg = figure_svg(&fig, 500, 300).unwrap();
        assert_eq!(svg.lines().filter(|l| l.trim() == "alarm").count(), RULE_ROWS, "{svg}");
    }

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
        // A linear axis keeps plotters' choice; a broken range has none.
        assert!(ticks(0.0, 1.0, false, 8).0.len() >= 5);
        assert_eq!(ticks(f64::NAN, 1.0, true, 8), (vec![], vec![]));
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
