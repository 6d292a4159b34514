//! Engineering notation: reading and writing component values such as `4k7`, `2.2 µF` or `1e-9`.
//!
//! Values are plain `f64` numbers in SI units (ohm, farad, henry, hertz, second, volt, ampere,
//! watt). Only the adapters (CLI, web bindings) call this module; the rest of the core never
//! sees text.
//!
//! # Accepted input ([`parse_value`])
//!
//! - Leading and trailing whitespace is ignored.
//! - An optional sign: `+`, `-` or the Unicode minus sign `−` (U+2212).
//! - A decimal number with a point as the decimal marker: `4.7`, `.47`, `47.`, `4700`. A comma is
//!   not a decimal marker.
//! - An optional exponent: `1e-9`, `2.2E3`, `1e+6`. The exponent needs at least one digit.
//! - At most one multiplier letter, case-sensitive:
//!   `f` (1e-15), `p` (1e-12), `n` (1e-9), `u`, `µ` (U+00B5 micro sign) or `μ` (U+03BC Greek mu)
//!   (1e-6), `m` (1e-3), `k` or `K` (1e3), `M` (1e6), `G` (1e9), `T` (1e12), and the RKM letter
//!   `R` or `r` (×1). `K` is accepted as kilo because IEC 60062 marks resistors with it (`4K7`)
//!   and no other prefix or unit uses that letter. `r` is accepted like `R` because no prefix or
//!   unit uses it either. An exponent may be combined with a prefix (`1e3k` is 1e6).
//! - RKM codes (IEC 60062): the multiplier letter stands in the place of the decimal point:
//!   `4k7` = 4700, `1M5` = 1.5e6, `2n2` = 2.2e-9, `4u7` = 4.7e-6, `2R2` = 2.2, `R47` = 0.47,
//!   `0R1` = 0.1, `100R` = 100, `µ1` = 1e-7. An RKM code has no decimal point and no exponent.
//!   `R` always means ×1 in the SI unit of the quantity: the practice of some makers of marking
//!   inductors in microhenry (`4R7` for 4.7 µH) is *not* applied, so `4R7` is 4.7 H.
//! - An optional unit symbol after the number or the prefix, with or without a space:
//!   `Ω` (U+03A9 Greek capital omega), the ohm sign (U+2126), `ohm`, `ohms`, `Ohm` or `Ohms` for
//!   resistance; `F` for capacitance; `H` for inductance; `Hz` for frequency; `s` for time; `V`
//!   for voltage; `A` for current; `W` for power. Units are case-sensitive, so `mhz` is refused
//!   rather than guessed as millihertz or megahertz. If a unit is given it must fit the
//!   [`Quantity`] asked for: [`Quantity::Any`] accepts every unit and [`Quantity::Ratio`] none.
//!
//! Text that is exactly a unit symbol is read as the unit, and only otherwise is its first letter
//! tried as a prefix. So `10F` is ten farad (femto is lower-case `f`), `1f` is 1e-15, `1fF` is one
//! femtofarad, `1H` is one henry, `1m` is 1e-3 (milli, never metre), `1mH` is a millihenry,
//! `1MHz` is 1e6 Hz and `2s` is two seconds.
//!
//! Not accepted: `nan`, `inf` and values that overflow `f64`; a comma as decimal marker; the
//! IEC 60062 letters `L` (milliohm) and `F` as a decimal marker (`4F7`); non-ASCII digits; two
//! multipliers (`4k7k`, `1kMΩ`).
//!
//! Every failure is a [`ParseError`] that keeps the original text and says what is accepted.
//! [`parse_value`] never panics, whatever the input.
//!
//! # Output
//!
//! [`format_value`], [`format_quantity`] and [`format_rkm`] round to a number of significant
//! digits and pick the SI prefix that puts 1 to 3 digits before the decimal point. Their output is
//! accepted by [`parse_value`]. Micro is written `µ` (U+00B5). Outside the prefix range (below
//! 1e-15 or from 1e15 up) the value is written with an engineering exponent, e.g. `1.00e-18`.

use std::fmt;

/// What physical quantity a value is, so that an optional unit symbol can be checked.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Quantity {
    /// Resistance in ohm (Ω).
    Resistance,
    /// Capacitance in farad (F).
    Capacitance,
    /// Inductance in henry (H).
    Inductance,
    /// Frequency in hertz (Hz).
    Frequency,
    /// Time in seconds (s).
    Time,
    /// Voltage in volt (V).
    Voltage,
    /// Current in ampere (A).
    Current,
    /// Power in watt (W).
    Power,
    /// A dimensionless ratio; no unit symbol is allowed.
    Ratio,
    /// Any quantity: any of the unit symbols above, or none.
    Any,
}

/// A value that could not be read, with the original text and what was wrong.
#[derive(Debug, Clone, PartialEq)]
pub struct ParseError {
    /// The text exactly as it was given, before trimming.
    pub text: String,
    /// What was wrong with it.
    pub problem: ParseProblem,
}

/// The reason a value could not be read.
#[derive(Debug, Clone, PartialEq)]
pub enum ParseProblem {
    /// The text is empty or only whitespace.
    Empty,
    /// The text does not start with a number (after an optional sign), as in `abc` or `nan`.
    NoNumber,
    /// An `e` or `E` exponent marker is not followed by digits, as in `1e` or `1e+`.
    BadExponent,
    /// Text after the number that is neither a prefix nor a unit symbol; holds that text.
    UnknownSuffix(String),
    /// More than one SI prefix or RKM letter, as in `4k7k` or `1kMΩ`.
    DoubleMultiplier,
    /// A unit symbol that does not fit the quantity asked for, as in `100nF` for a resistance.
    WrongUnit {
        /// The unit symbol as written.
        found: String,
        /// The quantity that was asked for.
        expected: Quantity,
    },
    /// The number is too large for an `f64`, as in `1e999`.
    NotFinite,
}

impl Quantity {
    /// Returns the SI unit symbol: `"Ω"`, `"F"`, `"H"`, `"Hz"`, `"s"`, `"V"`, `"A"`, `"W"`, or
    /// `""` for [`Quantity::Ratio`] and [`Quantity::Any`].
    pub fn unit_symbol(self) -> &'static str {
        match self {
            Quantity::Resistance => "Ω",
            Quantity::Capacitance => "F",
            Quantity::Inductance => "H",
            Quantity::Frequency => "Hz",
            Quantity::Time => "s",
            Quantity::Voltage => "V",
            Quantity::Current => "A",
            Quantity::Power => "W",
            Quantity::Ratio | Quantity::Any => "",
        }
    }

    /// Returns the lower-case English name, such as `"resistance"`, for use in messages.
    pub fn name(self) -> &'static str {
        match self {
            Quantity::Resistance => "resistance",
            Quantity::Capacitance => "capacitance",
            Quantity::Inductance => "inductance",
            Quantity::Frequency => "frequency",
            Quantity::Time => "time",
            Quantity::Voltage => "voltage",
            Quantity::Current => "current",
            Quantity::Power => "power",
            Quantity::Ratio => "ratio",
            Quantity::Any => "any quantity",
        }
    }

    /// A typical value in both spellings, for messages.
    fn example(self) -> &'static str {
        match self {
            Quantity::Resistance => "4.7 kΩ or 4k7",
            Quantity::Capacitance => "100 nF or 100n",
            Quantity::Inductance => "10 mH or 10m",
            Quantity::Frequency => "1 kHz or 1k",
            Quantity::Time => "2.2 µs or 2u2",
            Quantity::Voltage => "12 V or 12",
            Quantity::Current => "20 mA or 20m",
            Quantity::Power => "0.25 W or 250m",
            Quantity::Ratio | Quantity::Any => "0.5 or 500m",
        }
    }

    /// Whether a unit symbol of quantity `unit` may be written for a value of this quantity.
    fn admits(self, unit: Quantity) -> bool {
        match self {
            Quantity::Any => true,
            Quantity::Ratio => false,
            own => own == unit,
        }
    }
}

impl fmt::Display for ParseError {
    fn fmt(&self, formatter: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(formatter, "cannot read {} as a value: ", quote(&self.text))?;
        match &self.problem {
            ParseProblem::Empty => write!(formatter, "the text is empty")?,
            ParseProblem::NoNumber => {
                write!(formatter, "it does not start with a number (nan and inf are not values)")?
            }
            ParseProblem::BadExponent => write!(formatter, "the exponent after \"e\" needs at least one digit")?,
            ParseProblem::UnknownSuffix(suffix) => {
                write!(
                    formatter,
                    "{} is not an SI prefix (f p n u µ m k M G T), the RKM letter R or a unit \
                     symbol (Ω F H Hz s V A W)",
                    quote(suffix)
                )?;
                if suffix.starts_with(',') {
                    write!(formatter, "; use a point, not a comma, as the decimal marker")?;
                }
            }
            ParseProblem::DoubleMultiplier => write!(formatter, "only one SI prefix or RKM letter is allowed")?,
            ParseProblem::WrongUnit { found, expected } => {
                let found_text = match unit_quantity(found) {
                    Some(unit) => format!("{} is a unit of {}", quote(found), unit.name()),
                    None => format!("{} is not a unit", quote(found)),
                };
                return match expected {
                    Quantity::Ratio => write!(
                        formatter,
                        "{found_text}, but a ratio takes no unit; leave the unit out, e.g. 0.5 or 500m"
                    ),
                    Quantity::Any => {
                        write!(formatter, "{found_text}; write one of Ω F H Hz s V A W or leave the unit out")
                    }
                    _ => write!(
                        formatter,
                        "{found_text}, but a {} is expected; write it in {} or leave the unit out, \
                         e.g. {}",
                        expected.name(),
                        expected.unit_symbol(),
                        expected.example()
                    ),
                };
            }
            ParseProblem::NotFinite => write!(formatter, "the number is too large (the limit is about 1.8e308)")?,
        }
        write!(formatter, "; write e.g. 4k7, 4.7k, 4700, 4.7e3 or 4.7 kΩ")
    }
}

impl std::error::Error for ParseError {}

/// Reads a value written in engineering notation and returns it in SI units.
///
/// See the [module documentation](self) for everything that is accepted. `quantity` decides
/// which unit symbol, if any, may follow the number; the unit never changes the value.
///
/// # Errors
///
/// Returns a [`ParseError`] holding `text` and the [`ParseProblem`] when the text is empty, has
/// no number, has a bad exponent, an unknown suffix, two multipliers, a unit that does not fit
/// `quantity`, or a value too large for `f64`. Never panics.
pub fn parse_value(text: &str, quantity: Quantity) -> Result<f64, ParseError> {
    read(text, quantity).map_err(|problem| ParseError { text: text.to_string(), problem })
}

/// Formats a value with `significant_digits` digits and an SI prefix, without a unit.
///
/// Examples: 4700.0 with 3 digits is `4.70k`, 1e-7 with 2 is `100n`, 47.0 with 2 is `47`,
/// -2200.0 with 2 is `-2.2k`, and zero is `0`. Trailing zeros are kept because they show the
/// precision. When the prefix puts more digits before the point than asked for, the value is
/// rounded to the digits asked for and padded with zeros (123456 with 2 digits is `120k`).
/// Below 1e-15 and from 1e15 up an engineering exponent is used instead (`1.00e-18`).
///
/// `significant_digits` is clamped to 1..=17, because it may come from a user setting and 17
/// digits already identify every `f64`. NaN and infinities give `NaN`, `inf` and `-inf`, which
/// [`parse_value`] refuses.
pub fn format_value(value: f64, significant_digits: usize) -> String {
    let (number, prefix) = engineering_parts(value, significant_digits);
    format!("{number}{prefix}")
}

/// Formats a value like [`format_value`] followed by a space, the prefix and the unit symbol.
///
/// Examples: `4.70 kΩ`, `100 nF`, `1.00 kHz`, `47 Ω`. [`Quantity::Ratio`] and [`Quantity::Any`]
/// have no unit and give exactly the output of [`format_value`].
pub fn format_quantity(value: f64, quantity: Quantity, significant_digits: usize) -> String {
    let unit = quantity.unit_symbol();
    if unit.is_empty() {
        return format_value(value, significant_digits);
    }
    let (number, prefix) = engineering_parts(value, significant_digits);
    format!("{number} {prefix}{unit}")
}

/// Formats a value as an IEC 60062 RKM code, with the multiplier letter in place of the point.
///
/// Examples with 2 digits: 4700 is `4k7`, 2.2 is `2R2`, 0.47 is `R47`, 1.5e6 is `1M5`, 470e-12
/// is `470p`, 100 is `100R`, 1e-7 is `100n`, 1000 is `1k0`, zero is `0R`. Values from 1 to
/// below 1000, and from 0.1 to below 1, use `R` (×1) as the decimal marker; other values use the
/// SI prefix letter (`µ` for micro). Trailing zeros are kept, as in the fixed-length codes of
/// IEC 60062 (`1K0`).
///
/// Below 1e-15 and from 1e15 up, where RKM has no letter, the output of [`format_value`] is
/// returned instead. `significant_digits` is clamped to 1..=17 as in [`format_value`].
pub fn format_rkm(value: f64, significant_digits: usize) -> String {
    let Some(rounded) = Rounded::new(value, significant_digits) else {
        return if value == 0.0 { "0R".to_string() } else { format_value(value, significant_digits) };
    };
    let sign = if rounded.negative { "-" } else { "" };
    if rounded.exponent == -1 {
        return format!("{sign}R{}", rounded.digits);
    }
    let exponent3 = rounded.exponent.div_euclid(3) * 3;
    let letter = match exponent3 {
        0 => "R",
        other => match prefix_symbol(other) {
            Some(symbol) => symbol,
            None => return format_value(value, significant_digits),
        },
    };
    let (whole, fraction) = rounded.split(exponent3);
    format!("{sign}{whole}{letter}{fraction}")
}

/// Returns the factor of an SI prefix letter, such as 1e3 for `'k'`, or `None` if it is not one.
///
/// Knows `f p n u µ μ m k K M G T` (both micro signs, and `K` as kilo). The RKM letter `R` is
/// not a prefix and gives `None`.
pub fn prefix_factor(prefix: char) -> Option<f64> {
    match prefix {
        'f' => Some(1e-15),
        'p' => Some(1e-12),
        'n' => Some(1e-9),
        // U+00B5 micro sign and U+03BC Greek small mu, escaped so no editor can merge them.
        'u' | '\u{b5}' | '\u{3bc}' => Some(1e-6),
        'm' => Some(1e-3),
        'k' | 'K' => Some(1e3),
        'M' => Some(1e6),
        'G' => Some(1e9),
        'T' => Some(1e12),
        _ => None,
    }
}

/// Longest piece of user text repeated inside a message, in characters.
const QUOTE_LIMIT: usize = 64;

/// Largest exponent magnitude kept while reading digits; anything beyond over- or underflows.
const EXPONENT_LIMIT: i64 = 1_000_000_000_000;

/// Quotes user text for a message: escaped like a Rust string and cut to [`QUOTE_LIMIT`] chars.
fn quote(text: &str) -> String {
    if text.chars().count() > QUOTE_LIMIT {
        let head: String = text.chars().take(QUOTE_LIMIT).collect();
        format!("{:?}", format!("{head}…"))
    } else {
        format!("{text:?}")
    }
}

/// Decimal exponent of a multiplier letter: an SI prefix or the RKM letter `R`/`r` (×1).
fn multiplier_exponent(letter: char) -> Option<i64> {
    match letter {
        'f' => Some(-15),
        'p' => Some(-12),
        'n' => Some(-9),
        'u' | '\u{b5}' | '\u{3bc}' => Some(-6),
        'm' => Some(-3),
        'R' | 'r' => Some(0),
        'k' | 'K' => Some(3),
        'M' => Some(6),
        'G' => Some(9),
        'T' => Some(12),
        _ => None,
    }
}

/// The quantity whose unit symbol is exactly `symbol`, if any.
fn unit_quantity(symbol: &str) -> Option<Quantity> {
    match symbol {
        "\u{3a9}" | "\u{2126}" | "ohm" | "ohms" | "Ohm" | "Ohms" => Some(Quantity::Resistance),
        "F" => Some(Quantity::Capacitance),
        "H" => Some(Quantity::Inductance),
        "Hz" => Some(Quantity::Frequency),
        "s" => Some(Quantity::Time),
        "V" => Some(Quantity::Voltage),
        "A" => Some(Quantity::Current),
        "W" => Some(Quantity::Power),
        _ => None,
    }
}

/// Reads the trimmed text; the caller wraps the problem into a [`ParseError`].
fn read(text: &str, quantity: Quantity) -> Result<f64, ParseProblem> {
    let trimmed = text.trim();
    if trimmed.is_empty() {
        return Err(ParseProblem::Empty);
    }
    let chars: Vec<char> = trimmed.chars().collect();
    let mut scanner = Scanner { chars: &chars, position: 0 };

    let negative = match scanner.peek() {
        Some('-' | '−') => {
            scanner.position += 1;
            true
        }
        Some('+') => {
            scanner.position += 1;
            false
        }
        _ => false,
    };
    let whole = scanner.take_digits();
    let fraction;
    let mut exponent: i64 = 0;
    let mut multiplier_used = false;

    let rkm_letter = scanner
        .peek()
        .and_then(multiplier_exponent)
        .filter(|_| scanner.peek_at(1).is_some_and(|next| next.is_ascii_digit()));
    if let Some(letter_exponent) = rkm_letter {
        scanner.position += 1;
        fraction = scanner.take_digits();
        exponent = letter_exponent;
        multiplier_used = true;
    } else {
        if scanner.peek() == Some('.') {
            scanner.position += 1;
            fraction = scanner.take_digits();
        } else {
            fraction = String::new();
        }
        if whole.is_empty() && fraction.is_empty() {
            return Err(ParseProblem::NoNumber);
        }
        if let Some('e' | 'E') = scanner.peek() {
            scanner.position += 1;
            let exponent_negative = match scanner.peek() {
                Some('-' | '−') => {
                    scanner.position += 1;
                    true
                }
                Some('+') => {
                    scanner.position += 1;
                    false
                }
                _ => false,
            };
            let digits = scanner.take_digits();
            if digits.is_empty() {
                return Err(ParseProblem::BadExponent);
            }
            let magnitude =
                digits.bytes().fold(0_i64, |total, digit| (total * 10 + i64::from(digit - b'0')).min(EXPONENT_LIMIT));
            exponent = if exponent_negative { -magnitude } else { magnitude };
        }
    }

    scanner.skip_whitespace();
    let suffix: String = scanner.rest().iter().collect();
    let suffix = read_suffix(&suffix, multiplier_used)?;
    exponent += suffix.exponent;

    if let Some((symbol, unit_of)) = suffix.unit {
        if !quantity.admits(unit_of) {
            return Err(ParseProblem::WrongUnit { found: symbol.to_string(), expected: quantity });
        }
    }

    // The whole decimal goes through one correctly rounded conversion, so `4k7` gives exactly
    // the same f64 as the literal 4700.0, which a multiplication by 1e3 would not promise.
    let decimal = format!(
        "{}{}.{}e{}",
        if negative { "-" } else { "" },
        if whole.is_empty() { "0" } else { &whole },
        if fraction.is_empty() { "0" } else { &fraction },
        exponent
    );
    let value: f64 = decimal.parse().map_err(|_| ParseProblem::NoNumber)?;
    if value.is_finite() {
        Ok(value)
    } else {
        Err(ParseProblem::NotFinite)
    }
}

/// Reads what follows the number: multiplier letters, then an optional unit symbol.
///
/// A text that is exactly a unit symbol is a unit, which is why `F` is farad and `H` henry.
fn read_suffix(suffix: &str, multiplier_used: bool) -> Result<Suffix<'_>, ParseProblem> {
    let mut rest = suffix;
    let mut n_multipliers = usize::from(multiplier_used);
    let mut exponent = 0;
    loop {
        if rest.is_empty() {
            break;
        }
        if let Some(unit_of) = unit_quantity(rest) {
            if n_multipliers > 1 {
                return Err(ParseProblem::DoubleMultiplier);
            }
            return Ok(Suffix { exponent, unit: Some((rest, unit_of)) });
        }
        let mut chars = rest.chars();
        let letter_exponent = chars
            .next()
            .and_then(multiplier_exponent)
            .ok_or_else(|| ParseProblem::UnknownSuffix(suffix.to_string()))?;
        n_multipliers += 1;
        exponent = letter_exponent;
        rest = chars.as_str().trim_start();
    }
    if n_multipliers > 1 {
        return Err(ParseProblem::DoubleMultiplier);
    }
    Ok(Suffix { exponent, unit: None })
}

/// What [`read_suffix`] found after the number.
struct Suffix<'a> {
    /// Decimal exponent of the multiplier letter; 0 if there is none.
    exponent: i64,
    /// The unit symbol as written and its quantity.
    unit: Option<(&'a str, Quantity)>,
}

/// A cursor over the characters of the trimmed input; never indexes inside a character.
struct Scanner<'a> {
    chars: &'a [char],
    position: usize,
}

impl Scanner<'_> {
    fn peek(&self) -> Option<char> {
        self.peek_at(0)
    }

    fn peek_at(&self, offset: usize) -> Option<char> {
        self.chars.get(self.position.saturating_add(offset)).copied()
    }

    fn take_digits(&mut self) -> String {
        let mut digits = String::new();
        while let Some(digit) = self.peek().filter(char::is_ascii_digit) {
            digits.push(digit);
            self.position += 1;
        }
        digits
    }

    fn skip_whitespace(&mut self) {
        while self.peek().is_some_and(char::is_whitespace) {
            self.position += 1;
        }
    }

    fn rest(&self) -> &[char] {
        self.chars.get(self.position..).unwrap_or(&[])
    }
}

/// A non-zero finite magnitude rounded to a number of significant digits.
struct Rounded {
    negative: bool,
    /// Exactly the requested number of ASCII digits, the first one non-zero.
    digits: String,
    /// Decimal exponent of the first digit: the value is `d1.d2d3… × 10^exponent`.
    exponent: i32,
}

impl Rounded {
    /// Rounds `value`; `None` for zero and non-finite values.
    fn new(value: f64, significant_digits: usize) -> Option<Rounded> {
        if value == 0.0 || !value.is_finite() {
            return None;
        }
        let n_digits = significant_digits.clamp(1, 17);
        // Rust's `{:e}` formatting rounds the exact binary value to the decimal digits asked
        // for, and moves to the next decade when rounding carries (9.996 -> 1.00e1).
        let scientific = format!("{:.*e}", n_digits - 1, value.abs());
        let (mantissa, exponent) = scientific.split_once('e')?;
        Some(Rounded {
            negative: value < 0.0,
            digits: mantissa.chars().filter(char::is_ascii_digit).collect(),
            exponent: exponent.parse().ok()?,
        })
    }

    /// Splits the digits around the decimal point for a multiplier of `10^exponent3`.
    fn split(&self, exponent3: i32) -> (String, String) {
        let n_whole = usize::try_from(self.exponent - exponent3 + 1).unwrap_or(1);
        if self.digits.len() > n_whole {
            let (whole, fraction) = self.digits.split_at(n_whole);
            (whole.to_string(), fraction.to_string())
        } else {
            let mut whole = self.digits.clone();
            while whole.len() < n_whole {
                whole.push('0');
            }
            (whole, String::new())
        }
    }
}

/// Output symbol of the SI prefix for a multiple of 3 in -15..=12 (`""` for 0).
fn prefix_symbol(exponent3: i32) -> Option<&'static str> {
    match exponent3 {
        -15 => Some("f"),
        -12 => Some("p"),
        -9 => Some("n"),
        -6 => Some("µ"),
        -3 => Some("m"),
        0 => Some(""),
        3 => Some("k"),
        6 => Some("M"),
        9 => Some("G"),
        12 => Some("T"),
        _ => None,
    }
}

/// The number and the prefix of a formatted value; outside the prefix range the number carries
/// an engineering exponent and the prefix is empty.
fn engineering_parts(value: f64, significant_digits: usize) -> (String, &'static str) {
    if value.is_nan() {
        return ("NaN".to_string(), "");
    }
    if value.is_infinite() {
        let text = if value > 0.0 { "inf" } else { "-inf" };
        return (text.to_string(), "");
    }
    let Some(rounded) = Rounded::new(value, significant_digits) else {
        return ("0".to_string(), "");
    };
    let exponent3 = rounded.exponent.div_euclid(3) * 3;
    let (whole, fraction) = rounded.split(exponent3);
    let sign = if rounded.negative { "-" } else { "" };
    let point = if fraction.is_empty() { "" } else { "." };
    match prefix_symbol(exponent3) {
        Some(prefix) => (format!("{sign}{whole}{point}{fraction}"), prefix),
        None => (format!("{sign}{whole}{point}{fraction}e{exponent3}"), ""),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    use Quantity::{Any, Capacitance, Current, Frequency, Inductance, Power, Ratio, Resistance, Time, Voltage};

    const ALL_QUANTITIES: [Quantity; 10] =
        [Resistance, Capacitance, Inductance, Frequency, Time, Voltage, Current, Power, Ratio, Any];

    /// Relative tolerance for parsed values. The parser hands the whole decimal (prefix folded
    /// into the exponent) to Rust's correctly rounded `f64` conversion, so the result should be
    /// the same f64 as the literal written with the same digits; 1e-12 leaves room for a last-bit
    /// difference should that ever change, yet any wrong digit or prefix (>= 1e-4 relative for the
    /// values below) fails.
    const RTOL: f64 = 1e-12;

    fn check(input: &str, quantity: Quantity, expected: f64) {
        match parse_value(input, quantity) {
            Ok(value) => assert!(
                value == expected || (value - expected).abs() <= RTOL * expected.abs(),
                "{input:?} as {quantity:?}: got {value:e}, expected {expected:e}"
            ),
            Err(error) => panic!("{input:?} as {quantity:?}: unexpected error: {error}"),
        }
    }

    fn check_error(input: &str, quantity: Quantity, expected: ParseProblem) {
        match parse_value(input, quantity) {
            Ok(value) => panic!("{input:?} as {quantity:?}: expected {expected:?}, got {value:e}"),
            Err(error) => {
                assert_eq!(error.problem, expected, "{input:?} as {quantity:?}");
                assert_eq!(error.text, input);
                let message = error.to_string();
                assert!(
                    message.starts_with(&format!("cannot read {} as a value: ", quote(input))),
                    "message does not quote the input: {message}"
                );
                assert!(message.contains("write") || message.contains("leave the unit out"));
                assert!(!message.ends_with('.'), "final period: {message}");
            }
        }
    }

    fn check_format(value: f64, digits: usize, expected: &str) {
        assert_eq!(format_value(value, digits), expected, "{value:e}, {digits}");
    }

    fn check_rkm(value: f64, digits: usize, expected: &str) {
        assert_eq!(format_rkm(value, digits), expected, "{value:e}, {digits}");
    }

    // ---- plain numbers (common practice) ----

    #[test]
    fn plain_decimals() {
        check("4.7", Any, 4.7);
        check(".47", Any, 0.47);
        check("47.", Any, 47.0);
        check("4700", Any, 4700.0);
        check("0", Any, 0.0);
        check("007", Any, 7.0);
    }

    #[test]
    fn signs() {
        check("+4.7", Any, 4.7);
        check("-4.7", Any, -4.7);
        check("−4.7", Any, -4.7);
        check("-4k7", Resistance, -4700.0);
    }

    #[test]
    fn whitespace_is_trimmed() {
        check("  4.7k\t", Any, 4700.0);
        check("\n100 nF ", Capacitance, 100e-9);
        check("4.7\u{a0}kΩ", Resistance, 4700.0);
        check("4.7\u{202f}kΩ", Resistance, 4700.0);
    }

    #[test]
    fn exponents() {
        check("1e-9", Any, 1e-9);
        check("2.2E3", Any, 2200.0);
        check("1e+6", Any, 1e6);
        check("1e−3", Any, 1e-3);
        check(".5e1", Any, 5.0);
        check("1e0003", Any, 1000.0);
        check("1e3k", Any, 1e6);
        check("1e-400", Any, 0.0);
    }

    #[test]
    fn many_digits_are_rounded_once() {
        check("0.1000000000000000055511151231257827", Any, 0.1);
        check(&format!("1{}", "0".repeat(300)), Any, 1e300);
        check(&format!("0.{}1e401", "0".repeat(99)), Any, 1e301);
    }

    // ---- SI prefixes (common practice; SI brochure prefix values from memory) ----

    #[test]
    fn every_prefix() {
        check("1f", Any, 1e-15);
        check("1p", Any, 1e-12);
        check("1n", Any, 1e-9);
        check("1u", Any, 1e-6);
        check("1\u{b5}", Any, 1e-6);
        check("1\u{3bc}", Any, 1e-6);
        check("1m", Any, 1e-3);
        check("1k", Any, 1e3);
        check("1K", Any, 1e3);
        check("1M", Any, 1e6);
        check("1G", Any, 1e9);
        check("1T", Any, 1e12);
    }

    #[test]
    fn prefix_with_space() {
        check("4.7 k", Any, 4700.0);
        check("10 n", Capacitance, 10e-9);
    }

    #[test]
    fn prefix_factor_values() {
        assert_eq!(prefix_factor('f'), Some(1e-15));
        assert_eq!(prefix_factor('p'), Some(1e-12));
        assert_eq!(prefix_factor('n'), Some(1e-9));
        assert_eq!(prefix_factor('u'), Some(1e-6));
        assert_eq!(prefix_factor('µ'), Some(1e-6));
        assert_eq!(prefix_factor('μ'), Some(1e-6));
        assert_eq!(prefix_factor('m'), Some(1e-3));
        assert_eq!(prefix_factor('k'), Some(1e3));
        assert_eq!(prefix_factor('K'), Some(1e3));
        assert_eq!(prefix_factor('M'), Some(1e6));
        assert_eq!(prefix_factor('G'), Some(1e9));
        assert_eq!(prefix_factor('T'), Some(1e12));
    }

    #[test]
    fn prefix_factor_refuses_other_letters() {
        for letter in ['R', 'r', 'F', 'H', 'E', 'e', 'a', 'P', 'N', 'U', 'g', 't', 'Ω', '1'] {
            assert_eq!(prefix_factor(letter), None, "{letter:?}");
        }
    }

    #[test]
    fn prefix_factor_agrees_with_parser() {
        for letter in ['f', 'p', 'n', 'u', 'µ', 'μ', 'm', 'k', 'K', 'M', 'G', 'T'] {
            let factor = prefix_factor(letter).expect("prefix");
            check(&format!("1{letter}"), Any, factor);
            check(&format!("3.3{letter}"), Any, 3.3 * factor);
        }
    }

    // ---- RKM codes ----

    // Source: IEC 60062 resistance examples as listed in Wikipedia, "RKM code"
    // (https://en.wikipedia.org/wiki/RKM_code): R47 0.47, 4R7 4.7, 470R 470, 4K7 4.7k, 47K 47k,
    // 47K3 47.3k, 470K 470k, 4M7 4.7M.
    #[test]
    fn rkm_resistance_examples_from_iec_60062() {
        check("R47", Resistance, 0.47);
        check("4R7", Resistance, 4.7);
        check("470R", Resistance, 470.0);
        check("4K7", Resistance, 4700.0);
        check("47K", Resistance, 47e3);
        check("47K3", Resistance, 47.3e3);
        check("470K", Resistance, 470e3);
        check("4M7", Resistance, 4.7e6);
    }

    // Source: Wikipedia, "RKM code": capacitances use p, n, µ and m in place of the point.
    #[test]
    fn rkm_capacitance() {
        check("4n7", Capacitance, 4.7e-9);
        check("2n2", Capacitance, 2.2e-9);
        check("470p", Capacitance, 470e-12);
        check("4µ7", Capacitance, 4.7e-6);
        check("4u7", Capacitance, 4.7e-6);
        check("1m5", Capacitance, 1.5e-3);
        check("µ1", Capacitance, 1e-7);
        check("4n7F", Capacitance, 4.7e-9);
        check("4n7 F", Capacitance, 4.7e-9);
    }

    // Common practice (lower-case k and r are usual in schematics and parts lists).
    #[test]
    fn rkm_lower_case_and_more() {
        check("4k7", Resistance, 4700.0);
        check("1M5", Resistance, 1.5e6);
        check("2R2", Resistance, 2.2);
        check("2r2", Resistance, 2.2);
        check("r47", Resistance, 0.47);
        check("0R1", Resistance, 0.1);
        check("100R", Resistance, 100.0);
        check("100r", Resistance, 100.0);
        check("0R", Resistance, 0.0);
        check("1G2", Resistance, 1.2e9);
        check("2T2", Resistance, 2.2e12);
        check("k47", Resistance, 470.0);
        check("4k7Ω", Resistance, 4700.0);
        check("4R7 Ω", Resistance, 4.7);
        check("1m5s", Time, 1.5e-3);
        check("4k99", Resistance, 4990.0);
    }

    #[test]
    fn rkm_r_is_times_one_for_any_quantity() {
        check("4R7", Inductance, 4.7);
        check("2R2", Capacitance, 2.2);
    }

    // ---- units ----

    #[test]
    fn units_with_and_without_space() {
        check("100nF", Capacitance, 100e-9);
        check("100 nF", Capacitance, 100e-9);
        check("4.7 kΩ", Resistance, 4700.0);
        check("4.7kΩ", Resistance, 4700.0);
        check("4.7 k Ω", Resistance, 4700.0);
        check("10 mH", Inductance, 10e-3);
        check("1 kHz", Frequency, 1e3);
        check("2.2 µs", Time, 2.2e-6);
        check("12 V", Voltage, 12.0);
        check("20mA", Current, 20e-3);
        check("0.25 W", Power, 0.25);
        check("1e-9 F", Capacitance, 1e-9);
    }

    #[test]
    fn every_ohm_spelling() {
        check("4.7 k\u{3a9}", Resistance, 4700.0);
        check("4.7 k\u{2126}", Resistance, 4700.0);
        check("4.7kohm", Resistance, 4700.0);
        check("4.7 kohms", Resistance, 4700.0);
        check("4.7kOhm", Resistance, 4700.0);
        check("1 MOhms", Resistance, 1e6);
        check("8 Ω", Resistance, 8.0);
    }

    #[test]
    fn unit_letters_that_are_also_prefixes() {
        check("1m", Any, 1e-3);
        check("1mH", Inductance, 1e-3);
        check("1MHz", Frequency, 1e6);
        check("1mHz", Frequency, 1e-3);
        check("10F", Capacitance, 10.0);
        check("10F", Any, 10.0);
        check("1f", Capacitance, 1e-15);
        check("1fF", Capacitance, 1e-15);
        check("1H", Inductance, 1.0);
        check("1Hz", Frequency, 1.0);
        check("2s", Time, 2.0);
        check("1ms", Time, 1e-3);
        check("1mΩ", Resistance, 1e-3);
        check("1MΩ", Resistance, 1e6);
        check("1mohm", Resistance, 1e-3);
        check("3 THz", Frequency, 3e12);
        check("10KHz", Frequency, 1e4);
    }

    #[test]
    fn any_accepts_every_unit() {
        for (text, expected) in [
            ("1kΩ", 1e3),
            ("1nF", 1e-9),
            ("1mH", 1e-3),
            ("1kHz", 1e3),
            ("1ms", 1e-3),
            ("1V", 1.0),
            ("1A", 1.0),
            ("1W", 1.0),
        ] {
            check(text, Any, expected);
        }
    }

    #[test]
    fn ratio_accepts_prefixes_without_unit() {
        check("0.5", Ratio, 0.5);
        check("500m", Ratio, 0.5);
        check("1e-3", Ratio, 1e-3);
    }

    #[test]
    fn unit_symbols_and_names() {
        let symbols: Vec<&str> = ALL_QUANTITIES.iter().map(|q| q.unit_symbol()).collect();
        assert_eq!(symbols, ["Ω", "F", "H", "Hz", "s", "V", "A", "W", "", ""]);
        assert_eq!(Resistance.name(), "resistance");
        assert_eq!(Frequency.name(), "frequency");
        assert_eq!(Ratio.name(), "ratio");
        for quantity in ALL_QUANTITIES {
            assert!(!quantity.name().is_empty());
            let symbol = quantity.unit_symbol();
            if !symbol.is_empty() {
                assert_eq!(unit_quantity(symbol), Some(quantity));
                check(&format!("2.5 {symbol}"), quantity, 2.5);
            }
        }
    }

    // ---- errors, one or more per ParseProblem ----

    #[test]
    fn error_empty() {
        check_error("", Any, ParseProblem::Empty);
        check_error("   ", Resistance, ParseProblem::Empty);
        check_error("\t\n", Any, ParseProblem::Empty);
    }

    #[test]
    fn error_no_number() {
        for text in ["abc", "nan", "NaN", "inf", "-inf", "infinity", "k", "R", "Ω", "-", ".", "+.e3", "e3", "kΩ"] {
            check_error(text, Any, ParseProblem::NoNumber);
        }
    }

    #[test]
    fn error_no_number_for_non_ascii_digits() {
        check_error("４７", Any, ParseProblem::NoNumber);
        check_error("٤٧", Any, ParseProblem::NoNumber);
    }

    #[test]
    fn error_bad_exponent() {
        for text in ["1e", "1e+", "1e-", "2.2E", "1ek", "1e k"] {
            check_error(text, Any, ParseProblem::BadExponent);
        }
    }

    #[test]
    fn error_unknown_suffix() {
        check_error("4.7q", Any, ParseProblem::UnknownSuffix("q".into()));
        check_error("4.7.1", Any, ParseProblem::UnknownSuffix(".1".into()));
        check_error("4.7k7", Any, ParseProblem::UnknownSuffix("k7".into()));
        check_error("4k7e3", Any, ParseProblem::UnknownSuffix("e3".into()));
        check_error("1 2", Any, ParseProblem::UnknownSuffix("2".into()));
        check_error("1mhz", Frequency, ParseProblem::UnknownSuffix("mhz".into()));
        check_error("1 rad", Any, ParseProblem::UnknownSuffix("rad".into()));
        check_error("4F7", Capacitance, ParseProblem::UnknownSuffix("F7".into()));
        check_error("47L", Resistance, ParseProblem::UnknownSuffix("L".into()));
        check_error("1kΩx", Resistance, ParseProblem::UnknownSuffix("kΩx".into()));
        check_error("0x10", Any, ParseProblem::UnknownSuffix("x10".into()));
    }

    #[test]
    fn error_unknown_suffix_comma_hint() {
        let error = parse_value("4,7", Any).unwrap_err();
        assert_eq!(error.problem, ParseProblem::UnknownSuffix(",7".into()));
        assert!(error.to_string().contains("use a point, not a comma"));
    }

    #[test]
    fn error_double_multiplier() {
        for text in ["4k7k", "1kk", "1kMΩ", "4k7 kΩ", "1 k k", "1kR", "4R7k", "1kms", "4k7kk"] {
            check_error(text, Any, ParseProblem::DoubleMultiplier);
        }
    }

    #[test]
    fn error_double_multiplier_message() {
        let error = parse_value("4k7k", Resistance).unwrap_err();
        assert_eq!(
            error.to_string(),
            "cannot read \"4k7k\" as a value: only one SI prefix or RKM letter is allowed; \
             write e.g. 4k7, 4.7k, 4700, 4.7e3 or 4.7 kΩ"
        );
    }

    #[test]
    fn error_wrong_unit() {
        check_error("100nF", Resistance, ParseProblem::WrongUnit { found: "F".into(), expected: Resistance });
        check_error("1 kHz", Time, ParseProblem::WrongUnit { found: "Hz".into(), expected: Time });
        check_error("4.7kohm", Capacitance, ParseProblem::WrongUnit { found: "ohm".into(), expected: Capacitance });
        check_error("4n7F", Inductance, ParseProblem::WrongUnit { found: "F".into(), expected: Inductance });
    }

    #[test]
    fn error_wrong_unit_message_names_both_quantities() {
        let message = parse_value("100nF", Resistance).unwrap_err().to_string();
        assert_eq!(
            message,
            "cannot read \"100nF\" as a value: \"F\" is a unit of capacitance, but a resistance \
             is expected; write it in Ω or leave the unit out, e.g. 4.7 kΩ or 4k7"
        );
        let message = parse_value("1 kHz", Time).unwrap_err().to_string();
        assert_eq!(
            message,
            "cannot read \"1 kHz\" as a value: \"Hz\" is a unit of frequency, but a time is \
             expected; write it in s or leave the unit out, e.g. 2.2 µs or 2u2"
        );
    }

    #[test]
    fn examples_in_messages_are_accepted() {
        for text in ["4k7", "4.7k", "4700", "4.7e3", "4.7 kΩ"] {
            check(text, Resistance, 4700.0);
        }
        for quantity in ALL_QUANTITIES {
            for text in quantity.example().split(" or ") {
                assert!(parse_value(text, quantity).is_ok(), "{text:?} as {quantity:?}");
            }
        }
    }

    #[test]
    fn error_ratio_takes_no_unit() {
        for (text, unit) in [("1 V", "V"), ("10kΩ", "Ω"), ("1s", "s")] {
            check_error(text, Ratio, ParseProblem::WrongUnit { found: unit.into(), expected: Ratio });
        }
        let message = parse_value("1 V", Ratio).unwrap_err().to_string();
        assert!(message.contains("a ratio takes no unit"), "{message}");
    }

    #[test]
    fn error_not_finite() {
        for text in ["1e999", "-1e999", "1e309", "1.8e308", "1e99999999999999999999999", "1e306T"] {
            check_error(text, Any, ParseProblem::NotFinite);
        }
        check_error(&format!("1{}", "0".repeat(400)), Any, ParseProblem::NotFinite);
        check("1.7e308", Any, 1.7e308);
        check("1000T", Any, 1e15);
    }

    #[test]
    fn error_keeps_untrimmed_text() {
        let error = parse_value("  4k7k ", Any).unwrap_err();
        assert_eq!(error.text, "  4k7k ");
        assert!(error.to_string().contains("\"  4k7k \""));
    }

    #[test]
    fn error_message_escapes_and_shortens_text() {
        let error = parse_value("1\"q", Any).unwrap_err();
        assert!(error.to_string().starts_with("cannot read \"1\\\"q\" as a value"));
        let long = "x".repeat(10_000);
        let message = parse_value(&long, Any).unwrap_err().to_string();
        assert!(message.len() < 300, "{} bytes", message.len());
        assert!(message.contains(&format!("\"{}…\"", "x".repeat(QUOTE_LIMIT))));
    }

    #[test]
    fn error_is_std_error() {
        let error: Box<dyn std::error::Error> = Box::new(parse_value("abc", Any).unwrap_err());
        assert!(error.to_string().starts_with("cannot read \"abc\""));
    }

    #[test]
    fn huge_inputs_do_not_panic() {
        let digits = "7".repeat(1_000_000);
        check_error(&digits, Any, ParseProblem::NotFinite);
        check(&format!("0.{digits}"), Any, 0.7777777777777778);
        check_error(&"k".repeat(100_000), Any, ParseProblem::NoNumber);
        check_error(&format!("1{}", "k".repeat(100_000)), Any, ParseProblem::DoubleMultiplier);
        check_error(&format!("1{}", "Ω".repeat(100_000)), Any, ParseProblem::UnknownSuffix("Ω".repeat(100_000)));
        check_error(&format!("1e{digits}"), Any, ParseProblem::NotFinite);
        check(&format!("1e-{digits}"), Any, 0.0);
    }

    // ---- format_value ----

    #[test]
    fn format_value_examples() {
        check_format(4700.0, 3, "4.70k");
        check_format(1e-7, 2, "100n");
        check_format(0.0, 3, "0");
        check_format(-0.0, 3, "0");
        check_format(47.0, 2, "47");
        check_format(-2200.0, 2, "-2.2k");
        check_format(1.0, 1, "1");
        check_format(1.0, 3, "1.00");
        check_format(0.47, 2, "470m");
        check_format(2.2e-6, 2, "2.2µ");
        check_format(1e-15, 2, "1.0f");
        check_format(4.7e12, 2, "4.7T");
    }

    #[test]
    fn format_value_rounding() {
        check_format(123_456.0, 2, "120k");
        check_format(123_456.0, 7, "123.4560k");
        check_format(999.96, 3, "1.00k");
        check_format(9.996e-10, 3, "1.00n");
        check_format(4.749, 2, "4.7");
        check_format(4.751, 2, "4.8");
    }

    #[test]
    fn format_value_clamps_digits() {
        check_format(4700.0, 0, "5k");
        assert_eq!(format_value(0.1, 100), format_value(0.1, 17));
        check_format(0.1, 17, "100.00000000000001m");
    }

    #[test]
    fn format_value_outside_prefix_range() {
        check_format(1e-18, 3, "1.00e-18");
        check_format(4.7e-17, 2, "47e-18");
        check_format(1.5e15, 2, "1.5e15");
        check_format(999.96e12, 3, "1.00e15");
        check_format(-2.2e20, 2, "-220e18");
    }

    #[test]
    fn format_value_non_finite() {
        check_format(f64::NAN, 3, "NaN");
        check_format(f64::INFINITY, 3, "inf");
        check_format(f64::NEG_INFINITY, 3, "-inf");
    }

    #[test]
    fn format_quantity_examples() {
        assert_eq!(format_quantity(4700.0, Resistance, 3), "4.70 kΩ");
        assert_eq!(format_quantity(100e-9, Capacitance, 2), "100 nF");
        assert_eq!(format_quantity(1000.0, Frequency, 3), "1.00 kHz");
        assert_eq!(format_quantity(47.0, Resistance, 2), "47 Ω");
        assert_eq!(format_quantity(2.2e-6, Time, 2), "2.2 µs");
        assert_eq!(format_quantity(0.0, Voltage, 2), "0 V");
        assert_eq!(format_quantity(1e-18, Capacitance, 2), "1.0e-18 F");
        assert_eq!(format_quantity(0.5, Ratio, 2), "500m");
        assert_eq!(format_quantity(4700.0, Any, 2), "4.7k");
    }

    // ---- format_rkm ----

    // Source: IEC 60062 examples as listed in Wikipedia, "RKM code" (R47, 4R7, 470R, 4K7, 47K,
    // 47K3, 470K, 4M7), written here with lower-case k.
    #[test]
    fn format_rkm_iec_examples() {
        check_rkm(0.47, 2, "R47");
        check_rkm(4.7, 2, "4R7");
        check_rkm(470.0, 2, "470R");
        check_rkm(4700.0, 2, "4k7");
        check_rkm(47e3, 2, "47k");
        check_rkm(47.3e3, 3, "47k3");
        check_rkm(470e3, 2, "470k");
        check_rkm(4.7e6, 2, "4M7");
    }

    #[test]
    fn format_rkm_examples() {
        check_rkm(2.2, 2, "2R2");
        check_rkm(1.5e6, 2, "1M5");
        check_rkm(470e-12, 2, "470p");
        check_rkm(100.0, 2, "100R");
        check_rkm(100.0, 3, "100R");
        check_rkm(1e-7, 2, "100n");
        check_rkm(4.7e-9, 2, "4n7");
        check_rkm(2.2e-6, 2, "2µ2");
        check_rkm(0.1, 1, "R1");
        check_rkm(0.047, 2, "47m");
        check_rkm(1000.0, 2, "1k0");
        check_rkm(0.0, 2, "0R");
        check_rkm(-4700.0, 2, "-4k7");
        check_rkm(0.99996, 4, "1R000");
        check_rkm(999.96, 3, "1k00");
        check_rkm(1e-18, 2, "1.0e-18");
        check_rkm(2.2e15, 2, "2.2e15");
    }

    #[test]
    fn format_rkm_output_reads_back() {
        for (value, digits) in [(0.47, 2), (4700.0, 2), (1e-7, 2), (0.0, 2), (-2.2, 2), (4.99e3, 3)] {
            let text = format_rkm(value, digits);
            check(&text, Any, value);
        }
    }

    // ---- property tests ----

    /// A magnitude spread evenly over the decades from 1e-15 to 1e12, with either sign.
    fn signed_value() -> impl Strategy<Value = f64> {
        (-15.0_f64..12.0, any::<bool>()).prop_map(|(decade, negative)| {
            let magnitude = 10_f64.powf(decade);
            if negative {
                -magnitude
            } else {
                magnitude
            }
        })
    }

    /// Half a unit in the last of `digits` significant digits, relative to the value, plus a few
    /// ulps for the binary conversions on the way.
    fn within_rounding(parsed: f64, value: f64, digits: usize) -> bool {
        let digits = i32::try_from(digits).unwrap_or(17);
        let bound = 0.5 * 10_f64.powi(1 - digits) * (1.0 + 1e-9) + 4.0 * f64::EPSILON;
        (parsed - value).abs() <= bound * value.abs()
    }

    /// Text built from pieces the parser reacts to, so that random inputs reach its deep paths.
    fn tricky_text() -> impl Strategy<Value = String> {
        let pieces = vec![
            "0", "1", "4", "7", "9", ".", "e", "E", "+", "-", "−", " ", "\u{a0}", "k", "K", "m", "M", "µ", "μ", "u",
            "n", "p", "f", "G", "T", "R", "r", "\u{3a9}", "\u{2126}", "ohm", "F", "H", "Hz", "s", "V", "A", "W", "q",
            ",", "é", "€", "💡", "\u{301}", "\0",
        ];
        prop::collection::vec(prop::sample::select(pieces), 0..12).prop_map(|parts| parts.concat())
    }

    fn assert_well_behaved(text: &str) {
        for quantity in ALL_QUANTITIES {
            match parse_value(text, quantity) {
                Ok(value) => {
                    assert!(value.is_finite(), "{text:?} gave {value}");
                    // Any admits every unit, so whatever one quantity reads, Any reads the same.
                    assert_eq!(parse_value(text, Any), Ok(value), "{text:?}");
                }
                Err(error) => {
                    assert_eq!(error.text, text);
                    assert!(error.to_string().starts_with("cannot read \""));
                }
            }
        }
    }

    proptest! {
        #[test]
        fn format_value_reads_back_within_rounding(value in signed_value(), digits in 1_usize..=7) {
            let text = format_value(value, digits);
            let parsed = parse_value(&text, Any).map_err(|error| TestCaseError::fail(error.to_string()))?;
            prop_assert!(within_rounding(parsed, value, digits), "{value:e} -> {text} -> {parsed:e}");
        }

        #[test]
        fn format_rkm_reads_back_within_rounding(value in signed_value(), digits in 1_usize..=7) {
            let text = format_rkm(value, digits);
            let parsed = parse_value(&text, Any).map_err(|error| TestCaseError::fail(error.to_string()))?;
            prop_assert!(within_rounding(parsed, value, digits), "{value:e} -> {text} -> {parsed:e}");
        }

        #[test]
        fn format_quantity_reads_back_as_its_quantity(
            value in signed_value(),
            digits in 1_usize..=7,
            quantity in prop::sample::select(ALL_QUANTITIES.to_vec()),
        ) {
            let text = format_quantity(value, quantity, digits);
            let parsed = parse_value(&text, quantity).map_err(|error| TestCaseError::fail(error.to_string()))?;
            prop_assert!(within_rounding(parsed, value, digits), "{value:e} -> {text} -> {parsed:e}");
        }

        #[test]
        fn seventeen_digits_read_back_exactly(value in signed_value()) {
            prop_assert_eq!(parse_value(&format_value(value, 17), Any), Ok(value));
            prop_assert_eq!(parse_value(&format_rkm(value, 17), Any), Ok(value));
        }

        // Up to 1e307 only: rounding a value next to f64::MAX up to fewer digits gives a
        // number that f64 cannot hold (format_value(f64::MAX, 1) is "200e306").
        #[test]
        fn format_value_output_is_accepted(
            value in any::<f64>().prop_filter("finite, below 1e307", |v| v.is_finite() && v.abs() < 1e307),
            digits in 1_usize..=17,
        ) {
            let text = format_value(value, digits);
            prop_assert!(parse_value(&text, Any).is_ok(), "{value:e} -> {text}");
            let text = format_rkm(value, digits);
            prop_assert!(parse_value(&text, Any).is_ok(), "{value:e} -> {text}");
        }

        #[test]
        fn parse_never_panics_on_any_string(text in ".*") {
            assert_well_behaved(&text);
        }

        #[test]
        fn parse_never_panics_on_random_bytes(bytes in prop::collection::vec(any::<u8>(), 0..64)) {
            assert_well_behaved(&String::from_utf8_lossy(&bytes));
        }

        #[test]
        fn parse_never_panics_on_tricky_text(text in tricky_text()) {
            assert_well_behaved(&text);
        }
    }
}
