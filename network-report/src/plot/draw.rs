//! Drawing a prepared chart on a `plotters` backend (SVG or bitmap): the
//! mesh with its tick labels, bands, lines, markers, the legend and the
//! notes under the chart.

use plotters::coord::Shift;
use plotters::coord::ranged1d::{AsRangedCoord, Ranged, ValueFormatter};
use plotters::element::{Circle, DashedPathElement, EmptyElement, PathElement, Polygon};
use plotters::prelude::{ChartBuilder, DrawingArea, DrawingBackend, IntoLogRange};
use plotters::style::{Color, ShapeStyle, TRANSPARENT, WHITE};

use super::legend::legend_corner;
use super::prepare::Prepared;
use super::style::{AXIS_COLOUR, GRID_COLOUR, NOTE_COLOUR, ensure_font, text};
use super::ticks::tick_label;
use super::{DEFAULT_SIZE, PlotSpec, Scale, SeriesStyle};
use crate::error::PlotError;

pub(super) fn check_size(width: u32, height: u32) -> Result<(), PlotError> {
    if width < 64 || height < 64 || width > 16_384 || height > 16_384 {
        return Err(PlotError::InvalidSize { width, height });
    }
    Ok(())
}

pub(super) fn render_err<E: std::fmt::Display>(e: E) -> PlotError {
    PlotError::Render(e.to_string())
}

pub(super) fn draw<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    spec: &PlotSpec,
    prepared: &Prepared,
) -> Result<(), PlotError>
where
    DB::ErrorType: 'static,
{
    ensure_font()?;
    root.fill(&WHITE).map_err(render_err)?;
    let (_, height) = root.dim_in_pixel();
    let scale = (height as f64 / DEFAULT_SIZE.1 as f64).clamp(0.5, 4.0);
    let note_line = (14.0 * scale).round() as u32;
    let n_notes = prepared.notes.len().min(4) as u32;
    let (chart_area, note_area) = if n_notes > 0 {
        let (a, b) = root.split_vertically(height.saturating_sub(n_notes * note_line + 6));
        (a, Some(b))
    } else {
        (root.clone(), None)
    };
    let (x, y) = (prepared.x, prepared.y);
    match (x.scale, y.scale) {
        (Scale::Linear, Scale::Linear) => draw_chart(
            &chart_area,
            spec,
            prepared,
            x.min..x.max,
            y.min..y.max,
            scale,
        )?,
        (Scale::Linear, Scale::Log) => draw_chart(
            &chart_area,
            spec,
            prepared,
            x.min..x.max,
            (y.min..y.max).log_scale(),
            scale,
        )?,
        (Scale::Log, Scale::Linear) => draw_chart(
            &chart_area,
            spec,
            prepared,
            (x.min..x.max).log_scale(),
            y.min..y.max,
            scale,
        )?,
        (Scale::Log, Scale::Log) => draw_chart(
            &chart_area,
            spec,
            prepared,
            (x.min..x.max).log_scale(),
            (y.min..y.max).log_scale(),
            scale,
        )?,
    }
    if let Some(area) = note_area {
        let style = text(11.0 * scale, &NOTE_COLOUR);
        let mut notes: Vec<String> = prepared.notes.iter().take(4).cloned().collect();
        if prepared.notes.len() > 4 {
            let extra = prepared.notes.len() - 3;
            notes[3] = format!("… and {extra} more notes");
        }
        for (k, note) in notes.iter().enumerate() {
            area.draw_text(
                &format!("Note: {note}"),
                &style,
                ((10.0 * scale) as i32, (k as u32 * note_line) as i32),
            )
            .map_err(render_err)?;
        }
    }
    Ok(())
}

fn draw_chart<DB, XS, YS>(
    area: &DrawingArea<DB, Shift>,
    spec: &PlotSpec,
    prepared: &Prepared,
    x_spec: XS,
    y_spec: YS,
    scale: f64,
) -> Result<(), PlotError>
where
    DB: DrawingBackend,
    DB::ErrorType: 'static,
    XS: AsRangedCoord<Value = f64>,
    YS: AsRangedCoord<Value = f64>,
    XS::CoordDescType: Ranged<ValueType = f64> + ValueFormatter<f64>,
    YS::CoordDescType: Ranged<ValueType = f64> + ValueFormatter<f64>,
{
    let px = |v: f64| (v * scale).round() as u32;
    let mut chart = ChartBuilder::on(area)
        .caption(&spec.title, text(18.0 * scale, &AXIS_COLOUR))
        .margin(px(14.0))
        .x_label_area_size(px(46.0))
        .y_label_area_size(px(70.0))
        .build_cartesian_2d(x_spec, y_spec)
        .map_err(render_err)?;
    let x_scale = prepared.x.scale;
    let y_scale = prepared.y.scale;
    let fx = move |v: &f64| tick_label(*v, x_scale);
    let fy = move |v: &f64| tick_label(*v, y_scale);
    // Faint grid at the major ticks only, thin dark axes.
    chart
        .configure_mesh()
        .max_light_lines(0)
        .light_line_style(TRANSPARENT)
        .bold_line_style(GRID_COLOUR.stroke_width(1))
        .axis_style(AXIS_COLOUR.stroke_width(1))
        .x_desc(spec.x_label.as_str())
        .y_desc(spec.y_label.as_str())
        .axis_desc_style(text(14.0 * scale, &AXIS_COLOUR))
        .label_style(text(12.0 * scale, &AXIS_COLOUR))
        .x_label_formatter(&fx)
        .y_label_formatter(&fy)
        .x_labels(8)
        .y_labels(8)
        .draw()
        .map_err(render_err)?;

    let line_w = px(2.0).max(1);
    let marker_r = px(3.5).max(2);
    let sample_len = px(28.0).max(14) as i32;
    let mut any_label = false;
    for (s, p) in spec.series.iter().zip(&prepared.series) {
        let colour = p.colour;
        // Bands first, translucent, without a legend entry.
        let fill = colour.mix(0.2).filled();
        chart
            .draw_series(p.bands.iter().map(|poly| Polygon::new(poly.clone(), fill)))
            .map_err(render_err)?;
        let stroke = ShapeStyle::from(&colour).stroke_width(line_w);
        let style = s.style;
        // Legend sample: a 28-px line (solid, or two dashes) and a dot for
        // the marker styles, relative to the legend anchor. With markers the
        // dashes are short, so the gaps beside the dot stay visible.
        let legend = move |c: (i32, i32)| {
            let line = ShapeStyle::from(&colour).stroke_width(line_w);
            let none = ShapeStyle::from(&TRANSPARENT);
            let (first, dash, second) = match style {
                SeriesStyle::Line | SeriesStyle::LineMarkers => (line, sample_len / 2, line),
                SeriesStyle::Dashed => (line, sample_len * 2 / 5, line),
                SeriesStyle::DashedMarkers => (line, sample_len / 5, line),
                SeriesStyle::Markers => (none, 0, none),
            };
            let dot = match style {
                SeriesStyle::Markers | SeriesStyle::LineMarkers | SeriesStyle::DashedMarkers => {
                    colour.filled()
                }
                _ => none,
            };
            EmptyElement::at(c)
                + PathElement::new(vec![(0, 0), (dash, 0)], first)
                + PathElement::new(vec![(sample_len - dash, 0), (sample_len, 0)], second)
                + Circle::new((sample_len / 2, 0), marker_r, dot)
        };
        let anno = match s.style {
            SeriesStyle::Dashed | SeriesStyle::DashedMarkers => chart
                .draw_series(p.lines.iter().map(|l| {
                    DashedPathElement::new(l.clone(), px(7.0).max(2), px(5.0).max(2), stroke)
                }))
                .map_err(render_err)?,
            SeriesStyle::Line | SeriesStyle::LineMarkers => chart
                .draw_series(p.lines.iter().map(|l| PathElement::new(l.clone(), stroke)))
                .map_err(render_err)?,
            SeriesStyle::Markers => chart
                .draw_series(std::iter::empty::<PathElement<(f64, f64)>>())
                .map_err(render_err)?,
        };
        if !s.label.is_empty() {
            any_label = true;
            anno.label(s.label.as_str()).legend(legend);
        }
        if !p.markers.is_empty() {
            chart
                .draw_series(
                    p.markers
                        .iter()
                        .map(|&pt| Circle::new(pt, marker_r, colour.filled())),
                )
                .map_err(render_err)?;
        }
    }
    if any_label {
        chart
            .configure_series_labels()
            .position(legend_corner(prepared))
            .margin(px(10.0))
            .legend_area_size(px(40.0))
            .background_style(WHITE.mix(0.9))
            .border_style(AXIS_COLOUR.stroke_width(1))
            .label_font(text(12.0 * scale, &AXIS_COLOUR))
            .draw()
            .map_err(render_err)?;
    }
    Ok(())
}
