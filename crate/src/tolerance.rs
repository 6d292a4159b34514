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
//! refused if the MNA path disagrees, and the reduction is dropped if it does. The reduction runs
//! [`crate::lanes::LANES`] frequencies at a time, with a vectorised logarithm and arctangent
//! ([`crate::lanes`]); from the ladder's output voltage V and source EMF E, the gain, phase and
//! delay quotients share one division per frequency (see `evaluate_into`).
//!
//! # Summaries
//! Per frequency, the envelope's min and max are exact, and its percentiles follow numpy's
//! linear rule exactly ([`percentile`]). Two ways lead there, with the same report bit for bit:
//! - keep every trial's response ([`TolerancePlan::run_trials`], needed for a mask yield and for
//!   carrying trials between Web Workers), then [`TolerancePlan::summarize`];
//! - fold each trial into per-frequency accumulators as soon as it is solved
//!   ([`TolerancePlan::fold_plan`], [`TolerancePlan::run_folded`],
//!   [`TolerancePlan::summarize_folded`]), which keeps a few per cent of the values: those inside
//!   brackets around each percentile, set from a sample of the trials (Floyd & Rivest's
//!   selection; see [`brackets_from`]) and narrowed by each fold from its own values as they come
//!   in ([`ColumnFold::narrow`]). Where a bracket misses its rank, that column is solved again
//!   whole, so the brackets decide the cost, never the result.
//!
//! Either way, the work can be cut into jobs for threads through [`Parallel`]; the library itself
//! never starts a thread.

use crate::circuit::{Circuit, ElementKind};
use crate::lanes::{self, Lane, LANES};
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

// Defines `$name`, which runs the method `$here` (marked `#[inline(always)]`) compiled for AVX2
// where the processor has it (x86-64), and as it is elsewhere: the same IEEE operations four
// lanes wide instead of two (no fused multiply-add), so the results are identical bit for bit.
// The solver it calls (evaluation, reduction, lanes, fold) is `#[inline(always)]` too, so that it
// lands in the AVX2 copy; the rest (corner search, pole Qs) runs as compiled for the baseline.
macro_rules! vectorised {
    ($(#[$doc:meta])* $vis:vis fn $name:ident / $avx:ident = $here:ident(&self $(, $arg:ident: $ty:ty)*) -> $out:ty) => {
        $(#[$doc])*
        $vis fn $name(&self $(, $arg: $ty)*) -> $out {
            #[cfg(target_arch = "x86_64")]
            if std::is_x86_feature_detected!("avx2") {
                // SAFETY: the processor has AVX2, as checked just above, which is all the
                // function's target feature asks for.
                return unsafe { self.$avx($($arg),*) };
            }
            self.$here($($arg),*)
        }

        /// The AVX2 copy (see `vectorised!`).
        ///
        /// # Safety
        /// The processor must support AVX2.
        #[cfg(target_arch = "x86_64")]
        #[target_feature(enable = "avx2")]
        unsafe fn $avx(&self $(, $arg: $ty)*) -> $out {
            self.$here($($arg),*)
        }
    };
}

/// dB per neper of |H|: 20/ln 10 (20·log10|H| = 20/ln 10 · ln|H|).
const DB_PER_NEPER: f64 = 20.0 / std::f64::consts::LN_10;

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
    /// ln f of each grid frequency.
    log_f: Vec<f64>,
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

impl Envelope {
    /// A copy of the frequencies `range`.
    fn part(&self, range: Range<usize>) -> Envelope {
        Envelope {
            nominal: self.nominal[range.clone()].to_vec(),
            min: self.min[range.clone()].to_vec(),
            max: self.max[range.clone()].to_vec(),
            low: self.low[range.clone()].to_vec(),
            high: self.high[range].to_vec(),
        }
    }

    /// Writes `part` (made by [`Envelope::part`]) back at `range`.
    fn place(&mut self, range: Range<usize>, part: Envelope) {
        self.min[range.clone()].copy_from_slice(&part.min);
        self.max[range.clone()].copy_from_slice(&part.max);
        self.low[range.clone()].copy_from_slice(&part.low);
        self.high[range].copy_from_slice(&part.high);
    }
}

/// The three quantities of a trial's response, in envelope order.
const PICKS: [fn(&TrialResponse) -> &[f64]; 3] = [|r| &r.gain_db, |r| &r.phase_deg, |r| &r.group_delay_s];

/// The brackets a folded run shares among all its parts ([`TolerancePlan::fold_plan`]).
#[derive(Debug, Clone, PartialEq)]
pub struct FoldPlan {
    /// Per quantity (gain, phase, delay), per frequency: the ends of the `lo` and `hi` brackets;
    /// none below [`BRACKET_FROM`] trials, where every value is kept.
    brackets: Option<[Vec<[f64; 4]>; 3]>,
}

/// Trials run and folded without keeping their responses ([`TolerancePlan::run_folded`]).
#[derive(Debug, Clone, PartialEq)]
pub struct TrialFold {
    /// The trials' range, multipliers, corners and pole Qs (no responses).
    pub batch: TrialBatch,
    columns: [ColumnFold; 3],
}

/// Runs independent jobs, perhaps at once: the adapters run them on threads, while the library
/// itself never starts one ([`Sequential`] runs them in turn).
pub trait Parallel {
    /// How many jobs are worth making (the threads available).
    fn width(&self) -> usize;

    /// `job(0)`, …, `job(jobs − 1)`, returned in that order.
    fn map<T: Send>(&self, jobs: usize, job: &(dyn Fn(usize) -> T + Sync)) -> Vec<T>;
}

/// Runs jobs one after another on the calling thread.
#[derive(Debug, Clone, Copy, Default)]
pub struct Sequential;

impl Parallel for Sequential {
    fn width(&self) -> usize {
        1
    }

    fn map<T: Send>(&self, jobs: usize, job: &(dyn Fn(usize) -> T + Sync)) -> Vec<T> {
        (0..jobs).map(job).collect()
    }
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
            log_f: f_hz.iter().map(|f| f.ln()).collect(),
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
        self.run_trials_fast(trials)
    }

    vectorised!(fn run_trials_fast / run_trials_avx2 = run_trials_here(&self, trials: Range<usize>) -> TrialBatch);

    #[inline(always)]
    fn run_trials_here(&self, trials: Range<usize>) -> TrialBatch {
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
        self.summarize_with(batches, &Sequential)
    }

    /// [`TolerancePlan::summarize`] with the envelopes' work cut by frequency into
    /// `parallel.width()` jobs that `parallel` may run at once (on threads, natively). The report
    /// is the same however the work is cut.
    pub fn summarize_with<P: Parallel>(&self, batches: &[TrialBatch], parallel: &P) -> ToleranceReport {
        let is_trial = |b: &TrialBatch| !b.trials.is_empty();
        let trials: Vec<&TrialResponse> = batches.iter().filter(|b| is_trial(b)).flat_map(|b| &b.responses).collect();
        let corners: Vec<&TrialResponse> = batches.iter().filter(|b| !is_trial(b)).flat_map(|b| &b.responses).collect();
        let (lo_q, hi_q) = self.band();
        let mut envelopes = self.start_envelopes(&corners);
        let (jobs, range) = cut(self.f_hz.len(), parallel.width());
        let parts = parallel.map(jobs, &|j| {
            std::array::from_fn::<Envelope, 3, _>(|q| {
                let mut part = envelopes[q].part(range(j));
                fold_trials(&trials, PICKS[q], range(j), lo_q, hi_q, &mut part);
                part
            })
        });
        for (j, part) in parts.into_iter().enumerate() {
            for (env, part) in envelopes.iter_mut().zip(part) {
                env.place(range(j), part);
            }
        }
        self.assemble(&batches.iter().collect::<Vec<_>>(), trials.len(), corners.len(), envelopes)
    }

    /// The brackets for a folded run ([`TolerancePlan::run_folded`]) of the plan's trials: from
    /// [`BRACKET_FROM`] trials on, a sample of 256 trials spread evenly by index is evaluated
    /// here and each frequency's quantiles are bracketed from it (see [`brackets_from`]).
    pub fn fold_plan(&self) -> FoldPlan {
        self.fold_plan_with(&Sequential)
    }

    /// [`TolerancePlan::fold_plan`] with the sample's trials cut into jobs for `parallel`.
    pub fn fold_plan_with<P: Parallel>(&self, parallel: &P) -> FoldPlan {
        let count = self.options.trials;
        if count < BRACKET_FROM {
            return FoldPlan { brackets: None };
        }
        let stride = count / BRACKET_SAMPLE;
        let jobs = parallel.width().clamp(1, BRACKET_SAMPLE);
        let sample: Vec<TrialResponse> = parallel
            .map(jobs, &|j| {
                let indices = j * BRACKET_SAMPLE / jobs..(j + 1) * BRACKET_SAMPLE / jobs;
                self.evaluate_trials(indices.map(|i| i * stride).collect())
            })
            .into_iter()
            .flatten()
            .collect();
        let (lo, hi) = self.band();
        // The brackets by frequency, cut into jobs too.
        let (jobs, range) = cut(self.f_hz.len(), parallel.width());
        let parts = parallel.map(jobs, &|j| {
            let range = range(j);
            PICKS.map(|pick| brackets_from(range.len(), lo, hi, |i| &pick(&sample[i])[range.clone()]))
        });
        let brackets = std::array::from_fn(|q| parts.iter().flat_map(|part| part[q].iter().copied()).collect());
        FoldPlan { brackets: Some(brackets) }
    }

    /// Runs the Monte Carlo trials in `trials` like [`TolerancePlan::run_trials`], but folds each
    /// trial's response into the envelopes' accumulators as soon as it is solved instead of
    /// keeping it: for large runs where only the summary is wanted (no mask yield, no per-trial
    /// data), with far less memory. The batch inside keeps each trial's multipliers, corners and
    /// pole Qs.
    ///
    /// On x86-64 processors with AVX2, an AVX2 copy of the loop runs (see `vectorised!`).
    pub fn run_folded(&self, plan: &FoldPlan, trials: Range<usize>) -> TrialFold {
        self.run_folded_fast(plan, trials)
    }

    vectorised!(fn run_folded_fast / run_folded_avx2 = run_folded_here(&self, plan: &FoldPlan, trials: Range<usize>) -> TrialFold);

    vectorised!(fn evaluate_trials / evaluate_trials_avx2 = evaluate_trials_here(&self, indices: Vec<usize>) -> Vec<TrialResponse>);

    #[inline(always)]
    fn evaluate_trials_here(&self, indices: Vec<usize>) -> Vec<TrialResponse> {
        indices.into_iter().map(|i| self.evaluate(&self.trial_multipliers(i))).collect()
    }

    #[inline(always)]
    fn run_folded_here(&self, plan: &FoldPlan, trials: Range<usize>) -> TrialFold {
        let n = self.f_hz.len();
        let (lo, hi) = self.band();
        let mut columns =
            [0, 1, 2].map(|q| ColumnFold::new(n, plan.brackets.as_ref().map(|b| &b[q][..]), lo, hi, trials.len()));
        let mut batch = TrialBatch::new(trials.clone());
        let mut response = TrialResponse::empty(n);
        let mut values = Vec::new();
        for trial in trials {
            let multipliers = self.trial_multipliers(trial);
            self.evaluate_into(&multipliers, &mut response, &mut values);
            for (fold, pick) in columns.iter_mut().zip(PICKS) {
                fold.add(pick(&response));
            }
            batch.corner_hz.push(self.corners_of(&response));
            batch.q.push(if self.options.pole_spread {
                self.pole_q(&multipliers).unwrap_or_default()
            } else {
                Vec::new()
            });
            batch.multipliers.push(multipliers);
        }
        TrialFold { batch, columns }
    }

    /// Summarises folded trials (from any split, in any order, made with the same [`FoldPlan`]) and the
    /// corners, if run. The report equals [`TolerancePlan::summarize`] of the same trials run with
    /// [`TolerancePlan::run_trials`]: where a bracket missed its rank, the trials are solved again
    /// for that frequency's whole column.
    pub fn summarize_folded(&self, folds: Vec<TrialFold>, corners: Option<&TrialBatch>) -> ToleranceReport {
        self.summarize_folded_with(folds, corners, &Sequential)
    }

    /// [`TolerancePlan::summarize_folded`] with the frequencies cut into `parallel.width()` jobs
    /// that `parallel` may run at once, each finishing its columns of the three quantities. The
    /// report is the same however the work is cut.
    pub fn summarize_folded_with<P: Parallel>(
        &self,
        mut folds: Vec<TrialFold>,
        corners: Option<&TrialBatch>,
        parallel: &P,
    ) -> ToleranceReport {
        // In trial order, so that sums over the trials (means, deviations) are taken in one order.
        folds.sort_by_key(|f| f.batch.trials.start);
        let corner_responses: Vec<&TrialResponse> = corners.map(|c| c.responses.iter().collect()).unwrap_or_default();
        let mut envelopes = self.start_envelopes(&corner_responses);
        let (lo, hi) = self.band();
        let mut batches = Vec::with_capacity(folds.len() + 1);
        let mut columns: Vec<[ColumnFold; 3]> = Vec::with_capacity(folds.len());
        for fold in folds {
            batches.push(fold.batch);
            columns.push(fold.columns);
        }
        let trials: usize = batches.iter().map(|b| b.corner_hz.len()).sum();
        if !columns.is_empty() {
            // The frequencies cut into one job per thread, each finishing its columns of all
            // three quantities from every part's fold (nothing is merged first).
            let (jobs, range) = cut(self.f_hz.len(), parallel.width());
            let parts = parallel.map(jobs, &|j| {
                std::array::from_fn::<_, 3, _>(|q| {
                    let mut part = envelopes[q].part(range(j));
                    let folds: Vec<&ColumnFold> = columns.iter().map(|c| &c[q]).collect();
                    let missed = finish_columns(&folds, range(j), &mut part);
                    (part, missed)
                })
            });
            let mut missed = vec![Vec::new(); 3];
            for (j, part) in parts.into_iter().enumerate() {
                for (q, (env, m)) in part.into_iter().enumerate() {
                    envelopes[q].place(range(j), env);
                    missed[q].extend(m);
                }
            }
            if missed.iter().any(|m| !m.is_empty()) {
                let mut columns: Vec<Vec<Vec<f64>>> = missed.iter().map(|m| vec![Vec::new(); m.len()]).collect();
                for batch in &batches {
                    for multipliers in &batch.multipliers {
                        let response = self.evaluate(multipliers);
                        for (q, ks) in missed.iter().enumerate() {
                            for (c, &k) in ks.iter().enumerate() {
                                let v = PICKS[q](&response)[k];
                                if v.is_finite() {
                                    columns[q][c].push(v);
                                }
                            }
                        }
                    }
                }
                for (q, ks) in missed.iter().enumerate() {
                    for (c, &k) in ks.iter().enumerate() {
                        let (low, high) = percentile_pair_by_selection(&mut columns[q][c], lo, hi);
                        envelopes[q].low[k] = low;
                        envelopes[q].high[k] = high;
                    }
                }
            }
        }
        let corner_count = corner_responses.len();
        let mut all: Vec<&TrialBatch> = batches.iter().collect();
        all.extend(corners);
        self.assemble(&all, trials, corner_count, envelopes)
    }

    /// The percentile band's ends as fractions.
    fn band(&self) -> (f64, f64) {
        ((1.0 - self.options.band) / 2.0, (1.0 + self.options.band) / 2.0)
    }

    /// The three envelopes with the nominal and the corners folded in.
    fn start_envelopes(&self, corners: &[&TrialResponse]) -> [Envelope; 3] {
        PICKS.map(|pick| {
            let nominal = pick(&self.nominal).to_vec();
            let mut env = Envelope {
                min: nominal.clone(),
                max: nominal.clone(),
                low: nominal.clone(),
                high: nominal.clone(),
                nominal,
            };
            for r in corners {
                for (k, &v) in pick(r).iter().enumerate().filter(|(_, v)| v.is_finite()) {
                    env.min[k] = env.min[k].min(v);
                    env.max[k] = env.max[k].max(v);
                }
            }
            env
        })
    }

    /// The report from finished envelopes and the batches' corners and pole Qs (trial batches
    /// and at most one batch of corners, told apart by an empty trial range).
    fn assemble(
        &self,
        batches: &[&TrialBatch],
        trials: usize,
        corners: usize,
        envelopes: [Envelope; 3],
    ) -> ToleranceReport {
        let is_trial = |b: &TrialBatch| !b.trials.is_empty();
        let (lo_q, hi_q) = self.band();
        let [gain_db, phase_deg, group_delay_s] = envelopes;
        let spread = |nominal: f64, pick: &dyn Fn(&TrialBatch, usize) -> Option<f64>| {
            let mut values = Vec::new();
            let mut missing = 0;
            let mut corner_values = Vec::new();
            for batch in batches {
                for i in 0..batch.corner_hz.len() {
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
            trials,
            corners,
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
            gain_db,
            phase_deg,
            group_delay_s,
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
    #[inline(always)]
    pub fn evaluate(&self, multipliers: &[f64]) -> TrialResponse {
        let mut response = TrialResponse::empty(self.f_hz.len());
        self.evaluate_into(multipliers, &mut response, &mut Vec::new());
        response
    }

    /// [`TolerancePlan::evaluate`] into `response` (of the grid's length), reusing its storage;
    /// `values` is scratch for the element values (any content; reused between calls).
    #[inline(always)]
    fn evaluate_into(&self, multipliers: &[f64], response: &mut TrialResponse, values: &mut Vec<f64>) {
        let n = self.f_hz.len();
        for v in [&mut response.gain_db, &mut response.phase_deg, &mut response.group_delay_s, &mut response.slope_db] {
            v.clear();
            v.resize(n, f64::NAN);
        }
        values.clear();
        values.extend(self.circuit.elements().iter().map(|e| e.kind.primary_value()));
        for (part, m) in self.parts.iter().zip(multipliers) {
            values[part.element] = part.nominal * m;
        }
        // The MNA path, built only when needed.
        let mut mna: Option<Option<(PencilSolver, Vec<f64>)>> = None;
        let mut fallback = |omega: f64| {
            let (solver, output) = mna
                .get_or_insert_with(|| {
                    let circuit = self.circuit_with(multipliers);
                    let system = AcSystem::new(&circuit, &self.probe);
                    let output = system.functionals().output;
                    system.pencil().map(|pencil| (PencilSolver::new(&pencil), output))
                })
                .as_mut()?;
            solver.solve(omega, output)
        };
        let scalar = |h: Complex64, dh: Complex64| (10.0 * h.norm_sqr().log10(), h.arg().to_degrees(), dh / h);
        // LANES frequencies at a time (the last block repeats the last frequency), each quantity
        // computed lane by lane (see `crate::lanes`), the phase unwrapped as it goes.
        let mut unwrap = Unwrap::new();
        for first in (0..n).step_by(LANES) {
            let omega: Lane = std::array::from_fn(|j| 2.0 * PI * self.f_hz[(first + j).min(n - 1)]);
            let Some(reduction) = &self.reduction else {
                for (j, &w) in omega.iter().enumerate().take(n - first) {
                    if let Some((h, dh)) = fallback(w) {
                        let (gain, phase, ratio) = scalar(h, dh);
                        response.store(first + j, w, gain, phase, ratio);
                    }
                }
                unwrap.points(&mut response.phase_deg[first..(first + LANES).min(n)]);
                continue;
            };
            // H = V/E from the ladder's output voltage V and source EMF E (with their
            // derivatives), with one division shared by three quotients:
            // - arg H = arg(V·conj E), by `lanes::Atan2Reduction`, whose quotient is u = p/q;
            // - |H|² = |V|²/|E|², and H′/H = V′/V − E′/E = V′·conj V/|V|² − E′·conj E/|E|²;
            // all from 1/(|V|²·|E|²·q) (Montgomery's trick of one inversion for several:
            // P. L. Montgomery, "Speeding the Pollard and elliptic curve methods of
            // factorization", Math. Comp. 48, 1987, §10.3.1).
            let (v, e) = reduction.solve_lanes_parts(&omega, values);
            // Plain loops rather than `from_fn` with long closures: a closure the compiler does
            // not inline runs without the caller's vector features.
            let (v2, e2) = (v.v.norm_sqr(), e.v.norm_sqr());
            let (mut p_re, mut p_im, mut m) = ([0.0; LANES], [0.0; LANES], [0.0; LANES]);
            for j in 0..LANES {
                p_re[j] = v.v.re[j] * e.v.re[j] + v.v.im[j] * e.v.im[j];
                p_im[j] = v.v.im[j] * e.v.re[j] - v.v.re[j] * e.v.im[j];
                m[j] = v2[j] * e2[j];
            }
            let turn = lanes::Atan2Reduction::new(p_im, p_re);
            let (mut u, mut norm, mut inv_v2, mut inv_e2) = ([0.0; LANES], [0.0; LANES], [0.0; LANES], [0.0; LANES]);
            for j in 0..LANES {
                let inverse = 1.0 / (m[j] * turn.denominator[j]);
                u[j] = turn.numerator[j] * (m[j] * inverse);
                // 1/(|V|²·|E|²), then 1/|V|² and 1/|E|².
                let d = turn.denominator[j] * inverse;
                inv_v2[j] = e2[j] * d;
                inv_e2[j] = v2[j] * d;
                norm[j] = v2[j] * inv_e2[j];
            }
            let arg = turn.finish(u);
            let ln_norm = lanes::ln(norm);
            let (mut ratio_re, mut ratio_im, mut gain, mut phase) =
                ([0.0; LANES], [0.0; LANES], [0.0; LANES], [0.0; LANES]);
            for j in 0..LANES {
                ratio_re[j] = (v.d.re[j] * v.v.re[j] + v.d.im[j] * v.v.im[j]) * inv_v2[j]
                    - (e.d.re[j] * e.v.re[j] + e.d.im[j] * e.v.im[j]) * inv_e2[j];
                ratio_im[j] = (v.d.im[j] * v.v.re[j] - v.d.re[j] * v.v.im[j]) * inv_v2[j]
                    - (e.d.im[j] * e.v.re[j] - e.d.re[j] * e.v.im[j]) * inv_e2[j];
                gain[j] = DB_PER_NEPER * 0.5 * ln_norm[j];
                phase[j] = arg[j].to_degrees();
            }
            let finite = |x: &Lane| x.iter().fold(true, |all, v| all & v.is_finite());
            let valid = |w: f64| w > 0.0 && w.is_finite();
            let whole = first + LANES <= n
                && omega.iter().all(|&w| valid(w))
                && finite(&gain)
                && finite(&phase)
                && finite(&ratio_re)
                && finite(&ratio_im);
            if whole {
                // The common case: every lane solved and finite.
                let at = first..first + LANES;
                response.gain_db[at.clone()].copy_from_slice(&gain);
                response.phase_deg[at.clone()].copy_from_slice(&unwrap.block(&phase));
                response.group_delay_s[at.clone()].copy_from_slice(&ratio_im.map(|r| -r));
                response.slope_db[at]
                    .copy_from_slice(&std::array::from_fn::<f64, LANES, _>(|j| DB_PER_NEPER * omega[j] * ratio_re[j]));
                continue;
            }
            // H = V/E for the whole block, formed only if a lane needs it.
            let mut quotient = None;
            for j in 0..LANES.min(n - first) {
                if !valid(omega[j]) {
                    if let Some((h, dh)) = fallback(omega[j]) {
                        let (gain, phase, ratio) = scalar(h, dh);
                        response.store(first + j, omega[j], gain, phase, ratio);
                    }
                    continue;
                }
                if gain[j].is_finite() && phase[j].is_finite() && ratio_re[j].is_finite() && ratio_im[j].is_finite() {
                    response.store(first + j, omega[j], gain[j], phase[j], Complex64::new(ratio_re[j], ratio_im[j]));
                    continue;
                }
                // A lane the shared division could not take (|V|²·|E|² out of range, or V = 0):
                // H = V·(1/E) as `Reduction::solve_lanes` forms it (1/E = conj E/|E|², which
                // holds for |E| up to about 1e154), and the MNA pencil where that is not finite.
                let quotient = quotient.get_or_insert_with(|| v.mul(e.inv()));
                let h = Complex64::new(quotient.v.re[j], quotient.v.im[j]);
                let dh = Complex64::new(quotient.d.re[j], quotient.d.im[j]);
                let solved = [h.re, h.im, dh.re, dh.im].iter().all(|x| x.is_finite());
                if let Some((h, dh)) = if solved { Some((h, dh)) } else { fallback(omega[j]) } {
                    let (gain, phase, ratio) = scalar(h, dh);
                    response.store(first + j, omega[j], gain, phase, ratio);
                }
            }
            unwrap.points(&mut response.phase_deg[first..(first + LANES).min(n)]);
        }
    }

    #[inline(always)]
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
        let gain = &response.gain_db;
        let Some(first) = gain.iter().position(|g| g.is_finite()) else {
            return vec![f64::NAN; self.corners.len()];
        };
        let last = gain.iter().rposition(|g| g.is_finite()).unwrap_or(first);
        let reference = match self.reference {
            ReferenceKind::LowEnd => gain[first],
            ReferenceKind::HighEnd => gain[last],
            ReferenceKind::Peak => finite_peak(&gain[first..=last]),
            ReferenceKind::Ends => gain[first].max(gain[last]),
        };
        let level = reference - HALF_POWER_DB;
        // Where the level is crossed between neighbouring finite points i < j (or left from a
        // point exactly on it).
        let crosses = |i: usize, j: usize| {
            let (y0, y1) = (gain[i] - level, gain[j] - level);
            (y0 * y1 < 0.0) | ((y0 == 0.0) & (y1 != 0.0))
        };
        // The crossing's frequency between points i and j, and whether the gain falls there.
        let root = |i: usize, j: usize| {
            let (y0, y1) = (gain[i] - level, gain[j] - level);
            let (u0, u1) = (self.log_f[i], self.log_f[j]);
            let h = u1 - u0;
            let (m0, m1) = (response.slope_db[i] * h, response.slope_db[j] * h);
            // Cubic Hermite in (ln f, dB) with the exact end slopes, as in `measure`, and its
            // derivative in t.
            let cubic = |t: f64| {
                let (t2, t3) = (t * t, t * t * t);
                (2.0 * t3 - 3.0 * t2 + 1.0) * y0
                    + (t3 - 2.0 * t2 + t) * m0
                    + (-2.0 * t3 + 3.0 * t2) * y1
                    + (t3 - t2) * m1
            };
            let slope = |t: f64| {
                let t2 = t * t;
                (6.0 * t2 - 6.0 * t) * (y0 - y1) + (3.0 * t2 - 4.0 * t + 1.0) * m0 + (3.0 * t2 - 2.0 * t) * m1
            };
            // Newton's method kept inside the shrinking sign-change bracket (a bisection step
            // wherever Newton would leave it), to full precision.
            let (mut lo, mut hi) = (0.0, 1.0);
            let mut t = if y0 != y1 { y0 / (y0 - y1) } else { 0.5 };
            for _ in 0..100 {
                let f = cubic(t);
                if f == 0.0 {
                    break;
                }
                if (f > 0.0) == (y0 > 0.0) {
                    lo = t;
                } else {
                    hi = t;
                }
                let newton = t - f / slope(t);
                let next = if newton > lo && newton < hi { newton } else { 0.5 * (lo + hi) };
                let done = (next - t).abs() <= 4.0 * f64::EPSILON || hi - lo <= 4.0 * f64::EPSILON;
                t = next;
                if done {
                    break;
                }
            }
            let edge = if y1 < y0 { Edge::Falling } else { Edge::Rising };
            ((u0 + t * h).exp(), edge)
        };
        let mut found: Vec<(f64, Edge)> = Vec::new();
        if gain[first..=last].iter().fold(true, |all, g| all & g.is_finite()) {
            // Every point is finite, so neighbours pair up; blocks of eight are tested at once
            // (branch-free, as vector instructions) and only a block with a crossing is walked.
            let mut j = first + 1;
            while j + 8 <= last + 1 {
                if (j..j + 8).fold(false, |any, j| any | crosses(j - 1, j)) {
                    found.extend((j..j + 8).filter(|&j| crosses(j - 1, j)).map(|j| root(j - 1, j)));
                }
                j += 8;
            }
            found.extend((j..=last).filter(|&j| crosses(j - 1, j)).map(|j| root(j - 1, j)));
        } else {
            let mut previous = first;
            for (j, g) in gain.iter().enumerate().take(last + 1).skip(first + 1) {
                if g.is_finite() {
                    let i = std::mem::replace(&mut previous, j);
                    if crosses(i, j) {
                        found.push(root(i, j));
                    }
                }
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

    /// Stores one point (the phase still principal, unwrapped later) where it is finite.
    fn store(&mut self, k: usize, omega: f64, gain_db: f64, phase_deg: f64, ratio: Complex64) {
        if gain_db.is_finite() && ratio.re.is_finite() && ratio.im.is_finite() {
            self.gain_db[k] = gain_db;
            self.phase_deg[k] = phase_deg;
            self.group_delay_s[k] = -ratio.im;
            self.slope_db[k] = DB_PER_NEPER * omega * ratio.re;
        }
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

/// The phase unwrapped along the grid from the first solved point: each point gets the multiple
/// of 360° that brings it within 180° of the previous solved one. The multiple grows by the
/// rounded difference of the principal values, which keeps the division off the chain from point
/// to point; it is rounded to nearest by adding and subtracting 1.5·2^52 (exact for |x| < 2^51,
/// ties to even), which costs no library call. Points that are not finite are passed over.
struct Unwrap {
    /// The last solved point's principal value (NaN before the first).
    previous: f64,
    /// The multiple of 360° added to it.
    turns: f64,
}

/// 1.5·2^52 (see [`Unwrap`]).
const ROUND: f64 = 6_755_399_441_055_744.0;

impl Unwrap {
    fn new() -> Unwrap {
        Unwrap { previous: f64::NAN, turns: 0.0 }
    }

    /// Unwraps the principal values `phase` in place, in grid order.
    #[inline(always)]
    fn points(&mut self, phase: &mut [f64]) {
        for phase in phase.iter_mut().filter(|p| p.is_finite()) {
            let principal = *phase;
            if self.previous.is_finite() {
                self.turns += ((self.previous - principal) * (1.0 / 360.0) + ROUND) - ROUND;
            }
            self.previous = principal;
            *phase = principal + 360.0 * self.turns;
        }
    }

    /// A whole block of finite principal values, unwrapped: as [`Unwrap::points`] gives it, but
    /// in vector instructions where no point of the block changes the multiple (the common case
    /// on a grid fine enough to follow the phase).
    #[inline(always)]
    fn block(&mut self, phase: &Lane) -> Lane {
        let before: Lane = std::array::from_fn(|j| if j == 0 { self.previous } else { phase[j - 1] });
        let step: Lane = std::array::from_fn(|j| ((before[j] - phase[j]) * (1.0 / 360.0) + ROUND) - ROUND);
        // A first point (NaN before it) adds nothing; every other zero step keeps the multiple.
        let steady =
            step.iter().enumerate().fold(true, |all, (j, &s)| all & ((s == 0.0) | ((j == 0) & before[0].is_nan())));
        if steady {
            self.previous = phase[LANES - 1];
            let turns = self.turns;
            return std::array::from_fn(|j| phase[j] + 360.0 * turns);
        }
        let mut out = *phase;
        self.points(&mut out);
        out
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

/// Trials at or above which a column's order statistics are bracketed from a sample.
const BRACKET_FROM: usize = 8 * BRACKET_SAMPLE;

/// Sample size for the brackets.
const BRACKET_SAMPLE: usize = 256;

/// Brackets for the `lo` and `hi` quantiles of each column, found from a sorted sample of the
/// column's values, in the manner of Floyd & Rivest ("Expected time bounds for selection",
/// CACM 18(3), 1975): the quantile's place in the sample, four standard deviations of a sample
/// quantile's rank either side, plus two. A column with fewer than 16 finite sample values gets
/// an unbounded bracket (every value is kept).
///
/// `sample(i)` gives the i-th sampled trial's values over the columns.
fn brackets_from<'a>(n: usize, lo: f64, hi: f64, sample: impl Fn(usize) -> &'a [f64]) -> Vec<[f64; 4]> {
    let mut columns = vec![0.0; n * BRACKET_SAMPLE];
    for i in 0..BRACKET_SAMPLE {
        for (k, &v) in sample(i).iter().enumerate() {
            columns[k * BRACKET_SAMPLE + i] = v;
        }
    }
    let mut brackets = vec![[f64::NEG_INFINITY, f64::INFINITY, f64::NEG_INFINITY, f64::INFINITY]; n];
    let mut finite = Vec::with_capacity(BRACKET_SAMPLE);
    for (k, bracket) in brackets.iter_mut().enumerate() {
        finite.clear();
        finite.extend(columns[k * BRACKET_SAMPLE..(k + 1) * BRACKET_SAMPLE].iter().copied().filter(|v| v.is_finite()));
        if finite.len() < 16 {
            continue;
        }
        let last = (finite.len() - 1) as f64;
        // The ranks of the four ends (None: unbounded), then each end's order statistic by
        // selection, in ascending rank, each in the part above the previous one: the values a
        // full sort would put there, for a fraction of its cost.
        let ends = |q: f64| {
            let at = q * last;
            let margin = 4.0 * (finite.len() as f64 * q * (1.0 - q)).sqrt() + 2.0;
            let (below, above) = ((at - margin).floor(), (at + margin).ceil());
            [(below >= 0.0).then_some(below as usize), (above <= last).then_some(above as usize)]
        };
        let [a, b] = ends(lo);
        let [c, d] = ends(hi);
        let mut ranks = [a, b, c, d];
        ranks.sort_unstable();
        let mut from = 0;
        for rank in ranks.into_iter().flatten() {
            finite[from..].select_nth_unstable_by(rank - from, f64::total_cmp);
            from = rank;
        }
        let value = |rank: Option<usize>, unbounded: f64| rank.map_or(unbounded, |r| finite[r]);
        *bracket = [
            value(a, f64::NEG_INFINITY),
            value(b, f64::INFINITY),
            value(c, f64::NEG_INFINITY),
            value(d, f64::INFINITY),
        ];
    }
    brackets
}

/// One quantity's trials folded per column, one trial at a time: the count of finite values,
/// their smallest and largest, the counts below each quantile's bracket, and the values inside
/// each bracket. As the trials come in, each bracket is narrowed around its quantile from the
/// fold's own values ([`ColumnFold::narrow`]). Folds of disjoint sets of trials finish together
/// exactly, whatever brackets each has narrowed to ([`finish_columns`]).
#[derive(Debug, Clone, PartialEq)]
struct ColumnFold {
    /// Whether the columns are bracketed; if not, the low side's values are every finite value.
    bracketed: bool,
    /// The two quantiles (fractions).
    quantiles: [f64; 2],
    a_lo: Vec<f64>,
    b_lo: Vec<f64>,
    a_hi: Vec<f64>,
    b_hi: Vec<f64>,
    /// Counts, held as f64 (exact below 2^53) so that the fold vectorises.
    finite: Vec<f64>,
    min: Vec<f64>,
    max: Vec<f64>,
    below_lo: Vec<f64>,
    below_hi: Vec<f64>,
    /// The values inside the brackets: `inside[2k]` for column k's low bracket, `inside[2k + 1]`
    /// for its high one (interleaved, so that a hit's bit index is its list's index).
    inside: Vec<Vec<f64>>,
    /// Trials folded so far, and the count at which the brackets are next narrowed.
    added: usize,
    next_narrow: usize,
    /// The trials this fold expects (narrowing stops past half of them, where it no longer pays).
    expected: usize,
    /// Scratch for rows longer than 512 columns: which brackets each value is inside.
    flags: Vec<u8>,
}

/// The most values a fold's kept-value list reserves at first ([`ColumnFold::new`]).
const FOLD_RESERVE: usize = 1024;

/// The fold's first narrowing, in trials; each later one comes at twice the count.
const NARROW_FROM: usize = 512;

/// Standard deviations of a quantile's rank kept either side when a fold narrows a bracket from
/// its own values. A miss costs the column a second solve of every trial, and a fold narrows up
/// to a few times per column, so this is wider than the sample's four ([`brackets_from`]): a
/// normal tail beyond 5σ is 2.9e-7 (common practice for the normal approximation of a sample
/// quantile's rank; the tail value is from a standard normal table).
const NARROW_SIGMAS: f64 = 5.0;

impl ColumnFold {
    /// An empty fold over `n` columns for the quantiles `lo` and `hi`, bracketed by `brackets`
    /// where given, expecting about `expected` trials.
    fn new(n: usize, brackets: Option<&[[f64; 4]]>, lo: f64, hi: f64, expected: usize) -> ColumnFold {
        let bracketed = brackets.is_some();
        // Unbracketed, the low side keeps every finite value and the high side none: its ends
        // [+∞, −∞] hold no value (and its count below, unused, counts every finite one). Not
        // NaN, so that a fold still equals its own copy.
        let end = |i: usize, unbounded: f64| match brackets {
            Some(b) => b.iter().map(|b| b[i]).collect(),
            None => vec![unbounded; n],
        };
        // The kept values' first reservation: a few per cent of the trials once the brackets
        // narrow, at most FOLD_RESERVE per list (the lists grow past it as needed), so that a
        // large run does not reserve memory for values it will not keep.
        let guess = if bracketed { expected / 16 } else { expected }.min(FOLD_RESERVE);
        ColumnFold {
            bracketed,
            quantiles: [lo, hi],
            a_lo: end(0, f64::NEG_INFINITY),
            b_lo: end(1, f64::INFINITY),
            a_hi: end(2, f64::INFINITY),
            b_hi: end(3, f64::NEG_INFINITY),
            finite: vec![0.0; n],
            min: vec![f64::INFINITY; n],
            max: vec![f64::NEG_INFINITY; n],
            below_lo: vec![0.0; n],
            below_hi: vec![0.0; n],
            inside: (0..2 * n)
                .map(|i| if bracketed || i % 2 == 0 { Vec::with_capacity(guess) } else { Vec::new() })
                .collect(),
            added: 0,
            next_narrow: NARROW_FROM,
            expected,
            flags: if n > 512 { vec![0; n] } else { Vec::new() },
        }
    }

    /// Folds in one trial's values over the columns.
    #[inline(always)]
    fn add(&mut self, row: &[f64]) {
        let n = self.finite.len();
        let row = &row[..n];
        let (a_lo, b_lo, a_hi, b_hi) = (&self.a_lo[..n], &self.b_lo[..n], &self.a_hi[..n], &self.b_hi[..n]);
        let (min, max) = (&mut self.min[..n], &mut self.max[..n]);
        let (finite, below_lo, below_hi) = (&mut self.finite[..n], &mut self.below_lo[..n], &mut self.below_hi[..n]);
        // Branch-free and in f64 throughout, so that it runs as vector instructions: a value that
        // is not finite becomes NaN, which every comparison rejects and f64::min/max pass over.
        // The counts are exact in f64 (below 2^53). Each column's byte in `flags` gets bit 0 where
        // its value is inside the low bracket and bit 1 where inside the high one.
        let mut flags = [0u8; 512];
        let flags = if n <= flags.len() { &mut flags[..n] } else { &mut self.flags[..n] };
        for k in 0..n {
            let v = if row[k].is_finite() { row[k] } else { f64::NAN };
            finite[k] += if v.is_nan() { 0.0 } else { 1.0 };
            min[k] = min[k].min(v);
            max[k] = max[k].max(v);
            below_lo[k] += if v < a_lo[k] { 1.0 } else { 0.0 };
            below_hi[k] += if v < a_hi[k] { 1.0 } else { 0.0 };
            let lo = u8::from((v >= a_lo[k]) & (v <= b_lo[k]));
            let hi = u8::from((v >= a_hi[k]) & (v <= b_hi[k]));
            flags[k] = lo | (hi << 1);
        }
        // Eight columns' bytes at a time: bit 8j + s of the word is column 8c + j's bracket s,
        // whose list is `inside[2(8c + j) + s]`.
        for (c, bytes) in flags.chunks(8).enumerate() {
            let mut word = [0u8; 8];
            word[..bytes.len()].copy_from_slice(bytes);
            let mut bits = u64::from_le_bytes(word);
            while bits != 0 {
                let t = bits.trailing_zeros() as usize;
                bits &= bits - 1;
                let k = 8 * c + t / 8;
                self.inside[2 * k + (t % 8)].push(row[k]);
            }
        }
        self.added += 1;
        if self.added == self.next_narrow {
            self.next_narrow *= 2;
            if self.bracketed && 2 * self.added <= self.expected {
                self.narrow();
            }
        }
    }

    /// Narrows every bracket around its quantile from the values folded so far: the new ends
    /// are this fold's order statistics [`NARROW_SIGMAS`] standard deviations of the quantile's
    /// rank (plus two) either side of it, where those lie inside the present bracket; the counts
    /// below and the values inside follow. Exact for any new ends inside the old bracket, so a
    /// poor guess costs a miss at the finish, never a wrong result.
    #[cold]
    #[inline(never)]
    fn narrow(&mut self) {
        for k in 0..self.finite.len() {
            let m = self.finite[k] as usize;
            if m < 16 {
                continue;
            }
            for side in 0..2 {
                let (a, b, below) = if side == 0 {
                    (&mut self.a_lo[k], &mut self.b_lo[k], &mut self.below_lo[k])
                } else {
                    (&mut self.a_hi[k], &mut self.b_hi[k], &mut self.below_hi[k])
                };
                narrow_bracket(a, b, below, &mut self.inside[2 * k + side], m, self.quantiles[side]);
            }
        }
    }

    /// Writes the fold into `env` (min and max joined with what it holds; the quantiles where a
    /// column has finite values) and returns the columns whose brackets missed their ranks, which
    /// the caller must select whole with [`percentile_pair_by_selection`].
    fn finish(self, env: &mut Envelope) -> Vec<usize> {
        finish_columns(&[&self], 0..self.finite.len(), env)
    }
}

/// Narrows one bracket [a, b] of a column with `m` finite values, `below` of them under a and
/// `inside` the values within it, around the q-quantile (see [`ColumnFold::narrow`]).
fn narrow_bracket(a: &mut f64, b: &mut f64, below: &mut f64, inside: &mut Vec<f64>, m: usize, q: f64) {
    let last = (m - 1) as f64;
    let at = q * last;
    let margin = NARROW_SIGMAS * (m as f64 * q * (1.0 - q)).sqrt() + 2.0;
    let under = *below as usize;
    // The ranks (in the column's ascending order) of the new ends, where inside the bracket.
    let within =
        |rank: f64| (rank >= under as f64 && rank < (under + inside.len()) as f64).then(|| rank as usize - under);
    let (low, high) = (within((at - margin).floor()), within((at + margin).ceil()));
    if low.is_none() && high.is_none() {
        return;
    }
    // The low end by selection, then the high end in the part above it.
    let from = low.unwrap_or(0);
    if let Some(i) = low {
        *a = *inside.select_nth_unstable_by(i, f64::total_cmp).1;
    }
    if let Some(i) = high {
        *b = *inside[from..].select_nth_unstable_by(i - from, f64::total_cmp).1;
    }
    let (a, b) = (*a, *b);
    let mut dropped_below = 0;
    inside.retain(|&v| {
        dropped_below += usize::from(v < a);
        v >= a && v <= b
    });
    *below += dropped_below as f64;
}

/// Finishes the columns `range` of folds of disjoint sets of trials as if they were one fold:
/// writes into `env` (which holds that range alone) the min and max joined with what it holds
/// and, where a column has finite values, the quantiles; and returns the columns (as indices into
/// the folds) whose brackets missed their ranks, which the caller must select whole with
/// [`percentile_pair_by_selection`].
///
/// The folds may have narrowed their brackets differently. Each quantile is then selected within
/// the brackets' intersection [max a, min b]: a fold's values under max a are its count below
/// plus its kept values under max a, which is exact because max a is inside every fold's bracket
/// (and so is min b). An empty intersection is a miss.
fn finish_columns(folds: &[&ColumnFold], range: Range<usize>, env: &mut Envelope) -> Vec<usize> {
    let Some(first) = folds.first() else {
        return Vec::new();
    };
    let [lo, hi] = first.quantiles;
    // A column's kept values within [a, b] from every fold, gathered in fold order (the
    // selections below do not depend on the values' order), with the count of kept values
    // under a.
    fn gather<'a>(
        scratch: &'a mut Vec<f64>,
        parts: impl Iterator<Item = &'a [f64]>,
        a: f64,
        b: f64,
    ) -> (&'a mut [f64], usize) {
        scratch.clear();
        let mut under = 0;
        for part in parts {
            under += part.iter().filter(|&&v| v < a).count();
            scratch.extend(part.iter().copied().filter(|&v| v >= a && v <= b));
        }
        (scratch, under)
    }
    let (mut inside_lo, mut inside_hi) = (Vec::new(), Vec::new());
    let mut missed = Vec::new();
    for (at, k) in range.enumerate() {
        let sum = |count: fn(&ColumnFold) -> &[f64]| folds.iter().map(|f| count(f)[k]).sum::<f64>() as usize;
        for fold in folds {
            env.min[at] = env.min[at].min(fold.min[k]);
            env.max[at] = env.max[at].max(fold.max[k]);
        }
        let m = sum(|f| &f.finite);
        if m == 0 {
            continue;
        }
        let found = if first.bracketed {
            let ends = |a: fn(&ColumnFold) -> &[f64], b: fn(&ColumnFold) -> &[f64]| {
                let a = folds.iter().map(|f| a(f)[k]).fold(f64::NEG_INFINITY, f64::max);
                let b = folds.iter().map(|f| b(f)[k]).fold(f64::INFINITY, f64::min);
                (a, b)
            };
            let side = |scratch: &mut Vec<f64>, side: usize, (a, b): (f64, f64), below: usize, q: f64| {
                // (Bracketed ends are never NaN.)
                if a > b {
                    return None;
                }
                let (kept, under) = gather(scratch, folds.iter().map(|f| &f.inside[2 * k + side][..]), a, b);
                rank_in_bracket(kept, below + under, m, q)
            };
            side(&mut inside_lo, 0, ends(|f| &f.a_lo, |f| &f.b_lo), sum(|f| &f.below_lo), lo).zip(side(
                &mut inside_hi,
                1,
                ends(|f| &f.a_hi, |f| &f.b_hi),
                sum(|f| &f.below_hi),
                hi,
            ))
        } else {
            let (kept, _) =
                gather(&mut inside_lo, folds.iter().map(|f| &f.inside[2 * k][..]), f64::NEG_INFINITY, f64::INFINITY);
            Some(percentile_pair_by_selection(kept, lo, hi))
        };
        match found {
            Some((low, high)) => {
                env.low[at] = low;
                env.high[at] = high;
            }
            None => missed.push(k),
        }
    }
    missed
}

/// Folds the trials' values of one quantity at the frequencies `range` into `env` (which holds
/// that range alone): the smallest and largest finite value per frequency into `min` and `max`
/// (which hold the nominal and the corners already), and the `lo` and `hi` quantiles of the
/// finite values into `low` and `high`, exactly as [`percentile`] gives them on each column.
///
/// The trials are read once, row by row, as they are stored. From [`BRACKET_FROM`] trials on,
/// each column's order statistics are first bracketed from a strided sample of the trials
/// ([`brackets_from`]); the pass keeps the values inside each bracket (a few per cent) and the
/// selection runs on those alone. Where a bracket misses its rank (the sample was not
/// representative; rare for Monte Carlo trials, whose order is random), that column is gathered
/// whole and selected, so the result never depends on the sample.
fn fold_trials(
    trials: &[&TrialResponse],
    pick: fn(&TrialResponse) -> &[f64],
    range: Range<usize>,
    lo: f64,
    hi: f64,
    env: &mut Envelope,
) {
    fn within<'a>(whole: fn(&TrialResponse) -> &[f64], r: &'a TrialResponse, range: &Range<usize>) -> &'a [f64] {
        &whole(r)[range.clone()]
    }
    let (n, count) = (range.len(), trials.len());
    if count == 0 {
        return;
    }
    let brackets = (count >= BRACKET_FROM).then(|| {
        let stride = count / BRACKET_SAMPLE;
        brackets_from(n, lo, hi, |i| within(pick, trials[i * stride], &range))
    });
    let mut fold = ColumnFold::new(n, brackets.as_deref(), lo, hi, count);
    for r in trials {
        fold.add(within(pick, r, &range));
    }
    for k in fold.finish(env) {
        let mut column: Vec<f64> =
            trials.iter().map(|r| within(pick, r, &range)[k]).filter(|v| v.is_finite()).collect();
        let (low, high) = percentile_pair_by_selection(&mut column, lo, hi);
        env.low[k] = low;
        env.high[k] = high;
    }
}

/// The q-quantile of a column of `m` finite values, as [`percentile`] gives it, from the values
/// `inside` a bracket with `below` values of the column under it; `None` where the order
/// statistics it needs are not inside.
fn rank_in_bracket(inside: &mut [f64], below: usize, m: usize, q: f64) -> Option<f64> {
    let position = q * (m - 1) as f64;
    let rank = position.floor() as usize;
    let needs_next = rank + 1 < m;
    if rank < below || rank + usize::from(needs_next) >= below + inside.len() {
        return None;
    }
    let (_, &mut at, rest) = inside.select_nth_unstable_by(rank - below, f64::total_cmp);
    let fraction = position - rank as f64;
    if fraction == 0.0 || !needs_next {
        return Some(at);
    }
    Some(at + fraction * (rest.iter().copied().fold(f64::INFINITY, f64::min) - at))
}

/// The `lo` and `hi` quantiles (lo ≤ hi) as [`percentile`] gives them, the second found only in
/// the part of the slice that the first selection left above its position.
fn percentile_pair_by_selection(values: &mut [f64], lo: f64, hi: f64) -> (f64, f64) {
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

/// The columns `0..n` cut into at most `width` jobs of near-equal size (at least one): the
/// count of jobs, and job j's columns.
fn cut(n: usize, width: usize) -> (usize, impl Fn(usize) -> Range<usize>) {
    let jobs = width.clamp(1, n.max(1));
    (jobs, move |j| j * n / jobs..(j + 1) * n / jobs)
}

/// The largest finite value of `values` (−∞ where none is): four running maxima, so that the
/// pass is not one long chain of dependent comparisons. The largest value is the same whichever
/// way the comparisons are grouped.
fn finite_peak(values: &[f64]) -> f64 {
    let mut peaks = [f64::NEG_INFINITY; 4];
    let keep = |peak: f64, v: f64| if v.is_finite() && v > peak { v } else { peak };
    let mut blocks = values.chunks_exact(4);
    for block in &mut blocks {
        for (peak, &v) in peaks.iter_mut().zip(block) {
            *peak = keep(*peak, v);
        }
    }
    let tail = blocks.remainder().iter().fold(f64::NEG_INFINITY, |peak, &v| keep(peak, v));
    peaks.into_iter().fold(tail, f64::max)
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
    fn folded_runs_equal_kept_runs_however_split() {
        // A ladder (solved by reduction) with 2500 trials, so that the envelopes are bracketed,
        // and a bridge (solved by MNA) with 300, where every value is kept: the folded report must
        // equal the kept one bit for bit, whatever the split and with the corners.
        let (ladder, ladder_probe) = series_rlc(20.0, 1e-3, 1e-6);
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 50.0)
            .resistor("R1", "in", "a", 1e3)
            .resistor("R2", "in", "b", 2.2e3)
            .capacitor("C3", "a", "0", 10e-9)
            .capacitor("C4", "b", "0", 47e-9)
            .resistor("R5", "a", "b", 4.7e3);
        let bridge = b.build().unwrap();
        let bridge_probe = Probe::new(&bridge, "V1", "a", "0").unwrap();
        for (circuit, probe, trials, points) in [(&ladder, &ladder_probe, 2500, 40), (&bridge, &bridge_probe, 300, 33)]
        {
            let mut opts = options(trials, Distribution::Uniform);
            opts.corners = true;
            let plan = TolerancePlan::new(circuit, probe, &grid(100.0, 1e6, points), &opts).unwrap();
            let corners = plan.run_corners();
            let kept = plan.summarize(&[plan.run_trials(0..trials), corners.clone()]);
            let fold = plan.fold_plan();
            let whole = plan.summarize_folded(vec![plan.run_folded(&fold, 0..trials)], Some(&corners));
            assert_eq!(whole, kept, "{trials} trials in one part");
            let cut = trials / 3;
            let parts = vec![plan.run_folded(&fold, cut..trials), plan.run_folded(&fold, 0..cut)];
            assert_eq!(plan.summarize_folded(parts.clone(), Some(&corners)), kept, "{trials} trials in two parts");
            // The summary's columns cut into three and seven jobs, and the brackets' sample too.
            for width in [3, 7] {
                let cut_fold = plan.fold_plan_with(&Cut(width));
                assert_eq!(cut_fold, fold, "the sample cut into {width} jobs");
                let summary = plan.summarize_folded_with(parts.clone(), Some(&corners), &Cut(width));
                assert_eq!(summary, kept, "{trials} trials, the columns in {width} jobs");
            }
            assert_eq!(plan.summarize_with(&[plan.run_trials(0..trials), corners], &Sequential), kept);
        }
    }

    /// Runs the jobs in turn, but gives its width as a machine with that many threads would, so
    /// that the work is cut as it would be there.
    struct Cut(usize);

    impl Parallel for Cut {
        fn width(&self) -> usize {
            self.0
        }

        fn map<T: Send>(&self, jobs: usize, job: &(dyn Fn(usize) -> T + Sync)) -> Vec<T> {
            (0..jobs).map(job).collect()
        }
    }

    #[test]
    fn corners_are_found_alike_with_and_without_gaps_in_the_response() {
        // A trial's −3 dB corner comes from the two solved points around the crossing: a point
        // that failed to solve (NaN) elsewhere in the response must not move it, while the
        // all-finite path (blocks of eight tested at once) and the general path must agree. The
        // crossing is checked against the closed form of a first-order RC, fc = 1/(2πRC).
        let (circuit, probe) = rc(1e3, 100e-9);
        let plan =
            TolerancePlan::new(&circuit, &probe, &grid(10.0, 1e5, 61), &options(10, Distribution::Uniform)).unwrap();
        let fc = 1.0 / (2.0 * PI * 1e3 * 100e-9);
        let response = plan.evaluate(&plan.trial_multipliers(3));
        let found = plan.corners_of(&response);
        let m = plan.trial_multipliers(3);
        let values: Vec<f64> = plan.parts().iter().zip(&m).map(|(p, m)| p.nominal * m).collect();
        // The reference is the response's low end (10 Hz, a little under 0 dB), so the level
        // crossed is 10·log10(1/(1 + (f/fc)²)) = g(10 Hz) − 10·log10 2: f = fc·√(10^(−level/10) − 1).
        let trial_fc = 1.0 / (2.0 * PI * values.iter().product::<f64>());
        let level = response.gain_db[0] - HALF_POWER_DB;
        let expected = trial_fc * (10f64.powf(-level / 10.0) - 1.0).sqrt();
        assert!((found[0] / expected - 1.0).abs() < 1e-6, "{} against {expected}", found[0]);
        assert!((found[0] / fc - 1.0).abs() < 0.2);
        let crossing = (0..60)
            .find(|&k| (response.gain_db[k] + HALF_POWER_DB) * (response.gain_db[k + 1] + HALF_POWER_DB) < 0.0)
            .unwrap();
        for hole in [1, 5, crossing + 3, 59] {
            let mut gapped = response.clone();
            gapped.gain_db[hole] = f64::NAN;
            assert_eq!(plan.corners_of(&gapped), found, "a gap at point {hole}");
        }
        let mut empty = response.clone();
        empty.gain_db.iter_mut().for_each(|g| *g = f64::NAN);
        assert!(plan.corners_of(&empty)[0].is_nan());
    }

    #[test]
    fn the_finite_peak_skips_gaps_and_infinities() {
        let values = [1.0, f64::NAN, 7.5, f64::INFINITY, -3.0, 7.25, f64::NEG_INFINITY, 2.0, 6.0];
        for n in 0..=values.len() {
            let naive = values[..n].iter().copied().filter(|v| v.is_finite()).fold(f64::NEG_INFINITY, f64::max);
            assert_eq!(finite_peak(&values[..n]), naive, "the first {n} values");
        }
        assert_eq!(finite_peak(&[f64::NAN; 5]), f64::NEG_INFINITY);
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
        let g = grid(1e4, 1e8, 70);
        // The output at the load (V′ = 0 on the ladder path) and at the first node, inside the
        // ladder (V′ ≠ 0, so H′/H = V′/V − E′/E takes both terms).
        for node in ["n2", "n1"] {
            let probe = Probe::new(&circuit, "V1", node, "0").unwrap();
            let plan = TolerancePlan::new(&circuit, &probe, &g, &options(5, Distribution::Normal)).unwrap();
            assert!(plan.reduction.is_some(), "an LC ladder takes the reduction path");
            for trial in 0..5 {
                let m = plan.trial_multipliers(trial);
                let fast = plan.evaluate(&m);
                let mut system = AcSystem::new(&plan.circuit_with(&m), &probe);
                let exact = sweep(&mut system, &g, Detail::Transfer);
                let (gain, delay, phase) = (exact.magnitude_db(), exact.group_delay_s(), exact.phase_deg());
                for k in 0..g.len() {
                    assert!((fast.gain_db[k] - gain[k].unwrap()).abs() < 1e-9, "{node}: gain at {k}");
                    let d = delay[k].unwrap();
                    assert!((fast.group_delay_s[k] - d).abs() < 1e-9 * d.abs().max(1e-12), "{node}: delay at {k}");
                    // The same angle, whatever multiple of 360° either unwrapping added.
                    let turns = (fast.phase_deg[k] - phase[k].unwrap()) / 360.0;
                    assert!((turns - turns.round()).abs() * 360.0 < 1e-9, "{node}: phase at {k}");
                }
            }
        }
    }

    #[test]
    fn a_deep_stopband_trial_keeps_its_exact_delay() {
        // A 9th-order LC ladder between 1 Ω ends (C = 1.5 F, L = 1.5 H, our own test circuit)
        // swept to 24.6 GHz, about −2046 dB at the top for the nominal; with every L and C 30 %
        // high the top is near −2066 dB, where |V|²·|E|²·q overflows and the lane takes the
        // one-at-a-time path. Gain and delay must still match the engine there (a division by
        // E² would overflow and give a delay of 0).
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "n1", "0", 1.0, 1.0);
        let nodes = ["n1", "n2", "n3", "n4", "n5"];
        for (i, node) in nodes.iter().enumerate() {
            b.capacitor(&format!("C{i}"), node, "0", 1.5);
            if i + 1 < nodes.len() {
                b.inductor(&format!("L{i}"), node, nodes[i + 1], 1.5);
            }
        }
        b.resistor("RL", "n5", "0", 1.0);
        let circuit = b.build().unwrap();
        let probe = Probe::new(&circuit, "V1", "n5", "0").unwrap();
        let g = grid(1e-2, 2.4602398e10, 64);
        let plan = TolerancePlan::new(&circuit, &probe, &g, &options(5, Distribution::Uniform)).unwrap();
        assert!(plan.reduction.is_some(), "the ladder takes the reduction path");
        let m: Vec<f64> = plan.parts().iter().map(|p| if p.reference.starts_with('R') { 1.0 } else { 1.3 }).collect();
        let fast = plan.evaluate(&m);
        let mut system = AcSystem::new(&plan.circuit_with(&m), &probe);
        let exact = sweep(&mut system, &g, Detail::Transfer);
        let (gain, delay) = (exact.magnitude_db(), exact.group_delay_s());
        let top = g.len() - 1;
        assert!(gain[top].unwrap() < -2060.0, "the top point is deep enough: {:?}", gain[top]);
        for k in 0..g.len() {
            let (gk, dk) = (gain[k].unwrap(), delay[k].unwrap());
            assert!(
                (fast.gain_db[k] - gk).abs() < 1e-9 * gk.abs().max(1.0),
                "gain at {k}: {} vs {gk}",
                fast.gain_db[k]
            );
            assert!(
                (fast.group_delay_s[k] - dk).abs() < 1e-7 * dk.abs(),
                "delay at {k}: {} vs {dk}",
                fast.group_delay_s[k]
            );
        }
    }

    #[test]
    fn an_unbracketed_fold_equals_its_copy() {
        let mut fold = ColumnFold::new(3, None, 0.05, 0.95, 10);
        fold.add(&[1.0, f64::NAN, -2.0]);
        assert_eq!(fold.clone(), fold);
    }

    #[test]
    fn the_block_unwrap_equals_the_point_unwrap() {
        // Principal phases of a falling response with wraps (the steady blocks take the vector
        // path, the others the point path), a first block after a gap, and steps that round to
        // either side: block by block must give what point by point gives, bit for bit.
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(11);
        for trial in 0..200 {
            let n = 8 * (1 + trial % 9);
            let mut angle = 0.0;
            let principal: Vec<f64> = (0..n)
                .map(|_| {
                    let u: f64 = StandardUniform.sample(&mut rng);
                    angle -= if trial % 3 == 0 { 170.0 * u } else { 40.0 * u };
                    (angle + 180.0f64).rem_euclid(360.0) - 180.0
                })
                .collect();
            let mut by_points = principal.clone();
            Unwrap::new().points(&mut by_points);
            let mut unwrap = Unwrap::new();
            let by_blocks: Vec<f64> =
                principal.chunks_exact(LANES).flat_map(|block| unwrap.block(&block.try_into().unwrap())).collect();
            assert_eq!(by_blocks, by_points, "trial {trial}");
        }
    }

    #[test]
    fn folds_narrow_their_brackets_and_still_finish_exactly() {
        // One column of 10,000 shuffled normal values, bracketed from a sample of 256 as a run
        // is: each fold narrows its brackets as its values come in, so it keeps far fewer values
        // than the sample's brackets hold, and folds of unequal parts (which narrow differently)
        // finish together to plain selection over the whole column, bit for bit.
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(5);
        let count = 10_000;
        let column: Vec<f64> = (0..count).map(|_| StandardNormal.sample(&mut rng)).collect();
        let (lo, hi) = (0.05, 0.95);
        let brackets = brackets_from(1, lo, hi, |i| &column[i * (count / BRACKET_SAMPLE)..][..1]);
        let held = |a: f64, b: f64| column.iter().filter(|&&v| v >= a && v <= b).count();
        let sample_held = held(brackets[0][0], brackets[0][1]) + held(brackets[0][2], brackets[0][3]);
        let mut whole = column.clone();
        let expected = percentile_pair_by_selection(&mut whole, lo, hi);
        let (one, three) = ([0, count], [0, 1500, 5000, count]);
        for parts in
            [one.windows(2).map(|w| w[0]..w[1]).collect::<Vec<_>>(), three.windows(2).map(|w| w[0]..w[1]).collect()]
        {
            let folds: Vec<ColumnFold> = parts
                .iter()
                .map(|range| {
                    let mut fold = ColumnFold::new(1, Some(&brackets), lo, hi, range.len());
                    for v in &column[range.clone()] {
                        fold.add(std::slice::from_ref(v));
                    }
                    fold
                })
                .collect();
            let kept: usize = folds.iter().flat_map(|f| &f.inside).map(Vec::len).sum();
            // Measured here: 730 of the sample's 2469 for one part of 10,000, and 1346 for the
            // three parts (whose smaller folds narrow fewer times).
            let bound = if parts.len() == 1 { sample_held / 2 } else { sample_held * 2 / 3 };
            assert!(kept < bound, "{} parts keep {kept} values; the sample's brackets hold {sample_held}", parts.len());
            let mut env =
                Envelope { nominal: vec![0.0], min: vec![0.0], max: vec![0.0], low: vec![0.0], high: vec![0.0] };
            let refs: Vec<&ColumnFold> = folds.iter().collect();
            assert!(finish_columns(&refs, 0..1, &mut env).is_empty(), "{} parts: a bracket missed", parts.len());
            assert_eq!((env.low[0], env.high[0]), expected, "{} parts", parts.len());
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
    fn bracketed_envelopes_equal_full_selection_on_any_data() {
        // Shuffled, sorted, reversed, heavily tied, constant and two-valued columns, with and
        // without non-finite points, at trial counts either side of the bracketing threshold: the
        // envelope must equal plain selection over each whole column bit for bit (it falls back to
        // it where a bracket misses).
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(3);
        for count in [2047, 2048, 5000, 10_000] {
            let shuffled: Vec<f64> = (0..count)
                .map(|_| {
                    let z: f64 = StandardNormal.sample(&mut rng);
                    z
                })
                .collect();
            let mut sorted = shuffled.clone();
            sorted.sort_by(f64::total_cmp);
            let reversed: Vec<f64> = sorted.iter().rev().copied().collect();
            let tied: Vec<f64> = shuffled.iter().map(|v| (v * 3.0).round()).collect();
            let two: Vec<f64> = (0..count).map(|t| if t % 97 == 0 { 2.0 } else { -1.0 }).collect();
            let holes: Vec<f64> =
                shuffled.iter().enumerate().map(|(t, &v)| if t % 5 == 0 { f64::NAN } else { v }).collect();
            let mostly_nan: Vec<f64> = (0..count).map(|t| if t % 300 == 7 { t as f64 } else { f64::NAN }).collect();
            let columns = [shuffled, sorted, reversed, tied, vec![1.5; count], two, holes, mostly_nan];
            let trials: Vec<TrialResponse> = (0..count)
                .map(|t| {
                    let row: Vec<f64> = columns.iter().map(|c| c[t]).collect();
                    TrialResponse::from_values(row.clone(), row.clone(), row)
                })
                .collect();
            let refs: Vec<&TrialResponse> = trials.iter().collect();
            if count >= BRACKET_FROM {
                // The bracketed path itself must hold the shuffled column's percentiles (no
                // fallback), or the comparison below would only test the fallback.
                let stride = count / BRACKET_SAMPLE;
                let brackets = brackets_from(1, 0.05, 0.95, |i| &refs[i * stride].gain_db[..1]);
                let mut fold = ColumnFold::new(1, Some(&brackets), 0.05, 0.95, count);
                for r in &refs {
                    fold.add(&r.gain_db[..1]);
                }
                let mut env =
                    Envelope { nominal: vec![0.0], min: vec![0.0], max: vec![0.0], low: vec![0.0], high: vec![0.0] };
                assert!(fold.finish(&mut env).is_empty(), "count {count}: the bracket missed");
            }
            for (lo, hi) in [(0.05, 0.95), (0.0, 1.0), (0.25, 0.75), (0.001, 0.999)] {
                let start = vec![0.0; columns.len()];
                let mut env = Envelope {
                    nominal: start.clone(),
                    min: start.clone(),
                    max: start.clone(),
                    low: start.clone(),
                    high: start,
                };
                fold_trials(&refs, |r| &r.gain_db, 0..columns.len(), lo, hi, &mut env);
                for (k, column) in columns.iter().enumerate() {
                    let mut finite: Vec<f64> = column.iter().copied().filter(|v| v.is_finite()).collect();
                    let min = finite.iter().copied().fold(0.0, f64::min);
                    let max = finite.iter().copied().fold(0.0, f64::max);
                    let (low, high) = percentile_pair_by_selection(&mut finite, lo, hi);
                    assert_eq!((env.min[k], env.max[k]), (min, max), "count {count}, column {k}");
                    assert_eq!((env.low[k], env.high[k]), (low, high), "count {count}, column {k}, {lo} and {hi}");
                }
            }
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
            let (a, b) = percentile_pair_by_selection(&mut values.clone(), lo, hi);
            assert_eq!(a, percentile(&mut values.clone(), lo));
            assert_eq!(b, percentile(&mut values.clone(), hi));
        }
    }
}
