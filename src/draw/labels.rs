//! Label layout: the event labels in rows above the plot, and the curve key
//! in the right margin, each label at the height where its curve ends.
//!
//! Both use the advance-width table of [`super::text`], so the layout is the
//! same on the canvas, in SVG and in a worker.

use super::axes::axis_value;
use super::model::Figure;
use super::style::LABEL_FONT;
use super::text::text_width;

/// Event-rule labels: font size and the height of one row of them, pixels.
pub(super) const RULE_FONT: f64 = 12.0;
pub(super) const RULE_ROW: i32 = 15;
/// Most rows of event labels above a plot; labels that fit in none are left out.
pub const RULE_ROWS: usize = 3;
/// Width of the y axis's label area, pixels (a label near the left edge may
/// reach into it).
pub(super) const Y_LABEL_AREA: i32 = 64;

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
            let f = (x / 2.0 - x0 / 2.0) / (x1 / 2.0 - x0 / 2.0);
            let bx = (px.start + f * (px.end - px.start)).round() as i32;
            let w = text_width(&r.label, RULE_FONT) as i32;
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

/// The curve key: from the plot's right edge, a gap, a sample of the line
/// (its colour, width and dash), a gap, and the label.
pub(super) const KEY_GAP: i32 = 5;
pub(super) const KEY_SAMPLE: i32 = 18;
/// Height of one key row, pixels.
pub(super) const KEY_ROW: f64 = 15.0;
/// The key takes at most this share of the figure's width; longer labels
/// are shortened with an ellipsis.
const KEY_SHARE: f64 = 0.3;

/// The width the key needs beside a plot of `width` pixels for `labels`
/// (0 for none), and the labels as they fit in it.
pub(super) fn key_width(labels: &[&str], width: u32) -> (i32, Vec<String>) {
    if labels.is_empty() {
        return (0, vec![]);
    }
    let room = ((width as f64 * KEY_SHARE) as i32 - 2 * KEY_GAP - KEY_SAMPLE).max(24) as u32;
    let fitted: Vec<String> = labels.iter().map(|l| shorten(l, room)).collect();
    let text = fitted.iter().map(|l| text_width(l, LABEL_FONT)).max().unwrap_or(0) as i32;
    (2 * KEY_GAP + KEY_SAMPLE + text + 4, fitted)
}

/// `label`, cut to `room` pixels with an ellipsis when it is wider.
fn shorten(label: &str, room: u32) -> String {
    if text_width(label, LABEL_FONT) <= room {
        return label.to_string();
    }
    let mut s: String = label.to_string();
    while !s.is_empty() && text_width(&format!("{s}…"), LABEL_FONT) > room {
        s.pop();
    }
    format!("{}…", s.trim_end())
}

/// Heights for the key's rows: each label as near as it can be to the height
/// `want` where its curve ends (pixels, any order), no two closer than one
/// row, all between `top` and `bottom`. A label that finds no room is `None`
/// (at most `(bottom - top) / row + 1` labels fit; the first ones in `want`
/// are kept). Runs in O(n log n), with no loop that depends on the values.
pub(super) fn key_rows(want: &[f64], top: f64, bottom: f64) -> Vec<Option<f64>> {
    let row = KEY_ROW;
    let fits = if bottom > top { ((bottom - top) / row).floor() as usize + 1 } else { 1 };
    let mut order: Vec<usize> = (0..want.len()).take(fits).collect();
    let clamp = |y: f64| if y.is_finite() { y.clamp(top, bottom.max(top)) } else { top };
    order.sort_by(|&a, &b| clamp(want[a]).total_cmp(&clamp(want[b])).then(a.cmp(&b)));
    let mut y: Vec<f64> = order.iter().map(|&i| clamp(want[i])).collect();
    for k in 1..y.len() {
        y[k] = y[k].max(y[k - 1] + row);
    }
    if let Some(last) = y.last_mut() {
        *last = last.min(bottom.max(top));
    }
    for k in (0..y.len().saturating_sub(1)).rev() {
        y[k] = y[k].min(y[k + 1] - row);
    }
    let mut out = vec![None; want.len()];
    for (k, &i) in order.iter().enumerate() {
        out[i] = Some(y[k].max(top - row / 2.0));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::super::model::Rule;
    use super::*;

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
        let w = text_width("T > 60", RULE_FONT) as i32;
        for row in 0..RULE_ROWS {
            let mut lefts: Vec<i32> = places.iter().flatten().filter(|p| p.row == row).map(|p| p.left).collect();
            lefts.sort();
            assert!(lefts.windows(2).all(|w2| w2[1] - w2[0] >= w), "row {row}: {lefts:?}");
        }
    }

    #[test]
    fn labels_that_fit_in_no_row_are_left_out() {
        let fig = rules_at(&[50.0; 6], "dose 2");
        let places = rule_labels(&fig, 100.0..700.0, (0.0, 100.0));
        assert_eq!(places.iter().flatten().count(), RULE_ROWS);
        assert_eq!(places.iter().filter(|p| p.is_none()).count(), 6 - RULE_ROWS);
        // Near the right edge a label goes to the left of its rule.
        let fig = rules_at(&[99.0], "tank empty");
        let p = rule_labels(&fig, 100.0..700.0, (0.0, 100.0))[0].unwrap();
        assert!(p.left + text_width("tank empty", RULE_FONT) as i32 <= 694);
        // Off the axis: no place.
        assert_eq!(rule_labels(&rules_at(&[150.0], "x"), 100.0..700.0, (0.0, 100.0)), vec![None]);
    }

    #[test]
    fn key_rows_sit_at_their_curves_ends_without_overlapping() {
        // Far apart: each at its own height.
        assert_eq!(key_rows(&[50.0, 200.0], 10.0, 300.0), vec![Some(50.0), Some(200.0)]);
        // Three curves ending together: stacked one row apart, in order, near there.
        let y: Vec<f64> = key_rows(&[100.0, 101.0, 99.0], 10.0, 300.0).into_iter().map(Option::unwrap).collect();
        let mut sorted = y.clone();
        sorted.sort_by(f64::total_cmp);
        assert!(sorted.windows(2).all(|w| w[1] - w[0] >= KEY_ROW - 1e-9), "{y:?}");
        assert!(y[2] < y[0] && y[0] < y[1]);
        // At the bottom edge they are pushed up, not out of the plot.
        let y: Vec<f64> = key_rows(&[300.0, 300.0, 300.0], 10.0, 300.0).into_iter().map(Option::unwrap).collect();
        assert!(y.iter().all(|v| *v <= 300.0 && *v >= 10.0), "{y:?}");
        // More labels than rows: the first ones are kept; NaN goes to the top.
        let y = key_rows(&[0.0; 10], 0.0, 30.0);
        assert_eq!(y.iter().flatten().count(), 3);
        assert_eq!(key_rows(&[f64::NAN], 5.0, 50.0), vec![Some(5.0)]);
    }

    #[test]
    fn long_key_labels_are_shortened_to_fit() {
        let (w, labels) = key_width(&["T", "a label far too long to sit beside a small plot"], 400);
        assert!(w <= 120 + 4, "{w}");
        assert_eq!(labels[0], "T");
        assert!(labels[1].ends_with('…') && labels[1].len() < 40, "{}", labels[1]);
        assert_eq!(key_width(&[], 400).0, 0);
    }
}
