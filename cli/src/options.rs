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
    /// Validates the grid flags; `default_per_decade` applies when neither count is given.
    pub fn from_args(raw: &GridArgs, default_per_decade: f64) -> Result<Self> {
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
    /// The yield ranking, when asked for (`--rank-by yield`).
    pub yield_rank: Option<crate::spread::YieldRankOptions>,
}

impl FitCommand {
    /// Validates the raw flags through the core's [`bandwright::FitRequest`]; stock-list files
    /// are read here and passed in by path.
    pub fn from_args(raw: crate::args::FitArgs) -> Result<Self> {
        let mut stock = std::collections::BTreeMap::new();
        for (flag, name) in
            [("--resistors", &raw.resistors), ("--capacitors", &raw.capacitors), ("--inductors", &raw.inductors)]
        {
            if bandwright::eseries::Series::from_name(name.trim()).is_none() {
                let path = std::path::Path::new(name);
                if !path.exists() {
                    bail!("{flag} {name}: not an E-series name (E3, E6, E12, E24, E48, E96, E192) and no such stock-list file");
                }
                let contents =
                    std::fs::read_to_string(path).with_context(|| format!("{flag}: cannot read stock list {name}"))?;
                stock.insert(name.clone(), contents);
            }
        }
        let request = bandwright::FitRequest {
            response: Some(raw.response),
            alignment: Some(raw.alignment),
            ripple: raw.ripple,
            bessel_norm: Some(raw.bessel_norm),
            order: raw.order,
            cutoff: raw.cutoff,
            f0: raw.f0,
            q: raw.q,
            low: raw.low,
            high: raw.high,
            source: Some(raw.source),
            load: Some(raw.load),
            load_capacitance: raw.load_capacitance,
            topology: Some(raw.topology),
            gbw: raw.gbw,
            op_amp_rout: raw.op_amp_rout,
            op_amp_a0: raw.op_amp_a0,
            first: raw.first,
            resistors: Some(raw.resistors),
            capacitors: Some(raw.capacitors),
            inductors: Some(raw.inductors),
            combine: raw.combine,
            alternatives: Some(raw.alternatives),
            r_min: Some(raw.r_min),
            r_max: Some(raw.r_max),
            stock,
        };
        let resolved =
            request.resolve().map_err(|e| anyhow::anyhow!("--{}: {}", e.field().replace('_', "-"), e.message()))?;
        let yield_rank = match raw.rank_by {
            crate::args::RankBy::Error => {
                if raw.mask.is_some() {
                    bail!("--mask is used only with --rank-by yield; add --rank-by yield, or drop --mask");
                }
                None
            }
            crate::args::RankBy::Yield => Some(crate::spread::YieldRankOptions::from_flags(
                raw.mask.as_deref(),
                &raw.trials,
                &raw.seed,
                &raw.distribution,
                raw.threads.as_deref(),
            )?),
        };
        let mut options = resolved.options;
        let wanted = options.alternatives;
        if yield_rank.is_some() {
            // Re-rank a wider field of candidates, then keep as many as were asked for.
            options.alternatives = bandwright::yield_rank::candidates_for(wanted);
        }
        Ok(Self {
            requirement: resolved.requirement,
            topology: resolved.topology,
            options,
            format: raw.format,
            save: raw.save,
            yield_rank: yield_rank.map(|y| y.keeping(wanted)),
        })
    }
}
