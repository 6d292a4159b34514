//! Reference test: minimum orders of spec masks against `scipy.signal.buttord` and `cheb1ord`.
//!
//! The data come from `tests/reference/gen_scipy_orders.py` (SciPy 1.17.1, NumPy 2.4.6; the versions
//! are written into the data): 200 random analog low-pass masks drawn with a fixed seed (passband
//! loss 0.1…3 dB, stopband attenuation 20…100 dB, ws/wp 1.1…20), each with scipy's Butterworth and
//! Chebyshev I minimum order and natural frequency wn (rad/s).
//!
//! For every mask:
//! - our minimum order equals scipy's; where scipy's order is above 8 (the highest we offer) we must
//!   say so with [`MaskError::Unreachable`] naming order 8 as the closest;
//! - our closed-form estimate rounds up to scipy's order;
//! - scipy's own design (our prototype of scipy's order at scipy's wn) meets the mask by our
//!   evaluation, and scipy's wn is our passband-limited cutoff.
//!
//! Chebyshev uses ripple = gpass, which is what `cheb1ord` designs for.

use bandwright::mask::{check_design, minimum_order, MaskBand, MaskError, SpecMask};
use bandwright::synthesis::{Alignment, Band, ResponseType};
use bandwright::{denormalize, lowpass_prototype, MAX_ORDER};
use serde::Deserialize;
use std::f64::consts::TAU;

/// Rounding allowance on a margin, in dB. scipy places wn where the passband limit is met exactly,
/// so its margin there is 0 in exact arithmetic; double-precision evaluation of H leaves ~1e-13 dB.
const MARGIN_ATOL_DB: f64 = 1e-9;
/// Relative agreement of scipy's wn with our passband-limited cutoff: both are the same closed form
/// (Butterworth) or the passband edge itself (Chebyshev), ours found by bisection to f64 resolution.
const WN_RTOL: f64 = 1e-12;

/// The data file written by gen_scipy_orders.py.
#[derive(Debug, Deserialize)]
struct Data {
    generator: String,
    scipy_version: String,
    numpy_version: String,
    masks: Vec<Case>,
}

/// One mask and scipy's answers (see the generator's docstring).
#[derive(Debug, Deserialize)]
struct Case {
    index: usize,
    passband_edge_hz: f64,
    stopband_edge_hz: f64,
    gpass_db: f64,
    gstop_db: f64,
    buttord_order: usize,
    buttord_wn_rad_s: f64,
    cheb1ord_order: usize,
    cheb1ord_wn_rad_s: f64,
}

fn data() -> Data {
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/reference/data/scipy_orders.json");
    let text = std::fs::read_to_string(path).unwrap_or_else(|e| panic!("cannot read {path}: {e}"));
    serde_json::from_str(&text).unwrap_or_else(|e| panic!("cannot parse {path}: {e}"))
}

fn mask_of(case: &Case) -> SpecMask {
    SpecMask {
        band: MaskBand::LowPass { passband_edge_hz: case.passband_edge_hz, stopband_edge_hz: case.stopband_edge_hz },
        max_passband_loss_db: case.gpass_db,
        min_stopband_attenuation_db: case.gstop_db,
        max_group_delay_variation_s: None,
    }
}

/// The one check of this file: our minimum order of `alignment` for the mask of `case` against
/// scipy's `order` and `wn_rad_s`. Returns whether scipy's order was within our range.
fn check(case: &Case, alignment: Alignment, order: usize, wn_rad_s: f64) -> bool {
    let mask = mask_of(case);
    let label = format!("mask {} ({alignment:?}, scipy order {order})", case.index);
    match minimum_order(&mask, alignment) {
        Ok(choice) => {
            assert!(order <= MAX_ORDER, "{label}: we found order {} but scipy needs more than 8", choice.order);
            assert_eq!(choice.order, order, "{label}");
            let estimate = choice.closed_form_order.expect("closed form for butterworth and chebyshev");
            assert_eq!(estimate.ceil() as usize, order, "{label}: closed form {estimate}");
            assert!(choice.report.pass, "{label}: our recommended design fails: {:?}", choice.report);
            let Band::Cutoff(passband_limited_hz) = choice.passband_limited else { panic!("{label}") };
            let wn_hz = wn_rad_s / TAU;
            assert!((passband_limited_hz / wn_hz - 1.0).abs() < WN_RTOL, "{label}: {passband_limited_hz} vs {wn_hz}");
        }
        Err(MaskError::Unreachable { closest_order, shortfall_db, .. }) => {
            assert!(order > MAX_ORDER, "{label}: we found no order up to 8 (shortfall {shortfall_db} dB)");
            assert_eq!(closest_order, MAX_ORDER, "{label}");
            assert!(shortfall_db > 0.0, "{label}");
        }
        Err(other) => panic!("{label}: {other}"),
    }
    if order > MAX_ORDER {
        return false;
    }
    // scipy's design, built from our prototype at scipy's order and wn, meets the mask by our evaluation.
    let prototype = lowpass_prototype(alignment, order).unwrap();
    let design = denormalize(&prototype, ResponseType::LowPass, Band::Cutoff(wn_rad_s / TAU)).unwrap();
    let report = check_design(&mask, &design).unwrap();
    assert!(report.passband.margin >= -MARGIN_ATOL_DB, "{label}: scipy design passband {:?}", report.passband);
    assert!(report.stopband.margin >= -MARGIN_ATOL_DB, "{label}: scipy design stopband {:?}", report.stopband);
    // scipy's wn meets the passband exactly at its edge.
    assert!(report.passband.margin.abs() < MARGIN_ATOL_DB, "{label}: {:?}", report.passband);
    true
}

// Source: scipy.signal.buttord(wp, ws, gpass, gstop, analog=True), SciPy 1.17.1, via
// tests/reference/gen_scipy_orders.py.
#[test]
fn butterworth_orders_match_scipy_buttord() {
    let data = data();
    assert_eq!(data.generator, "tests/reference/gen_scipy_orders.py");
    assert_eq!(data.masks.len(), 200);
    let in_range =
        data.masks.iter().filter(|c| check(c, Alignment::Butterworth, c.buttord_order, c.buttord_wn_rad_s)).count();
    eprintln!(
        "butterworth: {in_range} masks matched scipy {} / numpy {}, {} above order 8 reported unreachable",
        data.scipy_version,
        data.numpy_version,
        data.masks.len() - in_range
    );
    // The draw covers both outcomes.
    assert!(in_range > 50 && data.masks.len() - in_range > 10);
}

// Source: scipy.signal.cheb1ord(wp, ws, gpass, gstop, analog=True), SciPy 1.17.1, via
// tests/reference/gen_scipy_orders.py; ripple = gpass, as cheb1ord designs.
#[test]
fn chebyshev_orders_match_scipy_cheb1ord() {
    let data = data();
    let in_range = data
        .masks
        .iter()
        .filter(|c| check(c, Alignment::Chebyshev { ripple_db: c.gpass_db }, c.cheb1ord_order, c.cheb1ord_wn_rad_s))
        .count();
    eprintln!(
        "chebyshev: {in_range} masks matched scipy, {} above order 8 reported unreachable",
        data.masks.len() - in_range
    );
    assert!(in_range > 50 && data.masks.len() - in_range > 10);
}
