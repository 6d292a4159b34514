//! `bandwright spread`: a tolerance run on a design file (Monte Carlo with a shown seed, plus the
//! sensitivity-guided worst-case corners), split over every core, with an optional mask yield.

use crate::args::{SpreadArgs, SpreadFormat};
use crate::options::GridRequest;
use anyhow::{bail, Context, Result};
use bandwright::mask::SpecMask;
use bandwright::notation::{format_quantity, parse_value, Quantity};
use bandwright::tolerance::{
    Distribution, KindTolerances, MaskYield, Parallel, Spread, ToleranceOptions, TolerancePlan, ToleranceReport,
    TrialBatch, TrialFold,
};
use serde_json::json;
use std::fmt::Write as _;
use std::path::PathBuf;

/// Validated options of `spread`.
#[derive(Debug, Clone)]
pub struct SpreadOptions {
    /// The design file.
    pub design: PathBuf,
    /// The grid.
    pub grid: GridRequest,
    /// The run.
    pub run: ToleranceOptions,
    /// A mask to count the yield against.
    pub mask: Option<SpecMask>,
    /// Output format.
    pub format: SpreadFormat,
    /// Threads to use.
    pub threads: usize,
}

impl SpreadOptions {
    /// Validates the raw flags (and reads the mask file).
    pub fn from_args(raw: SpreadArgs) -> Result<Self> {
        let trials = whole("--trials", &raw.trials, 0.0, bandwright::tolerance::MAX_TRIALS as f64)?;
        let seed = parse_seed(&raw.seed)?;
        let distribution = parse_distribution(&raw.distribution)?;
        let by_kind = KindTolerances {
            resistor: percent("--tol-r", &raw.tol_r)?,
            capacitor: percent("--tol-c", &raw.tol_c)?,
            inductor: percent("--tol-l", &raw.tol_l)?,
        };
        let mut by_part = Vec::new();
        for item in &raw.tol {
            let Some((reference, value)) = item.split_once('=') else {
                bail!("--tol {item}: write a part reference and its tolerance, such as --tol R2=0.1%");
            };
            by_part.push((reference.trim().to_string(), percent("--tol", value)?));
        }
        let band = percent("--band", &raw.band)?;
        let mask = raw.mask.as_deref().map(read_mask).transpose()?;
        let threads = parse_threads(raw.threads.as_deref())?;
        Ok(Self {
            design: raw.design,
            grid: GridRequest::from_args(&raw.grid, 50.0)?,
            run: ToleranceOptions {
                trials,
                seed,
                distribution,
                by_kind,
                by_part,
                band,
                corners: !raw.no_corners,
                pole_spread: true,
            },
            mask,
            format: raw.format,
            threads,
        })
    }
}

/// Validated options of `fit --rank-by yield`.
#[derive(Debug, Clone)]
pub struct YieldRankOptions {
    /// The mask.
    pub mask: SpecMask,
    /// The run (the design's own tolerances apply; these kind defaults fill the gaps).
    pub run: ToleranceOptions,
    /// Threads to use.
    pub threads: usize,
    /// How many alternatives to keep after re-ranking.
    pub keep: usize,
}

impl YieldRankOptions {
    /// Validates the yield flags of `fit` and reads the mask.
    pub fn from_flags(
        mask: Option<&std::path::Path>,
        trials: &str,
        seed: &str,
        distribution: &str,
        threads: Option<&str>,
    ) -> Result<Self> {
        let Some(path) = mask else {
            bail!(
                "--rank-by yield needs a spec mask to count the yield against: add --mask FILE (see examples/masks/)"
            );
        };
        let trials = whole("--trials", trials, 1.0, bandwright::tolerance::MAX_TRIALS as f64)?;
        Ok(Self {
            mask: read_mask(path)?,
            run: ToleranceOptions {
                trials,
                seed: parse_seed(seed)?,
                distribution: parse_distribution(distribution)?,
                by_kind: KindTolerances::USUAL,
                by_part: Vec::new(),
                band: 0.9,
                corners: false,
                pole_spread: false,
            },
            threads: parse_threads(threads)?,
            keep: usize::MAX,
        })
    }

    /// The same options, keeping the best `keep` alternatives after re-ranking.
    pub fn keeping(self, keep: usize) -> Self {
        Self { keep, ..self }
    }

    /// Re-ranks a fit by yield against the mask, on every thread asked for, and keeps the best.
    pub fn rank(&self, fit: &bandwright::fit::FitResult) -> Result<bandwright::yield_rank::YieldRankedFit> {
        Ok(bandwright::yield_rank::rank_by_yield(fit, &self.mask, &self.run, self.keep, |plan| {
            run_threaded(plan, plan.options().trials, self.threads)
        })?)
    }
}

fn read_mask(path: &std::path::Path) -> Result<SpecMask> {
    let text =
        std::fs::read_to_string(path).with_context(|| format!("--mask: cannot read mask file {}", path.display()))?;
    let mask: SpecMask = serde_json::from_str(&text)
        .with_context(|| format!("--mask {}: not a spec mask (see examples/masks/)", path.display()))?;
    mask.validate().with_context(|| format!("--mask {}", path.display()))?;
    Ok(mask)
}

fn parse_seed(text: &str) -> Result<u64> {
    text.trim().parse::<u64>().map_err(|_| anyhow::anyhow!("--seed {text}: give a whole number from 0 to {}", u64::MAX))
}

fn parse_distribution(text: &str) -> Result<Distribution> {
    Ok(match text.trim().to_ascii_lowercase().as_str() {
        "uniform" => Distribution::Uniform,
        "normal" => Distribution::Normal,
        other => {
            bail!("--distribution {other}: use uniform (equally likely within ±tolerance) or normal (tolerance = 3σ)")
        }
    })
}

fn parse_threads(text: Option<&str>) -> Result<usize> {
    match text {
        Some(text) => whole("--threads", text, 1.0, 256.0),
        None => Ok(std::thread::available_parallelism().map_or(1, |n| n.get())),
    }
}

/// Runs trials `0..trials` of `plan` split over `threads` threads (each trial depends only on the
/// seed and its index, so the result does not depend on the split).
pub fn run_threaded(plan: &TolerancePlan, trials: usize, threads: usize) -> Vec<TrialBatch> {
    let threads = threads.clamp(1, trials.max(1));
    let chunk = trials.div_ceil(threads);
    Threads(threads).map(threads, &|t| plan.run_trials((t * chunk).min(trials)..((t + 1) * chunk).min(trials)))
}

/// Runs trials `0..trials` of `plan` folded as they go ([`TolerancePlan::run_folded`]), split
/// over `threads` threads like [`run_threaded`].
pub fn run_folded_threaded(plan: &TolerancePlan, trials: usize, threads: usize) -> Vec<TrialFold> {
    let fold = plan.fold_plan_with(&Threads(threads));
    let threads = threads.clamp(1, trials.max(1));
    let chunk = trials.div_ceil(threads);
    Threads(threads).map(threads, &|t| plan.run_folded(&fold, (t * chunk).min(trials)..((t + 1) * chunk).min(trials)))
}

/// Runs the library's parallel jobs on this many scoped threads.
#[derive(Debug, Clone, Copy)]
pub struct Threads(pub usize);

impl Parallel for Threads {
    fn width(&self) -> usize {
        self.0.max(1)
    }

    fn map<T: Send>(&self, jobs: usize, job: &(dyn Fn(usize) -> T + Sync)) -> Vec<T> {
        std::thread::scope(|scope| {
            let handles: Vec<_> = (0..jobs).map(|j| scope.spawn(move || job(j))).collect();
            handles.into_iter().map(|h| h.join().expect("a worker thread does not panic")).collect()
        })
    }
}

/// The result of a run: the report and the mask yield if a mask was given.
pub struct SpreadRun {
    /// The design's name.
    pub name: String,
    /// The summary.
    pub report: ToleranceReport,
    /// The yield.
    pub mask_yield: Option<MaskYield>,
}

/// Runs the trials on `threads` threads (each trial depends only on the seed and its index, so
/// the result does not depend on the split) and the corners.
pub fn run(design: &bandwright::Design, options: &SpreadOptions) -> Result<SpreadRun> {
    let (circuit, _) = design.to_circuit()?;
    let grid = options.grid.grid_for(&circuit)?;
    let plan = TolerancePlan::for_design(design, &grid, &options.run)?;
    let corners = options.run.corners.then(|| plan.run_corners());
    let Some(mask) = &options.mask else {
        // No yield to count: each trial is folded into the envelopes as it is solved.
        let report = plan.summarize_folded_with(
            run_folded_threaded(&plan, options.run.trials, options.threads),
            corners.as_ref(),
            &Threads(options.threads),
        );
        return Ok(SpreadRun { name: design.name.clone(), report, mask_yield: None });
    };
    let mut batches = run_threaded(&plan, options.run.trials, options.threads);
    batches.extend(corners);
    let report = plan.summarize_with(&batches, &Threads(options.threads));
    let mask_yield = Some(plan.mask_yield(&batches, mask)?);
    Ok(SpreadRun { name: design.name.clone(), report, mask_yield })
}

/// Renders a run.
pub fn render(run: &SpreadRun, format: SpreadFormat) -> String {
    let report = &run.report;
    let mut out = String::new();
    match format {
        SpreadFormat::Json => {
            let mut value = serde_json::to_value(report).expect("plain values");
            value["name"] = json!(run.name);
            if let Some(y) = &run.mask_yield {
                value["mask_yield"] = serde_json::to_value(y).expect("plain values");
            }
            out.push_str(&serde_json::to_string_pretty(&value).expect("JSON of plain values"));
            out.push('\n');
        }
        SpreadFormat::Csv => {
            out.push_str("frequency_hz,gain_db_nominal,gain_db_min,gain_db_low,gain_db_high,gain_db_max,phase_deg_nominal,phase_deg_min,phase_deg_max,group_delay_s_nominal,group_delay_s_min,group_delay_s_max\n");
            for k in 0..report.f_hz.len() {
                let (g, p, d) = (&report.gain_db, &report.phase_deg, &report.group_delay_s);
                let row = [
                    report.f_hz[k],
                    g.nominal[k],
                    g.min[k],
                    g.low[k],
                    g.high[k],
                    g.max[k],
                    p.nominal[k],
                    p.min[k],
                    p.max[k],
                    d.nominal[k],
                    d.min[k],
                    d.max[k],
                ];
                let cells: Vec<String> =
                    row.iter().map(|v| if v.is_finite() { format!("{v:e}") } else { String::new() }).collect();
                let _ = writeln!(out, "{}", cells.join(","));
            }
        }
        SpreadFormat::Table => {
            let pct = |x: f64| format!("{:.3} %", x * 100.0);
            let _ = writeln!(out, "design: {}", run.name);
            let _ = writeln!(
                out,
                "run: {} trials, {} corners, seed {}, {} distribution; band {} to {}",
                report.trials,
                report.corners,
                report.seed,
                report.distribution,
                pct(report.band.0),
                pct(report.band.1)
            );
            let _ = writeln!(out, "\nparts that vary:");
            for part in &report.parts {
                let quantity = match part.kind {
                    "capacitor" => Quantity::Capacitance,
                    "inductor" => Quantity::Inductance,
                    _ => Quantity::Resistance,
                };
                let origin = match part.origin {
                    bandwright::tolerance::ToleranceOrigin::Kind => "the default for its kind",
                    bandwright::tolerance::ToleranceOrigin::Design => "from the design file (its series)",
                    bandwright::tolerance::ToleranceOrigin::Given => "from --tol",
                };
                let _ = writeln!(
                    out,
                    "  {:<8} {:>12}  ±{:<10} {origin}",
                    part.reference,
                    format_quantity(part.nominal, quantity, 4),
                    pct(part.tolerance)
                );
            }
            let freq = |x: f64| format_quantity(x, Quantity::Frequency, 5);
            let row = |out: &mut String, label: &str, s: &Spread, show: &dyn Fn(f64) -> String| {
                let _ = writeln!(
                    out,
                    "  {label:<18} nominal {:>11}  mean {:>11}  σ {:>10} ({:.2} %)  band {:>11} … {:<11}  extremes {:>11} … {}",
                    show(s.nominal),
                    show(s.mean),
                    show(s.std_dev),
                    100.0 * s.std_dev / s.mean.abs().max(f64::MIN_POSITIVE),
                    show(s.low),
                    show(s.high),
                    show(s.min),
                    show(s.max)
                );
                if s.missing > 0 {
                    let _ = writeln!(out, "  {:<18} not found in {} trials", "", s.missing);
                }
            };
            let _ = writeln!(out, "\nspread:");
            for (edge, spread) in &report.corner_hz {
                row(&mut out, &format!("-3 dB ({edge})"), spread, &freq);
            }
            for (i, spread) in report.q.iter().enumerate() {
                row(&mut out, &format!("pole pair {} Q", i + 1), spread, &|x| format!("{x:.4}"));
            }
            if report.corner_hz.is_empty() && report.q.is_empty() {
                let _ = writeln!(out, "  no -3 dB corner in the sweep and no complex poles");
            }
            if let Some(y) = &run.mask_yield {
                let _ = writeln!(
                    out,
                    "\nmask: nominal {} (worst margin {:.3} at {}, {}); yield {} of {} trials ({:.1} %)",
                    if y.nominal.pass { "passes" } else { "FAILS" },
                    y.nominal.worst_margin_db,
                    freq(y.nominal.worst_f_hz),
                    y.nominal.worst_region.name(),
                    y.passed,
                    y.trials,
                    100.0 * y.passed as f64 / y.trials.max(1) as f64
                );
                row(&mut out, "worst margin", &y.worst_margin, &|x| format!("{x:.3}"));
            }
            let _ = writeln!(
                out,
                "\n{:>12} {:>10} {:>10} {:>10} {:>10} {:>10} {:>12} {:>12}",
                "frequency", "dB nom", "dB min", "dB low", "dB high", "dB max", "delay min", "delay max"
            );
            let n = report.f_hz.len();
            let step = (n / 20).max(1);
            for k in (0..n).step_by(step) {
                let (g, d) = (&report.gain_db, &report.group_delay_s);
                let time = |x: f64| format_quantity(x, Quantity::Time, 4);
                let _ = writeln!(
                    out,
                    "{:>12} {:>10.3} {:>10.3} {:>10.3} {:>10.3} {:>10.3} {:>12} {:>12}",
                    freq(report.f_hz[k]),
                    g.nominal[k],
                    g.min[k],
                    g.low[k],
                    g.high[k],
                    g.max[k],
                    time(d.min[k]),
                    time(d.max[k])
                );
            }
            let _ = writeln!(out, "(every {step}th of {n} points; --format csv gives all)");
        }
    }
    out
}

fn percent(flag: &str, text: &str) -> Result<f64> {
    let trimmed = text.trim();
    let number = trimmed.strip_suffix('%').unwrap_or(trimmed);
    let value = parse_value(number, Quantity::Ratio).with_context(|| flag.to_string())?;
    if !value.is_finite() || value < 0.0 {
        bail!("{flag} {text}: give a percentage of 0 or more, such as 5 or 5%");
    }
    Ok(value / 100.0)
}

fn whole(flag: &str, text: &str, min: f64, max: f64) -> Result<usize> {
    let value = parse_value(text, Quantity::Ratio).with_context(|| flag.to_string())?;
    if !(min..=max).contains(&value) || value.fract() != 0.0 {
        bail!("{flag} {text}: give a whole number from {min} to {max}");
    }
    Ok(value as usize)
}
