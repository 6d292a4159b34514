//! The converter front-end panel: the page's inputs (texts as typed) into the core's
//! `adc::plan_front_end`, its report as JSON with rows ready to show, and the fit request that
//! hands the recommendation to the page's existing fit flow ("Fit these parts").
//!
//! All figures are the core's `adc` module's; the attenuation rule is stated by the core
//! (`AttenuationRule::statement`), and the charge-reservoir rule (filter capacitor ≥ 10× the
//! sampling capacitor) is marked as common practice, as the core marks it. Errors name the input
//! they are about (`field <name>: …`).

use crate::error::WebError;
use crate::limits::{compact, plain};
use bandwright::adc::{
    plan_front_end, AdcError, AdcInput, AdcOptions, AdcRequirement, AliasBand, AttenuationRule, FrontEndReport,
    NoiseFigure, Realization, Verdict,
};
use bandwright::eseries::{PartValues, Series};
use bandwright::notation::{format_quantity, parse_value, Quantity};
use bandwright::request::FitRequest;
use bandwright::transient::MAX_BITS;
use serde::Deserialize;
use serde_json::{json, Value};

/// The panel's inputs as typed; absent or empty fields take the defaults in brackets.
#[derive(Debug, Clone, Default, PartialEq, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct FrontEndRequest {
    /// Sample rate.
    pub fs: Option<String>,
    /// Signal bandwidth (the passband edge).
    pub band: Option<String>,
    /// Converter bits.
    pub bits: Option<String>,
    /// "snr" (6.02·N + 1.76 dB) [default], "half_lsb" (6.02·(N + 1) dB) or "explicit".
    pub rule: Option<String>,
    /// The attenuation in dB for the "explicit" rule.
    pub attenuation: Option<String>,
    /// "first" (fs − band) [default] or "nyquist" (fs/2).
    pub alias: Option<String>,
    /// Allowed passband droop in dB [0.5].
    pub droop: Option<String>,
    /// Source resistance [0].
    pub source: Option<String>,
    /// Converter full scale [3.3 V].
    pub full_scale: Option<String>,
    /// Sampling capacitance [20p].
    pub cs: Option<String>,
    /// Sampling switch resistance [100].
    pub rsw: Option<String>,
    /// Acquisition time [1u].
    pub tacq: Option<String>,
    /// "auto" [default], "rc" or "active".
    pub realization: Option<String>,
    /// Resistor series [E96].
    pub resistors: Option<String>,
    /// Capacitor series [E12].
    pub capacitors: Option<String>,
}

/// The demo inputs: a vibration sensor sampled at 10 kS/s by a 12-bit converter, band 1 kHz, from
/// a 100 Ω amplifier output (a scenario of our own; the converter figures are typical of a
/// successive-approximation input, invented for the demo).
pub fn demo_request() -> FrontEndRequest {
    let text = |s: &str| Some(s.to_string());
    FrontEndRequest {
        fs: text("10k"),
        band: text("1k"),
        bits: text("12"),
        rule: text("snr"),
        alias: text("first"),
        droop: text("0.5"),
        source: text("100"),
        full_scale: text("3.3"),
        cs: text("20p"),
        rsw: text("100"),
        tacq: text("1u"),
        realization: text("auto"),
        resistors: text("E96"),
        capacitors: text("E12"),
        ..FrontEndRequest::default()
    }
}

impl FrontEndRequest {
    /// Reads the inputs into the core's requirement and options.
    ///
    /// # Errors
    /// `field <name>: …` for an input that is unreadable or out of range.
    pub fn resolve(&self) -> Result<(AdcRequirement, AdcOptions), WebError> {
        let given = |x: &Option<String>| x.as_deref().map(str::trim).filter(|t| !t.is_empty()).map(str::to_string);
        let value = |field: &'static str, x: &Option<String>, default: Option<&str>, quantity: Quantity| {
            let text = given(x).or(default.map(str::to_string)).ok_or_else(|| {
                WebError::at_field(field, "give a value in engineering notation, such as 48k".to_string())
            })?;
            parse_value(&text, quantity).map_err(|e| WebError::at_field(field, e.to_string()))
        };
        let bits_text = given(&self.bits)
            .ok_or_else(|| WebError::at_field("bits", "give the converter's resolution in bits, such as 12"))?;
        let bits = bits_text
            .parse::<f64>()
            .ok()
            .filter(|n| n.fract() == 0.0 && (1.0..=f64::from(MAX_BITS)).contains(n))
            .ok_or_else(|| {
                WebError::at_field(
                    "bits",
                    format!("{bits_text} bits is not a converter resolution; give a whole number of bits from 1 to {MAX_BITS}"),
                )
            })? as u32;
        let rule = match given(&self.rule).as_deref().unwrap_or("snr") {
            "snr" => AttenuationRule::SnrFormula,
            "half_lsb" => AttenuationRule::HalfLsb,
            "explicit" => {
                AttenuationRule::Explicit { db: value("attenuation", &self.attenuation, None, Quantity::Ratio)? }
            }
            other => {
                return Err(WebError::at_field(
                    "rule",
                    format!("{other:?} is not an attenuation rule; use snr, half_lsb or explicit"),
                ))
            }
        };
        let alias_band = match given(&self.alias).as_deref().unwrap_or("first") {
            "first" => AliasBand::FirstAlias,
            "nyquist" => AliasBand::Nyquist,
            other => {
                return Err(WebError::at_field(
                    "alias",
                    format!("{other:?} is not an alias band; use first or nyquist"),
                ))
            }
        };
        let realization = match given(&self.realization).as_deref().unwrap_or("auto") {
            "auto" => Realization::Auto,
            "rc" => Realization::PassiveRc,
            "active" => Realization::Active,
            other => {
                return Err(WebError::at_field(
                    "realization",
                    format!("{other:?} is not a realization; use auto, rc or active"),
                ))
            }
        };
        let series = |field: &'static str, x: &Option<String>, default: &str| {
            let name = given(x).unwrap_or_else(|| default.to_string());
            Series::from_name(&name).map(PartValues::Series).ok_or_else(|| {
                WebError::at_field(
                    field,
                    format!("{name:?} is not an E-series; use E3, E6, E12, E24, E48, E96 or E192"),
                )
            })
        };
        let requirement = AdcRequirement {
            sample_rate_hz: value("fs", &self.fs, None, Quantity::Frequency)?,
            band_hz: value("band", &self.band, None, Quantity::Frequency)?,
            bits,
            full_scale_v: value("full_scale", &self.full_scale, Some("3.3"), Quantity::Voltage)?,
            rule,
            alias_band,
            max_droop_db: value("droop", &self.droop, Some("0.5"), Quantity::Ratio)?,
            source_ohms: value("source", &self.source, Some("0"), Quantity::Resistance)?,
            input: AdcInput {
                sampling_capacitance_f: value("cs", &self.cs, Some("20p"), Quantity::Capacitance)?,
                switch_ohms: value("rsw", &self.rsw, Some("100"), Quantity::Resistance)?,
                acquisition_s: value("tacq", &self.tacq, Some("1u"), Quantity::Time)?,
            },
        };
        let options = AdcOptions {
            realization,
            resistors: series("resistors", &self.resistors, "E96")?,
            capacitors: series("capacitors", &self.capacitors, "E12")?,
            ..AdcOptions::default()
        };
        Ok((requirement, options))
    }
}

/// The core's error at the input it is about.
pub fn adc_error(error: AdcError) -> WebError {
    let field = match &error {
        AdcError::BadValue { what, .. } => Some(match *what {
            "sample rate (Hz)" => "fs",
            "signal band (Hz)" => "band",
            "full-scale span (V)" => "full_scale",
            "allowed passband droop (dB)" => "droop",
            "source resistance (Ω)" => "source",
            "sampling capacitance (F)" => "cs",
            "sampling switch resistance (Ω)" => "rsw",
            "acquisition time (s)" => "tacq",
            "alias attenuation (dB)" => "attenuation",
            _ => "fs",
        }),
        AdcError::SampleRateTooLow { .. } => Some("fs"),
        AdcError::BadBits { .. } => Some("bits"),
        AdcError::AttenuationNotAboveDroop { .. } => Some("droop"),
        _ => None,
    };
    match field {
        Some(field) => WebError::at_field(field, error.to_string()),
        None => WebError::general(error.to_string()),
    }
}

/// Plans the front end: `{report, rows, fit_request, rule_statement, reservoir_rule}` (see
/// [`report_json`]).
///
/// # Errors
/// Bad JSON, an input error, or the core's error (at its input where it has one).
pub fn plan_json(request_json: &str) -> Result<Value, WebError> {
    let request: FrontEndRequest = serde_json::from_str(request_json)
        .map_err(|e| WebError::general(format!("the front-end inputs are not valid JSON: {e}")))?;
    let (requirement, options) = request.resolve()?;
    let report = plan_front_end(&requirement, &options).map_err(adc_error)?;
    Ok(report_json(&report, &request))
}

/// The fit request of the recommendation, for the page's fit flow.
pub fn fit_request(report: &FrontEndReport, request: &FrontEndRequest) -> FitRequest {
    let text = |s: &str| Some(s.to_string());
    let recommendation = &report.recommendation;
    let topology = match recommendation.realization {
        Realization::PassiveRc => "rc",
        Realization::Lc => "ladder",
        Realization::Active | Realization::Auto => "sallen-key",
    };
    let options = AdcOptions::default();
    let (r_min, r_max) =
        if topology == "sallen-key" { options.active_ranges.0 } else { options.passive_resistor_range };
    FitRequest {
        response: text("lowpass"),
        alignment: text(recommendation.alignment),
        ripple: recommendation.ripple_db.map(plain),
        bessel_norm: (recommendation.alignment == "bessel").then(|| "magnitude".to_string()),
        order: Some(recommendation.order.to_string()),
        cutoff: Some(compact(recommendation.cutoff_hz)),
        source: Some(compact(report.requirement.source_ohms)),
        load: text("open"),
        topology: text(topology),
        resistors: Some(request.resistors.clone().filter(|s| !s.trim().is_empty()).unwrap_or_else(|| "E96".into())),
        capacitors: Some(request.capacitors.clone().filter(|s| !s.trim().is_empty()).unwrap_or_else(|| "E12".into())),
        inductors: text("E12"),
        alternatives: text("5"),
        r_min: Some(compact(r_min)),
        r_max: Some(compact(r_max)),
        ..FitRequest::default()
    }
}

/// The report for the page: the core's report, rows `{label, text}` by group (`requirement`,
/// `orders`, `recommendation`, `sampling`, `noise`, `delay`), the warnings and cautions, and the fit
/// request.
pub fn report_json(report: &FrontEndReport, request: &FrontEndRequest) -> Value {
    let freq = |x: f64| format_quantity(x, Quantity::Frequency, 4);
    let time = |x: f64| format_quantity(x, Quantity::Time, 4);
    let volts = |x: f64| format_quantity(x, Quantity::Voltage, 4);
    let row = |label: &str, text: String| json!({"label": label, "text": text});
    let r = &report.requirement;
    let requirement = vec![
        row("attenuation rule", report.rule_statement.clone()),
        row("stopband edge", format!("{} at the {}", freq(report.stopband_edge_hz), r.alias_band.name())),
        row("1 LSB", format!("{} of {} full scale", volts(report.lsb_v), volts(r.full_scale_v))),
    ];
    let orders: Vec<Value> = report
        .orders
        .iter()
        .map(|o| {
            let name = match o.ripple_db {
                Some(ripple) => format!("{} {} dB", o.alignment, plain(ripple)),
                None => o.alignment.to_string(),
            };
            let text = match (o.order, o.cutoff_hz) {
                (Some(n), Some(fc)) => format!(
                    "order {n}, cutoff {}{}",
                    freq(fc),
                    if o.rc_realizable { " (passive RC possible)" } else { "" }
                ),
                _ => format!(
                    "not reachable up to order 8; closest order {}, short by {}",
                    o.closest_order.map_or("—".to_string(), |n| n.to_string()),
                    o.shortfall_db.filter(|d| d.is_finite()).map_or("—".to_string(), |d| format!("{d:.2} dB"))
                ),
            };
            row(&name, text)
        })
        .collect();
    let rec = &report.recommendation;
    let alias = |label: &str, a: &bandwright::adc::AliasFigures| {
        row(
            label,
            format!(
                "{:.1} dB at the first alias (fs − band), {:.1} dB at Nyquist (fs/2), droop {:.3} dB; mask {} (worst margin {:.3} dB)",
                a.first_alias_attenuation_db,
                a.nyquist_attenuation_db,
                a.passband_droop_db,
                if a.meets_mask { "met" } else { "not met" },
                if a.worst_margin_db.abs() < 5e-4 { 0.0 } else { a.worst_margin_db }
            ),
        )
    };
    let recommendation = vec![
        row(
            "recommended",
            format!(
                "{}{} of order {}, cutoff {}, as a {}",
                rec.alignment,
                rec.ripple_db.map_or(String::new(), |x| format!(" {} dB", plain(x))),
                rec.order,
                freq(rec.cutoff_hz),
                rec.realization.name()
            ),
        ),
        row("why", rec.rule.to_string()),
        alias("ideal values", &report.ideal),
        alias("fitted parts", &report.fitted),
    ];
    let parts: Vec<Value> = report
        .parts
        .iter()
        .map(|p| {
            let q = match p.kind {
                "capacitor" => Quantity::Capacitance,
                "inductor" => Quantity::Inductance,
                _ => Quantity::Resistance,
            };
            row(
                &p.reference,
                format!(
                    "{} {} ({}, ideal {}, {:+.2} %)",
                    p.kind,
                    format_quantity(p.chosen_value, q, 3),
                    p.series,
                    format_quantity(p.ideal_value, q, 4),
                    p.deviation_pct
                ),
            )
        })
        .collect();
    let s = &report.sampling;
    let mut sampling = vec![row(
        "sampling input",
        format!(
            "settles to ±{:.2e} of full scale (½ LSB) in {} of the {} acquisition time: {}",
            s.tolerance,
            s.settling_time_s.map_or("— (not within the span)".to_string(), time),
            time(s.acquisition_s),
            if s.pass { "pass" } else { "FAIL" }
        ),
    )];
    match &report.charge_reservoir {
        Some(c) => sampling.push(row(
            "charge reservoir",
            format!(
                "last filter capacitor {} = {:.1} × the {} sampling capacitor: {} (rule of thumb, common practice: at least 10×); charge-sharing dip {:.2} LSB",
                format_quantity(c.filter_capacitance_f, Quantity::Capacitance, 3),
                c.ratio,
                format_quantity(c.sampling_capacitance_f, Quantity::Capacitance, 3),
                if c.rule_met { "met" } else { "not met" },
                c.droop_lsb
            ),
        )),
        None => sampling.push(row(
            "charge reservoir",
            "the output is an op-amp's, not a capacitor's, so the 10× rule of thumb (common practice) does not apply".to_string(),
        )),
    }
    let f = &report.filter_step;
    sampling.push(row(
        "filter step",
        format!(
            "settles to ½ LSB in {}, overshoot {}, rise 10–90 % {}",
            f.settling_time_s.map_or("—".to_string(), time),
            f.overshoot_pct.filter(|o| o.is_finite()).map_or("—".to_string(), |o| format!("{o:.2} %")),
            f.rise_time_s.map_or("—".to_string(), time)
        ),
    ));
    let n = &report.noise;
    let figure = |x: &NoiseFigure| format!("{} rms = {:.4} LSB", volts(x.rms_v), x.lsb);
    let mut noise = vec![
        row("resistors, in band", figure(&n.resistors_in_band)),
        row("resistors, to fs/2", figure(&n.resistors_to_nyquist)),
    ];
    if let Some(total) = &n.resistors_total {
        noise.push(row("resistors, all frequencies", figure(total)));
    }
    noise.push(row("kT/C of the sampler", figure(&n.kt_over_c)));
    noise.push(row("quantization (LSB/√12)", figure(&n.quantization)));
    noise.push(row(
        "total analog",
        format!(
            "{}: {} (threshold {} LSB rms, common practice)",
            figure(&n.total_analog),
            match n.verdict {
                Verdict::Pass => "pass",
                Verdict::Warn => "warning",
            },
            n.threshold_lsb
        ),
    ));
    let g = &report.group_delay;
    let delay = vec![row(
        "group delay",
        format!(
            "{} at DC, {} … {} over the band (spread {})",
            time(g.dc_s),
            time(g.min_s),
            time(g.max_s),
            time(g.spread_s)
        ),
    )];
    json!({
        "report": report,
        "rows": {
            "requirement": requirement,
            "orders": orders,
            "recommendation": recommendation,
            "parts": parts,
            "sampling": sampling,
            "noise": noise,
            "delay": delay,
        },
        "warnings": report.warnings,
        "cautions": report.cautions,
        "fit_request": fit_request(report, request),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn plan(request: &FrontEndRequest) -> Result<Value, WebError> {
        plan_json(
            &serde_json::to_string(&json!({
                "fs": request.fs, "band": request.band, "bits": request.bits, "rule": request.rule,
                "attenuation": request.attenuation, "alias": request.alias, "droop": request.droop,
                "source": request.source, "full_scale": request.full_scale, "cs": request.cs,
                "rsw": request.rsw, "tacq": request.tacq, "realization": request.realization,
                "resistors": request.resistors, "capacitors": request.capacitors,
            }))
            .unwrap(),
        )
    }

    #[test]
    fn the_demo_plans_with_finite_figures_and_states_its_rules() {
        let value = plan(&demo_request()).unwrap();
        let report = &value["report"];
        // 6.02·12 + 1.76 = 74.0 dB (W. Kester, ADI tutorial MT-001), at fs − band = 9 kHz.
        assert!((report["mask"]["min_stopband_attenuation_db"].as_f64().unwrap() - 74.008).abs() < 1e-3);
        assert_eq!(report["stopband_edge_hz"].as_f64(), Some(9000.0));
        let text = value.to_string();
        assert!(!text.contains("NaN") && !text.contains("inf"), "{text}");
        assert!(text.contains("6.02·N + 1.76 dB"));
        assert!(text.contains("common practice: at least 10×") || text.contains("10× rule of thumb (common practice)"));
        for group in ["requirement", "orders", "recommendation", "sampling", "noise", "delay"] {
            assert!(!value["rows"][group].as_array().unwrap().is_empty(), "{group}");
        }
        assert!(!value["cautions"].as_array().unwrap().is_empty());
    }

    #[test]
    fn the_fit_request_fits_through_the_fit_flow() {
        let value = plan(&demo_request()).unwrap();
        let request: FitRequest = serde_json::from_value(value["fit_request"].clone()).unwrap();
        let recommendation = &value["report"]["recommendation"];
        assert_eq!(request.order.as_deref(), Some(recommendation["order"].to_string().as_str()));
        assert_eq!(request.alignment.as_deref(), recommendation["alignment"].as_str());
        assert_eq!(request.source.as_deref(), Some("100"));
        let fitted: Value =
            serde_json::from_str(&crate::fit_json(&serde_json::to_string(&request).unwrap()).unwrap()).unwrap();
        assert!(!fitted["alternatives"].as_array().unwrap().is_empty());
        // A passive RC plan gives an RC request.
        let rc = FrontEndRequest { realization: Some("rc".into()), fs: Some("100k".into()), ..demo_request() };
        let value = plan(&rc).unwrap();
        assert_eq!(value["fit_request"]["topology"], "rc");
        let request: FitRequest = serde_json::from_value(value["fit_request"].clone()).unwrap();
        assert!(request.resolve().is_ok());
    }

    #[test]
    fn bad_inputs_name_their_field() {
        let with = |change: fn(&mut FrontEndRequest)| {
            let mut request = demo_request();
            change(&mut request);
            plan(&request).unwrap_err().to_string()
        };
        let low = with(|r| r.fs = Some("1.5k".into()));
        assert!(low.starts_with("field fs: the sample rate 1500 Hz is not above twice the signal band"), "{low}");
        assert!(with(|r| r.bits = Some("0".into())).starts_with("field bits: "));
        assert!(with(|r| r.bits = Some("".into())).starts_with("field bits: "));
        assert!(with(|r| r.band = Some("1kk".into())).starts_with("field band: "));
        assert!(with(|r| r.cs = Some("-2p".into())).starts_with("field cs: "));
        assert!(with(|r| r.tacq = Some("0".into())).starts_with("field tacq: "));
        assert!(with(|r| r.rule = Some("loud".into())).starts_with("field rule: "));
        assert!(with(|r| {
            r.rule = Some("explicit".into());
            r.attenuation = None;
        })
        .starts_with("field attenuation: "));
        assert!(with(|r| r.resistors = Some("E7".into())).starts_with("field resistors: "));
    }
}
