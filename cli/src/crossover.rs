//! `bandwright crossover`: designs a loudspeaker crossover from a crossover file and prints its
//! parts, branch and summed responses, the load the amplifier sees, the coil-resistance loss,
//! the part stress at a stated power with the cautions, as a table, CSV or JSON, and optionally
//! an SVG plot of the branches and their sum.
//!
//! The file is read by the core ([`bandwright::crossover_file`]); this module reads the file and
//! the CSVs it names (relative to the file), calls the core, and formats. Every figure is computed
//! twice: with the designed (ideal) values and with the parts list's standard values swapped in,
//! which is what a build from the list does.

use anyhow::{anyhow, bail, Context, Result};
use bandwright::crossover::{BranchFilter, CrossoverAlignment, Placement, Reactance, MINIMUM_IMPEDANCE_FRACTION};
use bandwright::eseries::{PartValues, Series};
use bandwright::notation::{format_quantity, parse_value, Quantity};
use bandwright::stress::{RatingMargins, StressQuantity};
use bandwright::{
    crossover_stress, parts_list, stress_frequencies, Crossover, CrossoverFile, CrossoverResponse, ElementKind,
    PartsListEntry, PartsOptions, StressOptions, StressReport,
};
use clap::{Args, ValueEnum};
use serde_json::{json, Value};
use std::collections::BTreeMap;
use std::fmt::Write as _;
use std::path::{Path, PathBuf};

/// Output formats of `crossover`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum CrossoverFormat {
    /// Readable tables: parts, responses, amplifier load, stress and cautions.
    Table,
    /// Per frequency: each branch's dB and phase, the sum, |Z| and its phase.
    Csv,
    /// One JSON object with all of it.
    Json,
}

/// Flags of `crossover`. Values are engineering notation; validation happens in
/// [`CrossoverOptions::from_args`].
#[derive(Debug, Args)]
pub struct CrossoverArgs {
    /// The crossover file (JSON, format "bandwright-crossover"); CSV paths in it are relative to it.
    pub file: PathBuf,
    /// Amplifier power into the nominal impedance for the stress figures, in W.
    #[arg(long, value_name = "W", default_value = "100", allow_hyphen_values = true)]
    pub power: String,
    /// Start of the band (response and stress sweep).
    #[arg(long, value_name = "F", default_value = "20", allow_hyphen_values = true)]
    pub from: String,
    /// End of the band.
    #[arg(long, value_name = "F", default_value = "20k", allow_hyphen_values = true)]
    pub to: String,
    /// Log-spaced points per decade (both band edges included).
    #[arg(long, value_name = "N", default_value = "48")]
    pub per_decade: String,
    /// Capacitor values of the parts list: an E-series name (E3..E192).
    #[arg(long, value_name = "SERIES", default_value = "E12")]
    pub capacitors: String,
    /// Inductor values of the parts list.
    #[arg(long, value_name = "SERIES", default_value = "E12")]
    pub inductors: String,
    /// Resistor values of the parts list.
    #[arg(long, value_name = "SERIES", default_value = "E24")]
    pub resistors: String,
    /// Output format.
    #[arg(long, value_enum, default_value = "table")]
    pub format: CrossoverFormat,
    /// Also plot the branches and their sum (magnitude) and the amplifier load to this SVG file.
    #[arg(long, value_name = "FILE")]
    pub svg: Option<PathBuf>,
}

/// Validated options of `crossover`.
#[derive(Debug, Clone)]
pub struct CrossoverOptions {
    /// The crossover file.
    pub file: PathBuf,
    /// The stress sweep (its band and density are also the response's).
    pub stress: StressOptions,
    /// The parts list's value sets.
    pub parts: PartsOptions,
    /// Output format.
    pub format: CrossoverFormat,
    /// SVG output path.
    pub svg: Option<PathBuf>,
}

/// One analysis of a crossover: with its designed values or with standard ones.
pub struct Analysis {
    /// The crossover analysed.
    pub crossover: Crossover,
    /// The response over the band.
    pub response: CrossoverResponse,
    /// The response at each crossover frequency.
    pub at_crossover: CrossoverResponse,
    /// Per branch, the coil DCR loss (f, dB), or why it could not be found.
    pub coil_losses: Result<Vec<bandwright::CoilLoss>, String>,
    /// The stress report.
    pub stress: StressReport,
}

/// Everything `crossover` prints.
pub struct Run {
    /// The file as read.
    pub file: CrossoverFile,
    /// With the designed values.
    pub ideal: Analysis,
    /// With the parts list's standard values.
    pub standard: Analysis,
    /// The parts list (ratings from the standard-value stress sweep).
    pub parts: Vec<PartsListEntry>,
    /// The sweep frequencies.
    pub f_hz: Vec<f64>,
}

impl CrossoverOptions {
    /// Validates the raw flags.
    pub fn from_args(raw: CrossoverArgs) -> Result<Self> {
        let number = |flag: &str, text: &str, quantity| {
            let value = parse_value(text, quantity).with_context(|| flag.to_string())?;
            if !(value.is_finite() && value > 0.0) {
                bail!("{flag} {text}: give a value above 0");
            }
            Ok::<f64, anyhow::Error>(value)
        };
        let power_w = number("--power", &raw.power, Quantity::Power)?;
        let low_hz = number("--from", &raw.from, Quantity::Frequency)?;
        let high_hz = number("--to", &raw.to, Quantity::Frequency)?;
        if high_hz <= low_hz {
            bail!("--to {}: give an end of the band above --from {}", raw.to, raw.from);
        }
        let per_decade = number("--per-decade", &raw.per_decade, Quantity::Ratio)?;
        if per_decade.fract() != 0.0 || per_decade > 1000.0 {
            bail!("--per-decade {}: give a whole number of points per decade from 1 to 1000", raw.per_decade);
        }
        let series = |flag: &str, name: &str| {
            Series::from_name(name.trim())
                .map(PartValues::Series)
                .ok_or_else(|| anyhow!("{flag} {name}: not an E-series name; give E3, E6, E12, E24, E48, E96 or E192"))
        };
        let parts = PartsOptions {
            capacitors: series("--capacitors", &raw.capacitors)?,
            inductors: series("--inductors", &raw.inductors)?,
            resistors: series("--resistors", &raw.resistors)?,
        };
        Ok(Self {
            file: raw.file,
            stress: StressOptions {
                power_w,
                nominal_ohm: 1.0, // replaced by the file's nominal impedance in `run`
                low_hz,
                high_hz,
                points_per_decade: per_decade as usize,
                margins: RatingMargins::default(),
            },
            parts,
            format: raw.format,
            svg: raw.svg,
        })
    }
}

/// Reads the file and its CSVs, designs the crossover and analyses it.
pub fn run(options: &mut CrossoverOptions) -> Result<Run> {
    let path = &options.file;
    let text =
        std::fs::read_to_string(path).with_context(|| format!("cannot read crossover file {}", path.display()))?;
    let file = bandwright::parse_crossover_file(&text).with_context(|| format!("{}", path.display()))?;
    let base = path.parent().unwrap_or(Path::new("."));
    let mut csv = BTreeMap::new();
    for (field, name) in file.csv_paths() {
        let resolved = base.join(&name);
        let contents = std::fs::read_to_string(&resolved)
            .with_context(|| format!("{}: cannot read {} (named by {field})", path.display(), resolved.display()))?;
        csv.insert(name, contents);
    }
    let crossover = file.design(&csv).with_context(|| format!("{}", path.display()))?;
    options.stress.nominal_ohm = crossover.spec.nominal_ohm;
    let f_hz = stress_frequencies(&options.stress);
    let ideal = analyse(crossover, &f_hz, &options.stress)?;
    let ideal_parts = parts_list(&ideal.crossover, &ideal.stress, &options.parts);
    let standard = analyse(with_standard_values(&ideal.crossover, &ideal_parts)?, &f_hz, &options.stress)?;
    let parts = parts_list(&standard.crossover, &standard.stress, &options.parts)
        .into_iter()
        .zip(&ideal_parts)
        .map(|(built, designed)| PartsListEntry { ideal: designed.ideal, standard: built.standard, ..built })
        .collect();
    Ok(Run { file, ideal, standard, parts, f_hz })
}

fn analyse(crossover: Crossover, f_hz: &[f64], stress: &StressOptions) -> Result<Analysis> {
    let response = crossover.response(f_hz);
    let at_crossover = crossover.response(&crossover.spec.crossover_hz);
    let coil_losses = crossover.coil_losses().map_err(|e| e.to_string());
    let stress = crossover_stress(&crossover, stress)?;
    Ok(Analysis { crossover, response, at_crossover, coil_losses, stress })
}

/// The crossover with each part's standard value in place of its designed one (a coil keeps its
/// winding resistance per henry).
fn with_standard_values(crossover: &Crossover, parts: &[PartsListEntry]) -> Result<Crossover> {
    let mut circuit = crossover.circuit.clone();
    let per_henry = crossover.spec.coil_dcr_ohm_per_henry;
    for entry in parts {
        let Some(value) = entry.standard else { continue };
        let index = circuit.element_index(&entry.reference).expect("the parts list names the circuit's parts");
        let kind = match circuit.elements()[index].kind {
            ElementKind::Capacitor { esr, .. } => ElementKind::Capacitor { capacitance: value, esr },
            ElementKind::Inductor { .. } => ElementKind::Inductor { inductance: value, dcr: per_henry * value },
            ElementKind::Resistor { .. } => ElementKind::Resistor { resistance: value },
            _ => continue,
        };
        circuit = circuit.with_kind(index, kind)?;
    }
    Ok(Crossover { circuit, ..crossover.clone() })
}

/// The sum's level extremes over the solved points: (max dB, its Hz, min dB, its Hz).
fn sum_extremes(response: &CrossoverResponse) -> Option<(f64, f64, f64, f64)> {
    let mut extremes: Option<(f64, f64, f64, f64)> = None;
    for point in response.points.iter().flatten() {
        let db = db(point.sum.norm());
        let (max, max_hz, min, min_hz) = extremes.get_or_insert((db, point.f_hz, db, point.f_hz));
        if db > *max {
            (*max, *max_hz) = (db, point.f_hz);
        }
        if db < *min {
            (*min, *min_hz) = (db, point.f_hz);
        }
    }
    extremes
}

/// A dB figure with its sign and 3 decimals; a value that rounds to zero prints as +0.000.
fn signed(x: f64) -> String {
    let x = if x.abs() < 5e-4 { 0.0 } else { x };
    format!("{x:+.3}")
}

fn db(magnitude: f64) -> f64 {
    20.0 * magnitude.log10()
}

/// Phase in degrees along the sweep, unwrapped so that no step exceeds 180° (the first solved
/// point is in (−180°, 180°]); `None` where a point was not solved or the value is zero.
fn unwrapped_phase(values: &[Option<num_complex::Complex64>]) -> Vec<Option<f64>> {
    let mut previous: Option<f64> = None;
    values
        .iter()
        .map(|value| {
            let z = value.filter(|z| z.norm() > 0.0)?;
            let mut phase = z.arg().to_degrees();
            if let Some(before) = previous {
                phase -= 360.0 * ((phase - before) / 360.0).round();
            }
            previous = Some(phase);
            Some(phase)
        })
        .collect()
}

/// One value per sweep frequency, `None` where it is undefined.
type Curve = Vec<Option<f64>>;

/// Per-frequency series of a response: branch acoustic values, the sum and the impedance.
struct Columns {
    branches: Vec<Vec<Option<num_complex::Complex64>>>,
    electrical: Vec<Vec<Option<num_complex::Complex64>>>,
    sum: Vec<Option<num_complex::Complex64>>,
    impedance: Vec<Option<num_complex::Complex64>>,
}

fn columns(response: &CrossoverResponse, n_branch: usize) -> Columns {
    let pick = |f: &dyn Fn(&bandwright::CrossoverPoint) -> num_complex::Complex64| {
        response.points.iter().map(|p| p.as_ref().ok().map(f)).collect::<Vec<_>>()
    };
    Columns {
        branches: (0..n_branch).map(|k| pick(&|p| p.acoustic[k])).collect(),
        electrical: (0..n_branch).map(|k| pick(&|p| p.electrical[k])).collect(),
        sum: pick(&|p| p.sum),
        impedance: pick(&|p| p.impedance),
    }
}

fn db_series(values: &[Option<num_complex::Complex64>]) -> Vec<Option<f64>> {
    values.iter().map(|v| v.filter(|z| z.norm() > 0.0).map(|z| db(z.norm()))).collect()
}

fn filter_text(filter: &BranchFilter) -> String {
    let f = |x: f64| format_quantity(x, Quantity::Frequency, 4);
    match *filter {
        BranchFilter::LowPass { f_hz } => format!("low-pass at {}", f(f_hz)),
        BranchFilter::HighPass { f_hz } => format!("high-pass at {}", f(f_hz)),
        BranchFilter::BandPass { low_hz, high_hz } => format!("band-pass {} – {}", f(low_hz), f(high_hz)),
    }
}

fn alignment_text(alignment: CrossoverAlignment) -> &'static str {
    match alignment {
        CrossoverAlignment::Butterworth => "Butterworth",
        CrossoverAlignment::LinkwitzRiley => "Linkwitz-Riley",
        CrossoverAlignment::Bessel => "Bessel (-3 dB at the crossover)",
    }
}

fn ordinal(n: usize) -> &'static str {
    ["0th", "1st", "2nd", "3rd", "4th"].get(n).copied().unwrap_or("nth")
}

fn quantity_of(kind: &str) -> Quantity {
    match kind {
        "capacitor" => Quantity::Capacitance,
        "inductor" => Quantity::Inductance,
        _ => Quantity::Resistance,
    }
}

/// Renders the run in the chosen format.
pub fn render(run: &Run, options: &CrossoverOptions) -> String {
    match options.format {
        CrossoverFormat::Table => render_table(run, options),
        CrossoverFormat::Csv => render_csv(run),
        CrossoverFormat::Json => {
            let mut out = serde_json::to_string_pretty(&to_json(run, options)).expect("JSON of plain values");
            out.push('\n');
            out
        }
    }
}

fn render_csv(run: &Run) -> String {
    let crossover = &run.standard.crossover;
    let columns = columns(&run.standard.response, crossover.branches.len());
    let mut out = String::from("# as built with the parts list's standard values; acoustic dB relative to the reference sensitivity; phase unwrapped along the sweep\nfrequency_hz");
    for branch in &crossover.branches {
        let _ = write!(out, ",{0}_db,{0}_phase_deg", branch.name);
    }
    out.push_str(",sum_db,sum_phase_deg,impedance_ohm,impedance_phase_deg\n");
    let mut series: Vec<(Curve, Curve)> =
        columns.branches.iter().map(|values| (db_series(values), unwrapped_phase(values))).collect();
    series.push((db_series(&columns.sum), unwrapped_phase(&columns.sum)));
    let z_abs: Vec<Option<f64>> = columns.impedance.iter().map(|z| z.map(|z| z.norm())).collect();
    let z_phase: Vec<Option<f64>> = columns.impedance.iter().map(|z| z.map(|z| z.arg().to_degrees())).collect();
    series.push((z_abs, z_phase));
    let cell = |x: Option<f64>| x.filter(|v| v.is_finite()).map(|v| format!("{v:.6e}")).unwrap_or_default();
    for (i, f) in run.f_hz.iter().enumerate() {
        let _ = write!(out, "{f:.6e}");
        for (magnitude, phase) in &series {
            let _ = write!(out, ",{},{}", cell(magnitude[i]), cell(phase[i]));
        }
        out.push('\n');
    }
    out
}

fn render_table(run: &Run, options: &CrossoverOptions) -> String {
    let mut out = String::new();
    let crossover = &run.ideal.crossover;
    let spec = &crossover.spec;
    let freq = |x: f64| format_quantity(x, Quantity::Frequency, 4);
    let ohm = |x: f64| format_quantity(x, Quantity::Resistance, 4);
    let title = if run.file.name.is_empty() { options.file.display().to_string() } else { run.file.name.clone() };
    let _ = writeln!(out, "crossover: {title}");
    let _ = writeln!(
        out,
        "nominal {}; crossover at {}; coil winding resistance {} Ω/H; acoustic levels relative to {:.1} dB",
        ohm(spec.nominal_ohm),
        spec.crossover_hz.iter().map(|&f| freq(f)).collect::<Vec<_>>().join(" and "),
        spec.coil_dcr_ohm_per_henry,
        crossover.reference_sensitivity_db()
    );
    let _ = writeln!(
        out,
        "band {} – {}, {} points per decade; figures \"designed\" use the ideal values, \"as built\" the standard values below",
        freq(options.stress.low_hz),
        freq(options.stress.high_hz),
        options.stress.points_per_decade
    );
    let _ = writeln!(
        out,
        "minimum ratings come from the as-built stress sweep at {} (see the stress table and the cautions)",
        format_quantity(options.stress.power_w, Quantity::Power, 4)
    );

    for branch in &crossover.branches {
        let network = &branch.network;
        let _ = writeln!(
            out,
            "\nbranch {}: {}, {}-order {}, designed into {}",
            branch.name,
            filter_text(&network.filter),
            ordinal(network.order),
            alignment_text(network.alignment),
            ohm(network.load_ohm)
        );
        if network.gain_offset_db.abs() > 1e-9 {
            let _ = writeln!(
                out,
                "  band-pass ladder gain over the product of its high-pass and low-pass: {:+.2} dB",
                network.gain_offset_db
            );
        }
        let _ = writeln!(
            out,
            "  {:<14} {:<10} {:>11} {:>16} {:>10} {:>16}",
            "part", "kind", "ideal", "standard", "DCR", "minimum rating"
        );
        let prefix = format!("{}.", branch.name);
        for entry in run.parts.iter().filter(|p| p.reference.starts_with(&prefix)) {
            let quantity = quantity_of(entry.kind);
            let standard = entry
                .standard
                .map(|v| format!("{} {}", format_quantity(v, quantity, 3), entry.series))
                .unwrap_or_else(|| "—".into());
            let dcr = entry.dcr.filter(|d| *d > 0.0).map(ohm).unwrap_or_else(|| "—".into());
            let rating = entry.minimum_rating.map(|(v, q)| q.rating_text(v)).unwrap_or_else(|| "—".into());
            let _ = writeln!(
                out,
                "  {:<14} {:<10} {:>11} {:>16} {:>10} {:>16}",
                entry.reference,
                entry.kind,
                format_quantity(entry.ideal, quantity, 4),
                standard,
                dcr,
                rating
            );
        }
        if let Some(pad) = branch.l_pad {
            let _ = writeln!(
                out,
                "  level: L-pad {:.2} dB (series {}, shunt {})",
                -db(branch.level),
                ohm(pad.series_ohm),
                ohm(pad.shunt_ohm)
            );
        }
        if let Some(rs) = branch.series_resistor {
            let _ = writeln!(out, "  level: series resistor {} for {:.2} dB", ohm(rs), -db(branch.level));
        }
    }

    let _ = writeln!(out, "\nresponse (acoustic, relative to the reference sensitivity)");
    let _ = writeln!(
        out,
        "  {:<10} {:>30} {:>30} {:>28}",
        "branch", "worst deviation, designed", "worst deviation, as built", "coil DCR passband loss"
    );
    let deviation = |analysis: &Analysis, k: usize| {
        let b = &analysis.response.branches[k];
        match (b.max_deviation_db, b.max_deviation_hz) {
            (Some(d), Some(f)) => format!("{d:.3} dB at {}", freq(f)),
            _ => "—".into(),
        }
    };
    for (k, branch) in crossover.branches.iter().enumerate() {
        let loss = match &run.standard.coil_losses {
            Ok(losses) => format!("{} dB at {}", signed(losses[k].loss_db), freq(losses[k].f_hz)),
            Err(e) => format!("not found: {e}"),
        };
        let _ = writeln!(
            out,
            "  {:<10} {:>30} {:>30} {:>28}",
            branch.name,
            deviation(&run.ideal, k),
            deviation(&run.standard, k),
            loss
        );
    }
    let _ = writeln!(out, "  (deviation from each branch's target where the target is within 10 dB of its passband)");
    for (label, analysis) in [("designed", &run.ideal), ("as built", &run.standard)] {
        match sum_extremes(&analysis.response) {
            Some((max, max_hz, min, min_hz)) => {
                let _ = writeln!(
                    out,
                    "  sum, {label}: {} dB at {} to {} dB at {}, flatness {:.3} dB over the band",
                    signed(max),
                    freq(max_hz),
                    signed(min),
                    freq(min_hz),
                    max - min
                );
            }
            None => {
                let _ = writeln!(out, "  sum, {label}: no point of the band could be solved");
            }
        }
    }
    for point in run.standard.at_crossover.points.iter().flatten() {
        let levels: Vec<String> = crossover
            .branches
            .iter()
            .zip(&point.acoustic)
            .map(|(b, h)| format!("{} {:+.2} dB", b.name, db(h.norm())))
            .collect();
        let _ = writeln!(
            out,
            "  at {}, as built: {}, sum {:+.2} dB",
            freq(point.f_hz),
            levels.join(", "),
            db(point.sum.norm())
        );
    }
    let unsolved: Vec<_> = run.standard.response.points.iter().filter_map(|p| p.as_ref().err()).collect();
    if let Some(first) = unsolved.first() {
        let _ = writeln!(
            out,
            "  note: {} frequencies of the band could not be solved and are left out above (first: {first})",
            unsolved.len()
        );
    }

    let _ = writeln!(out, "\namplifier load");
    for (label, analysis) in [("designed", &run.ideal), ("as built", &run.standard)] {
        match analysis.response.minimum {
            Some(m) => {
                let _ = writeln!(
                    out,
                    "  minimum |Z|, {label}: {} at {} = {:.0} % of nominal {}: {}",
                    ohm(m.magnitude_ohm),
                    freq(m.f_hz),
                    100.0 * m.fraction_of_nominal,
                    ohm(spec.nominal_ohm),
                    if m.below_rule_of_thumb { "BELOW the rule of thumb" } else { "meets the rule of thumb" }
                );
            }
            None => {
                let _ = writeln!(out, "  minimum |Z|, {label}: no point could be solved");
            }
        }
    }
    let _ = writeln!(
        out,
        "  rule of thumb (common practice, not a standard): the load should not fall below {:.0} % of nominal",
        100.0 * MINIMUM_IMPEDANCE_FRACTION
    );

    let stress = &run.standard.stress;
    let _ = writeln!(
        out,
        "\nstress at {} into {} ({} rms from the amplifier), as built: worst over the band, continuous sine",
        format_quantity(stress.power_w, Quantity::Power, 4),
        ohm(spec.nominal_ohm),
        format_quantity(stress.amplifier_volts_rms, Quantity::Voltage, 4)
    );
    let _ =
        writeln!(out, "  {:<14} {:<8} {:>14} {:>11} {:>16}  margin", "part", "figure", "worst", "at", "minimum rating");
    for part in &stress.parts {
        let _ = writeln!(
            out,
            "  {:<14} {:<8} {:>14} {:>11} {:>16}  {}",
            part.reference,
            part.quantity.name(),
            part.quantity.worst_text(part.worst),
            freq(part.at_hz),
            part.quantity.rating_text(part.minimum_rating),
            part.quantity.margin_text(&options.stress.margins)
        );
    }
    for driver in &stress.drivers {
        let _ = writeln!(
            out,
            "  driver {}: up to {} at {} (its voice coil heats with it; see the maker's power data)",
            driver.branch,
            format_quantity(driver.worst_w, Quantity::Power, 4),
            freq(driver.at_hz)
        );
    }
    let _ = writeln!(out, "  margins are common practice, not a standard");
    if let Some(first) = stress.unsolved.first() {
        let _ = writeln!(
            out,
            "  note: {} frequencies could not be solved in the stress sweep (first: {first})",
            stress.unsolved.len()
        );
    }
    let _ = writeln!(out, "\ncautions");
    for caution in stress.cautions {
        let _ = writeln!(out, "  {}: {}", caution.title, caution.text);
    }
    out
}

fn to_json(run: &Run, options: &CrossoverOptions) -> Value {
    let finite = |x: Option<f64>| match x {
        Some(v) if v.is_finite() => json!(v),
        _ => Value::Null,
    };
    let analysis_json = |analysis: &Analysis| {
        let crossover = &analysis.crossover;
        let columns = columns(&analysis.response, crossover.branches.len());
        let branches: Vec<Value> = crossover
            .branches
            .iter()
            .enumerate()
            .map(|(k, branch)| {
                let b = &analysis.response.branches[k];
                let loss = analysis.coil_losses.as_ref().ok().map(|l| &l[k]);
                json!({
                    "name": branch.name,
                    "acoustic_db": db_series(&columns.branches[k]).into_iter().map(finite).collect::<Vec<_>>(),
                    "acoustic_phase_deg": unwrapped_phase(&columns.branches[k]).into_iter().map(finite).collect::<Vec<_>>(),
                    "electrical_db": db_series(&columns.electrical[k]).into_iter().map(finite).collect::<Vec<_>>(),
                    "electrical_phase_deg": unwrapped_phase(&columns.electrical[k]).into_iter().map(finite).collect::<Vec<_>>(),
                    "max_deviation_db": finite(b.max_deviation_db),
                    "max_deviation_hz": finite(b.max_deviation_hz),
                    "coil_loss": loss.map(|l| json!({"f_hz": l.f_hz, "loss_db": finite(Some(l.loss_db))})),
                    "at_crossover_db": analysis.at_crossover.points.iter().map(|p| match p {
                        Ok(p) => json!({"f_hz": p.f_hz, "db": finite(Some(db(p.acoustic[k].norm())))}),
                        Err(e) => json!({"error": e.to_string()}),
                    }).collect::<Vec<_>>(),
                })
            })
            .collect();
        let sum = sum_extremes(&analysis.response).map(|(max, max_hz, min, min_hz)| {
            json!({"max_db": max, "max_hz": max_hz, "min_db": min, "min_hz": min_hz, "flatness_db": max - min})
        });
        let stress = &analysis.stress;
        json!({
            "branches": branches,
            "sum_db": db_series(&columns.sum).into_iter().map(finite).collect::<Vec<_>>(),
            "sum_phase_deg": unwrapped_phase(&columns.sum).into_iter().map(finite).collect::<Vec<_>>(),
            "sum": sum,
            "sum_at_crossover_db": analysis.at_crossover.points.iter().map(|p| p.as_ref().ok().map(|p| db(p.sum.norm()))).map(finite).collect::<Vec<_>>(),
            "impedance_ohm": columns.impedance.iter().map(|z| finite(z.map(|z| z.norm()))).collect::<Vec<_>>(),
            "impedance_phase_deg": columns.impedance.iter().map(|z| finite(z.map(|z| z.arg().to_degrees()))).collect::<Vec<_>>(),
            "impedance_minimum": analysis.response.minimum.map(|m| json!({
                "f_hz": m.f_hz,
                "magnitude_ohm": m.magnitude_ohm,
                "fraction_of_nominal": m.fraction_of_nominal,
                "rule_of_thumb_fraction": MINIMUM_IMPEDANCE_FRACTION,
                "below_rule_of_thumb": m.below_rule_of_thumb,
                "rule_source": "common practice, not a standard",
            })),
            "unsolved": analysis.response.points.iter().filter_map(|p| p.as_ref().err()).map(|e| e.to_string()).collect::<Vec<_>>(),
            "stress": {
                "power_w": stress.power_w,
                "amplifier_volts_rms": stress.amplifier_volts_rms,
                "parts": stress.parts.iter().map(|p| json!({
                    "reference": p.reference,
                    "figure": p.quantity.name(),
                    "worst": p.worst,
                    "worst_unit": match p.quantity { StressQuantity::CapacitorVoltage => "V rms", StressQuantity::InductorCurrent => "A rms", StressQuantity::ResistorPower => "W" },
                    "at_hz": p.at_hz,
                    "minimum_rating": p.minimum_rating,
                    "rating_unit": match p.quantity { StressQuantity::CapacitorVoltage => "V peak", StressQuantity::InductorCurrent => "A rms", StressQuantity::ResistorPower => "W" },
                })).collect::<Vec<_>>(),
                "drivers": stress.drivers.iter().map(|d| json!({"branch": d.branch, "worst_w": d.worst_w, "at_hz": d.at_hz})).collect::<Vec<_>>(),
                "unsolved": stress.unsolved.iter().map(|e| e.to_string()).collect::<Vec<_>>(),
            },
        })
    };
    let crossover = &run.ideal.crossover;
    let design: Vec<Value> = crossover
        .branches
        .iter()
        .map(|branch| {
            let network = &branch.network;
            let filter = match network.filter {
                BranchFilter::LowPass { f_hz } => json!({"type": "lowpass", "f_hz": f_hz}),
                BranchFilter::HighPass { f_hz } => json!({"type": "highpass", "f_hz": f_hz}),
                BranchFilter::BandPass { low_hz, high_hz } => {
                    json!({"type": "bandpass", "low_hz": low_hz, "high_hz": high_hz})
                }
            };
            json!({
                "name": branch.name,
                "filter": filter,
                "order": network.order,
                "alignment": alignment_text(network.alignment),
                "load_ohm": network.load_ohm,
                "gain_offset_db": network.gain_offset_db,
                "elements": network.elements.iter().map(|e| json!({
                    "placement": match e.placement { Placement::Series => "series", Placement::Shunt => "shunt" },
                    "kind": match e.kind { Reactance::Inductor => "inductor", Reactance::Capacitor => "capacitor" },
                    "value": e.value,
                })).collect::<Vec<_>>(),
                "zobel": branch.zobel.map(|z| json!({"rz_ohm": z.rz, "cz_f": z.cz, "lossy": z.lossy.map(|(c, r)| json!({"cz2_f": c, "rz2_ohm": r}))})),
                "notch": branch.notch.map(|n| json!({"r_ohm": n.r, "l_h": n.l, "c_f": n.c})),
                "l_pad": branch.l_pad.map(|p| json!({"series_ohm": p.series_ohm, "shunt_ohm": p.shunt_ohm})),
                "series_resistor_ohm": branch.series_resistor,
                "level_db": db(branch.level),
            })
        })
        .collect();
    let margins = options.stress.margins;
    json!({
        "file": options.file.display().to_string(),
        "request": serde_json::from_str::<Value>(&run.file.to_json()).expect("the file's JSON"),
        "nominal_ohm": crossover.spec.nominal_ohm,
        "crossover_hz": crossover.spec.crossover_hz,
        "reference_sensitivity_db": crossover.reference_sensitivity_db(),
        "band": {"from_hz": options.stress.low_hz, "to_hz": options.stress.high_hz, "points_per_decade": options.stress.points_per_decade},
        "margins": {
            "capacitor_voltage_over_peak": margins.capacitor_voltage,
            "inductor_current_over_rms": margins.inductor_current,
            "resistor_power_over_dissipation": margins.resistor_power,
            "source": "common practice, not a standard",
        },
        "design": design,
        "parts": run.parts.iter().map(|p| json!({
            "reference": p.reference,
            "kind": p.kind,
            "ideal": p.ideal,
            "standard": p.standard,
            "series": p.series,
            "dcr_ohm": p.dcr,
            "minimum_rating": p.minimum_rating.map(|(v, q)| json!({"value": v, "unit": q.unit(), "rates": q.name()})),
        })).collect::<Vec<_>>(),
        "frequency_hz": run.f_hz,
        "designed": analysis_json(&run.ideal),
        "as_built": analysis_json(&run.standard),
        "cautions": run.standard.stress.cautions.iter().map(|c| json!({"title": c.title, "text": c.text})).collect::<Vec<_>>(),
    })
}

/// Draws the branches and their sum (magnitude, as built, with the designed sum dashed) and the
/// amplifier load |Z| into `path` through the plot layer's Bode panels.
pub fn write_svg(path: &Path, run: &Run, title: &str) -> Result<()> {
    use bandwright_plot::{draw_panels, ChartOptions, Panel, Quantity as PlotQuantity, Series, SeriesStyle, Theme};
    use plotters::prelude::*;
    let crossover = &run.standard.crossover;
    let built = columns(&run.standard.response, crossover.branches.len());
    let designed = columns(&run.ideal.response, crossover.branches.len());
    let branch_db: Vec<Vec<Option<f64>>> = built.branches.iter().map(|v| db_series(v)).collect();
    let sum_db = db_series(&built.sum);
    let designed_sum_db = db_series(&designed.sum);
    let z: Vec<Option<f64>> = built.impedance.iter().map(|z| z.map(|z| z.norm())).collect();
    let f = &run.f_hz;
    let mut magnitude: Vec<Series> = crossover
        .branches
        .iter()
        .zip(&branch_db)
        .map(|(b, values)| Series { label: &b.name, f_hz: f, values, style: SeriesStyle::Overlay })
        .collect();
    magnitude.push(Series { label: "sum (designed)", f_hz: f, values: &designed_sum_db, style: SeriesStyle::Ideal });
    magnitude.push(Series { label: "sum", f_hz: f, values: &sum_db, style: SeriesStyle::Primary });
    let panels = [
        Panel {
            quantity: PlotQuantity::MagnitudeDb,
            series: magnitude,
            y_range: Some((-40.0, 10.0)),
            bands: Vec::new(),
            regions: Vec::new(),
        },
        Panel {
            quantity: PlotQuantity::ImpedanceOhm,
            series: vec![Series { label: "", f_hz: f, values: &z, style: SeriesStyle::Primary }],
            y_range: None,
            bands: Vec::new(),
            regions: Vec::new(),
        },
    ];
    let options = ChartOptions { title: Some(title.to_string()), theme: Theme::Light, ..ChartOptions::default() };
    let backend = SVGBackend::new(path, (900, 640));
    let area = backend.into_drawing_area();
    draw_panels(&area, &panels, &options).map_err(|e| anyhow!("{e}"))?;
    area.present().map_err(|e| anyhow!("{e}"))?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn phase_unwraps_across_the_branch_cut() {
        let values: Vec<Option<num_complex::Complex64>> = [170.0f64, -170.0, -10.0]
            .iter()
            .map(|deg| Some(num_complex::Complex64::from_polar(1.0, deg.to_radians())))
            .chain([None])
            .collect();
        let phase = unwrapped_phase(&values);
        assert!((phase[0].unwrap() - 170.0).abs() < 1e-9);
        assert!((phase[1].unwrap() - 190.0).abs() < 1e-9, "{phase:?}");
        assert!((phase[2].unwrap() - 350.0).abs() < 1e-9, "{phase:?}");
        assert!(phase[3].is_none());
    }
}
