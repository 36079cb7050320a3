//! SVG output: a [`Figure`] drawn on plotters' SVG backend, with the curves
//! and the direction field spliced in as `<polyline>` elements in
//! fractional pixels, as the canvas draws them.

use plotters::prelude::*;

use super::model::Figure;
use super::render::{figure_with, Strokes, ANCHOR};
use super::style::hex;
use super::{text, DrawError};

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
    fn polyline(&mut self, points: impl Iterator<Item = (f64, f64)>, stroke: &str, width: u32, dash: &[f64], round: bool) {
        use std::fmt::Write;
        let _ = write!(self.0, r#"<polyline fill="none" stroke="{stroke}" stroke-width="{width}" stroke-linejoin="round""#);
        if round {
            self.0.push_str(r#" stroke-linecap="round""#);
        }
        if !dash.is_empty() {
            let d: Vec<String> = dash.iter().map(|&v| round2(v)).collect();
            let _ = write!(self.0, r#" stroke-dasharray="{}""#, d.join(" "));
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

/// `v` to two decimals, without trailing zeros.
fn round2(v: f64) -> String {
    let s = format!("{v:.2}");
    s.trim_end_matches('0').trim_end_matches('.').to_string()
}

impl Strokes for SvgStrokes {
    fn field(&mut self, strokes: &[Vec<(i32, i32)>], colour: RGBColor) {
        let c = hex(colour);
        for s in strokes {
            self.polyline(s.iter().map(|&(x, y)| (x as f64, y as f64)), &c, 1, &[], false);
        }
    }

    fn curve(&mut self, points: &[(f64, f64)], c: RGBColor, width: u32, dash: &[f64]) {
        self.polyline(points.iter().copied(), &hex(c), width, dash, true);
    }

    fn anchor(&self) -> bool {
        true
    }
}
