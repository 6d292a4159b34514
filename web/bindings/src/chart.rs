//! The four stacked panels (magnitude, phase, group delay, |Z_in|) of the session's tracks,
//! drawn through the plot layer onto any plotters backend: the HiDPI canvas in the page, or an
//! SVG string for export.

use crate::error::WebError;
use crate::session::{Curves, Workbench};
use bandwright_plot::{
    draw_panels, Band, BandStyle, ChartOptions, Panel, PanelLayout, Quantity, Region, Series, Theme,
};
use plotters::coord::Shift;
use plotters::prelude::{DrawingArea, DrawingBackend, IntoDrawingArea, SVGBackend};

/// The largest SVG export, per side, in pixels.
pub const MAX_SVG_SIDE: u32 = 8192;

/// The panels, top to bottom.
pub const PANELS: [Quantity; 4] =
    [Quantity::MagnitudeDb, Quantity::PhaseDeg, Quantity::GroupDelayS, Quantity::ImpedanceOhm];

/// Finds the theme the page names.
///
/// # Errors
/// Anything but "light" or "dark".
pub fn theme_named(name: &str) -> Result<Theme, WebError> {
    match name.trim() {
        "light" => Ok(Theme::Light),
        "dark" => Ok(Theme::Dark),
        other => Err(WebError::general(format!("unknown theme {other:?}; use light or dark"))),
    }
}

/// Draws the session's swept tracks onto `area` and returns where the panels went; `regions`
/// (a spec mask's forbidden rectangles) are shaded on the panel of their quantity.
///
/// # Errors
/// The plot layer's error (for example an area too small for four panels).
pub fn draw<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    bench: &mut Workbench,
    theme: Theme,
    regions: &[(Quantity, Region)],
) -> Result<PanelLayout, WebError> {
    let grid = bench.grid().frequencies();
    let f_range_hz = (grid[0], grid[grid.len() - 1]);
    // A copy (a few thousand numbers), since the sweep below borrows the bench.
    let bands = bench.tolerance_bands().cloned();
    let swept = bench.swept();
    let panels: Vec<Panel> = PANELS
        .iter()
        .map(|&quantity| Panel {
            quantity,
            series: swept
                .iter()
                .map(|(role, curves)| Series {
                    label: role.legend(),
                    f_hz: &curves.f_hz,
                    values: values_of(curves, quantity),
                    style: role.style(),
                })
                .collect(),
            y_range: None,
            bands: bands.as_ref().map(|b| tolerance_bands(b, quantity)).unwrap_or_default(),
            regions: regions.iter().filter(|(q, _)| *q == quantity).map(|(_, r)| *r).collect(),
        })
        .collect();
    let options = ChartOptions { f_range_hz: Some(f_range_hz), theme, title: None, cursor_hz: None };
    let layout = draw_panels(area, &panels, &options)?;
    area.present().map_err(|error| WebError::general(format!("cannot finish the plot: {error}")))?;
    Ok(layout)
}

/// The plot as an SVG document of `width` × `height` pixels.
///
/// # Errors
/// A size outside 1 … [`MAX_SVG_SIDE`], or the plot layer's error.
pub fn svg(
    bench: &mut Workbench,
    width: u32,
    height: u32,
    theme: Theme,
    regions: &[(Quantity, Region)],
) -> Result<String, WebError> {
    svg_document(width, height, |area| draw(area, bench, theme, regions).map(|_| ()))
}

/// The min/max and percentile bands of a tolerance run on a panel; the legend names them on the
/// magnitude panel only.
fn tolerance_bands(bands: &crate::tolerance::ToleranceBands, quantity: Quantity) -> Vec<Band<'_>> {
    let Some([min, max, low, high]) = bands.edges(quantity) else { return Vec::new() };
    let labelled = quantity == Quantity::MagnitudeDb;
    vec![
        Band {
            label: if labelled { &bands.labels.0 } else { "" },
            f_hz: &bands.f_hz,
            lower: min,
            upper: max,
            style: BandStyle::Outer,
        },
        Band {
            label: if labelled { &bands.labels.1 } else { "" },
            f_hz: &bands.f_hz,
            lower: low,
            upper: high,
            style: BandStyle::Inner,
        },
    ]
}

/// An SVG document of `width` × `height` pixels drawn by `paint`: the one size check and backend
/// of every SVG export (the Bode plot, the time chart, the crossover plot).
///
/// # Errors
/// A size outside 1 … [`MAX_SVG_SIDE`], or `paint`'s error.
pub fn svg_document(
    width: u32,
    height: u32,
    paint: impl FnOnce(&DrawingArea<SVGBackend<'_>, Shift>) -> Result<(), WebError>,
) -> Result<String, WebError> {
    for (what, side) in [("width", width), ("height", height)] {
        if !(1..=MAX_SVG_SIDE).contains(&side) {
            return Err(WebError::general(format!(
                "an SVG {what} of {side} px is not accepted; use 1 to {MAX_SVG_SIDE}"
            )));
        }
    }
    let mut text = String::new();
    {
        let area = SVGBackend::with_string(&mut text, (width, height)).into_drawing_area();
        paint(&area)?;
    }
    Ok(text)
}

fn values_of(curves: &Curves, quantity: Quantity) -> &[Option<f64>] {
    match quantity {
        Quantity::MagnitudeDb => &curves.magnitude_db,
        Quantity::PhaseDeg => &curves.phase_deg,
        Quantity::GroupDelayS => &curves.group_delay_s,
        Quantity::ImpedanceOhm | Quantity::ImpedancePhaseDeg => &curves.input_impedance_ohm,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const RC: &str = r#"{"format": "bandwright-design", "version": 1, "name": "rc",
        "source": {"node": "in", "resistance": 0}, "output": "out",
        "elements": [{"ref": "R1", "kind": "resistor", "value": "1k", "nodes": ["in", "out"]},
                     {"ref": "C1", "kind": "capacitor", "value": "100n", "nodes": ["out", "0"]}]}"#;

    #[test]
    fn svg_export_has_every_panel_and_the_legend() {
        let mut bench = Workbench::new(RC).unwrap();
        bench.keep_variant();
        let text = svg(&mut bench, 800, 640, Theme::Light, &[]).unwrap();
        assert!(text.starts_with("<svg"), "{}", &text[..40]);
        for label in ["magnitude (dB)", "phase (°)", "group delay (s)", "|Z| (Ω)", "A (working)", "B (kept)"] {
            assert!(text.contains(label), "missing {label}");
        }
        assert!(svg(&mut bench, 0, 640, Theme::Light, &[]).unwrap_err().to_string().contains("width of 0 px"));
        let small = svg(&mut bench, 120, 80, Theme::Dark, &[]).unwrap_err().to_string();
        assert!(small.contains("too small") || small.contains("at least"), "{small}");
    }

    #[test]
    fn the_layout_maps_back_to_the_grid_range() {
        let mut bench = Workbench::new(RC).unwrap();
        let mut text = String::new();
        let layout = {
            let area = SVGBackend::with_string(&mut text, (800, 640)).into_drawing_area();
            draw(&area, &mut bench, Theme::Light, &[]).unwrap()
        };
        assert_eq!(layout.panels.len(), 4);
        let grid = bench.grid().frequencies();
        for panel in &layout.panels {
            assert_eq!(panel.f_range_hz, (grid[0], grid[grid.len() - 1]));
        }
        assert!(theme_named("sepia").unwrap_err().to_string().contains("light or dark"));
    }

    #[test]
    fn a_tolerance_summary_is_shaded_until_the_design_changes() {
        let mut bench = Workbench::new(RC).unwrap();
        let f_hz = bench.grid().frequencies().to_vec();
        let options = serde_json::json!({"trials": "30", "seed": "3", "f_hz": f_hz}).to_string();
        let mut planner = crate::tolerance::Planner::new(RC, &options).unwrap();
        planner.add_batch(&planner.run_trials(0, 30)).unwrap();
        planner.add_batch(&planner.run_corners()).unwrap();
        let summary = planner.summarize(None).unwrap().to_string();
        let polygons =
            |bench: &mut Workbench| svg(bench, 800, 640, Theme::Light, &[]).unwrap().matches("<polygon").count();
        assert_eq!(polygons(&mut bench), 0);
        bench.set_tolerance(Some(&summary)).unwrap();
        assert_eq!(bench.tolerance_state(), crate::tolerance::BandState::Shown);
        // Two bands on each of magnitude, phase and group delay, none on |Z|.
        let text = svg(&mut bench, 800, 640, Theme::Light, &[]).unwrap();
        assert_eq!(text.matches("<polygon").count(), 6, "{}", &text[..200]);
        assert!(text.contains("spread min…max") && text.contains("spread 5…95 %"));
        // Another value: the bands no longer apply and are not drawn; the old value again: they are.
        bench.set_part("R1", 1200.0).unwrap();
        assert_eq!(bench.tolerance_state(), crate::tolerance::BandState::Stale);
        assert_eq!(polygons(&mut bench), 0);
        bench.set_part("R1", 1000.0).unwrap();
        assert_eq!(polygons(&mut bench), 6);
        // A summary that is not one is refused and the bands stay.
        assert!(bench.set_tolerance(Some("{}")).unwrap_err().to_string().contains("cannot be drawn"));
        assert_eq!(polygons(&mut bench), 6);
        bench.set_tolerance(None).unwrap();
        assert_eq!(bench.tolerance_state(), crate::tolerance::BandState::None);
    }
}
