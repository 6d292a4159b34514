//! End-to-end chart tests: draw into plotters' SVG backend and inspect the SVG text.

mod common;

use bandwright_plot::{
    draw_panels, Band, BandStyle, ChartOptions, Panel, PanelLayout, PlotError, Quantity, Series, SeriesStyle, Theme,
};
use plotters::prelude::{IntoDrawingArea, SVGBackend};
use plotters::style::RGBColor;

const WIDTH: u32 = 800;
const HEIGHT: u32 = 640;

/// Draws `panels` into an SVG string of `WIDTH`×`HEIGHT` pixels.
fn render(panels: &[Panel], options: &ChartOptions) -> (Result<PanelLayout, PlotError>, String) {
    render_sized(panels, options, (WIDTH, HEIGHT))
}

fn render_sized(
    panels: &[Panel],
    options: &ChartOptions,
    size: (u32, u32),
) -> (Result<PanelLayout, PlotError>, String) {
    let mut svg = String::new();
    let result = {
        let root = SVGBackend::with_string(&mut svg, size).into_drawing_area();
        let result = draw_panels(&root, panels, options);
        root.present().expect("svg present");
        result
    };
    (result, svg)
}

/// The contents of every `<text>` element.
fn text_labels(svg: &str) -> Vec<String> {
    svg.split("<text")
        .skip(1)
        .filter_map(|chunk| {
            let body = &chunk[chunk.find('>')? + 1..];
            Some(body[..body.find("</text>")?].trim().to_string())
        })
        .collect()
}

/// Every `<polyline>` as (stroke colour, points).
fn polylines(svg: &str) -> Vec<(String, Vec<(i32, i32)>)> {
    svg.split("<polyline")
        .skip(1)
        .map(|chunk| {
            let element = &chunk[..chunk.find("/>").expect("closed polyline")];
            let stroke = attribute(element, "stroke").to_string();
            let points = attribute(element, "points")
                .split_whitespace()
                .map(|pair| {
                    let (x, y) = pair.split_once(',').expect("x,y");
                    (x.parse().expect("x"), y.parse().expect("y"))
                })
                .collect();
            (stroke, points)
        })
        .collect()
}

fn attribute<'s>(element: &'s str, name: &str) -> &'s str {
    let key = format!(" {name}=\"");
    let start = element.find(&key).unwrap_or_else(|| panic!("no {name}")) + key.len();
    let end = start + element[start..].find('"').expect("closing quote");
    &element[start..end]
}

fn hex(colour: RGBColor) -> String {
    format!("#{:02X}{:02X}{:02X}", colour.0, colour.1, colour.2)
}

/// Stroke colours used by curves (series, ideal) in `theme`.
fn curve_colours(theme: Theme) -> Vec<String> {
    let colours = theme.colours();
    let mut all: Vec<String> = colours.series.iter().map(|c| hex(*c)).collect();
    all.push(hex(colours.ideal));
    all
}

fn three_panels<'a>(data: &'a common::LowPass) -> Vec<Panel<'a>> {
    vec![
        Panel {
            quantity: Quantity::MagnitudeDb,
            series: vec![
                Series {
                    label: "RC low-pass",
                    f_hz: &data.f_hz,
                    values: &data.magnitude_db,
                    style: SeriesStyle::Primary,
                },
                Series { label: "asymptote", f_hz: &data.f_hz, values: &data.asymptote_db, style: SeriesStyle::Ideal },
            ],
            y_range: None,
            bands: Vec::new(),
            regions: Vec::new(),
        },
        Panel {
            quantity: Quantity::PhaseDeg,
            series: vec![Series {
                label: "RC low-pass",
                f_hz: &data.f_hz,
                values: &data.phase_deg,
                style: SeriesStyle::Primary,
            }],
            y_range: None,
            bands: Vec::new(),
            regions: Vec::new(),
        },
        Panel {
            quantity: Quantity::GroupDelayS,
            series: vec![Series {
                label: "RC low-pass",
                f_hz: &data.f_hz,
                values: &data.group_delay_s,
                style: SeriesStyle::Primary,
            }],
            y_range: None,
            bands: Vec::new(),
            regions: Vec::new(),
        },
    ]
}

fn audio_band() -> ChartOptions {
    ChartOptions { f_range_hz: Some((20.0, 20_000.0)), ..ChartOptions::default() }
}

#[test]
fn three_panel_chart_draws_with_frequency_labels_on_the_bottom_panel_only() {
    let data = common::low_pass(241, Some(120));
    let (result, svg) = render(&three_panels(&data), &audio_band());
    let layout = result.expect("chart draws");
    assert_eq!(layout.panels.len(), 3);

    let labels = text_labels(&svg);
    for expected in ["20", "100", "1k", "10k", "20k"] {
        let count = labels.iter().filter(|l| l.as_str() == expected).count();
        assert_eq!(count, 1, "label {expected:?} should appear once in {labels:?}");
    }
    assert!(
        labels.iter().all(|l| !l.contains(".0") && !l.contains("1000")),
        "plotters-style number text leaked: {labels:?}"
    );
    assert!(labels.iter().any(|l| l == "group delay (s)"), "{labels:?}");
    assert!(labels.iter().any(|l| l == "frequency (Hz)"), "{labels:?}");
    // The magnitude panel has two series, so it has a legend; the others have one series.
    assert_eq!(labels.iter().filter(|l| *l == "asymptote").count(), 1);
    assert_eq!(labels.iter().filter(|l| *l == "RC low-pass").count(), 1);
    // Group delay is labelled with SI prefixes: the delay peaks at 1/(2π·1 kHz) ≈ 159 µs.
    assert!(labels.iter().any(|l| l.ends_with('µ')), "{labels:?}");
    // Labels stay few: text measurement is slow in the browser.
    assert!(labels.len() < 60, "{} labels", labels.len());
}

#[test]
fn panels_share_the_x_axis_and_stack_downwards() {
    let data = common::low_pass(121, None);
    let (result, _) = render(&three_panels(&data), &audio_band());
    let layout = result.unwrap();
    let first = &layout.panels[0];
    for pair in layout.panels.windows(2) {
        let (upper, lower) = (&pair[0], &pair[1]);
        assert_eq!(upper.plot_px.0, lower.plot_px.0, "left edges differ");
        assert_eq!(upper.plot_px.2, lower.plot_px.2, "right edges differ");
        assert!(upper.plot_px.3 < lower.plot_px.1, "panels overlap");
    }
    // At least 30 px right of the plot for the last label.
    assert!(first.plot_px.2 <= WIDTH as i32 - 31, "right edge {}", first.plot_px.2);
    assert_eq!(
        layout.panels.iter().map(|p| p.quantity).collect::<Vec<_>>(),
        [Quantity::MagnitudeDb, Quantity::PhaseDeg, Quantity::GroupDelayS]
    );
    // Automatic ranges: phase of an RC low-pass lies in (-90°, 0°].
    assert_eq!(layout.panels[1].y_range, (-90.0, 0.0));
    assert_eq!(layout.panels[2].y_range.0, 0.0);
    for panel in &layout.panels {
        for f_hz in [20.0, 123.4, 1000.0, 20_000.0] {
            let x_px = panel.x_px_for(f_hz).unwrap();
            let back = panel.frequency_at(x_px).unwrap();
            assert!(((back - f_hz) / f_hz).abs() < 1e-9, "{back} vs {f_hz}");
        }
    }
}

#[test]
fn curves_are_clipped_to_the_plotting_rectangle_not_flattened() {
    let data = common::low_pass(241, Some(60));
    let mut panels = three_panels(&data);
    // Over 20 Hz to 20 kHz the magnitude spans 0 to -26 dB and the phase 0° to -87°: both
    // exceed these ranges at both ends.
    panels[0].y_range = Some((-20.0, -3.0));
    panels[1].y_range = Some((-60.0, -20.0));
    let options = ChartOptions { cursor_hz: Some(1000.0), ..audio_band() };
    let (result, svg) = render(&panels, &options);
    let layout = result.unwrap();
    let colours = curve_colours(Theme::Light);
    let curves: Vec<_> = polylines(&svg).into_iter().filter(|(stroke, _)| colours.contains(stroke)).collect();
    assert!(curves.len() >= 4, "found {} curve polylines", curves.len());

    let mut touches_top = false;
    let mut touches_bottom = false;
    for (stroke, points) in &curves {
        let panel = layout
            .panels
            .iter()
            .find(|panel| panel.contains(points[0].0 as f64, points[0].1 as f64))
            .unwrap_or_else(|| panic!("{stroke} polyline starts outside every panel: {points:?}"));
        let (left, top, right, bottom) = panel.plot_px;
        for &(x, y) in points {
            assert!(
                x >= left && x <= right && y >= top && y <= bottom,
                "{stroke} point ({x}, {y}) outside {:?}",
                panel.plot_px
            );
        }
        let clipped_panel = matches!(panel.quantity, Quantity::MagnitudeDb | Quantity::PhaseDeg);
        // Near its edges the data itself may run within a pixel of the border (group delay
        // tends to zero), so the "no flattening" check applies to the clipped panels only.
        for segment in points.windows(2).filter(|_| clipped_panel) {
            let along_bottom = segment[0].1 == bottom && segment[1].1 == bottom;
            let along_top = segment[0].1 == top && segment[1].1 == top;
            assert!(
                !(along_bottom || along_top) || segment[0].0 == segment[1].0,
                "{stroke} runs along the border: {segment:?}"
            );
        }
        if panel.quantity == Quantity::MagnitudeDb {
            touches_top |= points.iter().any(|p| p.1 == top);
            touches_bottom |= points.iter().any(|p| p.1 == bottom);
        }
    }
    assert!(touches_top, "the magnitude curve should end exactly on the top edge");
    assert!(touches_bottom, "the magnitude curve should end exactly on the bottom edge");

    // The cursor is a vertical line at 1 kHz through every panel.
    let cursor = hex(Theme::Light.colours().cursor);
    let cursor_lines: Vec<_> = polylines(&svg).into_iter().filter(|(stroke, _)| *stroke == cursor).collect();
    assert_eq!(cursor_lines.len(), 3);
    let expected_x = layout.panels[0].x_px_for(1000.0).unwrap();
    for (_, points) in cursor_lines {
        assert!(points.iter().all(|p| (p.0 as f64 - expected_x).abs() <= 1.0));
    }
}

#[test]
fn gaps_break_the_curve() {
    let data = common::low_pass(101, Some(50));
    let panels = vec![Panel {
        quantity: Quantity::PhaseDeg,
        series: vec![Series { label: "", f_hz: &data.f_hz, values: &data.phase_deg, style: SeriesStyle::Primary }],
        y_range: None,
        bands: Vec::new(),
        regions: Vec::new(),
    }];
    let (result, svg) = render(&panels, &ChartOptions::default());
    result.unwrap();
    let primary = hex(Theme::Light.colours().series[0]);
    let runs = polylines(&svg).into_iter().filter(|(stroke, _)| *stroke == primary).count();
    assert_eq!(runs, 2, "one gap should give two runs");
}

#[test]
fn impedance_panel_uses_a_log_axis_with_ohm_labels() {
    let data = common::low_pass(121, None);
    let panels = vec![Panel {
        quantity: Quantity::ImpedanceOhm,
        series: vec![Series {
            label: "input",
            f_hz: &data.f_hz,
            values: &data.input_impedance_ohm,
            style: SeriesStyle::Primary,
        }],
        y_range: None,
        bands: Vec::new(),
        regions: Vec::new(),
    }];
    let options = ChartOptions { theme: Theme::Dark, title: Some("RC input impedance".to_string()), ..audio_band() };
    let (result, svg) = render(&panels, &options);
    let layout = result.unwrap();
    let panel = &layout.panels[0];
    assert!(panel.y_log);
    // |Z| = sqrt(R² + Xc²) with Xc = R·fc/f. The first grid point in the band is 21.5 Hz
    // (|Z| ≈ 46 kΩ) and the last 19.95 kHz (|Z| ≈ 1.001 kΩ), so the 1-2-5 range is
    // 1 kΩ to 50 kΩ, with six 1-2-5 ticks.
    assert_eq!(panel.y_range, (1000.0, 50_000.0));
    let labels = text_labels(&svg);
    for expected in ["1k", "2k", "5k", "10k", "20k", "50k", "|Z| (Ω)", "RC input impedance"] {
        assert!(labels.iter().any(|l| l == expected), "{expected:?} not in {labels:?}");
    }
    // The dark theme fills the background with its own colour.
    assert!(svg.contains(&hex(Theme::Dark.colours().background)));
    let y_px = panel.y_px_for(3300.0).unwrap();
    let back = panel.value_at(y_px).unwrap();
    assert!((back / 3300.0 - 1.0).abs() < 1e-9);
}

#[test]
fn bad_input_gives_errors_not_panics() {
    let data = common::low_pass(11, None);
    let none_values = vec![None; data.f_hz.len()];
    let short_values = vec![Some(1.0); 3];

    let one_panel = |values: &[Option<f64>], y_range: Option<(f64, f64)>| -> PlotError {
        let panels = vec![Panel {
            quantity: Quantity::ImpedanceOhm,
            series: vec![Series { label: "z", f_hz: &data.f_hz, values, style: SeriesStyle::Primary }],
            y_range,
            bands: Vec::new(),
            regions: Vec::new(),
        }];
        render(&panels, &ChartOptions::default()).0.unwrap_err()
    };

    assert_eq!(render(&[], &ChartOptions::default()).0.unwrap_err(), PlotError::NoPanels);
    let empty = vec![Panel {
        quantity: Quantity::MagnitudeDb,
        series: vec![],
        y_range: None,
        bands: Vec::new(),
        regions: Vec::new(),
    }];
    assert!(matches!(
        render(&empty, &ChartOptions::default()).0,
        Err(PlotError::EmptyData { panel_idx: 0, quantity: Quantity::MagnitudeDb })
    ));
    assert!(matches!(one_panel(&none_values, None), PlotError::EmptyData { .. }));
    // Zero ohms cannot sit on a log axis, so all-zero |Z| is empty too.
    let zeros = vec![Some(0.0); data.f_hz.len()];
    assert!(matches!(one_panel(&zeros, None), PlotError::EmptyData { .. }));
    assert!(matches!(one_panel(&short_values, None), PlotError::LengthMismatch { n_frequencies: 11, n_values: 3, .. }));
    assert!(matches!(one_panel(&data.input_impedance_ohm, Some((0.0, 100.0))), PlotError::BadRange { .. }));
    assert!(matches!(one_panel(&data.input_impedance_ohm, Some((100.0, 100.0))), PlotError::BadRange { .. }));

    let panels = three_panels(&data);
    for f_range in [(0.0, 1000.0), (-10.0, 1000.0), (1000.0, 1000.0), (2000.0, 1000.0), (f64::NAN, 1.0)] {
        let options = ChartOptions { f_range_hz: Some(f_range), ..ChartOptions::default() };
        let error = render(&panels, &options).0.unwrap_err();
        assert!(matches!(error, PlotError::BadRange { .. }), "{f_range:?}: {error:?}");
        assert!(error.to_string().starts_with("frequency range"), "{error}");
    }
    let (result, _) = render_sized(&panels, &ChartOptions::default(), (120, 80));
    assert!(matches!(result, Err(PlotError::AreaTooSmall { width: 120, height: 80, .. })));
    // A cursor outside the range, or not a number, is simply not drawn.
    for cursor_hz in [f64::NAN, -5.0, 1e9] {
        let options = ChartOptions { cursor_hz: Some(cursor_hz), ..ChartOptions::default() };
        assert!(render(&panels, &options).0.is_ok());
    }
}

#[test]
fn non_finite_values_are_gaps() {
    let f_hz = common::log_grid(100.0, 10_000.0, 5);
    let values = [Some(-1.0), Some(f64::NAN), Some(-2.0), Some(f64::INFINITY), Some(-3.0)];
    let panels = vec![Panel {
        quantity: Quantity::MagnitudeDb,
        series: vec![Series { label: "", f_hz: &f_hz, values: &values, style: SeriesStyle::Primary }],
        y_range: None,
        bands: Vec::new(),
        regions: Vec::new(),
    }];
    let (result, svg) = render(&panels, &ChartOptions::default());
    result.unwrap();
    // Three isolated points: no line joins them; each is drawn as a dot.
    let primary = hex(Theme::Light.colours().series[0]);
    assert!(polylines(&svg).iter().all(|(stroke, _)| *stroke != primary));
    assert_eq!(svg.matches("<circle").count(), 3);
}

#[test]
fn styles_get_their_own_colours_and_primary_is_drawn_last() {
    let data = common::low_pass(61, None);
    let band: Vec<Option<f64>> = data.magnitude_db.iter().map(|v| v.map(|v| v - 1.0)).collect();
    let panels = vec![Panel {
        quantity: Quantity::MagnitudeDb,
        series: vec![
            Series { label: "design", f_hz: &data.f_hz, values: &data.magnitude_db, style: SeriesStyle::Primary },
            Series { label: "kept", f_hz: &data.f_hz, values: &data.asymptote_db, style: SeriesStyle::Overlay },
            Series { label: "", f_hz: &data.f_hz, values: &band, style: SeriesStyle::Band },
        ],
        y_range: None,
        bands: Vec::new(),
        regions: Vec::new(),
    }];
    let (result, svg) = render(&panels, &ChartOptions::default());
    result.unwrap();
    let colours = Theme::Light.colours();
    let (primary, overlay) = (hex(colours.series[0]), hex(colours.series[1]));
    let lines = polylines(&svg);
    // First occurrence: the legend samples, drawn after all curves, come later.
    let position = |colour: &str| lines.iter().position(|(stroke, _)| stroke == colour).unwrap();
    // The band edge borrows the overlay's colour (the series before it), translucent.
    let band_lines: Vec<&str> = svg
        .split("<polyline")
        .filter(|chunk| chunk.contains(&format!("stroke=\"{overlay}\"")) && chunk.contains("opacity=\"0.5\""))
        .collect();
    assert_eq!(band_lines.len(), 1, "one translucent band edge");
    // The primary curve is drawn after (on top of) the overlay curve.
    assert!(position(&primary) > position(&overlay));
    let labels = text_labels(&svg);
    assert!(labels.contains(&"design".to_string()) && labels.contains(&"kept".to_string()));
    assert_eq!(labels.iter().filter(|l| l.is_empty()).count(), 0, "empty label drawn: {labels:?}");
}

/// A `<polygon>` as (fill colour, opacity, points).
type Fill = (String, String, Vec<(f64, f64)>);

/// Every `<polygon>`.
fn polygons(svg: &str) -> Vec<Fill> {
    svg.split("<polygon")
        .skip(1)
        .map(|chunk| {
            let element = &chunk[..chunk.find("/>").expect("closed polygon")];
            let points = attribute(element, "points")
                .split_whitespace()
                .map(|pair| {
                    let (x, y) = pair.split_once(',').expect("x,y");
                    (x.parse().expect("x"), y.parse().expect("y"))
                })
                .collect();
            (attribute(element, "fill").to_string(), attribute(element, "opacity").to_string(), points)
        })
        .collect()
}

#[test]
fn bands_are_filled_behind_the_curves_and_clipped_at_the_axes() {
    let data = common::low_pass(61, Some(30));
    // ±1 dB around the curve (outer) and ±0.5 dB (inner); the outer one's top edge is lifted far
    // above the fixed y range over the first points, so it must be clipped there.
    let shift = |d: f64| data.magnitude_db.iter().map(|v| v.map(|v| v + d)).collect::<Vec<_>>();
    let (mut upper, lower, inner_hi, inner_lo) = (shift(1.0), shift(-1.0), shift(0.5), shift(-0.5));
    for value in upper.iter_mut().take(5) {
        *value = Some(500.0);
    }
    upper[10] = Some(f64::NAN);
    let panels = vec![Panel {
        quantity: Quantity::MagnitudeDb,
        series: vec![Series { label: "A", f_hz: &data.f_hz, values: &data.magnitude_db, style: SeriesStyle::Primary }],
        y_range: Some((-60.0, 5.0)),
        bands: vec![
            Band { label: "min … max", f_hz: &data.f_hz, lower: &lower, upper: &upper, style: BandStyle::Outer },
            Band { label: "", f_hz: &data.f_hz, lower: &inner_lo, upper: &inner_hi, style: BandStyle::Inner },
        ],
        regions: Vec::new(),
    }];
    let (result, svg) = render(&panels, &audio_band());
    let layout = result.expect("chart draws");
    let primary = hex(Theme::Light.colours().series[0]);
    let fills = polygons(&svg);
    // The outer band breaks at the NaN (index 10) and at the gap (30): three pieces; the inner
    // band breaks at the gap only: two. (The legend sample of the labelled band is a rect.)
    let outer: Vec<_> = fills.iter().filter(|(fill, opacity, _)| *fill == primary && opacity == "0.16").collect();
    let inner: Vec<_> = fills.iter().filter(|(fill, opacity, _)| *fill == primary && opacity == "0.3").collect();
    assert_eq!(outer.len(), 3, "{fills:?}");
    assert_eq!(inner.len(), 2, "{fills:?}");
    // Inside the plotting rectangle, with no NaN in the SVG.
    let (left, top, right, bottom) = layout.panels[0].plot_px;
    for (_, _, points) in outer.iter().chain(&inner) {
        for &(x, y) in points {
            assert!(x >= f64::from(left) - 1.0 && x <= f64::from(right) + 1.0, "x {x}");
            assert!(y >= f64::from(top) - 1.0 && y <= f64::from(bottom) + 1.0, "y {y}");
        }
    }
    assert!(!svg.contains("NaN"));
    // The first outer piece reaches the top border where its edge was lifted.
    assert!(outer[0].2.iter().any(|&(_, y)| (y - f64::from(top)).abs() <= 1.0));
    // Bands are drawn before the curve: the first polygon comes before the primary polyline.
    let first_fill = svg.find("<polygon").unwrap();
    let first_curve = svg.find(&format!("stroke=\"{primary}\"")).unwrap();
    assert!(first_fill < first_curve);
    assert!(text_labels(&svg).contains(&"min … max".to_string()));
    // A short strip keeps its legend to the curves; the band is still filled.
    let (result, short) = render_sized(&panels, &audio_band(), (800, 120));
    result.expect("short chart draws");
    assert!(!text_labels(&short).contains(&"min … max".to_string()));
    assert!(short.contains("<polygon"));
}

#[test]
fn a_band_of_the_wrong_length_is_named() {
    let data = common::low_pass(11, None);
    let short = vec![Some(0.0); 3];
    let panels = vec![Panel {
        quantity: Quantity::MagnitudeDb,
        series: vec![Series { label: "A", f_hz: &data.f_hz, values: &data.magnitude_db, style: SeriesStyle::Primary }],
        y_range: None,
        bands: vec![Band {
            label: "spread",
            f_hz: &data.f_hz,
            lower: &short,
            upper: &data.magnitude_db,
            style: BandStyle::Outer,
        }],
        regions: Vec::new(),
    }];
    let error = render(&panels, &ChartOptions::default()).0.unwrap_err();
    assert_eq!(error, PlotError::LengthMismatch { label: "spread".into(), n_frequencies: 11, n_values: 3 });
}
