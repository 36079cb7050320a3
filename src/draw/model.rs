//! The figure model: what one plot shows ([`Figure`]: lines, marks, event
//! rules, a direction field) and where it landed on its backend ([`Frame`]).

/// One polyline of a figure.
#[derive(Clone, Debug, Default)]
pub struct Line {
    /// Label, written at the curve's right end; empty for none.
    pub label: String,
    /// Abscissae.
    pub x: Vec<f64>,
    /// Ordinates (same length as `x`; non-finite values break the line).
    pub y: Vec<f64>,
    /// Curve slot (its colour and dash pattern, [`super::style::SLOTS`]),
    /// or negative for ink.
    pub colour: i32,
    /// Stroke width in pixels.
    pub width: u32,
    /// Drawn as a thin guide ([`super::style::GUIDE_DASH`]) instead of the
    /// slot's own dash pattern.
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
    /// Curve slot, or negative for ink.
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

    /// Pixels per axis unit across and up, finite for any finite range
    /// (a span over `f64::MAX` is taken in halves).
    pub fn scale(&self) -> (f64, f64) {
        (per_unit(self.right - self.left, self.x0, self.x1), per_unit(self.bottom - self.top, self.y0, self.y1))
    }

    /// The backend position, in fractional pixels, of the point `(x, y)` in
    /// axis units (log10 on a log axis).
    pub fn pixel(&self, x: f64, y: f64) -> (f64, f64) {
        let (sx, sy) = self.scale();
        (self.left + (x / 2.0 - self.x0 / 2.0) * sx * 2.0, self.bottom - (y / 2.0 - self.y0 / 2.0) * sy * 2.0)
    }
}

/// `pixels / (b - a)`, computed from the half span so that it stays finite
/// when `b - a` itself would overflow. For a span that does not overflow it
/// is the plain quotient, bit for bit (halving is exact).
pub(super) fn per_unit(pixels: f64, a: f64, b: f64) -> f64 {
    pixels / (b / 2.0 - a / 2.0) / 2.0
}
