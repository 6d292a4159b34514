//! `bandwright step`: the step (or impulse) response of a design file, exact from its poles and
//! residues (or by implicit integration where the modal form is refused), with overshoot, 10–90 %
//! rise time and settling to a chosen tolerance.

use crate::args::{StepArgs, StepFormat};
use anyhow::{bail, Context, Result};
use bandwright::notation::{format_quantity, parse_value, Quantity};
use bandwright::transient::{
    impulse_response, step_response, Method, MethodChoice, SettleTolerance, SettlingReference, Span, StepMetrics,
    TransientOptions,
};
use bandwright::AcSystem;
use serde_json::{json, Value};
use std::fmt::Write as _;
use std::path::PathBuf;

/// Validated options of `step`.
#[derive(Debug, Clone)]
pub struct StepOptions {
    /// The design file.
    pub design: PathBuf,
    /// The core's options.
    pub transient: TransientOptions,
    /// The impulse response instead of the step.
    pub impulse: bool,
    /// Output format.
    pub format: StepFormat,
}

impl StepOptions {
    /// Validates the raw flags.
    pub fn from_args(raw: StepArgs) -> Result<Self> {
        let tolerance = settle_tolerance(&raw.settle)?;
        let span = match &raw.span {
            Some(text) => {
                let value = parse_value(text, Quantity::Time).with_context(|| "--span".to_string())?;
                if !(value.is_finite() && value > 0.0) {
                    bail!("--span {text}: give a time above 0 s, such as 5m or 200u");
                }
                Span::Seconds(value)
            }
            None => Span::Automatic,
        };
        let points = parse_value(&raw.points, Quantity::Ratio).with_context(|| "--points".to_string())?;
        if !(2.0..=bandwright::transient::MAX_POINTS as f64).contains(&points) || points.fract() != 0.0 {
            bail!("--points {}: give a whole number from 2 to {}", raw.points, bandwright::transient::MAX_POINTS);
        }
        let method = if raw.integrate { MethodChoice::Integration } else { MethodChoice::Automatic };
        Ok(Self {
            design: raw.design,
            transient: TransientOptions { span, points: points as usize, tolerance, method },
            impulse: raw.impulse,
            format: raw.format,
        })
    }
}

/// Reads `1%`, `0.001`, `half-lsb:16` or `lsb:12`.
fn settle_tolerance(text: &str) -> Result<SettleTolerance> {
    let t = text.trim().to_ascii_lowercase();
    let bits = |rest: &str| -> Result<u32> {
        let bits: u32 = rest.trim().parse().map_err(|_| {
            anyhow::anyhow!("--settle {text}: give the converter's bits as a whole number, such as half-lsb:16")
        })?;
        if bits == 0 || bits > bandwright::transient::MAX_BITS {
            bail!("--settle {text}: bits must be from 1 to {}", bandwright::transient::MAX_BITS);
        }
        Ok(bits)
    };
    let tolerance = if let Some(rest) = t.strip_prefix("half-lsb:") {
        SettleTolerance::HalfLsb { bits: bits(rest)? }
    } else if let Some(rest) = t.strip_prefix("lsb:") {
        SettleTolerance::Lsb { bits: bits(rest)? }
    } else if let Some(rest) = t.strip_suffix('%') {
        let value = parse_value(rest, Quantity::Ratio).with_context(|| "--settle".to_string())?;
        SettleTolerance::Percent(value)
    } else {
        let value = parse_value(&t, Quantity::Ratio).map_err(|_| {
            anyhow::anyhow!("--settle {text}: use a percentage (1%), a fraction (0.001), half-lsb:N or lsb:N")
        })?;
        SettleTolerance::Fraction(value)
    };
    tolerance.fraction().map_err(|e| anyhow::anyhow!("--settle {text}: {e}"))?;
    Ok(tolerance)
}

/// Runs the command and renders its output.
pub fn run(design: &bandwright::Design, options: &StepOptions) -> Result<String> {
    let (circuit, probe) = design.to_circuit()?;
    let mut system = AcSystem::new(&circuit, &probe);
    let time = |x: f64| format_quantity(x, Quantity::Time, 5);
    let mut out = String::new();
    if options.impulse {
        let r = impulse_response(&mut system, &options.transient)?;
        match options.format {
            StepFormat::Json => {
                let value = json!({
                    "name": design.name, "kind": "impulse", "method": method_text(&r.method),
                    "dirac_weight": r.dirac_weight, "time_s": r.times_s, "value_per_s": r.values,
                });
                out = serde_json::to_string_pretty(&value).expect("plain values") + "\n";
            }
            StepFormat::Csv => {
                out.push_str("time_s,impulse_per_s\n");
                for (t, v) in r.times_s.iter().zip(&r.values) {
                    let _ = writeln!(out, "{t:e},{v:e}");
                }
            }
            StepFormat::Table => {
                let _ = writeln!(out, "design: {}\nimpulse response ({})", design.name, method_text(&r.method));
                if r.dirac_weight != 0.0 {
                    let _ = writeln!(out, "plus a Dirac impulse of weight {:.6e} at t = 0", r.dirac_weight);
                }
                table(&mut out, &r.times_s, &r.values, "h(t) [1/s]", &time);
            }
        }
        return Ok(out);
    }
    let r = step_response(&mut system, &options.transient)?;
    match options.format {
        StepFormat::Json => {
            let metrics = match &r.metrics {
                Ok(m) => metrics_json(m),
                Err(e) => json!({"error": e.to_string()}),
            };
            let value = json!({
                "name": design.name, "kind": "step", "method": method_text(&r.method),
                "metrics": metrics, "time_s": r.times_s, "value": r.values,
            });
            out = serde_json::to_string_pretty(&value).expect("plain values") + "\n";
        }
        StepFormat::Csv => {
            out.push_str("time_s,step\n");
            for (t, v) in r.times_s.iter().zip(&r.values) {
                let _ = writeln!(out, "{t:e},{v:e}");
            }
        }
        StepFormat::Table => {
            let _ = writeln!(
                out,
                "design: {}\nstep response to a 1 V step of the source ({})",
                design.name,
                method_text(&r.method)
            );
            match &r.metrics {
                Ok(m) => {
                    let _ = writeln!(out, "  final value        {:.6}", m.final_value);
                    if m.initial_value != 0.0 {
                        let _ = writeln!(out, "  value at 0+        {:.6}", m.initial_value);
                    }
                    if let Some(p) = &m.peak {
                        let _ = writeln!(out, "  peak               {:.6} at {}", p.value, time(p.time_s));
                    }
                    if let Some(o) = m.overshoot_pct {
                        let _ = writeln!(out, "  overshoot          {o:.4} %");
                    }
                    if let Some(rise) = &m.rise {
                        let _ = writeln!(
                            out,
                            "  rise time 10-90 %  {} ({} to {})",
                            time(rise.rise_time_s),
                            time(rise.t10_s),
                            time(rise.t90_s)
                        );
                    }
                    let s = &m.settling;
                    let reference = match s.reference {
                        SettlingReference::FinalValue => "of the final value",
                        SettlingReference::Peak => "of the peak (the final value is 0)",
                    };
                    let settled = s.time_s.map_or_else(|| "not within the span".to_string(), time);
                    let _ = writeln!(
                        out,
                        "  settling           {settled} to within ±{:.4e} ({}: {:.4e} {reference})",
                        s.band,
                        tolerance_text(&options.transient.tolerance),
                        s.fraction
                    );
                    if let Some(d) = m.dc_group_delay_s {
                        let _ = writeln!(out, "  group delay at DC  {}", time(d));
                    }
                }
                Err(e) => {
                    let _ = writeln!(out, "  figures: {e}");
                }
            }
            table(&mut out, &r.times_s, &r.values, "y(t)", &time);
        }
    }
    Ok(out)
}

fn table(out: &mut String, times: &[f64], values: &[f64], label: &str, time: &dyn Fn(f64) -> String) {
    let _ = writeln!(out, "\n{:>12} {:>14}", "time", label);
    let step = (times.len() / 20).max(1);
    for k in (0..times.len()).step_by(step) {
        let _ = writeln!(out, "{:>12} {:>14.6e}", time(times[k]), values[k]);
    }
    let _ = writeln!(out, "(every {step}th of {} points; --format csv gives all)", times.len());
}

fn method_text(method: &Method) -> String {
    match method {
        Method::PoleResidue { condition } => {
            format!("exact, from poles and residues; eigenbasis condition {condition:.2e}")
        }
        Method::Integration { refused: None } => "Radau IIA integration of the MNA system, as asked".to_string(),
        Method::Integration { refused: Some(why) } => format!("Radau IIA integration of the MNA system ({why})"),
    }
}

fn tolerance_text(t: &SettleTolerance) -> String {
    match t {
        SettleTolerance::Fraction(x) => format!("{x}"),
        SettleTolerance::Percent(x) => format!("{x} %"),
        SettleTolerance::HalfLsb { bits } => format!("½ LSB of {bits} bits"),
        SettleTolerance::Lsb { bits } => format!("1 LSB of {bits} bits"),
    }
}

fn metrics_json(m: &StepMetrics) -> Value {
    json!({
        "final_value": m.final_value,
        "initial_value": m.initial_value,
        "peak": m.peak.as_ref().map(|p| json!({"time_s": p.time_s, "value": p.value})),
        "overshoot_pct": m.overshoot_pct,
        "rise": m.rise.as_ref().map(|r| json!({"t10_s": r.t10_s, "t90_s": r.t90_s, "rise_time_s": r.rise_time_s})),
        "settling": {
            "fraction": m.settling.fraction,
            "band": m.settling.band,
            "time_s": m.settling.time_s,
            "reference": match m.settling.reference { SettlingReference::FinalValue => "final_value", SettlingReference::Peak => "peak" },
        },
        "dc_group_delay_s": m.dc_group_delay_s,
    })
}
