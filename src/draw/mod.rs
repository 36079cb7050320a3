//! Plots, drawn once for any plotters backend: the canvas in the page, SVG
//! natively (for exports and tests).

use plotters::coord::Shift;
use plotters::prelude::*;

pub mod study;

/// One curve of a plot.
pub struct Curve<'a> {
    /// Legend label.
    pub label: &'a str,
    /// Abscissae.
    pub x: &'a [f64],
    /// Ordinates (same length as `x`).
    pub y: &'a [f64],
}

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

/// The range of finite values in `v`, widened when it is a single point.
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
    if hi - lo <= f64::EPSILON * hi.abs().max(1.0) {
        let pad = hi.abs().max(1.0) * 0.05;
        return (lo - pad, hi + pad);
    }
    let pad = (hi - lo) * 0.04;
    (lo - pad, hi + pad)
}

/// Curves against the independent variable, with axis labels.
pub fn time_plot<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    x_label: &str,
    curves: &[Curve],
) -> Result<(), DrawError>
where
    DB::ErrorType: 'static,
{
    root.fill(&WHITE)?;
    let (x0, x1) = finite_range(curves.iter().flat_map(|c| c.x.iter()));
    let (y0, y1) = finite_range(curves.iter().flat_map(|c| c.y.iter()));
    let mut chart = ChartBuilder::on(root)
        .margin(12)
        .x_label_area_size(36)
        .y_label_area_size(56)
        .build_cartesian_2d(x0..x1, y0..y1)?;
    chart.configure_mesh().x_desc(x_label).light_line_style(RGBColor(0xee, 0xee, 0xee)).draw()?;
    for (i, c) in curves.iter().enumerate() {
        let color = PALETTE[i % PALETTE.len()];
        let pts = c.x.iter().zip(c.y).filter(|(x, y)| x.is_finite() && y.is_finite()).map(|(&x, &y)| (x, y));
        chart
            .draw_series(LineSeries::new(pts, color.stroke_width(2)))?
            .label(c.label)
            .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 16, y)], color.stroke_width(2)));
    }
    if curves.len() > 1 || curves.iter().any(|c| !c.label.is_empty()) {
        chart.configure_series_labels().background_style(WHITE.mix(0.85)).border_style(BLACK).draw()?;
    }
    root.present()?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn svg_time_plot_has_the_curve() {
        let x: Vec<f64> = (0..50).map(|i| i as f64 * 0.1).collect();
        let y: Vec<f64> = x.iter().map(|t| (-t).exp()).collect();
        let mut svg = String::new();
        {
            let root = SVGBackend::with_string(&mut svg, (400, 300)).into_drawing_area();
            time_plot(&root, "t", &[Curve { label: "y", x: &x, y: &y }]).unwrap();
        }
        assert!(svg.contains("<polyline"), "no curve in {svg}");
        assert!(svg.contains("<text") && svg.lines().any(|l| l.trim() == "t"), "no axis label");
    }
}
