//! Drawing a set of stacked panels that share one log-frequency axis.
//!
//! [`draw_panels`] validates the input, works out the ranges, splits the drawing area into
//! one strip per panel (only the bottom strip carries the frequency labels), and draws
//! grid, clipped curves, the optional cursor and a small legend. It works on any plotters
//! `DrawingBackend` and touches nothing else: no files, no clock, no threads.
//!
//! Each chart is drawn in axis coordinates: x is log10 f and, on the |Z| panel, y is
//! log10 |Z|. Curves are split into in-range runs by [`crate::clip::split_into_runs`] in
//! those coordinates before plotters sees them.

use plotters::chart::{ChartBuilder, ChartContext, SeriesLabelPosition};
use plotters::coord::{cartesian::Cartesian2d, Shift};
use plotters::drawing::{DrawingArea, DrawingAreaErrorKind};
use plotters::element::{Circle, DashedPathElement, DynElement, IntoDynElement, PathElement, Polygon};
use plotters::prelude::{DrawingBackend, Rectangle};
use plotters::series::{DashedLineSeries, LineSeries};
use plotters::style::{Color, IntoFont, RGBColor, ShapeStyle, TextStyle};

use crate::axis::{format_engineering, format_frequency_label, format_plain, nice_frequency_ticks};
use crate::band::{band_polygons, Band};
use crate::clip::split_into_runs;
use crate::coord::TickedAxis;
use crate::error::PlotError;
use crate::layout::{PanelGeometry, PanelLayout};
use crate::quantity::Quantity;
use crate::range::{auto_frequency_range, auto_y_range, y_ticks};
use crate::region::{clip_region, region_colour, Region, REGION_FILL_ALPHA};
use crate::theme::{Theme, ThemeColours};

/// One curve of a panel: values sampled at frequencies.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Series<'a> {
    /// Legend text; an empty label keeps the series out of the legend.
    pub label: &'a str,
    /// Sample frequencies in Hz, normally ascending. A frequency that is not positive and
    /// finite makes its point a gap.
    pub f_hz: &'a [f64],
    /// One value per frequency in the panel quantity's unit. `None` (a point that could not
    /// be solved) or a non-finite value is a gap: the line breaks there.
    pub values: &'a [Option<f64>],
    /// How the curve is drawn.
    pub style: SeriesStyle,
}

/// How a series is drawn.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum SeriesStyle {
    /// The main response: thick, in the next curve colour, drawn on top.
    Primary,
    /// The ideal (target) response: thin, dashed, neutral colour.
    Ideal,
    /// A kept variant for A/B comparison: thin, in the next curve colour.
    Overlay,
    /// One edge of a tolerance band: thin and translucent, in the colour of the series
    /// before it.
    Band,
}

/// One panel of the chart: a quantity and the series that show it.
#[derive(Debug, Clone, PartialEq)]
pub struct Panel<'a> {
    /// What the y axis shows.
    pub quantity: Quantity,
    /// The curves, in legend order.
    pub series: Vec<Series<'a>>,
    /// The y range `(low, high)` in the quantity's unit (ohms for |Z|), or `None` for an
    /// automatic range (see [`crate::range::auto_y_range`]).
    pub y_range: Option<(f64, f64)>,
    /// Shaded bands drawn behind the curves, clipped at the axis ranges; they do not widen the
    /// automatic y range.
    pub bands: Vec<Band<'a>>,
    /// Forbidden rectangles (a spec mask) shaded behind the curves; see [`crate::region`].
    pub regions: Vec<Region>,
}

/// Options that apply to the whole chart.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct ChartOptions {
    /// The frequency range `(low, high)` in Hz shared by all panels, or `None` to span the
    /// data.
    pub f_range_hz: Option<(f64, f64)>,
    /// The colour theme.
    pub theme: Theme,
    /// A title above the top panel.
    pub title: Option<String>,
    /// A frequency in Hz at which to draw a vertical cursor line through every panel; a
    /// cursor outside the frequency range (or not a positive number) is not drawn.
    pub cursor_hz: Option<f64>,
}

/// Draws `panels` stacked top to bottom onto `area`, sharing one log-frequency x axis, and
/// returns where each panel's plotting rectangle landed.
///
/// The area is filled with the theme background first. Only the bottom panel shows the
/// frequency labels and the "frequency (Hz)" description; the others show the same grid.
/// Panels with more than one series get a small legend in the upper right corner. The
/// caller presents the area (for example `area.present()`) when it has finished with it.
///
/// # Errors
///
/// - [`PlotError::NoPanels`] when `panels` is empty.
/// - [`PlotError::LengthMismatch`] when a series has more or fewer values than frequencies.
/// - [`PlotError::BadRange`] when `options.f_range_hz` is not finite with 0 < low < high,
///   or a panel's `y_range` is not finite with low < high (and low > 0 for |Z|).
/// - [`PlotError::EmptyData`] when a panel has no series or no plottable point.
/// - [`PlotError::AreaTooSmall`] when the area cannot hold the panels.
/// - [`PlotError::Drawing`] when the backend fails.
pub fn draw_panels<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    panels: &[Panel],
    options: &ChartOptions,
) -> Result<PanelLayout, PlotError> {
    let plan = plan_chart(panels, options)?;
    let (width, height) = area.dim_in_pixel();
    let min_width = MIN_PLOT_WIDTH + Y_LABEL_AREA + MARGIN_LEFT + MARGIN_RIGHT;
    let title_height = if options.title.is_some() { TITLE_ALLOWANCE } else { 0 };
    let n_panels = u32::try_from(panels.len()).unwrap_or(u32::MAX);
    let min_height = n_panels.saturating_mul(MIN_STRIP_HEIGHT).saturating_add(title_height + X_LABEL_AREA);
    let too_small = PlotError::AreaTooSmall { width, height, min_width, min_height };
    if width < min_width || height < min_height {
        return Err(too_small);
    }

    let colours = options.theme.colours();
    area.fill(&colours.background).map_err(drawing_error)?;
    let body = match &options.title {
        Some(title) => area.titled(title, font(TITLE_FONT_PX, colours.text)).map_err(drawing_error)?,
        None => area.clone(),
    };
    let (_, body_height) = body.dim_in_pixel();
    let strip_height = body_height.saturating_sub(X_LABEL_AREA) / n_panels;
    if strip_height < MIN_STRIP_HEIGHT {
        return Err(too_small);
    }
    let breakpoints: Vec<i32> = (1..n_panels).map(|k| (k * strip_height) as i32).collect();
    let strips = body.split_by_breakpoints([] as [i32; 0], breakpoints);

    let mut geometries = Vec::with_capacity(panels.len());
    for (panel_idx, ((panel, panel_plan), strip)) in panels.iter().zip(&plan.panels).zip(&strips).enumerate() {
        let position = if panel_idx + 1 == panels.len() { StripPosition::Bottom } else { StripPosition::Above };
        let geometry = draw_panel(strip, panel, panel_plan, plan.f_range_hz, position, options, &colours)?;
        geometries.push(geometry);
    }
    Ok(PanelLayout { panels: geometries })
}

/// Width of the y label area (tick labels and the rotated axis description), in pixels.
/// Fixed, so that every panel's plotting rectangle starts at the same column.
const Y_LABEL_AREA: u32 = 66;
/// Height of the bottom panel's x label area (tick labels and description), in pixels.
const X_LABEL_AREA: u32 = 42;
/// Right margin; at least 30 px so the last frequency label is not cut off.
const MARGIN_RIGHT: u32 = 34;
const MARGIN_LEFT: u32 = 6;
const MARGIN_TOP: u32 = 9;
const MARGIN_BOTTOM: u32 = 4;
const MIN_PLOT_WIDTH: u32 = 80;
const MIN_PLOT_HEIGHT: u32 = 36;
const MIN_STRIP_HEIGHT: u32 = MIN_PLOT_HEIGHT + MARGIN_TOP + MARGIN_BOTTOM;
/// Room reserved for a title when checking the area size, in pixels.
const TITLE_ALLOWANCE: u32 = 28;
const TITLE_FONT_PX: u32 = 16;
const LABEL_FONT_PX: u32 = 12;
const LEGEND_FONT_PX: u32 = 11;
/// Minor grid lines are drawn when the axis spans at most this many decades.
const MAX_DECADES_WITH_MINOR_GRID: f64 = 6.0;
/// The smallest plot height, in pixels, whose legend also lists the labelled bands.
const MIN_HEIGHT_FOR_BAND_LEGEND: u32 = 80;
/// Dash and gap length of the ideal curve, in pixels.
const DASH_PX: u32 = 6;
const DASH_GAP_PX: u32 = 4;

/// Whether a strip carries the shared frequency labels.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum StripPosition {
    Above,
    Bottom,
}

/// Validated input with all ranges resolved.
#[derive(Debug)]
struct ChartPlan {
    f_range_hz: (f64, f64),
    panels: Vec<PanelPlan>,
}

#[derive(Debug)]
struct PanelPlan {
    y_range: (f64, f64),
}

/// How one series is drawn, resolved from its style and position.
#[derive(Debug, Clone, Copy)]
struct Stroke {
    colour: RGBColor,
    alpha: f64,
    width: u32,
    dashed: bool,
}

fn plan_chart(panels: &[Panel], options: &ChartOptions) -> Result<ChartPlan, PlotError> {
    if panels.is_empty() {
        return Err(PlotError::NoPanels);
    }
    for series in panels.iter().flat_map(|panel| &panel.series) {
        if series.f_hz.len() != series.values.len() {
            return Err(PlotError::LengthMismatch {
                label: series.label.to_string(),
                n_frequencies: series.f_hz.len(),
                n_values: series.values.len(),
            });
        }
    }
    for band in panels.iter().flat_map(|panel| &panel.bands) {
        for edge in [band.lower, band.upper] {
            if band.f_hz.len() != edge.len() {
                return Err(PlotError::LengthMismatch {
                    label: band.label.to_string(),
                    n_frequencies: band.f_hz.len(),
                    n_values: edge.len(),
                });
            }
        }
    }
    if let Some((lo, hi)) = options.f_range_hz {
        if !(lo.is_finite() && hi.is_finite() && lo > 0.0 && lo < hi) {
            return Err(PlotError::BadRange {
                what: "frequency range".to_string(),
                lo,
                hi,
                accepted: "give finite limits in Hz with 0 < low < high",
            });
        }
    }
    for (panel_idx, panel) in panels.iter().enumerate() {
        if let Some((lo, hi)) = panel.y_range {
            let log_axis = panel.quantity.is_log_axis();
            if !(lo.is_finite() && hi.is_finite() && lo < hi && (!log_axis || lo > 0.0)) {
                return Err(PlotError::BadRange {
                    what: format!("y range of panel {panel_idx} ({})", panel.quantity.name()),
                    lo,
                    hi,
                    accepted: if log_axis {
                        "give finite limits in ohms with 0 < low < high"
                    } else {
                        "give finite limits with low < high"
                    },
                });
            }
        }
        if plottable_points(panel).next().is_none() {
            return Err(PlotError::EmptyData { panel_idx, quantity: panel.quantity });
        }
    }
    let f_range_hz = match options.f_range_hz {
        Some(range) => range,
        None => auto_frequency_range(panels.iter().flat_map(plottable_points).map(|(f, _)| f))
            .ok_or(PlotError::EmptyData { panel_idx: 0, quantity: panels[0].quantity })?,
    };
    let mut panel_plans = Vec::with_capacity(panels.len());
    for (panel_idx, panel) in panels.iter().enumerate() {
        let y_range = match panel.y_range {
            Some(range) => range,
            None => {
                let in_band: Vec<f64> = plottable_points(panel)
                    .filter(|(f, _)| *f >= f_range_hz.0 && *f <= f_range_hz.1)
                    .map(|(_, v)| v)
                    .collect();
                let values =
                    if in_band.is_empty() { plottable_points(panel).map(|(_, v)| v).collect() } else { in_band };
                auto_y_range(panel.quantity, &values)
                    .ok_or(PlotError::EmptyData { panel_idx, quantity: panel.quantity })?
            }
        };
        panel_plans.push(PanelPlan { y_range });
    }
    Ok(ChartPlan { f_range_hz, panels: panel_plans })
}

/// The `(f_hz, value)` pairs of a panel that can be drawn: positive finite frequency and a
/// finite value (above zero on a log axis).
fn plottable_points<'p>(panel: &'p Panel<'p>) -> impl Iterator<Item = (f64, f64)> + 'p {
    let log_axis = panel.quantity.is_log_axis();
    panel.series.iter().flat_map(move |series| {
        series.f_hz.iter().zip(series.values).filter_map(move |(&f, &value)| {
            let value = value?;
            let usable = f.is_finite() && f > 0.0 && value.is_finite() && (!log_axis || value > 0.0);
            usable.then_some((f, value))
        })
    })
}

fn draw_panel<DB: DrawingBackend>(
    strip: &DrawingArea<DB, Shift>,
    panel: &Panel,
    plan: &PanelPlan,
    f_range_hz: (f64, f64),
    position: StripPosition,
    options: &ChartOptions,
    colours: &ThemeColours,
) -> Result<PanelGeometry, PlotError> {
    let quantity = panel.quantity;
    let log_y = quantity.is_log_axis();
    let to_axis_y = |value: f64| if log_y { value.log10() } else { value };
    let x_axis = (f_range_hz.0.log10(), f_range_hz.1.log10());
    let y_axis = (to_axis_y(plan.y_range.0), to_axis_y(plan.y_range.1));

    let x_major = nice_frequency_ticks(f_range_hz.0, f_range_hz.1);
    let x_minor = minor_log_ticks(f_range_hz, &x_major);
    let y_major = y_ticks(quantity, plan.y_range);
    let y_minor = if log_y { minor_log_ticks(plan.y_range, &y_major) } else { Vec::new() };
    let log10_all = |values: &[f64]| values.iter().map(|v| v.log10()).collect::<Vec<_>>();
    let x_spec = TickedAxis::new(x_axis, log10_all(&x_major), log10_all(&x_minor));
    let y_major_axis = if log_y { log10_all(&y_major) } else { y_major };
    let y_spec = TickedAxis::new(y_axis, y_major_axis, log10_all(&y_minor));

    let x_label_area = match position {
        StripPosition::Bottom => X_LABEL_AREA,
        StripPosition::Above => 0,
    };
    let mut chart = ChartBuilder::on(strip)
        .margin_top(MARGIN_TOP)
        .margin_bottom(MARGIN_BOTTOM)
        .margin_left(MARGIN_LEFT)
        .margin_right(MARGIN_RIGHT)
        .x_label_area_size(x_label_area)
        .y_label_area_size(Y_LABEL_AREA)
        .build_cartesian_2d(x_spec, y_spec)
        .map_err(drawing_error)?;

    let x_formatter = |x: &f64| format_frequency_label(10f64.powf(*x));
    let y_formatter = |y: &f64| match quantity {
        Quantity::MagnitudeDb | Quantity::PhaseDeg | Quantity::ImpedancePhaseDeg => format_plain(*y),
        Quantity::GroupDelayS => format_engineering(*y),
        Quantity::ImpedanceOhm => format_engineering(10f64.powf(*y)),
    };
    let label_style = font(LABEL_FONT_PX, colours.text);
    let mut mesh = chart.configure_mesh();
    mesh.x_label_formatter(&x_formatter)
        .y_label_formatter(&y_formatter)
        .bold_line_style(colours.grid_major.stroke_width(1))
        .light_line_style(colours.grid_minor.stroke_width(1))
        .axis_style(colours.axis.stroke_width(1))
        .set_all_tick_mark_size(4)
        .label_style(label_style.clone())
        .axis_desc_style(label_style)
        .y_desc(y_description(quantity, strip.dim_in_pixel().1, x_label_area));
    if position == StripPosition::Bottom {
        mesh.x_desc("frequency (Hz)");
    }
    mesh.draw().map_err(drawing_error)?;

    chart
        .draw_series(std::iter::once(Rectangle::new(
            [(x_axis.0, y_axis.0), (x_axis.1, y_axis.1)],
            colours.axis.stroke_width(1),
        )))
        .map_err(drawing_error)?;

    draw_regions(&mut chart, &panel.regions, x_axis, y_axis, log_y, options.theme)?;

    let strokes = series_strokes(&panel.series, colours);
    let band_colour = strokes.first().map_or(colours.series[0], |stroke| stroke.colour);
    draw_bands(&mut chart, panel, band_colour, x_axis, y_axis, log_y)?;
    // A short strip (the printed report's) has no room for band entries beside the curves'.
    let strip_height = strip.dim_in_pixel().1.saturating_sub(MARGIN_TOP + MARGIN_BOTTOM + x_label_area);
    let band_legend = strip_height >= MIN_HEIGHT_FOR_BAND_LEGEND;
    let labelled_bands = if band_legend { panel.bands.iter().filter(|band| !band.label.is_empty()).count() } else { 0 };
    let show_legend = panel.series.len() + labelled_bands > 1;
    if show_legend {
        // Legend entries are registered first, in the order given, with no points of their
        // own; the curves below are drawn in a different order (primary on top).
        for (series, stroke) in panel.series.iter().zip(&strokes) {
            if series.label.is_empty() {
                continue;
            }
            let stroke = *stroke;
            chart
                .draw_series(LineSeries::new(Vec::<(f64, f64)>::new(), shape(stroke)))
                .map_err(drawing_error)?
                .label(series.label)
                .legend(move |(x, y)| legend_sample::<DB>((x, y), stroke));
        }
        for band in panel.bands.iter().filter(|band| band_legend && !band.label.is_empty()) {
            let fill = band_colour.mix(band.style.alpha()).filled();
            chart
                .draw_series(LineSeries::new(Vec::<(f64, f64)>::new(), fill))
                .map_err(drawing_error)?
                .label(band.label)
                .legend(move |(x, y)| Rectangle::new([(x, y - 4), (x + 18, y + 4)], fill).into_dyn());
        }
    }

    let mut draw_order: Vec<usize> = (0..panel.series.len()).collect();
    draw_order.sort_by_key(|&idx| draw_rank(panel.series[idx].style));
    for idx in draw_order {
        let series = &panel.series[idx];
        let stroke = strokes[idx];
        let x: Vec<f64> =
            series.f_hz.iter().map(|&f| if f.is_finite() && f > 0.0 { f.log10() } else { f64::NAN }).collect();
        let y: Vec<Option<f64>> = series
            .values
            .iter()
            .map(|value| match value {
                Some(v) if v.is_finite() && (!log_y || *v > 0.0) => Some(to_axis_y(*v)),
                _ => None,
            })
            .collect();
        for run in split_into_runs(&x, &y, x_axis, y_axis) {
            if run.len() == 1 {
                chart
                    .draw_series(std::iter::once(Circle::new(run[0], stroke.width.max(1), shape(stroke).filled())))
                    .map_err(drawing_error)?;
            } else if stroke.dashed {
                chart
                    .draw_series(DashedLineSeries::new(run, DASH_PX, DASH_GAP_PX, shape(stroke)))
                    .map_err(drawing_error)?;
            } else {
                chart.draw_series(LineSeries::new(run, shape(stroke))).map_err(drawing_error)?;
            }
        }
    }

    if let Some(cursor_hz) = options.cursor_hz {
        if cursor_hz.is_finite() && cursor_hz >= f_range_hz.0 && cursor_hz <= f_range_hz.1 {
            let x = cursor_hz.log10();
            chart
                .draw_series(LineSeries::new([(x, y_axis.0), (x, y_axis.1)], colours.cursor.stroke_width(1)))
                .map_err(drawing_error)?;
        }
    }

    if show_legend {
        chart
            .configure_series_labels()
            .position(SeriesLabelPosition::UpperRight)
            .margin(6)
            .legend_area_size(24)
            .label_font(font(LEGEND_FONT_PX, colours.text))
            .background_style(colours.background.mix(0.85).filled())
            .border_style(colours.grid_major.stroke_width(1))
            .draw()
            .map_err(drawing_error)?;
    }

    let (x_pixels, y_pixels) = chart.plotting_area().get_pixel_range();
    Ok(PanelGeometry {
        quantity,
        // plotters maps the axis ranges onto the first and last pixel inside the area.
        plot_px: (x_pixels.start, y_pixels.start, x_pixels.end - 1, y_pixels.end - 1),
        f_range_hz,
        y_range: plan.y_range,
        y_log: log_y,
    })
}

/// Fills each band of `panel` behind its curves, clipped at the axis ranges (see
/// [`crate::band`]).
fn draw_bands<DB: DrawingBackend>(
    chart: &mut plotters::chart::ChartContext<DB, plotters::coord::cartesian::Cartesian2d<TickedAxis, TickedAxis>>,
    panel: &Panel,
    colour: RGBColor,
    x_axis: (f64, f64),
    y_axis: (f64, f64),
    log_y: bool,
) -> Result<(), PlotError> {
    let to_axis = |values: &[Option<f64>]| -> Vec<Option<f64>> {
        values
            .iter()
            .map(|value| match value {
                Some(v) if v.is_finite() && !log_y => Some(*v),
                Some(v) if v.is_finite() && *v > 0.0 => Some(v.log10()),
                _ => None,
            })
            .collect()
    };
    for band in &panel.bands {
        let x: Vec<f64> =
            band.f_hz.iter().map(|&f| if f.is_finite() && f > 0.0 { f.log10() } else { f64::NAN }).collect();
        let fill = colour.mix(band.style.alpha()).filled();
        let polygons = band_polygons(&x, &to_axis(band.lower), &to_axis(band.upper), x_axis, y_axis);
        chart.draw_series(polygons.into_iter().map(|points| Polygon::new(points, fill))).map_err(drawing_error)?;
    }
    Ok(())
}

/// Shades the forbidden regions (translucent fill, opaque limit line), clipped to the axes.
fn draw_regions<DB: DrawingBackend>(
    chart: &mut ChartContext<'_, DB, Cartesian2d<TickedAxis, TickedAxis>>,
    regions: &[Region],
    x_axis: (f64, f64),
    y_axis: (f64, f64),
    log_y: bool,
    theme: Theme,
) -> Result<(), PlotError> {
    let colour = region_colour(theme);
    for region in regions {
        let Some(clipped) = clip_region(region, x_axis, y_axis, log_y) else { continue };
        let corners = [(clipped.x.0, clipped.y.0), (clipped.x.1, clipped.y.1)];
        chart
            .draw_series(std::iter::once(Rectangle::new(corners, colour.mix(REGION_FILL_ALPHA).filled())))
            .map_err(drawing_error)?;
        if let Some(y) = clipped.line_y {
            chart
                .draw_series(LineSeries::new([(clipped.x.0, y), (clipped.x.1, y)], colour.stroke_width(2)))
                .map_err(drawing_error)?;
        }
    }
    Ok(())
}

/// Chooses colour, width and dash for every series of a panel.
///
/// Primary and overlay series take the curve colours in turn; an ideal series is neutral;
/// a band edge borrows the colour of the nearest primary or overlay series before it.
fn series_strokes(series: &[Series], colours: &ThemeColours) -> Vec<Stroke> {
    let mut next_colour = 0;
    let mut last_colour = colours.series[0];
    series
        .iter()
        .map(|series| match series.style {
            SeriesStyle::Primary | SeriesStyle::Overlay => {
                let colour = colours.series[next_colour % colours.series.len()];
                next_colour += 1;
                last_colour = colour;
                let width = if series.style == SeriesStyle::Primary { 2 } else { 1 };
                Stroke { colour, alpha: 1.0, width, dashed: false }
            }
            SeriesStyle::Ideal => Stroke { colour: colours.ideal, alpha: 1.0, width: 1, dashed: true },
            SeriesStyle::Band => Stroke { colour: last_colour, alpha: 0.5, width: 1, dashed: false },
        })
        .collect()
}

/// Drawing order: band edges first, primary curves last so they stay on top.
fn draw_rank(style: SeriesStyle) -> u8 {
    match style {
        SeriesStyle::Band => 0,
        SeriesStyle::Ideal => 1,
        SeriesStyle::Overlay => 2,
        SeriesStyle::Primary => 3,
    }
}

fn shape(stroke: Stroke) -> ShapeStyle {
    stroke.colour.mix(stroke.alpha).stroke_width(stroke.width)
}

/// The short line drawn beside a legend label.
fn legend_sample<DB: DrawingBackend>((x, y): (i32, i32), stroke: Stroke) -> DynElement<'static, DB, (i32, i32)> {
    let points = vec![(x, y), (x + 18, y)];
    if stroke.dashed {
        DashedPathElement::new(points, 5, 3, shape(stroke)).into_dyn()
    } else {
        PathElement::new(points, shape(stroke)).into_dyn()
    }
}

/// Values 2..9 × 10^k strictly inside `range` that are not major ticks, for the minor grid
/// of a log axis; empty beyond [`MAX_DECADES_WITH_MINOR_GRID`] decades.
fn minor_log_ticks(range: (f64, f64), major: &[f64]) -> Vec<f64> {
    let (lo, hi) = range;
    let decades = (hi / lo).log10();
    if !(decades.is_finite() && decades > 0.0) || decades > MAX_DECADES_WITH_MINOR_GRID {
        return Vec::new();
    }
    let is_major = |v: f64| major.iter().any(|m| (m - v).abs() <= v * 1e-9);
    let first_decade = lo.log10().floor() as i32;
    let last_decade = hi.log10().ceil() as i32;
    (first_decade..=last_decade)
        .flat_map(|decade| (1..10).map(move |m| crate::axis::scaled_power_of_ten(f64::from(m), decade)))
        .filter(|&v| v > lo && v < hi && !is_major(v))
        .collect()
}

fn font(size_px: u32, colour: RGBColor) -> TextStyle<'static> {
    ("sans-serif", size_px).into_font().color(&colour)
}

fn drawing_error<E: std::error::Error + Send + Sync>(error: DrawingAreaErrorKind<E>) -> PlotError {
    PlotError::Drawing(error.to_string())
}

/// The long axis description if it fits along the panel's plot height (rotated text, about
/// 0.6 em per character, common practice for proportional fonts), else the short one.
fn y_description(quantity: Quantity, strip_height_px: u32, x_label_area_px: u32) -> &'static str {
    let plot_height = f64::from(strip_height_px) - f64::from(MARGIN_TOP + MARGIN_BOTTOM + x_label_area_px);
    let long = quantity.axis_description();
    if long.chars().count() as f64 * 0.6 * f64::from(LABEL_FONT_PX) <= plot_height {
        long
    } else {
        quantity.short_axis_description()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // "group delay (s)" is 15 characters, about 108 px at 12 px: a 200 px strip takes it, an
    // 80 px strip (the printed report) gets "τ (s)".
    #[test]
    fn low_panels_get_the_short_axis_description() {
        assert_eq!(y_description(Quantity::GroupDelayS, 200, 0), "group delay (s)");
        assert_eq!(y_description(Quantity::GroupDelayS, 80, 0), "τ (s)");
        // 120 px less the margins and the frequency labels leaves 65 px for 14 characters (101 px).
        assert_eq!(y_description(Quantity::MagnitudeDb, 120, X_LABEL_AREA), "dB");
    }
}
