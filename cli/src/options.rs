//! Validated options: the raw text flags of `args` turned into typed values, with engineering
//! notation parsed and every problem reported with the flag and the text that caused it.

use crate::args::{GridArgs, InfoArgs, InfoFormat, SweepArgs, SweepFormat};
use anyhow::{bail, Context, Result};
use bandwright::notation::{parse_value, Quantity};
use std::path::PathBuf;

/// How the frequency grid is to be made once the circuit is known.
#[derive(Debug, Clone, PartialEq)]
pub struct GridRequest {
    /// Start in Hz, or `None` for the circuit's suggested start.
    pub from_hz: Option<f64>,
    /// Stop in Hz, or `None` for the suggested stop.
    pub to_hz: Option<f64>,
    /// The spacing.
    pub spacing: bandwright::Spacing,
}

/// Options of `sweep`.
#[derive(Debug, Clone)]
pub struct SweepOptions {
    /// The design file.
    pub design: PathBuf,
    /// The grid.
    pub grid: GridRequest,
    /// Output format.
    pub format: SweepFormat,
    /// SVG output path.
    pub svg: Option<PathBuf>,
}

/// Options of `info`.
#[derive(Debug, Clone)]
pub struct InfoOptions {
    /// The design file.
    pub design: PathBuf,
    /// The grid.
    pub grid: GridRequest,
    /// Frequencies for attenuation figures, in Hz.
    pub at_hz: Vec<f64>,
    /// Output format.
    pub format: InfoFormat,
}

impl SweepOptions {
    /// Validates the raw flags.
    pub fn from_args(raw: SweepArgs) -> Result<Self> {
        Ok(Self {
            design: raw.design,
            grid: GridRequest::from_args(&raw.grid, 50.0)?,
            format: raw.format,
            svg: raw.svg,
        })
    }
}

impl InfoOptions {
    /// Validates the raw flags.
    pub fn from_args(raw: InfoArgs) -> Result<Self> {
        let at_hz = raw.at.iter().map(|text| frequency("--at", text)).collect::<Result<Vec<_>>>()?;
        Ok(Self { design: raw.design, grid: GridRequest::from_args(&raw.grid, 200.0)?, at_hz, format: raw.format })
    }
}

impl GridRequest {
    fn from_args(raw: &GridArgs, default_per_decade: f64) -> Result<Self> {
        let from_hz = raw.from.as_deref().map(|t| frequency("--from", t)).transpose()?;
        let to_hz = raw.to.as_deref().map(|t| frequency("--to", t)).transpose()?;
        let spacing = match (&raw.points, &raw.per_decade) {
            (Some(text), _) => bandwright::Spacing::Points(count("--points", text)?),
            (None, Some(text)) => {
                let value = parse_value(text, Quantity::Ratio).with_context(|| "--per-decade".to_string())?;
                if value.is_nan() || value < 1.0 {
                    bail!("--per-decade {text}: give at least 1 point per decade");
                }
                bandwright::Spacing::PerDecade(value)
            }
            (None, None) => bandwright::Spacing::PerDecade(default_per_decade),
        };
        Ok(Self { from_hz, to_hz, spacing })
    }

    /// The grid for `circuit`, filling in the suggested range where no edge was given.
    pub fn grid_for(&self, circuit: &bandwright::Circuit) -> Result<bandwright::FrequencyGrid> {
        let (suggested_from, suggested_to) = bandwright::sweep::suggested_range(circuit);
        let from = self.from_hz.unwrap_or(suggested_from);
        let to = self.to_hz.unwrap_or(match self.from_hz {
            Some(from) if from >= suggested_to => from * 1e4,
            _ => suggested_to,
        });
        let from = match self.from_hz {
            None if to <= from => to / 1e4,
            _ => from,
        };
        Ok(bandwright::FrequencyGrid::log(from, to, self.spacing)?)
    }
}

fn frequency(flag: &str, text: &str) -> Result<f64> {
    let value = parse_value(text, Quantity::Frequency).with_context(|| flag.to_string())?;
    if value.is_nan() || value <= 0.0 {
        bail!("{flag} {text}: give a frequency above 0 Hz");
    }
    Ok(value)
}

fn count(flag: &str, text: &str) -> Result<usize> {
    let value = parse_value(text, Quantity::Ratio).with_context(|| flag.to_string())?;
    if !(2.0..=bandwright::sweep::MAX_POINTS as f64).contains(&value) || value.fract() != 0.0 {
        bail!("{flag} {text}: give a whole number of points from 2 to {}", bandwright::sweep::MAX_POINTS);
    }
    Ok(value as usize)
}

/// Options of `fit`.
#[derive(Debug, Clone)]
pub struct FitCommand {
    /// The requirement.
    pub requirement: bandwright::fit::Requirement,
    /// The topology.
    pub topology: bandwright::fit::Topology,
    /// The search options.
    pub options: bandwright::fit::FitOptions,
    /// Output format.
    pub format: crate::args::FitFormat,
    /// Where to save the best design.
    pub save: Option<PathBuf>,
}

fn value_of(flag: &str, text: &str, quantity: Quantity) -> Result<f64> {
    parse_value(text, quantity).with_context(|| flag.to_string())
}

fn part_values(flag: &str, text: &str, quantity: Quantity) -> Result<bandwright::eseries::PartValues> {
    if let Some(series) = bandwright::eseries::Series::from_name(text) {
        return Ok(bandwright::eseries::PartValues::Series(series));
    }
    let path = std::path::Path::new(text);
    if !path.exists() {
        bail!("{flag} {text}: not an E-series name (E3, E6, E12, E24, E48, E96, E192) and no such stock-list file");
    }
    let contents = std::fs::read_to_string(path).with_context(|| format!("{flag}: cannot read stock list {text}"))?;
    let name = path.file_stem().and_then(|s| s.to_str()).unwrap_or(text);
    let list =
        bandwright::eseries::StockList::parse(name, &contents, quantity).with_context(|| format!("{flag} {text}"))?;
    Ok(bandwright::eseries::PartValues::Stock(list))
}

impl FitCommand {
    /// Validates the raw flags.
    pub fn from_args(raw: crate::args::FitArgs) -> Result<Self> {
        use bandwright::fit::{Combine, FitOptions, PartSets, Requirement, Topology};
        use bandwright::ladder::FirstElement;
        use bandwright::synthesis::{Alignment, Band, BesselNormalization, ResponseType};
        let response = match raw.response.as_str() {
            "lowpass" => ResponseType::LowPass,
            "highpass" => ResponseType::HighPass,
            "bandpass" => ResponseType::BandPass,
            "bandstop" => ResponseType::BandStop,
            other => bail!("--response {other}: use lowpass, highpass, bandpass or bandstop"),
        };
        let normalization = match raw.bessel_norm.as_str() {
            "magnitude" => BesselNormalization::Magnitude,
            "delay" => BesselNormalization::Delay,
            "phase" => BesselNormalization::Phase,
            other => bail!("--bessel-norm {other}: use magnitude, delay or phase"),
        };
        let mut alignment = match raw.alignment.as_str() {
            "butterworth" => Alignment::Butterworth,
            "chebyshev" => {
                let ripple = raw.ripple.as_deref().unwrap_or("0.5");
                Alignment::Chebyshev { ripple_db: value_of("--ripple", ripple, Quantity::Ratio)? }
            }
            "bessel" => Alignment::Bessel { normalization },
            "linkwitz-riley" => Alignment::LinkwitzRiley,
            other => bail!("--alignment {other}: use butterworth, chebyshev, bessel or linkwitz-riley"),
        };
        if raw.ripple.is_some() && !matches!(alignment, Alignment::Chebyshev { .. }) {
            bail!("--ripple applies to --alignment chebyshev only");
        }
        let frequency_of = |flag: &str, text: &Option<String>| text.as_deref().map(|t| frequency(flag, t)).transpose();
        let (cutoff, f0, low, high) = (
            frequency_of("--cutoff", &raw.cutoff)?,
            frequency_of("--f0", &raw.f0)?,
            frequency_of("--low", &raw.low)?,
            frequency_of("--high", &raw.high)?,
        );
        let band = match (cutoff, f0, low, high) {
            (Some(fc), None, None, None) => Band::Cutoff(fc),
            (None, Some(f0), None, None) => {
                let q = raw.q.as_deref().ok_or_else(|| anyhow::anyhow!("--f0 needs --q"))?;
                alignment = Alignment::Quality { q: value_of("--q", q, Quantity::Ratio)? };
                Band::Cutoff(f0)
            }
            (None, None, Some(low_hz), Some(high_hz)) => Band::Edges { low_hz, high_hz },
            _ => bail!("give exactly one of --cutoff F, --f0 F --q Q, or --low F --high F"),
        };
        if raw.q.is_some() && f0.is_none() {
            bail!("--q goes with --f0");
        }
        let default_order = match (alignment, response) {
            (Alignment::Quality { .. }, ResponseType::LowPass | ResponseType::HighPass) => 2,
            (Alignment::Quality { .. }, _) => 1,
            _ => 2,
        };
        let order = match &raw.order {
            Some(text) => {
                let n = value_of("--order", text, Quantity::Ratio)?;
                if n.fract() != 0.0 || !(0.0..=100.0).contains(&n) {
                    bail!("--order {text}: give a whole number from 1 to 8");
                }
                n as usize
            }
            None => default_order,
        };
        let source_resistance = value_of("--source", &raw.source, Quantity::Resistance)?;
        let load_resistance =
            if raw.load == "open" { None } else { Some(value_of("--load", &raw.load, Quantity::Resistance)?) };
        let load_capacitance = raw
            .load_capacitance
            .as_deref()
            .map(|t| value_of("--load-capacitance", t, Quantity::Capacitance))
            .transpose()?;
        let first = match raw.first.as_str() {
            "series" => FirstElement::Series,
            "shunt" => FirstElement::Shunt,
            other => bail!("--first {other}: use series or shunt"),
        };
        let topology = match raw.topology.as_str() {
            "rc" => Topology::Rc,
            "rl" => Topology::Rl,
            "rlc" => Topology::Rlc,
            "ladder" => Topology::Ladder(first),
            other => bail!("--topology {other}: use rc, rl, rlc or ladder"),
        };
        let alternatives = value_of("--alternatives", &raw.alternatives, Quantity::Ratio)?;
        if alternatives.fract() != 0.0 || !(1.0..=1000.0).contains(&alternatives) {
            bail!("--alternatives {}: give a whole number from 1 to 1000", raw.alternatives);
        }
        let options = FitOptions {
            parts: PartSets {
                resistors: part_values("--resistors", &raw.resistors, Quantity::Resistance)?,
                capacitors: part_values("--capacitors", &raw.capacitors, Quantity::Capacitance)?,
                inductors: part_values("--inductors", &raw.inductors, Quantity::Inductance)?,
            },
            combine: if raw.combine { Combine::Pairs } else { Combine::Single },
            alternatives: alternatives as usize,
            resistor_range: (
                value_of("--r-min", &raw.r_min, Quantity::Resistance)?,
                value_of("--r-max", &raw.r_max, Quantity::Resistance)?,
            ),
            name: format!("fitted {} {}", raw.alignment, raw.response),
        };
        let requirement =
            Requirement { response, alignment, order, band, source_resistance, load_resistance, load_capacitance };
        Ok(Self { requirement, topology, options, format: raw.format, save: raw.save })
    }
}
