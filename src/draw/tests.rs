//! Tests of drawing a figure, on the canvas's path and in the SVG export.

use plotters::prelude::*;

use super::labels::RULE_ROWS;
use super::model::{Figure, Line, Mark, MarkShape, Rule};
use super::style::{self, *};
use super::render::*;
use super::svg::figure_svg;
use super::text;

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
    assert_eq!(svg.lines().filter(|l| l.trim() == "alarm").count(), RULE_ROWS, "{svg}");
}
