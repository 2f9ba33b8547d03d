//! Subscripts in chart text: a drawing backend that wraps another and
//! draws the markup `_{…}` (for example `S_{nr}`, `k_{r,oil}`) as a
//! smaller run set below the baseline. Every text of a chart (title, axis
//! labels, legend, notes) passes through it; text without markup goes to
//! the wrapped backend unchanged. Widths are measured with the embedded
//! font, so legend boxes and centred titles fit the drawn text.

use plotters::style::{FontDesc, TextStyle};
use plotters_backend::text_anchor::{HPos, Pos, VPos};
use plotters_backend::{
    BackendColor, BackendCoord, BackendStyle, BackendTextStyle, DrawingBackend, DrawingErrorKind,
};

/// Size of a subscript relative to the text around it.
const SUB_SIZE: f64 = 0.72;
/// How far a subscript's top sits below the top of the text around it, as
/// a fraction of that text's height.
const SUB_DROP: f64 = 0.42;

/// One run of text: plain or subscript.
#[derive(Debug, Clone, PartialEq, Eq)]
pub(crate) struct Run<'a> {
    pub(crate) text: &'a str,
    pub(crate) sub: bool,
}

/// Splits `s` into plain and subscript runs. `_{` opens a subscript that
/// the next `}` closes; an unclosed `_{` and a lone `_` are plain text.
pub(crate) fn runs(s: &str) -> Vec<Run<'_>> {
    let mut out = Vec::new();
    let mut rest = s;
    while let Some(at) = rest.find("_{") {
        let Some(close) = rest[at + 2..].find('}') else {
            break;
        };
        if at > 0 {
            out.push(Run {
                text: &rest[..at],
                sub: false,
            });
        }
        out.push(Run {
            text: &rest[at + 2..at + 2 + close],
            sub: true,
        });
        rest = &rest[at + 3 + close..];
    }
    if !rest.is_empty() {
        out.push(Run {
            text: rest,
            sub: false,
        });
    }
    out
}

/// `s` with the markup removed (`S_{nr}` → `Snr`), for places that cannot
/// draw subscripts.
pub fn plain(s: &str) -> String {
    runs(s).iter().map(|r| r.text).collect()
}

/// A backend that draws `_{…}` as subscripts (see the [module docs](self)).
pub(crate) struct Rich<B>(pub(crate) B);

/// The style of one run: the caller's family, style, colour and rotation
/// at `size`, anchored at its top-left corner.
fn run_style<'a, S: BackendTextStyle>(family: &'a str, style: &S, size: f64) -> TextStyle<'a> {
    TextStyle {
        font: FontDesc::new(family.into(), size, style.style()).transform(style.transform()),
        color: style.color(),
        pos: Pos::new(HPos::Left, VPos::Top),
    }
}

impl<B: DrawingBackend> Rich<B> {
    /// Width of each run and the height of the plain text, in pixels.
    fn measure<S: BackendTextStyle>(
        &self,
        runs: &[Run<'_>],
        style: &S,
    ) -> Result<(Vec<u32>, u32), DrawingErrorKind<B::ErrorType>> {
        let family = style.family();
        let base = run_style(family.as_str(), style, style.size());
        let sub = run_style(family.as_str(), style, style.size() * SUB_SIZE);
        let mut widths = Vec::with_capacity(runs.len());
        // The height of the plain text, or of "x" when all is subscript.
        let (_, mut height) = self.0.estimate_text_size("x", &base)?;
        for r in runs {
            let (w, h) = if r.sub {
                self.0.estimate_text_size(r.text, &sub)?
            } else {
                self.0.estimate_text_size(r.text, &base)?
            };
            if !r.sub {
                height = height.max(h);
            }
            widths.push(w);
        }
        Ok((widths, height))
    }
}

impl<B: DrawingBackend> DrawingBackend for Rich<B> {
    type ErrorType = B::ErrorType;

    fn get_size(&self) -> (u32, u32) {
        self.0.get_size()
    }

    fn ensure_prepared(&mut self) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        self.0.ensure_prepared()
    }

    fn present(&mut self) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        self.0.present()
    }

    fn draw_pixel(
        &mut self,
        point: BackendCoord,
        color: BackendColor,
    ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        self.0.draw_pixel(point, color)
    }

    fn draw_line<S: BackendStyle>(
        &mut self,
        from: BackendCoord,
        to: BackendCoord,
        style: &S,
    ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        self.0.draw_line(from, to, style)
    }

    fn draw_rect<S: BackendStyle>(
        &mut self,
        upper_left: BackendCoord,
        bottom_right: BackendCoord,
        style: &S,
        fill: bool,
    ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        self.0.draw_rect(upper_left, bottom_right, style, fill)
    }

    fn draw_path<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        path: I,
        style: &S,
    ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        self.0.draw_path(path, style)
    }

    fn draw_circle<S: BackendStyle>(
        &mut self,
        center: BackendCoord,
        radius: u32,
        style: &S,
        fill: bool,
    ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        self.0.draw_circle(center, radius, style, fill)
    }

    fn fill_polygon<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        vert: I,
        style: &S,
    ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        self.0.fill_polygon(vert, style)
    }

    fn blit_bitmap(
        &mut self,
        pos: BackendCoord,
        size: (u32, u32),
        src: &[u8],
    ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        self.0.blit_bitmap(pos, size, src)
    }

    fn estimate_text_size<S: BackendTextStyle>(
        &self,
        text: &str,
        style: &S,
    ) -> Result<(u32, u32), DrawingErrorKind<Self::ErrorType>> {
        let runs = runs(text);
        if runs.iter().all(|r| !r.sub) {
            return self.0.estimate_text_size(text, style);
        }
        let (widths, height) = self.measure(&runs, style)?;
        let drop = (height as f64 * (SUB_DROP + SUB_SIZE - 1.0))
            .max(0.0)
            .round() as u32;
        Ok((widths.iter().sum(), height + drop))
    }

    fn draw_text<S: BackendTextStyle>(
        &mut self,
        text: &str,
        style: &S,
        pos: BackendCoord,
    ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        let runs = runs(text);
        if runs.iter().all(|r| !r.sub) {
            return self.0.draw_text(text, style, pos);
        }
        let (widths, height) = self.measure(&runs, style)?;
        let total: i32 = widths.iter().map(|&w| w as i32).sum();
        let height = height as i32;
        // Offsets of the top-left corner in the text's own frame (x along
        // the reading direction, y down), then rotated like the text.
        let dx = match style.anchor().h_pos {
            HPos::Left => 0,
            HPos::Center => -total / 2,
            HPos::Right => -total,
        };
        let dy = match style.anchor().v_pos {
            VPos::Top => 0,
            VPos::Center => -height / 2,
            VPos::Bottom => -height,
        };
        let family = style.family();
        let base = run_style(family.as_str(), style, style.size());
        let sub = run_style(family.as_str(), style, style.size() * SUB_SIZE);
        let drop = (height as f64 * SUB_DROP).round() as i32;
        let turn = style.transform();
        let mut x = dx;
        for (r, w) in runs.iter().zip(&widths) {
            let y = if r.sub { dy + drop } else { dy };
            let (ox, oy) = turn.transform(x, y);
            let at = (pos.0 + ox, pos.1 + oy);
            if r.sub {
                self.0.draw_text(r.text, &sub, at)?;
            } else {
                self.0.draw_text(r.text, &base, at)?;
            }
            x += *w as i32;
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn runs_split_plain_and_subscript_text() {
        let r = runs("k_{r,oil} at S_{nr} (–)");
        let texts: Vec<(&str, bool)> = r.iter().map(|r| (r.text, r.sub)).collect();
        assert_eq!(
            texts,
            vec![
                ("k", false),
                ("r,oil", true),
                (" at S", false),
                ("nr", true),
                (" (–)", false)
            ]
        );
        assert_eq!(plain("k_{r,oil} at S_{nr}"), "kr,oil at Snr");
    }

    #[test]
    fn unclosed_markup_and_lone_underscores_stay_plain() {
        assert_eq!(plain("a_b and c_{d"), "a_b and c_{d");
        assert_eq!(runs("a_b").len(), 1);
        assert!(runs("").is_empty());
        assert_eq!(plain("_{w}"), "w");
    }
}
