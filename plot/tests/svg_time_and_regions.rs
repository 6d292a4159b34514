//! SVG tests of the time chart and of forbidden regions (spec masks) on a frequency panel.

mod common;

use bandwright_plot::{
    draw_panels, draw_time_chart, region_colour, ChartOptions, Panel, PlotError, Quantity, Region, RegionEdge, Series,
    SeriesStyle, Theme, TimeChartOptions, TimeMarker, TimeSeries,
};
use plotters::prelude::{IntoDrawingArea, SVGBackend};
use plotters::style::RGBColor;

fn hex(colour: RGBColor) -> String {
    format!("#{:02X}{:02X}{:02X}", colour.0, colour.1, colour.2)
}

fn text_labels(svg: &str) -> Vec<String> {
    svg.split("<text")
        .skip(1)
        .filter_map(|chunk| {
            let body = &chunk[chunk.find('>')? + 1..];
            Some(body[..body.find("</text>")?].trim().to_string())
        })
        .collect()
}

/// Every `<rect>` element's text.
fn rects(svg: &str) -> Vec<&str> {
    svg.split("<rect").skip(1).map(|chunk| &chunk[..chunk.find("/>").unwrap_or(chunk.len())]).collect()
}

fn attribute<'s>(element: &'s str, name: &str) -> Option<&'s str> {
    let key = format!(" {name}=\"");
    let start = element.find(&key)? + key.len();
    let end = start + element[start..].find('"')?;
    Some(&element[start..end])
}

/// First-order step response y = 1 − e^(−t/τ), τ = 1 ms, on 0 … 6 ms (common practice: the RC
/// low-pass step).
fn rc_step(points: usize) -> (Vec<f64>, Vec<f64>) {
    let times: Vec<f64> = (0..points).map(|k| 6e-3 * k as f64 / (points - 1) as f64).collect();
    let values = times.iter().map(|t| 1.0 - (-t / 1e-3f64).exp()).collect();
    (times, values)
}

fn render_time(
    series: &[TimeSeries],
    options: &TimeChartOptions,
) -> (Result<bandwright_plot::TimeLayout, PlotError>, String) {
    let mut svg = String::new();
    let result = {
        let root = SVGBackend::with_string(&mut svg, (640, 300)).into_drawing_area();
        let result = draw_time_chart(&root, series, options);
        root.present().unwrap();
        result
    };
    (result, svg)
}

#[test]
fn a_step_draws_with_time_labels_in_one_engineering_unit() {
    let (times, values) = rc_step(301);
    let series = [TimeSeries { label: "A (working)", times_s: &times, values: &values, style: SeriesStyle::Primary }];
    let options = TimeChartOptions {
        y_description: "step response (V/V)".into(),
        band: Some((0.99, 1.01)),
        markers: vec![
            TimeMarker { time_s: 0.10536e-3, label: "10 %".into() },
            TimeMarker { time_s: 2.302_585e-3, label: "90 %".into() },
            TimeMarker { time_s: 4.605_17e-3, label: "settled".into() },
        ],
        ..TimeChartOptions::default()
    };
    let (result, svg) = render_time(&series, &options);
    let layout = result.unwrap();
    let labels = text_labels(&svg);
    assert!(labels.iter().any(|l| l == "time (ms)"), "{labels:?}");
    assert!(labels.iter().any(|l| l == "step response (V/V)"), "{labels:?}");
    for tick in ["0", "1", "2", "3", "4", "5", "6"] {
        assert!(labels.iter().any(|l| l == tick), "missing tick {tick} in {labels:?}");
    }
    for marker in ["10 %", "90 %", "settled"] {
        assert!(labels.iter().any(|l| l == marker), "missing marker {marker}");
    }
    assert_eq!(layout.time_unit, "ms");
    assert_eq!(layout.t_range_s, (0.0, 6e-3));
    // The band lines are inside the value range, which spans the data.
    assert!(layout.y_range.0 < 0.0 && layout.y_range.1 > 1.01);
    // The curve is drawn in the first series colour.
    assert!(svg.contains(&hex(Theme::Light.colours().series[0])));
    // A pointer at the middle column reads the middle time.
    let (left, _, right, _) = layout.plot_px;
    let middle = layout.time_at(f64::from(left + right) / 2.0).unwrap();
    assert!((middle - 3e-3).abs() < 2e-5, "{middle}");
}

#[test]
fn overlays_get_a_legend_and_short_spans_read_in_microseconds() {
    let times: Vec<f64> = (0..101).map(|k| 800e-6 * f64::from(k) / 100.0).collect();
    let a: Vec<f64> = times.iter().map(|t| 1.0 - (-t / 100e-6f64).exp()).collect();
    let b: Vec<f64> = times.iter().map(|t| 1.0 - (-t / 150e-6f64).exp()).collect();
    let series = [
        TimeSeries { label: "A (working)", times_s: &times, values: &a, style: SeriesStyle::Primary },
        TimeSeries { label: "B (kept)", times_s: &times, values: &b, style: SeriesStyle::Overlay },
    ];
    let (result, svg) = render_time(&series, &TimeChartOptions { theme: Theme::Dark, ..TimeChartOptions::default() });
    assert_eq!(result.unwrap().time_unit, "µs");
    let labels = text_labels(&svg);
    assert!(labels.iter().any(|l| l == "time (µs)"), "{labels:?}");
    assert!(labels.iter().any(|l| l == "B (kept)"));
    assert!(svg.contains(&hex(Theme::Dark.colours().series[1])));
}

#[test]
fn bad_time_input_is_refused_with_a_reason() {
    let (times, values) = rc_step(11);
    let short = &values[..5];
    let series = [TimeSeries { label: "x", times_s: &times, values: short, style: SeriesStyle::Primary }];
    assert!(matches!(render_time(&series, &TimeChartOptions::default()).0, Err(PlotError::LengthMismatch { .. })));
    let nan = vec![f64::NAN; times.len()];
    let series = [TimeSeries { label: "x", times_s: &times, values: &nan, style: SeriesStyle::Primary }];
    assert_eq!(render_time(&series, &TimeChartOptions::default()).0, Err(PlotError::EmptyTimeData));
    let series = [TimeSeries { label: "x", times_s: &times, values: &values, style: SeriesStyle::Primary }];
    let reversed = TimeChartOptions { t_range_s: Some((1.0, 0.5)), ..TimeChartOptions::default() };
    assert!(matches!(render_time(&series, &reversed).0, Err(PlotError::BadRange { .. })));
}

#[test]
fn mask_regions_are_shaded_behind_the_curves_and_clipped_to_the_axes() {
    let data = common::low_pass(241, None);
    let regions = vec![
        // Passband floor: below −1 dB up to 500 Hz is forbidden.
        Region { f_lo_hz: 0.0, f_hi_hz: 500.0, low: f64::NEG_INFINITY, high: -1.0, edge: RegionEdge::Upper },
        // Stopband: above −20 dB from 20 kHz up is forbidden.
        Region { f_lo_hz: 20e3, f_hi_hz: f64::INFINITY, low: -20.0, high: f64::INFINITY, edge: RegionEdge::Lower },
        // Wholly above the axis: not drawn.
        Region { f_lo_hz: 10.0, f_hi_hz: 100.0, low: 500.0, high: f64::INFINITY, edge: RegionEdge::Lower },
    ];
    let panel = |regions: Vec<Region>| Panel {
        quantity: Quantity::MagnitudeDb,
        series: vec![Series { label: "", f_hz: &data.f_hz, values: &data.magnitude_db, style: SeriesStyle::Primary }],
        y_range: Some((-60.0, 10.0)),
        bands: Vec::new(),
        regions,
    };
    let draw = |panel: Panel| {
        let mut svg = String::new();
        let layout = {
            let root = SVGBackend::with_string(&mut svg, (800, 300)).into_drawing_area();
            let layout = draw_panels(
                &root,
                &[panel],
                &ChartOptions { f_range_hz: Some((10.0, 100e3)), ..ChartOptions::default() },
            );
            root.present().unwrap();
            layout.unwrap()
        };
        (layout, svg)
    };
    let (layout, svg) = draw(panel(regions));
    let (_, plain) = draw(panel(Vec::new()));
    let colour = hex(region_colour(Theme::Light));
    assert!(!plain.contains(&colour), "no regions, no mask colour");
    let filled: Vec<&str> = rects(&svg).into_iter().filter(|r| attribute(r, "fill") == Some(colour.as_str())).collect();
    assert_eq!(filled.len(), 2, "two regions inside the axes");
    let geometry = &layout.panels[0];
    let (left, top, right, bottom) = geometry.plot_px;
    let x = |r: &str, name: &str| attribute(r, name).unwrap().parse::<f64>().unwrap();
    // The passband floor starts at the left border and ends at 500 Hz, from −1 dB down to the bottom.
    let pass = filled[0];
    assert!((x(pass, "x") - f64::from(left)).abs() <= 1.0);
    assert!((x(pass, "x") + x(pass, "width") - geometry.x_px_for(500.0).unwrap()).abs() <= 1.5);
    assert!((x(pass, "y") - geometry.y_px_for(-1.0).unwrap()).abs() <= 1.5);
    assert!((x(pass, "y") + x(pass, "height") - f64::from(bottom)).abs() <= 1.5);
    // The stopband runs from 20 kHz to the right border, from −20 dB up to the top.
    let stop = filled[1];
    assert!((x(stop, "x") - geometry.x_px_for(20e3).unwrap()).abs() <= 1.5);
    assert!((x(stop, "x") + x(stop, "width") - f64::from(right)).abs() <= 1.5);
    assert!((x(stop, "y") - f64::from(top)).abs() <= 1.5);
    // Both limit lines are drawn as solid lines of the mask colour.
    let lines = svg.matches(&format!("stroke=\"{colour}\"")).count();
    assert!(lines >= 2, "{lines} limit lines");
    // The fill is translucent, so the curve stays visible through it.
    assert!(filled.iter().all(|r| attribute(r, "opacity").is_some_and(|o| o.parse::<f64>().unwrap() < 0.5)));
}
