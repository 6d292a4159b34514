//! Where each panel was drawn, so a user interface can map a pointer back to data.
//!
//! The mapping matches the one plotters uses for the chart: the lowest frequency sits on
//! the left pixel column of the plotting rectangle and the highest on the right one, the
//! lowest value on the bottom pixel row and the highest on the top row, linearly in log10 f
//! and (for |Z|) in log10 |Z|. plotters then rounds to whole pixels; these functions do not.

use crate::quantity::Quantity;

/// The geometry of every panel of a drawn chart, top to bottom.
#[derive(Debug, Clone, PartialEq)]
pub struct PanelLayout {
    /// One entry per panel, in the order the panels were given.
    pub panels: Vec<PanelGeometry>,
}

/// The pixel rectangle and data ranges of one drawn panel.
#[derive(Debug, Clone, PartialEq)]
pub struct PanelGeometry {
    /// What the panel shows.
    pub quantity: Quantity,
    /// The plotting rectangle as (left, top, right, bottom), in pixels of the drawing
    /// backend, all four inclusive: `left` is where `f_range_hz.0` is drawn and `bottom`
    /// where `y_range.0` is drawn.
    pub plot_px: (i32, i32, i32, i32),
    /// The frequency range of the x axis in Hz, (low, high); the axis is logarithmic.
    pub f_range_hz: (f64, f64),
    /// The y range in the quantity's unit (dB, degrees, seconds or ohms), (low, high).
    pub y_range: (f64, f64),
    /// Whether the y axis is logarithmic (true for |Z|).
    pub y_log: bool,
}

impl PanelLayout {
    /// Returns the panel whose plotting rectangle contains the pixel `(x_px, y_px)`, if any.
    pub fn panel_at(&self, x_px: f64, y_px: f64) -> Option<&PanelGeometry> {
        self.panels.iter().find(|panel| panel.contains(x_px, y_px))
    }
}

impl PanelGeometry {
    /// Returns the frequency in Hz under the pixel column `x_px`.
    ///
    /// `None` when `x_px` is not finite, lies left or right of the plotting rectangle, or the
    /// rectangle has no width.
    pub fn frequency_at(&self, x_px: f64) -> Option<f64> {
        let (left, _, right, _) = self.plot_px;
        let fraction = fraction_along(x_px, left, right)?;
        Some(interpolate_log(self.f_range_hz, fraction))
    }

    /// Returns the y value (in the quantity's unit) under the pixel row `y_px`.
    ///
    /// `None` when `y_px` is not finite, lies above or below the plotting rectangle, or the
    /// rectangle has no height.
    pub fn value_at(&self, y_px: f64) -> Option<f64> {
        let (_, top, _, bottom) = self.plot_px;
        // Pixel rows grow downwards, values upwards.
        let fraction = fraction_along(y_px, bottom, top)?;
        Some(if self.y_log {
            interpolate_log(self.y_range, fraction)
        } else {
            interpolate_linear(self.y_range, fraction)
        })
    }

    /// Returns the pixel column (not rounded) where the frequency `f_hz` is drawn.
    ///
    /// The column may lie outside the plotting rectangle when `f_hz` is outside the axis
    /// range. `None` when `f_hz` is not a positive finite number.
    pub fn x_px_for(&self, f_hz: f64) -> Option<f64> {
        let (left, _, right, _) = self.plot_px;
        let fraction = fraction_of_log(self.f_range_hz, f_hz)?;
        Some(f64::from(left) + fraction * f64::from(right - left))
    }

    /// Returns the pixel row (not rounded) where the y value `value` is drawn.
    ///
    /// The row may lie outside the plotting rectangle. `None` when `value` is not finite, or
    /// on a log axis not above zero.
    pub fn y_px_for(&self, value: f64) -> Option<f64> {
        let (_, top, _, bottom) = self.plot_px;
        let fraction =
            if self.y_log { fraction_of_log(self.y_range, value)? } else { fraction_of_linear(self.y_range, value)? };
        Some(f64::from(bottom) + fraction * f64::from(top - bottom))
    }

    /// Returns true when the pixel `(x_px, y_px)` lies inside the plotting rectangle (edges
    /// included).
    pub fn contains(&self, x_px: f64, y_px: f64) -> bool {
        let (left, top, right, bottom) = self.plot_px;
        x_px >= f64::from(left) && x_px <= f64::from(right) && y_px >= f64::from(top) && y_px <= f64::from(bottom)
    }
}

/// Position of `px` between the pixels `start` (0) and `end` (1); `None` outside or when
/// the two coincide.
fn fraction_along(px: f64, start: i32, end: i32) -> Option<f64> {
    if !px.is_finite() || start == end {
        return None;
    }
    let fraction = (px - f64::from(start)) / f64::from(end - start);
    (0.0..=1.0).contains(&fraction).then_some(fraction)
}

fn interpolate_linear((lo, hi): (f64, f64), fraction: f64) -> f64 {
    if fraction == 1.0 {
        hi
    } else {
        lo + fraction * (hi - lo)
    }
}

fn interpolate_log((lo, hi): (f64, f64), fraction: f64) -> f64 {
    if fraction == 0.0 {
        return lo;
    }
    if fraction == 1.0 {
        return hi;
    }
    let (log_lo, log_hi) = (lo.log10(), hi.log10());
    10f64.powf(log_lo + fraction * (log_hi - log_lo))
}

fn fraction_of_linear((lo, hi): (f64, f64), value: f64) -> Option<f64> {
    (value.is_finite() && hi != lo).then(|| (value - lo) / (hi - lo))
}

fn fraction_of_log((lo, hi): (f64, f64), value: f64) -> Option<f64> {
    if !(value.is_finite() && value > 0.0 && lo > 0.0 && hi > 0.0 && hi != lo) {
        return None;
    }
    Some((value / lo).log10() / (hi / lo).log10())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn geometry(quantity: Quantity, y_range: (f64, f64)) -> PanelGeometry {
        PanelGeometry {
            quantity,
            plot_px: (70, 12, 767, 211),
            f_range_hz: (20.0, 20_000.0),
            y_range,
            y_log: quantity.is_log_axis(),
        }
    }

    fn assert_relative(actual: f64, expected: f64) {
        assert!(((actual - expected) / expected).abs() <= 1e-9, "{actual} vs {expected}");
    }

    #[test]
    fn frequency_round_trip() {
        let panel = geometry(Quantity::MagnitudeDb, (-60.0, 10.0));
        for f_hz in [20.0, 31.7, 100.0, 1000.0, 4321.0, 19_999.0, 20_000.0] {
            let x_px = panel.x_px_for(f_hz).unwrap();
            assert_relative(panel.frequency_at(x_px).unwrap(), f_hz);
        }
        assert_eq!(panel.x_px_for(20.0), Some(70.0));
        assert_eq!(panel.x_px_for(20_000.0), Some(767.0));
        // 632.46 Hz is the geometric middle of 20 Hz to 20 kHz.
        assert_relative(panel.frequency_at((70.0 + 767.0) / 2.0).unwrap(), 632.455_532_033_675_9);
    }

    #[test]
    fn value_round_trip_linear_and_log() {
        let magnitude = geometry(Quantity::MagnitudeDb, (-60.0, 10.0));
        assert_eq!(magnitude.y_px_for(10.0), Some(12.0));
        assert_eq!(magnitude.y_px_for(-60.0), Some(211.0));
        for value in [-60.0, -33.3, 0.0, 10.0] {
            let y_px = magnitude.y_px_for(value).unwrap();
            let back = magnitude.value_at(y_px).unwrap();
            assert!((back - value).abs() <= 1e-9 * 70.0, "{back} vs {value}");
        }
        let impedance = geometry(Quantity::ImpedanceOhm, (2.0, 50.0));
        for value in [2.0, 3.3, 8.0, 50.0] {
            let y_px = impedance.y_px_for(value).unwrap();
            assert_relative(impedance.value_at(y_px).unwrap(), value);
        }
        // 10 Ω is the geometric middle of 2 Ω and 50 Ω.
        assert_relative(impedance.value_at((12.0 + 211.0) / 2.0).unwrap(), 10.0);
    }

    #[test]
    fn pointer_outside_the_rectangle_gives_none() {
        let panel = geometry(Quantity::PhaseDeg, (-90.0, 0.0));
        assert_eq!(panel.frequency_at(69.0), None);
        assert_eq!(panel.frequency_at(768.0), None);
        assert_eq!(panel.frequency_at(f64::NAN), None);
        assert_eq!(panel.value_at(11.0), None);
        assert_eq!(panel.value_at(212.0), None);
        assert_eq!(panel.x_px_for(0.0), None);
        assert_eq!(panel.x_px_for(-3.0), None);
        let layout = PanelLayout { panels: vec![panel.clone()] };
        assert_eq!(layout.panel_at(100.0, 100.0), Some(&panel));
        assert_eq!(layout.panel_at(10.0, 100.0), None);
    }

    #[test]
    fn degenerate_rectangle_gives_none() {
        let mut panel = geometry(Quantity::MagnitudeDb, (-60.0, 10.0));
        panel.plot_px = (70, 12, 70, 12);
        assert_eq!(panel.frequency_at(70.0), None);
        assert_eq!(panel.value_at(12.0), None);
    }
}
