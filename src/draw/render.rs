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
