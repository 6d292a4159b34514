//! `bandwright frontend`: the anti-aliasing front end of an ADC, from the converter's figures to
//! fitted parts, with the alias attenuation, sampling-input settling, the charge-reservoir check,
//! the noise budget against the LSB and the group delay.

use crate::args::{FrontendArgs, FrontendFormat};
use anyhow::{bail, Context, Result};
use bandwright::active::OpAmp;
use bandwright::adc::{
    AdcInput, AdcOptions, AdcRequirement, AliasBand, AttenuationRule, FrontEndReport, Realization, Verdict,
};
use bandwright::eseries::{PartValues, Series};
use bandwright::notation::{format_quantity, parse_value, Quantity};
use std::fmt::Write as _;
use std::path::PathBuf;

/// Validated options of `frontend`.
#[derive(Debug, Clone)]
pub struct FrontendOptions {
    /// The requirement.
    pub requirement: AdcRequirement,
    /// How to realize and fit it.
    pub options: AdcOptions,
    /// Where to save the fitted design.
    pub save: Option<PathBuf>,
    /// Output format.
    pub format: FrontendFormat,
}

fn value(flag: &str, text: &str, quantity: Quantity) -> Result<f64> {
    parse_value(text, quantity).with_context(|| flag.to_string())
}

fn series(flag: &str, text: &str) -> Result<PartValues> {
    Series::from_name(text.trim())
        .map(PartValues::Series)
        .ok_or_else(|| anyhow::anyhow!("{flag} {text}: give an E-series name (E3, E6, E12, E24, E48, E96, E192)"))
}

impl FrontendOptions {
    /// Validates the raw flags (the core validates the requirement itself).
    pub fn from_args(raw: FrontendArgs) -> Result<Self> {
        let bits_value = value("--bits", &raw.bits, Quantity::Ratio)?;
        if !(bits_value.fract() == 0.0 && (0.0..=64.0).contains(&bits_value)) {
            bail!("--bits {}: give the converter's resolution as a whole number of bits, 1 to 32", raw.bits);
        }
        let rule = match raw.rule.trim().to_ascii_lowercase().as_str() {
            "snr" => AttenuationRule::SnrFormula,
            "half-lsb" => AttenuationRule::HalfLsb,
            other => match other.strip_suffix("db") {
                Some(number) => AttenuationRule::Explicit { db: value("--rule", number, Quantity::Ratio)? },
                None => bail!(
                    "--rule {other}: use snr (6.02·N + 1.76 dB), half-lsb (6.02·(N + 1) dB) or a level such as 80dB"
                ),
            },
        };
        let alias_band = match raw.alias.trim() {
            "first" => AliasBand::FirstAlias,
            "nyquist" => AliasBand::Nyquist,
            other => bail!(
                "--alias {other}: use first (attenuate at fs − band, the first alias of the band) or nyquist (at fs/2)"
            ),
        };
        let realization = match raw.realization.trim() {
            "auto" => Realization::Auto,
            "rc" => Realization::PassiveRc,
            "active" => Realization::Active,
            "lc" => Realization::Lc,
            other => bail!("--realization {other}: use auto, rc, active or lc"),
        };
        let op_amp = match &raw.gbw {
            Some(text) => OpAmp::SinglePole {
                gbw_hz: value("--gbw", text, Quantity::Frequency)?,
                dc_gain: value("--op-amp-a0", raw.op_amp_a0.as_deref().unwrap_or("100k"), Quantity::Ratio)?,
                output_ohms: value("--op-amp-rout", raw.op_amp_rout.as_deref().unwrap_or("0"), Quantity::Resistance)?,
            },
            None => OpAmp::Ideal,
        };
        let requirement = AdcRequirement {
            sample_rate_hz: value("--fs", &raw.fs, Quantity::Frequency)?,
            band_hz: value("--band", &raw.band, Quantity::Frequency)?,
            bits: bits_value as u32,
            full_scale_v: value("--full-scale", &raw.full_scale, Quantity::Voltage)?,
            rule,
            alias_band,
            max_droop_db: value("--droop", &raw.droop, Quantity::Ratio)?,
            source_ohms: value("--source", &raw.source, Quantity::Resistance)?,
            input: AdcInput {
                sampling_capacitance_f: value("--cs", &raw.cs, Quantity::Capacitance)?,
                switch_ohms: value("--rsw", &raw.rsw, Quantity::Resistance)?,
                acquisition_s: value("--tacq", &raw.tacq, Quantity::Time)?,
            },
        };
        let options = AdcOptions {
            realization,
            op_amp,
            resistors: series("--resistors", &raw.resistors)?,
            capacitors: series("--capacitors", &raw.capacitors)?,
            ..AdcOptions::default()
        };
        Ok(Self { requirement, options, save: raw.save, format: raw.format })
    }
}

/// Renders a report.
pub fn render(report: &FrontEndReport, format: FrontendFormat) -> String {
    if format == FrontendFormat::Json {
        return serde_json::to_string_pretty(report).expect("plain values") + "\n";
    }
    let freq = |x: f64| format_quantity(x, Quantity::Frequency, 5);
    let time = |x: f64| format_quantity(x, Quantity::Time, 4);
    let volts = |x: f64| format_quantity(x, Quantity::Voltage, 4);
    let r = &report.requirement;
    let mut out = String::new();
    let _ = writeln!(
        out,
        "requirement: fs {}, band {}, {} bits over {} (1 LSB = {}), droop ≤ {} dB, source {}",
        freq(r.sample_rate_hz),
        freq(r.band_hz),
        r.bits,
        volts(r.full_scale_v),
        volts(report.lsb_v),
        r.max_droop_db,
        format_quantity(r.source_ohms, Quantity::Resistance, 4)
    );
    let _ = writeln!(out, "attenuation rule: {}", report.rule_statement);
    let _ = writeln!(out, "stopband edge: {}", freq(report.stopband_edge_hz));
    let _ = writeln!(out, "\nminimum order per alignment:");
    for o in &report.orders {
        let name = match o.ripple_db {
            Some(ripple) => format!("{} {ripple} dB", o.alignment),
            None => o.alignment.to_string(),
        };
        match (o.order, o.cutoff_hz) {
            (Some(n), Some(fc)) => {
                let _ = writeln!(
                    out,
                    "  {name:<22} order {n}  cutoff {:>11}  delay spread {}{}",
                    freq(fc),
                    o.group_delay_spread_s.map_or("—".to_string(), time),
                    if o.rc_realizable { "  (passive RC possible)" } else { "" }
                );
            }
            _ => {
                let _ = writeln!(
                    out,
                    "  {name:<22} not reachable up to order 8; closest order {} short by {}",
                    o.closest_order.map_or("—".to_string(), |n| n.to_string()),
                    o.shortfall_db.map_or("—".to_string(), |d| format!("{d:.2} dB"))
                );
            }
        }
    }
    let rec = &report.recommendation;
    let _ = writeln!(
        out,
        "\nrecommended: {}{} order {}, cutoff {}, as a {} ({})",
        rec.alignment,
        rec.ripple_db.map_or(String::new(), |r| format!(" {r} dB")),
        rec.order,
        freq(rec.cutoff_hz),
        rec.realization.name(),
        rec.rule
    );
    for (label, a) in [("ideal ", &report.ideal), ("fitted", &report.fitted)] {
        let _ = writeln!(
            out,
            "  {label}: {:.2} dB at fs − band, {:.2} dB at fs/2, passband droop {:.3} dB, mask {} (worst margin {:.3} dB)",
            a.first_alias_attenuation_db,
            a.nyquist_attenuation_db,
            a.passband_droop_db,
            if a.meets_mask { "met" } else { "NOT met" },
            a.worst_margin_db
        );
    }
    let _ = writeln!(out, "\nparts:");
    for p in &report.parts {
        let q = match p.kind {
            "capacitor" => Quantity::Capacitance,
            "inductor" => Quantity::Inductance,
            _ => Quantity::Resistance,
        };
        let _ = writeln!(
            out,
            "  {:<6} {:<10} ideal {:>11}  chosen {:>11} {:<5} {:+.3} %",
            p.reference,
            p.kind,
            format_quantity(p.ideal_value, q, 4),
            format_quantity(p.chosen_value, q, 3),
            p.series,
            p.deviation_pct
        );
    }
    let s = &report.sampling;
    let _ = writeln!(
        out,
        "\nsampling input: settles to ±{:.3e} of full scale in {} of the {} acquisition time: {}{}",
        s.tolerance,
        s.settling_time_s.map_or("— (not within the span)".to_string(), time),
        time(s.acquisition_s),
        if s.pass { "pass" } else { "FAIL" },
        s.margin_ratio.map_or(String::new(), |m| format!(" (acquisition / settling = {m:.2})"))
    );
    let f = &report.filter_step;
    let _ = writeln!(
        out,
        "filter step: settles to ½ LSB in {}, overshoot {}, rise 10-90 % {}",
        f.settling_time_s.map_or("—".to_string(), time),
        f.overshoot_pct.map_or("—".to_string(), |o| format!("{o:.3} %")),
        f.rise_time_s.map_or("—".to_string(), time)
    );
    match &report.charge_reservoir {
        Some(c) => {
            let _ = writeln!(
                out,
                "charge reservoir: last filter capacitor {} = {:.1} × the {} sampling capacitor ({}: {}); charge-sharing dip {:.3e} of the step = {:.2} LSB",
                format_quantity(c.filter_capacitance_f, Quantity::Capacitance, 3),
                c.ratio,
                format_quantity(c.sampling_capacitance_f, Quantity::Capacitance, 3),
                c.rule,
                if c.rule_met { "met" } else { "NOT met" },
                c.droop_fraction,
                c.droop_lsb
            );
        }
        None => {
            let _ = writeln!(out, "charge reservoir: the output is an op-amp's, not a capacitor's (no check)");
        }
    }
    let n = &report.noise;
    let figure =
        |label: &str, x: &bandwright::adc::NoiseFigure| format!("{label} {} rms = {:.4} LSB", volts(x.rms_v), x.lsb);
    let _ = writeln!(out, "noise at {} K:", n.temperature_k);
    let _ = writeln!(out, "  {}", figure("resistors, in band   ", &n.resistors_in_band));
    let _ = writeln!(out, "  {}", figure("resistors, to fs/2   ", &n.resistors_to_nyquist));
    if let Some(total) = &n.resistors_total {
        let _ = writeln!(out, "  {}", figure("resistors, all f     ", total));
    }
    let _ = writeln!(out, "  {}", figure("kT/C of the sampler  ", &n.kt_over_c));
    let _ = writeln!(out, "  {}", figure("quantization LSB/√12 ", &n.quantization));
    let _ = writeln!(
        out,
        "  {} -> {} (threshold {} LSB rms, common practice)",
        figure("total analog         ", &n.total_analog),
        match n.verdict {
            Verdict::Pass => "pass",
            Verdict::Warn => "WARN",
        },
        n.threshold_lsb
    );
    let g = &report.group_delay;
    let _ = writeln!(
        out,
        "group delay: {} at DC, {} … {} over the band (spread {})",
        time(g.dc_s),
        time(g.min_s),
        time(g.max_s),
        time(g.spread_s)
    );
    for w in &report.warnings {
        let _ = writeln!(out, "warning: {w}");
    }
    if !report.cautions.is_empty() {
        let _ = writeln!(out);
        for c in &report.cautions {
            let _ = writeln!(out, "caution: {c}");
        }
    }
    out
}
