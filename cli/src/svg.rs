//! Writes a Bode plot (magnitude, phase, group delay) of a response to an SVG file through the
//! plot layer.

use anyhow::{anyhow, Result};
use bandwright::Response;
use bandwright_plot::{draw_panels, ChartOptions, Panel, Quantity, Series, SeriesStyle, Theme};
use plotters::prelude::*;
use std::path::Path;

/// Draws magnitude, phase and group delay of `response` into `path`.
pub fn write_bode(path: &Path, title: &str, response: &Response) -> Result<()> {
    let f = response.frequencies();
    let db = response.magnitude_db();
    let phase = response.phase_deg();
    let tau = response.group_delay_s();
    let series = |values| vec![Series { label: "", f_hz: f, values, style: SeriesStyle::Primary }];
    let panels = [
        Panel {
            quantity: Quantity::MagnitudeDb,
            series: series(&db),
            y_range: None,
            bands: Vec::new(),
            regions: Vec::new(),
        },
        Panel {
            quantity: Quantity::PhaseDeg,
            series: series(&phase),
            y_range: None,
            bands: Vec::new(),
            regions: Vec::new(),
        },
        Panel {
            quantity: Quantity::GroupDelayS,
            series: series(&tau),
            y_range: None,
            bands: Vec::new(),
            regions: Vec::new(),
        },
    ];
    let options = ChartOptions { title: Some(title.to_string()), theme: Theme::Light, ..ChartOptions::default() };
    let backend = SVGBackend::new(path, (900, 780));
    let area = backend.into_drawing_area();
    draw_panels(&area, &panels, &options).map_err(|e| anyhow!("{e}"))?;
    area.present().map_err(|e| anyhow!("{e}"))?;
    Ok(())
}
