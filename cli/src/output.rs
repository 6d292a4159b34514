//! Runs the analysis a command needs and renders it as a table, CSV or JSON.

use crate::args::{InfoFormat, SweepFormat};
use crate::options::{GridRequest, InfoOptions};
use anyhow::Result;
use bandwright::notation::{format_quantity, Quantity};
use bandwright::{AcSystem, Design, Detail, ElementKind, Measurements, Response};
use serde_json::{json, Value};
use std::fmt::Write as _;

/// A swept design and its measurements.
pub struct Analysis {
    /// The circuit.
    pub circuit: bandwright::Circuit,
    /// The response over the grid.
    pub response: Response,
    /// The measurements, or why they could not be made.
    pub measurements: Result<Measurements, bandwright::MeasureError>,
}

impl Analysis {
    /// Builds the circuit of `design` and sweeps it.
    pub fn run(design: &Design, grid: &GridRequest) -> Result<Self> {
        let (circuit, probe) = design.to_circuit()?;
        let grid = grid.grid_for(&circuit)?;
        let mut system = AcSystem::new(&circuit, &probe);
        let response = bandwright::sweep(&mut system, &grid, Detail::Transfer);
        let measurements = bandwright::measure(&response);
        Ok(Self { circuit, response, measurements })
    }
}

fn finite(x: Option<f64>) -> Value {
    match x {
        Some(v) if v.is_finite() => json!(v),
        _ => Value::Null,
    }
}

/// Renders a sweep in the chosen format.
pub fn render_sweep(analysis: &Analysis, format: SweepFormat) -> String {
    let response = &analysis.response;
    let f = response.frequencies();
    let db = response.magnitude_db();
    let phase = response.phase_deg();
    let tau = response.group_delay_s();
    let z = response.input_impedance();
    let mut out = String::new();
    match format {
        SweepFormat::Json => {
            let unsolved: Vec<Value> = response
                .unsolved()
                .iter()
                .map(|(i, e)| json!({"frequency_hz": f[*i], "reason": e.to_string()}))
                .collect();
            let value = json!({
                "frequency_hz": f,
                "magnitude_db": db.iter().map(|x| finite(*x)).collect::<Vec<_>>(),
                "phase_deg": phase.iter().map(|x| finite(*x)).collect::<Vec<_>>(),
                "group_delay_s": tau.iter().map(|x| finite(*x)).collect::<Vec<_>>(),
                "input_impedance_ohm": {
                    "re": z.iter().map(|x| finite(x.map(|z| z.re))).collect::<Vec<_>>(),
                    "im": z.iter().map(|x| finite(x.map(|z| z.im))).collect::<Vec<_>>(),
                },
                "unsolved": unsolved,
            });
            out.push_str(&serde_json::to_string(&value).expect("JSON of plain numbers"));
            out.push('\n');
        }
        SweepFormat::Csv => {
            out.push_str("frequency_hz,magnitude_db,phase_deg,group_delay_s,zin_re_ohm,zin_im_ohm\n");
            let cell = |x: Option<f64>| x.filter(|v| v.is_finite()).map(|v| format!("{v:e}")).unwrap_or_default();
            for i in 0..f.len() {
                let _ = writeln!(
                    out,
                    "{:e},{},{},{},{},{}",
                    f[i],
                    cell(db[i]),
                    cell(phase[i]),
                    cell(tau[i]),
                    cell(z[i].map(|z| z.re)),
                    cell(z[i].map(|z| z.im))
                );
            }
        }
        SweepFormat::Table => {
            let _ = writeln!(
                out,
                "{:>12}  {:>10}  {:>10}  {:>12}  {:>12}  {:>9}",
                "frequency", "|H| dB", "phase °", "delay", "|Z_in|", "∠Z_in °"
            );
            let text = |x: Option<String>| x.unwrap_or_else(|| "—".to_string());
            for i in 0..f.len() {
                let _ = writeln!(
                    out,
                    "{:>12}  {:>10}  {:>10}  {:>12}  {:>12}  {:>9}",
                    format_quantity(f[i], Quantity::Frequency, 4),
                    text(db[i].map(|v| format!("{v:.3}"))),
                    text(phase[i].map(|v| format!("{v:.2}"))),
                    text(tau[i].map(|v| format_quantity(v, Quantity::Time, 4))),
                    text(z[i].map(|z| format_quantity(z.norm(), Quantity::Resistance, 4))),
                    text(z[i].map(|z| format!("{:.2}", z.arg().to_degrees()))),
                );
            }
            for (i, error) in response.unsolved() {
                let _ = writeln!(out, "note: {} not solved: {error}", format_quantity(f[i], Quantity::Frequency, 4));
            }
        }
    }
    out
}

fn element_value_text(kind: &ElementKind) -> String {
    match *kind {
        ElementKind::Resistor { resistance } => format_quantity(resistance, Quantity::Resistance, 4),
        ElementKind::Capacitor { capacitance, esr } => {
            let mut text = format_quantity(capacitance, Quantity::Capacitance, 4);
            if esr > 0.0 {
                let _ = write!(text, ", ESR {}", format_quantity(esr, Quantity::Resistance, 3));
            }
            text
        }
        ElementKind::Inductor { inductance, dcr } => {
            let mut text = format_quantity(inductance, Quantity::Inductance, 4);
            if dcr > 0.0 {
                let _ = write!(text, ", DCR {}", format_quantity(dcr, Quantity::Resistance, 3));
            }
            text
        }
        ElementKind::VoltageSource { emf, series_resistance } => format!(
            "{} behind {}",
            format_quantity(emf, Quantity::Voltage, 4),
            format_quantity(series_resistance, Quantity::Resistance, 4)
        ),
        ElementKind::CurrentSource { current } => format_quantity(current, Quantity::Current, 4),
        ElementKind::Vcvs { gain: bandwright::Gain::Constant(a), .. } => format!("gain {a}"),
        ElementKind::Vcvs { gain: bandwright::Gain::SinglePole { dc_gain, pole_hz }, .. } => {
            format!("gain {dc_gain}, pole {}", format_quantity(pole_hz, Quantity::Frequency, 4))
        }
        ElementKind::MeasuredImpedance { curve } => format!("measured curve {curve}"),
    }
}

/// Renders `info`: the parts and the measurements.
pub fn render_info(design: &Design, analysis: &Analysis, options: &InfoOptions) -> Result<String> {
    let circuit = &analysis.circuit;
    let response = &analysis.response;
    let f = response.frequencies();
    let m = analysis.measurements.as_ref().map_err(|e| anyhow::anyhow!("cannot measure the response: {e}"))?;
    let attenuation: Vec<(f64, Result<f64, bandwright::MeasureError>)> =
        options.at_hz.iter().map(|&at| (at, bandwright::attenuation_db_at(response, m, at))).collect();
    let mut out = String::new();
    match options.format {
        InfoFormat::Json => {
            let elements: Vec<Value> = circuit
                .elements()
                .iter()
                .map(|e| {
                    json!({"ref": e.reference, "kind": e.kind.name(), "value": e.kind.primary_value(),
                           "value_text": element_value_text(&e.kind),
                           "nodes": [circuit.node_name(e.nodes.0), circuit.node_name(e.nodes.1)]})
                })
                .collect();
            let extremum = |x: Option<bandwright::Extremum>| match x {
                Some(x) => json!({"frequency_hz": x.f_hz, "ohm": x.value}),
                None => Value::Null,
            };
            let value = json!({
                "name": design.name,
                "note": design.note,
                "elements": elements,
                "sweep": {"from_hz": f[0], "to_hz": f[f.len() - 1], "points": f.len()},
                "passband_gain_db": m.reference.gain_db,
                "passband_reference": format!("{:?}", m.reference.kind).to_lowercase(),
                "passband_reference_hz": m.reference.f_hz,
                "corners_hz": m.corners.iter().map(|c| c.f_hz).collect::<Vec<_>>(),
                "corner_edges": m.corners.iter().map(|c| format!("{:?}", c.edge).to_lowercase()).collect::<Vec<_>>(),
                "peak": {"frequency_hz": m.peak.f_hz, "gain_db": m.peak.value},
                "input_impedance_min": extremum(m.impedance_min),
                "input_impedance_max": extremum(m.impedance_max),
                "attenuation_db": attenuation.iter().map(|(at, a)| match a {
                    Ok(a) => json!({"frequency_hz": at, "db": a}),
                    Err(e) => json!({"frequency_hz": at, "error": e.to_string()}),
                }).collect::<Vec<_>>(),
                "unsolved_points": m.unsolved,
            });
            out.push_str(&serde_json::to_string_pretty(&value).expect("JSON of plain values"));
            out.push('\n');
        }
        InfoFormat::Table => {
            let _ = writeln!(out, "design: {}", design.name);
            if !design.note.is_empty() {
                let _ = writeln!(out, "note:   {}", design.note);
            }
            let _ = writeln!(out, "\nparts:");
            for e in circuit.elements() {
                let _ = writeln!(
                    out,
                    "  {:<8} {:<15} {:<28} {} – {}",
                    e.reference,
                    e.kind.name(),
                    element_value_text(&e.kind),
                    circuit.node_name(e.nodes.0),
                    circuit.node_name(e.nodes.1)
                );
            }
            let freq = |x: f64| format_quantity(x, Quantity::Frequency, 5);
            let _ = writeln!(out, "\nmeasured over {} … {} ({} points):", freq(f[0]), freq(f[f.len() - 1]), f.len());
            let reference = match m.reference.kind {
                bandwright::ReferenceKind::LowEnd => "gain at the low end of the sweep",
                bandwright::ReferenceKind::HighEnd => "gain at the high end of the sweep",
                bandwright::ReferenceKind::Peak => "peak gain",
                bandwright::ReferenceKind::Ends => "larger of the two ends",
            };
            let _ = writeln!(
                out,
                "  passband gain   {:.4} dB ({reference}, at {})",
                m.reference.gain_db,
                freq(m.reference.f_hz)
            );
            if m.corners.is_empty() {
                let _ = writeln!(out, "  -3 dB points    none within the sweep");
            }
            for corner in &m.corners {
                let edge = match corner.edge {
                    bandwright::Edge::Falling => "falling",
                    bandwright::Edge::Rising => "rising",
                };
                let _ = writeln!(out, "  -3 dB point     {} ({edge})", freq(corner.f_hz));
            }
            let _ = writeln!(out, "  peak gain       {:.4} dB at {}", m.peak.value, freq(m.peak.f_hz));
            for (label, x) in [("|Z_in| minimum ", m.impedance_min), ("|Z_in| maximum ", m.impedance_max)] {
                if let Some(x) = x {
                    let _ = writeln!(
                        out,
                        "  {label}  {} at {}",
                        format_quantity(x.value, Quantity::Resistance, 4),
                        freq(x.f_hz)
                    );
                }
            }
            for (at, a) in &attenuation {
                match a {
                    Ok(a) => {
                        let _ = writeln!(out, "  attenuation     {a:.3} dB at {}", freq(*at));
                    }
                    Err(e) => {
                        let _ = writeln!(out, "  attenuation     at {}: {e}", freq(*at));
                    }
                }
            }
            if m.unsolved > 0 {
                let _ = writeln!(out, "  note: {} points could not be solved and were left out", m.unsolved);
            }
        }
    }
    Ok(out)
}

/// Renders the safety cautions.
pub fn render_cautions() -> String {
    let mut out = String::new();
    for caution in bandwright::cautions::CAUTIONS {
        let _ = writeln!(out, "{}\n  {}\n", caution.title, caution.text);
    }
    out
}

fn part_quantity(kind: &str) -> Quantity {
    match kind {
        "capacitor" => Quantity::Capacitance,
        "inductor" => Quantity::Inductance,
        _ => Quantity::Resistance,
    }
}

/// Renders a fit result.
pub fn render_fit(
    result: &bandwright::fit::FitResult,
    ranked: Option<&bandwright::yield_rank::YieldRankedFit>,
    format: crate::args::FitFormat,
) -> String {
    use bandwright::fit::Arrangement;
    let mut out = String::new();
    match format {
        crate::args::FitFormat::Json => {
            let value = ranked.map_or_else(|| result.to_json(), |r| r.to_json());
            out.push_str(&serde_json::to_string_pretty(&value).expect("JSON of plain values"));
            out.push('\n');
        }
        crate::args::FitFormat::Table => {
            let freq = |x: f64| format_quantity(x, Quantity::Frequency, 5);
            let mut target = Vec::new();
            if let Some(x) = result.target.cutoff_hz {
                target.push(format!("cutoff {}", freq(x)));
            }
            if let Some(x) = result.target.f0_hz {
                target.push(format!("f0 {}", freq(x)));
            }
            if let Some(x) = result.target.q {
                target.push(format!("Q {x:.4}"));
            }
            if target.is_empty() {
                target.push("the requested band edges (no single cutoff for this response)".to_string());
            }
            let _ = writeln!(out, "target: {}", target.join(", "));
            let _ = writeln!(out, "ranked by: {}", result.objective);
            let _ = writeln!(
                out,
                "response deviation measured over {} … {} (passband plus transition band; what it is measured against is stated above)",
                freq(result.deviation_band_hz.0),
                freq(result.deviation_band_hz.1)
            );
            for (rank, a) in result.alternatives.iter().enumerate() {
                let mut figures = Vec::new();
                if let (Some(x), Some(e)) = (a.achieved.cutoff_hz, a.cutoff_error_pct) {
                    figures.push(format!("cutoff {} ({e:+.3} %)", freq(x)));
                }
                if let (Some(x), Some(e)) = (a.achieved.f0_hz, a.f0_error_pct) {
                    figures.push(format!("f0 {} ({e:+.3} %)", freq(x)));
                }
                if let (Some(x), Some(e)) = (a.achieved.q, a.q_error_pct) {
                    figures.push(format!("Q {x:.4} ({e:+.3} %)"));
                }
                let _ = writeln!(
                    out,
                    "\n#{}  {}; worst response deviation {:.3} dB",
                    rank + 1,
                    figures.join(", "),
                    a.max_response_deviation_db
                );
                if let Some(y) = ranked.and_then(|r| r.yields.get(rank)) {
                    let m = &y.mask_yield;
                    let _ = writeln!(
                        out,
                        "  yield {} of {} trials inside the mask ({:.1} %); nominal {} with worst margin {:.3} dB; #{} by nominal error",
                        m.passed,
                        m.trials,
                        100.0 * y.fraction,
                        if m.nominal.pass { "passes" } else { "fails" },
                        m.nominal.worst_margin_db,
                        y.nominal_rank + 1
                    );
                }
                let _ = writeln!(
                    out,
                    "  {:<5} {:<10} {:>12}  {:<26} {:<8} {:>6}  {:>9}",
                    "ref", "kind", "ideal", "chosen", "series", "tol", "deviation"
                );
                for p in &a.parts {
                    let q = part_quantity(p.kind);
                    let chosen = match p.choice.arrangement {
                        Arrangement::Single => format_quantity(p.choice.value, q, 3),
                        Arrangement::Series => format!(
                            "{} + {}",
                            format_quantity(p.choice.parts[0], q, 3),
                            format_quantity(p.choice.parts[1], q, 3)
                        ),
                        Arrangement::Parallel => format!(
                            "{} ∥ {}",
                            format_quantity(p.choice.parts[0], q, 3),
                            format_quantity(p.choice.parts[1], q, 3)
                        ),
                    };
                    let _ = writeln!(
                        out,
                        "  {:<5} {:<10} {:>12}  {:<26} {:<8} {:>6}  {:>+8.3} %",
                        p.reference,
                        p.kind,
                        format_quantity(p.ideal_value, q, 4),
                        chosen,
                        p.series,
                        p.tolerance_pct.map(|t| format!("±{t}%")).unwrap_or_else(|| "—".to_string()),
                        p.deviation_pct
                    );
                }
            }
        }
    }
    out
}
