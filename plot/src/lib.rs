//! Bandwright plot layer: Bode-style charts drawn onto any plotters `DrawingBackend`.
//!
//! A chart is a stack of panels (magnitude, phase, group delay, |Z|, impedance phase) that
//! share one log-frequency x axis. [`draw_panels`] draws them onto a plotters
//! `DrawingArea`, which may be a browser canvas, an SVG or bitmap file written by the CLI, or
//! a mock backend in tests, and returns a [`PanelLayout`] that maps pointer pixels back to
//! frequency and value. A panel may shade forbidden [`Region`]s (a spec mask). The time chart
//! ([`draw_time_chart`]) draws step and impulse responses against a linear time axis.
//!
//! Invariants: this crate takes plain slices of numbers, not circuit types, so it does not
//! depend on the Bandwright core; it opens no files, starts no threads and reads no clock,
//! so it builds for `wasm32-unknown-unknown` as it is.
//!
//! Conventions: frequencies in Hz, magnitude in dB (20·log10|H|), phase in degrees (drawn as
//! given; unwrapping is the caller's job), group delay in seconds, |Z| in ohms on a log axis.
//! A `None` value is a point that could not be solved and breaks the curve. Curves are
//! clipped at the axis ranges, never flattened onto the border.

#![deny(missing_docs)]

// Reading order: what is plotted, the pure axis and curve math, then drawing.
pub mod quantity;

pub mod axis;

pub mod range;

pub mod clip;

pub mod band;

pub mod theme;

pub mod layout;

pub mod region;

pub mod time_chart;

pub mod error;

pub mod chart;

mod coord;

pub use axis::{
    format_engineering, format_frequency_label, format_plain, nice_frequency_ticks, nice_linear_ticks, nice_log_ticks,
};
pub use band::{band_polygons, Band, BandStyle};
pub use chart::{draw_panels, ChartOptions, Panel, Series, SeriesStyle};
pub use clip::split_into_runs;
pub use error::PlotError;
pub use layout::{PanelGeometry, PanelLayout};
pub use quantity::Quantity;
pub use range::auto_y_range;
pub use region::{region_colour, Region, RegionEdge};
pub use theme::{Theme, ThemeColours};
pub use time_chart::{draw_time_chart, TimeChartOptions, TimeLayout, TimeMarker, TimeSeries};
