//! Writes the three-panel test chart (a synthetic 1 kHz RC low-pass) as SVG to stdout.
//!
//! Run with `cargo run -p bandwright-plot --example demo_svg > chart.svg`; pass `dark` for
//! the dark theme. The data is invented for the demo.

#[path = "../tests/common/mod.rs"]
mod common;

use bandwright_plot::{draw_panels, ChartOptions, Panel, Quantity, Series, SeriesStyle, Theme};
use plotters::prelude::{IntoDrawingArea, SVGBackend};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let theme = if std::env::args().any(|arg| arg == "dark") { Theme::Dark } else { Theme::Light };
    let data = common::low_pass(241, Some(150));
    let curve = |label, values, style| Series { label, f_hz: &data.f_hz, values, style };
    let panels = vec![
        Panel {
            quantity: Quantity::MagnitudeDb,
            series: vec![
                curve("RC low-pass", &data.magnitude_db, SeriesStyle::Primary),
                curve("asymptote", &data.asymptote_db, SeriesStyle::Ideal),
            ],
            y_range: None,
            bands: Vec::new(),
            regions: Vec::new(),
        },
        Panel {
            quantity: Quantity::PhaseDeg,
            series: vec![curve("RC low-pass", &data.phase_deg, SeriesStyle::Primary)],
            y_range: Some((-60.0, -20.0)),
            bands: Vec::new(),
            regions: Vec::new(),
        },
        Panel {
            quantity: Quantity::GroupDelayS,
            series: vec![curve("RC low-pass", &data.group_delay_s, SeriesStyle::Primary)],
            y_range: None,
            bands: Vec::new(),
            regions: Vec::new(),
        },
    ];
    let options = ChartOptions {
        f_range_hz: Some((20.0, 20_000.0)),
        theme,
        title: Some("demo: 1 kHz RC low-pass".to_string()),
        cursor_hz: Some(common::CUTOFF_HZ),
    };
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (800, 640)).into_drawing_area();
        let layout = draw_panels(&root, &panels, &options)?;
        root.present()?;
        for panel in &layout.panels {
            eprintln!("{:?}: plot {:?}, y {:?}", panel.quantity, panel.plot_px, panel.y_range);
        }
    }
    print!("{svg}");
    Ok(())
}
