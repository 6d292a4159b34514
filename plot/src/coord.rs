//! A plotters coordinate for one axis drawn in axis units (log10 f, log10 |Z| or a linear
//! value) with tick positions chosen by [`crate::axis`].
//!
//! plotters' own `WithKeyPoints` wrapper around an `f64` range cannot be given to
//! `configure_mesh`, because the `f64` range opts out of default label formatting; this
//! small type maps values exactly as plotters' `f64` range does and takes our labels.

use std::ops::Range;

use plotters::coord::ranged1d::{DefaultFormatting, KeyPointHint, Ranged};
use plotters::coord::types::RangedCoordf64;

/// A linear axis from `range.start` to `range.end` with explicit major (labelled) and
/// minor (grid only) tick positions, all in axis units.
pub(crate) struct TickedAxis {
    linear: RangedCoordf64,
    major: Vec<f64>,
    minor: Vec<f64>,
}

impl TickedAxis {
    pub(crate) fn new(range: (f64, f64), major: Vec<f64>, minor: Vec<f64>) -> Self {
        Self { linear: (range.0..range.1).into(), major, minor }
    }
}

impl Ranged for TickedAxis {
    type FormatOption = DefaultFormatting;
    type ValueType = f64;

    fn map(&self, value: &f64, limit: (i32, i32)) -> i32 {
        self.linear.map(value, limit)
    }

    fn key_points<Hint: KeyPointHint>(&self, hint: Hint) -> Vec<f64> {
        if hint.weight().allow_light_points() {
            self.minor.clone()
        } else {
            self.major.clone()
        }
    }

    fn range(&self) -> Range<f64> {
        self.linear.range()
    }
}
