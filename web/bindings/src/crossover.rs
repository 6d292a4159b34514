//! The crossover workspace of the page: a crossover file (JSON, format `bandwright-crossover`)
//! with the texts of the impedance CSVs it names, designed by the core and analysed as the CLI's
//! `crossover` command does: once with the designed (ideal) values and once with the parts
//! list's standard values swapped in (what a build from the list gives). It reports the branch
//! and summed responses, the load the amplifier sees with its minimum, the coil-resistance loss,
//! the part stress at a stated amplifier power with the cautions, and the parts list; and it
//! draws four panels (magnitude of the branches and their sum, their phase, |Z| with its minimum
//! marked, impedance phase) through the plot layer onto any plotters backend.
//!
//! Every error names what it is about. One about a field of the file or of the options starts
//! with `field <path>: ` (for example `field crossover_frequencies[1]: `, `field
//! branches[0].driver.model.re: `, `field power: `), as the rest of the bindings do, so that the
//! page can put it at the input.
//!
//! Conventions as the core: SI units, dB = 20·log10|H|, acoustic levels relative to the reference
//! sensitivity, phase in degrees unwrapped along the sweep. The 80 %-of-nominal floor for the
//! impedance minimum and the rating margins are common practice, not a standard, and every
//! report says so.

use crate::error::WebError;
use bandwright::crossover::{BranchFilter, CrossoverAlignment, Polarity, MINIMUM_IMPEDANCE_FRACTION};
use bandwright::crossover_file::CrossoverFileError;
use bandwright::eseries::{PartValues, Series as ValueSeries};
use bandwright::notation::{format_quantity, parse_value, Quantity};
use bandwright::stress::{RatingMargins, StressQuantity};
use bandwright::{
    crossover_stress, parts_list, stress_frequencies, CoilLoss, Crossover, CrossoverFile, CrossoverResponse,
    ElementKind, PartsListEntry, PartsOptions, StressOptions, StressReport,
};
use bandwright_plot::{draw_panels, ChartOptions, Panel, Quantity as PlotQuantity, Series, SeriesStyle, Theme};
use num_complex::Complex64;
use plotters::coord::Shift;
use plotters::prelude::{DrawingArea, DrawingBackend};
use serde_json::{json, Value};
use std::collections::BTreeMap;

/// The demo crossover: a scenario of our own (examples/crossover/crossover-2way-lr4.json).
pub const DEMO_FILE: &str = include_str!("../../../examples/crossover/crossover-2way-lr4.json");
/// The name under which the demo file names its tweeter's impedance CSV.
pub const DEMO_CSV_NAME: &str = "demo-tweeter-impedance.csv";
/// That CSV: invented demo data, not a measurement.
pub const DEMO_CSV: &str = include_str!("../../../examples/crossover/demo-tweeter-impedance.csv");

/// The magnitude panel's fixed range in dB: the sum and the passbands near 0 dB, the stopbands
/// down to −40 dB (as the CLI's plot).
pub const MAGNITUDE_RANGE_DB: (f64, f64) = (-40.0, 10.0);

/// Where the 80 % floor comes from, as every report states it.
pub const RULE_SOURCE: &str = "common practice, not a standard";

/// What the analysis is run at (the CLI's flags, read from the page's options JSON).
#[derive(Debug, Clone, PartialEq)]
pub struct AnalysisOptions {
    /// Amplifier power into the nominal impedance, W.
    pub power_w: f64,
    /// Band start, Hz.
    pub low_hz: f64,
    /// Band end, Hz.
    pub high_hz: f64,
    /// Log-spaced points per decade.
    pub points_per_decade: usize,
    /// The parts list's value sets.
    pub parts: PartsOptions,
}

/// One analysis of a crossover: with its designed values or with standard ones.
#[derive(Debug, Clone)]
pub struct Analysis {
    /// The crossover analysed.
    pub crossover: Crossover,
    /// The response over the band.
    pub response: CrossoverResponse,
    /// The response at each crossover frequency.
    pub at_crossover: CrossoverResponse,
    /// Per branch, the coil DCR loss, or why it could not be found.
    pub coil_losses: Result<Vec<CoilLoss>, String>,
    /// The stress report at the stated power.
    pub stress: StressReport,
}

/// A whole run: the file as read, both analyses, the parts list and the plotted curves.
#[derive(Debug, Clone)]
pub struct CrossoverRun {
    /// The file as read.
    pub file: CrossoverFile,
    /// The options it was run at.
    pub options: AnalysisOptions,
    /// The sweep frequencies, Hz.
    pub f_hz: Vec<f64>,
    /// With the designed values.
    pub ideal: Analysis,
    /// With the parts list's standard values.
    pub standard: Analysis,
    /// The parts list: designed and standard values, ratings from the as-built sweep.
    pub parts: Vec<PartsListEntry>,
    /// The curves drawn (as built, plus the designed sum).
    pub curves: Curves,
}

/// The plotted curves, one value per sweep frequency (`None` where undefined).
#[derive(Debug, Clone, PartialEq)]
pub struct Curves {
    /// Branch names, lowest band first.
    pub names: Vec<String>,
    /// Per branch, the acoustic level in dB (as built, with polarity).
    pub branch_db: Vec<Vec<Option<f64>>>,
    /// Per branch, the acoustic phase in degrees, unwrapped.
    pub branch_phase_deg: Vec<Vec<Option<f64>>>,
    /// The sum's level in dB, as built.
    pub sum_db: Vec<Option<f64>>,
    /// The sum's phase in degrees, unwrapped, as built.
    pub sum_phase_deg: Vec<Option<f64>>,
    /// The sum's level with the designed values, dB.
    pub designed_sum_db: Vec<Option<f64>>,
    /// |Z| the amplifier sees, Ω, as built.
    pub impedance_ohm: Vec<Option<f64>>,
    /// Its phase in degrees.
    pub impedance_phase_deg: Vec<Option<f64>>,
}

impl Default for AnalysisOptions {
    fn default() -> Self {
        AnalysisOptions {
            power_w: 100.0,
            low_hz: 20.0,
            high_hz: 20e3,
            points_per_decade: 48,
            parts: PartsOptions::default(),
        }
    }
}

/// The demo as `{"file": <crossover file>, "csv": {name: text}}`.
pub fn demo_json() -> String {
    let file: Value = serde_json::from_str(DEMO_FILE).expect("the demo crossover is JSON");
    json!({"file": file, "csv": {DEMO_CSV_NAME: DEMO_CSV}}).to_string()
}

/// Reads the page's CSV texts: a JSON object of name → text (`""` or `null` is none).
///
/// # Errors
/// Anything but such an object.
pub fn read_csv_map(csv_json: &str) -> Result<BTreeMap<String, String>, WebError> {
    if csv_json.trim().is_empty() || csv_json.trim() == "null" {
        return Ok(BTreeMap::new());
    }
    serde_json::from_str(csv_json).map_err(|error| {
        WebError::general(format!("the CSV texts are not a JSON object of file name to text: {error}"))
    })
}

/// Reads, checks and designs a crossover file; returns it normalised (SI numbers, pretty JSON).
///
/// # Errors
/// The file's problem, naming its field (see [`file_error`]).
pub fn check_crossover(file_json: &str, csv_json: &str) -> Result<String, WebError> {
    let csv = read_csv_map(csv_json)?;
    let file = bandwright::parse_crossover_file(file_json).map_err(file_error)?;
    file.design(&csv).map_err(file_error)?;
    Ok(file.to_json())
}

/// Reads an impedance CSV (frequency, |Z|, phase) and describes it as JSON
/// `{points, from_hz, to_hz, text}`.
///
/// # Errors
/// The core's row problem, which names the line.
pub fn read_impedance_csv(text: &str) -> Result<String, WebError> {
    let curve = bandwright::parse_impedance_csv(text).map_err(|error| WebError::general(error.to_string()))?;
    let (from_hz, to_hz) = curve.range_hz();
    let points = curve.f_hz().len();
    let freq = |f: f64| format_quantity(f, Quantity::Frequency, 3);
    Ok(json!({
        "points": points,
        "from_hz": from_hz,
        "to_hz": to_hz,
        "text": format!("{points} points, {} – {}", freq(from_hz), freq(to_hz)),
    })
    .to_string())
}

/// Turns a 2-way file into a 3-way one and back, keeping what it can: 2 → 3 inserts a branch
/// "mid" (a resistor at the nominal impedance, with the top branch's order and alignment and no
/// helpers) and a lower crossover frequency an eighth of the existing one (a common spacing of
/// three octaves; our choice); 3 → 2 drops the middle branch and the lower frequency, so that
/// 2 → 3 → 2 gives the 2-way back.
///
/// # Errors
/// A file that does not read, or `ways` other than 2 or 3.
pub fn with_ways(file_json: &str, ways: u32) -> Result<String, WebError> {
    let mut file = bandwright::parse_crossover_file(file_json).map_err(file_error)?;
    match (ways, file.branches.len(), file.crossover_frequencies.len()) {
        (2, 2, 1) | (3, 3, 2) => {}
        (3, 2, 1) => {
            let top = &file.branches[1];
            let mut mid: bandwright::crossover_file::BranchEntry = serde_json::from_value(json!({
                "name": "mid",
                "driver": {"resistor": file.nominal_impedance},
                "zobel": "none",
                "notch": "none",
            }))
            .expect("a plain branch reads");
            mid.order = top.order.or(file.defaults.order);
            mid.alignment = top.alignment.or(file.defaults.alignment);
            file.branches.insert(1, mid);
            let upper = file.crossover_frequencies[0];
            file.crossover_frequencies.insert(0, upper / 8.0);
        }
        (2, 3, 2) => {
            file.branches.remove(1);
            file.crossover_frequencies.remove(0);
        }
        (2 | 3, branches, frequencies) => {
            return Err(WebError::general(format!(
                "field branches: {branches} branches with {frequencies} crossover frequencies cannot be turned into a {ways}-way; give 2 branches and 1 frequency or 3 and 2"
            )))
        }
        _ => return Err(WebError::general(format!("field ways: {ways} is not offered; give 2 or 3"))),
    }
    Ok(file.to_json())
}

/// Reads the page's options: `{power, from, to, per_decade, capacitors, inductors, resistors}`,
/// each a number in SI units or engineering-notation text, absent for the default (100 W,
/// 20 Hz – 20 kHz, 48 per decade, E12 / E12 / E24).
///
/// # Errors
/// A value that does not read or is out of range, as `field <name>: …`.
pub fn read_options(options_json: &str) -> Result<AnalysisOptions, WebError> {
    let mut options = AnalysisOptions::default();
    if options_json.trim().is_empty() || options_json.trim() == "null" {
        return Ok(options);
    }
    let value: Value = serde_json::from_str(options_json)
        .map_err(|error| WebError::general(format!("the crossover options are not JSON: {error}")))?;
    let Value::Object(map) = value else {
        return Err(WebError::general("the crossover options must be a JSON object"));
    };
    for key in map.keys() {
        if !["power", "from", "to", "per_decade", "capacitors", "inductors", "resistors"].contains(&key.as_str()) {
            return Err(WebError::general(format!(
                "field {key}: not a crossover option; use power, from, to, per_decade, capacitors, inductors, resistors"
            )));
        }
    }
    let number = |key: &str, quantity: Quantity| -> Result<Option<f64>, WebError> {
        let field_error = |problem: String| WebError::general(format!("field {key}: {problem}"));
        let value = match map.get(key) {
            None | Some(Value::Null) => return Ok(None),
            Some(Value::Number(n)) => n.as_f64().unwrap_or(f64::NAN),
            Some(Value::String(text)) if text.trim().is_empty() => return Ok(None),
            Some(Value::String(text)) => parse_value(text, quantity).map_err(|e| field_error(e.to_string()))?,
            Some(other) => return Err(field_error(format!("{other} is not a number or a value such as \"100\""))),
        };
        if !(value.is_finite() && value > 0.0) {
            return Err(field_error(format!("{value} is refused; give a value above 0")));
        }
        Ok(Some(value))
    };
    if let Some(power) = number("power", Quantity::Power)? {
        options.power_w = power;
    }
    if let Some(from) = number("from", Quantity::Frequency)? {
        options.low_hz = from;
    }
    if let Some(to) = number("to", Quantity::Frequency)? {
        options.high_hz = to;
    }
    if options.high_hz <= options.low_hz {
        return Err(WebError::general(format!(
            "field to: the band must end above its start ({} to {} Hz); give an end above the start",
            options.low_hz, options.high_hz
        )));
    }
    if let Some(per_decade) = number("per_decade", Quantity::Ratio)? {
        if per_decade.fract() != 0.0 || per_decade > 1000.0 {
            return Err(WebError::general(format!(
                "field per_decade: {per_decade} is refused; give a whole number of points per decade from 1 to 1000"
            )));
        }
        options.points_per_decade = per_decade as usize;
    }
    let series = |key: &str, default: PartValues| -> Result<PartValues, WebError> {
        match map.get(key) {
            None | Some(Value::Null) => Ok(default),
            Some(Value::String(name)) => ValueSeries::from_name(name.trim()).map(PartValues::Series).ok_or_else(|| {
                WebError::general(format!(
                    "field {key}: {name:?} is not an E-series name; give E3, E6, E12, E24, E48, E96 or E192"
                ))
            }),
            Some(other) => Err(WebError::general(format!("field {key}: {other} is not an E-series name"))),
        }
    };
    let defaults = PartsOptions::default();
    options.parts = PartsOptions {
        capacitors: series("capacitors", defaults.capacitors)?,
        inductors: series("inductors", defaults.inductors)?,
        resistors: series("resistors", defaults.resistors)?,
    };
    Ok(options)
}

/// Reads, designs and analyses a crossover.
///
/// # Errors
/// The file's problem (naming its field), an option's, or a stress sweep in which no frequency
/// could be solved.
pub fn run(file_json: &str, csv_json: &str, options_json: &str) -> Result<CrossoverRun, WebError> {
    let csv = read_csv_map(csv_json)?;
    let options = read_options(options_json)?;
    let file = bandwright::parse_crossover_file(file_json).map_err(file_error)?;
    let crossover = file.design(&csv).map_err(file_error)?;
    let stress = StressOptions {
        power_w: options.power_w,
        nominal_ohm: crossover.spec.nominal_ohm,
        low_hz: options.low_hz,
        high_hz: options.high_hz,
        points_per_decade: options.points_per_decade,
        margins: RatingMargins::default(),
    };
    let f_hz = stress_frequencies(&stress);
    let ideal = analyse(crossover, &f_hz, &stress)?;
    let ideal_parts = parts_list(&ideal.crossover, &ideal.stress, &options.parts);
    let standard = analyse(with_standard_values(&ideal.crossover, &ideal_parts)?, &f_hz, &stress)?;
    let parts = parts_list(&standard.crossover, &standard.stress, &options.parts)
        .into_iter()
        .zip(&ideal_parts)
        .map(|(built, designed)| PartsListEntry { ideal: designed.ideal, standard: built.standard, ..built })
        .collect();
    let curves = curves_of(&standard, &ideal);
    Ok(CrossoverRun { file, options, f_hz, ideal, standard, parts, curves })
}

/// The error of a crossover file as the page shows it: a field's problem prefixed with `field
/// <path>: `; a CSV the page has not been given says how to give it.
pub fn file_error(error: CrossoverFileError) -> WebError {
    match &error {
        CrossoverFileError::Field { field, .. } | CrossoverFileError::Csv { field, .. } => {
            WebError::general(format!("field {field}: {error}"))
        }
        CrossoverFileError::MissingCsv { field, path } => WebError::general(format!(
            "field {field}: the file names the impedance CSV {path:?}, which this page has not been given; open it together with the crossover file, or import it at that driver"
        )),
        _ => WebError::general(error.to_string()),
    }
}

impl CrossoverRun {
    /// Everything the page shows as JSON: figures in SI units with their formatted texts (see
    /// web/README.md for the fields). Non-finite figures are `null`, and their texts "—".
    pub fn report(&self) -> Value {
        let crossover = &self.standard.crossover;
        let spec = &crossover.spec;
        let stress = &self.standard.stress;
        let margins = RatingMargins::default();
        let branches: Vec<Value> = crossover
            .branches
            .iter()
            .enumerate()
            .map(|(k, branch)| {
                let network = &branch.network;
                let spec_branch = &spec.branches[k];
                let level = match (branch.l_pad, branch.series_resistor) {
                    (Some(pad), _) => Some(format!(
                        "L-pad {:.2} dB (series {}, shunt {})",
                        -db(branch.level),
                        ohm(pad.series_ohm),
                        ohm(pad.shunt_ohm)
                    )),
                    (None, Some(rs)) => Some(format!("series resistor {} for {:.2} dB", ohm(rs), -db(branch.level))),
                    _ => None,
                };
                let helpers: Vec<String> = [
                    branch.zobel.map(|z| match z.lossy {
                        None => format!("Zobel {} + {}", ohm(z.rz), farad(z.cz)),
                        Some((c2, r2)) => {
                            format!("Zobel {} + {} with {} + {} for the lossy coil", ohm(z.rz), farad(z.cz), farad(c2), ohm(r2))
                        }
                    }),
                    branch.notch.map(|n| format!("resonance notch {} + {} + {}", ohm(n.r), henry(n.l), farad(n.c))),
                    level.clone(),
                    (network.gain_offset_db.abs() > 1e-9).then(|| {
                        format!(
                            "band-pass ladder gain over the product of its high-pass and low-pass: {:+.2} dB",
                            network.gain_offset_db
                        )
                    }),
                ]
                .into_iter()
                .flatten()
                .collect();
                let loss = |analysis: &Analysis| match &analysis.coil_losses {
                    Ok(losses) => json!({
                        "f_hz": losses[k].f_hz,
                        "loss_db": finite(losses[k].loss_db),
                        "text": format!("{} dB at {}", signed(losses[k].loss_db), freq(losses[k].f_hz)),
                    }),
                    Err(error) => json!({"error": error, "text": format!("not found: {error}")}),
                };
                let deviation = |analysis: &Analysis| {
                    let b = &analysis.response.branches[k];
                    match (b.max_deviation_db, b.max_deviation_hz) {
                        (Some(d), Some(f)) if d.is_finite() => {
                            json!({"db": d, "f_hz": f, "text": format!("{d:.3} dB at {}", freq(f))})
                        }
                        _ => json!({"db": null, "f_hz": null, "text": "—"}),
                    }
                };
                let at_crossover: Vec<Value> = self
                    .standard
                    .at_crossover
                    .points
                    .iter()
                    .map(|point| match point {
                        Ok(p) => {
                            let level = db(p.acoustic[k].norm());
                            json!({"f_hz": p.f_hz, "db": finite(level), "text": format!("{} dB at {}", signed2(level), freq(p.f_hz))})
                        }
                        Err(error) => json!({"error": error.to_string(), "text": "—"}),
                    })
                    .collect();
                json!({
                    "name": branch.name,
                    "filter": filter_text(&network.filter),
                    "order": network.order,
                    "alignment": alignment_text(network.alignment),
                    "polarity": if spec_branch.polarity == Polarity::Inverted { "inverted" } else { "normal" },
                    "load_ohm": network.load_ohm,
                    "load_text": ohm(network.load_ohm),
                    "gain_offset_db": finite(network.gain_offset_db),
                    "level_db": finite(db(branch.level)),
                    "helpers": helpers,
                    "deviation_designed": deviation(&self.ideal),
                    "deviation_built": deviation(&self.standard),
                    "coil_loss_designed": loss(&self.ideal),
                    "coil_loss_built": loss(&self.standard),
                    "at_crossover": at_crossover,
                })
            })
            .collect();
        let sum = |analysis: &Analysis| match sum_extremes(&analysis.response) {
            Some((max, max_hz, min, min_hz)) => json!({
                "max_db": max, "max_hz": max_hz, "min_db": min, "min_hz": min_hz, "flatness_db": max - min,
                "text": format!("{} dB at {} to {} dB at {}, flatness {:.2} dB over the band", signed(max), freq(max_hz), signed(min), freq(min_hz), max - min),
            }),
            None => json!({"text": "no point of the band could be solved"}),
        };
        let minimum = |analysis: &Analysis| match analysis.response.minimum {
            Some(m) => json!({
                "f_hz": m.f_hz,
                "magnitude_ohm": m.magnitude_ohm,
                "fraction_of_nominal": m.fraction_of_nominal,
                "below_rule_of_thumb": m.below_rule_of_thumb,
                "text": format!(
                    "{} at {} = {:.0} % of nominal {}: {}",
                    ohm(m.magnitude_ohm),
                    freq(m.f_hz),
                    100.0 * m.fraction_of_nominal,
                    ohm(spec.nominal_ohm),
                    if m.below_rule_of_thumb { "below the 80 % rule of thumb" } else { "meets the 80 % rule of thumb" }
                ),
            }),
            None => json!({"text": "no point could be solved"}),
        };
        let stress_rows: Vec<Value> = stress
            .parts
            .iter()
            .map(|part| {
                json!({
                    "reference": part.reference,
                    "kind": kind_of(part.quantity),
                    "value_text": self.parts.iter().find(|p| p.reference == part.reference).map(|p| {
                        let quantity = quantity_of(p.kind);
                        p.standard.map(|v| format_quantity(v, quantity, 3)).unwrap_or_else(|| format_quantity(p.ideal, quantity, 4))
                    }),
                    "figure": part.quantity.name(),
                    "worst": finite(part.worst),
                    "worst_text": part.quantity.worst_text(part.worst),
                    "at_hz": finite(part.at_hz),
                    "at_text": freq(part.at_hz),
                    "minimum_rating": finite(part.minimum_rating),
                    "rating_text": part.quantity.rating_text(part.minimum_rating),
                    "margin_text": part.quantity.margin_text(&margins),
                })
            })
            .collect();
        let parts: Vec<Value> = self
            .parts
            .iter()
            .map(|entry| {
                let quantity = quantity_of(entry.kind);
                json!({
                    "reference": entry.reference,
                    "kind": entry.kind,
                    "ideal": finite(entry.ideal),
                    "ideal_text": format_quantity(entry.ideal, quantity, 4),
                    "standard": entry.standard.and_then(finite_option),
                    "standard_text": entry.standard.map(|v| format!("{} {}", format_quantity(v, quantity, 3), entry.series)).unwrap_or_else(|| "—".into()),
                    "series": entry.series,
                    "dcr_ohm": entry.dcr.and_then(finite_option),
                    "dcr_text": entry.dcr.filter(|d| *d > 0.0).map(ohm).unwrap_or_else(|| "—".into()),
                    "rating_text": entry.minimum_rating.map(|(v, q)| q.rating_text(v)).unwrap_or_else(|| "—".into()),
                })
            })
            .collect();
        let unsolved: Vec<String> =
            self.standard.response.points.iter().filter_map(|p| p.as_ref().err()).map(|e| e.to_string()).collect();
        json!({
            "name": self.file.name,
            "note": self.file.note,
            "ways": crossover.branches.len(),
            "nominal_ohm": spec.nominal_ohm,
            "nominal_text": ohm(spec.nominal_ohm),
            "crossover_hz": spec.crossover_hz,
            "crossover_text": spec.crossover_hz.iter().map(|&f| freq(f)).collect::<Vec<_>>(),
            "coil_dcr_ohm_per_henry": spec.coil_dcr_ohm_per_henry,
            "reference_sensitivity_db": finite(crossover.reference_sensitivity_db()),
            "band": {
                "from_hz": self.options.low_hz,
                "to_hz": self.options.high_hz,
                "points_per_decade": self.options.points_per_decade,
                "text": format!("{} – {}, {} points per decade", freq(self.options.low_hz), freq(self.options.high_hz), self.options.points_per_decade),
            },
            "branches": branches,
            "sum_designed": sum(&self.ideal),
            "sum_built": sum(&self.standard),
            "sum_at_crossover": self.standard.at_crossover.points.iter().map(|p| match p {
                Ok(p) => json!({"f_hz": p.f_hz, "db": finite(db(p.sum.norm())), "text": format!("{} dB at {}", signed2(db(p.sum.norm())), freq(p.f_hz))}),
                Err(error) => json!({"error": error.to_string(), "text": "—"}),
            }).collect::<Vec<_>>(),
            "impedance_minimum": {
                "designed": minimum(&self.ideal),
                "built": minimum(&self.standard),
                "rule_fraction": MINIMUM_IMPEDANCE_FRACTION,
                "rule_ohm": MINIMUM_IMPEDANCE_FRACTION * spec.nominal_ohm,
                "rule_text": format!(
                    "Rule of thumb ({RULE_SOURCE}): the load should not fall below {:.0} % of nominal, here {}.",
                    100.0 * MINIMUM_IMPEDANCE_FRACTION,
                    ohm(MINIMUM_IMPEDANCE_FRACTION * spec.nominal_ohm)
                ),
            },
            "stress": {
                "power_w": stress.power_w,
                "power_text": format_quantity(stress.power_w, Quantity::Power, 4),
                "amplifier_volts_rms": finite(stress.amplifier_volts_rms),
                "amplifier_text": format!(
                    "{} into {} is {} rms ({} peak) at the amplifier's terminals",
                    format_quantity(stress.power_w, Quantity::Power, 4),
                    ohm(spec.nominal_ohm),
                    format_quantity(stress.amplifier_volts_rms, Quantity::Voltage, 3),
                    format_quantity(stress.amplifier_volts_rms * std::f64::consts::SQRT_2, Quantity::Voltage, 3)
                ),
                "parts": stress_rows,
                "drivers": stress.drivers.iter().map(|d| json!({
                    "branch": d.branch,
                    "worst_w": finite(d.worst_w),
                    "at_hz": finite(d.at_hz),
                    "text": format!("driver {}: up to {} at {} (its voice coil heats with it; see the maker's power data)", d.branch, format_quantity(d.worst_w, Quantity::Power, 3), freq(d.at_hz)),
                })).collect::<Vec<_>>(),
                "unsolved": stress.unsolved.len(),
                "margins_text": format!(
                    "Minimum ratings include margins ({RULE_SOURCE}): capacitors {} × the peak voltage, coils {} × the rms current, resistors {} × the dissipation; worst case over the band with a continuous sine at full power.",
                    margins.capacitor_voltage, margins.inductor_current, margins.resistor_power
                ),
            },
            "parts": parts,
            "unsolved": {"count": unsolved.len(), "first": unsolved.first()},
            "cautions": stress.cautions.iter().map(|c| json!({"title": c.title, "text": c.text})).collect::<Vec<_>>(),
        })
    }

    /// The sweep as CSV, as built (the CLI's `--format csv`): per frequency each branch's
    /// acoustic dB and phase, the sum's, and |Z| with its phase; empty cells where undefined.
    pub fn sweep_csv(&self) -> String {
        let c = &self.curves;
        let mut out = String::from(
            "# as built with the parts list's standard values; acoustic dB relative to the reference sensitivity; phase unwrapped along the sweep\r\nfrequency_hz",
        );
        for name in &c.names {
            // Branch names are free text: only letters, digits, '-' and '_' reach a header cell,
            // so that a name can neither split a cell nor start a spreadsheet formula.
            let name: String =
                name.chars().map(|ch| if ch.is_alphanumeric() || ch == '-' || ch == '_' { ch } else { '_' }).collect();
            let name = name.trim_start_matches('-');
            out.push_str(&format!(",{name}_db,{name}_phase_deg"));
        }
        out.push_str(",sum_db,sum_phase_deg,impedance_ohm,impedance_phase_deg\r\n");
        let mut columns: Vec<&[Option<f64>]> = Vec::new();
        for (level, phase) in c.branch_db.iter().zip(&c.branch_phase_deg) {
            columns.push(level);
            columns.push(phase);
        }
        columns.extend([&c.sum_db[..], &c.sum_phase_deg, &c.impedance_ohm, &c.impedance_phase_deg]);
        for (i, f) in self.f_hz.iter().enumerate() {
            out.push_str(&format!("{f:.6e}"));
            for column in &columns {
                match column[i].filter(|v| v.is_finite()) {
                    Some(v) => out.push_str(&format!(",{v:.6e}")),
                    None => out.push(','),
                }
            }
            out.push_str("\r\n");
        }
        out
    }

    /// The four panels of the plot, top to bottom: magnitude (branches, the sum, the designed
    /// sum dashed), phase, |Z| (with the 80 % line and a mark at the minimum) and its phase.
    pub fn panels<'a>(&'a self, marks: &'a Marks) -> Vec<Panel<'a>> {
        let c = &self.curves;
        let f = &self.f_hz;
        let mut magnitude: Vec<Series> = c
            .names
            .iter()
            .zip(&c.branch_db)
            .map(|(name, values)| Series { label: name, f_hz: f, values, style: SeriesStyle::Overlay })
            .collect();
        magnitude.push(Series {
            label: "sum (designed)",
            f_hz: f,
            values: &c.designed_sum_db,
            style: SeriesStyle::Ideal,
        });
        magnitude.push(Series { label: "sum", f_hz: f, values: &c.sum_db, style: SeriesStyle::Primary });
        let mut phase: Vec<Series> = c
            .names
            .iter()
            .zip(&c.branch_phase_deg)
            .map(|(name, values)| Series { label: name, f_hz: f, values, style: SeriesStyle::Overlay })
            .collect();
        phase.push(Series { label: "sum", f_hz: f, values: &c.sum_phase_deg, style: SeriesStyle::Primary });
        let mut impedance = vec![Series {
            label: "|Z| at the amplifier",
            f_hz: f,
            values: &c.impedance_ohm,
            style: SeriesStyle::Primary,
        }];
        impedance.push(Series {
            label: &marks.rule_label,
            f_hz: f,
            values: &marks.rule_ohm,
            style: SeriesStyle::Ideal,
        });
        if let Some((label, f_min, z_min)) = &marks.minimum {
            impedance.push(Series { label, f_hz: f_min, values: z_min, style: SeriesStyle::Overlay });
        }
        vec![
            Panel {
                quantity: PlotQuantity::MagnitudeDb,
                series: magnitude,
                y_range: Some(MAGNITUDE_RANGE_DB),
                bands: Vec::new(),
                regions: Vec::new(),
            },
            Panel {
                quantity: PlotQuantity::PhaseDeg,
                series: phase,
                y_range: None,
                bands: Vec::new(),
                regions: Vec::new(),
            },
            Panel {
                quantity: PlotQuantity::ImpedanceOhm,
                series: impedance,
                y_range: None,
                bands: Vec::new(),
                regions: Vec::new(),
            },
            Panel {
                quantity: PlotQuantity::ImpedancePhaseDeg,
                series: vec![Series {
                    label: "",
                    f_hz: f,
                    values: &c.impedance_phase_deg,
                    style: SeriesStyle::Primary,
                }],
                y_range: None,
                bands: Vec::new(),
                regions: Vec::new(),
            },
        ]
    }

    /// The marks of the |Z| panel: the 80 % line and the minimum.
    pub fn marks(&self) -> Marks {
        let nominal = self.standard.crossover.spec.nominal_ohm;
        let rule = MINIMUM_IMPEDANCE_FRACTION * nominal;
        let minimum = self.standard.response.minimum.filter(|m| m.magnitude_ohm.is_finite() && m.magnitude_ohm > 0.0);
        Marks {
            rule_label: format!("{:.0} % of nominal ({})", 100.0 * MINIMUM_IMPEDANCE_FRACTION, ohm(rule)),
            rule_ohm: vec![Some(rule); self.f_hz.len()],
            // A short vertical stroke through the minimum, ±1/5 decade of |Z| (on the log axis).
            minimum: minimum.map(|m| {
                let stretch = 10f64.powf(0.2);
                (
                    format!("minimum {} at {}", ohm(m.magnitude_ohm), freq(m.f_hz)),
                    vec![m.f_hz, m.f_hz],
                    vec![Some(m.magnitude_ohm / stretch), Some(m.magnitude_ohm * stretch)],
                )
            }),
        }
    }

    /// Draws the four panels onto `area` (the caller presents it).
    ///
    /// # Errors
    /// The plot layer's error (for example an area too small for four panels).
    pub fn draw<DB: DrawingBackend>(&self, area: &DrawingArea<DB, Shift>, theme: Theme) -> Result<(), WebError> {
        let marks = self.marks();
        let panels = self.panels(&marks);
        let f_range_hz = (self.f_hz[0], self.f_hz[self.f_hz.len() - 1]);
        let options = ChartOptions { f_range_hz: Some(f_range_hz), theme, title: None, cursor_hz: None };
        draw_panels(area, &panels, &options)?;
        area.present().map_err(|error| WebError::general(format!("cannot finish the crossover plot: {error}")))?;
        Ok(())
    }

    /// The plot as an SVG document of `width` × `height` pixels.
    ///
    /// # Errors
    /// A size outside 1 … [`crate::chart::MAX_SVG_SIDE`], or the plot layer's error.
    pub fn svg(&self, width: u32, height: u32, theme: Theme) -> Result<String, WebError> {
        crate::chart::svg_document(width, height, |area| self.draw(area, theme).map(|_| ()))
    }
}

/// The extra series of the |Z| panel, owned so that panels can borrow them.
#[derive(Debug, Clone, PartialEq)]
pub struct Marks {
    /// Legend text of the 80 % line.
    pub rule_label: String,
    /// The 80 % line, one value per sweep frequency.
    pub rule_ohm: Vec<Option<f64>>,
    /// The minimum's legend text, its two frequencies (both the minimum's) and |Z| values.
    pub minimum: Option<(String, Vec<f64>, Vec<Option<f64>>)>,
}

fn analyse(crossover: Crossover, f_hz: &[f64], stress: &StressOptions) -> Result<Analysis, WebError> {
    let response = crossover.response(f_hz);
    let at_crossover = crossover.response(&crossover.spec.crossover_hz);
    let coil_losses = crossover.coil_losses().map_err(|e| e.to_string());
    let stress = crossover_stress(&crossover, stress).map_err(|error| WebError::general(error.to_string()))?;
    Ok(Analysis { crossover, response, at_crossover, coil_losses, stress })
}

/// The crossover with each part's standard value in place of its designed one (a coil keeps its
/// winding resistance per henry), as the CLI builds it.
fn with_standard_values(crossover: &Crossover, parts: &[PartsListEntry]) -> Result<Crossover, WebError> {
    let mut circuit = crossover.circuit.clone();
    let per_henry = crossover.spec.coil_dcr_ohm_per_henry;
    for entry in parts {
        let Some(value) = entry.standard else { continue };
        let Some(index) = circuit.element_index(&entry.reference) else { continue };
        let kind = match circuit.elements()[index].kind {
            ElementKind::Capacitor { esr, .. } => ElementKind::Capacitor { capacitance: value, esr },
            ElementKind::Inductor { .. } => ElementKind::Inductor { inductance: value, dcr: per_henry * value },
            ElementKind::Resistor { .. } => ElementKind::Resistor { resistance: value },
            _ => continue,
        };
        circuit = circuit.with_kind(index, kind).map_err(|error| WebError::general(error.to_string()))?;
    }
    Ok(Crossover { circuit, ..crossover.clone() })
}

fn curves_of(built: &Analysis, designed: &Analysis) -> Curves {
    let n_branch = built.crossover.branches.len();
    let pick = |response: &CrossoverResponse, f: &dyn Fn(&bandwright::CrossoverPoint) -> Complex64| {
        response.points.iter().map(|p| p.as_ref().ok().map(f)).collect::<Vec<_>>()
    };
    let branches: Vec<Vec<Option<Complex64>>> =
        (0..n_branch).map(|k| pick(&built.response, &|p| p.acoustic[k])).collect();
    let sum = pick(&built.response, &|p| p.sum);
    let impedance = pick(&built.response, &|p| p.impedance);
    Curves {
        names: built.crossover.branches.iter().map(|b| b.name.clone()).collect(),
        branch_db: branches.iter().map(|v| db_series(v)).collect(),
        branch_phase_deg: branches.iter().map(|v| unwrapped_phase(v)).collect(),
        sum_db: db_series(&sum),
        sum_phase_deg: unwrapped_phase(&sum),
        designed_sum_db: db_series(&pick(&designed.response, &|p| p.sum)),
        impedance_ohm: impedance.iter().map(|z| z.map(|z| z.norm()).filter(|v| v.is_finite())).collect(),
        impedance_phase_deg: impedance
            .iter()
            .map(|z| z.map(|z| z.arg().to_degrees()).filter(|v| v.is_finite()))
            .collect(),
    }
}

/// The sum's level extremes over the solved points: (max dB, its Hz, min dB, its Hz).
fn sum_extremes(response: &CrossoverResponse) -> Option<(f64, f64, f64, f64)> {
    let mut extremes: Option<(f64, f64, f64, f64)> = None;
    for point in response.points.iter().flatten() {
        let level = db(point.sum.norm());
        if !level.is_finite() {
            continue;
        }
        let (max, max_hz, min, min_hz) = extremes.get_or_insert((level, point.f_hz, level, point.f_hz));
        if level > *max {
            (*max, *max_hz) = (level, point.f_hz);
        }
        if level < *min {
            (*min, *min_hz) = (level, point.f_hz);
        }
    }
    extremes
}

/// Phase in degrees along the sweep, unwrapped so that no step exceeds 180° (the first solved
/// point is in (−180°, 180°]); `None` where a point was not solved or the value is zero.
fn unwrapped_phase(values: &[Option<Complex64>]) -> Vec<Option<f64>> {
    let mut previous: Option<f64> = None;
    values
        .iter()
        .map(|value| {
            let z = value.filter(|z| z.norm() > 0.0 && z.norm().is_finite())?;
            let mut phase = z.arg().to_degrees();
            if let Some(before) = previous {
                phase -= 360.0 * ((phase - before) / 360.0).round();
            }
            previous = Some(phase);
            Some(phase)
        })
        .collect()
}

fn db_series(values: &[Option<Complex64>]) -> Vec<Option<f64>> {
    values.iter().map(|v| v.filter(|z| z.norm() > 0.0).map(|z| db(z.norm())).filter(|x| x.is_finite())).collect()
}

fn db(magnitude: f64) -> f64 {
    20.0 * magnitude.log10()
}

fn finite(x: f64) -> Value {
    finite_option(x).map_or(Value::Null, |v| json!(v))
}

fn finite_option(x: f64) -> Option<f64> {
    x.is_finite().then_some(x)
}

/// A dB figure with its sign and 3 decimals; a value that rounds to zero prints as +0.000.
fn signed(x: f64) -> String {
    if !x.is_finite() {
        return "—".into();
    }
    let x = if x.abs() < 5e-4 { 0.0 } else { x };
    format!("{x:+.3}")
}

/// As [`signed`], with 2 decimals.
fn signed2(x: f64) -> String {
    if !x.is_finite() {
        return "—".into();
    }
    let x = if x.abs() < 5e-3 { 0.0 } else { x };
    format!("{x:+.2}")
}

fn text_of(x: f64, quantity: Quantity, digits: usize) -> String {
    if x.is_finite() {
        format_quantity(x, quantity, digits)
    } else {
        "—".into()
    }
}

fn freq(x: f64) -> String {
    text_of(x, Quantity::Frequency, 4)
}

fn ohm(x: f64) -> String {
    text_of(x, Quantity::Resistance, 3)
}

fn farad(x: f64) -> String {
    text_of(x, Quantity::Capacitance, 3)
}

fn henry(x: f64) -> String {
    text_of(x, Quantity::Inductance, 3)
}

fn filter_text(filter: &BranchFilter) -> String {
    match *filter {
        BranchFilter::LowPass { f_hz } => format!("low-pass at {}", freq(f_hz)),
        BranchFilter::HighPass { f_hz } => format!("high-pass at {}", freq(f_hz)),
        BranchFilter::BandPass { low_hz, high_hz } => format!("band-pass {} – {}", freq(low_hz), freq(high_hz)),
    }
}

fn alignment_text(alignment: CrossoverAlignment) -> &'static str {
    match alignment {
        CrossoverAlignment::Butterworth => "Butterworth",
        CrossoverAlignment::LinkwitzRiley => "Linkwitz-Riley",
        CrossoverAlignment::Bessel => "Bessel (−3 dB at the crossover)",
    }
}

fn quantity_of(kind: &str) -> Quantity {
    match kind {
        "capacitor" => Quantity::Capacitance,
        "inductor" => Quantity::Inductance,
        _ => Quantity::Resistance,
    }
}

fn kind_of(quantity: StressQuantity) -> &'static str {
    match quantity {
        StressQuantity::CapacitorVoltage => "capacitor",
        StressQuantity::InductorCurrent => "inductor",
        StressQuantity::ResistorPower => "resistor",
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn demo_csv() -> String {
        json!({DEMO_CSV_NAME: DEMO_CSV}).to_string()
    }

    fn demo_run(options: &str) -> CrossoverRun {
        run(DEMO_FILE, &demo_csv(), options).unwrap()
    }

    /// Runs `file` (the demo with `from` replaced by `to`) and expects an error starting with `expected`.
    fn check_error(from: &str, to: &str, expected: &str) {
        assert!(DEMO_FILE.contains(from), "{from}");
        let text = DEMO_FILE.replacen(from, to, 1);
        let error = run(&text, &demo_csv(), "{}").unwrap_err().to_string();
        assert!(error.starts_with(expected), "{error:?} does not start with {expected:?}");
    }

    #[test]
    fn the_demo_reads_and_reports_every_figure() {
        let demo: Value = serde_json::from_str(&demo_json()).unwrap();
        let file = demo["file"].to_string();
        let csv = demo["csv"].to_string();
        check_crossover(&file, &csv).unwrap();
        let report = run(&file, &csv, "{}").unwrap().report();
        assert_eq!(report["ways"], 2);
        assert_eq!(report["crossover_hz"], json!([2400.0]));
        // One stress row per crossover part, each with a finite worst figure and rating.
        let rows = report["stress"]["parts"].as_array().unwrap();
        let parts = report["parts"].as_array().unwrap();
        assert!(rows.len() >= 8, "{}", rows.len());
        assert_eq!(rows.len(), parts.len());
        for row in rows {
            assert!(row["worst"].as_f64().unwrap() > 0.0, "{row}");
            assert!(row["minimum_rating"].as_f64().unwrap() > row["worst"].as_f64().unwrap(), "{row}");
            assert!(!row["rating_text"].as_str().unwrap().contains('—'), "{row}");
        }
        let minimum = &report["impedance_minimum"];
        assert!(minimum["built"]["magnitude_ohm"].as_f64().unwrap() > 0.0);
        assert!(minimum["rule_text"].as_str().unwrap().contains("common practice"));
        assert_eq!(minimum["rule_ohm"], json!(6.4));
        let text = report.to_string();
        assert!(!text.contains("NaN") && !text.contains("inf"), "{text}");
        assert_eq!(report["cautions"].as_array().unwrap().len(), bandwright::STRESS_CAUTIONS.len());
        // 100 W into 8 Ω is √800 = 28.28 V rms (P = V²/R).
        assert!((report["stress"]["amplifier_volts_rms"].as_f64().unwrap() - 800f64.sqrt()).abs() < 1e-9);
    }

    // Source: the CLI's `crossover --format json` on the same file computes the same figures
    // (cli/src/crossover.rs); checked here against the core directly, not against the CLI text.
    #[test]
    fn figures_are_the_cores() {
        let run = demo_run("{}");
        let core = &run.standard.response.minimum.unwrap();
        let report = run.report();
        assert_eq!(report["impedance_minimum"]["built"]["f_hz"], json!(core.f_hz));
        assert_eq!(report["impedance_minimum"]["built"]["magnitude_ohm"], json!(core.magnitude_ohm));
        let losses = run.standard.coil_losses.as_ref().unwrap();
        assert!(losses.iter().all(|l| l.loss_db < 0.0), "coils with 300 Ω/H lose level: {losses:?}");
        assert_eq!(report["branches"][0]["coil_loss_built"]["loss_db"], json!(losses[0].loss_db));
    }

    // Source: common practice (the stress method in crate/src/stress.rs): the capacitor voltage,
    // coil current and resistor power scale with V = √(P·R), so 4× the power doubles the
    // voltage and current figures and quadruples the resistor power.
    #[test]
    fn stress_scales_with_power() {
        let low = demo_run(r#"{"power": "25"}"#).report();
        let high = demo_run(r#"{"power": 100}"#).report();
        for (a, b) in low["stress"]["parts"].as_array().unwrap().iter().zip(high["stress"]["parts"].as_array().unwrap())
        {
            let ratio = b["worst"].as_f64().unwrap() / a["worst"].as_f64().unwrap();
            let expected = if a["figure"] == "power" { 4.0 } else { 2.0 };
            assert!((ratio - expected).abs() < 1e-9, "{} {ratio}", a["reference"]);
        }
    }

    // Source: Linkwitz-Riley sums flat: LR4 low-pass + high-pass is all-pass at 0 dB (shared/
    // references.md §3.4, computed). With drivers of real impedance and a level pad the demo's
    // sum stays within a few dB; the branches each sit near −6.02 dB at the crossover.
    #[test]
    fn the_demo_sums_near_flat_and_crosses_near_minus_six_db() {
        let report = demo_run("{}").report();
        let flatness = report["sum_built"]["flatness_db"].as_f64().unwrap();
        assert!(flatness < 6.0, "{flatness}");
        for branch in report["branches"].as_array().unwrap() {
            let at = branch["at_crossover"][0]["db"].as_f64().unwrap();
            assert!((at + 6.02).abs() < 2.5, "{} at the crossover: {at} dB", branch["name"]);
        }
    }

    #[test]
    fn field_errors_name_the_field() {
        check_error(
            "\"re\": \"5R8\"",
            "\"re\": 0",
            "field branches[0].driver.model.re: branches[0].driver.model.re is 0",
        );
        check_error("\"nominal_impedance\": 8", "\"nominal_impedance\": -8", "field nominal_impedance: ");
        let three = DEMO_FILE.replacen("[\"2k4\"]", "[\"3k\", \"500\"]", 1).replacen(
            "\"branches\": [",
            "\"branches\": [{\"name\": \"mid\", \"driver\": {\"resistor\": 8}},",
            1,
        );
        let error = run(&three, &demo_csv(), "{}").unwrap_err().to_string();
        assert!(error.starts_with("field crossover_frequencies[1]: "), "{error}");
        assert!(error.contains("from low to high"), "{error}");
        let missing = run(DEMO_FILE, "{}", "{}").unwrap_err().to_string();
        assert!(missing.starts_with("field branches[1].driver.measured: "), "{missing}");
        assert!(missing.contains("demo-tweeter-impedance.csv"), "{missing}");
        let bad_csv = json!({DEMO_CSV_NAME: "frequency,ohm,deg\n10,6,0\n20,6,0\n15,6,0\n"}).to_string();
        let error = run(DEMO_FILE, &bad_csv, "{}").unwrap_err().to_string();
        assert!(error.starts_with("field branches[1].driver.measured: ") && error.contains("line 4"), "{error}");
    }

    #[test]
    fn option_errors_name_the_option() {
        for (options, expected) in [
            (r#"{"power": "0"}"#, "field power: "),
            (r#"{"power": "lots"}"#, "field power: "),
            (r#"{"from": "2k", "to": "1k"}"#, "field to: "),
            (r#"{"per_decade": 2.5}"#, "field per_decade: "),
            (r#"{"capacitors": "E7"}"#, "field capacitors: "),
            (r#"{"volume": 11}"#, "field volume: "),
        ] {
            let error = run(DEMO_FILE, &demo_csv(), options).unwrap_err().to_string();
            assert!(error.starts_with(expected), "{options}: {error}");
        }
        assert_eq!(read_options("").unwrap(), AnalysisOptions::default());
    }

    #[test]
    fn impedance_csv_reads_or_names_the_line() {
        let text: Value = serde_json::from_str(&read_impedance_csv(DEMO_CSV).unwrap()).unwrap();
        assert_eq!(text["from_hz"], json!(10.0));
        assert!(text["points"].as_u64().unwrap() > 30);
        let error = read_impedance_csv("f,z,p\n100,8,0\n200,x,0\n").unwrap_err().to_string();
        assert!(error.contains("line 3"), "{error}");
        let error = read_impedance_csv("100,8,0\n50,8,0\n").unwrap_err().to_string();
        assert!(error.contains("line 2") && error.contains("not above"), "{error}");
    }

    #[test]
    fn ways_switch_keeps_what_it_can() {
        let three = with_ways(DEMO_FILE, 3).unwrap();
        let file = bandwright::parse_crossover_file(&three).unwrap();
        assert_eq!(file.crossover_frequencies, [300.0, 2400.0]);
        assert_eq!(file.branches.iter().map(|b| b.name.as_str()).collect::<Vec<_>>(), ["woofer", "mid", "tweeter"]);
        run(&three, &demo_csv(), "{}").unwrap();
        let two = with_ways(&three, 2).unwrap();
        let back = bandwright::parse_crossover_file(&two).unwrap();
        assert_eq!(back.crossover_frequencies, [2400.0]);
        assert_eq!(back.branches.len(), 2);
        assert_eq!(back, bandwright::parse_crossover_file(DEMO_FILE).unwrap());
        assert!(with_ways(DEMO_FILE, 4).unwrap_err().to_string().starts_with("field ways: "));
    }

    #[test]
    fn sweep_csv_has_a_row_per_frequency_and_no_nan() {
        let run = demo_run(r#"{"per_decade": 10}"#);
        let csv = run.sweep_csv();
        let lines: Vec<&str> = csv.split("\r\n").filter(|l| !l.is_empty()).collect();
        assert_eq!(lines[1], "frequency_hz,woofer_db,woofer_phase_deg,tweeter_db,tweeter_phase_deg,sum_db,sum_phase_deg,impedance_ohm,impedance_phase_deg");
        assert_eq!(lines.len(), 2 + run.f_hz.len());
        assert!(lines[2..].iter().all(|l| l.split(',').count() == 9 && !l.contains("NaN")));
        // 20 Hz – 20 kHz is 3 decades: 30 steps at 10 per decade, both ends included.
        assert_eq!(run.f_hz.len(), 31);
    }

    #[test]
    fn svg_has_the_four_panels_and_the_minimum_mark() {
        let run = demo_run("{}");
        let svg = run.svg(900, 760, Theme::Light).unwrap();
        for label in [
            "magnitude (dB)",
            "phase (°)",
            "|Z| (Ω)",
            "woofer",
            "tweeter",
            "sum (designed)",
            "80 % of nominal",
            "minimum ",
        ] {
            assert!(svg.contains(label), "missing {label}");
        }
        assert!(run.svg(0, 10, Theme::Dark).unwrap_err().to_string().contains("width of 0 px"));
        let marks = run.marks();
        let (_, f, z) = marks.minimum.unwrap();
        let minimum = run.standard.response.minimum.unwrap();
        assert_eq!(f, [minimum.f_hz, minimum.f_hz]);
        assert!(z[0].unwrap() < minimum.magnitude_ohm && z[1].unwrap() > minimum.magnitude_ohm);
    }

    /// SciPy's branch responses (tests/reference/gen_scipy_crossover.py, SciPy 1.17.1).
    const SCIPY: &str = include_str!("../../../tests/reference/data/scipy_crossover.json");

    // Source: scipy.signal (1.17.1) freqs_zpk of butter / Linkwitz-Riley (butter squared) low- and
    // high-pass prototypes at 2 kHz, committed in tests/reference/data/scipy_crossover.json by
    // tests/reference/gen_scipy_crossover.py. A 2-way of plain 8 Ω resistors with ideal coils, read
    // through the page's path (file JSON → run), must give the same V(driver)/V(amplifier): the
    // ladders are exact, so only float rounding separates them (rtol 1e-6 is loose for that).
    #[test]
    fn the_page_path_matches_scipy_for_resistor_loads() {
        let data: Value = serde_json::from_str(SCIPY).unwrap();
        let mut checked = 0;
        for (alignment, order) in [("butterworth", 2), ("butterworth", 3), ("linkwitz_riley", 2), ("linkwitz_riley", 4)]
        {
            let file = json!({"format": "bandwright-crossover", "version": 1, "nominal_impedance": 8,
                "crossover_frequencies": [2000], "defaults": {"order": order, "alignment": alignment},
                "branches": [{"name": "low", "driver": {"resistor": 8}}, {"name": "high", "driver": {"resistor": 8}}]})
            .to_string();
            let run = run(&file, "{}", r#"{"from": 10, "to": "100k", "per_decade": 10}"#).unwrap();
            for (k, kind) in ["lowpass", "highpass"].iter().enumerate() {
                let reference = data["branches"]
                    .as_array()
                    .unwrap()
                    .iter()
                    .find(|b| b["alignment"] == alignment && b["order"] == order && b["kind"] == *kind)
                    .unwrap();
                let f: Vec<f64> = serde_json::from_value(reference["f_hz"].clone()).unwrap();
                let re: Vec<f64> = serde_json::from_value(reference["h_re"].clone()).unwrap();
                let im: Vec<f64> = serde_json::from_value(reference["h_im"].clone()).unwrap();
                assert_eq!(f.len(), run.f_hz.len());
                for (i, point) in run.ideal.response.points.iter().enumerate() {
                    let point = point.as_ref().unwrap();
                    assert!((point.f_hz / f[i] - 1.0).abs() < 1e-12, "{} vs {}", point.f_hz, f[i]);
                    let expected = Complex64::new(re[i], im[i]);
                    let got = point.electrical[k];
                    assert!(
                        (got - expected).norm() <= 1e-6 * expected.norm(),
                        "{alignment} {order} {kind} at {}: {got} vs {expected}",
                        f[i]
                    );
                    checked += 1;
                }
            }
        }
        assert_eq!(checked, 4 * 2 * 41);
    }

    // Source: shared/references.md §3.4 (computed): LR4 is −6.0206 dB per branch at the crossover
    // and LP + HP is all-pass at 0 dB; Butterworth 2nd order is −3.0103 dB per branch there.
    #[test]
    fn linkwitz_riley_crosses_at_minus_six_and_sums_flat() {
        for (alignment, order, expected_db) in [("linkwitz_riley", 4, -6.0206), ("butterworth", 2, -3.0103)] {
            let file = json!({"format": "bandwright-crossover", "version": 1, "nominal_impedance": 8,
                "crossover_frequencies": ["2k5"], "defaults": {"order": order, "alignment": alignment},
                "branches": [{"name": "low", "driver": {"resistor": 8}}, {"name": "high", "driver": {"resistor": 8}}]})
            .to_string();
            let run = run(&file, "{}", "{}").unwrap();
            let at = run.ideal.at_crossover.points[0].as_ref().unwrap();
            for h in &at.electrical {
                assert!((db(h.norm()) - expected_db).abs() < 5e-4, "{alignment}: {} dB", db(h.norm()));
            }
            if alignment == "linkwitz_riley" {
                for point in run.ideal.response.points.iter().flatten() {
                    assert!(db(point.sum.norm()).abs() < 1e-6, "sum {} dB at {} Hz", db(point.sum.norm()), point.f_hz);
                }
            }
        }
    }
}
