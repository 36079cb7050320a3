//! Text sizes without a text engine, and the legend drawn with them.
//!
//! plotters measures text through its font backend, which in the browser
//! adds an element to the page and reads its size back: a forced layout of
//! the whole page for every label, and a panic in a Web Worker, which has no
//! page. [`Measured`] wraps any backend and answers text sizes from a table
//! of advance widths instead, so a drawing costs the same everywhere and
//! gives the same layout on the canvas, in SVG and in a worker. The legend
//! ([`legend`]) and the label layout of the plots use the same table.

use plotters_backend::{BackendColor, BackendCoord, BackendStyle as Style, BackendTextStyle, DrawingBackend, DrawingErrorKind};
use plotters::coord::Shift;
use plotters::prelude::*;

use super::DrawError;

/// Advance width of `c` in thousandths of an em, for a Helvetica-like
/// sans-serif (approximate metrics, from memory: a label needs enough room,
/// not exact glyph widths). Characters not in the table count as wide.
fn advance(c: char) -> u32 {
    match c {
        ' ' | '.' | ',' | ':' | ';' | '!' | '/' | '\\' | '·' | '|' => 278,
        '\'' | '`' => 191,
        '(' | ')' | '[' | ']' | '-' | '{' | '}' | '"' => 333,
        '0'..='9' | '_' | '$' | '#' | '?' => 556,
        '+' | '=' | '<' | '>' | '×' | '−' | '±' | '≈' | '~' | '^' | '*' => 584,
        '%' => 889,
        '&' => 667,
        '@' => 1015,
        'f' | 't' => 278,
        'i' | 'j' | 'l' => 222,
        'r' => 333,
        'c' | 'k' | 's' | 'v' | 'x' | 'y' | 'z' => 500,
        'm' => 833,
        'w' => 722,
        'a'..='z' => 556,
        'I' => 278,
        'J' => 500,
        'L' => 556,
        'F' | 'T' | 'Z' => 611,
        'C' | 'D' | 'H' | 'N' | 'R' | 'U' => 722,
        'G' | 'O' | 'Q' => 778,
        'M' => 833,
        'W' => 944,
        'A'..='Z' => 667,
        c if (c as u32) >= 0x2E80 => 1000,
        _ => 600,
    }
}

/// Width in pixels of `text` set in a sans-serif of `size` pixels.
pub fn text_width(text: &str, size: f64) -> u32 {
    let em: u32 = text.chars().map(advance).sum();
    (em as f64 * size / 1000.0).ceil() as u32
}

/// Height in pixels of a line of text of `size` pixels (ascent plus descent).
pub fn text_height(size: f64) -> u32 {
    (size * 1.15).ceil() as u32
}

/// A backend that draws through `DB` but measures text with [`text_width`].
pub struct Measured<DB>(pub DB);

/// The drawing area of `backend`, measuring text with [`text_width`].
pub fn measured<DB: DrawingBackend>(backend: DB) -> DrawingArea<Measured<DB>, Shift> {
    Measured(backend).into_drawing_area()
}

impl<DB: DrawingBackend> DrawingBackend for Measured<DB> {
    type ErrorType = DB::ErrorType;

    fn get_size(&self) -> (u32, u32) {
        self.0.get_size()
    }

    fn ensure_prepared(&mut self) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        self.0.ensure_prepared()
    }

    fn present(&mut self) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        self.0.present()
    }

    fn draw_pixel(&mut self, point: BackendCoord, color: BackendColor) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        self.0.draw_pixel(point, color)
    }

    fn draw_line<S: Style>(
        &mut self,
        from: BackendCoord,
        to: BackendCoord,
        style: &S,
    ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        self.0.draw_line(from, to, style)
    }

    fn draw_rect<S: Style>(
        &mut self,
        upper_left: BackendCoord,
        bottom_right: BackendCoord,
        style: &S,
        fill: bool,
    ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        self.0.draw_rect(upper_left, bottom_right, style, fill)
    }

    fn draw_path<S: Style, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        path: I,
        style: &S,
    ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        self.0.draw_path(path, style)
    }

    fn draw_circle<S: Style>(
        &mut self,
        center: BackendCoord,
        radius: u32,
        style: &S,
        fill: bool,
    ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        self.0.draw_circle(center, radius, style, fill)
    }

    fn fill_polygon<S: Style, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        vert: I,
        style: &S,
    ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        self.0.fill_polygon(vert, style)
    }

    fn draw_text<TStyle: BackendTextStyle>(
        &mut self,
        text: &str,
        style: &TStyle,
        pos: BackendCoord,
    ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        self.0.draw_text(text, style, pos)
    }

    fn estimate_text_size<TStyle: BackendTextStyle>(
        &self,
        text: &str,
        style: &TStyle,
    ) -> Result<(u32, u32), DrawingErrorKind<Self::ErrorType>> {
        Ok((text_width(text, style.size()), text_height(style.size())))
    }

    fn blit_bitmap(&mut self, pos: BackendCoord, size: (u32, u32), src: &[u8]) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        self.0.blit_bitmap(pos, size, src)
    }
}

/// One row of a legend: a sample of the line and its label.
pub struct LegendEntry<'a> {
    /// The label.
    pub label: &'a str,
    /// The line's colour.
    pub colour: RGBColor,
    /// The line's width in pixels.
    pub width: u32,
    /// Whether the line is dashed.
    pub dashed: bool,
}

/// Which corner of the plotting area a legend goes in.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Corner {
    /// Top right.
    UpperRight,
    /// Bottom right.
    LowerRight,
}

/// Font size of legend labels, pixels.
const LEGEND_FONT: f64 = 12.0;

/// Draw a legend box for `entries` in `corner` of the plotting area
/// `area` (`(left, top, right, bottom)` in pixels).
pub fn legend<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    entries: &[LegendEntry],
    area: (i32, i32, i32, i32),
    corner: Corner,
) -> Result<(), DrawError>
where
    DB::ErrorType: 'static,
{
    if entries.is_empty() {
        return Ok(());
    }
    let (pad, sample, gap, row) = (6, 18, 6, 18);
    let text_w = entries.iter().map(|e| text_width(e.label, LEGEND_FONT) as i32).max().unwrap_or(0);
    let (w, h) = (2 * pad + sample + gap + text_w, 2 * pad + row * entries.len() as i32 - 4);
    let x1 = area.2 - 8;
    let x0 = (x1 - w).max(area.0);
    let y0 = match corner {
        Corner::UpperRight => area.1 + 8,
        Corner::LowerRight => (area.3 - 8 - h).max(area.1),
    };
    root.draw(&Rectangle::new([(x0, y0), (x1, y0 + h)], WHITE.mix(0.85).filled()))?;
    root.draw(&Rectangle::new([(x0, y0), (x1, y0 + h)], Color::stroke_width(&RGBColor(0xb0, 0xb0, 0xb0), 1)))?;
    let font = ("sans-serif", LEGEND_FONT).into_font().color(&super::INK);
    for (k, e) in entries.iter().enumerate() {
        let cy = y0 + pad + row * k as i32 + 6;
        let style = Color::stroke_width(&e.colour, e.width.max(1));
        let (sx, ex) = (x0 + pad, x0 + pad + sample);
        if e.dashed {
            root.draw(&PathElement::new(vec![(sx, cy), (sx + 7, cy)], style))?;
            root.draw(&PathElement::new(vec![(ex - 7, cy), (ex, cy)], style))?;
        } else {
            root.draw(&PathElement::new(vec![(sx, cy), (ex, cy)], style))?;
        }
        let text = font.clone().pos(plotters::style::text_anchor::Pos::new(
            plotters::style::text_anchor::HPos::Left,
            plotters::style::text_anchor::VPos::Center,
        ));
        root.draw(&Text::new(e.label.to_string(), (ex + gap, cy), text))?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn widths_grow_with_the_text_and_the_size() {
        assert_eq!(text_width("", 12.0), 0);
        assert!(text_width("mmm", 12.0) > text_width("iii", 12.0));
        assert_eq!(text_width("10", 10.0), 12); // two digits of 0.556 em
        assert!(text_width("peak 4.2", 24.0) >= 2 * text_width("peak 4.2", 12.0) - 1);
    }

    #[test]
    fn a_measured_svg_has_its_legend() {
        let mut svg = String::new();
        {
            let root = measured(SVGBackend::with_string(&mut svg, (300, 200)));
            let entries = [LegendEntry { label: "level", colour: RGBColor(0, 0, 0), width: 2, dashed: false }];
            legend(&root, &entries, (40, 10, 290, 160), Corner::UpperRight).unwrap();
        }
        assert!(svg.contains(">level<") || svg.lines().any(|l| l.trim() == "level"), "{svg}");
        assert!(svg.contains("<rect"));
    }
}
