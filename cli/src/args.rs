//! Raw command-line flags as clap reads them: text only, validated later by `options`.

use clap::{Args, Parser, Subcommand, ValueEnum};
use std::path::PathBuf;

/// Bandwright: exact AC analysis of passive filter designs and standard-part fitting.
#[derive(Debug, Parser)]
#[command(name = "bandwright", version, about, long_about = None)]
pub struct Cli {
    /// What to do.
    #[command(subcommand)]
    pub command: Command,
}

/// The commands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Sweep a design over frequency and print magnitude, phase, group delay and input impedance.
    Sweep(SweepArgs),
    /// Print a design's parts and its measurements (passband gain, -3 dB points, peak, |Z_in|).
    Info(InfoArgs),
    /// Fit a requirement to standard parts and print the best alternatives.
    Fit(Box<FitArgs>),
    /// Tolerance run: Monte Carlo trials with a fixed seed plus worst-case corners; envelopes,
    /// -3 dB and Q spread, and the yield against a mask.
    Spread(Box<SpreadArgs>),
    /// Step or impulse response: overshoot, 10-90 % rise and settling (also to ½ LSB of N bits).
    Step(StepArgs),
    /// Anti-aliasing front end for an ADC: order, cutoff and parts from the converter's figures,
    /// with alias attenuation, sampling settling, charge reservoir, noise and group delay.
    Frontend(Box<FrontendArgs>),
    /// A spec mask: the minimum order of each alignment that meets it, or whether a design does.
    Mask(Box<MaskArgs>),
    /// Design a 2-way or 3-way loudspeaker crossover from a crossover file: parts, responses,
    /// amplifier load, part stress at a stated power, and the cautions.
    Crossover(Box<crate::crossover::CrossoverArgs>),
    /// Print the safety cautions that apply to building filters and crossovers.
    Cautions,
}

/// Output formats of `mask`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum MaskFormat {
    /// Readable text.
    Table,
    /// One JSON object.
    Json,
}

/// Flags of `mask`. Levels in dB, frequencies and times in engineering notation.
#[derive(Debug, Args)]
pub struct MaskArgs {
    /// lowpass, highpass or bandpass.
    #[arg(long, default_value = "lowpass")]
    pub response: String,
    /// Passband edge (band-pass: the lower passband edge).
    #[arg(long, value_name = "F", allow_hyphen_values = true)]
    pub pass: Option<String>,
    /// Stopband edge (band-pass: the upper end of the lower stopband).
    #[arg(long, value_name = "F", allow_hyphen_values = true)]
    pub stop: Option<String>,
    /// Band-pass: the upper passband edge.
    #[arg(long, value_name = "F", allow_hyphen_values = true)]
    pub pass_high: Option<String>,
    /// Band-pass: the lower end of the upper stopband.
    #[arg(long, value_name = "F", allow_hyphen_values = true)]
    pub stop_high: Option<String>,
    /// Largest passband loss (ripple or droop) in dB.
    #[arg(long, value_name = "DB", default_value = "1", allow_hyphen_values = true)]
    pub loss: String,
    /// Smallest stopband attenuation in dB.
    #[arg(long, value_name = "DB", default_value = "40", allow_hyphen_values = true)]
    pub atten: String,
    /// Largest group-delay variation over the passband, e.g. 20u.
    #[arg(long, value_name = "T", allow_hyphen_values = true)]
    pub delay_var: Option<String>,
    /// Read the mask from a JSON file instead of the flags.
    #[arg(long, value_name = "FILE", conflicts_with_all = ["pass", "stop"])]
    pub file: Option<PathBuf>,
    /// Write the mask as a JSON file (for `spread --mask`).
    #[arg(long, value_name = "FILE")]
    pub save: Option<PathBuf>,
    /// Check this design file against the mask instead of listing orders.
    #[arg(long, value_name = "FILE")]
    pub design: Option<PathBuf>,
    /// The frequency grid for --design.
    #[command(flatten)]
    pub grid: GridArgs,
    /// Output format.
    #[arg(long, value_enum, default_value = "table")]
    pub format: MaskFormat,
}

/// Output formats of `frontend`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum FrontendFormat {
    /// A readable report.
    Table,
    /// One JSON object with every figure.
    Json,
}

/// Flags of `frontend`. Values are engineering notation.
#[derive(Debug, Args)]
pub struct FrontendArgs {
    /// Sample rate, e.g. 48k.
    #[arg(long, value_name = "F", allow_hyphen_values = true)]
    pub fs: String,
    /// Signal bandwidth (the passband edge), e.g. 20k.
    #[arg(long, value_name = "F", allow_hyphen_values = true)]
    pub band: String,
    /// Converter resolution in bits.
    #[arg(long, value_name = "N", allow_hyphen_values = true)]
    pub bits: String,
    /// Attenuation rule: snr (6.02·N + 1.76 dB), half-lsb (6.02·(N + 1) dB) or a level such as 80dB.
    #[arg(long, value_name = "RULE", default_value = "snr")]
    pub rule: String,
    /// Where the attenuation is required: first (fs − band, the first alias of the band) or nyquist.
    #[arg(long, value_name = "WHERE", default_value = "first")]
    pub alias: String,
    /// Largest passband droop in dB.
    #[arg(long, value_name = "DB", default_value = "0.5", allow_hyphen_values = true)]
    pub droop: String,
    /// Source resistance driving the filter.
    #[arg(long, value_name = "R", default_value = "0", allow_hyphen_values = true)]
    pub source: String,
    /// Converter full scale (for the LSB and noise figures).
    #[arg(long, value_name = "V", default_value = "3.3", allow_hyphen_values = true)]
    pub full_scale: String,
    /// Sampling capacitance of the converter input.
    #[arg(long, value_name = "C", default_value = "20p", allow_hyphen_values = true)]
    pub cs: String,
    /// Sampling switch resistance.
    #[arg(long, value_name = "R", default_value = "100", allow_hyphen_values = true)]
    pub rsw: String,
    /// Acquisition (track) time.
    #[arg(long, value_name = "T", default_value = "1u", allow_hyphen_values = true)]
    pub tacq: String,
    /// auto, rc (passive RC ladder), active (Sallen-Key cascade) or lc.
    #[arg(long, value_name = "KIND", default_value = "auto")]
    pub realization: String,
    /// Op-amp gain-bandwidth product for active sections [default: an ideal op-amp].
    #[arg(long, value_name = "F", allow_hyphen_values = true)]
    pub gbw: Option<String>,
    /// Op-amp open-loop output resistance (with --gbw) [default: 0].
    #[arg(long, value_name = "R", allow_hyphen_values = true)]
    pub op_amp_rout: Option<String>,
    /// Op-amp DC open-loop gain (with --gbw) [default: 100k].
    #[arg(long, value_name = "A0", allow_hyphen_values = true)]
    pub op_amp_a0: Option<String>,
    /// Resistor series.
    #[arg(long, value_name = "SERIES", default_value = "E96")]
    pub resistors: String,
    /// Capacitor series.
    #[arg(long, value_name = "SERIES", default_value = "E12")]
    pub capacitors: String,
    /// Write the fitted front end as a design file.
    #[arg(long, value_name = "FILE")]
    pub save: Option<PathBuf>,
    /// Output format.
    #[arg(long, value_enum, default_value = "table")]
    pub format: FrontendFormat,
}

/// Output formats of `step`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum StepFormat {
    /// The figures and a thinned table of samples.
    Table,
    /// Every sample, with a header row.
    Csv,
    /// One JSON object: method, figures and samples.
    Json,
}

/// Flags of `step`.
#[derive(Debug, Args)]
pub struct StepArgs {
    /// The design file (JSON, format "bandwright-design").
    pub design: PathBuf,
    /// Settling tolerance: a percentage (1%), a fraction (0.001), half-lsb:N or lsb:N.
    #[arg(long, value_name = "TOL", default_value = "1%")]
    pub settle: String,
    /// Time span, e.g. 5m [default: long enough to settle to 2^-25 of the step].
    #[arg(long, value_name = "T", allow_hyphen_values = true)]
    pub span: Option<String>,
    /// Number of time points, both ends included.
    #[arg(long, value_name = "N", default_value = "1000")]
    pub points: String,
    /// The impulse response instead of the step.
    #[arg(long)]
    pub impulse: bool,
    /// Integrate the MNA system even where the exact pole-residue form is available.
    #[arg(long)]
    pub integrate: bool,
    /// Output format.
    #[arg(long, value_enum, default_value = "table")]
    pub format: StepFormat,
}

/// Output formats of `spread`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum SpreadFormat {
    /// A readable summary and a thinned envelope table.
    Table,
    /// The envelopes at every frequency, with a header row.
    Csv,
    /// One JSON object: parts, envelopes, spreads and the mask yield.
    Json,
}

/// Flags of `spread`.
#[derive(Debug, Args)]
pub struct SpreadArgs {
    /// The design file (JSON, format "bandwright-design").
    pub design: PathBuf,
    /// The frequency grid.
    #[command(flatten)]
    pub grid: GridArgs,
    /// Monte Carlo trials (0 for the corners only).
    #[arg(long, value_name = "N", default_value = "2000")]
    pub trials: String,
    /// The seed; the same seed gives the same trials, whatever the thread count.
    #[arg(long, value_name = "SEED", default_value = "1")]
    pub seed: String,
    /// uniform (within ±tolerance) or normal (tolerance = 3σ).
    #[arg(long, value_name = "DIST", default_value = "uniform")]
    pub distribution: String,
    /// Resistor tolerance in percent, for resistors the design file gives none (a fitted design
    /// gives each part its series' tolerance; --tol REF=PCT overrides either).
    #[arg(long, value_name = "PCT", default_value = "1", allow_hyphen_values = true)]
    pub tol_r: String,
    /// Capacitor tolerance in percent, for capacitors the design file gives none (a fitted design
    /// gives each part its series' tolerance; --tol REF=PCT overrides either).
    #[arg(long, value_name = "PCT", default_value = "5", allow_hyphen_values = true)]
    pub tol_c: String,
    /// Inductor tolerance in percent, for inductors the design file gives none (a fitted design
    /// gives each part its series' tolerance; --tol REF=PCT overrides either).
    #[arg(long, value_name = "PCT", default_value = "10", allow_hyphen_values = true)]
    pub tol_l: String,
    /// One part's tolerance, replacing its kind's, e.g. --tol C2=1% (repeatable; 0 holds it fixed).
    #[arg(long, value_name = "REF=PCT", allow_hyphen_values = true)]
    pub tol: Vec<String>,
    /// The central share of trials in the percentile band, in percent.
    #[arg(long, value_name = "PCT", default_value = "90", allow_hyphen_values = true)]
    pub band: String,
    /// Skip the worst-case corners.
    #[arg(long)]
    pub no_corners: bool,
    /// A spec mask file (JSON) to count the yield against.
    #[arg(long, value_name = "FILE")]
    pub mask: Option<PathBuf>,
    /// Threads [default: every core].
    #[arg(long, value_name = "N")]
    pub threads: Option<String>,
    /// Output format.
    #[arg(long, value_enum, default_value = "table")]
    pub format: SpreadFormat,
}

/// Output formats of `fit`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum FitFormat {
    /// A readable parts table per alternative.
    Table,
    /// One JSON object with `alternatives`, best first.
    Json,
}

/// Flags of `fit`. Values are engineering notation; validation happens in `options`.
#[derive(Debug, Args)]
pub struct FitArgs {
    /// lowpass, highpass, bandpass or bandstop.
    #[arg(long, default_value = "lowpass")]
    pub response: String,
    /// butterworth, chebyshev, bessel, linkwitz-riley or critical.
    #[arg(long, default_value = "butterworth")]
    pub alignment: String,
    /// Chebyshev passband ripple in dB.
    #[arg(long, value_name = "DB", allow_hyphen_values = true)]
    pub ripple: Option<String>,
    /// Bessel cutoff normalisation: magnitude (-3 dB at the cutoff), delay or phase.
    #[arg(long, value_name = "NORM", default_value = "magnitude")]
    pub bessel_norm: String,
    /// Filter order (the low-pass prototype order for band-pass and band-stop ladders).
    #[arg(long, value_name = "N")]
    pub order: Option<String>,
    /// Cutoff frequency (low-pass, high-pass).
    #[arg(long, value_name = "F", allow_hyphen_values = true)]
    pub cutoff: Option<String>,
    /// Natural frequency of a second-order section (with --q).
    #[arg(long, value_name = "F", allow_hyphen_values = true)]
    pub f0: Option<String>,
    /// Pole Q of a second-order section (with --f0).
    #[arg(long, value_name = "Q", allow_hyphen_values = true)]
    pub q: Option<String>,
    /// Lower band edge (band-pass, band-stop).
    #[arg(long, value_name = "F", allow_hyphen_values = true)]
    pub low: Option<String>,
    /// Upper band edge (band-pass, band-stop).
    #[arg(long, value_name = "F", allow_hyphen_values = true)]
    pub high: Option<String>,
    /// Source resistance (0 for an ideal source).
    #[arg(long, value_name = "R", default_value = "0", allow_hyphen_values = true)]
    pub source: String,
    /// Load resistance, or "open".
    #[arg(long, value_name = "R", default_value = "open")]
    pub load: String,
    /// Load capacitance in parallel with the load.
    #[arg(long, value_name = "C")]
    pub load_capacitance: Option<String>,
    /// rc, rl, rlc, ladder, sallen-key or mfb (op-amp RC sections, low-pass and high-pass).
    #[arg(long, default_value = "ladder")]
    pub topology: String,
    /// Op-amp gain-bandwidth product for sallen-key and mfb [default: an ideal op-amp].
    #[arg(long, value_name = "F")]
    pub gbw: Option<String>,
    /// Op-amp open-loop output resistance (with --gbw) [default: 0].
    #[arg(long, value_name = "R")]
    pub op_amp_rout: Option<String>,
    /// Op-amp DC open-loop gain (with --gbw) [default: 100k].
    #[arg(long, value_name = "A0")]
    pub op_amp_a0: Option<String>,
    /// Element next to the source: series or shunt (ladders default to shunt; RLC sections to
    /// series, or shunt for a band-stop trap).
    #[arg(long)]
    pub first: Option<String>,
    /// Resistor values: an E-series name (E3..E192) or a stock-list file.
    #[arg(long, value_name = "SERIES", default_value = "E96")]
    pub resistors: String,
    /// Capacitor values: an E-series name or a stock-list file.
    #[arg(long, value_name = "SERIES", default_value = "E12")]
    pub capacitors: String,
    /// Inductor values: an E-series name or a stock-list file.
    #[arg(long, value_name = "SERIES", default_value = "E12")]
    pub inductors: String,
    /// Allow two-part series or parallel combinations.
    #[arg(long)]
    pub combine: bool,
    /// How many alternatives to print.
    #[arg(long, value_name = "N", default_value = "5")]
    pub alternatives: String,
    /// Smallest resistor for a free impedance level.
    #[arg(long, value_name = "R", default_value = "100")]
    pub r_min: String,
    /// Largest resistor for a free impedance level.
    #[arg(long, value_name = "R", default_value = "1M")]
    pub r_max: String,
    /// Output format.
    #[arg(long, value_enum, default_value = "table")]
    pub format: FitFormat,
    /// Write the best alternative as a design file that `bandwright sweep` reads.
    #[arg(long, value_name = "FILE")]
    pub save: Option<PathBuf>,
    /// Rank alternatives by nominal error, or by yield against --mask over a seeded Monte Carlo
    /// run (each part's tolerance from its series; more candidates are fitted and re-ranked).
    #[arg(long, value_enum, default_value = "error")]
    pub rank_by: RankBy,
    /// The spec mask file (JSON) for --rank-by yield.
    #[arg(long, value_name = "FILE")]
    pub mask: Option<PathBuf>,
    /// Monte Carlo trials per alternative for --rank-by yield.
    #[arg(long, value_name = "N", default_value = "500")]
    pub trials: String,
    /// The seed of the yield run; the same seed gives the same ranking.
    #[arg(long, value_name = "SEED", default_value = "1")]
    pub seed: String,
    /// uniform, or normal (tolerance = 3σ), for --rank-by yield.
    #[arg(long, value_name = "DIST", default_value = "uniform")]
    pub distribution: String,
    /// Threads for the yield run [default: every core].
    #[arg(long, value_name = "N")]
    pub threads: Option<String>,
}

/// What `fit` ranks by.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum RankBy {
    /// The nominal error of the rounded parts against the ideal response.
    Error,
    /// The fraction of Monte Carlo trials inside a spec mask (needs --mask).
    Yield,
}

/// Output formats of `sweep`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum SweepFormat {
    /// An aligned, readable table.
    Table,
    /// Comma-separated values with a header row.
    Csv,
    /// One JSON object of arrays.
    Json,
}

/// Output formats of `info`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum InfoFormat {
    /// Readable text.
    Table,
    /// One JSON object.
    Json,
}

/// The frequency grid flags shared by the commands.
#[derive(Debug, Args)]
pub struct GridArgs {
    /// Start frequency, e.g. 10, 1k, 2.5MHz [default: two decades below the circuit's lowest corner].
    #[arg(long, value_name = "F", allow_hyphen_values = true)]
    pub from: Option<String>,
    /// Stop frequency, e.g. 100k [default: two decades above the circuit's highest corner].
    #[arg(long, value_name = "F", allow_hyphen_values = true)]
    pub to: Option<String>,
    /// Total number of log-spaced points, both ends included.
    #[arg(long, value_name = "N", conflicts_with = "per_decade")]
    pub points: Option<String>,
    /// Points per decade [default: 50 for sweep, 200 for info].
    #[arg(long, value_name = "N")]
    pub per_decade: Option<String>,
}

/// Flags of `sweep`.
#[derive(Debug, Args)]
pub struct SweepArgs {
    /// The design file (JSON, format "bandwright-design").
    pub design: PathBuf,
    /// The frequency grid.
    #[command(flatten)]
    pub grid: GridArgs,
    /// Output format.
    #[arg(long, value_enum, default_value = "table")]
    pub format: SweepFormat,
    /// Also draw a Bode plot (magnitude, phase, group delay) to this SVG file.
    #[arg(long, value_name = "FILE")]
    pub svg: Option<PathBuf>,
}

/// Flags of `info`.
#[derive(Debug, Args)]
pub struct InfoArgs {
    /// The design file (JSON, format "bandwright-design").
    pub design: PathBuf,
    /// The frequency grid used for the measurements.
    #[command(flatten)]
    pub grid: GridArgs,
    /// Also report the attenuation at this frequency (repeatable), e.g. --at 10k.
    #[arg(long, value_name = "F", allow_hyphen_values = true)]
    pub at: Vec<String>,
    /// Output format.
    #[arg(long, value_enum, default_value = "table")]
    pub format: InfoFormat,
}
