//! Tolerance analysis: Monte Carlo trials with a fixed seed and sensitivity-guided worst-case
//! corners, summarised as envelopes of magnitude, phase and group delay over frequency and as the
//! spread of the −3 dB corners and of the pole Qs.
//!
//! # Model
//! Every resistor, capacitor and inductor of the circuit varies by a relative tolerance t: its
//! value is x·(1 + t·u). Sources, the source resistance and the load are the requirement, not
//! parts, and do not vary unless they are written as parts of the circuit.
//! - [`Distribution::Uniform`]: u uniform on [−1, 1] (every value within the tolerance equally
//!   likely; the pessimistic reading of a tolerance band).
//! - [`Distribution::Normal`]: u = z/3 with z standard normal, so the tolerance is 3σ and 0.27 %
//!   of parts fall outside it (common practice for a "3σ" reading of a tolerance; the normal is
//!   not truncated). A draw that would make a value ≤ 1 % of nominal (a 33σ event for t ≤ 1) is
//!   clamped there.
//!
//! # Reproducibility
//! Trial k draws its values from Xoshiro256++ seeded with `seed_from_u64` of a SplitMix64 mix of
//! (seed, k) (the generator of Blackman & Vigna, "Scrambled linear pseudorandom number
//! generators", 2021, through the `rand_xoshiro` crate). A trial's values therefore depend only on
//! the seed and its own index, never on how the trials are split among threads or Web Workers,
//! so any split reproduces the same run bit for bit. Parts are drawn in circuit order.
//!
//! # Worst-case corners
//! Enumerating all 2^n corners is impractical for large designs. The corners here are
//! sensitivity-guided: at each frequency of the grid, the first-order change of the gain in dB
//! with respect to each part's relative change is found by central differences at ±t/8 around
//! nominal; the corner that drives the gain highest (lowest) sets each part to the end of its band
//! in the direction of (against) that sensitivity. The distinct corners over all frequencies are
//! then evaluated exactly, and so are the corners for the group delay. This is the usual
//! linearised worst-case method (common practice; it is exact where the response is monotonic in
//! each part over the band, and an estimate otherwise, which is why the Monte Carlo runs beside
//! it). The reported envelope is the union of the trials and the corners.
//!
//! # Solution
//! Where the circuit is a ladder of two-terminal branches (every passive design the fitting
//! makes), each trial is solved by series–parallel reduction ([`crate::reduction`]): O(parts)
//! complex operations per frequency with the exact derivative. Any other circuit, and any point the
//! reduction declines (DC with a series capacitor), re-stamps the MNA matrix pencil G + s·C
//! ([`AcSystem::pencil`]) and solves it with the banded LU of [`crate::lu`], together with the
//! exact derivative (G + jωC)·x′ = −jC·x. Either way the group delay is exact, not differenced.
//! The nominal circuit is solved both ways and compared with the engine's own LU sweep: a plan is
//! refused if the MNA path disagrees, and the reduction is dropped if it does.

use crate::circuit::{Circuit, ElementKind};
use crate::lu::Lu;
use crate::measure::{measure, Edge, ReferenceKind, HALF_POWER_DB};
use crate::mna::{AcSystem, Detail, Pencil, Probe};
use crate::reduction::Reduction;
use crate::response::Response;
use crate::sweep::{sweep, FrequencyGrid};
use num_complex::Complex64;
use rand_core::SeedableRng;
use rand_distr::{Distribution as _, StandardNormal, StandardUniform};
use rand_xoshiro::Xoshiro256PlusPlus;
use std::f64::consts::PI;
use std::fmt;
use std::ops::Range;

/// The most trials one plan accepts.
pub const MAX_TRIALS: usize = 1_000_000;

/// The largest relative tolerance accepted (100 %).
pub const MAX_TOLERANCE: f64 = 1.0;

/// How a part's value is spread within its tolerance.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Distribution {
    /// Uniform over ±tolerance.
    #[default]
    Uniform,
    /// Normal with the tolerance as 3σ, not truncated.
    Normal,
}

/// Relative tolerances by kind of part, as fractions (0.05 for 5 %).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct KindTolerances {
    /// Resistors.
    pub resistor: f64,
    /// Capacitors.
    pub capacitor: f64,
    /// Inductors.
    pub inductor: f64,
}

impl KindTolerances {
    /// The defaults for parts whose series gives no tolerance: resistors 1 %, capacitors 5 %,
    /// inductors 10 % (common practice for film resistors, film capacitors and wound coils, from
    /// memory; a fitted part carries its series' own tolerance instead).
    pub const USUAL: KindTolerances = KindTolerances { resistor: 0.01, capacitor: 0.05, inductor: 0.10 };
}

/// What a tolerance run does.
#[derive(Debug, Clone, PartialEq)]
pub struct ToleranceOptions {
    /// Number of Monte Carlo trials (0: corners only).
    pub trials: usize,
    /// The seed; the same seed gives the same run.
    pub seed: u64,
    /// How values spread.
    pub distribution: Distribution,
    /// Tolerances by kind of part.
    pub by_kind: KindTolerances,
    /// Per-part tolerances that replace the kind's, by reference (e.g. `("R2", 0.001)`).
    pub by_part: Vec<(String, f64)>,
    /// The central fraction of trials inside the percentile band, in (0, 1): 0.9 gives the 5th to
    /// 95th percentile.
    pub band: f64,
    /// Whether to evaluate the worst-case corners.
    pub corners: bool,
    /// Whether to find each trial's poles for the Q spread (one eigendecomposition per trial).
    pub pole_spread: bool,
}

/// One part that varies.
#[derive(Debug, Clone, PartialEq)]
pub struct VariedPart {
    /// The part's reference.
    pub reference: String,
    /// Index of the element in the circuit.
    pub element: usize,
    /// Nominal value in SI units (Ω, F or H).
    pub nominal: f64,
    /// Relative tolerance (fraction).
    pub tolerance: f64,
    /// Where the tolerance came from.
    pub origin: ToleranceOrigin,
    /// "resistor", "capacitor" or "inductor".
    pub kind: &'static str,
}

/// Where a part's tolerance came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum ToleranceOrigin {
    /// The default for its kind of part ([`ToleranceOptions::by_kind`]).
    Kind,
    /// The design file (fitting writes each part's series tolerance there).
    Design,
    /// Given for this part ([`ToleranceOptions::by_part`]).
    Given,
}

/// A compiled tolerance run: the circuit, its varied parts, the grid and the nominal response.
#[derive(Debug, Clone)]
pub struct TolerancePlan {
    circuit: Circuit,
    probe: Probe,
    options: ToleranceOptions,
    parts: Vec<VariedPart>,
    f_hz: Vec<f64>,
    nominal: TrialResponse,
    reference: ReferenceKind,
    /// The nominal −3 dB corners (frequency, edge).
    corners: Vec<(f64, Edge)>,
    /// The nominal pole Qs of the complex pairs, ascending.
    nominal_q: Vec<f64>,
    /// The ladder form of the circuit, where it has one and it agrees with the engine.
    reduction: Option<Reduction>,
}

/// The response of one trial on the plan's grid. Unsolvable points are NaN here and are skipped by
/// every summary.
#[derive(Debug, Clone, PartialEq)]
pub struct TrialResponse {
    /// 20·log10|H| per frequency.
    pub gain_db: Vec<f64>,
    /// arg H in degrees, unwrapped along the grid from the principal value at its first point.
    pub phase_deg: Vec<f64>,
    /// Group delay in s.
    pub group_delay_s: Vec<f64>,
    /// d(dB)/d(ln f), exact, for locating crossings between points.
    slope_db: Vec<f64>,
}

/// The results of a run of trials (or of the corners), to be merged into a report.
#[derive(Debug, Clone, PartialEq)]
pub struct TrialBatch {
    /// The trial indices covered (empty for corners).
    pub trials: Range<usize>,
    /// Responses, one per trial or corner.
    pub responses: Vec<TrialResponse>,
    /// The value multipliers used, one row per response, in [`TolerancePlan::parts`] order.
    pub multipliers: Vec<Vec<f64>>,
    /// The −3 dB corners per response, one per nominal corner (NaN where not found).
    pub corner_hz: Vec<Vec<f64>>,
    /// The pole Qs per response, ascending (empty when pole spread is off or not found).
    pub q: Vec<Vec<f64>>,
}

/// An envelope of one quantity over frequency.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Envelope {
    /// Nominal values.
    pub nominal: Vec<f64>,
    /// Smallest value over trials and corners.
    pub min: Vec<f64>,
    /// Largest value over trials and corners.
    pub max: Vec<f64>,
    /// Lower percentile over the trials (NaN-free: the nominal where there are no trials).
    pub low: Vec<f64>,
    /// Upper percentile over the trials.
    pub high: Vec<f64>,
}

/// The spread of one scalar over the trials.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Spread {
    /// Nominal value.
    pub nominal: f64,
    /// Mean over the trials where it was found.
    pub mean: f64,
    /// Sample standard deviation.
    pub std_dev: f64,
    /// Smallest over trials and corners.
    pub min: f64,
    /// Largest over trials and corners.
    pub max: f64,
    /// Lower percentile over the trials.
    pub low: f64,
    /// Upper percentile over the trials.
    pub high: f64,
    /// Trials in which it was not found (a corner left the grid, a pole pair split).
    pub missing: usize,
}

/// A summarised tolerance run.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct ToleranceReport {
    /// The seed used.
    pub seed: u64,
    /// Number of Monte Carlo trials.
    pub trials: usize,
    /// Number of corners evaluated.
    pub corners: usize,
    /// "uniform" or "normal (tolerance = 3σ)".
    pub distribution: &'static str,
    /// The percentile band's ends, as fractions (e.g. 0.05 and 0.95).
    pub band: (f64, f64),
    /// The varied parts and their tolerances.
    pub parts: Vec<PartSummary>,
    /// The frequencies in Hz.
    pub f_hz: Vec<f64>,
    /// Gain in dB.
    pub gain_db: Envelope,
    /// Phase in degrees.
    pub phase_deg: Envelope,
    /// Group delay in s.
    pub group_delay_s: Envelope,
    /// Each nominal −3 dB corner's spread, in Hz, with its edge ("falling" or "rising").
    pub corner_hz: Vec<(String, Spread)>,
    /// Each nominal complex pole pair's Q spread, ascending by nominal Q.
    pub q: Vec<Spread>,
}

/// How a tolerance run fares against a spec mask.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct MaskYield {
    /// Trials inside the mask.
    pub passed: usize,
    /// Trials checked.
    pub trials: usize,
    /// The nominal design's report.
    pub nominal: crate::mask::MaskReport,
    /// The spread of each trial's worst margin (negative: outside the mask).
    pub worst_margin: Spread,
}

/// A varied part in a report.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct PartSummary {
    /// Reference.
    pub reference: String,
    /// Nominal value in SI units.
    pub nominal: f64,
    /// Relative tolerance (fraction).
    pub tolerance: f64,
    /// Where the tolerance came from.
    pub origin: ToleranceOrigin,
    /// "resistor", "capacitor" or "inductor".
    pub kind: &'static str,
}

/// Why a tolerance run cannot be set up.
#[derive(Debug, Clone, PartialEq)]
pub enum ToleranceError {
    /// A tolerance is negative, not finite or above [`MAX_TOLERANCE`].
    BadTolerance {
        /// What it applies to ("resistors", or a part reference).
        what: String,
        /// The value as a fraction.
        value: f64,
    },
    /// A per-part tolerance names a part the circuit does not have, or one that does not vary.
    UnknownPart {
        /// The reference given.
        reference: String,
    },
    /// Too many trials.
    BadTrials {
        /// The number asked for.
        trials: usize,
    },
    /// The percentile band is not in (0, 1).
    BadBand {
        /// The band asked for.
        band: f64,
    },
    /// No part varies: every tolerance is zero or there are no R, L or C parts.
    NothingVaries,
    /// The nominal circuit cannot be solved at any frequency of the grid.
    NominalUnsolvable,
    /// The design does not make a circuit.
    Design {
        /// What is wrong with it.
        message: String,
    },
}

impl fmt::Display for ToleranceError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::BadTolerance { what, value } => write!(
                f,
                "tolerance {} % for {what} is not usable; give a percentage from 0 to {}",
                value * 100.0,
                MAX_TOLERANCE * 100.0
            ),
            Self::UnknownPart { reference } => write!(
                f,
                "no resistor, capacitor or inductor named {reference:?} in this design; per-part tolerances name a part's reference, such as R1 or C2"
            ),
            Self::BadTrials { trials } => {
                write!(f, "too many trials ({trials}); use at most {MAX_TRIALS}")
            }
            Self::BadBand { band } => write!(
                f,
                "percentile band {band} is not usable; give the central fraction of trials, between 0 and 1 (0.9 for 5 % to 95 %)"
            ),
            Self::NothingVaries => write!(
                f,
                "no part varies: give a non-zero tolerance for at least one resistor, capacitor or inductor"
            ),
            Self::NominalUnsolvable => write!(
                f,
                "the nominal circuit cannot be solved at any frequency of the sweep; check the design's connections"
            ),
            Self::Design { message } => write!(f, "{message}"),
        }
    }
}

impl std::error::Error for ToleranceError {}

impl Default for KindTolerances {
    /// 1 % resistors, 5 % capacitors, 10 % inductors (common practice for stock parts).
    fn default() -> Self {
        KindTolerances { resistor: 0.01, capacitor: 0.05, inductor: 0.10 }
    }
}

impl Default for ToleranceOptions {
    fn default() -> Self {
        ToleranceOptions {
            trials: 1000,
            seed: 1,
            distribution: Distribution::Uniform,
            by_kind: KindTolerances::default(),
            by_part: Vec::new(),
            band: 0.9,
            corners: true,
            pole_spread: true,
        }
    }
}

impl Distribution {
    /// A short description for reports.
    pub fn describe(self) -> &'static str {
        match self {
            Distribution::Uniform => "uniform",
            Distribution::Normal => "normal (tolerance = 3σ)",
        }
    }
}

impl TolerancePlan {
    /// Compiles a run over `grid` for a design: its parts vary, its source and load do not.
    ///
    /// # Errors
    /// [`ToleranceError::Design`] when the design does not make a circuit, and as
    /// [`TolerancePlan::new`].
    pub fn for_design(
        design: &crate::design::Design,
        grid: &FrequencyGrid,
        options: &ToleranceOptions,
    ) -> Result<TolerancePlan, ToleranceError> {
        let (circuit, probe) = design.to_circuit().map_err(|e| ToleranceError::Design { message: e.to_string() })?;
        let fixed = [crate::design::LOAD_R_REF, crate::design::LOAD_C_REF];
        // The design's own tolerances (its parts' series) come first; the options' per-part
        // tolerances replace them.
        let mut options = options.clone();
        let given = std::mem::take(&mut options.by_part);
        options.by_part = design.tolerances.iter().map(|(r, pct)| (r.clone(), pct / 100.0)).collect();
        let from_design = options.by_part.len();
        options.by_part.extend(given);
        let mut plan = Self::with_fixed(&circuit, &probe, grid, &options, &fixed)?;
        for part in &mut plan.parts {
            let last = options.by_part.iter().rposition(|(r, _)| *r == part.reference);
            part.origin = match last {
                Some(i) if i < from_design => ToleranceOrigin::Design,
                Some(_) => ToleranceOrigin::Given,
                None => ToleranceOrigin::Kind,
            };
        }
        Ok(plan)
    }

    /// Compiles a run over `grid` for `circuit` measured by `probe`; every R, L and C varies.
    ///
    /// # Errors
    /// [`ToleranceError`] for a bad option, a per-part tolerance naming no varying part, nothing
    /// to vary, or a nominal circuit that no frequency of the grid solves.
    pub fn new(
        circuit: &Circuit,
        probe: &Probe,
        grid: &FrequencyGrid,
        options: &ToleranceOptions,
    ) -> Result<TolerancePlan, ToleranceError> {
        Self::with_fixed(circuit, probe, grid, options, &[])
    }

    /// As [`TolerancePlan::new`], with the parts named in `fixed` held at their values.
    ///
    /// # Errors
    /// [`ToleranceError`] for a bad option, a per-part tolerance naming no varying part, nothing
    /// to vary, or a nominal circuit that no frequency of the grid solves.
    pub fn with_fixed(
        circuit: &Circuit,
        probe: &Probe,
        grid: &FrequencyGrid,
        options: &ToleranceOptions,
        fixed: &[&str],
    ) -> Result<TolerancePlan, ToleranceError> {
        if options.trials > MAX_TRIALS {
            return Err(ToleranceError::BadTrials { trials: options.trials });
        }
        if !(options.band > 0.0 && options.band < 1.0) {
            return Err(ToleranceError::BadBand { band: options.band });
        }
        let check = |what: &str, value: f64| {
            if value.is_finite() && (0.0..=MAX_TOLERANCE).contains(&value) {
                Ok(value)
            } else {
                Err(ToleranceError::BadTolerance { what: what.to_string(), value })
            }
        };
        let kinds = options.by_kind;
        check("resistors", kinds.resistor)?;
        check("capacitors", kinds.capacitor)?;
        check("inductors", kinds.inductor)?;
        let mut parts = Vec::new();
        for (index, element) in circuit.elements().iter().enumerate() {
            let (nominal, tolerance) = match element.kind {
                ElementKind::Resistor { resistance } => (resistance, kinds.resistor),
                ElementKind::Capacitor { capacitance, .. } => (capacitance, kinds.capacitor),
                ElementKind::Inductor { inductance, .. } => (inductance, kinds.inductor),
                _ => continue,
            };
            if fixed.contains(&element.reference.as_str()) {
                continue;
            }
            parts.push(VariedPart {
                reference: element.reference.clone(),
                element: index,
                nominal,
                tolerance,
                origin: ToleranceOrigin::Kind,
                kind: element.kind.name(),
            });
        }
        for (reference, value) in &options.by_part {
            let value = check(reference, *value)?;
            let part = parts
                .iter_mut()
                .find(|p| p.reference == *reference)
                .ok_or_else(|| ToleranceError::UnknownPart { reference: reference.clone() })?;
            part.tolerance = value;
            part.origin = ToleranceOrigin::Given;
        }
        parts.retain(|p| p.tolerance > 0.0);
        if parts.is_empty() {
            return Err(ToleranceError::NothingVaries);
        }
        let f_hz = grid.frequencies().to_vec();
        let mut system = AcSystem::new(circuit, probe);
        let exact = sweep(&mut system, grid, Detail::Transfer);
        let measured = measure(&exact).map_err(|_| ToleranceError::NominalUnsolvable)?;
        let mut plan = TolerancePlan {
            circuit: circuit.clone(),
            probe: probe.clone(),
            options: options.clone(),
            parts,
            f_hz,
            nominal: TrialResponse::empty(0),
            reference: measured.reference.kind,
            corners: measured.corners.iter().map(|c| (c.f_hz, c.edge)).collect(),
            nominal_q: Vec::new(),
            reduction: None,
        };
        let ones = vec![1.0; plan.parts.len()];
        plan.nominal = plan.evaluate(&ones);
        if !agrees_with(&plan.nominal, &exact) {
            return Err(ToleranceError::NominalUnsolvable);
        }
        // The fast path is used only where it reproduces the engine at the nominal values.
        plan.reduction = Reduction::new(circuit, probe);
        if plan.reduction.is_some() {
            let fast = plan.evaluate(&ones);
            if agrees_with(&fast, &exact) {
                plan.nominal = fast;
            } else {
                plan.reduction = None;
            }
        }
        if options.pole_spread {
            plan.nominal_q = plan.pole_q(&ones).unwrap_or_default();
        }
        Ok(plan)
    }

    /// The parts that vary, in circuit order.
    pub fn parts(&self) -> &[VariedPart] {
        &self.parts
    }

    /// The grid in Hz.
    pub fn frequencies(&self) -> &[f64] {
        &self.f_hz
    }

    /// The nominal response.
    pub fn nominal(&self) -> &TrialResponse {
        &self.nominal
    }

    /// The options the plan was made with.
    pub fn options(&self) -> &ToleranceOptions {
        &self.options
    }

    /// The value multipliers of Monte Carlo trial `trial` (see the module doc).
    pub fn trial_multipliers(&self, trial: usize) -> Vec<f64> {
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(splitmix64(self.options.seed ^ splitmix64(trial as u64)));
        self.parts
            .iter()
            .map(|part| {
                let u: f64 = match self.options.distribution {
                    Distribution::Uniform => {
                        let x: f64 = StandardUniform.sample(&mut rng);
                        2.0 * x - 1.0
                    }
                    Distribution::Normal => {
                        let z: f64 = StandardNormal.sample(&mut rng);
                        z / 3.0
                    }
                };
                (1.0 + part.tolerance * u).max(0.01)
            })
            .collect()
    }

    /// Runs the Monte Carlo trials in `trials` (a sub-range of 0..options.trials, for splitting a
    /// run among threads or workers).
    pub fn run_trials(&self, trials: Range<usize>) -> TrialBatch {
        let mut batch = TrialBatch::new(trials.clone());
        for trial in trials {
            let multipliers = self.trial_multipliers(trial);
            self.push(&mut batch, multipliers);
        }
        batch
    }

    /// Evaluates the sensitivity-guided worst-case corners (see the module doc).
    pub fn run_corners(&self) -> TrialBatch {
        let mut batch = TrialBatch::new(0..0);
        for corner in self.corner_set() {
            self.push(&mut batch, corner);
        }
        batch
    }

    /// Runs everything on one thread: the trials, then the corners if asked for.
    pub fn run(&self) -> ToleranceReport {
        let mut batches = vec![self.run_trials(0..self.options.trials)];
        if self.options.corners {
            batches.push(self.run_corners());
        }
        self.summarize(&batches)
    }

    /// Summarises batches (trials from any split, plus at most one batch of corners).
    pub fn summarize(&self, batches: &[TrialBatch]) -> ToleranceReport {
        let is_trial = |b: &TrialBatch| !b.trials.is_empty();
        let trials: Vec<&TrialResponse> = batches.iter().filter(|b| is_trial(b)).flat_map(|b| &b.responses).collect();
        let corners: Vec<&TrialResponse> = batches.iter().filter(|b| !is_trial(b)).flat_map(|b| &b.responses).collect();
        let (lo_q, hi_q) = ((1.0 - self.options.band) / 2.0, (1.0 + self.options.band) / 2.0);
        let envelope = |pick: fn(&TrialResponse) -> &[f64]| {
            let n = self.f_hz.len();
            let nominal = pick(&self.nominal).to_vec();
            let mut env = Envelope {
                min: nominal.clone(),
                max: nominal.clone(),
                low: nominal.clone(),
                high: nominal.clone(),
                nominal,
            };
            for r in &corners {
                for (k, &v) in pick(r).iter().enumerate().filter(|(_, v)| v.is_finite()) {
                    env.min[k] = env.min[k].min(v);
                    env.max[k] = env.max[k].max(v);
                }
            }
            // Frequency-major copy of the trials, filled a block of trials at a time so that
            // both the reads and the writes stay in cache.
            let count = trials.len();
            let mut by_frequency = vec![0.0; n * count];
            for (block, chunk) in trials.chunks(64).enumerate() {
                for k in 0..n {
                    let row = &mut by_frequency[k * count + block * 64..];
                    for (t, r) in chunk.iter().enumerate() {
                        row[t] = pick(r)[k];
                    }
                }
            }
            for k in 0..n {
                let column = &mut by_frequency[k * count..(k + 1) * count];
                let mut finite = 0;
                for t in 0..count {
                    let v = column[t];
                    if v.is_finite() {
                        env.min[k] = env.min[k].min(v);
                        env.max[k] = env.max[k].max(v);
                        column[finite] = v;
                        finite += 1;
                    }
                }
                if finite > 0 {
                    let (low, high) = percentile_pair(&mut column[..finite], lo_q, hi_q);
                    env.low[k] = low;
                    env.high[k] = high;
                }
            }
            env
        };
        let spread = |nominal: f64, pick: &dyn Fn(&TrialBatch, usize) -> Option<f64>| {
            let mut values = Vec::new();
            let mut missing = 0;
            let mut corner_values = Vec::new();
            for batch in batches {
                for i in 0..batch.responses.len() {
                    match pick(batch, i).filter(|v| v.is_finite()) {
                        Some(v) if is_trial(batch) => values.push(v),
                        Some(v) => corner_values.push(v),
                        None if is_trial(batch) => missing += 1,
                        None => {}
                    }
                }
            }
            summary(nominal, &mut values, &corner_values, missing, lo_q, hi_q)
        };
        let corner_hz = self
            .corners
            .iter()
            .enumerate()
            .map(|(j, &(f, edge))| {
                let name = match edge {
                    Edge::Falling => "falling",
                    Edge::Rising => "rising",
                };
                (name.to_string(), spread(f, &|b, i| b.corner_hz[i].get(j).copied()))
            })
            .collect();
        let q = self
            .nominal_q
            .iter()
            .enumerate()
            .map(|(j, &q0)| {
                spread(q0, &|b, i| {
                    let qs = b.q.get(i)?;
                    (qs.len() == self.nominal_q.len()).then(|| qs[j])
                })
            })
            .collect();
        ToleranceReport {
            seed: self.options.seed,
            trials: trials.len(),
            corners: corners.len(),
            distribution: self.options.distribution.describe(),
            band: (lo_q, hi_q),
            parts: self
                .parts
                .iter()
                .map(|p| PartSummary {
                    reference: p.reference.clone(),
                    nominal: p.nominal,
                    tolerance: p.tolerance,
                    origin: p.origin,
                    kind: p.kind,
                })
                .collect(),
            f_hz: self.f_hz.clone(),
            gain_db: envelope(|r| &r.gain_db),
            phase_deg: envelope(|r| &r.phase_deg),
            group_delay_s: envelope(|r| &r.group_delay_s),
            corner_hz,
            q,
        }
    }

    /// The yield of the trials against a spec mask: how many pass, with the nominal design's
    /// report and the spread of the worst margin (dB, or the delay limit's unit where that is
    /// the worst region) over the trials.
    ///
    /// # Errors
    /// The mask's own errors ([`crate::mask::check_points`]), such as a grid that does not cover
    /// the passband or stopband: sweep wider.
    pub fn mask_yield(
        &self,
        batches: &[TrialBatch],
        mask: &crate::mask::SpecMask,
    ) -> Result<MaskYield, crate::mask::MaskError> {
        let check = |r: &TrialResponse| {
            let finite = |v: &[f64]| v.iter().map(|x| x.is_finite().then_some(*x)).collect::<Vec<_>>();
            let delays = if mask.max_group_delay_variation_s.is_some() { finite(&r.group_delay_s) } else { Vec::new() };
            crate::mask::check_points(mask, &self.f_hz, &finite(&r.gain_db), &delays)
        };
        let nominal = check(&self.nominal)?;
        let (mut passed, mut trials) = (0, 0);
        let mut margins = Vec::new();
        for batch in batches.iter().filter(|b| !b.trials.is_empty()) {
            for response in &batch.responses {
                trials += 1;
                if let Ok(report) = check(response) {
                    if report.pass {
                        passed += 1;
                    }
                    margins.push(report.worst_margin_db);
                }
            }
        }
        let (lo, hi) = ((1.0 - self.options.band) / 2.0, (1.0 + self.options.band) / 2.0);
        let unchecked = trials - margins.len();
        let worst_margin = summary(nominal.worst_margin_db, &mut margins, &[], unchecked, lo, hi);
        Ok(MaskYield { passed, trials, nominal, worst_margin })
    }

    /// The circuit with each varied part's value multiplied.
    pub fn circuit_with(&self, multipliers: &[f64]) -> Circuit {
        let mut circuit = self.circuit.clone();
        for (part, m) in self.parts.iter().zip(multipliers) {
            let kind = match circuit.elements()[part.element].kind {
                ElementKind::Resistor { .. } => ElementKind::Resistor { resistance: part.nominal * m },
                ElementKind::Capacitor { esr, .. } => ElementKind::Capacitor { capacitance: part.nominal * m, esr },
                ElementKind::Inductor { dcr, .. } => ElementKind::Inductor { inductance: part.nominal * m, dcr },
                other => other,
            };
            // Multipliers are ≥ 0.01, so the value stays positive and finite and is accepted.
            if let Ok(next) = circuit.with_kind(part.element, kind) {
                circuit = next;
            }
        }
        circuit
    }

    /// Solves the circuit with the given multipliers at every grid frequency: by series–parallel
    /// reduction where the circuit is a ladder ([`crate::reduction`]), and by the MNA pencil
    /// otherwise and at any point the reduction declines.
    pub fn evaluate(&self, multipliers: &[f64]) -> TrialResponse {
        let mut response = TrialResponse::empty(self.f_hz.len());
        let mut values: Vec<f64> = self.circuit.elements().iter().map(|e| e.kind.primary_value()).collect();
        for (part, m) in self.parts.iter().zip(multipliers) {
            values[part.element] = part.nominal * m;
        }
        // The MNA path, built only when needed.
        let mut mna: Option<Option<(PencilSolver, Vec<f64>)>> = None;
        let mut previous_phase: Option<f64> = None;
        for (k, &f) in self.f_hz.iter().enumerate() {
            let omega = 2.0 * PI * f;
            let fast = self.reduction.as_ref().and_then(|r| r.solve(omega, &values));
            let solved = fast.or_else(|| {
                let (solver, output) = mna
                    .get_or_insert_with(|| {
                        let circuit = self.circuit_with(multipliers);
                        let system = AcSystem::new(&circuit, &self.probe);
                        let output = system.functionals().output;
                        system.pencil().map(|pencil| (PencilSolver::new(&pencil), output))
                    })
                    .as_mut()?;
                solver.solve(omega, output)
            });
            let Some((h, dh)) = solved else { continue };
            let ratio = dh / h;
            let gain_db = 10.0 * h.norm_sqr().log10();
            if !(gain_db.is_finite() && ratio.re.is_finite() && ratio.im.is_finite()) {
                continue;
            }
            let mut phase = h.arg().to_degrees();
            if let Some(prev) = previous_phase {
                phase += 360.0 * ((prev - phase) / 360.0).round();
            }
            previous_phase = Some(phase);
            response.gain_db[k] = gain_db;
            response.phase_deg[k] = phase;
            response.group_delay_s[k] = -ratio.im;
            response.slope_db[k] = 20.0 / std::f64::consts::LN_10 * (omega * ratio).re;
        }
        response
    }

    fn push(&self, batch: &mut TrialBatch, multipliers: Vec<f64>) {
        let response = self.evaluate(&multipliers);
        batch.corner_hz.push(self.corners_of(&response));
        batch.q.push(if self.options.pole_spread { self.pole_q(&multipliers).unwrap_or_default() } else { Vec::new() });
        batch.responses.push(response);
        batch.multipliers.push(multipliers);
    }

    /// The −3 dB crossings of `response` nearest each nominal corner, with the nominal's kind of
    /// reference gain.
    fn corners_of(&self, response: &TrialResponse) -> Vec<f64> {
        let usable: Vec<usize> = (0..self.f_hz.len()).filter(|&k| response.gain_db[k].is_finite()).collect();
        let (Some(&first), Some(&last)) = (usable.first(), usable.last()) else {
            return vec![f64::NAN; self.corners.len()];
        };
        let peak = usable.iter().map(|&k| response.gain_db[k]).fold(f64::NEG_INFINITY, f64::max);
        let reference = match self.reference {
            ReferenceKind::LowEnd => response.gain_db[first],
            ReferenceKind::HighEnd => response.gain_db[last],
            ReferenceKind::Peak => peak,
            ReferenceKind::Ends => response.gain_db[first].max(response.gain_db[last]),
        };
        let level = reference - HALF_POWER_DB;
        let mut found: Vec<(f64, Edge)> = Vec::new();
        for pair in usable.windows(2) {
            let (i, j) = (pair[0], pair[1]);
            let (y0, y1) = (response.gain_db[i] - level, response.gain_db[j] - level);
            if y0 * y1 < 0.0 || (y0 == 0.0 && y1 != 0.0) {
                let (u0, u1) = (self.f_hz[i].ln(), self.f_hz[j].ln());
                let h = u1 - u0;
                let (m0, m1) = (response.slope_db[i] * h, response.slope_db[j] * h);
                // Cubic Hermite in (ln f, dB) with the exact end slopes, as in `measure`.
                let cubic = |t: f64| {
                    let (t2, t3) = (t * t, t * t * t);
                    (2.0 * t3 - 3.0 * t2 + 1.0) * y0
                        + (t3 - 2.0 * t2 + t) * m0
                        + (-2.0 * t3 + 3.0 * t2) * y1
                        + (t3 - t2) * m1
                };
                let (mut lo, mut hi) = (0.0, 1.0);
                for _ in 0..60 {
                    let mid = 0.5 * (lo + hi);
                    if (cubic(mid) > 0.0) == (y0 > 0.0) {
                        lo = mid;
                    } else {
                        hi = mid;
                    }
                }
                let edge = if y1 < y0 { Edge::Falling } else { Edge::Rising };
                found.push(((u0 + 0.5 * (lo + hi) * h).exp(), edge));
            }
        }
        self.corners
            .iter()
            .map(|&(f0, edge)| {
                found
                    .iter()
                    .filter(|c| c.1 == edge)
                    .min_by(|a, b| (a.0 / f0).ln().abs().total_cmp(&(b.0 / f0).ln().abs()))
                    .map_or(f64::NAN, |c| c.0)
            })
            .collect()
    }

    /// The Qs of the complex pole pairs of the circuit with these multipliers, ascending.
    fn pole_q(&self, multipliers: &[f64]) -> Option<Vec<f64>> {
        let circuit = self.circuit_with(multipliers);
        let system = AcSystem::new(&circuit, &self.probe);
        let poles = crate::modal::Modal::pencil_poles(&system).ok()?;
        let mut q: Vec<f64> =
            poles.iter().filter(|p| p.im > 1e-9 * p.norm() && p.re < 0.0).map(|p| p.norm() / (-2.0 * p.re)).collect();
        q.sort_by(f64::total_cmp);
        Some(q)
    }

    /// The distinct sensitivity-guided corners (see the module doc), as multiplier rows.
    fn corner_set(&self) -> Vec<Vec<f64>> {
        let n = self.parts.len();
        let mut sensitivities: Vec<(Vec<f64>, Vec<f64>)> = Vec::with_capacity(n);
        for (i, part) in self.parts.iter().enumerate() {
            let step = part.tolerance / 8.0;
            let mut up = vec![1.0; n];
            let mut down = vec![1.0; n];
            up[i] += step;
            down[i] -= step;
            let (a, b) = (self.evaluate(&up), self.evaluate(&down));
            let diff = |x: &[f64], y: &[f64]| x.iter().zip(y).map(|(x, y)| x - y).collect::<Vec<f64>>();
            sensitivities.push((diff(&a.gain_db, &b.gain_db), diff(&a.group_delay_s, &b.group_delay_s)));
        }
        let mut set: Vec<Vec<f64>> = Vec::new();
        let mut add = |row: Vec<f64>| {
            if !set.contains(&row) {
                set.push(row);
            }
        };
        for k in 0..self.f_hz.len() {
            for quantity in 0..2 {
                for sign in [1.0, -1.0] {
                    let row: Vec<f64> = self
                        .parts
                        .iter()
                        .zip(&sensitivities)
                        .map(|(part, s)| {
                            let d = if quantity == 0 { s.0[k] } else { s.1[k] };
                            if !d.is_finite() || d == 0.0 {
                                1.0
                            } else {
                                1.0 + sign * d.signum() * part.tolerance
                            }
                        })
                        .collect();
                    add(row);
                }
            }
        }
        set.retain(|row| row.iter().any(|&m| m != 1.0));
        set
    }
}

impl TrialResponse {
    /// A response from its values on the plan's grid, as a batch carried between threads or
    /// Web Workers holds them: everything [`TolerancePlan::summarize`] and
    /// [`TolerancePlan::mask_yield`] read. The dB slopes, used only while a trial's −3 dB corners
    /// are found, are unknown (NaN) in such a copy.
    ///
    /// # Panics
    /// If the three slices differ in length.
    pub fn from_values(gain_db: Vec<f64>, phase_deg: Vec<f64>, group_delay_s: Vec<f64>) -> TrialResponse {
        let n = gain_db.len();
        assert!(phase_deg.len() == n && group_delay_s.len() == n, "one value per frequency in each quantity");
        TrialResponse { gain_db, phase_deg, group_delay_s, slope_db: vec![f64::NAN; n] }
    }

    fn empty(n: usize) -> TrialResponse {
        TrialResponse {
            gain_db: vec![f64::NAN; n],
            phase_deg: vec![f64::NAN; n],
            group_delay_s: vec![f64::NAN; n],
            slope_db: vec![f64::NAN; n],
        }
    }
}

impl TrialBatch {
    fn new(trials: Range<usize>) -> TrialBatch {
        TrialBatch { trials, responses: Vec::new(), multipliers: Vec::new(), corner_hz: Vec::new(), q: Vec::new() }
    }
}

/// Solves a pencil G + jωC at one frequency after another, with the exact frequency derivative.
struct PencilSolver {
    n: usize,
    lower: usize,
    upper: usize,
    /// Nonzero entries (index, g, c).
    entries: Vec<(usize, f64, f64)>,
    /// Nonzero entries of C (row, col, c) for the derivative right-hand side.
    c_entries: Vec<(usize, usize, f64)>,
    b: Vec<Complex64>,
    lu: Lu,
    x: Vec<Complex64>,
    dx: Vec<Complex64>,
}

impl PencilSolver {
    fn new(pencil: &Pencil) -> PencilSolver {
        let n = pencil.n;
        let mut entries = Vec::new();
        let mut c_entries = Vec::new();
        let (mut lower, mut upper) = (0, 0);
        for row in 0..n {
            for col in 0..n {
                let at = row * n + col;
                let (g, c) = (pencil.g[at], pencil.c[at]);
                if g != 0.0 || c != 0.0 {
                    entries.push((at, g, c));
                    lower = lower.max(row.saturating_sub(col));
                    upper = upper.max(col.saturating_sub(row));
                }
                if c != 0.0 {
                    c_entries.push((row, col, c));
                }
            }
        }
        PencilSolver {
            n,
            lower,
            upper,
            entries,
            c_entries,
            b: pencil.b.clone(),
            lu: Lu::new(),
            x: vec![Complex64::new(0.0, 0.0); n],
            dx: vec![Complex64::new(0.0, 0.0); n],
        }
    }

    /// (H, dH/dω) for the read-out `output` (over the leading unknowns), or `None` where singular.
    fn solve(&mut self, omega: f64, output: &[f64]) -> Option<(Complex64, Complex64)> {
        let matrix = self.lu.assemble(self.n, self.lower, self.upper);
        for &(at, g, c) in &self.entries {
            matrix[at] = Complex64::new(g, omega * c);
        }
        self.lu.factor_assembled().ok()?;
        self.x.copy_from_slice(&self.b);
        self.lu.solve_in_place(&mut self.x);
        // d/dω of (G + jωC)·x = b: (G + jωC)·x′ = −jC·x.
        self.dx.iter_mut().for_each(|z| *z = Complex64::new(0.0, 0.0));
        for &(row, col, c) in &self.c_entries {
            self.dx[row] -= Complex64::new(0.0, c) * self.x[col];
        }
        self.lu.solve_in_place(&mut self.dx);
        let dot = |v: &[Complex64]| output.iter().zip(v).map(|(r, z)| r * z).sum::<Complex64>();
        Some((dot(&self.x), dot(&self.dx)))
    }
}

/// Whether the plan's nominal response matches the engine's LU sweep point for point: gain
/// within 1e-9 dB (relative to its size where above 1 dB), group delay within 1e-7 relative (the
/// delay is a quotient H′/H, which loses a few digits deep in a stopband).
fn agrees_with(nominal: &TrialResponse, exact: &Response) -> bool {
    let gain = exact.magnitude_db();
    let delay = exact.group_delay_s();
    let mut any = false;
    for k in 0..gain.len() {
        match (gain[k], nominal.gain_db[k].is_finite()) {
            (Some(g), true) => {
                any = true;
                let d = delay[k].unwrap_or(f64::NAN);
                let scale = d.abs().max(1e-300);
                if (g - nominal.gain_db[k]).abs() > 1e-9 * g.abs().max(1.0)
                    || (d - nominal.group_delay_s[k]).abs() > 1e-7 * scale.max(nominal.group_delay_s[k].abs())
                {
                    return false;
                }
            }
            (None, false) => {}
            _ => return false,
        }
    }
    any
}

/// The q-quantile of `values` (0 ≤ q ≤ 1) by linear interpolation between order statistics
/// (numpy's default "linear" method). Reorders `values`; O(n) by selection.
fn percentile(values: &mut [f64], q: f64) -> f64 {
    let position = q * (values.len() - 1) as f64;
    let below = position.floor() as usize;
    let (_, &mut low, rest) = values.select_nth_unstable_by(below, f64::total_cmp);
    let fraction = position - below as f64;
    if fraction == 0.0 || rest.is_empty() {
        return low;
    }
    let high = rest.iter().copied().fold(f64::INFINITY, f64::min);
    low + fraction * (high - low)
}

/// The `lo` and `hi` quantiles (lo ≤ hi) as [`percentile`] gives them, the second found only in
/// the part of the slice that the first selection left above its position.
fn percentile_pair(values: &mut [f64], lo: f64, hi: f64) -> (f64, f64) {
    let low = percentile(values, lo);
    let last = (values.len() - 1) as f64;
    let split = (lo * last).floor() as usize;
    // The upper quantile's position within the rest, the same rule shifted by `split`.
    let position = hi * last - split as f64;
    let rest = &mut values[split..];
    let below = position.floor() as usize;
    let (_, &mut high_low, above) = rest.select_nth_unstable_by(below, f64::total_cmp);
    let fraction = position - below as f64;
    let high = if fraction == 0.0 || above.is_empty() {
        high_low
    } else {
        high_low + fraction * (above.iter().copied().fold(f64::INFINITY, f64::min) - high_low)
    };
    (low, high)
}

fn summary(nominal: f64, values: &mut [f64], corners: &[f64], missing: usize, lo: f64, hi: f64) -> Spread {
    let count = values.len();
    let (mean, std_dev) = if count > 0 {
        let mean = values.iter().sum::<f64>() / count as f64;
        let var =
            if count > 1 { values.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (count - 1) as f64 } else { 0.0 };
        (mean, var.sqrt())
    } else {
        (nominal, 0.0)
    };
    let all = values.iter().chain(corners).copied();
    let min = all.clone().fold(nominal, f64::min);
    let max = all.fold(nominal, f64::max);
    let (low, high) = if count > 0 { (percentile(values, lo), percentile(values, hi)) } else { (nominal, nominal) };
    Spread { nominal, mean, std_dev, min, max, low, high, missing }
}

/// SplitMix64's output function (Steele, Lea & Flood, "Fast splittable pseudorandom number
/// generators", OOPSLA 2014; constants as published there).
fn splitmix64(x: u64) -> u64 {
    let mut z = x.wrapping_add(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::circuit::CircuitBuilder;
    use crate::sweep::Spacing;

    fn rc(r: f64, c: f64) -> (Circuit, Probe) {
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0).resistor("R1", "in", "out", r).capacitor("C1", "out", "0", c);
        let circuit = b.build().unwrap();
        let probe = Probe::new(&circuit, "V1", "out", "0").unwrap();
        (circuit, probe)
    }

    fn series_rlc(r: f64, l: f64, c: f64) -> (Circuit, Probe) {
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0)
            .resistor("R1", "in", "a", r)
            .inductor("L1", "a", "out", l)
            .capacitor("C1", "out", "0", c);
        let circuit = b.build().unwrap();
        let probe = Probe::new(&circuit, "V1", "out", "0").unwrap();
        (circuit, probe)
    }

    fn grid(lo: f64, hi: f64, n: usize) -> FrequencyGrid {
        FrequencyGrid::log(lo, hi, Spacing::Points(n)).unwrap()
    }

    fn options(trials: usize, distribution: Distribution) -> ToleranceOptions {
        ToleranceOptions {
            trials,
            seed: 20261202,
            distribution,
            by_kind: KindTolerances { resistor: 0.01, capacitor: 0.05, inductor: 0.10 },
            ..ToleranceOptions::default()
        }
    }

    #[test]
    fn a_fixed_seed_reproduces_the_run_however_it_is_split() {
        let (circuit, probe) = rc(1e3, 100e-9);
        let plan =
            TolerancePlan::new(&circuit, &probe, &grid(10.0, 1e5, 60), &options(500, Distribution::Normal)).unwrap();
        let whole = plan.run();
        assert_eq!(whole, plan.run());
        let split =
            vec![plan.run_trials(0..123), plan.run_trials(123..400), plan.run_trials(400..500), plan.run_corners()];
        assert_eq!(plan.summarize(&split), whole);
        assert_eq!(plan.run_trials(7..8).multipliers[0], plan.trial_multipliers(7));
        let mut other = options(500, Distribution::Normal);
        other.seed += 1;
        let other = TolerancePlan::new(&circuit, &probe, &grid(10.0, 1e5, 60), &other).unwrap().run();
        assert_ne!(other.corner_hz[0].1.mean, whole.corner_hz[0].1.mean);
    }

    #[test]
    fn rc_cutoff_spread_matches_first_order_propagation() {
        // Source: fc = 1/(2πRC); first-order propagation of relative errors (the law of
        // propagation of uncertainty, JCGM 100:2008 "GUM" §5.1.2; section from memory):
        // δfc/fc ≈ −(δR/R + δC/C), so σ(fc)/fc ≈ √(σR² + σC²). A uniform ±t has σ = t/√3; a
        // normal with t = 3σ has σ = t/3. The second-order mean shift is E[1/(1+x)] − 1 ≈ σ².
        let (r, c) = (1e3, 100e-9);
        let fc = 1.0 / (2.0 * PI * r * c);
        let (circuit, probe) = rc(r, c);
        for (distribution, sigma) in [(Distribution::Uniform, 3f64.sqrt()), (Distribution::Normal, 3.0)] {
            let trials = 4000;
            let plan = TolerancePlan::new(
                &circuit,
                &probe,
                &grid(fc / 3000.0, fc * 30.0, 200),
                &options(trials, distribution),
            )
            .unwrap();
            let report = plan.run();
            let (label, spread) = &report.corner_hz[0];
            assert_eq!(label, "falling");
            // The reference gain is taken at the lowest grid point, −4.8e−7 dB at fc/3000.
            assert!((spread.nominal / fc - 1.0).abs() < 1e-6, "nominal corner {} vs {fc}", spread.nominal);
            let relative = ((0.01f64 / sigma).powi(2) + (0.05 / sigma).powi(2)).sqrt();
            let measured = spread.std_dev / fc;
            // The sample standard deviation of N draws has a relative standard error of about
            // 1/√(2N) (1.1 % at N = 4000); 5 % allows for that and the second-order terms.
            assert!((measured / relative - 1.0).abs() < 0.05, "{distribution:?}: σ {measured} vs {relative}");
            let expected_mean = fc * (1.0 + relative * relative);
            let standard_error = spread.std_dev / (trials as f64).sqrt();
            assert!(
                (spread.mean - expected_mean).abs() < 4.0 * standard_error,
                "{distribution:?}: mean {}",
                spread.mean
            );
            assert_eq!(spread.missing, 0);
            assert!(spread.low < spread.nominal && spread.nominal < spread.high);
        }
    }

    #[test]
    fn the_envelope_holds_the_corners_and_uniform_trials_stay_inside_them() {
        // An RC low-pass's gain is monotonic in R and in C at every frequency, so the two corners
        // (R, C both high / both low) bound every uniform trial exactly.
        let (circuit, probe) = rc(4.7e3, 10e-9);
        let plan =
            TolerancePlan::new(&circuit, &probe, &grid(100.0, 1e6, 80), &options(2000, Distribution::Uniform)).unwrap();
        let trials = plan.run_trials(0..2000);
        let corners = plan.run_corners();
        assert!(corners.multipliers.contains(&vec![1.01, 1.05]) && corners.multipliers.contains(&vec![0.99, 0.95]));
        let report = plan.summarize(&[trials.clone(), corners.clone()]);
        for k in 0..plan.frequencies().len() {
            let (lo, hi) = corners
                .responses
                .iter()
                .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), r| (lo.min(r.gain_db[k]), hi.max(r.gain_db[k])));
            assert!(report.gain_db.min[k] <= lo && report.gain_db.max[k] >= hi, "envelope misses a corner at {k}");
            for r in &trials.responses {
                assert!(r.gain_db[k] >= lo - 1e-12 && r.gain_db[k] <= hi + 1e-12, "trial outside the corners at {k}");
            }
            assert!(report.gain_db.low[k] <= report.gain_db.high[k]);
            assert!(report.gain_db.min[k] <= report.gain_db.low[k] && report.gain_db.high[k] <= report.gain_db.max[k]);
        }
    }

    #[test]
    fn q_spread_of_a_series_rlc() {
        // Source: series RLC, Q = √(L/C)/R (closed form).
        let (r, l, c) = (10.0, 1e-3, 1e-6);
        let (circuit, probe) = series_rlc(r, l, c);
        let f0 = 1.0 / (2.0 * PI * (l * c).sqrt());
        let plan = TolerancePlan::new(
            &circuit,
            &probe,
            &grid(f0 / 20.0, f0 * 20.0, 100),
            &options(300, Distribution::Uniform),
        )
        .unwrap();
        let report = plan.run();
        assert_eq!(report.q.len(), 1);
        let q = &report.q[0];
        assert!((q.nominal / ((l / c).sqrt() / r) - 1.0).abs() < 1e-9, "{q:?}");
        // Q ∝ R⁻¹ L^½ C^−½: the extremes lie within the corner values.
        let q_max = (l * 1.1 / (c * 0.95)).sqrt() / (r * 0.99);
        let q_min = (l * 0.9 / (c * 1.05)).sqrt() / (r * 1.01);
        assert!(q.min >= q_min * (1.0 - 1e-9) && q.max <= q_max * (1.0 + 1e-9), "{q:?} vs [{q_min}, {q_max}]");
        assert!(q.max > q.nominal * 1.03 && q.min < q.nominal * 0.97, "{q:?}");
    }

    #[test]
    fn parts_with_esr_and_active_gains_are_solved_like_the_engine() {
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 50.0)
            .resistor("R1", "in", "a", 10e3)
            .add("C1", ElementKind::Capacitor { capacitance: 10e-9, esr: 0.5 }, "a", "0")
            .vcvs("E1", "out", "0", "a", "out", crate::circuit::Gain::SinglePole { dc_gain: 2e5, pole_hz: 5.0 })
            .resistor("RL", "out", "0", 2e3);
        let circuit = b.build().unwrap();
        let probe = Probe::new(&circuit, "V1", "out", "0").unwrap();
        // The plan is refused unless its pencil solution matches the LU path at every point.
        let plan =
            TolerancePlan::new(&circuit, &probe, &grid(10.0, 1e8, 90), &options(20, Distribution::Uniform)).unwrap();
        assert_eq!(plan.parts().iter().map(|p| p.reference.as_str()).collect::<Vec<_>>(), ["R1", "C1", "RL"]);
        assert_eq!(plan.run().trials, 20);
    }

    #[test]
    fn trials_on_the_ladder_path_match_the_engine_with_the_same_values() {
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "n1", "0", 1.0, 50.0)
            .capacitor("C1", "n1", "0", 3.2e-9)
            .inductor("L2", "n1", "n2", 12.9e-6)
            .capacitor("C3", "n2", "0", 3.2e-9)
            .resistor("RL", "n2", "0", 50.0);
        let circuit = b.build().unwrap();
        let probe = Probe::new(&circuit, "V1", "n2", "0").unwrap();
        let g = grid(1e4, 1e8, 70);
        let plan = TolerancePlan::new(&circuit, &probe, &g, &options(5, Distribution::Normal)).unwrap();
        assert!(plan.reduction.is_some(), "an LC ladder takes the reduction path");
        for trial in 0..5 {
            let m = plan.trial_multipliers(trial);
            let fast = plan.evaluate(&m);
            let mut system = AcSystem::new(&plan.circuit_with(&m), &probe);
            let exact = sweep(&mut system, &g, Detail::Transfer);
            let (gain, delay) = (exact.magnitude_db(), exact.group_delay_s());
            for k in 0..g.len() {
                assert!((fast.gain_db[k] - gain[k].unwrap()).abs() < 1e-9, "gain at {k}");
                let d = delay[k].unwrap();
                assert!((fast.group_delay_s[k] - d).abs() < 1e-9 * d.abs().max(1e-12), "delay at {k}");
            }
        }
    }

    #[test]
    fn a_designs_tolerances_come_before_the_kinds_and_after_the_given_ones() {
        let mut design = crate::design::parse_design(
            r#"{"format": "bandwright-design", "version": 1, "name": "t", "source": {"node": "in", "resistance": 0},
                "load": {"node": "out", "resistance": 1000}, "output": "out",
                "elements": [{"ref": "R1", "kind": "resistor", "value": 1000, "nodes": ["in", "out"]},
                             {"ref": "C1", "kind": "capacitor", "value": 1e-7, "nodes": ["out", "0"]}],
                "tolerances": {"C1": 2, "R1": 0.1}}"#,
        )
        .unwrap();
        let g = grid(10.0, 1e5, 30);
        let mut o = options(10, Distribution::Uniform);
        let plan = TolerancePlan::for_design(&design, &g, &o).unwrap();
        let summary: Vec<_> = plan.parts().iter().map(|p| (p.reference.as_str(), p.tolerance, p.origin)).collect();
        // The load resistor does not vary; the design's tolerances apply.
        assert_eq!(summary, [("R1", 0.001, ToleranceOrigin::Design), ("C1", 0.02, ToleranceOrigin::Design)]);
        o.by_part = vec![("C1".into(), 0.1)];
        let plan = TolerancePlan::for_design(&design, &g, &o).unwrap();
        assert_eq!((plan.parts()[1].tolerance, plan.parts()[1].origin), (0.1, ToleranceOrigin::Given));
        design.tolerances.clear();
        let plan = TolerancePlan::for_design(&design, &g, &o).unwrap();
        assert_eq!(plan.parts()[0].origin, ToleranceOrigin::Kind);
        design.tolerances.insert("L9".into(), 5.0);
        assert!(matches!(TolerancePlan::for_design(&design, &g, &o), Err(ToleranceError::Design { .. })));
    }

    #[test]
    fn fitted_designs_carry_their_series_tolerances() {
        let request = crate::request::FitRequest {
            cutoff: Some("1k".into()),
            order: Some("1".into()),
            topology: Some("rc".into()),
            resistors: Some("E96".into()),
            capacitors: Some("E6".into()),
            ..Default::default()
        };
        let r = request.resolve().unwrap();
        let fit = crate::fit::fit(&r.requirement, r.topology, &r.options).unwrap();
        let design = &fit.alternatives[0].design;
        // Source: references.md §1.4, usual tolerances: E96 1 %, E6 20 %.
        let values: Vec<f64> = design.tolerances.values().copied().collect();
        assert!(values.contains(&1.0) && values.contains(&20.0), "{:?}", design.tolerances);
        let reread = crate::design::parse_design(&design.to_json()).unwrap();
        assert_eq!(reread.tolerances, design.tolerances);
        // With pairs allowed, a pair's two parts each carry the tolerance and the design reads back.
        let ladder = crate::request::FitRequest {
            cutoff: Some("10M".into()),
            order: Some("5".into()),
            source: Some("50".into()),
            load: Some("50".into()),
            combine: true,
            ..Default::default()
        }
        .resolve()
        .unwrap();
        let fit = crate::fit::fit(&ladder.requirement, ladder.topology, &ladder.options).unwrap();
        let mut pairs = 0;
        for alternative in &fit.alternatives {
            let design = &alternative.design;
            assert!(crate::design::parse_design(&design.to_json()).is_ok(), "{:?}", design.tolerances);
            assert_eq!(design.tolerances.len(), design.elements.len(), "{:?}", design.tolerances);
            pairs += alternative.parts.iter().filter(|p| p.choice.parts.len() == 2).count();
        }
        assert!(pairs > 0, "the case must exercise pairs");
    }

    #[test]
    fn per_part_tolerances_replace_the_kind_and_zero_removes_a_part() {
        let (circuit, probe) = rc(1e3, 1e-6);
        let mut o = options(10, Distribution::Uniform);
        o.by_part = vec![("C1".into(), 0.001), ("R1".into(), 0.0)];
        let plan = TolerancePlan::new(&circuit, &probe, &grid(1.0, 1e4, 20), &o).unwrap();
        assert_eq!(plan.parts().len(), 1);
        assert_eq!((plan.parts()[0].reference.as_str(), plan.parts()[0].tolerance), ("C1", 0.001));
        for m in plan.run_trials(0..10).multipliers {
            assert!((m[0] - 1.0).abs() <= 0.001);
        }
    }

    #[test]
    fn bad_options_are_refused_with_the_value() {
        let (circuit, probe) = rc(1e3, 1e-6);
        let g = grid(1.0, 1e4, 20);
        let refused = |o: ToleranceOptions| TolerancePlan::new(&circuit, &probe, &g, &o).unwrap_err();
        let mut o = options(10, Distribution::Uniform);
        o.by_kind.capacitor = -0.05;
        let e = refused(o);
        assert_eq!(e, ToleranceError::BadTolerance { what: "capacitors".into(), value: -0.05 });
        assert!(e.to_string().contains("-5 %") && e.to_string().contains("from 0 to 100"), "{e}");
        let mut o = options(10, Distribution::Uniform);
        o.by_part = vec![("R9".into(), 0.01)];
        assert!(refused(o).to_string().contains("\"R9\""));
        let mut o = options(10, Distribution::Uniform);
        o.band = 1.5;
        assert_eq!(refused(o), ToleranceError::BadBand { band: 1.5 });
        assert_eq!(
            refused(options(MAX_TRIALS + 1, Distribution::Uniform)),
            ToleranceError::BadTrials { trials: MAX_TRIALS + 1 }
        );
        let mut o = options(10, Distribution::Uniform);
        o.by_kind = KindTolerances { resistor: 0.0, capacitor: 0.0, inductor: 0.0 };
        assert_eq!(refused(o), ToleranceError::NothingVaries);
        let mut o = options(10, Distribution::Uniform);
        o.by_kind.resistor = f64::NAN;
        assert!(matches!(refused(o), ToleranceError::BadTolerance { .. }));
        for e in
            [ToleranceError::NothingVaries, ToleranceError::NominalUnsolvable, ToleranceError::BadTrials { trials: 9 }]
        {
            let text = e.to_string();
            assert!(text.starts_with(|c: char| c.is_lowercase()) && !text.ends_with('.'), "{text}");
        }
    }

    #[test]
    fn percentiles_follow_numpys_linear_rule() {
        // Source: numpy.percentile(method="linear"): np.percentile([1, 2, 3, 4], 25) = 1.75,
        // np.percentile([1, 2, 3, 4], 90) = 3.7 (hand-evaluated from numpy's documented formula).
        assert_eq!(percentile(&mut [4.0, 1.0, 3.0, 2.0], 0.25), 1.75);
        assert!((percentile(&mut [4.0, 1.0, 3.0, 2.0], 0.9) - 3.7).abs() < 1e-15);
        assert_eq!(percentile(&mut [5.0], 0.1), 5.0);
        // The pair gives what two separate selections give, on a shuffled sequence.
        let values: Vec<f64> = (0..1001).map(|k| ((k * 7919) % 1001) as f64 * 0.5).collect();
        for (lo, hi) in [(0.05, 0.95), (0.25, 0.75), (0.0, 1.0), (0.5, 0.5)] {
            let (a, b) = percentile_pair(&mut values.clone(), lo, hi);
            assert_eq!(a, percentile(&mut values.clone(), lo));
            assert_eq!(b, percentile(&mut values.clone(), hi));
        }
    }
}
