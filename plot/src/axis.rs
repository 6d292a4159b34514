//! Axis ticks and tick labels: 1-2-5 key points on log axes, nice linear steps, and
//! engineering-prefixed label text.
//!
//! Every function here is pure and total: bad input (non-finite limits, reversed ranges,
//! non-positive limits on a log axis) gives an empty tick list rather than a panic, and the
//! chart layer validates ranges before it asks for ticks.
//!
//! The 1-2-5 sequence and SI prefixes are common practice for Bode-plot axes; the SI prefix
//! symbols themselves are those of the SI brochure (BIPM), with `µ` (U+00B5) for micro.

/// Largest number of ticks [`nice_frequency_ticks`] returns before it falls back to fewer
/// ticks per decade.
///
/// Thirteen 1-2-5 ticks cover four decades (for example 10 Hz to 100 kHz); labels stay a few
/// characters wide, so a plot of about 400 px or more never crowds them.
pub const MAX_FREQUENCY_TICKS: usize = 13;

/// Returns tick frequencies for a log frequency axis from `f_lo` to `f_hi` (both in Hz).
///
/// The ticks follow the 1-2-5 sequence in every decade (20, 50, 100, 200, 500, 1k...). When
/// that would give more than [`MAX_FREQUENCY_TICKS`] ticks, only decades are kept (1, 10,
/// 100...), and when even the decades are too many, every second, third... decade is kept,
/// so that labels never crowd. When the span is so narrow that fewer than two 1-2-5 values
/// fall inside it, evenly spaced linear ticks are returned instead (see
/// [`nice_linear_ticks`]).
///
/// The result is sorted ascending and lies within `[f_lo, f_hi]` (a relative slack of 1e-9
/// keeps end points that rounding puts just outside). It is empty when the limits are not
/// finite, `f_lo <= 0` or `f_lo >= f_hi`.
pub fn nice_frequency_ticks(f_lo: f64, f_hi: f64) -> Vec<f64> {
    nice_log_ticks(f_lo, f_hi, MAX_FREQUENCY_TICKS)
}

/// Returns tick values for any log axis from `lo` to `hi`, with at most `max_ticks` ticks
/// where possible.
///
/// This is the general form of [`nice_frequency_ticks`] (which uses
/// [`MAX_FREQUENCY_TICKS`]); the chart also uses it for the |Z| axis. The strategy is, in
/// order: 1-2-5 per decade, decades only, every k-th decade. When fewer than two 1-2-5 values
/// fall inside the range, linear ticks are used instead. It is empty when the limits are not
/// finite, `lo <= 0`, `lo >= hi` or `max_ticks == 0`.
pub fn nice_log_ticks(lo: f64, hi: f64, max_ticks: usize) -> Vec<f64> {
    if !(lo.is_finite() && hi.is_finite()) || lo <= 0.0 || lo >= hi || max_ticks == 0 {
        return Vec::new();
    }
    let one_two_five = log_ticks_with_mantissas(lo, hi, &[1.0, 2.0, 5.0], 1);
    if one_two_five.len() < 2 {
        let linear = nice_linear_ticks(lo, hi, max_ticks.clamp(2, 6));
        // Linear ticks can start at zero, which a log axis cannot show.
        return linear.into_iter().filter(|&v| v > 0.0).collect();
    }
    if one_two_five.len() <= max_ticks {
        return one_two_five;
    }
    let mut stride = 1;
    loop {
        let decades = log_ticks_with_mantissas(lo, hi, &[1.0], stride);
        if decades.len() <= max_ticks || stride > 400 {
            return decades;
        }
        stride += 1;
    }
}

/// Returns about `max_ticks` evenly spaced "nice" ticks (steps of 1, 2 or 5 times a power of
/// ten) covering `[lo, hi]`.
///
/// The step is the smallest 1-2-5 step that gives at most `max_ticks` ticks; ticks are whole
/// multiples of the step, so 0 is a tick whenever the range contains it. The result is sorted
/// ascending and may have fewer than `max_ticks` entries. It is empty when the limits are not
/// finite, `lo > hi` or `max_ticks == 0`; when `lo == hi` it is `[lo]`.
pub fn nice_linear_ticks(lo: f64, hi: f64, max_ticks: usize) -> Vec<f64> {
    if !(lo.is_finite() && hi.is_finite()) || lo > hi || max_ticks == 0 {
        return Vec::new();
    }
    if lo == hi {
        return vec![lo];
    }
    let Some(step) = nice_step(hi - lo, max_ticks) else {
        return Vec::new();
    };
    ticks_with_step(lo, hi, step)
}

/// Formats a frequency in hertz as a short axis label with an SI prefix and no unit:
/// 20, 50, 100, 1k, 2.5k, 10k, 1M, 2.5M.
///
/// Sub-hertz values use the milli prefix, so 0.5 Hz reads "500m" (500 mHz). The text keeps
/// up to four significant digits and drops trailing zeros, so no "1000.0" style text
/// appears. See [`format_engineering`] for the rules.
pub fn format_frequency_label(f_hz: f64) -> String {
    format_engineering(f_hz)
}

/// Formats a value with an SI prefix (f, p, n, µ, m, k, M, G, T, P) and no unit, for axis
/// labels: 0.000002 → "2µ", 5e-7 → "500n", 4700 → "4.7k", -90 → "-90", 0 → "0".
///
/// The value is rounded to four significant digits, then written with the prefix that leaves
/// one to three integer digits; trailing zeros and a trailing decimal point are dropped.
/// Values beyond the prefix range are written in exponent form ("1e18"); NaN and infinities
/// are written as "NaN", "inf" and "-inf".
pub fn format_engineering(value: f64) -> String {
    if value.is_nan() {
        return "NaN".to_string();
    }
    if value.is_infinite() {
        return if value > 0.0 { "inf" } else { "-inf" }.to_string();
    }
    if value == 0.0 {
        return "0".to_string();
    }
    // `{:.3e}` rounds correctly to four significant digits and tells us the exponent of the
    // rounded value, so 999.99 becomes "1.000e3" and gets the kilo prefix.
    let scientific = format!("{:.3e}", value.abs());
    let Some((mantissa, exponent)) = scientific.split_once('e') else {
        return format!("{value}");
    };
    let Ok(exponent) = exponent.parse::<i32>() else {
        return format!("{value}");
    };
    let digits: String = mantissa.chars().filter(char::is_ascii_digit).collect();
    let engineering_exponent = exponent.div_euclid(3) * 3;
    let Some(prefix) = si_prefix(engineering_exponent) else {
        let sign = if value < 0.0 { "-" } else { "" };
        return format!("{sign}{}e{exponent}", trim_decimal(mantissa));
    };
    let shift = (exponent - engineering_exponent) as usize; // 0, 1 or 2
    let (integer_part, fraction_part) = digits.split_at(shift + 1);
    let mut text = String::new();
    if value < 0.0 {
        text.push('-');
    }
    text.push_str(integer_part);
    let fraction_part = fraction_part.trim_end_matches('0');
    if !fraction_part.is_empty() {
        text.push('.');
        text.push_str(fraction_part);
    }
    text.push_str(prefix);
    text
}

/// Formats a plain number for a linear axis label (dB, degrees): whole numbers without a
/// decimal point ("-20", "45"), others with up to three decimals and no trailing zeros.
///
/// Negative zero and values within 1e-9 of zero read "0".
pub fn format_plain(value: f64) -> String {
    if !value.is_finite() {
        return format_engineering(value);
    }
    if value.abs() < 1e-9 {
        return "0".to_string();
    }
    if (value - value.round()).abs() < 1e-9 {
        return format!("{:.0}", value.round());
    }
    trim_decimal(&format!("{value:.3}")).to_string()
}

/// Returns the smallest 1-2-5 step that covers `span` with at most `max_ticks` ticks.
///
/// `None` when `span` is not finite and positive, or `max_ticks == 0`.
pub(crate) fn nice_step(span: f64, max_ticks: usize) -> Option<f64> {
    if !(span.is_finite() && span > 0.0) || max_ticks == 0 {
        return None;
    }
    let intervals = max_ticks.saturating_sub(1).max(1) as f64;
    let raw = span / intervals;
    let first_exponent = raw.log10().floor() as i32 - 1;
    // A few candidates per decade are enough; the loop ends within three decades.
    for exponent in first_exponent..first_exponent + 8 {
        for mantissa in [1.0, 2.0, 5.0] {
            let step = scaled_power_of_ten(mantissa, exponent);
            if step >= raw * (1.0 - 1e-12) && (span / step).floor() + 1.0 <= max_ticks as f64 + 1e-9 {
                return Some(step);
            }
        }
    }
    None
}

/// Returns the whole multiples of `step` inside `[lo, hi]` (with a small slack for rounding).
pub(crate) fn ticks_with_step(lo: f64, hi: f64, step: f64) -> Vec<f64> {
    if !(lo.is_finite() && hi.is_finite() && step.is_finite()) || step <= 0.0 || lo > hi {
        return Vec::new();
    }
    let slack = step * 1e-9;
    let first = ((lo - slack) / step).ceil();
    let last = ((hi + slack) / step).floor();
    if !(first.is_finite() && last.is_finite()) || last - first > 10_000.0 {
        return Vec::new();
    }
    let (first, last) = (first as i64, last as i64);
    (first..=last)
        .map(|multiple| {
            let value = multiple as f64 * step;
            if value.abs() < slack {
                0.0
            } else {
                value
            }
        })
        .collect()
}

/// Returns `mantissa × 10^exponent`, computed so that values such as 0.01 or 2e-6 are the
/// nearest doubles to the decimal value (10^k is exact for 0 <= k <= 22).
pub(crate) fn scaled_power_of_ten(mantissa: f64, exponent: i32) -> f64 {
    if exponent >= 0 {
        mantissa * 10f64.powi(exponent)
    } else {
        mantissa / 10f64.powi(-exponent)
    }
}

/// Returns the values `m × 10^e` for each mantissa `m` and each decade `e` that is a multiple
/// of `stride`, inside `[lo, hi]` with a relative slack of 1e-9, sorted ascending.
fn log_ticks_with_mantissas(lo: f64, hi: f64, mantissas: &[f64], stride: i32) -> Vec<f64> {
    let first_decade = lo.log10().floor() as i32 - 1;
    let last_decade = hi.log10().ceil() as i32 + 1;
    let (lo_slack, hi_slack) = (lo * (1.0 - 1e-9), hi * (1.0 + 1e-9));
    let mut ticks = Vec::new();
    for decade in first_decade..=last_decade {
        if decade.rem_euclid(stride) != 0 {
            continue;
        }
        for &mantissa in mantissas {
            let value = scaled_power_of_ten(mantissa, decade);
            if value >= lo_slack && value <= hi_slack {
                ticks.push(value);
            }
        }
    }
    ticks
}

/// Returns the SI prefix symbol for a power of ten that is a multiple of three.
fn si_prefix(exponent: i32) -> Option<&'static str> {
    Some(match exponent {
        -15 => "f",
        -12 => "p",
        -9 => "n",
        -6 => "µ",
        -3 => "m",
        0 => "",
        3 => "k",
        6 => "M",
        9 => "G",
        12 => "T",
        15 => "P",
        _ => return None,
    })
}

/// Drops trailing zeros after a decimal point, and the point itself when nothing follows.
fn trim_decimal(text: &str) -> &str {
    if text.contains('.') {
        text.trim_end_matches('0').trim_end_matches('.')
    } else {
        text
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn check_label(value: f64, expected: &str) {
        assert_eq!(format_frequency_label(value), expected, "label of {value}");
    }

    fn assert_sorted(ticks: &[f64]) {
        assert!(ticks.windows(2).all(|pair| pair[0] < pair[1]), "not strictly ascending: {ticks:?}");
    }

    fn assert_close_set(actual: &[f64], expected: &[f64]) {
        assert_eq!(actual.len(), expected.len(), "{actual:?} vs {expected:?}");
        for (a, e) in actual.iter().zip(expected) {
            assert!((a - e).abs() <= e.abs() * 1e-12, "{actual:?} vs {expected:?}");
        }
    }

    #[test]
    fn audio_band_gets_one_two_five_ticks() {
        let ticks = nice_frequency_ticks(20.0, 20_000.0);
        assert_close_set(&ticks, &[20.0, 50.0, 100.0, 200.0, 500.0, 1000.0, 2000.0, 5000.0, 10_000.0, 20_000.0]);
        assert_sorted(&ticks);
    }

    #[test]
    fn many_decades_get_decades_only() {
        let ticks = nice_frequency_ticks(1e-2, 1e9);
        assert!(!ticks.is_empty());
        assert!(ticks.len() <= MAX_FREQUENCY_TICKS);
        assert_sorted(&ticks);
        for tick in &ticks {
            let exponent = tick.log10();
            assert!((exponent - exponent.round()).abs() < 1e-12, "{tick} is not a decade");
        }
        assert_close_set(&ticks[..3], &[0.01, 0.1, 1.0]);
        assert_eq!(*ticks.last().unwrap(), 1e9);
    }

    #[test]
    fn huge_span_strides_over_decades() {
        let ticks = nice_frequency_ticks(1e-12, 1e12);
        assert!(ticks.len() <= MAX_FREQUENCY_TICKS, "{ticks:?}");
        assert!(ticks.len() >= 5, "{ticks:?}");
        assert_sorted(&ticks);
    }

    #[test]
    fn narrow_span_falls_back_to_linear_ticks() {
        let ticks = nice_frequency_ticks(900.0, 1100.0);
        assert!(ticks.len() >= 3, "{ticks:?}");
        assert!(ticks.iter().all(|&t| (900.0..=1100.0).contains(&t)));
        assert!(ticks.contains(&1000.0));
        assert_sorted(&ticks);
    }

    #[test]
    fn bad_frequency_ranges_give_no_ticks() {
        assert!(nice_frequency_ticks(0.0, 100.0).is_empty());
        assert!(nice_frequency_ticks(-1.0, 100.0).is_empty());
        assert!(nice_frequency_ticks(100.0, 100.0).is_empty());
        assert!(nice_frequency_ticks(100.0, 10.0).is_empty());
        assert!(nice_frequency_ticks(f64::NAN, 10.0).is_empty());
        assert!(nice_frequency_ticks(1.0, f64::INFINITY).is_empty());
    }

    #[test]
    fn frequency_labels() {
        check_label(20.0, "20");
        check_label(50.0, "50");
        check_label(100.0, "100");
        check_label(1000.0, "1k");
        check_label(2000.0, "2k");
        check_label(2500.0, "2.5k");
        check_label(10_000.0, "10k");
        check_label(22_050.0, "22.05k");
        check_label(1e6, "1M");
        check_label(2.5e6, "2.5M");
        check_label(0.5, "500m");
        check_label(0.0, "0");
        // A decade tick computed as 10^log10(1000) may be a hair off; it still reads "1k".
        check_label(299.999_999_97, "300");
        check_label(999.999_99, "1k");
    }

    #[test]
    fn engineering_labels_for_delay_and_impedance() {
        assert_eq!(format_engineering(2e-6), "2µ");
        assert_eq!(format_engineering(5e-7), "500n");
        assert_eq!(format_engineering(1.5e-3), "1.5m");
        assert_eq!(format_engineering(4700.0), "4.7k");
        assert_eq!(format_engineering(-90.0), "-90");
        assert_eq!(format_engineering(1.0), "1");
        assert_eq!(format_engineering(1e18), "1e18");
        assert_eq!(format_engineering(f64::NAN), "NaN");
    }

    #[test]
    fn plain_labels() {
        assert_eq!(format_plain(-20.0), "-20");
        assert_eq!(format_plain(-0.0), "0");
        assert_eq!(format_plain(2.5), "2.5");
        assert_eq!(format_plain(45.0), "45");
    }

    #[test]
    fn linear_ticks_use_one_two_five_steps() {
        assert_close_set(&nice_linear_ticks(-100.0, 10.0, 7), &[-100.0, -80.0, -60.0, -40.0, -20.0, 0.0]);
        assert_close_set(&nice_linear_ticks(0.0, 1.0, 6), &[0.0, 0.2, 0.4, 0.6, 0.8, 1.0]);
        let delay = nice_linear_ticks(0.0, 2.2e-6, 6);
        assert_sorted(&delay);
        assert!(delay.len() <= 6 && delay.len() >= 3, "{delay:?}");
        assert_eq!(delay[0], 0.0);
    }

    #[test]
    fn linear_ticks_respect_max_count() {
        for max_ticks in 2..12 {
            for (lo, hi) in [(-1.0, 1.0), (0.0, 7.3), (-123.4, 56.7), (1e-9, 3e-9)] {
                let ticks = nice_linear_ticks(lo, hi, max_ticks);
                assert!(ticks.len() <= max_ticks, "{lo}..{hi} max {max_ticks}: {ticks:?}");
                assert!(!ticks.is_empty(), "{lo}..{hi} max {max_ticks}");
                assert!(ticks.iter().all(|&t| t >= lo - 1e-12 && t <= hi + 1e-12));
                assert_sorted(&ticks);
            }
        }
    }

    #[test]
    fn linear_ticks_bad_input() {
        assert!(nice_linear_ticks(1.0, 0.0, 5).is_empty());
        assert!(nice_linear_ticks(0.0, 1.0, 0).is_empty());
        assert!(nice_linear_ticks(f64::NAN, 1.0, 5).is_empty());
        assert_eq!(nice_linear_ticks(3.0, 3.0, 5), vec![3.0]);
    }

    #[test]
    fn log_ticks_for_impedance() {
        assert_close_set(&nice_log_ticks(2.0, 50.0, 6), &[2.0, 5.0, 10.0, 20.0, 50.0]);
        assert_close_set(&nice_log_ticks(1.0, 1000.0, 6), &[1.0, 10.0, 100.0, 1000.0]);
    }
}
