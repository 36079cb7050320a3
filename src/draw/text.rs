//! Text sizes without a text engine.
//!
//! plotters measures text through its font backend, which in the browser
//! adds an element to the page and reads its size back: a forced layout of
//! the whole page for every label, and a panic in a Web Worker, which has no
//! page. [`Measured`] wraps any backend and answers text sizes from a table
//! of advance widths instead, so a drawing costs the same everywhere and
//! gives the same layout on the canvas, in SVG and in a worker. The label
//! layout of the plots ([`super::labels`]) uses the same table.

use plotters_backend::{BackendColor, BackendCoord, BackendStyle as Style, BackendTextStyle, DrawingBackend, DrawingErrorKind};
use plotters::coord::Shift;
use plotters::prelude::*;

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
}
