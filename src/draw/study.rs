//! Drawings of the accuracy study: a method's stability region with the
//! `h·λ` points of a run, and the log-log convergence plot of error against
//! step size.

use super::DrawError;
use crate::study::stability::{StabilityFunction, C64};
use plotters::coord::Shift;
use plotters::prelude::*;

/// Fill of the stable set.
const STABLE_FILL: RGBColor = RGBColor(0xcf, 0xe3, 0xf5);
/// The boundary `|R| = 1`.
const EDGE: RGBColor = RGBColor(0x1f, 0x5f, 0xa8);
/// A point outside the region.
const OUTSIDE: RGBColor = RGBColor(0xb0, 0x1c, 0x1c);
/// A point inside the region.
const INSIDE: RGBColor = RGBColor(0x1d, 0x7a, 0x3a);

/// Draw the stability region `{z : |R(z)| ≤ 1}` of `f` (shaded, with its
/// edge), the axes through the origin, and each `h·λ` of `points`, a cross
/// when it lies outside the region and a dot when inside. `title` names the
/// method.
pub fn stability_region<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    title: &str,
    f: &StabilityFunction,
    points: &[C64],
) -> Result<(), DrawError>
where
    DB::ErrorType: 'static,
{
    root.fill(&WHITE)?;
    let (w, h) = root.dim_in_pixel();
    let frame = f.frame(points);
    let (x0, x1, mut y0, mut y1) = frame;
    // Equal scales on both axes so that the region keeps its shape.
    let plot_w = (w as f64 - 70.0).max(10.0);
    let plot_h = (h as f64 - 70.0).max(10.0);
    let per_px = ((x1 - x0) / plot_w).max((y1 - y0) / plot_h);
    let (xc, yc) = (0.5 * (x0 + x1), 0.5 * (y0 + y1));
    let (x0, x1) = (xc - 0.5 * per_px * plot_w, xc + 0.5 * per_px * plot_w);
    y0 = y0.min(yc - 0.5 * per_px * plot_h);
    y1 = y1.max(yc + 0.5 * per_px * plot_h);
    let frame = (x0, x1, y0, y1);
    let mut chart = ChartBuilder::on(root)
        .caption(title, ("sans-serif", 16))
        .margin(10)
        .x_label_area_size(32)
        .y_label_area_size(44)
        .build_cartesian_2d(x0..x1, y0..y1)?;
    chart
        .configure_mesh()
        .x_desc("Re(h·λ)")
        .y_desc("Im(h·λ)")
        .light_line_style(RGBColor(0xf0, 0xf0, 0xf0))
        .draw()?;
    let rows = 160usize;
    let cols = 220usize;
    let dy = (y1 - y0) / rows as f64;
    chart.draw_series(
        f.runs(frame, cols, rows)
            .into_iter()
            .map(|(im, a, b)| Rectangle::new([(a, im - 0.5 * dy), (b, im + 0.5 * dy)], STABLE_FILL.filled())),
    )?;
    chart.draw_series(
        f.boundary(frame, cols, rows).into_iter().map(|s| PathElement::new(vec![s[0], s[1]], EDGE.stroke_width(2))),
    )?;
    let grey = RGBColor(0x70, 0x70, 0x70);
    chart.draw_series(std::iter::once(PathElement::new(vec![(x0, 0.0), (x1, 0.0)], grey)))?;
    chart.draw_series(std::iter::once(PathElement::new(vec![(0.0, y0), (0.0, y1)], grey)))?;
    for p in points.iter().filter(|p| p.re.is_finite() && p.im.is_finite()) {
        let xy = (p.re.clamp(x0, x1), p.im.clamp(y0, y1));
        if f.is_stable(*p) {
            chart.draw_series(std::iter::once(Circle::new(xy, 5, INSIDE.filled())))?;
        } else {
            chart.draw_series(std::iter::once(Cross::new(xy, 7, OUTSIDE.stroke_width(3))))?;
        }
    }
    root.present()?;
    Ok(())
}

/// One line of a convergence plot: errors at a ladder of steps.
pub struct ErrorLine<'a> {
    /// Legend label, e.g. `final h (RK4)`.
    pub label: &'a str,
    /// Step sizes.
    pub h: &'a [f64],
    /// Error at each step (zeros and non-finite values are left out).
    pub error: &'a [f64],
    /// The method's theoretical order, drawn as a dashed guide through the
    /// finest point.
    pub order: Option<f64>,
}

/// The log-log plot of errors against step size, one line of dots per
/// quantity, each with a dashed guide of slope `order` through its finest
/// point, as a [`Figure`](super::Figure): ticked and drawn as every other
/// plot ([`figure_svg`](super::figure_svg) for the report).
pub fn convergence(lines: &[ErrorLine]) -> super::Figure {
    let good = |h: f64, e: f64| h > 0.0 && e > 0.0 && h.is_finite() && e.is_finite();
    let pts = |l: &ErrorLine| -> Vec<(f64, f64)> { l.h.iter().zip(l.error).filter(|(h, e)| good(**h, **e)).map(|(h, e)| (*h, *e)).collect() };
    let all: Vec<(f64, f64)> = lines.iter().flat_map(pts).collect();
    let (mut hx0, mut hx1, mut ey0, mut ey1) = all.iter().fold((f64::INFINITY, 0.0f64, f64::INFINITY, 0.0f64), |(a, b, c, d), &(h, e)| {
        (a.min(h), b.max(h), c.min(e), d.max(e))
    });
    if !hx0.is_finite() {
        (hx0, hx1, ey0, ey1) = (1e-3, 1.0, 1e-6, 1.0);
    }
    let mut fig = super::Figure {
        x_label: "step h".into(),
        y_label: "error".into(),
        x_range: Some((hx0 / 1.5, hx1 * 1.5)),
        y_range: Some((ey0 / 4.0, ey1 * 4.0)),
        log_x: true,
        log_y: true,
        ..Default::default()
    };
    for (i, l) in lines.iter().enumerate() {
        let p = pts(l);
        let colour = i as i32;
        if let (Some(order), Some(&(hf, ef))) = (l.order, p.iter().min_by(|a, b| a.0.total_cmp(&b.0))) {
            // A straight line on log-log axes: its two ends (the figure clips it).
            let h_end = hx1 * 1.5;
            fig.lines.push(super::Line {
                x: vec![hf, h_end],
                y: vec![ef, ef * (h_end / hf).powf(order)],
                colour,
                width: 1,
                dashed: true,
                ..Default::default()
            });
        }
        fig.lines.push(super::Line {
            label: l.label.into(),
            x: p.iter().map(|q| q.0).collect(),
            y: p.iter().map(|q| q.1).collect(),
            colour,
            width: 2,
            dots: true,
            ..Default::default()
        });
    }
    fig
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn svg_region_marks_the_point_outside() {
        let rk4 = StabilityFunction::Polynomial(vec![1.0, 1.0, 0.5, 1.0 / 6.0, 1.0 / 24.0]);
        let mut svg = String::new();
        {
            let root = SVGBackend::with_string(&mut svg, (480, 360)).into_drawing_area();
            stability_region(&root, "RK4", &rk4, &[C64::new(-10.0, 0.0)]).unwrap();
        }
        assert!(svg.contains("#CFE3F5") || svg.contains("#cfe3f5"), "no fill");
        assert!(svg.contains("#B01C1C") || svg.contains("#b01c1c"), "no outside mark");
        assert!(svg.contains("Re(h·λ)"));
    }

    #[test]
    fn svg_convergence_has_lines() {
        let h = [0.1, 0.05, 0.025, 0.0125];
        let e: Vec<f64> = h.iter().map(|h: &f64| 3.0 * h.powi(4)).collect();
        let svg = super::super::figure_svg(&convergence(&[ErrorLine { label: "y(1), RK4", h: &h, error: &e, order: Some(4.0) }]), 480, 360).unwrap();
        assert!(svg.contains("<polyline") && svg.contains("y(1), RK4"));
    }
}
#[cfg(test)]
mod look {
    use super::*;
    #[test]
    #[ignore]
    fn write_svgs() {
        let rk4 = StabilityFunction::Polynomial(vec![1.0, 1.0, 0.5, 1.0 / 6.0, 1.0 / 24.0]);
        let mut svg = String::new();
        {
            let root = SVGBackend::with_string(&mut svg, (480, 360)).into_drawing_area();
            stability_region(&root, "RK4, h = 0.01", &rk4, &[C64::new(-10.0, 0.0), C64::new(-1.0, 1.0)]).unwrap();
        }
        std::fs::write("/tmp/st/region.svg", svg).unwrap();
        let h = [0.1, 0.05, 0.025, 0.0125];
        let e: Vec<f64> = h.iter().map(|h: &f64| 3.0 * h.powi(4)).collect();
        let e2: Vec<f64> = h.iter().map(|h: &f64| 0.3 * h.powi(1)).collect();
        let lines = [ErrorLine { label: "y(1), RK4", h: &h, error: &e, order: Some(4.0) }, ErrorLine { label: "y(1), Euler", h: &h, error: &e2, order: Some(1.0) }];
        std::fs::write("/tmp/st/conv.svg", super::super::figure_svg(&convergence(&lines), 480, 360).unwrap()).unwrap();
        let be = StabilityFunction::theta(1.0);
        let mut svg = String::new();
        {
            let root = SVGBackend::with_string(&mut svg, (480, 360)).into_drawing_area();
            stability_region(&root, "backward-euler", &be, &[C64::new(-10.0, 0.0)]).unwrap();
        }
        std::fs::write("/tmp/st/be.svg", svg).unwrap();
    }
}
