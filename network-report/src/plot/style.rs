//! The look shared by every chart: the embedded font and the axis, grid
//! and note colours.

use std::sync::OnceLock;

use plotters::style::{FontStyle, IntoFont, RGBColor, TextStyle};

use crate::error::PlotError;

/// The font family name under which the embedded font is registered.
pub(super) const FONT: &str = "sans-serif";
/// DejaVu Sans 2.37 (Bitstream Vera licence, see `fonts/LICENSE-DejaVu.txt`).
static FONT_BYTES: &[u8] = include_bytes!("../../fonts/DejaVuSans.ttf");

pub(super) const AXIS_COLOUR: RGBColor = RGBColor(0x33, 0x33, 0x33);
pub(super) const GRID_COLOUR: RGBColor = RGBColor(0xE4, 0xE4, 0xE4);
pub(super) const NOTE_COLOUR: RGBColor = RGBColor(0x55, 0x55, 0x55);

/// Registers the embedded font once per process.
pub(super) fn ensure_font() -> Result<(), PlotError> {
    static REGISTERED: OnceLock<bool> = OnceLock::new();
    let ok = *REGISTERED.get_or_init(|| {
        plotters::style::register_font(FONT, FontStyle::Normal, FONT_BYTES).is_ok()
    });
    if ok { Ok(()) } else { Err(PlotError::Font) }
}

pub(super) fn text(size: f64, colour: &'static RGBColor) -> TextStyle<'static> {
    TextStyle::from((FONT, size).into_font()).color(colour)
}
