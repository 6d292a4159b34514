//! Tolerance runs for the page: a plan from the design and the page's options, trial batches in a
//! flat form that crosses to and from Web Workers as one `Float64Array`, and the summary (the
//! envelopes, the spread of the −3 dB corners and pole Qs, and the yield against a spec mask).
//!
//! All of it is the core's `tolerance` module; this one reads the page's options, names the field
//! of a bad one, packs batches and writes JSON. Because a trial depends only on the seed and its
//! own index (see the core's module doc), any split of the trials across workers gives the same
//! summary bit for bit; the tests below check that through the flat form.
//!
//! # The flat batch
//! A batch is `[FORMAT, n_freq, n_parts, n_corners, first_trial, end_trial, count]` followed by
//! `count` records of `gain_db[n_freq], phase_deg[n_freq], group_delay_s[n_freq],
//! multipliers[n_parts], corner_hz[n_corners], n_q, q[n_q]`. Unsolved points are NaN. The
//! worst-case corners are a batch with `first_trial == end_trial == 0`.

use crate::error::WebError;
use bandwright::mask::SpecMask;
use bandwright::notation::{parse_value, Quantity};
use bandwright::sweep::FrequencyGrid;
use bandwright::tolerance::{
    Distribution, ToleranceOptions, ToleranceOrigin, TolerancePlan, TrialBatch, TrialResponse, MAX_TOLERANCE,
};
use bandwright::Design;
use serde::Deserialize;
use serde_json::{json, Value};

/// The most trials the page runs: every trial's three curves are kept until the summary, so
/// memory grows with trials × points (see [`MAX_TRIAL_POINTS`]).
pub const MAX_PAGE_TRIALS: usize = 20_000;
/// The most trials × grid points one run may hold (about 120 MB of curves).
pub const MAX_TRIAL_POINTS: usize = 5_000_000;
/// The first number of a flat batch: its format version.
pub const BATCH_FORMAT: f64 = 1.0;
const HEADER: usize = 7;

/// The page's options for a run, as typed (text fields are read here, so errors name them).
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RunRequest {
    /// Number of Monte Carlo trials, as typed.
    #[serde(default)]
    pub trials: Option<String>,
    /// The seed, as typed (a whole number from 0 to 2^64 − 1).
    #[serde(default)]
    pub seed: Option<String>,
    /// "uniform" or "normal".
    #[serde(default)]
    pub distribution: Option<String>,
    /// The central percentage of trials inside the percentile band, as typed ("90").
    #[serde(default)]
    pub band: Option<String>,
    /// Whether to evaluate the worst-case corners.
    #[serde(default)]
    pub corners: Option<bool>,
    /// Per-part tolerances in percent that replace the design's and the kind defaults.
    #[serde(default)]
    pub tolerances: std::collections::BTreeMap<String, f64>,
    /// The frequency grid in Hz (the session's, so that the bands lie on the plotted grid).
    pub f_hz: Vec<f64>,
}

/// A compiled run: the plan, the design it is for, and the batches handed in so far.
#[derive(Debug, Clone)]
pub struct Planner {
    plan: TolerancePlan,
    design: Design,
    batches: Vec<TrialBatch>,
}

/// Reads a tolerance as typed ("1", "0.5 %", "5%") into a percentage.
///
/// # Errors
/// Text that is not a number, or a value outside 0 … 100 %.
pub fn parse_tolerance_pct(text: &str) -> Result<f64, WebError> {
    let trimmed = text.trim();
    let number = trimmed.strip_suffix('%').unwrap_or(trimmed).trim_end();
    let limit = MAX_TOLERANCE * 100.0;
    let value = parse_value(number, Quantity::Ratio).map_err(|_| {
        WebError::general(format!(
            "cannot read {text:?} as a tolerance; give a percentage from 0 to {limit}, such as 1 or 0.5%"
        ))
    })?;
    if !(value.is_finite() && (0.0..=limit).contains(&value)) {
        return Err(WebError::general(format!(
            "a tolerance of {value} % is not usable; give a percentage from 0 to {limit}"
        )));
    }
    Ok(value)
}

impl RunRequest {
    /// Validates the request into core options and the grid.
    ///
    /// # Errors
    /// `field trials`, `seed`, `distribution`, `band`, `tolerance` or `f_hz`, naming the value.
    pub fn resolve(&self) -> Result<(ToleranceOptions, FrequencyGrid), WebError> {
        let text = |value: &Option<String>, default: &str| value.as_deref().unwrap_or(default).trim().to_string();
        let trials_text = text(&self.trials, "500");
        let trials = parse_value(&trials_text, Quantity::Ratio)
            .ok()
            .filter(|n| n.fract() == 0.0 && (1.0..=MAX_PAGE_TRIALS as f64).contains(n))
            .ok_or_else(|| {
                WebError::at_field(
                    "trials",
                    format!("{trials_text:?} trials is not accepted; give a whole number from 1 to {MAX_PAGE_TRIALS}"),
                )
            })? as usize;
        let seed_text = text(&self.seed, "1");
        let seed = seed_text.parse::<u64>().map_err(|_| {
            WebError::at_field(
                "seed",
                format!("{seed_text:?} is not a seed; give a whole number from 0 to {}", u64::MAX),
            )
        })?;
        let distribution = match text(&self.distribution, "uniform").to_ascii_lowercase().as_str() {
            "uniform" => Distribution::Uniform,
            "normal" => Distribution::Normal,
            other => {
                return Err(WebError::at_field(
                    "distribution",
                    format!("{other:?} is not a distribution; use uniform or normal (tolerance = 3σ)"),
                ))
            }
        };
        let band_text = text(&self.band, "90");
        let band_number = band_text.strip_suffix('%').unwrap_or(&band_text).trim_end();
        let band = parse_value(band_number, Quantity::Ratio)
            .ok()
            .filter(|b| b.is_finite() && *b > 0.0 && *b < 100.0)
            .ok_or_else(|| {
                WebError::at_field(
                    "band",
                    format!("{band_text:?} is not a percentile band; give the central percentage of trials, above 0 and below 100 (90 for 5 % to 95 %)"),
                )
            })?;
        let limit = MAX_TOLERANCE * 100.0;
        let mut by_part = Vec::new();
        for (reference, &pct) in &self.tolerances {
            if !(pct.is_finite() && (0.0..=limit).contains(&pct)) {
                return Err(WebError::at_field(
                    "tolerance",
                    format!("{reference}: a tolerance of {pct} % is not usable; give a percentage from 0 to {limit}"),
                ));
            }
            by_part.push((reference.clone(), pct / 100.0));
        }
        let grid =
            FrequencyGrid::list(self.f_hz.clone()).map_err(|error| WebError::at_field("f_hz", error.to_string()))?;
        if trials.saturating_mul(grid.len()) > MAX_TRIAL_POINTS {
            return Err(WebError::at_field(
                "trials",
                format!(
                    "{trials} trials of {} points each is more than the page holds ({MAX_TRIAL_POINTS} trial points); use fewer trials or fewer points",
                    grid.len()
                ),
            ));
        }
        let options = ToleranceOptions {
            trials,
            seed,
            distribution,
            band: band / 100.0,
            corners: self.corners.unwrap_or(true),
            by_part,
            ..ToleranceOptions::default()
        };
        Ok((options, grid))
    }
}

impl Planner {
    /// Compiles a run of `design_json` with the page's `request_json` ([`RunRequest`]).
    ///
    /// # Errors
    /// Bad JSON, a field error from [`RunRequest::resolve`], or the core's tolerance error (a
    /// per-part tolerance for a part the design does not have, nothing varies, ...).
    pub fn new(design_json: &str, request_json: &str) -> Result<Self, WebError> {
        let design = bandwright::parse_design(design_json)?;
        let request: RunRequest = serde_json::from_str(request_json)
            .map_err(|error| WebError::general(format!("the tolerance options are not valid: {error}")))?;
        let (options, grid) = request.resolve()?;
        let plan = TolerancePlan::for_design(&design, &grid, &options).map_err(|error| match error {
            bandwright::tolerance::ToleranceError::UnknownPart { .. }
            | bandwright::tolerance::ToleranceError::BadTolerance { .. } => {
                WebError::at_field("tolerance", error.to_string())
            }
            other => WebError::general(other.to_string()),
        })?;
        Ok(Self { plan, design, batches: Vec::new() })
    }

    /// The run as the page shows it before it starts: trials, seed, distribution, band, corners
    /// and each varied part with its tolerance (percent) and where that came from.
    pub fn describe(&self) -> Value {
        let options = self.plan.options();
        let parts: Vec<Value> = self
            .plan
            .parts()
            .iter()
            .map(|part| {
                json!({
                    "ref": part.reference,
                    "kind": part.kind,
                    "nominal": part.nominal,
                    "tolerance_pct": part.tolerance * 100.0,
                    "origin": origin_key(part.origin),
                    "origin_text": origin_text(part.origin),
                })
            })
            .collect();
        json!({
            "trials": options.trials,
            "seed": options.seed.to_string(),
            "distribution": options.distribution.describe(),
            "band_pct": [short_pct(50.0 * (1.0 - options.band)), short_pct(50.0 * (1.0 + options.band))],
            "corners": options.corners,
            "points": self.plan.frequencies().len(),
            "parts": parts,
        })
    }

    /// Runs trials `first..end` (clamped to the plan's trials) and returns them flat.
    pub fn run_trials(&self, first: usize, end: usize) -> Vec<f64> {
        let total = self.plan.options().trials;
        let end = end.min(total);
        let first = first.min(end);
        encode(&self.plan, &self.plan.run_trials(first..end))
    }

    /// Evaluates the worst-case corners and returns them flat (an empty batch when corners are
    /// off).
    pub fn run_corners(&self) -> Vec<f64> {
        if self.plan.options().corners {
            encode(&self.plan, &self.plan.run_corners())
        } else {
            encode(&self.plan, &TrialBatch { trials: 0..0, ..empty_batch() })
        }
    }

    /// Takes a flat batch (from this planner or one made with the same design and options in a
    /// worker) for the summary.
    ///
    /// # Errors
    /// A batch of another format or plan, a cut-off batch, or trials already handed in.
    pub fn add_batch(&mut self, data: &[f64]) -> Result<(), WebError> {
        let batch = decode(&self.plan, data)?;
        if !batch.trials.is_empty() {
            let overlap =
                self.batches.iter().find(|b| b.trials.start < batch.trials.end && batch.trials.start < b.trials.end);
            if let Some(other) = overlap {
                return Err(WebError::general(format!(
                    "trials {}..{} overlap trials {}..{} handed in before; each trial is counted once",
                    batch.trials.start, batch.trials.end, other.trials.start, other.trials.end
                )));
            }
        } else if self.batches.iter().any(|b| b.trials.is_empty()) {
            return Err(WebError::general("the corners were handed in already; they are counted once"));
        }
        self.batches.push(batch);
        Ok(())
    }

    /// How many trials have been handed in.
    pub fn trials_done(&self) -> usize {
        self.batches.iter().map(|b| b.trials.len()).sum()
    }

    /// The summary as JSON: the core's report (seed, trials, corners, distribution, band, parts,
    /// `f_hz`, the `gain_db`, `phase_deg` and `group_delay_s` envelopes with `nominal`, `min`,
    /// `max`, `low`, `high`, the `corner_hz` and `q` spreads), plus `mask_yield` (or null) and
    /// `design` (the design it is for, so that a session can tell when it no longer applies).
    /// Non-finite numbers are null.
    ///
    /// # Errors
    /// Trials still missing, or a mask that is not a valid spec mask or does not fit the grid
    /// (`field mask`).
    pub fn summarize(&self, mask_json: Option<&str>) -> Result<Value, WebError> {
        let total = self.plan.options().trials;
        let done = self.trials_done();
        if done != total {
            return Err(WebError::general(format!("only {done} of {total} trials have run; run the rest first")));
        }
        if self.plan.options().corners && !self.batches.iter().any(|b| b.trials.is_empty()) {
            return Err(WebError::general("the worst-case corners have not run; run them first"));
        }
        // The core merges batches in the order given; sort so that any split gives one order.
        let mut batches = self.batches.clone();
        batches.sort_by_key(|b| (b.trials.is_empty(), b.trials.start));
        let report = self.plan.summarize(&batches);
        let mask_yield = match mask_json.map(str::trim).filter(|t| !t.is_empty() && *t != "null") {
            Some(text) => {
                let mask: SpecMask = serde_json::from_str(text)
                    .map_err(|error| WebError::at_field("mask", format!("not a spec mask: {error}")))?;
                mask.validate().map_err(|error| WebError::at_field("mask", error.to_string()))?;
                let found = self
                    .plan
                    .mask_yield(&batches, &mask)
                    .map_err(|error| WebError::at_field("mask", error.to_string()))?;
                serde_json::to_value(found).expect("plain values")
            }
            None => Value::Null,
        };
        let mut value = serde_json::to_value(&report).expect("plain values");
        value["formatted"] = formatted(&report, &mask_yield);
        value["mask_yield"] = mask_yield;
        value["design"] = serde_json::to_value(&self.design).expect("a design serializes");
        Ok(value)
    }
}

/// The shaded bands of a summary, kept by a session: min/max and percentile edges of magnitude,
/// phase and group delay over the run's grid, and the design they are for.
#[derive(Debug, Clone, PartialEq)]
pub struct ToleranceBands {
    design: Design,
    /// The run's grid in Hz.
    pub f_hz: Vec<f64>,
    /// Per quantity (gain dB, phase °, group delay s): `[min, max, low, high]`.
    edges: [[Vec<Option<f64>>; 4]; 3],
    /// Legend texts of the min/max band and of the percentile band.
    pub labels: (String, String),
}

/// Whether a session's bands apply to its working design.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum BandState {
    /// No summary was handed in.
    None,
    /// Drawn: the summary is for the working design.
    Shown,
    /// Not drawn: the design changed since the run.
    Stale,
}

impl ToleranceBands {
    /// Reads the bands out of a summary made by [`Planner::summarize`].
    ///
    /// # Errors
    /// JSON that is not such a summary.
    pub fn from_summary(summary_json: &str) -> Result<Self, WebError> {
        let bad = |what: &str| WebError::general(format!("this tolerance summary cannot be drawn: {what}"));
        let value: Value = serde_json::from_str(summary_json).map_err(|_| bad("it is not JSON"))?;
        let design: Design = serde_json::from_value(value["design"].clone())
            .map_err(|_| bad("it does not say which design it is for"))?;
        let numbers = |v: &Value| -> Option<Vec<Option<f64>>> {
            v.as_array().map(|items| items.iter().map(|x| x.as_f64().filter(|x| x.is_finite())).collect())
        };
        let f_hz: Vec<f64> = numbers(&value["f_hz"])
            .ok_or_else(|| bad("it has no frequencies"))?
            .into_iter()
            .map(|f| f.unwrap_or(f64::NAN))
            .collect();
        let mut edges: [[Vec<Option<f64>>; 4]; 3] = Default::default();
        for (slot, quantity) in edges.iter_mut().zip(["gain_db", "phase_deg", "group_delay_s"]) {
            for (edge, key) in slot.iter_mut().zip(["min", "max", "low", "high"]) {
                *edge = numbers(&value[quantity][key])
                    .filter(|e| e.len() == f_hz.len())
                    .ok_or_else(|| bad(&format!("{quantity}.{key} is missing or of the wrong length")))?;
            }
        }
        let band = |i: usize| value["band"][i].as_f64().map(|x| 100.0 * x).filter(|x| x.is_finite());
        let band_pct = (
            band(0).ok_or_else(|| bad("it has no percentile band"))?,
            band(1).ok_or_else(|| bad("it has no percentile band"))?,
        );
        let labels =
            ("spread min…max".to_string(), format!("spread {}…{} %", short_pct(band_pct.0), short_pct(band_pct.1)));
        Ok(Self { design, f_hz, edges, labels })
    }

    /// Whether these bands were run on `design` (its name and note aside).
    pub fn applies_to(&self, design: &Design) -> bool {
        let plain = |d: &Design| Design { name: String::new(), note: String::new(), ..d.clone() };
        plain(&self.design) == plain(design)
    }

    /// `[min, max, low, high]` of a plotted quantity, or `None` for one the run does not cover.
    pub fn edges(&self, quantity: bandwright_plot::Quantity) -> Option<&[Vec<Option<f64>>; 4]> {
        match quantity {
            bandwright_plot::Quantity::MagnitudeDb => Some(&self.edges[0]),
            bandwright_plot::Quantity::PhaseDeg => Some(&self.edges[1]),
            bandwright_plot::Quantity::GroupDelayS => Some(&self.edges[2]),
            _ => None,
        }
    }
}

impl BandState {
    /// The name the page reads.
    pub fn name(self) -> &'static str {
        match self {
            BandState::None => "none",
            BandState::Shown => "shown",
            BandState::Stale => "stale",
        }
    }
}

/// The summary as the page shows it: `{run, spreads: [{label, text}], yield}` (yield is null
/// without a mask).
fn formatted(report: &bandwright::tolerance::ToleranceReport, mask_yield: &Value) -> Value {
    use bandwright::notation::format_quantity;
    let pct = |x: f64| short_pct(100.0 * x);
    let corners = if report.corners > 0 {
        format!(" and {} worst-case corners", report.corners)
    } else {
        " (worst-case corners off)".to_string()
    };
    let run = format!(
        "{} trials{corners}, seed {}, {}; shaded: all trials, and the middle {}…{} %",
        report.trials,
        report.seed,
        report.distribution,
        pct(report.band.0),
        pct(report.band.1)
    );
    let line = |spread: &bandwright::tolerance::Spread, show: &dyn Fn(f64) -> String| {
        let relative = if spread.mean != 0.0 && spread.mean.is_finite() {
            format!(" ({:.2} %)", 100.0 * spread.std_dev / spread.mean.abs())
        } else {
            String::new()
        };
        let mut text = format!(
            "nominal {} · {}…{} %: {} to {} · all: {} to {} · σ {}{relative}",
            show(spread.nominal),
            pct(report.band.0),
            pct(report.band.1),
            show(spread.low),
            show(spread.high),
            show(spread.min),
            show(spread.max),
            show(spread.std_dev),
        );
        if spread.missing > 0 {
            text.push_str(&format!(" · not found in {} trials", spread.missing));
        }
        text
    };
    let finite = |x: f64, f: &dyn Fn(f64) -> String| if x.is_finite() { f(x) } else { "—".to_string() };
    let hz = |x: f64| finite(x, &|x| format_quantity(x, Quantity::Frequency, 4));
    let plain = |x: f64| finite(x, &|x| format!("{x:.3}"));
    let mut spreads = Vec::new();
    for (edge, spread) in &report.corner_hz {
        spreads.push(json!({"label": format!("−3 dB ({edge})"), "text": line(spread, &hz)}));
    }
    for (i, spread) in report.q.iter().enumerate() {
        spreads.push(json!({"label": format!("Q of pole pair {}", i + 1), "text": line(spread, &plain)}));
    }
    if spreads.is_empty() {
        spreads.push(json!({"label": "spread", "text": "no −3 dB corner in the sweep and no complex pole pair"}));
    }
    let yield_text = mask_yield.as_object().map(|y| {
        let number = |key: &str| y.get(key).and_then(Value::as_u64).unwrap_or(0);
        let (passed, trials) = (number("passed"), number("trials"));
        let nominal = &y["nominal"];
        format!(
            "{passed} of {trials} trials meet the spec mask ({:.1} %); the nominal design {} it, worst margin {} dB at {}",
            100.0 * passed as f64 / trials.max(1) as f64,
            if nominal["pass"].as_bool() == Some(true) { "meets" } else { "fails" },
            plain(nominal["worst_margin_db"].as_f64().unwrap_or(f64::NAN)),
            hz(nominal["worst_f_hz"].as_f64().unwrap_or(f64::NAN)),
        )
    });
    json!({"run": run, "spreads": spreads, "yield": yield_text})
}

/// A percentage rounded to 6 decimals, so that 0.05 × 100 reads 5, not 5.000000000000001.
fn short_pct(x: f64) -> f64 {
    (x * 1e6).round() / 1e6
}

fn origin_key(origin: ToleranceOrigin) -> &'static str {
    match origin {
        ToleranceOrigin::Kind => "kind",
        ToleranceOrigin::Design => "design",
        ToleranceOrigin::Given => "given",
    }
}

fn origin_text(origin: ToleranceOrigin) -> &'static str {
    match origin {
        ToleranceOrigin::Kind => "usual for its kind",
        ToleranceOrigin::Design => "from its series",
        ToleranceOrigin::Given => "set here",
    }
}

fn empty_batch() -> TrialBatch {
    TrialBatch { trials: 0..0, responses: Vec::new(), multipliers: Vec::new(), corner_hz: Vec::new(), q: Vec::new() }
}

/// Packs a batch (see the module doc).
pub fn encode(plan: &TolerancePlan, batch: &TrialBatch) -> Vec<f64> {
    let n_freq = plan.frequencies().len();
    let n_parts = plan.parts().len();
    let n_corners = batch.corner_hz.first().map_or(0, Vec::len);
    let mut out = Vec::with_capacity(HEADER + batch.responses.len() * (3 * n_freq + n_parts + n_corners + 4));
    out.extend([
        BATCH_FORMAT,
        n_freq as f64,
        n_parts as f64,
        n_corners as f64,
        batch.trials.start as f64,
        batch.trials.end as f64,
        batch.responses.len() as f64,
    ]);
    for (i, response) in batch.responses.iter().enumerate() {
        out.extend_from_slice(&response.gain_db);
        out.extend_from_slice(&response.phase_deg);
        out.extend_from_slice(&response.group_delay_s);
        out.extend_from_slice(&batch.multipliers[i]);
        out.extend_from_slice(&batch.corner_hz[i]);
        out.push(batch.q[i].len() as f64);
        out.extend_from_slice(&batch.q[i]);
    }
    out
}

/// Unpacks a batch made by [`encode`] for a plan like `plan`.
///
/// # Errors
/// A batch of another format, grid, part count or corner count, or one cut short.
pub fn decode(plan: &TolerancePlan, data: &[f64]) -> Result<TrialBatch, WebError> {
    let bad = |what: &str| WebError::general(format!("this trial batch cannot be read: {what}"));
    if data.len() < HEADER || data[0] != BATCH_FORMAT {
        return Err(bad("it is not a batch of this version of the page"));
    }
    let whole = |x: f64| (x.is_finite() && x >= 0.0 && x.fract() == 0.0 && x <= 1e12).then_some(x as usize);
    let field = |i: usize| whole(data[i]).ok_or_else(|| bad("its header is damaged"));
    let (n_freq, n_parts, n_corners) = (field(1)?, field(2)?, field(3)?);
    let (first, end, count) = (field(4)?, field(5)?, field(6)?);
    if n_freq != plan.frequencies().len() || n_parts != plan.parts().len() {
        return Err(bad("it was made for another grid or design; run again"));
    }
    if end < first || (end > first && end - first != count) || end > plan.options().trials {
        return Err(bad("its trial range does not match its size"));
    }
    let mut batch = TrialBatch { trials: first..end, ..empty_batch() };
    let mut at = HEADER;
    let mut take = |n: usize| -> Result<Vec<f64>, WebError> {
        let slice = data.get(at..at + n).ok_or_else(|| bad("it is cut short"))?;
        at += n;
        Ok(slice.to_vec())
    };
    for _ in 0..count {
        let gain = take(n_freq)?;
        let phase = take(n_freq)?;
        let delay = take(n_freq)?;
        batch.responses.push(TrialResponse::from_values(gain, phase, delay));
        batch.multipliers.push(take(n_parts)?);
        batch.corner_hz.push(take(n_corners)?);
        let n_q =
            whole(take(1)?[0]).filter(|&n| n <= 4 * n_freq.max(64)).ok_or_else(|| bad("its pole list is damaged"))?;
        batch.q.push(take(n_q)?);
    }
    if at != data.len() {
        return Err(bad("it has data past its last trial"));
    }
    Ok(batch)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The demo (a 3-stage RC ladder, scenario of our own) on a short grid.
    fn demo_json() -> String {
        crate::demo::demo_design().unwrap().to_json()
    }

    fn request(extra: Value) -> String {
        let grid: Vec<f64> =
            FrequencyGrid::log(10.0, 100e3, bandwright::sweep::Spacing::Points(60)).unwrap().frequencies().to_vec();
        let mut value = json!({"trials": "40", "seed": "7", "f_hz": grid});
        for (key, item) in extra.as_object().unwrap() {
            value[key] = item.clone();
        }
        value.to_string()
    }

    /// Runs the whole plan in `splits` (trial ranges), corners last, and summarises.
    fn run_split(planner: &mut Planner, splits: &[(usize, usize)]) -> Value {
        for &(a, b) in splits {
            let data = planner.run_trials(a, b);
            planner.add_batch(&data).unwrap();
        }
        let corners = planner.run_corners();
        planner.add_batch(&corners).unwrap();
        planner.summarize(None).unwrap()
    }

    #[test]
    fn any_split_of_the_trials_gives_the_same_summary() {
        let mut one = Planner::new(&demo_json(), &request(json!({}))).unwrap();
        let whole = run_split(&mut one, &[(0, 40)]);
        let mut many = Planner::new(&demo_json(), &request(json!({}))).unwrap();
        let split = run_split(&mut many, &[(25, 40), (0, 3), (3, 25)]);
        assert_eq!(whole, split);
        // The same as the core's own run, with nothing packed: the flat form loses nothing the
        // summary reads.
        let direct = serde_json::to_value(one.plan.run()).unwrap();
        for key in ["gain_db", "phase_deg", "group_delay_s", "corner_hz", "q", "seed", "trials", "corners"] {
            assert_eq!(whole[key], direct[key], "{key}");
        }
        assert_eq!(whole["trials"], 40);
        assert!(whole["corners"].as_u64().unwrap() > 0);
        // Another seed gives another band.
        let mut other = Planner::new(&demo_json(), &request(json!({"seed": "8"}))).unwrap();
        let different = run_split(&mut other, &[(0, 40)]);
        assert_ne!(whole["gain_db"]["high"], different["gain_db"]["high"]);
    }

    #[test]
    fn the_band_lies_around_the_nominal_and_inside_min_max() {
        let mut planner = Planner::new(&demo_json(), &request(json!({"distribution": "normal"}))).unwrap();
        let report = run_split(&mut planner, &[(0, 40)]);
        assert_eq!(report["distribution"], "normal (tolerance = 3σ)");
        let column = |q: &str, k: &str| -> Vec<f64> {
            report[q][k].as_array().unwrap().iter().map(|v| v.as_f64().unwrap()).collect()
        };
        for quantity in ["gain_db", "phase_deg", "group_delay_s"] {
            let (min, low, high, max) =
                (column(quantity, "min"), column(quantity, "low"), column(quantity, "high"), column(quantity, "max"));
            for k in 0..min.len() {
                assert!(min[k] <= low[k] && low[k] <= high[k] && high[k] <= max[k], "{quantity} at {k}");
            }
        }
        // The demo's one falling corner near 1 kHz, spread a little either way.
        let corner = &report["corner_hz"][0];
        assert_eq!(corner[0], "falling");
        let (min, max) = (corner[1]["min"].as_f64().unwrap(), corner[1]["max"].as_f64().unwrap());
        assert!(min < 1000.0 && max > 1000.0 && max / min < 1.5, "{min} … {max}");
        assert_eq!(report["design"]["name"], crate::demo::DEMO_NAME);
        let formatted = &report["formatted"];
        assert!(formatted["run"].as_str().unwrap().starts_with("40 trials and "), "{formatted}");
        assert!(formatted["run"].as_str().unwrap().contains("seed 7, normal (tolerance = 3σ)"), "{formatted}");
        assert_eq!(formatted["spreads"][0]["label"], "−3 dB (falling)");
        assert!(formatted["spreads"][0]["text"].as_str().unwrap().starts_with("nominal 998."), "{formatted}");
    }

    #[test]
    fn the_description_names_each_part_and_where_its_tolerance_came_from() {
        let planner = Planner::new(&demo_json(), &request(json!({"tolerances": {"R1": 0.1}}))).unwrap();
        let description = planner.describe();
        let parts = description["parts"].as_array().unwrap();
        let r1 = parts.iter().find(|p| p["ref"] == "R1").unwrap();
        assert_eq!(r1["origin"], "given");
        assert!((r1["tolerance_pct"].as_f64().unwrap() - 0.1).abs() < 1e-12);
        // The demo was fitted from E24 resistors and E12 capacitors: 5 % and 10 % from its series
        // (IEC 60063 tolerances, written by the fit).
        let c1 = parts.iter().find(|p| p["ref"] == "C1").unwrap();
        assert_eq!(c1["origin"], "design");
        assert_eq!(description["seed"], "7");
        assert_eq!(description["band_pct"], json!([5.0, 95.0]));
    }

    #[test]
    fn bad_options_name_their_field() {
        for (extra, field) in [
            (json!({"trials": "0"}), "field trials: "),
            (json!({"trials": "2.5"}), "field trials: "),
            (json!({"trials": "1e9"}), "field trials: "),
            (json!({"seed": "-1"}), "field seed: "),
            (json!({"seed": "abc"}), "field seed: "),
            (json!({"distribution": "cauchy"}), "field distribution: "),
            (json!({"band": "100"}), "field band: "),
            (json!({"band": "x"}), "field band: "),
            (json!({"tolerances": {"R1": -1.0}}), "field tolerance: R1"),
            (json!({"tolerances": {"R9": 1.0}}), "field tolerance: "),
            (json!({"f_hz": []}), "field f_hz: "),
            (
                json!({"trials": "20000", "f_hz": FrequencyGrid::log(1.0, 1e5, bandwright::sweep::Spacing::Points(500)).unwrap().frequencies()}),
                "field trials: ",
            ),
        ] {
            let error = Planner::new(&demo_json(), &request(extra.clone())).unwrap_err().to_string();
            assert!(error.starts_with(field), "{extra}: {error}");
        }
        assert!(parse_tolerance_pct("-2").unwrap_err().to_string().contains("from 0 to 100"));
        assert!(parse_tolerance_pct("lots").unwrap_err().to_string().contains("cannot read"));
        assert_eq!(parse_tolerance_pct(" 0.5 % ").unwrap(), 0.5);
        assert_eq!(parse_tolerance_pct("5%").unwrap(), 5.0);
    }

    #[test]
    fn damaged_duplicate_or_missing_batches_are_refused() {
        let mut planner = Planner::new(&demo_json(), &request(json!({}))).unwrap();
        let data = planner.run_trials(0, 20);
        assert!(planner.add_batch(&data[..data.len() - 1]).unwrap_err().to_string().contains("cut short"));
        let mut extra = data.clone();
        extra.push(0.0);
        assert!(planner.add_batch(&extra).unwrap_err().to_string().contains("past its last"));
        assert!(planner.add_batch(&[2.0; 7]).unwrap_err().to_string().contains("not a batch"));
        planner.add_batch(&data).unwrap();
        assert!(planner.add_batch(&planner.run_trials(10, 30)).unwrap_err().to_string().contains("overlap"));
        assert!(planner.summarize(None).unwrap_err().to_string().contains("only 20 of 40"));
        planner.add_batch(&planner.run_trials(20, 40)).unwrap();
        assert!(planner.summarize(None).unwrap_err().to_string().contains("corners"));
        // A batch from a plan on another grid.
        let other = Planner::new(&demo_json(), &json!({"f_hz": [100.0, 1000.0]}).to_string()).unwrap();
        assert!(planner.add_batch(&other.run_trials(0, 2)).unwrap_err().to_string().contains("another grid"));
    }

    #[test]
    fn the_yield_counts_trials_inside_a_mask() {
        let mut planner = Planner::new(&demo_json(), &request(json!({}))).unwrap();
        run_split(&mut planner, &[(0, 40)]);
        // A loose low-pass mask around the demo's 1 kHz corner: 6 dB loss allowed to 300 Hz, 20 dB
        // needed from 20 kHz (our own numbers). The demo passes it easily; every trial should.
        let loose = json!({"band": {"response": "lowpass", "passband_edge_hz": 300.0, "stopband_edge_hz": 20000.0},
                           "max_passband_loss_db": 6.0, "min_stopband_attenuation_db": 20.0});
        let report = planner.summarize(Some(&loose.to_string())).unwrap();
        assert_eq!(report["mask_yield"]["trials"], 40);
        assert_eq!(report["mask_yield"]["passed"], 40);
        // A tight one (0.01 dB to 900 Hz) nobody meets.
        let tight = json!({"band": {"response": "lowpass", "passband_edge_hz": 900.0, "stopband_edge_hz": 20000.0},
                           "max_passband_loss_db": 0.01, "min_stopband_attenuation_db": 20.0});
        let report = planner.summarize(Some(&tight.to_string())).unwrap();
        assert_eq!(report["mask_yield"]["passed"], 0);
        let text = report["formatted"]["yield"].as_str().unwrap();
        assert!(text.starts_with("0 of 40 trials meet the spec mask (0.0 %)"), "{text}");
        assert!(planner.summarize(None).unwrap()["mask_yield"].is_null());
        assert!(planner.summarize(None).unwrap()["formatted"]["yield"].is_null());
        assert!(planner.summarize(Some("{}")).unwrap_err().to_string().starts_with("field mask: "));
    }

    #[test]
    fn an_rc_low_pass_spreads_as_its_closed_form_says() {
        // RC low-pass, 1 kΩ and 100 nF from an ideal source: fc = 1/(2πRC) (the textbook first-order
        // formula, common practice). Only R varies, uniformly by ±10 %, so fc = fc0/(1 + 0.1·u) with
        // u uniform on [−1, 1]: its extremes are fc0/1.1 and fc0/0.9 (the worst-case corners reach
        // them exactly), and its mean is fc0·ln(1.1/0.9)/0.2 (integrating 1/(1 + t·u) over u, computed).
        let rc = r#"{"format": "bandwright-design", "version": 1, "name": "rc",
            "source": {"node": "in", "resistance": 0}, "output": "out",
            "elements": [{"ref": "R1", "kind": "resistor", "value": "1k", "nodes": ["in", "out"]},
                         {"ref": "C1", "kind": "capacitor", "value": "100n", "nodes": ["out", "0"]}]}"#;
        let grid: Vec<f64> =
            FrequencyGrid::log(10.0, 1e5, bandwright::sweep::Spacing::Points(200)).unwrap().frequencies().to_vec();
        let options = json!({"trials": "4000", "seed": "11", "tolerances": {"R1": 10.0, "C1": 0.0}, "f_hz": grid});
        let mut planner = Planner::new(rc, &options.to_string()).unwrap();
        let report = run_split(&mut planner, &[(0, 1500), (1500, 4000)]);
        let fc0 = 1.0 / (2.0 * std::f64::consts::PI * 1e3 * 100e-9);
        let spread = &report["corner_hz"][0][1];
        let value = |key: &str| spread[key].as_f64().unwrap();
        // The core finds a corner by a cubic in (ln f, dB) between grid points 4.7 % apart, which
        // is good to about 4e-5 here; 1e-4 relative allows for that, and no more.
        assert!((value("nominal") / fc0 - 1.0).abs() < 1e-4, "{}", value("nominal"));
        assert!((value("min") / (fc0 / 1.1) - 1.0).abs() < 1e-4, "{}", value("min"));
        assert!((value("max") / (fc0 / 0.9) - 1.0).abs() < 1e-4, "{}", value("max"));
        // σ of fc is about 0.058·fc0, so the mean of 4000 trials is within 4 standard errors (0.4 %).
        let mean = fc0 * (1.1f64 / 0.9).ln() / 0.2;
        assert!((value("mean") / mean - 1.0).abs() < 4e-3, "{} vs {mean}", value("mean"));
    }
}
