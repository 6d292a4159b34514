//! Ranking a fit's alternatives by their yield against a spec mask, instead of by nominal error.
//!
//! A fit ranks its alternatives by how close the rounded parts come to the ideal response
//! ([`crate::fit`]). With toleranced parts, the alternative nearest to ideal is not always the one
//! that most often meets the spec: one whose nominal response sits in the middle of the mask keeps
//! more of its trials inside than one that is nearer to ideal but closer to an edge. This module
//! runs the same seeded Monte Carlo ([`crate::tolerance`]) on every alternative against one
//! [`SpecMask`] and reorders them by the fraction of trials that pass; ties keep the fit's own
//! order, so nominal error breaks them.
//!
//! Every alternative is run with the same seed and trial count, so the comparison uses the same
//! random draws for parts of the same kind and position (common random numbers, a standard
//! variance-reduction practice for comparing alternatives, from memory). The trials are run by a
//! caller-supplied function of the plan, so the adapters choose how to spread them: threads in the
//! CLI, Web Workers or slices in the browser. The core itself starts no thread.
//!
//! The check grid: log-spaced over two decades either side of the mask's edges with every edge
//! included exactly ([`mask_grid`]), because a mask's worst point is usually at an edge.

use std::fmt;

use crate::fit::FitResult;
use crate::mask::{MaskBand, MaskError, SpecMask};
use crate::sweep::{FrequencyGrid, GridError};
use crate::tolerance::{MaskYield, ToleranceError, ToleranceOptions, TolerancePlan, TrialBatch};

/// Points per decade of the check grid.
pub const GRID_PER_DECADE: usize = 40;

/// Decades of the check grid beyond the outermost edges.
pub const GRID_MARGIN_DECADES: f64 = 2.0;

/// One alternative's yield, in the new order.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct RankedYield {
    /// The alternative's place in the fit's own (nominal-error) order, from 0.
    pub nominal_rank: usize,
    /// Fraction of trials inside the mask, 0 … 1.
    pub fraction: f64,
    /// The trials' results against the mask.
    pub mask_yield: MaskYield,
}

/// A fit reordered by yield.
#[derive(Debug, Clone, PartialEq)]
pub struct YieldRankedFit {
    /// The fit, its alternatives reordered and its objective restated.
    pub fit: FitResult,
    /// One entry per alternative, in the new order.
    pub yields: Vec<RankedYield>,
    /// Trials per alternative.
    pub trials: usize,
    /// The seed.
    pub seed: u64,
    /// The frequencies the mask was checked at, in Hz.
    pub grid_hz: Vec<f64>,
}

/// Why alternatives cannot be ranked by yield.
#[derive(Debug, Clone, PartialEq)]
pub enum YieldRankError {
    /// Ranking by yield needs at least one trial.
    NoTrials,
    /// The mask is not valid.
    Mask(MaskError),
    /// The check grid could not be made.
    Grid(GridError),
    /// An alternative could not be set up for a tolerance run.
    Tolerance {
        /// The alternative's place in the fit's order, from 1.
        alternative: usize,
        /// The cause.
        error: ToleranceError,
    },
    /// An alternative's responses could not be checked against the mask.
    Check {
        /// The alternative's place in the fit's order, from 1.
        alternative: usize,
        /// The cause.
        error: MaskError,
    },
}

impl fmt::Display for YieldRankError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::NoTrials => {
                write!(f, "ranking by yield needs Monte Carlo trials: give a trial count of 1 or more (500 is typical)")
            }
            Self::Mask(error) => write!(f, "the spec mask: {error}"),
            Self::Grid(error) => write!(f, "the mask's check grid: {error}"),
            Self::Tolerance { alternative, error } => {
                write!(f, "alternative #{alternative} cannot be run with tolerances: {error}")
            }
            Self::Check { alternative, error } => {
                write!(f, "alternative #{alternative} cannot be checked against the mask: {error}")
            }
        }
    }
}

impl std::error::Error for YieldRankError {}

/// The frequencies a mask is checked at: log-spaced ([`GRID_PER_DECADE`] per decade) from
/// [`GRID_MARGIN_DECADES`] below the lowest edge to as far above the highest, with every edge
/// included exactly.
///
/// # Errors
/// The mask's own validation error.
pub fn mask_grid(mask: &SpecMask) -> Result<FrequencyGrid, YieldRankError> {
    mask.validate().map_err(YieldRankError::Mask)?;
    let edges: Vec<f64> = match mask.band {
        MaskBand::LowPass { passband_edge_hz, stopband_edge_hz }
        | MaskBand::HighPass { passband_edge_hz, stopband_edge_hz } => vec![passband_edge_hz, stopband_edge_hz],
        MaskBand::BandPass { stopband_low_hz, passband_low_hz, passband_high_hz, stopband_high_hz } => {
            vec![stopband_low_hz, passband_low_hz, passband_high_hz, stopband_high_hz]
        }
    };
    let low = edges.iter().copied().fold(f64::INFINITY, f64::min) / 10f64.powf(GRID_MARGIN_DECADES);
    let high = edges.iter().copied().fold(0.0, f64::max) * 10f64.powf(GRID_MARGIN_DECADES);
    let decades = (high / low).log10();
    let steps = (decades * GRID_PER_DECADE as f64).ceil().max(1.0) as usize;
    let mut f_hz: Vec<f64> = (0..=steps).map(|k| low * 10f64.powf(decades * k as f64 / steps as f64)).collect();
    f_hz.extend(&edges);
    f_hz.sort_by(f64::total_cmp);
    // Drop grid points that are within a part in 10⁹ of an edge (the edge itself stays).
    let mut kept: Vec<f64> = Vec::with_capacity(f_hz.len());
    for f in f_hz {
        match kept.last_mut() {
            Some(last) if (f / *last - 1.0).abs() < 1e-9 => {
                if edges.contains(&f) {
                    *last = f;
                }
            }
            _ => kept.push(f),
        }
    }
    FrequencyGrid::list(kept).map_err(YieldRankError::Grid)
}

/// How many candidates to fit when `wanted` alternatives are to be kept after ranking by yield:
/// three times as many, from 10 to 60, so that the ranking has a wider field than the nominal one.
pub fn candidates_for(wanted: usize) -> usize {
    (wanted.saturating_mul(3)).clamp(10, 60)
}

/// Runs `options.trials` seeded trials of every alternative of `fit` against `mask` and reorders
/// the alternatives by the fraction that pass, highest first (ties keep the fit's order), and keeps
/// the first `keep` (see [`candidates_for`]). Corners
/// and pole spreads are not part of the ranking and are switched off. `run` runs the Monte Carlo
/// trials of a plan (all of `0..plan.options().trials`, split any way; see
/// [`TolerancePlan::run_trials`]).
///
/// # Errors
/// [`YieldRankError`], naming the alternative where one is at fault.
pub fn rank_by_yield<R>(
    fit: &FitResult,
    mask: &SpecMask,
    options: &ToleranceOptions,
    keep: usize,
    run: R,
) -> Result<YieldRankedFit, YieldRankError>
where
    R: Fn(&TolerancePlan) -> Vec<TrialBatch>,
{
    if options.trials == 0 {
        return Err(YieldRankError::NoTrials);
    }
    let grid = mask_grid(mask)?;
    let options = ToleranceOptions { corners: false, pole_spread: false, ..options.clone() };
    let mut scored = Vec::with_capacity(fit.alternatives.len());
    for (index, alternative) in fit.alternatives.iter().enumerate() {
        let plan = TolerancePlan::for_design(&alternative.design, &grid, &options)
            .map_err(|error| YieldRankError::Tolerance { alternative: index + 1, error })?;
        let batches = run(&plan);
        let mask_yield =
            plan.mask_yield(&batches, mask).map_err(|error| YieldRankError::Check { alternative: index + 1, error })?;
        let fraction = if mask_yield.trials == 0 { 0.0 } else { mask_yield.passed as f64 / mask_yield.trials as f64 };
        scored.push(RankedYield { nominal_rank: index, fraction, mask_yield });
    }
    // Stable: equal yields keep the fit's order, so nominal error breaks ties.
    scored.sort_by_key(|s| std::cmp::Reverse(s.mask_yield.passed));
    scored.truncate(keep);
    let mut ranked = fit.clone();
    ranked.alternatives = scored.iter().map(|s| fit.alternatives[s.nominal_rank].clone()).collect();
    ranked.objective = format!(
        "yield against the spec mask ({} trials each, seed {}, {}); ties by: {}",
        options.trials,
        options.seed,
        options.distribution.describe(),
        fit.objective
    );
    Ok(YieldRankedFit {
        fit: ranked,
        yields: scored,
        trials: options.trials,
        seed: options.seed,
        grid_hz: grid.frequencies().to_vec(),
    })
}

impl YieldRankedFit {
    /// The fit's JSON ([`FitResult::to_json`]) with `yield` added to each alternative
    /// (`nominal_rank`, `fraction`, `mask_yield`) and `yield_run` (`trials`, `seed`) at the top.
    pub fn to_json(&self) -> serde_json::Value {
        let mut value = self.fit.to_json();
        if let Some(list) = value["alternatives"].as_array_mut() {
            for (entry, ranked) in list.iter_mut().zip(&self.yields) {
                entry["yield"] = serde_json::to_value(ranked).expect("plain values serialize");
            }
        }
        value["yield_run"] = serde_json::json!({"trials": self.trials, "seed": self.seed});
        value
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::fit;
    use crate::tolerance::{Distribution, KindTolerances};

    fn options(trials: usize) -> ToleranceOptions {
        ToleranceOptions {
            trials,
            seed: 7,
            distribution: Distribution::Uniform,
            by_kind: KindTolerances { resistor: 0.01, capacitor: 0.05, inductor: 0.05 },
            by_part: Vec::new(),
            band: 0.9,
            corners: true,
            pole_spread: true,
        }
    }

    fn all(plan: &TolerancePlan) -> Vec<TrialBatch> {
        vec![plan.run_trials(0..plan.options().trials)]
    }

    fn rc_fit() -> FitResult {
        let request = crate::request::FitRequest {
            cutoff: Some("1k".into()),
            order: Some("1".into()),
            topology: Some("rc".into()),
            resistors: Some("E24".into()),
            capacitors: Some("E12".into()),
            alternatives: Some("8".into()),
            ..Default::default()
        };
        let r = request.resolve().expect("an RC request resolves");
        fit(&r.requirement, r.topology, &r.options).expect("an RC low-pass fits")
    }

    fn lowpass_mask(pass_hz: f64, loss_db: f64, stop_hz: f64, attenuation_db: f64) -> SpecMask {
        SpecMask {
            band: MaskBand::LowPass { passband_edge_hz: pass_hz, stopband_edge_hz: stop_hz },
            max_passband_loss_db: loss_db,
            min_stopband_attenuation_db: attenuation_db,
            max_group_delay_variation_s: None,
        }
    }

    fn tight_mask() -> SpecMask {
        lowpass_mask(800.0, 2.3, 4000.0, 12.0)
    }

    #[test]
    fn the_field_is_widened_within_limits() {
        assert_eq!(candidates_for(1), 10);
        assert_eq!(candidates_for(5), 15);
        assert_eq!(candidates_for(100), 60);
    }

    #[test]
    fn the_grid_holds_every_edge_and_spans_two_decades_beyond() {
        let grid = mask_grid(&lowpass_mask(1000.0, 3.0, 7000.0, 16.0)).unwrap();
        let f = grid.frequencies();
        assert!(f.contains(&1000.0) && f.contains(&7000.0));
        assert!((f[0] - 10.0).abs() < 1e-9 && (f[f.len() - 1] - 700_000.0).abs() < 1e-6, "{} {}", f[0], f[f.len() - 1]);
        assert!(f.windows(2).all(|w| w[1] > w[0]));
    }

    #[test]
    fn alternatives_are_reordered_by_the_trials_that_pass() {
        let fit = rc_fit();
        assert!(fit.alternatives.len() >= 3, "{}", fit.alternatives.len());
        // A first-order low-pass loses 10·log10(1 + (f/fc)²) dB (the RC's closed form): at most
        // 2.3 dB at 800 Hz needs fc ≥ 958 Hz, at least 12 dB at 4 kHz needs fc ≤ 1038 Hz. So
        // only corners within about −4 … +4 % of 1 kHz pass, and 10 % capacitors often miss.
        let mask = tight_mask();
        let ranked = rank_by_yield(&fit, &mask, &options(400), usize::MAX, all);
        let ranked = match ranked {
            Ok(r) => r,
            Err(error) => panic!("{error}"),
        };
        assert_eq!(ranked.yields.len(), fit.alternatives.len());
        // Yields are non-increasing in the new order, and each entry is its own alternative.
        assert!(ranked.yields.windows(2).all(|w| w[0].mask_yield.passed >= w[1].mask_yield.passed));
        for (alt, y) in ranked.fit.alternatives.iter().zip(&ranked.yields) {
            assert_eq!(alt, &fit.alternatives[y.nominal_rank]);
            assert_eq!(y.mask_yield.trials, 400);
            assert!((y.fraction - y.mask_yield.passed as f64 / 400.0).abs() < 1e-15);
        }
        // Ties keep the nominal order.
        for w in ranked.yields.windows(2) {
            if w[0].mask_yield.passed == w[1].mask_yield.passed {
                assert!(w[0].nominal_rank < w[1].nominal_rank);
            }
        }
        // The ranking is not vacuous: the yields differ between alternatives.
        let first = ranked.yields[0].mask_yield.passed;
        let last = ranked.yields[ranked.yields.len() - 1].mask_yield.passed;
        assert!(first > last, "all alternatives gave the same yield {first}");
        assert!(ranked.fit.objective.starts_with("yield against the spec mask (400 trials each, seed 7"));
        let json = ranked.to_json();
        assert_eq!(json["yield_run"]["trials"], 400);
        assert!(json["alternatives"][0]["yield"]["fraction"].as_f64().unwrap() >= 0.0);
    }

    #[test]
    fn the_same_seed_gives_the_same_ranking_and_a_split_run_agrees() {
        let fit = rc_fit();
        let mask = tight_mask();
        let one = rank_by_yield(&fit, &mask, &options(300), 5, all).unwrap();
        assert_eq!((one.yields.len(), one.fit.alternatives.len()), (5, 5));
        let split = rank_by_yield(&fit, &mask, &options(300), 5, |plan| {
            vec![plan.run_trials(0..100), plan.run_trials(100..300)]
        })
        .unwrap();
        assert_eq!(one, split);
    }

    #[test]
    fn bad_requests_are_named() {
        let fit = rc_fit();
        let mask = lowpass_mask(1000.0, 3.0, 7000.0, 16.0);
        assert_eq!(rank_by_yield(&fit, &mask, &options(0), 5, all).unwrap_err(), YieldRankError::NoTrials);
        let bad = lowpass_mask(1000.0, 3.0, 500.0, 16.0);
        let error = rank_by_yield(&fit, &bad, &options(10), 5, all).unwrap_err();
        assert!(matches!(error, YieldRankError::Mask(_)), "{error:?}");
        assert!(error.to_string().starts_with("the spec mask: "), "{error}");
        let mut negative = options(10);
        negative.by_kind.capacitor = -0.05;
        let error = rank_by_yield(&fit, &mask, &negative, 5, all).unwrap_err();
        assert!(matches!(error, YieldRankError::Tolerance { alternative: 1, .. }), "{error:?}");
    }
}
