//! Automatic axis ranges and the y ticks that go with each quantity.
//!
//! The rules are common practice for Bode-style charts rather than a published standard:
//! magnitude rounds to 10 dB and keeps at most [`MAGNITUDE_SPAN_DB`] below the top so a deep
//! stopband does not squash the passband; phase snaps to multiples of 45° (or 90°, 180°...
//! for large spans); group delay starts at zero; |Z| snaps to 1-2-5 values on a log axis.

use crate::axis::{nice_linear_ticks, nice_log_ticks, nice_step, ticks_with_step};
use crate::quantity::Quantity;

/// Largest span of an automatic magnitude range, in dB (about; the bottom is then rounded
/// down to the tick step).
pub const MAGNITUDE_SPAN_DB: f64 = 100.0;

/// Upper limit of the automatic group-delay range when every delay is zero, in seconds.
pub const ZERO_DELAY_TOP_S: f64 = 1e-6;

/// Most y ticks per panel; panels are short, and every label costs a text measurement in the
/// browser.
const MAX_Y_TICKS: usize = 7;

/// Returns an automatic y range `(low, high)` for `values` of `quantity`, in the quantity's
/// own unit (dB, degrees, seconds or ohms; not log10 ohms).
///
/// Non-finite values are ignored, and on the log |Z| axis so are values at or below zero.
/// Returns `None` when no value is left.
///
/// - [`Quantity::MagnitudeDb`]: the top is the next multiple of 10 dB at least 1 dB above the
///   largest value; the bottom is the next multiple of 10 dB below the smallest value, but
///   no more than [`MAGNITUDE_SPAN_DB`] below the top; the span is at least 20 dB. When the
///   tick step is 20 dB the bottom is rounded down to a multiple of 20.
/// - [`Quantity::PhaseDeg`] and [`Quantity::ImpedancePhaseDeg`]: both ends are multiples of
///   the phase tick step, which is 45° for spans up to 270° and 90°, 180°, 360°... beyond.
/// - [`Quantity::GroupDelayS`]: from zero (or the smallest value if negative) to the largest
///   value, rounded out to a 1-2-5 step; all-zero data gives 0 to [`ZERO_DELAY_TOP_S`].
/// - [`Quantity::ImpedanceOhm`]: from the 1-2-5 value at or below the smallest value to the
///   1-2-5 value at or above the largest.
pub fn auto_y_range(quantity: Quantity, values: &[f64]) -> Option<(f64, f64)> {
    let usable = values.iter().copied().filter(|v| v.is_finite() && (!quantity.is_log_axis() || *v > 0.0));
    let (min, max) = usable.fold(None, |acc: Option<(f64, f64)>, v| match acc {
        None => Some((v, v)),
        Some((lo, hi)) => Some((lo.min(v), hi.max(v))),
    })?;
    let range = match quantity {
        Quantity::MagnitudeDb => magnitude_range(min, max),
        Quantity::PhaseDeg | Quantity::ImpedancePhaseDeg => phase_range(min, max),
        Quantity::GroupDelayS => delay_range(min, max),
        Quantity::ImpedanceOhm => impedance_range(min, max),
    };
    Some(range)
}

/// Returns the y tick values for `quantity` over `range` (in the quantity's unit).
///
/// Magnitude and group delay use 1-2-5 linear steps, phase uses multiples of 45°/90°...
/// (falling back to 1-2-5 steps for spans under 90°), and |Z| uses 1-2-5 or decade ticks on
/// its log axis. At most seven ticks are returned where the scheme allows.
pub fn y_ticks(quantity: Quantity, range: (f64, f64)) -> Vec<f64> {
    let (lo, hi) = range;
    let ticks = match quantity {
        Quantity::ImpedanceOhm => return nice_log_ticks(lo, hi, MAX_Y_TICKS - 1),
        Quantity::PhaseDeg | Quantity::ImpedancePhaseDeg => ticks_with_step(lo, hi, phase_step(hi - lo)),
        Quantity::MagnitudeDb | Quantity::GroupDelayS => Vec::new(),
    };
    if ticks.len() >= 2 {
        ticks
    } else {
        nice_linear_ticks(lo, hi, MAX_Y_TICKS)
    }
}

/// Returns an automatic frequency range from the plottable frequencies, in Hz.
///
/// Uses the smallest and largest positive finite frequency. A single frequency gets half a
/// decade on each side. `None` when there is no positive finite frequency.
pub(crate) fn auto_frequency_range(frequencies: impl Iterator<Item = f64>) -> Option<(f64, f64)> {
    let (lo, hi) =
        frequencies.filter(|f| f.is_finite() && *f > 0.0).fold(None, |acc: Option<(f64, f64)>, f| match acc {
            None => Some((f, f)),
            Some((lo, hi)) => Some((lo.min(f), hi.max(f))),
        })?;
    if lo < hi {
        Some((lo, hi))
    } else {
        let half_decade = 10f64.sqrt();
        Some((lo / half_decade, hi * half_decade))
    }
}

fn magnitude_range(min: f64, max: f64) -> (f64, f64) {
    let top = ceil_to(max + 1.0, 10.0);
    let mut bottom = floor_to(min, 10.0).max(top - MAGNITUDE_SPAN_DB);
    if top - bottom < 20.0 {
        bottom = top - 20.0;
    }
    if let Some(step) = nice_step(top - bottom, MAX_Y_TICKS) {
        if step > 10.0 {
            bottom = floor_to(bottom, step);
        }
    }
    (bottom + 0.0, top + 0.0)
}

/// Phase tick step in degrees: 45° up to six intervals, then doubling (90°, 180°...).
fn phase_step(span_deg: f64) -> f64 {
    let mut step = 45.0;
    while span_deg / step > 6.0 && step < 1e12 {
        step *= 2.0;
    }
    step
}

fn phase_range(min: f64, max: f64) -> (f64, f64) {
    let mut step = phase_step(max - min);
    let (mut lo, mut hi) = (floor_to(min, step), ceil_to(max, step));
    // Rounding out can widen the span past the step's limit; one more pass settles it.
    let wider_step = phase_step(hi - lo);
    if wider_step > step {
        step = wider_step;
        lo = floor_to(min, step);
        hi = ceil_to(max, step);
    }
    if hi - lo < step {
        lo -= step;
        hi += step;
    }
    (lo + 0.0, hi + 0.0)
}

fn delay_range(min: f64, max: f64) -> (f64, f64) {
    let lo = min.min(0.0);
    let mut hi = max.max(0.0);
    if hi - lo <= 0.0 {
        hi = ZERO_DELAY_TOP_S;
    }
    match nice_step(hi - lo, MAX_Y_TICKS - 1) {
        Some(step) => (floor_to(lo, step), ceil_to(hi, step)),
        None => (lo, hi),
    }
}

/// Rounds `value` down to a whole multiple of `step`, treating values within a billionth of
/// a step above a multiple as on it (so 1e-6 / 2e-7 rounding to 5.000000001 stays 5).
fn floor_to(value: f64, step: f64) -> f64 {
    ((value / step + 1e-9).floor() * step) + 0.0
}

/// Rounds `value` up to a whole multiple of `step`, with the same slack as [`floor_to`].
fn ceil_to(value: f64, step: f64) -> f64 {
    ((value / step - 1e-9).ceil() * step) + 0.0
}

fn impedance_range(min: f64, max: f64) -> (f64, f64) {
    let mut lo = floor_one_two_five(min);
    let mut hi = ceil_one_two_five(max);
    if lo >= hi {
        lo = floor_one_two_five(lo * 0.999);
        hi = ceil_one_two_five(hi * 1.001);
    }
    (lo, hi)
}

/// Largest value of the form {1, 2, 5} × 10^k that is at most `value` (which is > 0).
fn floor_one_two_five(value: f64) -> f64 {
    let decade = value.log10().floor() as i32;
    for exponent in [decade + 1, decade, decade - 1] {
        for mantissa in [5.0, 2.0, 1.0] {
            let candidate = crate::axis::scaled_power_of_ten(mantissa, exponent);
            if candidate <= value * (1.0 + 1e-9) {
                return candidate;
            }
        }
    }
    value
}

/// Smallest value of the form {1, 2, 5} × 10^k that is at least `value` (which is > 0).
fn ceil_one_two_five(value: f64) -> f64 {
    let decade = value.log10().floor() as i32;
    for exponent in [decade - 1, decade, decade + 1] {
        for mantissa in [1.0, 2.0, 5.0] {
            let candidate = crate::axis::scaled_power_of_ten(mantissa, exponent);
            if candidate >= value * (1.0 - 1e-9) {
                return candidate;
            }
        }
    }
    value
}

#[cfg(test)]
mod tests {
    use super::*;

    fn check(quantity: Quantity, values: &[f64], expected: (f64, f64)) {
        let range = auto_y_range(quantity, values).expect("a range");
        assert!(
            (range.0 - expected.0).abs() <= 1e-12 * expected.0.abs().max(1e-300)
                && (range.1 - expected.1).abs() <= 1e-12 * expected.1.abs().max(1e-300),
            "{quantity:?} of {values:?}: got {range:?}, expected {expected:?}"
        );
    }

    #[test]
    fn magnitude_keeps_headroom_and_clamps_deep_stopband() {
        check(Quantity::MagnitudeDb, &[0.0, -3.0, -40.0], (-40.0, 10.0));
        // A 200 dB deep notch does not pull the bottom below about 100 dB under the top.
        let (bottom, top) = auto_y_range(Quantity::MagnitudeDb, &[0.0, -200.0]).unwrap();
        assert_eq!(top, 10.0);
        assert!(top - bottom <= MAGNITUDE_SPAN_DB + 20.0, "bottom {bottom}");
        assert_eq!(bottom % 20.0, 0.0, "bottom {bottom} is not on a 20 dB step");
        // Flat data gets at least 20 dB.
        check(Quantity::MagnitudeDb, &[-6.0, -6.0], (-20.0, 0.0));
    }

    #[test]
    fn phase_snaps_to_45_or_90() {
        check(Quantity::PhaseDeg, &[-5.7, -89.4], (-90.0, 0.0));
        check(Quantity::PhaseDeg, &[0.0, -270.0], (-270.0, 0.0));
        check(Quantity::PhaseDeg, &[10.0, -350.0], (-360.0, 90.0));
        check(Quantity::ImpedancePhaseDeg, &[0.0, 0.0], (-45.0, 45.0));
    }

    #[test]
    fn group_delay_starts_at_zero() {
        check(Quantity::GroupDelayS, &[1.1e-6, 1.9e-6], (0.0, 2e-6));
        check(Quantity::GroupDelayS, &[0.0], (0.0, ZERO_DELAY_TOP_S));
        let (lo, hi) = auto_y_range(Quantity::GroupDelayS, &[-1e-4, 3e-4]).unwrap();
        assert!(lo <= -1e-4 && hi >= 3e-4, "{lo} {hi}");
    }

    #[test]
    fn impedance_snaps_to_one_two_five() {
        check(Quantity::ImpedanceOhm, &[3.1, 8.0, 42.0], (2.0, 50.0));
        check(Quantity::ImpedanceOhm, &[6.0, 8.0], (5.0, 10.0));
        check(Quantity::ImpedanceOhm, &[10.0, 10.0], (5.0, 20.0));
        // Non-positive values cannot sit on the log axis and are ignored.
        check(Quantity::ImpedanceOhm, &[0.0, -3.0, 4.0, 9.0], (2.0, 10.0));
    }

    #[test]
    fn no_usable_values_gives_none() {
        assert_eq!(auto_y_range(Quantity::MagnitudeDb, &[]), None);
        assert_eq!(auto_y_range(Quantity::MagnitudeDb, &[f64::NAN]), None);
        assert_eq!(auto_y_range(Quantity::ImpedanceOhm, &[0.0, -1.0]), None);
    }

    #[test]
    fn every_auto_range_contains_its_data() {
        let cases: &[(Quantity, &[f64])] = &[
            (Quantity::MagnitudeDb, &[3.2, -17.0]),
            (Quantity::PhaseDeg, &[179.0, -179.0]),
            (Quantity::PhaseDeg, &[-720.0, 5.0]),
            (Quantity::GroupDelayS, &[2.2e-3, 1e-5]),
            (Quantity::ImpedanceOhm, &[0.37, 1234.0]),
        ];
        for (quantity, values) in cases {
            let (lo, hi) = auto_y_range(*quantity, values).unwrap();
            assert!(lo < hi);
            for v in values.iter() {
                assert!(*v >= lo && *v <= hi, "{quantity:?}: {v} outside {lo}..{hi}");
            }
            assert!(y_ticks(*quantity, (lo, hi)).len() >= 2, "{quantity:?} ticks");
        }
    }

    #[test]
    fn phase_ticks_are_multiples_of_45() {
        assert_eq!(y_ticks(Quantity::PhaseDeg, (-90.0, 0.0)), vec![-90.0, -45.0, 0.0]);
        let wide = y_ticks(Quantity::PhaseDeg, (-360.0, 90.0));
        assert!(wide.iter().all(|t| t % 90.0 == 0.0), "{wide:?}");
        // A user range narrower than 45° still gets ticks.
        assert!(y_ticks(Quantity::PhaseDeg, (-10.0, 10.0)).len() >= 2);
    }

    #[test]
    fn frequency_range_from_data() {
        assert_eq!(auto_frequency_range([20.0, 0.0, -5.0, f64::NAN, 20_000.0].into_iter()), Some((20.0, 20_000.0)));
        let (lo, hi) = auto_frequency_range([1000.0].into_iter()).unwrap();
        assert!(lo < 1000.0 && hi > 1000.0);
        assert_eq!(auto_frequency_range([0.0, -1.0].into_iter()), None);
    }
}
