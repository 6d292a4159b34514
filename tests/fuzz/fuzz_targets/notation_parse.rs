//! Fuzz target: engineering-notation parsing and formatting in `bandwright::notation`.
//!
//! For any bytes (read as UTF-8, invalid sequences replaced by U+FFFD) and every [`Quantity`]:
//! - `parse_value` returns, never panics; an `Ok` value is finite; an error keeps the original
//!   text and its message can be written.
//! - For an `Ok` value `v` and 1 to 7 significant digits, the text of `format_value`,
//!   `format_quantity` and `format_rkm` is read back by `parse_value` as a finite value within
//!   the rounding of those digits. The only refusal allowed is `NotFinite`, where rounding a value
//!   near `f64::MAX` carries past it (1.8e308 with 1 digit is `200e306`).
#![no_main]

use bandwright::notation::{format_quantity, format_rkm, format_value, parse_value, ParseProblem, Quantity};
use libfuzzer_sys::fuzz_target;

/// Every quantity; `exhaustive` below stops compiling when a variant is added and not listed.
const ALL_QUANTITIES: [Quantity; 10] = [
    Quantity::Resistance,
    Quantity::Capacitance,
    Quantity::Inductance,
    Quantity::Frequency,
    Quantity::Time,
    Quantity::Voltage,
    Quantity::Current,
    Quantity::Power,
    Quantity::Ratio,
    Quantity::Any,
];

#[allow(dead_code)]
fn exhaustive(quantity: Quantity) {
    match quantity {
        Quantity::Resistance
        | Quantity::Capacitance
        | Quantity::Inductance
        | Quantity::Frequency
        | Quantity::Time
        | Quantity::Voltage
        | Quantity::Current
        | Quantity::Power
        | Quantity::Ratio
        | Quantity::Any => {}
    }
}

/// Smallest positive subnormal: the absolute rounding step of a parse near zero.
const TINY: f64 = 5e-324;

fuzz_target!(|data: &[u8]| {
    // Borrowed when the bytes are valid UTF-8, replaced characters otherwise.
    let text = String::from_utf8_lossy(data);
    for quantity in ALL_QUANTITIES {
        match parse_value(&text, quantity) {
            Ok(value) => {
                assert!(value.is_finite(), "{text:?} as {quantity:?} gave non-finite {value:e}");
                check_formats(value, quantity);
            }
            Err(error) => {
                assert_eq!(error.text, text, "the error must keep the original text");
                let _message = error.to_string();
            }
        }
    }
});

/// Formats `value` every way with 1 to 7 digits and reads each text back as `quantity`.
fn check_formats(value: f64, quantity: Quantity) {
    for digits in 1..=7 {
        check_reads_back(value, quantity, digits, &format_value(value, digits));
        check_reads_back(value, quantity, digits, &format_quantity(value, quantity, digits));
        check_reads_back(value, quantity, digits, &format_rkm(value, digits));
    }
}

fn check_reads_back(value: f64, quantity: Quantity, digits: usize, written: &str) {
    match parse_value(written, quantity) {
        Ok(back) => {
            assert!(back.is_finite(), "{written:?} (from {value:e}) read back as non-finite {back:e}");
            // Rounding to `digits` significant digits moves a value by at most half a step,
            // 0.5·10^(1−digits)·|value|; twice that still catches a wrong prefix or digit.
            let tolerance = value.abs() * 10f64.powi(1 - digits as i32) + TINY;
            assert!(
                (back - value).abs() <= tolerance,
                "{written:?} ({digits} digits of {value:e} as {quantity:?}) read back as {back:e}"
            );
        }
        Err(error) => assert!(
            error.problem == ParseProblem::NotFinite && value.abs() > 1e308,
            "{written:?} ({digits} digits of {value:e} as {quantity:?}) is refused: {error}"
        ),
    }
}
