//! Spec masks for the page: reading the mask editor's fields (or a stored mask) into the core's
//! `SpecMask`, the minimum order per alignment with a requirement the sentence can take, the
//! check of the working design with its worst margin per region, and the forbidden regions the
//! plots shade.
//!
//! Every figure is the core's `mask` module's. The working design is checked on its own sweep
//! over the mask's frequencies: log-spaced, [`MASK_POINTS`] points from a thousandth of the lowest
//! edge to a thousand times the highest, so every region is covered (an open band is checked up
//! to that factor, which the card states).

use crate::error::WebError;
use bandwright::mask::{
    check, minimum_orders, Forbidden, MaskBand, MaskError, MaskRegion, MaskReport, RegionMargin, SpecMask,
};
use bandwright::notation::{format_quantity, format_value, parse_value, Quantity};
use bandwright::request::FitRequest;
use bandwright::sweep::{sweep_fast, FrequencyGrid, Spacing};
use bandwright::synthesis::{Alignment, Band};
use bandwright::{AcSystem, Design};
use bandwright_plot::{Quantity as PlotQuantity, Region, RegionEdge};
use serde::Deserialize;
use serde_json::{json, Value};

/// Points of the sweep a design is checked on.
pub const MASK_POINTS: usize = 1200;
/// The check sweep runs from the lowest edge divided by this to the highest edge times this.
pub const MASK_SPAN_FACTOR: f64 = 1000.0;

/// The mask editor's fields as typed (engineering notation; `null` or empty where not used).
#[derive(Debug, Clone, Default, PartialEq, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct MaskForm {
    /// lowpass, highpass or bandpass.
    pub response: Option<String>,
    /// The passband edge (band-pass: the lower one).
    pub passband_edge: Option<String>,
    /// The stopband edge (band-pass: the lower one).
    pub stopband_edge: Option<String>,
    /// Band-pass: the upper passband edge.
    pub passband_high: Option<String>,
    /// Band-pass: the upper stopband edge.
    pub stopband_high: Option<String>,
    /// The largest passband loss (ripple or droop), dB.
    pub max_loss: Option<String>,
    /// The smallest stopband attenuation, dB.
    pub min_attenuation: Option<String>,
    /// The largest group-delay variation over the passband (empty: no limit).
    pub max_delay_variation: Option<String>,
}

/// The result of checking a design, kept with the regions to draw.
#[derive(Debug, Clone, PartialEq)]
pub struct MaskCheck {
    /// The core's report, or why the design could not be checked.
    pub report: Result<MaskReport, String>,
    /// Regions for the magnitude panel (absolute dB) and the group-delay panel (s).
    pub regions: Vec<(PlotQuantity, Region)>,
}

impl MaskForm {
    /// Reads and validates the fields.
    ///
    /// # Errors
    /// `field <name>: …` for the field that is missing, unreadable or out of order.
    pub fn resolve(&self) -> Result<SpecMask, WebError> {
        let text =
            |value: &Option<String>| value.as_deref().map(str::trim).filter(|t| !t.is_empty()).map(str::to_string);
        let required = |field: &'static str, value: &Option<String>, quantity: Quantity, example: &str| {
            let Some(t) = text(value) else {
                return Err(WebError::at_field(field, format!("give a value, such as {example}")));
            };
            parse_value(&t, quantity).map_err(|e| WebError::at_field(field, e.to_string()))
        };
        let frequency = |field, value| required(field, value, Quantity::Frequency, "1k or 2.5 kHz");
        let level = |field, value| required(field, value, Quantity::Ratio, "1 or 60 (dB)");
        let response = text(&self.response).unwrap_or_else(|| "lowpass".to_string());
        let band = match response.as_str() {
            "lowpass" => MaskBand::LowPass {
                passband_edge_hz: frequency("passband_edge", &self.passband_edge)?,
                stopband_edge_hz: frequency("stopband_edge", &self.stopband_edge)?,
            },
            "highpass" => MaskBand::HighPass {
                passband_edge_hz: frequency("passband_edge", &self.passband_edge)?,
                stopband_edge_hz: frequency("stopband_edge", &self.stopband_edge)?,
            },
            "bandpass" => MaskBand::BandPass {
                stopband_low_hz: frequency("stopband_edge", &self.stopband_edge)?,
                passband_low_hz: frequency("passband_edge", &self.passband_edge)?,
                passband_high_hz: frequency("passband_high", &self.passband_high)?,
                stopband_high_hz: frequency("stopband_high", &self.stopband_high)?,
            },
            other => {
                return Err(WebError::at_field(
                    "response",
                    format!("{other:?} is not a mask response; use lowpass, highpass or bandpass"),
                ))
            }
        };
        let max_group_delay_variation_s = match text(&self.max_delay_variation) {
            None => None,
            Some(t) => Some(
                parse_value(&t, Quantity::Time)
                    .map_err(|e| WebError::at_field("max_delay_variation", e.to_string()))?,
            ),
        };
        let mask = SpecMask {
            band,
            max_passband_loss_db: level("max_loss", &self.max_loss)?,
            min_stopband_attenuation_db: level("min_attenuation", &self.min_attenuation)?,
            max_group_delay_variation_s,
        };
        mask.validate().map_err(mask_error)?;
        Ok(mask)
    }
}

/// Reads a stored mask (the core's `SpecMask` JSON) and validates it.
///
/// # Errors
/// Not a mask (the JSON error), or the field error of [`mask_error`].
pub fn read_mask(json: &str) -> Result<SpecMask, WebError> {
    let mask: SpecMask = serde_json::from_str(json)
        .map_err(|e| WebError::general(format!("the mask is not a spec mask (JSON of the core's mask): {e}")))?;
    mask.validate().map_err(mask_error)?;
    Ok(mask)
}

/// A mask error at the editor field it is about.
pub fn mask_error(error: MaskError) -> WebError {
    let edge = |what: &str| match what {
        "passband edge" | "lower passband edge" => "passband_edge",
        "upper passband edge" => "passband_high",
        "upper stopband edge" => "stopband_high",
        _ => "stopband_edge",
    };
    let field = match &error {
        MaskError::BadFrequency { what, .. } => Some(edge(what)),
        MaskError::EdgeOrder { lower, upper, .. } => {
            Some(if lower.contains("stopband") { edge(lower) } else { edge(upper) })
        }
        MaskError::BadLevel { what, .. } => Some(if what.contains("loss") { "max_loss" } else { "min_attenuation" }),
        MaskError::AttenuationNotAboveLoss { .. } => Some("min_attenuation"),
        MaskError::BadDelay { .. } => Some("max_delay_variation"),
        _ => None,
    };
    match field {
        Some(field) => WebError::at_field(field, error.to_string()),
        None => WebError::general(error.to_string()),
    }
}

/// The minimum order of each alignment, best first, with the requirement the sentence can take:
/// `{met: [{alignment, label, order, cutoff_text, worst_margin_db, request}], unmet: [{alignment,
/// closest_order, text}], none_met, message}`.
///
/// # Errors
/// The mask's field error.
pub fn orders_json(mask: &SpecMask) -> Result<Value, WebError> {
    let orders = minimum_orders(mask).map_err(mask_error)?;
    let frequency = |f: f64| format_quantity(f, Quantity::Frequency, 4);
    let met: Vec<Value> = orders
        .met
        .iter()
        .map(|choice| {
            let cutoff_text = match choice.band {
                Band::Cutoff(f) => frequency(f),
                Band::Edges { low_hz, high_hz } => format!("{} … {}", frequency(low_hz), frequency(high_hz)),
                Band::CentreBandwidth { centre_hz, bandwidth_hz } => {
                    format!("{} ± {}", frequency(centre_hz), frequency(bandwidth_hz / 2.0))
                }
            };
            json!({
                "alignment": choice.alignment.name(),
                "label": alignment_label(choice.alignment),
                "order": choice.order,
                "cutoff_text": cutoff_text,
                "worst_margin_db": choice.report.worst_margin_db,
                "margin_text": format!("{:.2} dB", tidy_margin(choice.report.worst_margin_db)),
                "request": requirement_for(mask, choice.alignment, choice.order, &choice.band),
            })
        })
        .collect();
    let mut closest: Option<(f64, String)> = None;
    let unmet: Vec<Value> = orders
        .unmet
        .iter()
        .map(|error| {
            let (alignment, closest_order, shortfall) = match error {
                MaskError::Unreachable { alignment, closest_order, shortfall_db, .. } => {
                    (alignment_label(*alignment), Some(*closest_order), *shortfall_db)
                }
                _ => (String::new(), None, f64::INFINITY),
            };
            if let Some(order) = closest_order.filter(|_| closest.as_ref().is_none_or(|(s, _)| shortfall < *s)) {
                closest = Some((shortfall, format!("{alignment} of order {order}")));
            }
            json!({"alignment": alignment, "closest_order": closest_order, "text": error.to_string()})
        })
        .collect();
    let none_met = met.is_empty();
    let message = if none_met {
        let closest = closest.map_or(String::new(), |(shortfall, which)| {
            format!("; the closest is {which}, which misses by {shortfall:.2} dB")
        });
        format!("no alignment up to order {} meets the mask{closest}; relax it: move the stopband edge further from the passband edge, ask for less stopband attenuation or allow more passband loss", bandwright::prototype::MAX_ORDER)
    } else {
        String::new()
    };
    Ok(json!({"met": met, "unmet": unmet, "none_met": none_met, "message": message}))
}

/// The alignment as the page names it ("Chebyshev 1 dB").
fn alignment_label(alignment: Alignment) -> String {
    match alignment {
        Alignment::Butterworth => "Butterworth".to_string(),
        Alignment::Chebyshev { ripple_db } => format!("Chebyshev {} dB", plain(ripple_db)),
        Alignment::Bessel { .. } => "Bessel".to_string(),
        Alignment::LinkwitzRiley => "Linkwitz-Riley".to_string(),
        Alignment::Critical => "critically damped".to_string(),
        other => other.name().to_string(),
    }
}

/// The requirement fields (a partial fit request) that put an order choice into the sentence.
fn requirement_for(mask: &SpecMask, alignment: Alignment, order: usize, band: &Band) -> FitRequest {
    let text = |s: String| Some(s);
    let (ripple, bessel_norm) = match alignment {
        Alignment::Chebyshev { ripple_db } => (text(plain(ripple_db)), None),
        Alignment::Bessel { .. } => (None, text("magnitude".to_string())),
        _ => (None, None),
    };
    let (cutoff, low, high) = match *band {
        Band::Cutoff(f) => (text(compact(f)), None, None),
        Band::Edges { low_hz, high_hz } => (None, text(compact(low_hz)), text(compact(high_hz))),
        Band::CentreBandwidth { centre_hz, bandwidth_hz } => {
            let half = bandwidth_hz / 2.0;
            (None, text(compact(centre_hz - half)), text(compact(centre_hz + half)))
        }
    };
    FitRequest {
        response: text(mask.band.response_type().name().to_string()),
        alignment: text(alignment.name().to_string()),
        ripple,
        bessel_norm,
        order: text(order.to_string()),
        cutoff,
        low,
        high,
        ..FitRequest::default()
    }
}

/// A value in engineering notation with six significant digits and no trailing zeros ("1.1724k"),
/// for a field of the sentence.
pub fn compact(value: f64) -> String {
    let text = format_value(value, 6);
    let split = text.find(|c: char| !(c.is_ascii_digit() || c == '.' || c == '-')).unwrap_or(text.len());
    let (number, prefix) = text.split_at(split);
    let number = if number.contains('.') { number.trim_end_matches('0').trim_end_matches('.') } else { number };
    format!("{number}{prefix}")
}

/// A level such as a ripple in dB, with up to four decimals and no trailing zeros ("0.5").
pub fn plain(value: f64) -> String {
    let text = format!("{value:.4}");
    text.trim_end_matches('0').trim_end_matches('.').to_string()
}

/// −0.000 would read as a failure: margins within rounding of zero are written as 0.
fn tidy_margin(x: f64) -> f64 {
    if x.abs() < 5e-4 {
        0.0
    } else {
        x
    }
}

/// Checks `design` against `mask` on the mask's own sweep and gives the regions to draw.
pub fn check_design(mask: &SpecMask, design: &Design) -> MaskCheck {
    let report = sweep_for(mask, design).and_then(|response| {
        let report = check(mask, &response).map_err(|e| e.to_string())?;
        Ok((report, response))
    });
    let (report, min_delay_s) = match report {
        Ok((report, response)) => {
            let (lo, hi) = mask.band.passband_range();
            let min_delay_s = response
                .frequencies()
                .iter()
                .zip(response.group_delay_s())
                .filter(|(f, _)| **f >= lo && **f <= hi)
                .filter_map(|(_, t)| t.filter(|t| t.is_finite()))
                .fold(None, |acc: Option<f64>, t| Some(acc.map_or(t, |a| a.min(t))));
            (Ok(report), min_delay_s)
        }
        Err(error) => (Err(error), None),
    };
    // Without a report the limits are drawn from 0 dB (the usual passband reference).
    let reference_db = report.as_ref().map_or(0.0, |r| r.reference_gain_db);
    let mut regions: Vec<(PlotQuantity, Region)> = mask
        .regions()
        .iter()
        .map(|r| {
            let limit = reference_db + r.limit_db;
            let (low, high, edge) = match r.forbidden {
                Forbidden::Above => (limit, f64::INFINITY, RegionEdge::Lower),
                Forbidden::Below => (f64::NEG_INFINITY, limit, RegionEdge::Upper),
            };
            (PlotQuantity::MagnitudeDb, Region { f_lo_hz: r.f_lo_hz, f_hi_hz: r.f_hi_hz, low, high, edge })
        })
        .collect();
    if let (Some(limit_s), Some(min_s)) = (mask.max_group_delay_variation_s, min_delay_s) {
        let (lo, hi) = mask.band.passband_range();
        regions.push((
            PlotQuantity::GroupDelayS,
            Region { f_lo_hz: lo, f_hi_hz: hi, low: min_s + limit_s, high: f64::INFINITY, edge: RegionEdge::Lower },
        ));
    }
    MaskCheck { report, regions }
}

fn sweep_for(mask: &SpecMask, design: &Design) -> Result<bandwright::response::Response, String> {
    let edges: Vec<f64> = match mask.band {
        MaskBand::LowPass { passband_edge_hz, stopband_edge_hz }
        | MaskBand::HighPass { passband_edge_hz, stopband_edge_hz } => vec![passband_edge_hz, stopband_edge_hz],
        MaskBand::BandPass { stopband_low_hz, passband_low_hz, passband_high_hz, stopband_high_hz } => {
            vec![stopband_low_hz, passband_low_hz, passband_high_hz, stopband_high_hz]
        }
    };
    let lowest = edges.iter().copied().fold(f64::INFINITY, f64::min);
    let highest = edges.iter().copied().fold(0.0, f64::max);
    let log = FrequencyGrid::log(lowest / MASK_SPAN_FACTOR, highest * MASK_SPAN_FACTOR, Spacing::Points(MASK_POINTS))
        .map_err(|e| e.to_string())?;
    // The edges themselves are checked too: the worst passband loss of a monotone response is at
    // its edge, which a log grid would otherwise step past.
    let mut f_hz: Vec<f64> = log.frequencies().iter().copied().chain(edges.iter().copied()).collect();
    f_hz.sort_by(f64::total_cmp);
    f_hz.dedup();
    let grid = FrequencyGrid::list(f_hz).map_err(|e| e.to_string())?;
    let (circuit, probe) = design.to_circuit().map_err(|e| e.to_string())?;
    let mut system = AcSystem::new(&circuit, &probe);
    Ok(sweep_fast(&mut system, &grid))
}

/// The check as JSON for the page: `{pass, verdict, worst: {region, margin, f_hz, text},
/// regions: [{region, margin, f_hz, text}], error}`; margins in dB (seconds for the delay).
pub fn report_json(check: &MaskCheck) -> Value {
    let report = match &check.report {
        Ok(report) => report,
        Err(error) => {
            return json!({"pass": null, "verdict": "not checked", "error": error, "regions": [], "worst": null})
        }
    };
    let frequency = |f: f64| format_quantity(f, Quantity::Frequency, 4);
    let describe = |r: &RegionMargin| {
        let text = match r.region {
            MaskRegion::Passband => format!(
                "passband: loss {:.3} dB of {} dB allowed; margin {:.3} dB at {}",
                r.measured,
                plain(r.limit),
                tidy_margin(r.margin),
                frequency(r.f_hz)
            ),
            MaskRegion::Stopband => format!(
                "stopband: attenuation {:.2} dB of {} dB required; margin {:.2} dB at {}",
                r.measured,
                plain(r.limit),
                tidy_margin(r.margin),
                frequency(r.f_hz)
            ),
            MaskRegion::GroupDelay => format!(
                "group delay: varies {} of {} allowed; margin {} at {}",
                format_quantity(r.measured, Quantity::Time, 3),
                format_quantity(r.limit, Quantity::Time, 3),
                format_quantity(r.margin, Quantity::Time, 3),
                frequency(r.f_hz)
            ),
        };
        json!({"region": r.region.name(), "margin": r.margin, "f_hz": r.f_hz, "text": text})
    };
    let mut regions = vec![describe(&report.passband), describe(&report.stopband)];
    if let Some(delay) = &report.group_delay {
        regions.push(describe(delay));
    }
    json!({
        "pass": report.pass,
        "verdict": if report.pass { "pass" } else { "fail" },
        "worst": describe(report.worst()),
        "worst_margin_db": report.worst_margin_db,
        "worst_f_hz": report.worst_f_hz,
        "regions": regions,
        "error": null,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// RC low-pass, 1 kΩ and 100 nF: fc = 1591.5 Hz.
    const RC: &str = r#"{"format": "bandwright-design", "version": 1, "name": "rc",
        "source": {"node": "in", "resistance": 0}, "output": "out",
        "elements": [{"ref": "R1", "kind": "resistor", "value": "1k", "nodes": ["in", "out"]},
                     {"ref": "C1", "kind": "capacitor", "value": "100n", "nodes": ["out", "0"]}]}"#;

    fn form(json: &str) -> Result<SpecMask, WebError> {
        serde_json::from_str::<MaskForm>(json).unwrap().resolve()
    }

    fn low_pass(pass: &str, stop: &str, loss: &str, atten: &str) -> SpecMask {
        form(&format!(
            r#"{{"response": "lowpass", "passband_edge": "{pass}", "stopband_edge": "{stop}", "max_loss": "{loss}", "min_attenuation": "{atten}"}}"#
        ))
        .unwrap()
    }

    #[test]
    fn compact_values_drop_trailing_zeros() {
        assert_eq!(compact(1000.0), "1k");
        assert_eq!(compact(1_172.433_91), "1.17243k");
        assert_eq!(compact(0.5), "500m");
        assert_eq!(compact(1.0), "1");
        assert_eq!(plain(0.5), "0.5");
        assert_eq!(plain(1.0), "1");
        assert_eq!(parse_value(&compact(1_172.433_91), Quantity::Frequency).unwrap(), 1_172.43);
    }

    #[test]
    fn the_form_reads_engineering_notation_into_the_core_mask() {
        let mask = low_pass("1k", "10 kHz", "3", "20");
        assert_eq!(mask.band, MaskBand::LowPass { passband_edge_hz: 1e3, stopband_edge_hz: 1e4 });
        assert_eq!((mask.max_passband_loss_db, mask.min_stopband_attenuation_db), (3.0, 20.0));
        // The stored form is the core's JSON and reads back as itself.
        let json = serde_json::to_string(&mask).unwrap();
        assert_eq!(read_mask(&json).unwrap(), mask);
        assert!(read_mask("{\"band\": 3}").unwrap_err().to_string().contains("not a spec mask"));
    }

    #[test]
    fn bad_fields_are_named() {
        for (json, field) in [
            (
                r#"{"passband_edge": "", "stopband_edge": "1k", "max_loss": "1", "min_attenuation": "20"}"#,
                "field passband_edge: ",
            ),
            (
                r#"{"passband_edge": "1kk", "stopband_edge": "1k", "max_loss": "1", "min_attenuation": "20"}"#,
                "field passband_edge: ",
            ),
            (
                r#"{"passband_edge": "2k", "stopband_edge": "1k", "max_loss": "1", "min_attenuation": "20"}"#,
                "field stopband_edge: ",
            ),
            (
                r#"{"response": "highpass", "passband_edge": "1k", "stopband_edge": "2k", "max_loss": "1", "min_attenuation": "20"}"#,
                "field stopband_edge: ",
            ),
            (
                r#"{"passband_edge": "1k", "stopband_edge": "2k", "max_loss": "-1", "min_attenuation": "20"}"#,
                "field max_loss: ",
            ),
            (
                r#"{"passband_edge": "1k", "stopband_edge": "2k", "max_loss": "3", "min_attenuation": "2"}"#,
                "field min_attenuation: ",
            ),
            (
                r#"{"passband_edge": "1k", "stopband_edge": "2k", "max_loss": "1", "min_attenuation": "20", "max_delay_variation": "0"}"#,
                "field max_delay_variation: ",
            ),
            (r#"{"response": "notch", "passband_edge": "1k"}"#, "field response: "),
        ] {
            let error = form(json).unwrap_err().to_string();
            assert!(error.starts_with(field), "{json}: {error}");
        }
    }

    #[test]
    fn the_rc_passes_a_loose_mask_and_fails_when_it_is_tightened() {
        let design = bandwright::parse_design(RC).unwrap();
        // At 500 Hz the loss is 10·log10(1 + (500/1591.5)²) = 0.4088 dB; at 50 kHz the attenuation
        // is 10·log10(1 + (50000/1591.5)²) = 29.947 dB (common practice: the first-order RC;
        // computed). The edges are on the check grid, so the figures are exact to rounding.
        let loose = check_design(&low_pass("500", "50k", "1", "20"), &design);
        let report = loose.report.as_ref().unwrap();
        assert!(report.pass);
        assert!((report.passband.measured - 0.408_776).abs() < 1e-5, "{}", report.passband.measured);
        assert!((report.stopband.measured - 29.947_396).abs() < 1e-5, "{}", report.stopband.measured);
        let tight = check_design(&low_pass("500", "50k", "1", "40"), &design);
        let report = tight.report.as_ref().unwrap();
        assert!(!report.pass);
        assert!((report.worst_margin_db - (29.947_396 - 40.0)).abs() < 1e-5);
        assert!((report.worst_f_hz - 50e3).abs() < 1.0, "{}", report.worst_f_hz);
        let json = report_json(&tight);
        assert_eq!(json["verdict"], "fail");
        assert!(json["worst"]["text"].as_str().unwrap().starts_with("stopband: attenuation 29.9"), "{json}");
        // Two magnitude regions: below −1 dB up to 500 Hz, above −40 dB from 50 kHz.
        assert_eq!(tight.regions.len(), 2);
        let (quantity, stop) = tight.regions[1];
        assert_eq!(quantity, PlotQuantity::MagnitudeDb);
        assert!((stop.low + 40.0).abs() < 1e-6 && stop.f_lo_hz == 50e3 && stop.edge == RegionEdge::Lower);
    }

    // Source: scipy.signal.buttord and cheb1ord (analog=True), SciPy 1.17.1 / NumPy 2.4.6, via
    // tests/reference/gen_scipy_orders.py (tests/reference/data/scipy_orders.json). The core is
    // checked on all 200 masks in tests/reference/mask_orders.rs; here the first 30 go through the
    // page's path (the editor's text fields, the stored mask, the order table) to show that no
    // edge or level is lost on the way.
    #[test]
    fn the_order_table_matches_scipy_through_the_page_path() {
        let data: Value =
            serde_json::from_str(include_str!("../../../tests/reference/data/scipy_orders.json")).unwrap();
        assert_eq!(data["scipy_version"], "1.17.1");
        let mut compared = 0;
        for case in data["masks"].as_array().unwrap().iter().take(30) {
            let number = |key: &str| case[key].as_f64().unwrap();
            let mask = form(&format!(
                r#"{{"passband_edge": "{}", "stopband_edge": "{}", "max_loss": "{}", "min_attenuation": "{}"}}"#,
                number("passband_edge_hz"),
                number("stopband_edge_hz"),
                number("gpass_db"),
                number("gstop_db")
            ))
            .unwrap();
            let stored = read_mask(&serde_json::to_string(&mask).unwrap()).unwrap();
            let orders = orders_json(&stored).unwrap();
            let order_of = |alignment: &str| {
                orders["met"]
                    .as_array()
                    .unwrap()
                    .iter()
                    .find(|m| m["alignment"] == alignment)
                    .map(|m| m["order"].as_u64().unwrap())
            };
            for (alignment, key) in [("butterworth", "buttord_order"), ("chebyshev", "cheb1ord_order")] {
                if alignment == "chebyshev" && number("gpass_db") > 10.0 {
                    continue; // the table's Chebyshev ripple is capped at 10 dB, cheb1ord's is not
                }
                let scipy = case[key].as_u64().unwrap();
                let ours = order_of(alignment);
                if scipy <= 8 {
                    assert_eq!(ours, Some(scipy), "mask {} {alignment}", case["index"]);
                    compared += 1;
                } else {
                    assert_eq!(ours, None, "mask {} {alignment}: scipy needs {scipy}", case["index"]);
                }
            }
        }
        assert!(compared >= 20, "only {compared} orders within 8 compared");
    }

    #[test]
    fn the_session_plot_shades_the_regions_of_a_mask() {
        let mut bench = crate::session::Workbench::new(RC).unwrap();
        let checked = check_design(&low_pass("500", "50k", "1", "20"), bench.working());
        let colour = bandwright_plot::region_colour(bandwright_plot::Theme::Light);
        let hex = format!("#{:02X}{:02X}{:02X}", colour.0, colour.1, colour.2);
        let plain = crate::chart::svg(&mut bench, 800, 640, bandwright_plot::Theme::Light, &[]).unwrap();
        let shaded = crate::chart::svg(&mut bench, 800, 640, bandwright_plot::Theme::Light, &checked.regions).unwrap();
        assert!(!plain.contains(&hex));
        assert!(shaded.matches(&format!("fill=\"{hex}\"")).count() >= 1, "no shaded region");
    }

    #[test]
    fn a_delay_limit_adds_a_region_on_the_delay_panel() {
        let design = bandwright::parse_design(RC).unwrap();
        let mask = form(r#"{"passband_edge": "500", "stopband_edge": "50k", "max_loss": "1", "min_attenuation": "20", "max_delay_variation": "1u"}"#).unwrap();
        let checked = check_design(&mask, &design);
        // τ(f) = RC/(1 + (ωRC)²): τ(0) = 100 µs, τ(500 Hz) = 91.017 µs, so it varies 8.983 µs over
        // the passband (common practice; computed). The grid starts at 0.5 Hz, where τ is within
        // 1e-9 of τ(0).
        let delay = checked.report.as_ref().unwrap().group_delay.unwrap();
        assert!((delay.measured - 8.983_016e-6).abs() < 1e-11, "{}", delay.measured);
        assert!(!checked.report.as_ref().unwrap().pass);
        assert!(checked.regions.iter().any(|(q, _)| *q == PlotQuantity::GroupDelayS));
    }

    #[test]
    fn minimum_orders_give_a_requirement_and_name_the_closest_when_none_is_met() {
        // Butterworth: n ≥ log10((10^6 − 1)/(10^0.1 − 1))/(2·log10 4) = 5.47 → 6 (the closed form of
        // scipy.signal.buttord, SciPy 1.17.1 source; computed).
        let mask = low_pass("1k", "4k", "1", "60");
        let orders = orders_json(&mask).unwrap();
        let butterworth = orders["met"].as_array().unwrap().iter().find(|m| m["alignment"] == "butterworth").unwrap();
        assert_eq!(butterworth["order"], 6);
        assert_eq!(butterworth["request"]["order"], "6");
        assert_eq!(butterworth["request"]["alignment"], "butterworth");
        assert_eq!(butterworth["request"]["response"], "lowpass");
        assert!(butterworth["request"]["cutoff"].is_string());
        assert_eq!(orders["none_met"], false);
        // 200 dB one octave above the passband: nothing up to order 8 reaches it.
        let impossible = low_pass("1k", "2k", "1", "200");
        let orders = orders_json(&impossible).unwrap();
        assert_eq!(orders["none_met"], true);
        let message = orders["message"].as_str().unwrap();
        assert!(message.starts_with("no alignment up to order 8 meets the mask; the closest is "), "{message}");
        assert!(message.contains("of order 8"), "{message}");
    }
}
