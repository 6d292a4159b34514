//! Fitting a requirement to purchasable parts: ideal values, a search over standard values (and
//! optionally two-part series or parallel pairs), and an honest account of what the rounded
//! parts achieve.
//!
//! # What is searched, and the objective
//!
//! - **RC and RL first-order sections** (low-pass and high-pass). The impedance level is free:
//!   every single resistor value in the allowed range is tried, and for each one the reactive part
//!   takes the candidates nearest its ideal value (singles, and pairs when allowed). A series
//!   resistor into a load is kept at most a tenth of the load resistance. The objective
//!   is the relative error of the pole (cutoff) frequency, computed in closed form including the
//!   source resistance, load resistance and (for the RC low-pass) load capacitance.
//! - **RLC second-order sections** (low-pass, high-pass, band-pass, notch; series input form).
//!   Every single inductor value whose characteristic impedance ω0·L lies in the resistor range is
//!   tried; for each, every single capacitor within a factor of 4 of an exact solution, of the
//!   value that gives f0 with no resistor, and of the value for the largest series resistance
//!   (R_t ≤ R_s + 10·R_L with a load: about 21 dB of insertion loss at most); for each of those,
//!   no resistor, and every single resistor within a factor of 4 of each resistance that gives
//!   the exact Q (Q need not be monotone in R), or every resistor in range when no R gives the
//!   exact Q or when f0 moves with R (low-pass and high-pass with a load) (explicit resistors start at a hundredth of the range's low end). The
//!   objective is √(e_f0² + e_Q²) with relative errors, in closed form including Rs, RL and (low-pass)
//!   the load capacitance.
//! - **LC ladders.** Terminations are fixed by the requirement, so each element has one ideal
//!   value. Each element keeps its `CANDIDATES_PER_ELEMENT` nearest candidates; the
//!   `LADDER_POOL` assignments with the smallest Σ ln²(chosen/ideal) are enumerated exactly
//!   (best-first over sorted lists), swept by MNA, and ranked by the worst response deviation.
//!
//! For every alternative the worst response deviation is measured by sweeping the fitted circuit
//! and the ideal circuit with the core's MNA over the **deviation band**: low-pass [fc/10, 3·fc],
//! high-pass [fc/3, 10·fc], band-pass and notch [f_low/3, 3·f_high] (passband plus transition
//! band; common practice for judging a fit, not a standard), at frequencies where the ideal
//! response is within `DEVIATION_FLOOR_DB` of its peak.
//!
//! Closed forms (derived here from the series impedance Z_s and shunt admittance Y_p of each form,
//! H = 1/(1 + Z_s·Y_p); R_t = R_s + R, G = 1/R_L, C′ = C + C_L):
//! - RC low-pass: f_c = 1/(2π·((R_s + R) ∥ R_L)·C′).
//! - RC high-pass: f_c = 1/(2π·(R_s + R ∥ R_L)·C) (no load capacitance).
//! - RL low-pass: f_c = (R_s + R ∥ R_L)/(2π·L); RL high-pass: f_c = ((R_s + R) ∥ R_L)/(2π·L).
//! - RLC low-pass: D = LC′s² + (LG + R_tC′)s + (1 + R_tG).
//! - RLC high-pass: D = LC(1 + R_tG)s² + (CR_t + GL)s + 1.
//! - RLC band-pass (series R–L–C into R_L): D = LCs² + C(R_t + R_L)s + 1.
//! - RLC notch (series R_t, shunt series L–C, load R_L): D = LC(1 + R_tG)s² + CR_ts + (1 + R_tG).
//!
//! and for D = a·s² + b·s + c: ω0 = √(c/a), Q = √(a·c)/b.

use crate::design::{Design, Load, Part, Source, FORMAT, VERSION};
use crate::eseries::PartValues;
use crate::ladder::{FirstElement, LadderOptions, Termination};
use crate::mna::{AcSystem, Detail};
use crate::prototype::{lowpass_prototype, Section};
use crate::response::Response;
use crate::sweep::{sweep, FrequencyGrid, Spacing};
use crate::synthesis::{Alignment, Band, ResponseType, SynthesisError};
use std::collections::{BinaryHeap, HashSet};
use std::f64::consts::PI;

/// How many nearest candidates each ladder element keeps.
pub const CANDIDATES_PER_ELEMENT: usize = 6;
/// How many of the best single-part RLC solutions are refined with two-part pairs.
pub const PAIR_REFINEMENT: usize = 32;
/// How many ladder assignments are swept and ranked by response deviation.
pub const LADDER_POOL: usize = 64;
/// Response deviation is measured only where the ideal response is within this many dB of its
/// peak, so that a deep stopband or a notch's null does not swamp the figure.
pub const DEVIATION_FLOOR_DB: f64 = 40.0;
/// Points per decade of the deviation sweep.
pub const DEVIATION_POINTS_PER_DECADE: f64 = 40.0;

/// Which realization to fit.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Topology {
    /// A first-order RC section.
    Rc,
    /// A first-order RL section.
    Rl,
    /// A second-order RLC section, with a series or a shunt element next to the source.
    Rlc(RlcForm),
    /// An LC ladder.
    Ladder(FirstElement),
    /// A cascade of op-amp RC sections (low-pass and high-pass), with the op-amp model of every
    /// section.
    Active(crate::active::ActiveTopology, crate::active::OpAmp),
}

/// Which element of a second-order RLC section sits next to the source (after the resistor).
///
/// | response | series first | shunt first |
/// |---|---|---|
/// | low-pass | series L, shunt C at the output | shunt C, then series L to the load (needs a load) |
/// | high-pass | series C, shunt L at the output | shunt L, then series C to the load (needs a load) |
/// | band-pass | series L–C to the load (needs a load) | parallel L ∥ C tank across the output |
/// | band-stop | parallel L ∥ C tank in series to the load (needs a load) | series L–C trap to ground |
///
/// [`RlcForm::default_for`] gives the form that works with any terminations.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum RlcForm {
    /// A series element first.
    Series,
    /// A shunt element first.
    Shunt,
}

impl RlcForm {
    /// Series first for low-pass, high-pass and band-pass; shunt first (the trap) for band-stop.
    pub fn default_for(response: ResponseType) -> Self {
        match response {
            ResponseType::BandStop => RlcForm::Shunt,
            _ => RlcForm::Series,
        }
    }

    /// Whether this form of `response` needs a resistive load to be second order.
    pub fn needs_load(self, response: ResponseType) -> bool {
        matches!(
            (self, response),
            (RlcForm::Shunt, ResponseType::LowPass | ResponseType::HighPass)
                | (RlcForm::Series, ResponseType::BandPass | ResponseType::BandStop)
        )
    }

    fn name(self) -> &'static str {
        match self {
            RlcForm::Series => "series element first",
            RlcForm::Shunt => "shunt element first",
        }
    }
}

/// Whether a part may be made of two standard parts.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Combine {
    /// One standard part per position.
    Single,
    /// One part, or two in series or in parallel.
    Pairs,
}

/// How a chosen value is made.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Arrangement {
    /// One part.
    Single,
    /// Two parts in series.
    Series,
    /// Two parts in parallel.
    Parallel,
}

/// A purchasable value: one part or a pair.
#[derive(Debug, Clone, PartialEq)]
pub struct Choice {
    /// The effective value in SI units.
    pub value: f64,
    /// The one or two part values.
    pub parts: Vec<f64>,
    /// How they are connected.
    pub arrangement: Arrangement,
}

/// The value sets to choose from, per part type.
#[derive(Debug, Clone, PartialEq)]
pub struct PartSets {
    /// Resistors (e.g. E96).
    pub resistors: PartValues,
    /// Capacitors (e.g. E12).
    pub capacitors: PartValues,
    /// Inductors (e.g. E12 or a stock list).
    pub inductors: PartValues,
}

/// The requirement: what the filter must do and what it sits between.
#[derive(Debug, Clone, PartialEq)]
pub struct Requirement {
    /// Low-pass, high-pass, band-pass or band-stop.
    pub response: ResponseType,
    /// The alignment.
    pub alignment: Alignment,
    /// The prototype order (the low-pass order for band-pass and band-stop).
    pub order: usize,
    /// Cutoff, f0, or band edges, in Hz.
    pub band: Band,
    /// Source resistance in Ω (0 = ideal source).
    pub source_resistance: f64,
    /// Load resistance in Ω (`None` = open).
    pub load_resistance: Option<f64>,
    /// Load capacitance in F, in parallel with the load.
    pub load_capacitance: Option<f64>,
}

/// Options of the search.
#[derive(Debug, Clone, PartialEq)]
pub struct FitOptions {
    /// The value sets.
    pub parts: PartSets,
    /// Whether pairs are allowed.
    pub combine: Combine,
    /// How many alternatives to return.
    pub alternatives: usize,
    /// The allowed resistor range in Ω for free impedance levels, e.g. (100, 1e6).
    pub resistor_range: (f64, f64),
    /// A name for the designs.
    pub name: String,
}

/// The key figures of a response.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Figures {
    /// Cutoff (pole) frequency in Hz, for first-order sections and ladders.
    pub cutoff_hz: Option<f64>,
    /// Natural frequency in Hz, for second-order sections.
    pub f0_hz: Option<f64>,
    /// Pole Q, for second-order sections.
    pub q: Option<f64>,
}

/// One fitted part.
#[derive(Debug, Clone, PartialEq)]
pub struct FittedPart {
    /// Reference, e.g. `C1`.
    pub reference: String,
    /// "resistor", "capacitor" or "inductor".
    pub kind: &'static str,
    /// The ideal value in SI units.
    pub ideal_value: f64,
    /// The chosen value or pair.
    pub choice: Choice,
    /// The series or stock list it comes from.
    pub series: String,
    /// The usual tolerance of that series in %, if known.
    pub tolerance_pct: Option<f64>,
    /// 100·(chosen − ideal)/ideal.
    pub deviation_pct: f64,
}

/// One ranked alternative.
#[derive(Debug, Clone, PartialEq)]
pub struct Alternative {
    /// The parts list.
    pub parts: Vec<FittedPart>,
    /// What the chosen parts achieve.
    pub achieved: Figures,
    /// Cutoff error in % (first-order and ladders).
    pub cutoff_error_pct: Option<f64>,
    /// f0 error in % (second-order).
    pub f0_error_pct: Option<f64>,
    /// Q error in % (second-order).
    pub q_error_pct: Option<f64>,
    /// The worst |dB(fitted) − dB(ideal)| over the deviation band.
    pub max_response_deviation_db: f64,
    /// The search objective's value (smaller is better).
    pub objective: f64,
    /// The fitted circuit as a design.
    pub design: Design,
}

/// The result of a fit.
#[derive(Debug, Clone, PartialEq)]
pub struct FitResult {
    /// The design with ideal (unrounded) values.
    pub ideal: Design,
    /// The target figures.
    pub target: Figures,
    /// The band over which response deviation is measured, in Hz.
    pub deviation_band_hz: (f64, f64),
    /// A one-line statement of what was ranked.
    pub objective: String,
    /// The alternatives, best first.
    pub alternatives: Vec<Alternative>,
}

impl Arrangement {
    /// "single", "series" or "parallel".
    pub fn name(self) -> &'static str {
        match self {
            Arrangement::Single => "single",
            Arrangement::Series => "series",
            Arrangement::Parallel => "parallel",
        }
    }
}

impl Figures {
    /// The figures that are known, as a JSON object (`cutoff_hz`, `f0_hz`, `q`).
    pub fn to_json(&self) -> serde_json::Value {
        let mut map = serde_json::Map::new();
        for (key, value) in [("cutoff_hz", self.cutoff_hz), ("f0_hz", self.f0_hz), ("q", self.q)] {
            if let Some(x) = value {
                map.insert(key.into(), serde_json::json!(x));
            }
        }
        serde_json::Value::Object(map)
    }
}

impl FitResult {
    /// The result as the JSON object every adapter prints: `target`, `deviation_band_hz`,
    /// `objective`, `ideal_design` (a design-file object) and `alternatives`, best first, each
    /// with `parts` (`ref`, `kind`, `ideal_value`, `chosen_value`, `chosen_parts`,
    /// `arrangement`, `series`, `tolerance_pct`, `deviation_pct`), `achieved`, the error
    /// percentages, `max_response_deviation_db` and its `design`. Numbers are SI units.
    pub fn to_json(&self) -> serde_json::Value {
        use serde_json::json;
        let alternatives: Vec<serde_json::Value> = self
            .alternatives
            .iter()
            .map(|a| {
                json!({
                    "parts": a.parts.iter().map(|p| json!({
                        "ref": p.reference, "kind": p.kind, "ideal_value": p.ideal_value,
                        "chosen_value": p.choice.value, "chosen_parts": p.choice.parts,
                        "arrangement": p.choice.arrangement.name(), "series": p.series,
                        "tolerance_pct": p.tolerance_pct, "deviation_pct": p.deviation_pct,
                    })).collect::<Vec<_>>(),
                    "achieved": a.achieved.to_json(),
                    "cutoff_error_pct": a.cutoff_error_pct,
                    "f0_error_pct": a.f0_error_pct,
                    "q_error_pct": a.q_error_pct,
                    "max_response_deviation_db": a.max_response_deviation_db,
                    "design": a.design,
                })
            })
            .collect();
        json!({
            "target": self.target.to_json(),
            "deviation_band_hz": [self.deviation_band_hz.0, self.deviation_band_hz.1],
            "objective": self.objective,
            "ideal_design": self.ideal,
            "alternatives": alternatives,
        })
    }
}

/// Fits `requirement` with `topology` to standard parts.
///
/// # Errors
/// [`SynthesisError`] for an impossible or malformed requirement (Q > 0.5 with RC, order out of
/// range, a non-positive cutoff, impossible terminations, an empty stock list) or when no
/// candidate lies in range.
pub fn fit(requirement: &Requirement, topology: Topology, options: &FitOptions) -> Result<FitResult, SynthesisError> {
    validate(requirement, options)?;
    let mut result = fit_topology(requirement, topology, options)?;
    // Each alternative's design carries the usual tolerance of every part's series, for the
    // tolerance analysis.
    // A pair is written as two parts, `{reference}a` and `{reference}b` (see `add_part`).
    for alternative in &mut result.alternatives {
        for part in &alternative.parts {
            let Some(t) = part.tolerance_pct else { continue };
            let references = match part.choice.arrangement {
                Arrangement::Single => vec![part.reference.clone()],
                Arrangement::Series | Arrangement::Parallel => {
                    vec![format!("{}a", part.reference), format!("{}b", part.reference)]
                }
            };
            for reference in references {
                if alternative.design.elements.iter().any(|p| p.reference() == reference) {
                    alternative.design.tolerances.insert(reference, t);
                }
            }
        }
    }
    Ok(result)
}

fn fit_topology(
    requirement: &Requirement,
    topology: Topology,
    options: &FitOptions,
) -> Result<FitResult, SynthesisError> {
    match topology {
        Topology::Rc | Topology::Rl => fit_first_order(requirement, topology, options),
        Topology::Rlc(form) => fit_second_order(requirement, form, options),
        Topology::Ladder(first) => fit_ladder(requirement, first, options),
        Topology::Active(topology, op_amp) => crate::active::fit_requirement(requirement, topology, op_amp, options),
    }
}

fn validate(requirement: &Requirement, options: &FitOptions) -> Result<(), SynthesisError> {
    if !(1..=crate::prototype::MAX_ORDER).contains(&requirement.order) {
        return Err(SynthesisError::BadOrder {
            order: requirement.order,
            min: 1,
            max: crate::prototype::MAX_ORDER,
            why: "orders 1 to 8 are supported",
        });
    }
    let rs = requirement.source_resistance;
    if !(rs.is_finite() && rs >= 0.0) {
        return Err(SynthesisError::BadValue { what: "source resistance", value: rs });
    }
    if let Some(rl) = requirement.load_resistance {
        if !(rl.is_finite() && rl > 0.0) {
            return Err(SynthesisError::BadValue { what: "load resistance", value: rl });
        }
    }
    if let Some(cl) = requirement.load_capacitance {
        if !(cl.is_finite() && cl >= 0.0) {
            return Err(SynthesisError::BadValue { what: "load capacitance", value: cl });
        }
    }
    let (lo, hi) = options.resistor_range;
    if !(lo.is_finite() && hi.is_finite() && lo > 0.0 && hi > lo) {
        return Err(SynthesisError::BadValue { what: "resistor range", value: lo });
    }
    if options.alternatives == 0 {
        return Err(SynthesisError::BadValue { what: "number of alternatives", value: 0.0 });
    }
    Ok(())
}

/// The kind of part a value set is for; it decides how pairs combine.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum PartKind {
    /// Resistors and inductors: series values add, parallel values combine reciprocally.
    Additive,
    /// Capacitors: parallel values add, series values combine reciprocally.
    Capacitive,
}

impl PartKind {
    fn of(kind: &str) -> Self {
        if kind == "capacitor" {
            PartKind::Capacitive
        } else {
            PartKind::Additive
        }
    }
}

/// All candidate choices from `values` within [low, high], singles and (if allowed) pairs. Pairs
/// that add (series resistors or inductors, parallel capacitors) use parts from low/10 to high;
/// pairs that combine reciprocally use parts from low to 10·high.
pub fn candidates(values: &PartValues, low: f64, high: f64, combine: Combine, kind: PartKind) -> Vec<Choice> {
    candidates_with(values, (low, high), (low / 10.0, high), (low, high * 10.0), combine, kind)
}

/// As [`candidates`], with the parts of adding and reciprocal pairs drawn from the given ranges.
/// Each part's partners are found by binary search, so the cost grows with the number of pairs
/// inside the window, not with the square of the partner count.
fn candidates_with(
    values: &PartValues,
    (low, high): (f64, f64),
    adding_range: (f64, f64),
    reciprocal_range: (f64, f64),
    combine: Combine,
    kind: PartKind,
) -> Vec<Choice> {
    let mut out: Vec<Choice> = values
        .values_between(low, high)
        .into_iter()
        .map(|v| Choice { value: v, parts: vec![v], arrangement: Arrangement::Single })
        .collect();
    if combine == Combine::Pairs {
        let (adding, reciprocal) = match kind {
            PartKind::Additive => (Arrangement::Series, Arrangement::Parallel),
            PartKind::Capacitive => (Arrangement::Parallel, Arrangement::Series),
        };
        let parts = values.values_between(adding_range.0, adding_range.1);
        for (i, &a) in parts.iter().enumerate() {
            // b ≤ a with low ≤ a + b ≤ high.
            let first = parts[..=i].partition_point(|&b| a + b < low);
            for &b in &parts[first..=i] {
                let v = a + b;
                if v > high {
                    break;
                }
                out.push(Choice { value: v, parts: vec![a, b], arrangement: adding });
            }
        }
        let parts = values.values_between(reciprocal_range.0, reciprocal_range.1);
        for (i, &a) in parts.iter().enumerate() {
            // b ≤ a with low ≤ a·b/(a + b) ≤ high; the combination grows with b.
            let first = parts[..=i].partition_point(|&b| a * b / (a + b) < low);
            for &b in &parts[first..=i] {
                let v = a * b / (a + b);
                if v > high {
                    break;
                }
                out.push(Choice { value: v, parts: vec![a, b], arrangement: reciprocal });
            }
        }
    }
    out
}

/// The `k` candidates nearest `ideal` in |ln(value/ideal)|, nearest first (singles before pairs
/// on ties).
pub fn nearest_choices(values: &PartValues, ideal: f64, combine: Combine, kind: PartKind, k: usize) -> Vec<Choice> {
    // A narrow window first (pairs are dense near any value), with the same pair parts as the
    // wide window, so it holds exactly the wide window's candidates that lie inside it; widen it
    // if it holds fewer than k.
    let (adding, reciprocal) = ((ideal / 40.0, ideal * 4.0), (ideal / 4.0, ideal * 40.0));
    let mut all = match combine {
        Combine::Pairs => candidates_with(values, (ideal / 1.25, ideal * 1.25), adding, reciprocal, combine, kind),
        Combine::Single => Vec::new(),
    };
    if all.len() < k {
        all = candidates(values, ideal / 4.0, ideal * 4.0, combine, kind);
    }
    all.sort_by(|a, b| {
        let (ea, eb) = ((a.value / ideal).ln().abs(), (b.value / ideal).ln().abs());
        ea.total_cmp(&eb).then(a.parts.len().cmp(&b.parts.len()))
    });
    all.dedup_by(|a, b| a.value == b.value && a.parts == b.parts);
    all.truncate(k);
    all
}

fn parallel(a: f64, b: Option<f64>) -> f64 {
    match b {
        Some(b) => a * b / (a + b),
        None => a,
    }
}

fn relative_error(achieved: f64, target: f64) -> f64 {
    (achieved - target) / target
}

/// The target pole frequency (Hz) of a first-order requirement, or the (f0, Q) of a
/// second-order one, from the prototype.
fn target_sections(requirement: &Requirement) -> Result<Vec<Section>, SynthesisError> {
    Ok(lowpass_prototype(requirement.alignment, requirement.order)?.sections())
}

fn cutoff_of(requirement: &Requirement) -> Result<f64, SynthesisError> {
    match requirement.band {
        Band::Cutoff(f) => crate::synthesis::positive("cutoff", f),
        _ => Err(SynthesisError::Unsupported {
            asked: format!("a {} with band edges", requirement.response.name()),
            instead: "give one cutoff (--cutoff) for low-pass and high-pass".to_string(),
        }),
    }
}

// ---------------------------------------------------------------------------------------------
// First order

fn first_order_cutoff(
    topology: Topology,
    response: ResponseType,
    rs: f64,
    r: f64,
    reactive: f64,
    req: &Requirement,
) -> f64 {
    let rl = req.load_resistance;
    let cl = req.load_capacitance.unwrap_or(0.0);
    match (topology, response) {
        (Topology::Rc, ResponseType::LowPass) => 1.0 / (2.0 * PI * parallel(rs + r, rl) * (reactive + cl)),
        (Topology::Rc, _) => 1.0 / (2.0 * PI * (rs + parallel(r, rl)) * reactive),
        (_, ResponseType::LowPass) => (rs + parallel(r, rl)) / (2.0 * PI * reactive),
        _ => parallel(rs + r, rl) / (2.0 * PI * reactive),
    }
}

/// The ideal reactive value for resistor `r`, or `None` if none is positive.
fn first_order_ideal(
    topology: Topology,
    response: ResponseType,
    rs: f64,
    r: f64,
    fc: f64,
    req: &Requirement,
) -> Option<f64> {
    let rl = req.load_resistance;
    let cl = req.load_capacitance.unwrap_or(0.0);
    let value = match (topology, response) {
        (Topology::Rc, ResponseType::LowPass) => 1.0 / (2.0 * PI * fc * parallel(rs + r, rl)) - cl,
        (Topology::Rc, _) => 1.0 / (2.0 * PI * fc * (rs + parallel(r, rl))),
        (_, ResponseType::LowPass) => (rs + parallel(r, rl)) / (2.0 * PI * fc),
        _ => parallel(rs + r, rl) / (2.0 * PI * fc),
    };
    (value.is_finite() && value > 0.0).then_some(value)
}

fn fit_first_order(req: &Requirement, topology: Topology, options: &FitOptions) -> Result<FitResult, SynthesisError> {
    if req.order != 1 && topology == Topology::Rc && (2..=crate::prototype::MAX_ORDER).contains(&req.order) {
        return fit_rc_ladder(req, options);
    }
    if req.order != 1 {
        let sections = target_sections(req)?;
        let q = sections
            .iter()
            .map(|s| match s {
                Section::SecondOrder { q, .. } => *q,
                Section::FirstOrder { .. } => 0.0,
            })
            .fold(0.0, f64::max);
        if q > 0.5 - 1e-12 {
            return Err(SynthesisError::QTooHighForRc { q });
        }
        return Err(SynthesisError::Unsupported {
            asked: format!("a passive {}-stage RC/RL section", req.order),
            instead: "use order 1 for RC and RL sections, or --topology rlc or ladder".to_string(),
        });
    }
    if !matches!(req.response, ResponseType::LowPass | ResponseType::HighPass) {
        return Err(SynthesisError::Unsupported {
            asked: format!("a first-order {}", req.response.name()),
            instead: "first-order RC and RL sections are low-pass or high-pass; use --topology rlc".to_string(),
        });
    }
    let has_cl = req.load_capacitance.is_some_and(|c| c > 0.0);
    if has_cl && !(topology == Topology::Rc && req.response == ResponseType::LowPass) {
        return Err(SynthesisError::Unsupported {
            asked: "a load capacitance on this first-order section".to_string(),
            instead:
                "it would make the section second order; only the RC low-pass absorbs a load capacitance (it adds to C)"
                    .to_string(),
        });
    }
    let pole = match target_sections(req)?.first() {
        Some(Section::FirstOrder { omega }) => *omega,
        _ => 1.0,
    };
    let fc = cutoff_of(req)? * pole;
    let rs = req.source_resistance;
    let (reactive_set, reactive_kind) = match topology {
        Topology::Rc => (&options.parts.capacitors, "capacitor"),
        _ => (&options.parts.inductors, "inductor"),
    };
    // A series resistor into a resistive load divides the passband: keep it at most a tenth of
    // the load (under 0.83 dB of loss, common practice), so the load sets the top of the range.
    let series_resistor = matches!(
        (topology, req.response),
        (Topology::Rc, ResponseType::LowPass) | (Topology::Rl, ResponseType::HighPass)
    );
    let r_top = match (series_resistor, req.load_resistance) {
        (true, Some(rl)) => options.resistor_range.1.min(rl / 10.0),
        _ => options.resistor_range.1,
    };
    let resistors = options.parts.resistors.values_between(options.resistor_range.0, r_top);
    if resistors.is_empty() {
        return Err(SynthesisError::NoCandidates { reason: "no resistor value lies in the allowed range".to_string() });
    }
    // Search: every resistor, the nearest reactive candidates for it.
    let mut scored: Vec<(f64, f64, Choice)> = Vec::new();
    for &r in &resistors {
        let Some(ideal) = first_order_ideal(topology, req.response, rs, r, fc, req) else { continue };
        for choice in nearest_choices(reactive_set, ideal, options.combine, PartKind::of(reactive_kind), 4) {
            let achieved = first_order_cutoff(topology, req.response, rs, r, choice.value, req);
            scored.push((relative_error(achieved, fc).abs(), r, choice));
        }
    }
    if scored.is_empty() {
        return Err(SynthesisError::NoCandidates {
            reason: format!("no {reactive_kind} in the chosen series gives this cutoff with resistors in range"),
        });
    }
    scored.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.total_cmp(&b.1)));
    let build = |r: &Choice, x: &Choice| first_order_design(req, topology, options, r, x);
    let target = Figures { cutoff_hz: Some(fc), ..Figures::default() };
    let band = deviation_band(req)?;
    let mut alternatives = Vec::new();
    let mut ideal = None;
    let mut seen = HashSet::new();
    for (objective, r, choice) in scored {
        if alternatives.len() == options.alternatives {
            break;
        }
        if !seen.insert((r.to_bits(), choice.value.to_bits())) {
            continue;
        }
        // The ideal circuit at this alternative's impedance level, so the deviation is the cost
        // of rounding alone.
        let x_ideal = first_order_ideal(topology, req.response, rs, r, fc, req).unwrap_or(choice.value);
        let ideal_here = build(&single(r), &single(x_ideal));
        let ideal_response = sweep_design(&ideal_here, band)?;
        let design = build(&single(r), &choice);
        let achieved = first_order_cutoff(topology, req.response, rs, r, choice.value, req);
        let parts = vec![
            fitted("R1", "resistor", r, single(r), &options.parts.resistors),
            fitted(if topology == Topology::Rc { "C1" } else { "L1" }, reactive_kind, x_ideal, choice, reactive_set),
        ];
        let deviation = max_deviation_db(&design, &ideal_response, band)?;
        ideal.get_or_insert(ideal_here);
        alternatives.push(Alternative {
            parts,
            achieved: Figures { cutoff_hz: Some(achieved), ..Figures::default() },
            cutoff_error_pct: Some(100.0 * relative_error(achieved, fc)),
            f0_error_pct: None,
            q_error_pct: None,
            max_response_deviation_db: deviation,
            objective,
            design,
        });
    }
    let ideal = ideal.ok_or_else(|| SynthesisError::NoCandidates { reason: "no candidate was left".to_string() })?;
    Ok(FitResult {
        ideal,
        target,
        deviation_band_hz: band,
        objective: "relative cutoff (pole frequency) error, closed form with source and load; every resistor in range tried; deviation against the ideal circuit at the same resistor".to_string(),
        alternatives,
    })
}

// ---------------------------------------------------------------------------------------------
// RC ladders

/// Impedance tapers R_{k+1}/R_k tried for RC ladders (a larger taper lightens the loading of
/// each stage by the next).
pub const RC_TAPERS: [f64; 9] = [1.0, 1.5, 2.0, 3.0, 5.0, 10.0, 20.0, 50.0, 100.0];
/// Capacitor choices per stage of an RC ladder (every combination is tried up to
/// [`RC_FULL_PRODUCT_STAGES`] stages; above, the [`LADDER_POOL`] best by summed squared log error).
pub const RC_CHOICES_PER_STAGE: usize = 3;
/// Up to this many stages every combination of capacitor choices is evaluated.
pub const RC_FULL_PRODUCT_STAGES: usize = 4;

/// How much more the dB error at the cutoff counts than the worst deviation over the band when
/// RC ladders are ranked: the cutoff is the key figure and is held first, the shape second
/// (coincident target poles leave an interaction floor that the shape cannot go below).
pub const RC_CUTOFF_WEIGHT: f64 = 10.0;

/// One RC-ladder candidate: standard resistors, ideal and chosen capacitors, and its figures.
struct RcCandidate {
    objective: f64,
    deviation_db: f64,
    log_error: f64,
    resistors_ideal: Vec<f64>,
    resistors: Vec<f64>,
    capacitors_ideal: Vec<f64>,
    capacitors: Vec<Choice>,
    exact: bool,
}

fn fit_rc_ladder(req: &Requirement, options: &FitOptions) -> Result<FitResult, SynthesisError> {
    use crate::rc_ladder::{
        denominator, equal_time_constant_capacitors, exact_capacitors, least_squares_capacitors, normalised_gain,
        real_pole_polynomial, RcLoad,
    };
    let n = req.order;
    if !matches!(req.response, ResponseType::LowPass | ResponseType::HighPass) {
        return Err(SynthesisError::Unsupported {
            asked: format!("an RC ladder {}", req.response.name()),
            instead: "RC ladders are low-pass or high-pass; use --topology rlc or ladder for band responses"
                .to_string(),
        });
    }
    if req.response == ResponseType::HighPass && req.load_capacitance.is_some_and(|c| c > 0.0) {
        return Err(SynthesisError::Unsupported {
            asked: "a load capacitance on an RC high-pass ladder".to_string(),
            instead: "only the low-pass ladder absorbs a load capacitance (it adds to the last C)".to_string(),
        });
    }
    let prototype = lowpass_prototype(req.alignment, n)?;
    let q_max = prototype
        .sections()
        .iter()
        .map(|s| match s {
            Section::SecondOrder { q, .. } => *q,
            Section::FirstOrder { .. } => 0.0,
        })
        .fold(0.0, f64::max);
    if q_max > 0.0 {
        return Err(SynthesisError::QTooHighForRc { q: q_max });
    }
    let fc = cutoff_of(req)?;
    let target_zpk = crate::transform::denormalize(&prototype, req.response, Band::Cutoff(fc))?;
    let target_poles: Vec<f64> = target_zpk.poles.iter().map(|p| -p.re).collect();
    let target = real_pole_polynomial(&target_poles);
    let omega_c = 2.0 * PI * fc;
    let cutoff_gain = normalised_gain(req.response, &target, omega_c);
    let load = RcLoad {
        resistance: req.load_resistance,
        capacitance: req.load_capacitance.filter(|c| *c > 0.0 && req.response == ResponseType::LowPass),
    };
    let rs = req.source_resistance;
    // The deviation grid and the target there.
    let band = deviation_band(req)?;
    let grid = FrequencyGrid::log(band.0, band.1, Spacing::PerDecade(DEVIATION_POINTS_PER_DECADE))
        .map_err(|e| SynthesisError::NoCandidates { reason: e.to_string() })?;
    let omegas: Vec<f64> = grid.frequencies().iter().map(|f| 2.0 * PI * f).collect();
    let target_db: Vec<f64> =
        omegas.iter().map(|&w| 20.0 * normalised_gain(req.response, &target, w).log10()).collect();
    // The least-squares fit uses the grid points where the deviation is measured.
    let fit_omegas: Vec<f64> =
        omegas.iter().zip(&target_db).filter(|(_, t)| **t >= -DEVIATION_FLOOR_DB).map(|(w, _)| *w).collect();
    // (worst deviation over the band, |dB error at the cutoff|).
    let deviation_of = |resistors: &[f64], capacitors: &[f64]| {
        let d = denominator(req.response, rs, resistors, capacitors, load);
        let worst = omegas
            .iter()
            .zip(&target_db)
            .filter(|(_, t)| **t >= -DEVIATION_FLOOR_DB)
            .map(|(&w, t)| (20.0 * normalised_gain(req.response, &d, w).log10() - t).abs())
            .fold(0.0, f64::max);
        let at_cutoff = (20.0 * (normalised_gain(req.response, &d, omega_c) / cutoff_gain).log10()).abs();
        (worst, at_cutoff)
    };
    // Resistor sets: R1 from the series, each next stage `taper` times the last, rounded.
    let (r_lo, r_hi) = options.resistor_range;
    let r_series_total = match (req.response, req.load_resistance) {
        // Common practice, as for the first-order section: series resistance at most a tenth of the load.
        (ResponseType::LowPass, Some(rl)) => rl / 10.0,
        _ => f64::INFINITY,
    };
    let mut sets: Vec<(Vec<f64>, Vec<f64>)> = Vec::new();
    let mut seen = HashSet::new();
    for r1 in options.parts.resistors.values_between(r_lo, r_hi) {
        for taper in RC_TAPERS {
            let ideal: Vec<f64> = (0..n).map(|k| r1 * taper.powi(k as i32)).collect();
            let standard: Option<Vec<f64>> = ideal.iter().map(|&r| options.parts.resistors.nearest(r)).collect();
            let Some(standard) = standard else { continue };
            if standard.iter().any(|&r| r < r_lo * (1.0 - 1e-12) || r > r_hi * (1.0 + 1e-12))
                || standard.iter().sum::<f64>() > r_series_total
            {
                continue;
            }
            if seen.insert(standard.iter().map(|r| r.to_bits()).collect::<Vec<_>>()) {
                sets.push((ideal, standard));
            }
        }
    }
    if sets.is_empty() {
        return Err(SynthesisError::NoCandidates {
            reason: format!(
                "no {n}-stage resistor set from the series lies in the allowed range{}",
                if r_series_total.is_finite() { " with the series resistance at most a tenth of the load" } else { "" }
            ),
        });
    }
    let mut candidates_found: Vec<RcCandidate> = Vec::new();
    for (resistors_ideal, resistors) in sets {
        let (capacitors_ideal, exact) = match exact_capacitors(req.response, rs, &resistors, load, &target) {
            Some(c) => (c, true),
            None => match equal_time_constant_capacitors(req.response, rs, &resistors, load, omega_c, cutoff_gain) {
                Some(start) => {
                    let pinned = Some(omega_c);
                    (
                        least_squares_capacitors(
                            req.response,
                            rs,
                            &resistors,
                            load,
                            &target,
                            &fit_omegas,
                            pinned,
                            &start,
                        ),
                        false,
                    )
                }
                None => continue,
            },
        };
        // The low-pass load capacitance is part of `load`: these are the part values.
        let parts_ideal = capacitors_ideal;
        let lists: Vec<Vec<(f64, Choice)>> = parts_ideal
            .iter()
            .map(|&ideal| {
                nearest_choices(
                    &options.parts.capacitors,
                    ideal,
                    options.combine,
                    PartKind::Capacitive,
                    RC_CHOICES_PER_STAGE,
                )
                .into_iter()
                .map(|c| ((c.value / ideal).ln().powi(2), c))
                .collect()
            })
            .collect();
        if lists.iter().any(|l| l.is_empty()) {
            continue;
        }
        let assignments: Vec<(f64, Vec<usize>)> = if n <= RC_FULL_PRODUCT_STAGES {
            let total: usize = lists.iter().map(|l| l.len()).product();
            (0..total)
                .map(|mut code| {
                    let picks: Vec<usize> = lists
                        .iter()
                        .map(|l| {
                            let pick = code % l.len();
                            code /= l.len();
                            pick
                        })
                        .collect();
                    (picks.iter().zip(&lists).map(|(&i, l)| l[i].0).sum(), picks)
                })
                .collect()
        } else {
            best_assignments(&lists, LADDER_POOL)
        };
        for (log_error, picks) in assignments {
            let chosen: Vec<Choice> = picks.iter().zip(&lists).map(|(&i, l)| l[i].1.clone()).collect();
            let values: Vec<f64> = chosen.iter().map(|c| c.value).collect();
            let (deviation_db, at_cutoff_db) = deviation_of(&resistors, &values);
            if deviation_db.is_finite() && at_cutoff_db.is_finite() {
                candidates_found.push(RcCandidate {
                    objective: deviation_db + RC_CUTOFF_WEIGHT * at_cutoff_db,
                    deviation_db,
                    log_error,
                    resistors_ideal: resistors_ideal.clone(),
                    resistors: resistors.clone(),
                    capacitors_ideal: parts_ideal.clone(),
                    capacitors: chosen,
                    exact,
                });
            }
        }
    }
    if candidates_found.is_empty() {
        return Err(SynthesisError::NoCandidates {
            reason: "no capacitor values of the series realise this RC ladder with resistors in range".to_string(),
        });
    }
    candidates_found.sort_by(|a, b| a.objective.total_cmp(&b.objective).then(a.log_error.total_cmp(&b.log_error)));
    let quality = matches!(req.alignment, Alignment::Quality { .. });
    let figures_of = |resistors: &[f64], capacitors: &[f64]| -> Figures {
        let d = denominator(req.response, rs, resistors, capacitors, load);
        // The frequency where the normalised gain equals the target's gain at its cutoff.
        let (mut lo, mut hi) = ((omega_c / 1e3).ln(), (omega_c * 1e3).ln());
        let below =
            |w: f64| (normalised_gain(req.response, &d, w) > cutoff_gain) == (req.response == ResponseType::LowPass);
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if below(mid.exp()) {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        let cutoff = (0.5 * (lo + hi)).exp() / (2.0 * PI);
        if quality && n == 2 {
            Figures {
                cutoff_hz: None,
                f0_hz: Some((d[0] / d[2]).sqrt() / (2.0 * PI)),
                q: Some((d[0] * d[2]).sqrt() / d[1]),
            }
        } else {
            Figures { cutoff_hz: Some(cutoff), ..Figures::default() }
        }
    };
    let target_figures = match req.alignment {
        Alignment::Quality { q } => Figures { cutoff_hz: None, f0_hz: Some(fc), q: Some(q) },
        _ => Figures { cutoff_hz: Some(fc), ..Figures::default() },
    };
    let design_of = |resistors: &[f64], capacitors: &[Choice], note: String| {
        let mut design = base_design(req, &options.name, note, "out");
        let node = |k: usize| match k {
            0 => "in".to_string(),
            k if k == n => "out".to_string(),
            k => format!("n{k}"),
        };
        for k in 0..n {
            let (a, b) = (node(k), node(k + 1));
            let (r_ref, c_ref) = (format!("R{}", k + 1), format!("C{}", k + 1));
            match req.response {
                ResponseType::HighPass => {
                    add_part(&mut design, &c_ref, "capacitor", &capacitors[k], &a, &b);
                    add_part(&mut design, &r_ref, "resistor", &single(resistors[k]), &b, "0");
                }
                _ => {
                    add_part(&mut design, &r_ref, "resistor", &single(resistors[k]), &a, &b);
                    add_part(&mut design, &c_ref, "capacitor", &capacitors[k], &b, "0");
                }
            }
        }
        design
    };
    let mut alternatives = Vec::new();
    let mut ideal = None;
    for candidate in candidates_found.into_iter().take(options.alternatives) {
        let method = if candidate.exact {
            "capacitors solved exactly for the target poles"
        } else {
            "capacitors fitted by least squares to the target response (coincident target poles have no exact RC ladder)"
        };
        let note = format!("{n}-stage RC {} ladder, {method}; designed by Bandwright fit", req.response.name());
        let ideal_caps: Vec<Choice> = candidate.capacitors_ideal.iter().map(|&c| single(c)).collect();
        ideal.get_or_insert_with(|| design_of(&candidate.resistors, &ideal_caps, note.clone()));
        let design = design_of(&candidate.resistors, &candidate.capacitors, note);
        let values: Vec<f64> = candidate.capacitors.iter().map(|c| c.value).collect();
        let achieved = figures_of(&candidate.resistors, &values);
        let mut parts = Vec::new();
        for k in 0..n {
            parts.push(fitted(
                &format!("R{}", k + 1),
                "resistor",
                candidate.resistors_ideal[k],
                single(candidate.resistors[k]),
                &options.parts.resistors,
            ));
            parts.push(fitted(
                &format!("C{}", k + 1),
                "capacitor",
                candidate.capacitors_ideal[k],
                candidate.capacitors[k].clone(),
                &options.parts.capacitors,
            ));
        }
        alternatives.push(Alternative {
            parts,
            achieved,
            cutoff_error_pct: achieved.cutoff_hz.map(|f| 100.0 * relative_error(f, fc)),
            f0_error_pct: achieved.f0_hz.map(|f| 100.0 * relative_error(f, fc)),
            q_error_pct: achieved.q.zip(target_figures.q).map(|(a, t)| 100.0 * relative_error(a, t)),
            max_response_deviation_db: candidate.deviation_db,
            objective: candidate.objective,
            design,
        });
    }
    let ideal = ideal.ok_or_else(|| SynthesisError::NoCandidates { reason: "no candidate was left".to_string() })?;
    Ok(FitResult {
        ideal,
        target: target_figures,
        deviation_band_hz: band,
        objective: format!(
            "worst dB deviation from the target (passband-normalised) over the band, plus {RC_CUTOFF_WEIGHT}× the dB error at the cutoff; every resistor set of the series with stage tapers 1–100, its capacitors solved with all loading, and every mix of the {RC_CHOICES_PER_STAGE} nearest standard capacitors (the {LADDER_POOL} best above {RC_FULL_PRODUCT_STAGES} stages)"
        ),
        alternatives,
    })
}

fn single(v: f64) -> Choice {
    Choice { value: v, parts: vec![v], arrangement: Arrangement::Single }
}

fn fitted(reference: &str, kind: &'static str, ideal: f64, choice: Choice, set: &PartValues) -> FittedPart {
    FittedPart {
        reference: reference.to_string(),
        kind,
        ideal_value: ideal,
        deviation_pct: 100.0 * (choice.value - ideal) / ideal,
        choice,
        series: set.name(),
        tolerance_pct: set.tolerance_pct(),
    }
}

fn base_design(req: &Requirement, name: &str, note: String, output: &str) -> Design {
    let load = if req.load_resistance.is_some() || req.load_capacitance.is_some_and(|c| c > 0.0) {
        Some(Load {
            node: output.to_string(),
            resistance: req.load_resistance,
            capacitance: req.load_capacitance.filter(|c| *c > 0.0),
        })
    } else {
        None
    };
    Design {
        format: FORMAT.to_string(),
        version: VERSION,
        name: name.to_string(),
        note,
        source: Source { node: "in".to_string(), resistance: req.source_resistance, amplitude: 1.0 },
        load,
        output: output.to_string(),
        elements: Vec::new(),
        tolerances: Default::default(),
    }
}

/// Adds a part made of `choice` between `a` and `b`: one part, or two in series or parallel.
fn add_part(design: &mut Design, reference: &str, kind: &str, choice: &Choice, a: &str, b: &str) {
    let make = |reference: String, value: f64, nodes: [String; 2]| match kind {
        "resistor" => Part::Resistor { reference, value, nodes },
        "capacitor" => Part::Capacitor { reference, value, nodes, series_resistance: None },
        _ => Part::Inductor { reference, value, nodes, series_resistance: None },
    };
    match choice.arrangement {
        Arrangement::Single => design.elements.push(make(reference.to_string(), choice.value, [a.into(), b.into()])),
        Arrangement::Series => {
            let mid = format!("{reference}_mid");
            design.elements.push(make(format!("{reference}a"), choice.parts[0], [a.into(), mid.clone()]));
            design.elements.push(make(format!("{reference}b"), choice.parts[1], [mid, b.into()]));
        }
        Arrangement::Parallel => {
            design.elements.push(make(format!("{reference}a"), choice.parts[0], [a.into(), b.into()]));
            design.elements.push(make(format!("{reference}b"), choice.parts[1], [a.into(), b.into()]));
        }
    }
}

fn first_order_design(req: &Requirement, topology: Topology, options: &FitOptions, r: &Choice, x: &Choice) -> Design {
    let kind = if topology == Topology::Rc { "capacitor" } else { "inductor" };
    let reference = if topology == Topology::Rc { "C1" } else { "L1" };
    let note = format!(
        "first-order {} {}, designed by Bandwright fit",
        if topology == Topology::Rc { "RC" } else { "RL" },
        req.response.name()
    );
    let mut design = base_design(req, &options.name, note, "out");
    // RC low-pass and RL high-pass: series R, shunt reactive part; the others the reverse.
    let series_resistor = matches!(
        (topology, req.response),
        (Topology::Rc, ResponseType::LowPass) | (Topology::Rl, ResponseType::HighPass)
    );
    if series_resistor {
        add_part(&mut design, "R1", "resistor", r, "in", "out");
        add_part(&mut design, reference, kind, x, "out", "0");
    } else {
        add_part(&mut design, reference, kind, x, "in", "out");
        add_part(&mut design, "R1", "resistor", r, "out", "0");
    }
    design
}

// ---------------------------------------------------------------------------------------------
// Second order

/// A second-order RLC section: its response and form.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
struct RlcShape {
    response: ResponseType,
    form: RlcForm,
}

#[cfg(test)]
impl RlcShape {
    fn default_for(response: ResponseType) -> Self {
        Self { response, form: RlcForm::default_for(response) }
    }
}

/// The denominator a·s² + b·s + c of an RLC form with series resistance `rt` (source plus R),
/// from nodal analysis of each form (common practice; each checked by sweep in the tests):
/// - series L, shunt C ∥ C_L ∥ R_L: L·C′·s² + (L·G + R_t·C′)·s + 1 + R_t·G, C′ = C + C_L;
/// - series C, shunt L ∥ R_L: L·C·(1 + R_t·G)·s² + (C·R_t + G·L)·s + 1;
/// - series L–C into R_L: L·C·s² + C·(R_t + R_L)·s + 1;
/// - trap L–C across R_L: L·C·(1 + R_t·G)·s² + C·R_t·s + 1 + R_t·G;
/// - shunt C, series L into R_L: R_t·L·C·s² + (R_t·R_L·C + L)·s + R_t + R_L;
/// - shunt L, series C into R_L: L·C·(R_t + R_L)·s² + (R_t·R_L·C + L)·s + R_t;
/// - tank L ∥ C ∥ R_L: R_t·L·C·s² + L·(1 + R_t·G)·s + R_t;
/// - series tank L ∥ C into R_L: (R_t + R_L)·L·C·s² + L·s + R_t + R_L.
fn rlc_denominator(shape: RlcShape, l: f64, c: f64, rt: f64, req: &Requirement) -> (f64, f64, f64) {
    let g = req.load_resistance.map_or(0.0, |r| 1.0 / r);
    let rl = req.load_resistance.unwrap_or(f64::INFINITY);
    match (shape.form, shape.response) {
        (RlcForm::Series, ResponseType::LowPass) => {
            let cp = c + req.load_capacitance.unwrap_or(0.0);
            (l * cp, l * g + rt * cp, 1.0 + rt * g)
        }
        (RlcForm::Series, ResponseType::HighPass) => (l * c * (1.0 + rt * g), c * rt + g * l, 1.0),
        (RlcForm::Series, ResponseType::BandPass) => (l * c, c * (rt + rl), 1.0),
        (RlcForm::Shunt, ResponseType::BandStop) => (l * c * (1.0 + rt * g), c * rt, 1.0 + rt * g),
        (RlcForm::Shunt, ResponseType::LowPass) => (rt * l * c, rt * rl * c + l, rt + rl),
        (RlcForm::Shunt, ResponseType::HighPass) => (l * c * (rt + rl), rt * rl * c + l, rt),
        (RlcForm::Shunt, ResponseType::BandPass) => (rt * l * c, l * (1.0 + rt * g), rt),
        (RlcForm::Series, ResponseType::BandStop) => ((rt + rl) * l * c, l, rt + rl),
    }
}

/// The (f0 in Hz, Q) of an RLC form with series resistance `rt` (source plus R).
fn rlc_figures(shape: RlcShape, l: f64, c: f64, rt: f64, req: &Requirement) -> (f64, f64) {
    let (a, b, cc) = rlc_denominator(shape, l, c, rt, req);
    ((cc / a).sqrt() / (2.0 * PI), (a * cc).sqrt() / b)
}

/// The capacitance that gives exactly `f0` with inductor `l` and total series resistance `rt`
/// (from ω0² = c/a of each form's denominator; may be ≤ 0 when the load capacitance alone is too
/// large).
fn rlc_capacitor_for_f0(shape: RlcShape, req: &Requirement, l: f64, f0: f64, rt: f64) -> f64 {
    // In every form, c does not depend on C and a is affine in C: a(C) = a(0) + C·(a(1) − a(0)).
    let w0 = 2.0 * PI * f0;
    let (a0, _, cc) = rlc_denominator(shape, l, 0.0, rt, req);
    let (a1, _, _) = rlc_denominator(shape, l, 1.0, rt, req);
    (cc / (w0 * w0) - a0) / (a1 - a0)
}

/// The ideal C and total series resistance for inductor `l`: every solution, empty if the form
/// cannot reach (f0, Q) with this inductor. Closed forms for the forms that work with any
/// terminations; for the others, every root of Q(R_t) = q with C set for the exact f0, bracketed
/// on a log scan of R from `r_min` to `r_top` and bisected.
fn rlc_ideals(
    shape: RlcShape,
    l: f64,
    f0: f64,
    q: f64,
    req: &Requirement,
    (r_min, r_top): (f64, f64),
) -> Vec<(f64, f64)> {
    if shape.form != RlcForm::default_for(shape.response) {
        let c_for = |rt: f64| rlc_capacitor_for_f0(shape, req, l, f0, rt);
        let q_of = |rt: f64| rlc_figures(shape, l, c_for(rt), rt, req).1;
        let rs = req.source_resistance;
        let mut roots: Vec<f64> = resistance_centres(q_of, q, rs, r_top, r_min)
            .into_iter()
            .map(|r| rs + r)
            .filter(|&rt| (q_of(rt) / q - 1.0).abs() <= 1e-9)
            .collect();
        // With R = 0 the source resistance alone may be the exact solution.
        if rs > 0.0 && (q_of(rs) / q - 1.0).abs() <= 1e-9 {
            roots.push(rs);
        }
        return roots
            .into_iter()
            .map(|rt| (c_for(rt), rt))
            .filter(|&(c, rt)| c.is_finite() && c > 0.0 && rt.is_finite() && rt >= rs)
            .collect();
    }
    let response = shape.response;
    let w = 2.0 * PI * f0;
    let g = req.load_resistance.map_or(0.0, |r| 1.0 / r);
    let cl = req.load_capacitance.unwrap_or(0.0);
    let solutions: Vec<(f64, f64)> = match response {
        ResponseType::BandPass => match req.load_resistance {
            Some(rl) => vec![(1.0 / (w * w * l), w * l / q - rl)],
            None => vec![],
        },
        ResponseType::BandStop => vec![(1.0 / (w * w * l), w * l / (q - g * w * l))],
        ResponseType::HighPass => {
            let x = g * l * w;
            let rt = w * l * (1.0 - q * x) / (q * (1.0 + x * x) - x);
            vec![(1.0 / (w * w * l * (1.0 + rt * g)), rt)]
        }
        ResponseType::LowPass => {
            // q·g·R² + R·(q − g·w·L) + (q·g·w²·L² − w·L) = 0
            let (qa, qb, qc) = (q * g, q - g * w * l, q * g * w * w * l * l - w * l);
            let roots = if qa == 0.0 {
                vec![-qc / qb]
            } else {
                let disc = qb * qb - 4.0 * qa * qc;
                if disc < 0.0 {
                    vec![]
                } else {
                    vec![(-qb + disc.sqrt()) / (2.0 * qa), (-qb - disc.sqrt()) / (2.0 * qa)]
                }
            };
            roots.into_iter().map(|rt| ((1.0 + rt * g) / (w * w * l) - cl, rt)).collect()
        }
    };
    solutions
        .into_iter()
        .filter(|&(c, rt)| c.is_finite() && c > 0.0 && rt.is_finite() && rt >= req.source_resistance)
        .collect()
}

fn fit_second_order(req: &Requirement, form: RlcForm, options: &FitOptions) -> Result<FitResult, SynthesisError> {
    let shape = RlcShape { response: req.response, form };
    if form.needs_load(req.response) && req.load_resistance.is_none() {
        return Err(SynthesisError::Unsupported {
            asked: format!("an RLC {} with the {} and an open load", req.response.name(), form.name()),
            instead: format!(
                "this form needs a resistive load (--load R) to be second order; with an open load use the {}",
                match form {
                    RlcForm::Series => RlcForm::Shunt.name(),
                    RlcForm::Shunt => RlcForm::Series.name(),
                }
            ),
        });
    }
    if (form != RlcForm::Series || req.response != ResponseType::LowPass)
        && req.load_capacitance.is_some_and(|c| c > 0.0)
    {
        return Err(SynthesisError::Unsupported {
            asked: format!("a load capacitance on an RLC {} ({})", req.response.name(), form.name()),
            instead:
                "only the series-first low-pass absorbs a load capacitance (it adds to C); leave --load-capacitance out"
                    .to_string(),
        });
    }
    let (f0, q) = match (req.response, req.band) {
        (ResponseType::LowPass | ResponseType::HighPass, _) => {
            if req.order != 2 {
                return Err(SynthesisError::BadOrder {
                    order: req.order,
                    min: 2,
                    max: 2,
                    why: "an RLC section is second order; use --topology ladder for other orders",
                });
            }
            let fc = cutoff_of(req)?;
            match (req.alignment, target_sections(req)?.as_slice()) {
                (Alignment::Quality { q }, _) => (fc, q),
                (_, [Section::SecondOrder { omega0, q }]) => (fc * omega0, *q),
                // Two real poles (Q ≤ 0.5): ω0 = √(ω1·ω2), Q = √(ω1·ω2)/(ω1 + ω2).
                (_, [Section::FirstOrder { omega: a }, Section::FirstOrder { omega: b }]) => {
                    (fc * (a * b).sqrt(), (a * b).sqrt() / (a + b))
                }
                _ => return Err(SynthesisError::BadOrder { order: 2, min: 2, max: 2, why: "no second-order section" }),
            }
        }
        (_, band) => {
            if req.order != 1 && !matches!(req.alignment, Alignment::Quality { .. }) {
                return Err(SynthesisError::BadOrder {
                    order: req.order,
                    min: 1,
                    max: 1,
                    why: "an RLC band-pass or notch is the first-order prototype transformed; give order 1, or --f0 and --q",
                });
            }
            match (req.alignment, band) {
                (Alignment::Quality { q }, Band::Cutoff(f0)) => (crate::synthesis::positive("f0", f0)?, q),
                (_, band) => {
                    let (low, high) = band.edges()?;
                    let f0 = (low * high).sqrt();
                    (f0, f0 / (high - low))
                }
            }
        }
    };
    if !(q.is_finite() && q > 0.0) {
        return Err(SynthesisError::BadQ { q });
    }
    let rs = req.source_resistance;
    let w0 = 2.0 * PI * f0;
    let (r_lo, r_hi) = options.resistor_range;
    // Impedance levels from the resistor range, extended down to a hundredth of the terminations
    // (a loudspeaker's 8 Ω sets a lower level than any signal resistor range).
    let terminations = [Some(rs).filter(|r| *r > 0.0), req.load_resistance].into_iter().flatten();
    let z_low = terminations.fold(r_lo, |z, r| z.min(r / 100.0));
    let inductors = options.parts.inductors.values_between(z_low / w0, r_hi / w0);
    // The series resistance is bounded: with a load, R_t ≤ R_s + 10·R_L (at most about 21 dB of
    // insertion loss); without one, the resistor range.
    let r_top = req.load_resistance.map_or(r_hi, |rl| r_hi.min(10.0 * rl));
    // The target must be reachable exactly with some inductor of the set, or the ideal values
    // reported beside the chosen ones would be made up.
    if !inductors.iter().any(|&l| !rlc_ideals(shape, l, f0, q, req, (r_lo / 100.0, r_top)).is_empty()) {
        return Err(SynthesisError::NoCandidates {
            reason: format!(
                "the RLC {} with the {} cannot reach f0 = {f0} Hz and Q = {q} with these terminations, any inductor of the set and a total series resistance up to {r_top} Ω{}",
                req.response.name(),
                form.name(),
                match RlcForm::default_for(req.response) {
                    default if default != form => format!("; try the {} (--first {})", default.name(), if default == RlcForm::Series { "series" } else { "shunt" }),
                    _ => String::new(),
                }
            ),
        });
    }
    let mut scored: Vec<(f64, Choice, Choice, Option<Choice>)> = Vec::new();
    for &l in &inductors {
        // Capacitor windows (a factor of 4 either way) around each exact solution, around the value
        // that gives f0 with no resistor, and around the value for the largest resistance.
        let g = req.load_resistance.map_or(0.0, |r| 1.0 / r);
        let c_for = |rt: f64| rlc_capacitor_for_f0(shape, req, l, f0, rt);
        let mut centres: Vec<f64> =
            rlc_ideals(shape, l, f0, q, req, (r_lo / 100.0, r_top)).into_iter().map(|(c, _)| c).collect();
        centres.push(c_for(rs));
        centres.push(c_for(rs + r_top));
        // Singles over the windows; pairs are tried afterwards, around the best single solutions.
        let mut capacitors: Vec<Choice> = Vec::new();
        if form != RlcForm::default_for(req.response) {
            // In these forms f0 moves with R over a wide span: every capacitor between the
            // values for the smallest and the largest resistance (and a factor of 4 beyond).
            let span = [c_for(rs), c_for(rs + r_lo / 100.0), c_for(rs + r_top)];
            let finite = span.iter().copied().filter(|c| c.is_finite() && *c > 0.0);
            let (low, high) = finite.fold((f64::INFINITY, 0.0f64), |(lo, hi), c| (lo.min(c), hi.max(c)));
            if low <= high {
                capacitors.extend(candidates(
                    &options.parts.capacitors,
                    low / 4.0,
                    high * 4.0,
                    Combine::Single,
                    PartKind::Capacitive,
                ));
            }
        }
        for centre in centres.iter().copied().filter(|c| c.is_finite() && *c > 0.0) {
            capacitors.extend(candidates(
                &options.parts.capacitors,
                centre / 4.0,
                centre * 4.0,
                Combine::Single,
                PartKind::Capacitive,
            ));
        }
        capacitors.sort_by(|a, b| a.value.total_cmp(&b.value).then(a.parts[0].total_cmp(&b.parts[0])));
        capacitors.dedup();
        for c in capacitors {
            // Resistors: none, and every candidate within a factor of 4 of the resistance that
            // gives the exact Q with this L and C (or of the best reachable one).
            let q_of = |rt: f64| rlc_figures(shape, l, c.value, rt, req).1;
            let mut resistors: Vec<Option<Choice>> = vec![None];
            let centres = resistance_centres(q_of, q, rs, r_top, r_lo / 100.0);
            // Without an exact root (only the closest scan point came back), the best R trades Q
            // against f0, so every single value in range is tried.
            // With a load, the low-pass and high-pass f0 also moves with R, so R trades f0 against
            // Q and every single value in range is tried too.
            let f0_moves_with_r = g > 0.0 && matches!(req.response, ResponseType::LowPass | ResponseType::HighPass);
            // Singles within a factor of 4 of each exact-Q resistance (and over the whole range
            // where needed).
            let mut windows: Vec<(f64, f64)> = centres.iter().map(|&c| (c / 4.0, (c * 4.0).min(r_top - rs))).collect();
            if centres.len() == 1 || f0_moves_with_r {
                windows.push((r_lo / 100.0, r_top - rs));
            }
            for (low, high) in windows {
                resistors.extend(
                    candidates(&options.parts.resistors, low, high, Combine::Single, PartKind::Additive)
                        .into_iter()
                        .map(Some),
                );
            }
            resistors.sort_by(|a, b| {
                let key = |r: &Option<Choice>| r.as_ref().map_or((0.0, 0.0), |r| (r.value, r.parts[0]));
                let (ka, kb) = (key(a), key(b));
                ka.0.total_cmp(&kb.0).then(ka.1.total_cmp(&kb.1))
            });
            resistors.dedup();
            for r in resistors {
                let rt = rs + r.as_ref().map_or(0.0, |r| r.value);
                let (f_a, q_a) = rlc_figures(shape, l, c.value, rt, req);
                let objective = relative_error(f_a, f0).hypot(relative_error(q_a, q));
                if objective.is_finite() {
                    scored.push((objective, single(l), c.clone(), r));
                }
            }
        }
    }
    if scored.is_empty() {
        return Err(SynthesisError::NoCandidates {
            reason: "no inductor and capacitor in the chosen series reach this f0 and Q with resistors in range"
                .to_string(),
        });
    }
    scored.sort_by(|a, b| a.0.total_cmp(&b.0));
    if options.combine == Combine::Pairs {
        // Around each of the best single-part solutions: the 8 capacitor pairs nearest the value
        // that gives the exact f0 with its series resistance, and for each of those the 8
        // resistor pairs nearest each exact-Q resistance.
        let mut refined = Vec::new();
        for (_, l, c, r) in scored.iter().take(PAIR_REFINEMENT) {
            let l = l.value;
            let rt = rs + r.as_ref().map_or(0.0, |r| r.value);
            let c_exact = rlc_capacitor_for_f0(shape, req, l, f0, rt);
            let mut c_options = vec![c.clone()];
            if c_exact.is_finite() && c_exact > 0.0 {
                c_options.extend(
                    nearest_choices(&options.parts.capacitors, c_exact, Combine::Pairs, PartKind::Capacitive, 64)
                        .into_iter()
                        .filter(|c| c.parts.len() == 2)
                        .take(8),
                );
            }
            for c in c_options {
                let q_of = |rt: f64| rlc_figures(shape, l, c.value, rt, req).1;
                let mut r_options = vec![r.clone()];
                for centre in resistance_centres(q_of, q, rs, r_top, r_lo / 100.0) {
                    r_options.extend(
                        nearest_choices(&options.parts.resistors, centre, Combine::Pairs, PartKind::Additive, 64)
                            .into_iter()
                            .filter(|r| r.parts.len() == 2 && r.value <= r_top - rs)
                            .take(8)
                            .map(Some),
                    );
                }
                for r in r_options {
                    let rt = rs + r.as_ref().map_or(0.0, |r| r.value);
                    let (f_a, q_a) = rlc_figures(shape, l, c.value, rt, req);
                    let objective = relative_error(f_a, f0).hypot(relative_error(q_a, q));
                    if objective.is_finite() {
                        refined.push((objective, single(l), c.clone(), r));
                    }
                }
            }
        }
        scored.extend(refined);
        scored.sort_by(|a, b| a.0.total_cmp(&b.0));
        scored.dedup_by(|a, b| a.1 == b.1 && a.2 == b.2 && a.3 == b.3);
    }
    let band = deviation_band(req)?;
    let mut alternatives = Vec::new();
    let mut ideal = None;
    for (objective, l, c, r) in scored.into_iter().take(options.alternatives) {
        let rt = rs + r.as_ref().map_or(0.0, |r| r.value);
        let (f_a, q_a) = rlc_figures(shape, l.value, c.value, rt, req);
        // The ideal solution for this inductor nearest the chosen capacitor.
        let (c_id, rt_id) = rlc_ideals(shape, l.value, f0, q, req, (r_lo / 100.0, r_top))
            .into_iter()
            .min_by(|a, b| (a.0 / c.value).ln().abs().total_cmp(&(b.0 / c.value).ln().abs()))
            .unwrap_or((c.value, rt));
        // The ideal circuit with this alternative's inductor, so the deviation is the cost of
        // rounding alone.
        let r_id = rt_id - rs;
        let ideal_r = (r_id > 0.0).then(|| single(r_id));
        let ideal_here = rlc_design(req, shape, options, &single(l.value), &single(c_id), ideal_r.as_ref());
        let ideal_response = sweep_design(&ideal_here, band)?;
        let design = rlc_design(req, shape, options, &l, &c, r.as_ref());
        let mut parts = vec![
            fitted("L1", "inductor", l.value, l.clone(), &options.parts.inductors),
            fitted("C1", "capacitor", c_id, c.clone(), &options.parts.capacitors),
        ];
        if let Some(r) = &r {
            // When the ideal solution needs no resistor, the chosen one is judged against the
            // resistance that gives the exact Q with the chosen L and C (or, failing that, the
            // closest Q), so the deviation is a real, finite figure.
            let r_ideal = if r_id > 0.0 {
                r_id
            } else {
                let q_of = |rt: f64| rlc_figures(shape, l.value, c.value, rt, req).1;
                resistance_centres(q_of, q, rs, r_top, r_lo / 100.0).first().copied().unwrap_or(r.value)
            };
            parts.push(fitted("R1", "resistor", r_ideal, r.clone(), &options.parts.resistors));
        }
        let deviation = max_deviation_db(&design, &ideal_response, band)?;
        ideal.get_or_insert(ideal_here);
        alternatives.push(Alternative {
            parts,
            achieved: Figures { f0_hz: Some(f_a), q: Some(q_a), cutoff_hz: None },
            cutoff_error_pct: None,
            f0_error_pct: Some(100.0 * relative_error(f_a, f0)),
            q_error_pct: Some(100.0 * relative_error(q_a, q)),
            max_response_deviation_db: deviation,
            objective,
            design,
        });
    }
    let ideal = ideal.ok_or_else(|| SynthesisError::NoCandidates { reason: "no candidate was left".to_string() })?;
    Ok(FitResult {
        ideal,
        target: Figures { f0_hz: Some(f0), q: Some(q), cutoff_hz: None },
        deviation_band_hz: band,
        objective: "sqrt(e_f0^2 + e_Q^2) of relative errors, closed form with source and load; every inductor with w0*L in the resistor range tried; deviation against the ideal circuit with the same inductor".to_string(),
        alternatives,
    })
}

/// Resistances R (not counting R_s) around which to search: every R with Q(R_s + R) = `target`
/// (Q need not be monotone in R, so a log scan of 96 points from `r_min` to `r_top` brackets each
/// root before bisection), and the scan point with the smallest |Q − target|.
fn resistance_centres(q_of: impl Fn(f64) -> f64, target: f64, rs: f64, r_top: f64, r_min: f64) -> Vec<f64> {
    const SCAN: usize = 96;
    let r_top = (r_top - rs).max(r_min * 1.0001);
    let ratio = (r_top / r_min).ln();
    let grid: Vec<f64> = (0..SCAN).map(|i| r_min * (ratio * i as f64 / (SCAN - 1) as f64).exp()).collect();
    let error: Vec<f64> = grid.iter().map(|&r| q_of(rs + r) - target).collect();
    let mut centres = Vec::new();
    for i in 0..SCAN - 1 {
        if error[i] == 0.0 {
            centres.push(grid[i]);
        } else if error[i].is_finite() && error[i + 1].is_finite() && error[i].signum() != error[i + 1].signum() {
            let (mut lo, mut hi) = (grid[i], grid[i + 1]);
            for _ in 0..80 {
                let mid = (lo * hi).sqrt();
                if (q_of(rs + mid) - target).signum() == error[i].signum() {
                    lo = mid;
                } else {
                    hi = mid;
                }
            }
            centres.push((lo * hi).sqrt());
        }
    }
    if let Some(best) =
        (0..SCAN).filter(|&i| error[i].is_finite()).min_by(|&a, &b| error[a].abs().total_cmp(&error[b].abs()))
    {
        centres.push(grid[best]);
    }
    centres
}

fn rlc_design(
    req: &Requirement,
    shape: RlcShape,
    options: &FitOptions,
    l: &Choice,
    c: &Choice,
    r: Option<&Choice>,
) -> Design {
    let note = format!("second-order RLC {}, {}, designed by Bandwright fit", req.response.name(), shape.form.name());
    let mut design = base_design(req, &options.name, note, "out");
    // Forms whose output is the node right after the resistor (a shunt element across the
    // output): without a resistor that is the input node itself.
    let output_at_first_node =
        matches!((shape.form, shape.response), (RlcForm::Shunt, ResponseType::BandPass | ResponseType::BandStop));
    let first_node = if output_at_first_node { "out" } else { "n1" };
    let after_r = if let Some(r) = r {
        add_part(&mut design, "R1", "resistor", r, "in", first_node);
        first_node
    } else {
        "in"
    };
    if output_at_first_node {
        design.output = after_r.to_string();
        if let Some(load) = &mut design.load {
            load.node = after_r.to_string();
        }
    }
    match (shape.form, shape.response) {
        (RlcForm::Series, ResponseType::LowPass) => {
            add_part(&mut design, "L1", "inductor", l, after_r, "out");
            add_part(&mut design, "C1", "capacitor", c, "out", "0");
        }
        (RlcForm::Series, ResponseType::HighPass) => {
            add_part(&mut design, "C1", "capacitor", c, after_r, "out");
            add_part(&mut design, "L1", "inductor", l, "out", "0");
        }
        (RlcForm::Series, ResponseType::BandPass) => {
            add_part(&mut design, "L1", "inductor", l, after_r, "n2");
            add_part(&mut design, "C1", "capacitor", c, "n2", "out");
        }
        (RlcForm::Series, ResponseType::BandStop) => {
            add_part(&mut design, "L1", "inductor", l, after_r, "out");
            add_part(&mut design, "C1", "capacitor", c, after_r, "out");
        }
        (RlcForm::Shunt, ResponseType::LowPass) => {
            add_part(&mut design, "C1", "capacitor", c, after_r, "0");
            add_part(&mut design, "L1", "inductor", l, after_r, "out");
        }
        (RlcForm::Shunt, ResponseType::HighPass) => {
            add_part(&mut design, "L1", "inductor", l, after_r, "0");
            add_part(&mut design, "C1", "capacitor", c, after_r, "out");
        }
        (RlcForm::Shunt, ResponseType::BandPass) => {
            add_part(&mut design, "L1", "inductor", l, after_r, "0");
            add_part(&mut design, "C1", "capacitor", c, after_r, "0");
        }
        (RlcForm::Shunt, ResponseType::BandStop) => {
            add_part(&mut design, "L1", "inductor", l, after_r, "n2");
            add_part(&mut design, "C1", "capacitor", c, "n2", "0");
        }
    }
    design
}

// ---------------------------------------------------------------------------------------------
// Ladders

fn fit_ladder(req: &Requirement, first: FirstElement, options: &FitOptions) -> Result<FitResult, SynthesisError> {
    let rs = req.source_resistance;
    if req.load_capacitance.is_some_and(|c| c > 0.0) {
        return Err(SynthesisError::Unsupported {
            asked: "a load capacitance on an LC ladder".to_string(),
            instead: "ladder synthesis assumes resistive terminations; absorb it into the last shunt capacitor by hand or leave it out"
                .to_string(),
        });
    }
    let (termination, r0) = match (rs > 0.0, req.load_resistance) {
        (true, Some(rl)) if (rl / rs - 1.0).abs() < 1e-12 => (Termination::Equal, rs),
        (true, Some(rl)) => (Termination::Ratio(rl / rs), rs),
        (false, Some(rl)) => (Termination::IdealSource, rl),
        (true, None) => (Termination::OpenLoad, rs),
        (false, None) => {
            return Err(SynthesisError::Terminations {
                asked: "an LC ladder between an ideal source and an open load".to_string(),
                reason: "a lossless ladder needs at least one resistive termination; give --source or --load"
                    .to_string(),
            })
        }
    };
    let ladder_options = LadderOptions {
        response: req.response,
        band: req.band,
        source_resistance: r0,
        first,
        name: options.name.clone(),
    };
    let ideal = crate::ladder::synthesize_ladder(req.alignment, req.order, termination, &ladder_options)?;
    // Per element: the nearest candidates.
    let elements: Vec<(String, &'static str, f64, [String; 2])> = ideal
        .elements
        .iter()
        .filter_map(|part| match part {
            Part::Capacitor { reference, value, nodes, .. } => {
                Some((reference.clone(), "capacitor", *value, nodes.clone()))
            }
            Part::Inductor { reference, value, nodes, .. } => {
                Some((reference.clone(), "inductor", *value, nodes.clone()))
            }
            Part::Resistor { reference, value, nodes } => Some((reference.clone(), "resistor", *value, nodes.clone())),
            _ => None,
        })
        .collect();
    let set_of = |kind: &str| match kind {
        "capacitor" => &options.parts.capacitors,
        "inductor" => &options.parts.inductors,
        _ => &options.parts.resistors,
    };
    let lists: Vec<Vec<(f64, Choice)>> = elements
        .iter()
        .map(|(_, kind, ideal, _)| {
            nearest_choices(set_of(kind), *ideal, options.combine, PartKind::of(kind), CANDIDATES_PER_ELEMENT)
                .into_iter()
                .map(|c| ((c.value / ideal).ln().powi(2), c))
                .collect()
        })
        .collect();
    if let Some((index, _)) = lists.iter().enumerate().find(|(_, l)| l.is_empty()) {
        return Err(SynthesisError::NoCandidates {
            reason: format!(
                "no {} value lies within a factor of 4 of {}'s ideal value",
                elements[index].1, elements[index].0
            ),
        });
    }
    let pool = best_assignments(&lists, LADDER_POOL.max(options.alternatives));
    let band = deviation_band(req)?;
    let ideal_response = sweep_design(&ideal, band)?;
    let target_cutoff = cutoff_of(req).ok();
    let mut ranked = Vec::new();
    for (log_error, assignment) in pool {
        let mut design = ideal.clone();
        design.elements.clear();
        let mut parts = Vec::new();
        for ((reference, kind, ideal_value, nodes), (&choice_index, list)) in
            elements.iter().zip(assignment.iter().zip(&lists))
        {
            let choice = list[choice_index].1.clone();
            add_part(&mut design, reference, kind, &choice, &nodes[0], &nodes[1]);
            parts.push(fitted(reference, kind, *ideal_value, choice, set_of(kind)));
        }
        design.note = format!("{} Parts fitted by Bandwright.", ideal.note);
        let deviation = max_deviation_db(&design, &ideal_response, band)?;
        ranked.push((deviation, log_error, parts, design));
    }
    ranked.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.total_cmp(&b.1)));
    let alternatives = ranked
        .into_iter()
        .take(options.alternatives)
        .map(|(deviation, _, parts, design)| {
            (deviation, parts, target_cutoff.and_then(|fc| achieved_corner(&design, &ideal_response, fc, band)), design)
        })
        .map(|(deviation, parts, achieved_cutoff, design)| Alternative {
            parts,
            achieved: Figures { cutoff_hz: achieved_cutoff, ..Figures::default() },
            cutoff_error_pct: achieved_cutoff.zip(target_cutoff).map(|(a, t)| 100.0 * relative_error(a, t)),
            f0_error_pct: None,
            q_error_pct: None,
            max_response_deviation_db: deviation,
            objective: deviation,
            design,
        })
        .collect();
    Ok(FitResult {
        ideal,
        target: Figures { cutoff_hz: target_cutoff, ..Figures::default() },
        deviation_band_hz: band,
        objective: format!(
            "worst response deviation in dB over the deviation band, among the {LADDER_POOL} assignments with the smallest sum of squared log value errors ({CANDIDATES_PER_ELEMENT} candidates per element)"
        ),
        alternatives,
    })
}

/// The `count` index assignments with the smallest summed cost, each list sorted ascending by
/// cost, enumerated exactly best-first (a heap over successor assignments, each reached once).
pub fn best_assignments<T>(lists: &[Vec<(f64, T)>], count: usize) -> Vec<(f64, Vec<usize>)> {
    #[derive(PartialEq)]
    struct Entry(f64, Vec<usize>);
    impl Eq for Entry {}
    impl PartialOrd for Entry {
        fn partial_cmp(&self, other: &Self) -> Option<std::cmp::Ordering> {
            Some(self.cmp(other))
        }
    }
    impl Ord for Entry {
        fn cmp(&self, other: &Self) -> std::cmp::Ordering {
            other.0.total_cmp(&self.0).then_with(|| other.1.cmp(&self.1))
        }
    }
    let cost = |assignment: &[usize]| assignment.iter().zip(lists).map(|(&i, list)| list[i].0).sum::<f64>();
    let mut heap = BinaryHeap::new();
    let start = vec![0; lists.len()];
    heap.push(Entry(cost(&start), start));
    let mut out = Vec::new();
    let mut seen = HashSet::new();
    while let Some(Entry(total, assignment)) = heap.pop() {
        if !seen.insert(assignment.clone()) {
            continue;
        }
        for k in 0..lists.len() {
            if assignment[k] + 1 < lists[k].len() {
                let mut next = assignment.clone();
                next[k] += 1;
                if !seen.contains(&next) {
                    heap.push(Entry(cost(&next), next));
                }
            }
        }
        out.push((total, assignment));
        if out.len() == count {
            break;
        }
    }
    out
}

// ---------------------------------------------------------------------------------------------
// Deviation measurement

fn deviation_band(req: &Requirement) -> Result<(f64, f64), SynthesisError> {
    Ok(match (req.response, req.band) {
        (ResponseType::LowPass, band) => {
            let fc = match band {
                Band::Cutoff(f) => crate::synthesis::positive("cutoff", f)?,
                other => other.edges()?.1,
            };
            (fc / 10.0, fc * 3.0)
        }
        (ResponseType::HighPass, band) => {
            let fc = match band {
                Band::Cutoff(f) => crate::synthesis::positive("cutoff", f)?,
                other => other.edges()?.0,
            };
            (fc / 3.0, fc * 10.0)
        }
        (_, Band::Cutoff(f0)) => {
            let f0 = crate::synthesis::positive("f0", f0)?;
            (f0 / 10.0, f0 * 10.0)
        }
        (_, band) => {
            let (low, high) = band.edges()?;
            (low / 3.0, high * 3.0)
        }
    })
}

fn sweep_design(design: &Design, band: (f64, f64)) -> Result<Response, SynthesisError> {
    let (circuit, probe) = design.to_circuit().map_err(|e| SynthesisError::NoCandidates { reason: e.to_string() })?;
    let grid = FrequencyGrid::log(band.0, band.1, Spacing::PerDecade(DEVIATION_POINTS_PER_DECADE))
        .map_err(|e| SynthesisError::NoCandidates { reason: e.to_string() })?;
    Ok(sweep(&mut AcSystem::new(&circuit, &probe), &grid, Detail::Transfer))
}

fn max_deviation_db(design: &Design, ideal: &Response, band: (f64, f64)) -> Result<f64, SynthesisError> {
    let fitted = sweep_design(design, band)?;
    let ideal_db = ideal.magnitude_db();
    let peak = ideal_db.iter().flatten().copied().fold(f64::NEG_INFINITY, f64::max);
    let worst = fitted
        .magnitude_db()
        .iter()
        .zip(ideal_db)
        .filter_map(|(a, b)| a.zip(b).filter(|(_, b)| *b >= peak - DEVIATION_FLOOR_DB).map(|(a, b)| (a - b).abs()))
        .fold(0.0, f64::max);
    Ok(worst)
}

/// The achieved cutoff: the target scaled by how far the fitted design's −3 dB corner moved
/// from the ideal design's corner nearest the target. For Butterworth and Bessel (−3 dB
/// normalised) this is the fitted −3 dB frequency itself; for Chebyshev (ripple-edge normalised)
/// it is the ripple edge moved by the same ratio.
fn achieved_corner(design: &Design, ideal: &Response, target: f64, band: (f64, f64)) -> Option<f64> {
    let nearest = |response: &Response| {
        crate::measure::measure(response)
            .ok()?
            .corners
            .iter()
            .map(|c| c.f_hz)
            .min_by(|a, b| (a / target).ln().abs().total_cmp(&(b / target).ln().abs()))
    };
    let fitted = sweep_design(design, band).ok()?;
    Some(target * nearest(&fitted)? / nearest(ideal)?)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::eseries::Series;

    fn parts(r: Series, c: Series, l: Series) -> PartSets {
        PartSets {
            resistors: PartValues::Series(r),
            capacitors: PartValues::Series(c),
            inductors: PartValues::Series(l),
        }
    }

    fn options(sets: PartSets, combine: Combine) -> FitOptions {
        FitOptions { parts: sets, combine, alternatives: 5, resistor_range: (100.0, 1e6), name: "test".to_string() }
    }

    fn lowpass(order: usize, fc: f64, rs: f64, rl: Option<f64>) -> Requirement {
        Requirement {
            response: ResponseType::LowPass,
            alignment: Alignment::Butterworth,
            order,
            band: Band::Cutoff(fc),
            source_resistance: rs,
            load_resistance: rl,
            load_capacitance: None,
        }
    }

    #[test]
    fn best_assignments_enumerates_in_cost_order() {
        let lists = vec![vec![(0.0, ()), (1.0, ()), (5.0, ())], vec![(0.5, ()), (0.7, ())], vec![(0.1, ()), (3.0, ())]];
        let got = best_assignments(&lists, 12);
        // Brute force over all 12 assignments.
        let mut all = Vec::new();
        for a in 0..3 {
            for b in 0..2 {
                for c in 0..2 {
                    all.push((lists[0][a].0 + lists[1][b].0 + lists[2][c].0, vec![a, b, c]));
                }
            }
        }
        all.sort_by(|x, y| x.0.total_cmp(&y.0));
        let got_costs: Vec<f64> = got.iter().map(|g| g.0).collect();
        let want_costs: Vec<f64> = all.iter().map(|g| g.0).collect();
        assert_eq!(got_costs, want_costs);
    }

    #[test]
    fn rc_lowpass_fit_is_the_brute_force_optimum() {
        // Small sets so brute force is cheap: E6 resistors in 1k..10k, E12 capacitors.
        let mut opts = options(parts(Series::E6, Series::E12, Series::E12), Combine::Single);
        opts.resistor_range = (1e3, 1e4);
        for (fc, rs, rl) in [(1234.0, 50.0, Some(1e5)), (777.0, 0.0, None), (15_900.0, 600.0, Some(22e3))] {
            let req = lowpass(1, fc, rs, rl);
            let result = fit(&req, Topology::Rc, &opts).unwrap();
            let best = &result.alternatives[0];
            let brute = brute_force_rc(&req, &opts);
            assert!((best.objective - brute).abs() <= 1e-15, "fc {fc}: fit {} vs brute {brute}", best.objective);
            // The closed form agrees with the MNA sweep of the fitted design.
            // Swept from fc/1e4 so the low-end reference is within 1e-8 of the DC gain.
            let measured =
                crate::measure::measure(&sweep_design(&best.design, (fc / 1e4, fc * 100.0)).unwrap()).unwrap();
            let corner = measured.corners[0].f_hz;
            assert!((corner / best.achieved.cutoff_hz.unwrap() - 1.0).abs() < 1e-6, "{corner} vs {:?}", best.achieved);
        }
    }

    #[test]
    fn rlc_bandpass_fit_is_the_brute_force_optimum() {
        let mut opts = options(parts(Series::E12, Series::E6, Series::E6), Combine::Single);
        opts.resistor_range = (10.0, 1e3);
        let req = Requirement {
            response: ResponseType::BandPass,
            alignment: Alignment::Quality { q: 5.0 },
            order: 2,
            band: Band::Cutoff(10e3),
            source_resistance: 10.0,
            load_resistance: Some(50.0),
            load_capacitance: None,
        };
        let result = fit(&req, Topology::Rlc(RlcForm::Series), &opts).unwrap();
        let best = result.alternatives[0].objective;
        let mut brute = f64::INFINITY;
        let w0 = 2.0 * PI * 10e3;
        for l in opts.parts.inductors.values_between(10.0 / w0, 1e3 / w0) {
            for c in opts.parts.capacitors.values_between(1e-12, 1e-3) {
                let mut rs_options = vec![0.0];
                rs_options.extend(opts.parts.resistors.values_between(1e-3, 1e3));
                for r in rs_options {
                    let (f, q) = rlc_figures(RlcShape::default_for(req.response), l, c, 10.0 + r, &req);
                    brute = brute.min(relative_error(f, 10e3).hypot(relative_error(q, 5.0)));
                }
            }
        }
        assert!((best - brute).abs() <= 1e-12 * brute.max(1.0), "fit {best} vs brute {brute}");
    }

    fn brute_force_rc(req: &Requirement, opts: &FitOptions) -> f64 {
        let fc = match req.band {
            Band::Cutoff(f) => f,
            _ => unreachable!(),
        };
        let mut brute = f64::INFINITY;
        // The stated domain: a series resistor at most a tenth of the load.
        let r_top = match (req.response, req.load_resistance) {
            (ResponseType::LowPass, Some(rl)) => opts.resistor_range.1.min(rl / 10.0),
            _ => opts.resistor_range.1,
        };
        for r in opts.parts.resistors.values_between(opts.resistor_range.0, r_top) {
            for c in opts.parts.capacitors.values_between(1e-15, 1.0) {
                let f = first_order_cutoff(Topology::Rc, req.response, req.source_resistance, r, c, req);
                brute = brute.min(((f - fc) / fc).abs());
            }
        }
        brute
    }

    fn brute_force_rlc(req: &Requirement, shape: RlcShape, opts: &FitOptions, f0: f64, q: f64) -> f64 {
        let mut brute = f64::INFINITY;
        let w0 = 2.0 * PI * f0;
        let z_low = [Some(req.source_resistance).filter(|r| *r > 0.0), req.load_resistance]
            .into_iter()
            .flatten()
            .fold(opts.resistor_range.0, |z, r| z.min(r / 100.0));
        // The stated domain: R_t ≤ R_s + 10·R_L with a load.
        let r_top = req.load_resistance.map_or(opts.resistor_range.1, |rl| opts.resistor_range.1.min(10.0 * rl));
        let mut resistors = vec![0.0];
        // Explicit resistors start at a hundredth of the resistor range's low end.
        resistors
            .extend(opts.parts.resistors.values_between(opts.resistor_range.0 / 100.0, r_top - req.source_resistance));
        for l in opts.parts.inductors.values_between(z_low / w0, opts.resistor_range.1 / w0) {
            for c in opts.parts.capacitors.values_between(1e-15, 1.0) {
                for &r in &resistors {
                    let (f, q_a) = rlc_figures(shape, l, c, req.source_resistance + r, req);
                    let objective = relative_error(f, f0).hypot(relative_error(q_a, q));
                    if objective.is_finite() {
                        brute = brute.min(objective);
                    }
                }
            }
        }
        brute
    }

    proptest::proptest! {
        #![proptest_config(proptest::prelude::ProptestConfig::with_cases(24))]

        // For random targets the reported best equals the brute-force optimum of the stated
        // objective over every resistor in range and every capacitor of the series.
        #[test]
        fn rc_fit_matches_brute_force(fc in 10.0f64..1e6, rs in 0.0f64..2e3, rl in proptest::option::of(2e4f64..1e7),
                                      highpass in proptest::bool::ANY) {
            let mut opts = options(parts(Series::E12, Series::E12, Series::E12), Combine::Single);
            opts.resistor_range = (1e3, 1e5);
            let req = Requirement {
                response: if highpass { ResponseType::HighPass } else { ResponseType::LowPass },
                ..lowpass(1, fc, rs, rl)
            };
            let result = fit(&req, Topology::Rc, &opts).unwrap();
            let brute = brute_force_rc(&req, &opts);
            proptest::prop_assert!((result.alternatives[0].objective - brute).abs() <= 1e-13, "{} vs {brute}", result.alternatives[0].objective);
        }

        #[test]
        fn rlc_fit_matches_brute_force(f0 in 100.0f64..1e5, q in 0.3f64..8.0, rs in 0.0f64..50.0, rl in 20.0f64..2e3,
                                       kind in 0usize..4, shunt in proptest::bool::ANY) {
            let response = [ResponseType::LowPass, ResponseType::HighPass, ResponseType::BandPass, ResponseType::BandStop][kind];
            let form = if shunt { RlcForm::Shunt } else { RlcForm::Series };
            let mut opts = options(parts(Series::E12, Series::E6, Series::E6), Combine::Single);
            opts.resistor_range = (10.0, 1e4);
            let req = Requirement {
                response,
                alignment: Alignment::Quality { q },
                order: 2,
                band: Band::Cutoff(f0),
                source_resistance: rs,
                load_resistance: Some(rl),
                load_capacitance: None,
            };
            match fit(&req, Topology::Rlc(form), &opts) {
                Ok(result) => {
                    let brute = brute_force_rlc(&req, RlcShape { response, form }, &opts, f0, q);
                    let best = result.alternatives[0].objective;
                    proptest::prop_assert!(best <= brute * (1.0 + 1e-9) + 1e-12, "{response:?} {form:?}: fit {best} vs brute {brute}");
                }
                Err(SynthesisError::NoCandidates { .. }) => {}
                Err(other) => proptest::prop_assert!(false, "{other}"),
            }
        }
    }

    /// The passband-normalised worst deviation in dB of `design` from `target` over the band,
    /// from MNA sweeps (independent of the polynomial the RC-ladder search uses).
    fn engine_deviation(
        design: &Design,
        target: &crate::prototype::Zpk,
        response: ResponseType,
        band: (f64, f64),
    ) -> f64 {
        let swept = sweep_design(design, band).unwrap();
        let (circuit, probe) = design.to_circuit().unwrap();
        let mut system = AcSystem::new(&circuit, &probe);
        let reference_hz = if response == ResponseType::LowPass { band.0 * 1e-4 } else { band.1 * 1e4 };
        let passband = system.solve_at(reference_hz, Detail::Transfer).unwrap().transfer.norm();
        let target_passband = crate::transform::target_response(target, reference_hz).norm();
        swept
            .frequencies()
            .iter()
            .zip(swept.magnitude_db())
            .filter_map(|(&f, db)| {
                let t = 20.0 * (crate::transform::target_response(target, f).norm() / target_passband).log10();
                (t >= -DEVIATION_FLOOR_DB).then(|| (db.unwrap() - 20.0 * passband.log10() - t).abs())
            })
            .fold(0.0, f64::max)
    }

    /// |dB error| at `fc` of the passband-normalised response against the target's, by the engine.
    fn engine_cutoff_error_db(design: &Design, target: &crate::prototype::Zpk, response: ResponseType, fc: f64) -> f64 {
        let (circuit, probe) = design.to_circuit().unwrap();
        let mut system = AcSystem::new(&circuit, &probe);
        let reference_hz = if response == ResponseType::LowPass { fc * 1e-6 } else { fc * 1e6 };
        let mut gain = |f: f64| system.solve_at(f, Detail::Transfer).unwrap().transfer.norm();
        let fitted = gain(fc) / gain(reference_hz);
        let ideal = crate::transform::target_response(target, fc).norm()
            / crate::transform::target_response(target, reference_hz).norm();
        (20.0 * (fitted / ideal).log10()).abs()
    }

    fn rc_target(req: &Requirement) -> crate::prototype::Zpk {
        let prototype = lowpass_prototype(req.alignment, req.order).unwrap();
        crate::transform::denormalize(&prototype, req.response, req.band).unwrap()
    }

    // The RC ladder search's figures agree with the engine: deviation from the target and the
    // achieved cutoff (the −3.01 dB point of a critically damped target).
    #[test]
    fn rc_ladder_figures_agree_with_the_engine() {
        let mut opts = options(parts(Series::E24, Series::E12, Series::E12), Combine::Single);
        opts.resistor_range = (1e3, 1e5);
        for (response, n, load_c) in [(ResponseType::LowPass, 3, Some(100e-12)), (ResponseType::HighPass, 4, None)] {
            let req = Requirement {
                response,
                alignment: Alignment::Critical,
                order: n,
                band: Band::Cutoff(1e3),
                source_resistance: 100.0,
                load_resistance: Some(1e6),
                load_capacitance: load_c,
            };
            let result = fit(&req, Topology::Rc, &opts).unwrap();
            let target = rc_target(&req);
            assert_eq!(result.alternatives.len(), 5);
            for alternative in &result.alternatives {
                assert_eq!(alternative.parts.len(), 2 * n);
                let engine = engine_deviation(&alternative.design, &target, response, result.deviation_band_hz);
                assert!(
                    (engine - alternative.max_response_deviation_db).abs() < 1e-6,
                    "{response:?}: engine {engine} dB vs reported {} dB",
                    alternative.max_response_deviation_db
                );
                // The engine's −3.01 dB corner relative to the passband gain, by bisection.
                let (circuit, probe) = alternative.design.to_circuit().unwrap();
                let mut system = AcSystem::new(&circuit, &probe);
                let mut gain = |f: f64| system.solve_at(f, Detail::Transfer).unwrap().transfer.norm();
                let passband = gain(if response == ResponseType::LowPass { 1e-3 } else { 1e9 });
                let (mut lo, mut hi) = (100f64, 1e4f64);
                for _ in 0..100 {
                    let mid = (lo * hi).sqrt();
                    if (gain(mid) / passband > 0.5f64.sqrt()) == (response == ResponseType::LowPass) {
                        lo = mid;
                    } else {
                        hi = mid;
                    }
                }
                let corner = (lo * hi).sqrt();
                let reported = alternative.achieved.cutoff_hz.unwrap();
                assert!((corner / reported - 1.0).abs() < 1e-9, "{response:?}: corner {corner} vs reported {reported}");
            }
            let best = &result.alternatives[0];
            eprintln!(
                "RC {response:?} critical n={n}: best deviation {:.4} dB, cutoff error {:+.3} %, ideal ladder {:.4} dB; {}",
                best.max_response_deviation_db,
                best.cutoff_error_pct.unwrap(),
                engine_deviation(&result.ideal, &target, response, result.deviation_band_hz),
                best.parts.iter().map(|p| format!("{}={:.4e}/{:.4e}", p.reference, p.ideal_value, p.choice.value)).collect::<Vec<_>>().join(" ")
            );
            // Interaction is accounted for: the naive ladder (equal stages, each C for its isolated
            // pole, no correction for loading) misses the target by several times more.
            let omega_p = 2.0 * PI * 1e3 * crate::prototype::critical_pole(n);
            let r = vec![4.7e3; n];
            let naive_c: Vec<Choice> = (0..n)
                .map(|k| {
                    single(
                        1.0 / (omega_p
                            * (r[k] + if k == 0 && response == ResponseType::LowPass { 100.0 } else { 0.0 })),
                    )
                })
                .collect();
            let mut naive = base_design(&req, "naive", String::new(), "out");
            for k in 0..n {
                let (a, b) = (
                    if k == 0 { "in".to_string() } else { format!("n{k}") },
                    if k + 1 == n { "out".to_string() } else { format!("n{}", k + 1) },
                );
                if response == ResponseType::LowPass {
                    add_part(&mut naive, &format!("R{k}"), "resistor", &single(r[k]), &a, &b);
                    add_part(&mut naive, &format!("C{k}"), "capacitor", &naive_c[k], &b, "0");
                } else {
                    add_part(&mut naive, &format!("C{k}"), "capacitor", &naive_c[k], &a, &b);
                    add_part(&mut naive, &format!("R{k}"), "resistor", &single(r[k]), &b, "0");
                }
            }
            let naive_deviation = engine_deviation(&naive, &target, response, result.deviation_band_hz);
            eprintln!("  naive uncorrected ladder: {naive_deviation:.3} dB");
            assert!(
                best.max_response_deviation_db * 3.0 < naive_deviation,
                "{} vs naive {naive_deviation}",
                best.max_response_deviation_db
            );
        }
    }

    // Distinct real poles (Q < 0.5) are met exactly by the ideal ladder, and the search finds
    // the optimum of its stated objective (checked by brute force with engine sweeps over the
    // same domain: every resistor set of the taper grid, every combination of the three
    // nearest capacitor choices).
    #[test]
    fn rc_ladder_fit_is_the_brute_force_optimum() {
        let mut opts = options(parts(Series::E6, Series::E6, Series::E6), Combine::Single);
        opts.resistor_range = (1e3, 1e5);
        for response in [ResponseType::LowPass, ResponseType::HighPass] {
            let req = Requirement {
                response,
                alignment: Alignment::Quality { q: 0.3 },
                order: 2,
                band: Band::Cutoff(2e3),
                source_resistance: 50.0,
                load_resistance: Some(1e6),
                load_capacitance: None,
            };
            let result = fit(&req, Topology::Rc, &opts).unwrap();
            let target = rc_target(&req);
            // The ideal design realises the target exactly.
            assert!(engine_deviation(&result.ideal, &target, response, result.deviation_band_hz) < 1e-9);
            let mut brute = f64::INFINITY;
            let load = crate::rc_ladder::RcLoad { resistance: Some(1e6), capacitance: None };
            let poles: Vec<f64> = target.poles.iter().map(|p| -p.re).collect();
            let polynomial = crate::rc_ladder::real_pole_polynomial(&poles);
            let omega_c = 2.0 * PI * 2e3;
            let gain = crate::rc_ladder::normalised_gain(response, &polynomial, omega_c);
            for r1 in opts.parts.resistors.values_between(1e3, 1e5) {
                for taper in RC_TAPERS {
                    let r: Vec<f64> =
                        (0..2).map(|k| opts.parts.resistors.nearest(r1 * taper.powi(k)).unwrap()).collect();
                    if r.iter().any(|&x| !(1e3 * (1.0 - 1e-12)..=1e5 * (1.0 + 1e-12)).contains(&x)) {
                        continue;
                    }
                    let Some(ideal) = crate::rc_ladder::exact_capacitors(response, 50.0, &r, load, &polynomial)
                        .or_else(|| {
                            crate::rc_ladder::equal_time_constant_capacitors(response, 50.0, &r, load, omega_c, gain)
                        })
                    else {
                        continue;
                    };
                    let choices: Vec<Vec<Choice>> = ideal
                        .iter()
                        .map(|&c| nearest_choices(&opts.parts.capacitors, c, Combine::Single, PartKind::Capacitive, 3))
                        .collect();
                    for c1 in &choices[0] {
                        for c2 in &choices[1] {
                            let mut design = base_design(&req, "brute", String::new(), "out");
                            let nodes = [("in", "n1"), ("n1", "out")];
                            for (k, c) in [c1, c2].into_iter().enumerate() {
                                let (a, b) = nodes[k];
                                if response == ResponseType::LowPass {
                                    add_part(&mut design, &format!("R{k}"), "resistor", &single(r[k]), a, b);
                                    add_part(&mut design, &format!("C{k}"), "capacitor", c, b, "0");
                                } else {
                                    add_part(&mut design, &format!("C{k}"), "capacitor", c, a, b);
                                    add_part(&mut design, &format!("R{k}"), "resistor", &single(r[k]), b, "0");
                                }
                            }
                            brute = brute.min(
                                engine_deviation(&design, &target, response, result.deviation_band_hz)
                                    + RC_CUTOFF_WEIGHT * engine_cutoff_error_db(&design, &target, response, 2e3),
                            );
                        }
                    }
                }
            }
            let best = result.alternatives[0].objective;
            assert!((best - brute).abs() < 1e-6, "{response:?}: fit {best} dB vs brute force {brute} dB");
            let achieved = result.alternatives[0].achieved;
            assert!(achieved.f0_hz.is_some() && achieved.q.is_some(), "{achieved:?}");
        }
    }

    #[test]
    fn rc_ladders_refuse_complex_poles_and_band_responses() {
        let opts = options(parts(Series::E96, Series::E12, Series::E12), Combine::Single);
        let bessel = Requirement {
            alignment: Alignment::Bessel { normalization: crate::synthesis::BesselNormalization::Magnitude },
            ..lowpass(2, 1e3, 0.0, None)
        };
        let error = fit(&bessel, Topology::Rc, &opts).unwrap_err().to_string();
        assert!(error.contains("section Q of 0.5774") && error.contains("cannot exceed Q = 0.5"), "{error}");
        let lr4 = Requirement { alignment: Alignment::LinkwitzRiley, ..lowpass(4, 1e3, 0.0, None) };
        assert!(fit(&lr4, Topology::Rc, &opts).unwrap_err().to_string().contains("Q of 0.7071"));
        let lr2 = Requirement { alignment: Alignment::LinkwitzRiley, ..lowpass(2, 1e3, 0.0, Some(1e6)) };
        let result = fit(&lr2, Topology::Rc, &opts).unwrap();
        assert!(result.alternatives[0].design.note.contains("least squares"));
    }

    #[test]
    fn rc_with_high_q_is_refused() {
        let opts = options(parts(Series::E96, Series::E12, Series::E12), Combine::Single);
        let error = fit(&lowpass(2, 1e3, 0.0, None), Topology::Rc, &opts).unwrap_err();
        assert!(error.to_string().contains("cannot exceed Q = 0.5"), "{error}");
    }

    #[test]
    fn rlc_closed_forms_match_the_mna_poles() {
        // The closed-form (f0, Q) of each form against the pole pair found by the modal solver.
        let req = Requirement {
            response: ResponseType::LowPass,
            alignment: Alignment::Quality { q: 0.9 },
            order: 2,
            band: Band::Cutoff(1e3),
            source_resistance: 47.0,
            load_resistance: Some(1e3),
            load_capacitance: Some(1e-8),
        };
        let opts = options(parts(Series::E96, Series::E12, Series::E12), Combine::Single);
        let mut checked = 0;
        for (response, form) in
            [ResponseType::LowPass, ResponseType::HighPass, ResponseType::BandPass, ResponseType::BandStop]
                .into_iter()
                .flat_map(|response| [(response, RlcForm::Series), (response, RlcForm::Shunt)])
        {
            let shape = RlcShape { response, form };
            let req = Requirement {
                response,
                load_capacitance: if (response, form) == (ResponseType::LowPass, RlcForm::Series) {
                    req.load_capacitance
                } else {
                    None
                },
                ..req.clone()
            };
            let (l, c, r) = (10e-3, 2.2e-6, 33.0);
            let design = rlc_design(&req, shape, &opts, &single(l), &single(c), Some(&single(r)));
            let (circuit, probe) = design.to_circuit().unwrap();
            let mut system = AcSystem::new(&circuit, &probe);
            let poles = crate::modal::Modal::new(&mut system).unwrap().poles();
            let pair = poles.iter().find(|p| p.im > 0.0).copied().unwrap_or_else(|| poles[0]);
            let (f0, q) = rlc_figures(shape, l, c, 47.0 + r, &req);
            // Two poles whatever the form (a real pair for low Q): their product and sum give ω0 and Q.
            assert_eq!(poles.len(), 2, "{response:?} {form:?}: {poles:?}");
            let product = (poles[0] * poles[1]).re;
            let sum = -(poles[0] + poles[1]).re;
            let (f0_poles, q_poles) = (product.sqrt() / (2.0 * PI), product.sqrt() / sum);
            assert!(
                (f0 / f0_poles - 1.0).abs() < 1e-9 && (q / q_poles - 1.0).abs() < 1e-9,
                "{response:?} {form:?}: {f0} {q} vs {f0_poles} {q_poles}"
            );
            let _ = pair;
            checked += 1;
        }
        assert_eq!(checked, 8);
    }

    // Each shunt-first and series-first form reaches the exact f0 and Q with its ideal values,
    // and the fitted design's poles give the reported figures.
    #[test]
    fn every_rlc_form_fits_and_reports_its_own_figures() {
        let opts = options(parts(Series::E96, Series::E12, Series::E12), Combine::Single);
        for response in [ResponseType::LowPass, ResponseType::HighPass, ResponseType::BandPass, ResponseType::BandStop]
        {
            for form in [RlcForm::Series, RlcForm::Shunt] {
                let req = Requirement {
                    response,
                    alignment: Alignment::Quality { q: 0.8 },
                    order: 2,
                    band: Band::Cutoff(5e3),
                    source_resistance: 50.0,
                    load_resistance: Some(2e3),
                    load_capacitance: None,
                };
                let result =
                    fit(&req, Topology::Rlc(form), &opts).unwrap_or_else(|e| panic!("{response:?} {form:?}: {e}"));
                let best = &result.alternatives[0];
                let (circuit, probe) = best.design.to_circuit().unwrap();
                let poles = crate::modal::Modal::new(&mut AcSystem::new(&circuit, &probe)).unwrap().poles();
                assert_eq!(poles.len(), 2, "{response:?} {form:?}");
                let product = (poles[0] * poles[1]).re;
                let (f0, q) = (product.sqrt() / (2.0 * PI), product.sqrt() / -(poles[0] + poles[1]).re);
                assert!((f0 / best.achieved.f0_hz.unwrap() - 1.0).abs() < 1e-9, "{response:?} {form:?}");
                assert!((q / best.achieved.q.unwrap() - 1.0).abs() < 1e-9, "{response:?} {form:?}");
                let brute = brute_force_rlc(&req, RlcShape { response, form }, &opts, 5e3, 0.8);
                assert!(
                    best.objective <= brute * (1.0 + 1e-9) + 1e-12,
                    "{response:?} {form:?}: {} vs brute {brute}",
                    best.objective
                );
                eprintln!(
                    "{response:?} {form:?}: f0 error {:+.3} %, Q error {:+.3} %",
                    best.f0_error_pct.unwrap(),
                    best.q_error_pct.unwrap()
                );
                assert!(best.design.note.contains(form.name()), "{}", best.design.note);
                // The ideal design meets the target exactly.
                let (circuit, probe) = result.ideal.to_circuit().unwrap();
                let poles = crate::modal::Modal::new(&mut AcSystem::new(&circuit, &probe)).unwrap().poles();
                let product = (poles[0] * poles[1]).re;
                let (f0, q) = (product.sqrt() / (2.0 * PI), product.sqrt() / -(poles[0] + poles[1]).re);
                assert!(
                    (f0 / 5e3 - 1.0).abs() < 1e-7 && (q / 0.8 - 1.0).abs() < 1e-7,
                    "{response:?} {form:?}: ideal {f0} {q}"
                );
            }
        }
        // A target a form cannot reach is refused with the reason, and the other form named.
        let high_q = Requirement {
            response: ResponseType::LowPass,
            alignment: Alignment::Quality { q: 2.0 },
            order: 2,
            band: Band::Cutoff(5e3),
            source_resistance: 50.0,
            load_resistance: Some(2e3),
            load_capacitance: None,
        };
        let error = fit(&high_q, Topology::Rlc(RlcForm::Shunt), &opts).unwrap_err().to_string();
        assert!(error.contains("cannot reach f0 = 5000 Hz and Q = 2") && error.contains("--first series"), "{error}");
        // Forms that need a load say so.
        let open = Requirement {
            response: ResponseType::LowPass,
            alignment: Alignment::Quality { q: 2.0 },
            order: 2,
            band: Band::Cutoff(5e3),
            source_resistance: 50.0,
            load_resistance: None,
            load_capacitance: None,
        };
        let error = fit(&open, Topology::Rlc(RlcForm::Shunt), &opts).unwrap_err().to_string();
        assert!(error.contains("needs a resistive load"), "{error}");
    }
}
