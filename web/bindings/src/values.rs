//! Part values for the page: reading and writing engineering notation, and stepping a value
//! through its E-series (or stock-list) neighbours. All of it is the core's `notation` and
//! `eseries`; this module only maps the page's words onto them.

use crate::error::WebError;
use bandwright::eseries::{PartValues, Series, StockList};
use bandwright::notation::{self, Quantity};

/// The quantity names the page may pass, with the core quantity each one means.
pub const QUANTITIES: &[(&str, Quantity)] = &[
    ("resistance", Quantity::Resistance),
    ("capacitance", Quantity::Capacitance),
    ("inductance", Quantity::Inductance),
    ("frequency", Quantity::Frequency),
    ("ratio", Quantity::Ratio),
    ("time", Quantity::Time),
    ("voltage", Quantity::Voltage),
];

/// The fewest significant digits a formatted value shows (E96 and E192 values need 3).
pub const MIN_DIGITS: usize = 3;
/// The most digits tried to write a typed value back exactly; beyond it a value (one that came
/// from arithmetic, such as an ideal value) is shown with [`FALLBACK_DIGITS`].
pub const MAX_EXACT_DIGITS: usize = 9;
/// Digits for a value that no short text gives back exactly.
pub const FALLBACK_DIGITS: usize = 4;

/// Which way [`step_value`] moves.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Direction {
    /// To the next value above.
    Up,
    /// To the next value below.
    Down,
}

/// Finds the quantity the page names.
///
/// # Errors
/// [`WebError`] listing the accepted names.
pub fn quantity_named(name: &str) -> Result<Quantity, WebError> {
    QUANTITIES.iter().find(|(known, _)| *known == name.trim()).map(|(_, quantity)| *quantity).ok_or_else(|| {
        let names: Vec<&str> = QUANTITIES.iter().map(|(known, _)| *known).collect();
        WebError::general(format!("unknown quantity {name:?}; use one of {}", names.join(", ")))
    })
}

/// Reads `text` in engineering notation ("4k7", "100n", "2.2 µF") as a value of `quantity`.
///
/// # Errors
/// The core's [`notation::ParseError`] text (it repeats the text and says what is accepted), or
/// an unknown quantity name.
pub fn parse_value(text: &str, quantity: &str) -> Result<f64, WebError> {
    let quantity = quantity_named(quantity)?;
    Ok(notation::parse_value(text, quantity)?)
}

/// Writes `value` with an SI prefix and the unit, as the core formats it ("4.70 kΩ").
///
/// Uses the fewest digits from [`MIN_DIGITS`] up to [`MAX_EXACT_DIGITS`] whose text reads back
/// as exactly `value`, so a typed value is never silently rounded; other values get
/// [`FALLBACK_DIGITS`].
///
/// # Errors
/// A value that is not finite, or an unknown quantity name.
pub fn format_value(value: f64, quantity: &str) -> Result<String, WebError> {
    let quantity = quantity_named(quantity)?;
    if !value.is_finite() {
        return Err(WebError::general(format!("cannot write {value} as a value; give a finite number")));
    }
    let exact = (MIN_DIGITS..=MAX_EXACT_DIGITS).find(|&digits| {
        let text = notation::format_quantity(value, quantity, digits);
        notation::parse_value(&text, quantity).is_ok_and(|back| back == value)
    });
    Ok(notation::format_quantity(value, quantity, exact.unwrap_or(FALLBACK_DIGITS)))
}

/// Parses the page's direction number: +1 up, −1 down.
///
/// # Errors
/// Any other number.
pub fn direction_from(step: f64) -> Result<Direction, WebError> {
    if step == 1.0 {
        Ok(Direction::Up)
    } else if step == -1.0 {
        Ok(Direction::Down)
    } else {
        Err(WebError::general(format!("step direction {step} is not accepted; use +1 (up) or -1 (down)")))
    }
}

/// The values a part may take: an E-series by name ("E12", any case), or else the text of a
/// stock list (one value per line, see the core's `StockList::parse`).
///
/// # Errors
/// A name that looks like an E-series but is not one, or a stock list that cannot be read.
pub fn part_values(series: &str) -> Result<PartValues, WebError> {
    if let Some(known) = Series::from_name(series) {
        return Ok(PartValues::Series(known));
    }
    let trimmed = series.trim();
    let looks_like_series = trimmed.len() > 1
        && trimmed.starts_with(['E', 'e'])
        && trimmed[1..].chars().all(|c| c.is_ascii_digit())
        && !trimmed.contains('\n');
    if looks_like_series {
        let names: Vec<&str> = Series::ALL.iter().map(|s| s.name()).collect();
        return Err(WebError::general(format!(
            "{trimmed:?} is not an E-series (IEC 60063 has {}); or give a stock list, one value per line",
            names.join(", ")
        )));
    }
    StockList::parse("stock list", series, Quantity::Any)
        .map(PartValues::Stock)
        .map_err(|error| WebError::general(error.to_string()))
}

/// Returns the next standard value above or below `value` in `series` (across decades).
///
/// A value between two standard values steps to the nearer of them in the asked direction, so
/// the arrow keys bring an ideal value onto the series.
///
/// # Errors
/// A value that is not finite and above 0, a bad series or stock list, or no value beyond the
/// end of a stock list.
pub fn step_value(value: f64, series: &str, direction: Direction) -> Result<f64, WebError> {
    if !(value.is_finite() && value > 0.0) {
        return Err(WebError::general(format!("cannot step from {value}; a part value must be finite and above 0")));
    }
    let values = part_values(series)?;
    let next = match direction {
        Direction::Up => values.next_above(value),
        Direction::Down => values.next_below(value),
    };
    next.ok_or_else(|| {
        let (word, end) = match direction {
            Direction::Up => ("above", "largest"),
            Direction::Down => ("below", "smallest"),
        };
        WebError::general(format!(
            "no value {word} {} in {}; it is already the {end}",
            notation::format_value(value, 4),
            values.name()
        ))
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn check_step(value: f64, series: &str, direction: Direction, expected: f64) {
        let got = step_value(value, series, direction).unwrap();
        assert_eq!(got, expected, "{value} {series} {direction:?}");
    }

    #[test]
    fn steps_walk_e_series_neighbours_across_decades() {
        // Source: IEC 60063 E12 (1.0 1.2 1.5 1.8 2.2 2.7 3.3 3.9 4.7 5.6 6.8 8.2), via the core's table.
        check_step(4700.0, "E12", Direction::Up, 5600.0);
        check_step(4700.0, "E12", Direction::Down, 3900.0);
        check_step(8200.0, "E12", Direction::Up, 10_000.0);
        check_step(1000.0, "e12", Direction::Down, 820.0);
        check_step(100e-9, "E6", Direction::Down, 68e-9);
        // Source: IEC 60063 E96 …4.64 4.75 4.87…
        check_step(4750.0, "E96", Direction::Up, 4870.0);
        // An ideal value off the series steps onto the series: 1591.5 Ω → 1.6 k / 1.5 k in E24.
        check_step(1591.549, "E24", Direction::Up, 1600.0);
        check_step(1591.549, "E24", Direction::Down, 1500.0);
    }

    #[test]
    fn steps_walk_a_stock_list_and_stop_at_its_ends() {
        let stock = "# drawer 3\n100u\n220u\n1mH\n";
        check_step(220e-6, stock, Direction::Up, 1e-3);
        check_step(150e-6, stock, Direction::Down, 100e-6);
        let error = step_value(1e-3, stock, Direction::Up).unwrap_err().to_string();
        assert!(error.contains("no value above") && error.contains("largest"), "{error}");
    }

    #[test]
    fn bad_steps_say_what_is_accepted() {
        assert!(step_value(0.0, "E12", Direction::Up).unwrap_err().to_string().contains("above 0"));
        assert!(step_value(f64::NAN, "E12", Direction::Up).is_err());
        let typo = step_value(100.0, "E13", Direction::Up).unwrap_err().to_string();
        assert!(typo.contains("\"E13\" is not an E-series") && typo.contains("E192"), "{typo}");
        let stock = step_value(100.0, "1k\nabc\n", Direction::Up).unwrap_err().to_string();
        assert!(stock.starts_with("stock list line 2: cannot read \"abc\""), "{stock}");
        assert_eq!(direction_from(1.0), Ok(Direction::Up));
        assert_eq!(direction_from(-1.0), Ok(Direction::Down));
        assert!(direction_from(2.0).unwrap_err().to_string().contains("+1 (up) or -1 (down)"));
    }

    #[test]
    fn values_are_read_and_written_as_the_core_does() {
        assert_eq!(parse_value("4k7", "resistance"), Ok(4700.0));
        assert_eq!(parse_value("100 nF", "capacitance"), Ok(100e-9));
        assert_eq!(parse_value("2.5", "ratio"), Ok(2.5));
        let wrong_unit = parse_value("100nF", "resistance").unwrap_err().to_string();
        assert!(wrong_unit.starts_with("cannot read \"100nF\" as a value"), "{wrong_unit}");
        assert!(parse_value("1k", "mass").unwrap_err().to_string().contains("unknown quantity \"mass\""));
        assert_eq!(format_value(4700.0, "resistance").unwrap(), "4.70 kΩ");
        assert_eq!(format_value(100e-9, "capacitance").unwrap(), "100 nF");
        assert_eq!(format_value(1000.0, "frequency").unwrap(), "1.00 kHz");
        // A typed value with more digits is written back exactly, not rounded to 3 digits.
        assert_eq!(format_value(1234.5, "resistance").unwrap(), "1.2345 kΩ");
        // A value from arithmetic gets 4 digits.
        assert_eq!(format_value(1_591.549_430_918_953_5, "resistance").unwrap(), "1.592 kΩ");
        assert!(format_value(f64::INFINITY, "resistance").is_err());
    }

    #[test]
    fn every_formatted_value_reads_back() {
        for value in [1.0, 4.7e3, 2.2e-9, 0.47, 1.5e6, 9.76e4, 1e-12, 123_456.0] {
            for (name, _) in QUANTITIES {
                let text = format_value(value, name).unwrap();
                let back = parse_value(&text, name).unwrap();
                assert!((back - value).abs() <= value * 5e-4, "{value} {name} → {text} → {back}");
            }
        }
    }
}
