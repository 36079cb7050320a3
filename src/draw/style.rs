//! The look of every plot, in one place: the ordered curve slots (a colour
//! and a dash pattern each), the inks, the grid, and the fonts.
//!
//! The curve palette is our own, chosen for the page's paper-and-ink style:
//! a deep teal first, then violet, ochre, raspberry, sky and a dark olive.
//! Each slot also has its own dash pattern, so that curves stay apart in a
//! greyscale print and for readers who do not tell the colours apart.
//! `scripts/palette-check` reads the table below and checks it under
//! simulated deuteranopia and protanopia (CIEDE2000 distances of every pair),
//! and for lightness on white.

use plotters::style::RGBColor;

/// One curve slot: its colour and its dash pattern (alternating on and off
/// lengths in pixels, for a line 2 px wide; empty for solid).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Slot {
    /// Stroke colour.
    pub colour: RGBColor,
    /// Dash pattern, pixels; empty for a solid line.
    pub dash: &'static [f64],
}

const fn rgb(hex: u32) -> RGBColor {
    RGBColor((hex >> 16) as u8, (hex >> 8) as u8, hex as u8)
}

/// The curve slots in the order the views use them (slot 0 for a single
/// curve). Lengths of the dash patterns are for the round line caps of the
/// canvas and the SVG: a cap adds half the width at each end of a dash.
pub const SLOTS: [Slot; 6] = [
    Slot { colour: rgb(0x14705f), dash: &[] },                              // deep teal, solid
    Slot { colour: rgb(0x5239b4), dash: &[10.0, 5.0] },                     // violet, long dashes
    Slot { colour: rgb(0xa8832f), dash: &[5.0, 5.0] },                      // ochre, short dashes
    Slot { colour: rgb(0xcc4477), dash: &[10.0, 5.0, 1.0, 5.0] },           // raspberry, dash-dot
    Slot { colour: rgb(0x2b8db5), dash: &[1.0, 5.0] },                      // sky, dotted
    Slot { colour: rgb(0x504105), dash: &[14.0, 4.0, 1.0, 4.0, 1.0, 4.0] }, // dark olive, dash-dot-dot
];

/// Ink for text, reference curves (slot `-1`) and the frame.
pub const INK: RGBColor = rgb(0x1b1f24);
/// Ink for direction-field segments: light enough to stay behind the curves.
pub const FIELD_INK: RGBColor = rgb(0x8a949e);
/// Ink of event rules and their labels.
pub const RULE_INK: RGBColor = rgb(0x7a3020);
/// The light grid and the bold grid.
pub const GRID_LIGHT: RGBColor = rgb(0xeeeeee);
/// The grid at labelled ticks.
pub const GRID_BOLD: RGBColor = rgb(0xd8d8d8);
/// Dash pattern of a guide line (a line with `dashed` set, such as the
/// slope guides of the convergence plot), whatever its slot.
pub const GUIDE_DASH: &[f64] = &[3.0, 4.0];

/// Font size of tick labels, curve labels and mark labels, pixels.
pub const LABEL_FONT: f64 = 12.0;
/// Font size of the axis descriptions, pixels.
pub const AXIS_FONT: f64 = 15.0;

/// The slot for an index: the palette repeats; a negative index is ink,
/// solid.
pub fn slot(index: i32) -> Slot {
    if index < 0 {
        Slot { colour: INK, dash: &[] }
    } else {
        SLOTS[index as usize % SLOTS.len()]
    }
}

/// The colour for a slot index; negative means the ink colour.
pub fn colour(index: i32) -> RGBColor {
    slot(index).colour
}

/// The dash pattern a line of `width` pixels in slot `index` is drawn
/// with: the slot's own (or the guide's, for a `guide`), lengthened for
/// lines wider than 2 px so that the round caps do not close the gaps.
pub fn dash(index: i32, width: u32, guide: bool) -> Vec<f64> {
    let base = if guide { GUIDE_DASH } else { slot(index).dash };
    let grow = (width as f64 / 2.0).max(1.0);
    base.iter().map(|d| d * grow).collect()
}

/// A colour as `#RRGGBB` (the form plotters' SVG backend writes too).
pub fn hex(c: RGBColor) -> String {
    format!("#{:02X}{:02X}{:02X}", c.0, c.1, c.2)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_slot_has_its_own_colour_and_dash_pattern() {
        for (i, a) in SLOTS.iter().enumerate() {
            for b in &SLOTS[i + 1..] {
                assert_ne!(a.colour, b.colour);
                assert_ne!(a.dash, b.dash);
            }
            assert!(a.dash.len() % 2 == 0 && a.dash.iter().all(|d| *d > 0.0));
        }
        assert_eq!(slot(-1).colour, INK);
        assert_eq!(slot(SLOTS.len() as i32), SLOTS[0]);
        assert_eq!(dash(1, 4, false), vec![20.0, 10.0]);
        assert_eq!(dash(1, 1, true), GUIDE_DASH.to_vec());
    }

    #[test]
    fn the_palette_does_not_open_on_blue_then_orange() {
        // Hue of the first two slots from their RGB: neither the first is
        // blue (blue the largest channel by far) nor the second orange
        // (red largest, then green, little blue).
        let [a, b] = [SLOTS[0].colour, SLOTS[1].colour];
        let blue = |c: RGBColor| c.2 as i32 > c.0 as i32 + 40 && c.2 as i32 > c.1 as i32 + 40;
        let orange = |c: RGBColor| c.0 > c.1 && c.1 > c.2 && (c.0 as i32 - c.2 as i32) > 80;
        assert!(!(blue(a) && orange(b)));
        assert!(!blue(a) && !orange(b));
    }
}
