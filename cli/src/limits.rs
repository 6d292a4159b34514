//! `bandwright mask`: a spec mask from flags (or a mask file), the minimum order of each
//! alignment that meets it, and, with a design, whether that design passes and by what margin.

use crate::args::{MaskArgs, MaskFormat};
use crate::options::GridRequest;
use anyhow::{bail, Context, Result};
use bandwright::mask::{check, minimum_orders, MaskBand, MaskError, MaskReport, SpecMask};
use bandwright::notation::{format_quantity, parse_value, Quantity};
use bandwright::synthesis::Band;
use bandwright::{AcSystem, Detail};
use serde_json::json;
use std::fmt::Write as _;

/// Builds the mask from the flags or the file.
pub fn mask_from_args(raw: &MaskArgs) -> Result<SpecMask> {
    let mask = if let Some(path) = &raw.file {
        let text =
            std::fs::read_to_string(path).with_context(|| format!("cannot read mask file {}", path.display()))?;
        serde_json::from_str(&text).with_context(|| format!("{}: not a spec mask", path.display()))?
    } else {
        let f = |flag: &str, text: &Option<String>| -> Result<f64> {
            let text = text.as_deref().ok_or_else(|| anyhow::anyhow!("{flag} is needed (or give --file)"))?;
            parse_value(text, Quantity::Frequency).with_context(|| flag.to_string())
        };
        let band = match raw.response.trim() {
            "lowpass" => MaskBand::LowPass {
                passband_edge_hz: f("--pass", &raw.pass)?,
                stopband_edge_hz: f("--stop", &raw.stop)?,
            },
            "highpass" => MaskBand::HighPass {
                passband_edge_hz: f("--pass", &raw.pass)?,
                stopband_edge_hz: f("--stop", &raw.stop)?,
            },
            "bandpass" => MaskBand::BandPass {
                stopband_low_hz: f("--stop", &raw.stop)?,
                passband_low_hz: f("--pass", &raw.pass)?,
                passband_high_hz: f("--pass-high", &raw.pass_high)?,
                stopband_high_hz: f("--stop-high", &raw.stop_high)?,
            },
            other => bail!("--response {other}: use lowpass, highpass or bandpass"),
        };
        let level = |flag: &str, text: &str| parse_value(text, Quantity::Ratio).with_context(|| flag.to_string());
        SpecMask {
            band,
            max_passband_loss_db: level("--loss", &raw.loss)?,
            min_stopband_attenuation_db: level("--atten", &raw.atten)?,
            max_group_delay_variation_s: raw
                .delay_var
                .as_deref()
                .map(|t| parse_value(t, Quantity::Time).with_context(|| "--delay-var".to_string()))
                .transpose()?,
        }
    };
    mask.validate()?;
    Ok(mask)
}

/// Runs the command and renders it; the flag is false when a design was checked and fails.
pub fn run(raw: &MaskArgs) -> Result<(String, bool)> {
    let mask = mask_from_args(raw)?;
    if let Some(path) = &raw.save {
        std::fs::write(path, serde_json::to_string_pretty(&mask).expect("plain values") + "\n")
            .with_context(|| format!("cannot write the mask to {}", path.display()))?;
    }
    let freq = |x: f64| format_quantity(x, Quantity::Frequency, 5);
    let band_text = |b: &Band| match b {
        Band::Cutoff(f) => freq(*f),
        Band::Edges { low_hz, high_hz } => format!("{} … {}", freq(*low_hz), freq(*high_hz)),
        Band::CentreBandwidth { centre_hz, bandwidth_hz } => {
            format!("{} ± {}", freq(*centre_hz), freq(bandwidth_hz / 2.0))
        }
    };
    let mut out = String::new();
    if let Some(path) = &raw.design {
        let text =
            std::fs::read_to_string(path).with_context(|| format!("cannot read design file {}", path.display()))?;
        let design = bandwright::parse_design(&text).with_context(|| format!("{}", path.display()))?;
        let (circuit, probe) = design.to_circuit()?;
        let grid = GridRequest::from_args(&raw.grid, 200.0)?.grid_for(&circuit)?;
        let response = bandwright::sweep(&mut AcSystem::new(&circuit, &probe), &grid, Detail::Transfer);
        let report = check(&mask, &response)?;
        if raw.format == MaskFormat::Json {
            let value = json!({"mask": mask, "design": design.name, "report": report});
            return Ok((serde_json::to_string_pretty(&value).expect("plain values") + "\n", report.pass));
        }
        let _ = writeln!(out, "design: {}", design.name);
        render_report(&mut out, &report);
        return Ok((out, report.pass));
    }
    let orders = minimum_orders(&mask)?;
    if raw.format == MaskFormat::Json {
        let met: Vec<_> = orders
            .met
            .iter()
            .map(|o| {
                json!({
                    "alignment": o.alignment.name(), "order": o.order, "closed_form_order": o.closed_form_order,
                    "cutoff": band_json(&o.band), "passband_limited": band_json(&o.passband_limited),
                    "stopband_limited": band_json(&o.stopband_limited), "report": o.report,
                })
            })
            .collect();
        let unmet: Vec<_> = orders.unmet.iter().map(|e| json!({"error": e.to_string()})).collect();
        let value = json!({"mask": mask, "met": met, "unmet": unmet});
        return Ok((serde_json::to_string_pretty(&value).expect("plain values") + "\n", true));
    }
    let _ = writeln!(out, "minimum order that meets the mask, best first:");
    for o in &orders.met {
        let _ = writeln!(
            out,
            "  {:<16} order {}{}  cutoff {}  (passband-limited {}, stopband-limited {}); worst margin {:.3} dB",
            o.alignment.name(),
            o.order,
            o.closed_form_order.map_or(String::new(), |n| format!(" (closed form {n:.3})")),
            band_text(&o.band),
            band_text(&o.passband_limited),
            band_text(&o.stopband_limited),
            margin(o.report.worst_margin_db)
        );
    }
    for e in &orders.unmet {
        if let MaskError::Unreachable { alignment, closest_order, shortfall_db, .. } = e {
            let _ = writeln!(
                out,
                "  {:<16} not met up to order 8: closest order {closest_order}, short by {shortfall_db:.2} dB",
                alignment.name()
            );
        } else {
            let _ = writeln!(out, "  {e}");
        }
    }
    if orders.met.is_empty() {
        bail!("{}no alignment up to order 8 meets the mask; relax the attenuation, the loss or the edges", out);
    }
    Ok((out, true))
}

/// −0.000 reads as a failure; margins within rounding of zero print as 0.
fn margin(x: f64) -> f64 {
    if x.abs() < 5e-4 {
        0.0
    } else {
        x
    }
}

fn band_json(b: &Band) -> serde_json::Value {
    match b {
        Band::Cutoff(f) => json!({"cutoff_hz": f}),
        Band::Edges { low_hz, high_hz } => json!({"low_hz": low_hz, "high_hz": high_hz}),
        Band::CentreBandwidth { centre_hz, bandwidth_hz } => {
            json!({"centre_hz": centre_hz, "bandwidth_hz": bandwidth_hz})
        }
    }
}

fn render_report(out: &mut String, report: &MaskReport) {
    let freq = |x: f64| format_quantity(x, Quantity::Frequency, 5);
    let _ = writeln!(
        out,
        "mask: {}; worst margin {:.4} at {} ({})",
        if report.pass { "PASS" } else { "FAIL" },
        margin(report.worst_margin_db),
        freq(report.worst_f_hz),
        report.worst_region.name()
    );
    let _ = writeln!(out, "  reference gain {:.4} dB at {}", report.reference_gain_db, freq(report.reference_f_hz));
    let mut regions = vec![&report.passband, &report.stopband];
    if let Some(g) = &report.group_delay {
        regions.push(g);
    }
    for r in regions {
        let _ = writeln!(
            out,
            "  {:<12} margin {:>10.4} at {:>11} (measured {:.4e}, limit {:.4e}, {} points)",
            r.region.name(),
            margin(r.margin),
            freq(r.f_hz),
            r.measured,
            r.limit,
            r.points
        );
    }
    if report.skipped > 0 {
        let _ = writeln!(out, "  {} unsolved points skipped", report.skipped);
    }
}
