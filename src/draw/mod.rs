//! Plots, drawn once for any plotters backend: the canvas in the page, SVG
//! natively (for exports and tests).
//!
//! Every view of the page describes what it wants as a [`Figure`] (lines,
//! marks, event rules, a direction field) and [`figure`] draws it. The same
//! figure drawn on the SVG backend is the SVG download, so the two always
//! agree.
//!
//! Submodules, one concern each:
//! - [`model`]: the figure model ([`Figure`], [`Line`], [`Mark`], [`Rule`])
//!   and where a figure landed ([`Frame`]);
//! - [`style`]: the curve slots (colour and dash pattern), inks, grid and fonts;
//! - [`axes`]: shown ranges, ticks and tick labels, robust to any numbers;
//! - [`clip`]: clipping curves to the plotting area, and cutting dashes;
//! - [`labels`]: layout of the event labels and of the curve key;
//! - [`render`]: drawing a figure on a backend ([`figure`], [`Strokes`]);
//! - [`svg`]: the SVG document ([`figure_svg`]);
//! - [`text`]: text sizes from a table of advance widths ([`text::Measured`]);
//! - [`study`]: the accuracy study's stability region and convergence plot.

use plotters::drawing::DrawingAreaErrorKind;

pub mod axes;
pub mod clip;
pub mod labels;
pub mod model;
pub mod render;
pub mod study;
pub mod style;
pub mod svg;
pub mod text;
#[cfg(test)]
mod tests;

pub use axes::{finite_range, tick_label};
pub use clip::clip_polyline;
pub use labels::{rule_labels, LabelPlace, RULE_ROWS};
pub use model::{Figure, Frame, Line, Mark, MarkShape, Rule};
pub use render::{field_strokes, figure, figure_with, Strokes, ANCHOR};
pub use style::{colour, FIELD_INK, SLOTS};
pub use svg::figure_svg;

/// Why a plot could not be drawn.
#[derive(Debug)]
pub struct DrawError(pub String);

impl<E: std::error::Error + Send + Sync> From<DrawingAreaErrorKind<E>> for DrawError {
    fn from(e: DrawingAreaErrorKind<E>) -> Self {
        DrawError(e.to_string())
    }
}
