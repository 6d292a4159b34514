//! A time-domain chart: step or impulse responses against a linear time axis, with optional
//! horizontal settle-band lines and vertical markers (10 % and 90 % rise, settling time).
//!
//! The time axis starts at 0 and is labelled in one engineering unit chosen from its span (ns, µs,
//! ms or s), so the labels read 0, 200, 400 … with "time (µs)" beneath. The value axis is linear
//! with 1-2-5 steps and spans the data and the band lines with a small pad. Curves are clipped at
//! the axes ([`crate::clip::split_into_runs`]). [`draw_time_chart`] returns a [`TimeLayout`] that
//! maps pointer pixels back to a time and a value.

use plotters::chart::{ChartBuilder, SeriesLabelPosition};
use plotters::coord::Shift;
use plotters::drawing::{DrawingArea, DrawingAreaErrorKind};
use plotters::element::{PathElement, Text};
use plotters::prelude::{DrawingBackend, Rectangle};
use plotters::series::{DashedLineSeries, LineSeries};
use plotters::style::{Color, IntoFont, RGBColor, ShapeStyle, TextStyle};

use crate::axis::{format_plain, nice_linear_ticks};
use crate::chart::SeriesStyle;
use crate::clip::split_into_runs;
use crate::coord::TickedAxis;
use crate::error::PlotError;
use crate::theme::Theme;

/// One curve of a time chart.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TimeSeries<'a> {
    /// Legend text; empty keeps it out of the legend.
    pub label: &'a str,
    /// Sample times in s, ascending.
    pub times_s: &'a [f64],
    /// One value per time; a non-finite value is a gap.
    pub values: &'a [f64],
    /// How it is drawn (as in the frequency charts: primary thick, overlay thin, ideal dashed).
    pub style: SeriesStyle,
}

/// A vertical marker at a time, with a short label at the top of the plot.
#[derive(Debug, Clone, PartialEq)]
pub struct TimeMarker {
    /// Where, in s; a marker outside the time axis is not drawn.
    pub time_s: f64,
    /// The label ("10 %", "90 %", "settled").
    pub label: String,
}

/// Options of a time chart.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct TimeChartOptions {
    /// The colour theme.
    pub theme: Theme,
    /// The value axis description, e.g. "step response (V/V)".
    pub y_description: String,
    /// The time range `(0, end)` in s, or `None` for 0 … the last sample.
    pub t_range_s: Option<(f64, f64)>,
    /// Two values drawn as dashed horizontal lines, e.g. final value ± the settling band.
    pub band: Option<(f64, f64)>,
    /// Vertical markers.
    pub markers: Vec<TimeMarker>,
}

/// Where a time chart was drawn, to map a pointer back to data.
#[derive(Debug, Clone, PartialEq)]
pub struct TimeLayout {
    /// The plotting rectangle (left, top, right, bottom) in backend pixels, all inclusive.
    pub plot_px: (i32, i32, i32, i32),
    /// The time axis in s.
    pub t_range_s: (f64, f64),
    /// The value axis.
    pub y_range: (f64, f64),
    /// The unit the time labels are written in, e.g. "µs".
    pub time_unit: &'static str,
}

impl TimeLayout {
    /// The time in s under the pixel column `x_px`; `None` outside the plotting rectangle.
    pub fn time_at(&self, x_px: f64) -> Option<f64> {
        let (left, _, right, _) = self.plot_px;
        if !x_px.is_finite() || right <= left || x_px < f64::from(left) || x_px > f64::from(right) {
            return None;
        }
        let fraction = (x_px - f64::from(left)) / f64::from(right - left);
        Some(self.t_range_s.0 + fraction * (self.t_range_s.1 - self.t_range_s.0))
    }

    /// The value under the pixel row `y_px`; `None` outside the plotting rectangle.
    pub fn value_at(&self, y_px: f64) -> Option<f64> {
        let (_, top, _, bottom) = self.plot_px;
        if !y_px.is_finite() || bottom <= top || y_px < f64::from(top) || y_px > f64::from(bottom) {
            return None;
        }
        let fraction = (f64::from(bottom) - y_px) / f64::from(bottom - top);
        Some(self.y_range.0 + fraction * (self.y_range.1 - self.y_range.0))
    }

    /// The pixel column (not rounded) of the time `time_s`.
    pub fn x_px_for(&self, time_s: f64) -> f64 {
        let (left, _, right, _) = self.plot_px;
        f64::from(left) + (time_s - self.t_range_s.0) / (self.t_range_s.1 - self.t_range_s.0) * f64::from(right - left)
    }
}

/// Returns the unit symbol and scale (seconds per unit) for labelling a time axis of `span_s`:
/// the engineering unit that leaves 1 to 999 units across the span, from fs to s.
pub fn time_unit(span_s: f64) -> (&'static str, f64) {
    const UNITS: [(&str, f64); 6] =
        [("fs", 1e-15), ("ps", 1e-12), ("ns", 1e-9), ("µs", 1e-6), ("ms", 1e-3), ("s", 1.0)];
    if !(span_s.is_finite() && span_s > 0.0) {
        return ("s", 1.0);
    }
    // The largest unit that is at most the span (with a little slack for 1.000 ms).
    UNITS.iter().rev().find(|(_, scale)| span_s >= scale * (1.0 - 1e-9)).copied().unwrap_or(UNITS[0])
}

/// Draws the series onto `area` and returns where the plot went.
///
/// # Errors
/// [`PlotError::LengthMismatch`] for a series with more or fewer values than times,
/// [`PlotError::BadRange`] for a time range that is not finite with 0 ≤ start < end,
/// [`PlotError::EmptyTimeData`] when no series has a finite point, [`PlotError::AreaTooSmall`] and
/// [`PlotError::Drawing`].
pub fn draw_time_chart<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    series: &[TimeSeries],
    options: &TimeChartOptions,
) -> Result<TimeLayout, PlotError> {
    for one in series {
        if one.times_s.len() != one.values.len() {
            return Err(PlotError::LengthMismatch {
                label: one.label.to_string(),
                n_frequencies: one.times_s.len(),
                n_values: one.values.len(),
            });
        }
    }
    let points = || {
        series.iter().flat_map(|one| {
            one.times_s.iter().zip(one.values).filter(|(t, v)| t.is_finite() && v.is_finite()).map(|(t, v)| (*t, *v))
        })
    };
    let t_range_s = match options.t_range_s {
        Some((lo, hi)) => {
            if !(lo.is_finite() && hi.is_finite() && lo >= 0.0 && lo < hi) {
                return Err(PlotError::BadRange {
                    what: "time range".to_string(),
                    lo,
                    hi,
                    accepted: "give finite limits in s with 0 ≤ start < end",
                });
            }
            (lo, hi)
        }
        None => {
            let end = points().map(|(t, _)| t).fold(f64::NEG_INFINITY, f64::max);
            if !(end.is_finite() && end > 0.0) {
                return Err(PlotError::EmptyTimeData);
            }
            (0.0, end)
        }
    };
    let mut low = f64::INFINITY;
    let mut high = f64::NEG_INFINITY;
    for (t, v) in points() {
        if t >= t_range_s.0 && t <= t_range_s.1 {
            low = low.min(v);
            high = high.max(v);
        }
    }
    if !(low.is_finite() && high.is_finite()) {
        return Err(PlotError::EmptyTimeData);
    }
    if let Some((a, b)) = options.band.filter(|(a, b)| a.is_finite() && b.is_finite()) {
        low = low.min(a.min(b));
        high = high.max(a.max(b));
    }
    let y_range = value_range(low, high);

    let (width, height) = area.dim_in_pixel();
    let min_width = MIN_PLOT_WIDTH + Y_LABEL_AREA + MARGIN_LEFT + MARGIN_RIGHT;
    let min_height = MIN_PLOT_HEIGHT + X_LABEL_AREA + MARGIN_TOP + MARGIN_BOTTOM;
    if width < min_width || height < min_height {
        return Err(PlotError::AreaTooSmall { width, height, min_width, min_height });
    }

    let colours = options.theme.colours();
    area.fill(&colours.background).map_err(drawing_error)?;
    let (unit, scale) = time_unit(t_range_s.1 - t_range_s.0);
    let x_major = nice_linear_ticks(t_range_s.0 / scale, t_range_s.1 / scale, MAX_X_TICKS);
    let x_ticks: Vec<f64> = x_major.iter().map(|t| t * scale).collect();
    let y_ticks = nice_linear_ticks(y_range.0, y_range.1, MAX_Y_TICKS);
    let x_spec = TickedAxis::new(t_range_s, x_ticks, Vec::new());
    let y_spec = TickedAxis::new(y_range, y_ticks, Vec::new());
    let mut chart = ChartBuilder::on(area)
        .margin_top(MARGIN_TOP)
        .margin_bottom(MARGIN_BOTTOM)
        .margin_left(MARGIN_LEFT)
        .margin_right(MARGIN_RIGHT)
        .x_label_area_size(X_LABEL_AREA)
        .y_label_area_size(Y_LABEL_AREA)
        .build_cartesian_2d(x_spec, y_spec)
        .map_err(drawing_error)?;
    let x_formatter = |t: &f64| format_plain(*t / scale);
    let y_formatter = |v: &f64| format_plain(*v);
    let label_style = font(LABEL_FONT_PX, colours.text);
    let x_description = format!("time ({unit})");
    chart
        .configure_mesh()
        .x_label_formatter(&x_formatter)
        .y_label_formatter(&y_formatter)
        .bold_line_style(colours.grid_major.stroke_width(1))
        .light_line_style(colours.grid_minor.stroke_width(1))
        .axis_style(colours.axis.stroke_width(1))
        .set_all_tick_mark_size(4)
        .label_style(label_style.clone())
        .axis_desc_style(label_style)
        .x_desc(x_description)
        .y_desc(options.y_description.as_str())
        .draw()
        .map_err(drawing_error)?;
    chart
        .draw_series(std::iter::once(Rectangle::new(
            [(t_range_s.0, y_range.0), (t_range_s.1, y_range.1)],
            colours.axis.stroke_width(1),
        )))
        .map_err(drawing_error)?;

    if let Some((a, b)) = options.band {
        for level in [a, b] {
            if level.is_finite() && level >= y_range.0 && level <= y_range.1 {
                chart
                    .draw_series(DashedLineSeries::new(
                        [(t_range_s.0, level), (t_range_s.1, level)],
                        DASH_PX,
                        DASH_GAP_PX,
                        colours.cursor.mix(0.8).stroke_width(1),
                    ))
                    .map_err(drawing_error)?;
            }
        }
    }
    for marker in &options.markers {
        let t = marker.time_s;
        if !(t.is_finite() && t >= t_range_s.0 && t <= t_range_s.1) {
            continue;
        }
        chart
            .draw_series(LineSeries::new([(t, y_range.0), (t, y_range.1)], colours.ideal.mix(0.7).stroke_width(1)))
            .map_err(drawing_error)?;
        chart
            .draw_series(std::iter::once(Text::new(
                marker.label.clone(),
                (t, y_range.1),
                font(MARKER_FONT_PX, colours.text),
            )))
            .map_err(drawing_error)?;
    }

    let mut next_colour = 0;
    let strokes: Vec<(RGBColor, u32, bool)> = series
        .iter()
        .map(|one| match one.style {
            SeriesStyle::Ideal => (colours.ideal, 1, true),
            style => {
                let colour = colours.series[next_colour % colours.series.len()];
                next_colour += 1;
                (colour, if style == SeriesStyle::Primary { 2 } else { 1 }, false)
            }
        })
        .collect();
    let show_legend = series.iter().filter(|one| !one.label.is_empty()).count() > 1;
    // Overlays first, the primary curve on top.
    let mut order: Vec<usize> = (0..series.len()).collect();
    order.sort_by_key(|&idx| u8::from(series[idx].style == SeriesStyle::Primary));
    for idx in order {
        let one = &series[idx];
        let (colour, width, dashed) = strokes[idx];
        let style: ShapeStyle = colour.stroke_width(width);
        let values: Vec<Option<f64>> = one.values.iter().map(|v| v.is_finite().then_some(*v)).collect();
        let runs = split_into_runs(one.times_s, &values, t_range_s, y_range);
        let mut first = true;
        for run in runs {
            let drawn = if dashed {
                chart.draw_series(DashedLineSeries::new(run, DASH_PX, DASH_GAP_PX, style)).map_err(drawing_error)?
            } else {
                chart.draw_series(LineSeries::new(run, style)).map_err(drawing_error)?
            };
            if first && show_legend && !one.label.is_empty() {
                drawn.label(one.label).legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 18, y)], style));
                first = false;
            }
        }
    }
    if show_legend {
        chart
            .configure_series_labels()
            .position(SeriesLabelPosition::LowerRight)
            .margin(6)
            .legend_area_size(24)
            .label_font(font(LEGEND_FONT_PX, colours.text))
            .background_style(colours.background.mix(0.85).filled())
            .border_style(colours.grid_major.stroke_width(1))
            .draw()
            .map_err(drawing_error)?;
    }
    let (x_pixels, y_pixels) = chart.plotting_area().get_pixel_range();
    Ok(TimeLayout {
        plot_px: (x_pixels.start, y_pixels.start, x_pixels.end - 1, y_pixels.end - 1),
        t_range_s,
        y_range,
        time_unit: unit,
    })
}

const Y_LABEL_AREA: u32 = 66;
const X_LABEL_AREA: u32 = 42;
const MARGIN_RIGHT: u32 = 34;
const MARGIN_LEFT: u32 = 6;
/// Room above the plot for the marker labels.
const MARGIN_TOP: u32 = 18;
const MARGIN_BOTTOM: u32 = 4;
const MIN_PLOT_WIDTH: u32 = 80;
const MIN_PLOT_HEIGHT: u32 = 60;
const MAX_X_TICKS: usize = 9;
const MAX_Y_TICKS: usize = 7;
const LABEL_FONT_PX: u32 = 12;
const LEGEND_FONT_PX: u32 = 11;
const MARKER_FONT_PX: u32 = 10;
const DASH_PX: u32 = 6;
const DASH_GAP_PX: u32 = 4;
/// The value axis is padded by this fraction of the data span on each side.
const VALUE_PAD: f64 = 0.06;

/// A padded value range around `low … high`, never empty.
fn value_range(low: f64, high: f64) -> (f64, f64) {
    let span = high - low;
    if span > 0.0 && span.is_finite() {
        (low - VALUE_PAD * span, high + VALUE_PAD * span)
    } else {
        let half = if low.abs() > 0.0 { low.abs() * 0.1 } else { 1.0 };
        (low - half, high + half)
    }
}

fn font(size_px: u32, colour: RGBColor) -> TextStyle<'static> {
    ("sans-serif", size_px).into_font().color(&colour)
}

fn drawing_error<E: std::error::Error + Send + Sync>(error: DrawingAreaErrorKind<E>) -> PlotError {
    PlotError::Drawing(error.to_string())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_time_unit_leaves_one_to_999_units_across_the_span() {
        assert_eq!(time_unit(6e-3), ("ms", 1e-3));
        assert_eq!(time_unit(8e-4), ("µs", 1e-6));
        assert_eq!(time_unit(1e-3), ("ms", 1e-3));
        assert_eq!(time_unit(250e-9), ("ns", 1e-9));
        assert_eq!(time_unit(40.0), ("s", 1.0));
        assert_eq!(time_unit(f64::NAN), ("s", 1.0));
    }

    #[test]
    fn the_value_range_is_padded_and_never_empty() {
        let (lo, hi) = value_range(0.0, 1.0);
        assert!((lo + 0.06).abs() < 1e-12 && (hi - 1.06).abs() < 1e-12);
        let (lo, hi) = value_range(2.0, 2.0);
        assert!(lo < 2.0 && hi > 2.0);
        let (lo, hi) = value_range(0.0, 0.0);
        assert!(lo < 0.0 && hi > 0.0);
    }

    #[test]
    fn the_layout_maps_pixels_back_to_time_and_value() {
        let layout =
            TimeLayout { plot_px: (100, 20, 600, 220), t_range_s: (0.0, 1e-3), y_range: (-0.1, 1.1), time_unit: "µs" };
        assert_eq!(layout.time_at(100.0), Some(0.0));
        assert!((layout.time_at(350.0).unwrap() - 0.5e-3).abs() < 1e-15);
        assert_eq!(layout.time_at(99.0), None);
        assert!((layout.value_at(120.0).unwrap() - 0.5).abs() < 1e-12);
        assert_eq!(layout.value_at(221.0), None);
        assert!((layout.x_px_for(0.25e-3) - 225.0).abs() < 1e-9);
    }
}
