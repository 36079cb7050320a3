//! Drawing a [`Figure`] on any plotters backend: the frame, grid and tick
//! labels, the direction field, the curves (clipped, in their slot's colour
//! and dash pattern), the event rules, the marks, and the curve key beside
//! the plot.

use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::axes::{axis_value, log_tick_label, shown_range, tick_label, Axis, X_LABELS, Y_LABELS};
use super::clip::{clip_polyline, dashes, inside};
use super::labels::{key_rows, key_width, rule_labels, KEY_GAP, KEY_SAMPLE, RULE_FONT, RULE_ROW, Y_LABEL_AREA};
use super::model::{Figure, Frame, MarkShape};
use super::style::{self, AXIS_FONT, FIELD_INK, GRID_BOLD, GRID_LIGHT, INK, LABEL_FONT, RULE_INK};
use super::DrawError;

/// A backend that strokes some paths itself, in fractional pixels (the
/// page's canvas, the SVG export): the direction field's many strokes as one
/// path, far faster than one element each, and the curves without plotters'
/// rounding of every point to a whole pixel, which shows as small steps
/// along a sloping line.
pub trait Strokes {
    /// The direction field's strokes, in pixels, 1 px wide in `colour`.
    fn field(&mut self, strokes: &[Vec<(i32, i32)>], colour: RGBColor);
    /// One unbroken run of a curve, in fractional pixels, `width` pixels
    /// wide with round caps and joins, dashed by `dash` (alternating on and
    /// off lengths in pixels; empty for solid).
    fn curve(&mut self, points: &[(f64, f64)], colour: RGBColor, width: u32, dash: &[f64]);
    /// Whether the figure should draw a marker ([`ANCHOR`], a one-pixel
    /// square) on the backend where the strokes belong, for a backend that
    /// splices them in afterwards (SVG). No by default.
    fn anchor(&self) -> bool {
        false
    }
}

/// The fill of the marker drawn for [`Strokes::anchor`]; no figure uses it.
pub const ANCHOR: RGBColor = RGBColor(0x01, 0x02, 0x03);

/// Margin around the chart, pixels.
const MARGIN: i32 = 12;

/// Draw `fig` on `root`, filling it. Returns where the plotting area landed.
pub fn figure<DB: DrawingBackend>(root: &DrawingArea<DB, Shift>, fig: &Figure) -> Result<Frame, DrawError>
where
    DB::ErrorType: 'static,
{
    figure_with(root, fig, None)
}

/// A stroke in pixels: through `strokes` when given, else as plotters
/// paths, one per dash.
fn stroke<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    strokes: &mut Option<&mut dyn Strokes>,
    points: &[(f64, f64)],
    colour: RGBColor,
    width: u32,
    dash: &[f64],
) -> Result<(), DrawError>
where
    DB::ErrorType: 'static,
{
    if let Some(st) = strokes.as_deref_mut() {
        st.curve(points, colour, width, dash);
        return Ok(());
    }
    let style = colour.stroke_width(width);
    for piece in dashes(points, dash) {
        let px: Vec<(i32, i32)> = piece.iter().map(|&(x, y)| (x.round() as i32, y.round() as i32)).collect();
        root.draw(&PathElement::new(px, style))?;
    }
    Ok(())
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

    // Each curve clipped to the shown range, in axis units; the labelled
    // ones that show get a row in the key beside the plot.
    let runs: Vec<Vec<Vec<(f64, f64)>>> = fig
        .lines
        .iter()
        .map(|l| {
            let pts = l.x.iter().zip(&l.y).map(|(&x, &y)| (axis_value(x, fig.log_x), axis_value(y, fig.log_y)));
            clip_polyline(pts, (x0, x1), (y0, y1))
        })
        .collect();
    let keyed: Vec<usize> = (0..fig.lines.len()).filter(|&i| !fig.lines[i].label.is_empty() && !runs[i].is_empty()).collect();
    let (w, _) = root.dim_in_pixel();
    let (key_w, key_labels) = key_width(&keyed.iter().map(|&i| fig.lines[i].label.as_str()).collect::<Vec<_>>(), w);

    // Event labels go in rows above the plot; lay them out on the area the
    // chart will have, to know how many rows to leave room for.
    let planned = (MARGIN + Y_LABEL_AREA) as f64..(w as i32 - MARGIN - key_w) as f64;
    let rows = rule_labels(fig, planned, (x0, x1)).iter().flatten().map(|l| l.row + 1).max().unwrap_or(0);
    let mut chart = ChartBuilder::on(root)
        .margin(MARGIN)
        .margin_top(if fig.rules.is_empty() { MARGIN } else { 8 + RULE_ROW * rows.max(1) as i32 })
        .margin_right(MARGIN + key_w)
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
        .axis_desc_style(("sans-serif", AXIS_FONT).into_font().color(&INK))
        .label_style(("sans-serif", LABEL_FONT).into_font().color(&INK))
        .light_line_style(GRID_LIGHT)
        .bold_line_style(GRID_BOLD)
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
            st.field(&field, FIELD_INK)
        }
        None => draw_field(root, &field)?,
    }

    // The curves, and where each ends on the right (for its key row).
    let mut ends: Vec<Option<(f64, f64)>> = vec![None; fig.lines.len()];
    for (i, (l, runs)) in fig.lines.iter().zip(&runs).enumerate() {
        let c = style::colour(l.colour);
        let width = l.width.max(1);
        let dash = style::dash(l.colour, width, l.dashed);
        for run in runs {
            let px: Vec<(f64, f64)> = run.iter().map(|&(x, y)| frame.pixel(x, y)).collect();
            if let Some(&p) = px.iter().max_by(|a, b| a.0.total_cmp(&b.0)) {
                if ends[i].is_none_or(|e| p.0 >= e.0) {
                    ends[i] = Some(p);
                }
            }
            stroke(root, &mut strokes, &px, c, width, &dash)?;
        }
        if l.dots {
            let pts = l.x.iter().zip(&l.y).map(|(&x, &y)| (axis_value(x, fig.log_x), axis_value(y, fig.log_y)));
            let inside_pts: Vec<(f64, f64)> =
                pts.filter(|&(x, y)| x.is_finite() && y.is_finite() && inside((x, y), (x0, x1), (y0, y1))).collect();
            chart.draw_series(inside_pts.into_iter().map(|p| Circle::new(p, 3, c.filled())))?;
        }
    }

    let labels = rule_labels(fig, frame.left..frame.right, (x0, x1));
    for (r, place) in fig.rules.iter().zip(&labels) {
        let x = axis_value(r.x, fig.log_x);
        if !(x.is_finite() && x >= x0 && x <= x1) {
            continue;
        }
        let (bx, _) = frame.pixel(x, y0);
        for piece in dashes(&[(bx, frame.top), (bx, frame.bottom)], &[4.0, 4.0]) {
            let px: Vec<(i32, i32)> = piece.iter().map(|&(x, y)| (x.round() as i32, y.round() as i32)).collect();
            root.draw(&PathElement::new(px, RULE_INK.stroke_width(1)))?;
        }
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
        let c = style::colour(m.colour);
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
            let style = ("sans-serif", LABEL_FONT).into_font().color(&INK);
            let style = if right { style.pos(Pos::new(HPos::Right, VPos::Top)) } else { style };
            root.draw(&Text::new(m.label.clone(), (if right { bx - 6 } else { bx + 6 }, by + dy), style))?;
        }
    }

    // The key: each label at the height where its curve ends, a sample of
    // the line before it, and a short leader from a curve that ends at the
    // right edge.
    let want: Vec<f64> = keyed.iter().map(|&i| ends[i].map_or(frame.top, |e| e.1)).collect();
    let rows_at = key_rows(&want, frame.top, frame.bottom);
    let font = ("sans-serif", LABEL_FONT).into_font().color(&INK).pos(Pos::new(HPos::Left, VPos::Center));
    for ((&i, text), y) in keyed.iter().zip(&key_labels).zip(rows_at) {
        let Some(y) = y else { continue };
        let l = &fig.lines[i];
        let (c, width) = (style::colour(l.colour), l.width.clamp(1, 3));
        let x = frame.right + KEY_GAP as f64;
        if let Some((ex, ey)) = ends[i].filter(|e| e.0 >= frame.right - 2.0) {
            stroke(root, &mut strokes, &[(ex, ey), (x, y)], c, 1, &[])?;
        }
        let sample = [(x, y), (x + KEY_SAMPLE as f64, y)];
        stroke(root, &mut strokes, &sample, c, width, &style::dash(l.colour, width, l.dashed))?;
        root.draw(&Text::new(text.clone(), ((x as i32) + KEY_SAMPLE + KEY_GAP, y.round() as i32), font.clone()))?;
    }
    root.present()?;
    Ok(frame)
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
    let (sx, sy) = frame.scale();
    // Segment length: a little under the sample spacing.
    let n = (fig.field.len() as f64).sqrt().max(1.0);
    let len = (w.min(h) / n * 0.7).clamp(4.0, 30.0);
    let px = |x: f64, y: f64| (x.round() as i32, y.round() as i32);
    for s in &fig.field {
        let (x, y) = (axis_value(s[0], fig.log_x), axis_value(s[1], fig.log_y));
        if !(x.is_finite() && y.is_finite() && inside((x, y), (frame.x0, frame.x1), (frame.y0, frame.y1))) {
            continue;
        }
        // The direction scaled to its larger component first, so that huge
        // rates give a direction rather than infinity.
        let big = s[2].abs().max(s[3].abs());
        if !big.is_finite() {
            continue;
        }
        let (cx, cy) = frame.pixel(x, y);
        if big == 0.0 {
            // A rest point: a dot.
            out.push(vec![px(cx - 1.0, cy), px(cx + 1.0, cy)]);
            continue;
        }
        let (ux, uy) = (s[2] / big * sx, -s[3] / big * sy);
        let norm = ux.hypot(uy);
        if !(norm.is_finite() && norm > 0.0) {
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

#[cfg(test)]
mod tests {
    use super::super::model::{Line, Mark, Rule};
    use super::super::svg::figure_svg;
    use super::super::text;
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
    fn svg_has_the_curve_the_axis_labels_and_the_curve_label() {
        let svg = figure_svg(&decay(), 400, 300).unwrap();
        assert!(svg.contains("<polyline"), "no curve in {svg}");
        assert!(svg.lines().any(|l| l.trim() == "t"), "no x label");
        assert!(svg.lines().any(|l| l.trim() == "level"), "no y label");
        assert!(svg.lines().any(|l| l.trim() == "h"), "no curve label");
        assert!(svg.starts_with("<svg") && svg.trim_end().ends_with("</svg>"));
    }

    #[test]
    fn curves_are_labelled_at_their_right_ends_beside_the_plot_with_no_box() {
        // Two curves: one ends high, one low. Each label sits right of the
        // plotting area at the height where its curve ends.
        let x: Vec<f64> = (0..=10).map(|i| i as f64).collect();
        let fig = Figure {
            lines: vec![
                Line { label: "rising".into(), x: x.clone(), y: x.clone(), colour: 0, width: 2, ..Default::default() },
                Line { label: "falling".into(), x: x.clone(), y: x.iter().map(|v| 10.0 - v).collect(), colour: 1, width: 2, ..Default::default() },
            ],
            ..Default::default()
        };
        let mut svg = String::new();
        let frame = {
            let root = text::measured(SVGBackend::with_string(&mut svg, (500, 300)));
            figure(&root, &fig).unwrap()
        };
        let at = |label: &str| -> (f64, f64) {
            let line = svg.lines().position(|l| l.trim() == label).expect(label);
            // plotters writes <text x=".." y=".." ...> on the line before the text.
            let tag = svg.lines().nth(line - 1).unwrap();
            let num = |k: &str| tag.split(&format!("{k}=\"")).nth(1).and_then(|s| s.split('"').next()).and_then(|s| s.parse().ok()).unwrap();
            (num("x"), num("y"))
        };
        let (rx, ry) = at("rising");
        let (fx, fy) = at("falling");
        assert!(rx > frame.right && fx > frame.right, "labels beside the plot: {rx} {fx} > {}", frame.right);
        let (_, top) = frame.pixel(10.0, frame.y1);
        assert!((ry - frame.pixel(10.0, 10.0).1).abs() < 12.0, "rising ends at the top: {ry} vs {top}");
        assert!((fy - frame.pixel(10.0, 0.0).1).abs() < 12.0, "falling ends at the bottom: {fy}");
        // No boxed legend: no rectangle but the background and the plotting area's.
        assert!(svg.matches("<rect").count() <= 2, "{}", svg.matches("<rect").count());
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
        struct Record(Vec<(Vec<(f64, f64)>, RGBColor, u32, Vec<f64>)>);
        impl Strokes for Record {
            fn field(&mut self, _: &[Vec<(i32, i32)>], _: RGBColor) {}
            fn curve(&mut self, points: &[(f64, f64)], colour: RGBColor, width: u32, dash: &[f64]) {
                self.0.push((points.to_vec(), colour, width, dash.to_vec()));
            }
        }
        // A straight line across the whole shown range, 31 points, in slot 1.
        let x: Vec<f64> = (0..=30).map(|i| i as f64 / 30.0).collect();
        let fig = Figure {
            lines: vec![Line { label: "ramp".into(), y: x.iter().map(|v| 2.0 * v).collect(), x, colour: 1, width: 2, ..Default::default() }],
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
        // The curve, then the key's leader and sample.
        assert_eq!(rec.0.len(), 3);
        let (pts, colour, width, dash) = &rec.0[0];
        assert_eq!((*colour, *width, dash.as_slice()), (style::colour(1), 2, style::SLOTS[1].dash));
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
        // The key's sample has the curve's colour and dash, right of the plot.
        let (sample, c, _, d) = &rec.0[2];
        assert_eq!((*c, d.as_slice()), (style::colour(1), style::SLOTS[1].dash));
        assert!(sample[0].0 > frame.right);
        // Nothing in the curve's colour is drawn by the backend itself.
        let ink = format!("stroke=\"{}\"", style::hex(style::colour(1)));
        assert_eq!(svg.matches(&ink).count(), 0);
        // The SVG export splices the same curve in, in fractional pixels and
        // dashed, where the marker was (under the texts), and the marker is gone.
        let export = figure_svg(&fig, 400, 300).unwrap();
        let dash = format!("stroke-dasharray=\"{}\"", "10 5");
        let curve = export.lines().find(|l| l.contains(&dash) && l.contains(&ink)).expect("the dashed curve");
        assert!(curve.contains('.') && curve.contains("stroke-linecap=\"round\""), "{curve}");
        let points = curve.split("points=\"").nth(1).and_then(|p| p.split('"').next()).unwrap_or("");
        assert_eq!(points.split_whitespace().filter(|p| p.contains(',')).count(), 31, "{curve}");
        assert!(!export.contains("#010203"));
        let line_of = |f: &dyn Fn(&str) -> bool| export.lines().position(f);
        assert!(line_of(&|l| l == curve) < line_of(&|l| l.trim() == "ramp"), "the curve goes under the texts");
        // Without a strokes backend the same dash pattern is cut by plotters'
        // own paths: many short pieces in the slot's colour.
        let mut plain = String::new();
        {
            let root = SVGBackend::with_string(&mut plain, (400, 300)).into_drawing_area();
            figure(&root, &fig).unwrap();
        }
        assert!(plain.matches(&ink).count() > 20, "{}", plain.matches(&ink).count());
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
        assert!(svg.contains(&format!("stroke=\"{}\"", style::hex(FIELD_INK))));
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

    #[test]
    fn event_labels_in_the_svg_appear_once_each() {
        let mut fig = decay();
        fig.rules = [1.0, 1.02, 1.04, 1.06, 1.08].iter().map(|&x| Rule { x, label: "alarm".into() }).collect();
        let svg = figure_svg(&fig, 500, 300).unwrap();
        assert_eq!(svg.lines().filter(|l| l.trim() == "alarm").count(), super::super::RULE_ROWS, "{svg}");
    }
}
