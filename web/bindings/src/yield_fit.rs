//! Fitting ranked by yield, for the page: the fit request, a spec mask and the yield run's options
//! in; the core's yield-ranked fit out as JSON ([`bandwright::yield_rank`]).
//!
//! As in the CLI, the field is widened ([`bandwright::yield_rank::candidates_for`]) before the
//! ranking and cut back to the requested number of alternatives after it. The trials run on the
//! calling thread; the page keeps runs small (a few hundred trials) and says that it is working.

use crate::error::WebError;
use bandwright::mask::SpecMask;
use bandwright::tolerance::{Distribution, KindTolerances, ToleranceOptions, MAX_TRIALS};
use serde::Deserialize;

/// The yield run's options as the page sends them (text as typed, or numbers).
#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct YieldRun {
    /// Trials per candidate.
    pub trials: Option<serde_json::Value>,
    /// The seed.
    pub seed: Option<serde_json::Value>,
    /// "uniform" or "normal".
    pub distribution: Option<String>,
}

/// Trials per candidate when the page gives none.
pub const DEFAULT_TRIALS: usize = 200;

/// Fits `request_json` (the core's `FitRequest`), ranks the candidates by yield against
/// `mask_json` (a `SpecMask`) over the run `run_json` ([`YieldRun`]) and returns the ranked fit's
/// JSON ([`bandwright::yield_rank::YieldRankedFit::to_json`]).
///
/// # Errors
/// A field error (`field <name>: …`) for the request or the run (`yield_trials`, `yield_seed`,
/// `yield_distribution`), or the mask's, the fit's or the ranking's own message.
pub fn fit_by_yield_json(request_json: &str, mask_json: &str, run_json: &str) -> Result<String, WebError> {
    let request: bandwright::request::FitRequest = serde_json::from_str(request_json)
        .map_err(|error| WebError::general(format!("the fit request is not valid JSON of a fit request: {error}")))?;
    let mask: SpecMask = serde_json::from_str(mask_json)
        .map_err(|error| WebError::general(format!("the spec mask is not valid JSON of a spec mask: {error}")))?;
    mask.validate().map_err(|error| WebError::general(format!("the spec mask: {error}")))?;
    let run: YieldRun = serde_json::from_str(run_json)
        .map_err(|error| WebError::general(format!("the yield run's options are not valid JSON: {error}")))?;
    let options = tolerance_options(&run)?;
    let resolved = request.resolve()?;
    let keep = resolved.options.alternatives;
    let mut fit_options = resolved.options;
    fit_options.alternatives = bandwright::yield_rank::candidates_for(keep);
    let fit = bandwright::fit::fit(&resolved.requirement, resolved.topology, &fit_options)?;
    let ranked = bandwright::yield_rank::rank_by_yield(&fit, &mask, &options, keep, |plan| {
        vec![plan.run_trials(0..plan.options().trials)]
    })
    .map_err(|error| WebError::general(error.to_string()))?;
    Ok(ranked.to_json().to_string())
}

fn tolerance_options(run: &YieldRun) -> Result<ToleranceOptions, WebError> {
    let whole = |field: &'static str, value: &Option<serde_json::Value>, default: u64, max: u64| {
        let text = match value {
            None => return Ok(default),
            Some(serde_json::Value::String(s)) if s.trim().is_empty() => return Ok(default),
            Some(serde_json::Value::String(s)) => s.trim().to_string(),
            Some(other) => other.to_string(),
        };
        match text.parse::<u64>() {
            Ok(n) if n <= max => Ok(n),
            _ => Err(WebError::at_field(field, format!("{text:?} is not a whole number from 0 to {max}"))),
        }
    };
    let trials = whole("yield_trials", &run.trials, DEFAULT_TRIALS as u64, MAX_TRIALS as u64)? as usize;
    if trials == 0 {
        return Err(WebError::at_field("yield_trials", "ranking by yield needs at least 1 trial (200 is quick)"));
    }
    let seed = whole("yield_seed", &run.seed, 1, u64::MAX)?;
    let distribution = match run.distribution.as_deref().map(str::trim).unwrap_or("uniform") {
        "" | "uniform" => Distribution::Uniform,
        "normal" => Distribution::Normal,
        other => {
            return Err(WebError::at_field(
                "yield_distribution",
                format!("{other:?} is not a distribution; use uniform or normal (tolerance = 3σ)"),
            ))
        }
    };
    Ok(ToleranceOptions {
        trials,
        seed,
        distribution,
        // Fitted parts carry their series' tolerance; these fill in for parts that do not.
        by_kind: KindTolerances::USUAL,
        by_part: Vec::new(),
        band: 0.9,
        corners: false,
        pole_spread: false,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    const MASK: &str = r#"{"band": {"response": "lowpass", "passband_edge_hz": 300.0, "stopband_edge_hz": 9000.0},
        "max_passband_loss_db": 0.5, "min_stopband_attenuation_db": 37.0}"#;

    fn demo_request() -> String {
        serde_json::to_string(&crate::demo::demo_request()).unwrap()
    }

    #[test]
    fn the_demo_is_ranked_by_yield_and_kept_to_its_count() {
        let text = fit_by_yield_json(&demo_request(), MASK, r#"{"trials": "100", "seed": 3}"#).unwrap();
        let value: serde_json::Value = serde_json::from_str(&text).unwrap();
        let alternatives = value["alternatives"].as_array().unwrap();
        assert_eq!(alternatives.len(), 5, "the demo asks for 5");
        let passed: Vec<u64> =
            alternatives.iter().map(|a| a["yield"]["mask_yield"]["passed"].as_u64().unwrap()).collect();
        assert!(passed.windows(2).all(|w| w[0] >= w[1]), "{passed:?}");
        assert_eq!(value["yield_run"]["seed"], 3);
        assert!(value["ideal_design"].is_object());
    }

    #[test]
    fn bad_options_name_their_field() {
        let request = demo_request();
        let error = fit_by_yield_json(&request, MASK, r#"{"trials": "lots"}"#).unwrap_err().to_string();
        assert!(error.starts_with("field yield_trials: "), "{error}");
        let error = fit_by_yield_json(&request, MASK, r#"{"trials": 0}"#).unwrap_err().to_string();
        assert!(error.starts_with("field yield_trials: "), "{error}");
        let error = fit_by_yield_json(&request, MASK, r#"{"seed": "-1"}"#).unwrap_err().to_string();
        assert!(error.starts_with("field yield_seed: "), "{error}");
        let error = fit_by_yield_json(&request, MASK, r#"{"distribution": "lumpy"}"#).unwrap_err().to_string();
        assert!(error.starts_with("field yield_distribution: "), "{error}");
        let bad_mask = MASK.replace("9000.0", "100.0");
        let error = fit_by_yield_json(&request, &bad_mask, "{}").unwrap_err().to_string();
        assert!(error.starts_with("the spec mask: "), "{error}");
        let error = fit_by_yield_json(r#"{"cutoff": "1kk"}"#, MASK, "{}").unwrap_err().to_string();
        assert!(error.starts_with("field cutoff: "), "{error}");
    }
}
