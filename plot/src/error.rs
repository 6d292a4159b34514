//! Errors of the plot layer.

use std::fmt;

use crate::quantity::Quantity;

/// Why a chart could not be drawn.
///
/// Every variant carries the offending values; `Display` says what is accepted.
#[derive(Debug, Clone, PartialEq)]
pub enum PlotError {
    /// No panels were given.
    NoPanels,
    /// A panel has no series, or none of its series has a plottable point (a finite value at a
    /// positive finite frequency; for |Z| also a value above zero).
    EmptyData {
        /// Position of the panel in the list, from 0.
        panel_idx: usize,
        /// What the panel shows.
        quantity: Quantity,
    },
    /// A series has a different number of frequencies and values.
    LengthMismatch {
        /// The series label.
        label: String,
        /// Number of frequencies.
        n_frequencies: usize,
        /// Number of values.
        n_values: usize,
    },
    /// A frequency or y range cannot be used.
    BadRange {
        /// Which range, e.g. "frequency range" or "y range of panel 0 (phase)".
        what: String,
        /// The lower limit as given.
        lo: f64,
        /// The upper limit as given.
        hi: f64,
        /// What is accepted instead.
        accepted: &'static str,
    },
    /// The drawing area is too small for the requested panels.
    AreaTooSmall {
        /// Width of the area in pixels.
        width: u32,
        /// Height of the area in pixels.
        height: u32,
        /// Smallest usable width in pixels.
        min_width: u32,
        /// Smallest usable height in pixels for this many panels.
        min_height: u32,
    },
    /// The drawing backend reported an error.
    Drawing(String),
    /// A time chart has no finite sample within its time range.
    EmptyTimeData,
}

impl fmt::Display for PlotError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            PlotError::NoPanels => write!(f, "nothing to draw: give at least one panel"),
            PlotError::EmptyData { panel_idx, quantity } => write!(
                f,
                "panel {panel_idx} ({}) has no plottable points: give at least one series \
                 with a finite value at a positive frequency{}",
                quantity.name(),
                if quantity.is_log_axis() { " and a value above zero" } else { "" }
            ),
            PlotError::LengthMismatch { label, n_frequencies, n_values } => write!(
                f,
                "series \"{label}\" has {n_frequencies} frequencies but {n_values} values: \
                 give one value (or a gap) per frequency"
            ),
            PlotError::BadRange { what, lo, hi, accepted } => {
                write!(f, "{what} {lo} to {hi} cannot be used: {accepted}")
            }
            PlotError::AreaTooSmall { width, height, min_width, min_height } => write!(
                f,
                "drawing area {width}×{height} px is too small: give at least \
                 {min_width}×{min_height} px or fewer panels"
            ),
            PlotError::Drawing(message) => {
                write!(f, "drawing failed ({message}): check that the canvas or output is usable")
            }
            PlotError::EmptyTimeData => write!(
                f,
                "the time chart has no finite sample in its time range: give at least one series with a finite value at a time on the axis"
            ),
        }
    }
}

impl std::error::Error for PlotError {}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn messages_are_lower_case_without_final_period() {
        let errors = [
            PlotError::NoPanels,
            PlotError::EmptyData { panel_idx: 2, quantity: Quantity::ImpedanceOhm },
            PlotError::LengthMismatch { label: "low-pass".into(), n_frequencies: 3, n_values: 2 },
            PlotError::BadRange {
                what: "frequency range".into(),
                lo: 0.0,
                hi: 100.0,
                accepted: "give finite limits with 0 < low < high",
            },
            PlotError::AreaTooSmall { width: 10, height: 10, min_width: 160, min_height: 90 },
            PlotError::Drawing("backend gone".into()),
            PlotError::EmptyTimeData,
        ];
        for error in errors {
            let text = error.to_string();
            let first = text.chars().next().unwrap();
            assert!(!first.is_uppercase(), "{text}");
            assert!(!text.ends_with('.'), "{text}");
        }
    }

    #[test]
    fn messages_carry_the_offending_values() {
        let text = PlotError::BadRange {
            what: "frequency range".into(),
            lo: -5.0,
            hi: 100.0,
            accepted: "give finite limits with 0 < low < high",
        }
        .to_string();
        assert!(text.contains("-5") && text.contains("100"), "{text}");
        let text = PlotError::LengthMismatch { label: "ideal".into(), n_frequencies: 7, n_values: 6 }.to_string();
        assert!(text.contains("ideal") && text.contains('7') && text.contains('6'));
    }
}
