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
    /// Print the safety cautions that apply to building filters and crossovers.
    Cautions,
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
    #[arg(long, value_name = "F")]
    pub from: Option<String>,
    /// Stop frequency, e.g. 100k [default: two decades above the circuit's highest corner].
    #[arg(long, value_name = "F")]
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
    #[arg(long, value_name = "F")]
    pub at: Vec<String>,
    /// Output format.
    #[arg(long, value_enum, default_value = "table")]
    pub format: InfoFormat,
}
