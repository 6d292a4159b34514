//! Passive loudspeaker crossovers: 2-way and 3-way networks designed as singly terminated LC
//! ladders, with driver compensation, level matching, and the summed response.
//!
//! # What a branch is
//! The amplifier is an ideal voltage source (0 Ω, common practice for a modern solid-state
//! amplifier) and each branch is an LC ladder from it to its driver. In a 2-way the low branch is
//! a low-pass and the high branch a high-pass at the crossover frequency; in a 3-way the middle
//! branch is a band-pass: the product of a high-pass at the lower and a low-pass at the upper
//! crossover frequency, each of the branch's order, so that it matches its neighbours' slopes.
//! Alignments are Butterworth, Linkwitz-Riley (even orders) and Bessel (−3 dB at the crossover
//! frequency, scipy's `norm='mag'`).
//!
//! # Synthesis (one method for every case)
//! The target is H(s) = K·s^k/D(s) with D the product of the prototype poles (scaled to the
//! crossover frequencies) and k the number of transmission zeros at s = 0 (0 for a low-pass, n
//! for a high-pass and for the band-pass). With D = m + n split into even and odd parts, the
//! admittance seen from the load with the source shorted is y22 = m/n for even k and n/m for odd
//! k, since V2/V1 = −y21/(y22 + G) (Darlington, J. Math. Phys. 18, 1939; textbook common
//! practice). y22 is expanded from the load end as a Cauer continued fraction that removes a pole
//! at infinity (a shunt C or a series L) while zeros at infinity remain, else a pole at zero (a
//! shunt L or a series C), one element per ladder position. For the low-pass this is the Cauer I
//! expansion that `ladder` uses for singly terminated ladders. Every branch is checked after
//! synthesis against its target with an independent ABCD cascade and refused if it misses by more
//! than 1e-6 (relative).
//!
//! The element values of the classic tables follow: 1st order L = R/ωc, C = 1/(ωc·R);
//! 2nd-order Butterworth L = √2·R/ωc, C = 1/(√2·ωc·R); LR2 L = 2R/ωc, C = 1/(2ωc·R); LR4
//! low-pass L1 = 0.30011·R/fc, C2 = 0.25321/(R·fc), L3 = 0.15005·R/fc, C4 = 0.05627/(R·fc) and
//! high-pass C1 = 0.08440/(R·fc), L2 = 0.10004·R/fc, C3 = 0.16882/(R·fc), L4 = 0.45016·R/fc
//! (counted from the amplifier; normalised g = 4√2/3, 9/(4√2), 2√2/3, 1/(2√2), worked by hand
//! from y22 = (s⁴ + 4s² + 1)/(2√2·(s³ + s)); the reference tests check the published constants).
//!
//! A band-pass ladder realises the product's poles and zeros exactly, but with its own gain
//! constant, a little above the product's passband level; [`BranchNetwork::gain_offset_db`]
//! reports the difference and the target is scaled to it.
//!
//! # Designing into the driver
//! [`DesignLoad::Nominal`] designs into the nominal resistance; [`DesignLoad::Driver`] designs into
//! the driver's own resistance (Re of a model, the lowest |Z| of a measured curve). Either way the
//! ladder assumes a resistive load. The honest way to make a real driver look resistive is to
//! compensate it: a Zobel network cancels the coil's rise and a series-RLC notch cancels the
//! resonance peak, both exactly for the models of [`crate::driver`]. [`CrossoverResponse`] then
//! reports, per branch, how far the real load moves the response from its target
//! ([`BranchResponse::max_deviation_db`]). No optimisation against the real load is done.
//!
//! # Compensation formulas
//! Both come from the constant-resistance condition: Z1 ∥ Z2 = R exactly when
//! (Z1 − R)(Z2 − R) = R² (from memory; it follows in one line from Z1·Z2 = R·(Z1 + Z2)).
//! - Zobel for Re + sLe: Rz = Re, Cz = Le/Re² (references.md §8 item 8: exact for a lossless Le).
//! - Lossy-coil Zobel for Re + sLe + (sL2 ∥ R2): Rz = Re in series with [Cz ∥ (Cz2 + Rz2)], with
//!   Cz = Le/Re², Cz2 = L2/Re², Rz2 = Re²/R2 (the dual of the coil's reactive part, scaled by Re²).
//! - Resonance notch for Re + (Res ∥ Lces ∥ Cmes): a series Rn + Ln + Cn across the driver with
//!   Rn = Re + Re²/Res = Re·(1 + Qes/Qms), Ln = Re²·Cmes = Re·Qes/(2π·fs),
//!   Cn = Lces/Re² = 1/(2π·fs·Re·Qes). With both a coil and a resonance the two networks are each
//!   exact only for their own part of the impedance.
//!
//! # Level matching
//! For an attenuation a = 10^(−dB/20) into a load R: an L-pad has series Rs = R·(1 − a) and shunt
//! Rp = R·a/(1 − a), so the filter still sees R (common practice; checked by the algebra
//! Rs + Rp∥R = R). A series resistor Rs = R·(1/a − 1) alone changes the load, so the branch is
//! then designed into R + Rs.
//!
//! # Response
//! A branch's electrical response is V(driver)/V(amplifier). Its acoustic response multiplies
//! that by the driver's [`Acoustic`] gain and the polarity (−1 for an inverted driver); the
//! summed response is the complex sum over branches. The impedance the amplifier sees is marked
//! with its minimum, and checked against the rule of thumb that it should not fall below 80 % of
//! the nominal impedance (common practice, not a standard).

use crate::circuit::{Circuit, CircuitBuilder, CircuitError, ElementKind};
use crate::driver::{Acoustic, Coil, DriverError, DriverLoad, DriverModel, Resonance};
use crate::mna::{AcSystem, Detail, Probe, SolveError};
use crate::prototype::{lowpass_prototype, Zpk};
use crate::synthesis::{Alignment, BesselNormalization};
use num_complex::Complex64;
use std::f64::consts::PI;
use std::fmt;

/// The reference of the amplifier source in a crossover's circuit.
pub const AMPLIFIER_REF: &str = "amp";
/// The node the amplifier drives.
pub const AMPLIFIER_NODE: &str = "amp";
/// The highest branch order offered.
pub const MAX_BRANCH_ORDER: usize = 4;
/// The rule-of-thumb floor for the impedance minimum, as a fraction of the nominal impedance
/// (common practice).
pub const MINIMUM_IMPEDANCE_FRACTION: f64 = 0.8;

/// A branch's alignment.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum CrossoverAlignment {
    /// Butterworth: −3 dB at the crossover frequency.
    Butterworth,
    /// Linkwitz-Riley (the square of a Butterworth; orders 2 and 4): −6 dB at the crossover.
    LinkwitzRiley,
    /// Bessel, −3 dB at the crossover frequency.
    Bessel,
}

/// A branch's filter type and frequencies.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum BranchFilter {
    /// Passes below `f_hz`.
    LowPass {
        /// Crossover frequency in Hz.
        f_hz: f64,
    },
    /// Passes above `f_hz`.
    HighPass {
        /// Crossover frequency in Hz.
        f_hz: f64,
    },
    /// Passes between the two: a high-pass at `low_hz` times a low-pass at `high_hz`.
    BandPass {
        /// Lower crossover frequency in Hz.
        low_hz: f64,
        /// Upper crossover frequency in Hz.
        high_hz: f64,
    },
}

/// A driver's connection.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Polarity {
    /// Connected as marked.
    Normal,
    /// Connected reversed: its acoustic output is negated.
    Inverted,
}

/// Which resistance a branch is designed into.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum DesignLoad {
    /// The crossover's nominal resistance.
    Nominal,
    /// The driver's own resistance ([`DriverLoad::design_resistance`]).
    Driver,
}

/// Whether and how to add a Zobel network across the driver.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum ZobelChoice {
    /// No Zobel.
    None,
    /// Rz = Re, Cz = Le/Re², ignoring any L2/R2 of the coil.
    Simple,
    /// The exact network for the driver's coil: the simple one for Re + Le, the lossy-coil
    /// variant for Le + L2 ∥ R2.
    MatchCoil,
}

/// Whether to add a resonance notch across the driver.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum NotchChoice {
    /// No notch.
    None,
    /// A series RLC that flattens the driver model's resonance peak.
    Resonance,
}

/// Level matching between the filter and the driver.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum LevelMatch {
    /// None.
    None,
    /// An L-pad of this attenuation in dB (> 0) that keeps the designed load.
    LPad {
        /// Attenuation in dB.
        attenuation_db: f64,
    },
    /// A series resistor of this attenuation in dB (> 0); the branch is designed into
    /// R + Rs.
    SeriesResistor {
        /// Attenuation in dB.
        attenuation_db: f64,
    },
}

/// One branch of a crossover, from the amplifier to one driver.
#[derive(Debug, Clone, PartialEq)]
pub struct BranchSpec {
    /// A short name, used in part references (e.g. "woofer").
    pub name: String,
    /// The order 1..=4 (each slope, for a band-pass).
    pub order: usize,
    /// The alignment.
    pub alignment: CrossoverAlignment,
    /// The driver's polarity.
    pub polarity: Polarity,
    /// The driver's load.
    pub driver: DriverLoad,
    /// The driver's acoustic side; `None` is an ideal flat driver at the reference sensitivity.
    pub acoustic: Option<Acoustic>,
    /// What the ladder is designed into.
    pub design_load: DesignLoad,
    /// Zobel across the driver.
    pub zobel: ZobelChoice,
    /// Resonance notch across the driver.
    pub notch: NotchChoice,
    /// Level matching.
    pub level: LevelMatch,
}

/// A crossover request: 2 branches and 1 frequency, or 3 branches and 2 frequencies, lowest
/// first.
#[derive(Debug, Clone, PartialEq)]
pub struct CrossoverSpec {
    /// The nominal impedance in Ω (> 0).
    pub nominal_ohm: f64,
    /// Crossover frequencies in Hz, strictly increasing.
    pub crossover_hz: Vec<f64>,
    /// The branches from the lowest band to the highest.
    pub branches: Vec<BranchSpec>,
    /// Winding resistance of the crossover's coils, in Ω per henry (≥ 0; 0 for ideal coils).
    /// Air-core coils of one wire gauge have roughly proportional DCR (common practice).
    pub coil_dcr_ohm_per_henry: f64,
    /// The sensitivity in dB the acoustic response is relative to; `None` takes the lowest of
    /// the drivers' (0 dB if none is given).
    pub reference_sensitivity_db: Option<f64>,
}

/// Where a ladder element sits.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Placement {
    /// In the signal path.
    Series,
    /// From the signal path to the return.
    Shunt,
}

/// A reactive element's kind.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Reactance {
    /// An inductor (value in H).
    Inductor,
    /// A capacitor (value in F).
    Capacitor,
}

/// One element of a branch ladder.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LadderElement {
    /// Series or shunt.
    pub placement: Placement,
    /// Inductor or capacitor.
    pub kind: Reactance,
    /// The value in H or F.
    pub value: f64,
}

/// A synthesized branch ladder.
#[derive(Debug, Clone, PartialEq)]
pub struct BranchNetwork {
    /// The filter.
    pub filter: BranchFilter,
    /// The order.
    pub order: usize,
    /// The alignment.
    pub alignment: CrossoverAlignment,
    /// The load resistance it is designed into, Ω.
    pub load_ohm: f64,
    /// The elements from the amplifier to the load.
    pub elements: Vec<LadderElement>,
    /// The target V(load)/V(amplifier), in rad/s, with the ladder's own gain constant.
    pub target: Zpk,
    /// The ladder's passband gain over the unity-passband target, dB: 0 for a low-pass and a
    /// high-pass; for a band-pass the LC ladder with the product's poles and zeros sits this much
    /// above the product HP(f_low)·LP(f_high) (e.g. +0.83 dB for 1st order at 300 Hz and 3 kHz,
    /// where the product peaks at f_high/(f_low + f_high); +2.36 dB for LR4 at 300 Hz and
    /// 3 kHz). An L-pad of this attenuation ([`LevelMatch::LPad`]) keeps the load and so brings
    /// the branch down to the product exactly.
    pub gain_offset_db: f64,
}

/// A Zobel network for a driver.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Zobel {
    /// Series resistance Rz in Ω.
    pub rz: f64,
    /// Capacitance Cz in F.
    pub cz: f64,
    /// For the lossy-coil variant: the branch (Cz2 in F, Rz2 in Ω) in parallel with Cz.
    pub lossy: Option<(f64, f64)>,
}

/// A series-RLC notch for a driver's resonance.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Notch {
    /// Resistance in Ω.
    pub r: f64,
    /// Inductance in H.
    pub l: f64,
    /// Capacitance in F.
    pub c: f64,
}

/// An L-pad.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LPad {
    /// The series resistor in Ω.
    pub series_ohm: f64,
    /// The shunt resistor across the driver in Ω.
    pub shunt_ohm: f64,
}

/// A designed branch inside a [`Crossover`].
#[derive(Debug, Clone, PartialEq)]
pub struct BranchDesign {
    /// The branch's name.
    pub name: String,
    /// The ladder.
    pub network: BranchNetwork,
    /// The Zobel added, if any.
    pub zobel: Option<Zobel>,
    /// The notch added, if any.
    pub notch: Option<Notch>,
    /// The L-pad added, if any.
    pub l_pad: Option<LPad>,
    /// The series level resistor added, if any (Ω).
    pub series_resistor: Option<f64>,
    /// The level factor a = 10^(−dB/20) of the level matching (1 without).
    pub level: f64,
    /// The node at the driver's hot terminal.
    pub driver_node: String,
    /// The prefix of the driver model's parts (`{name}.drv`).
    pub driver_prefix: String,
}

/// A designed crossover: its circuit and what each branch holds.
#[derive(Debug, Clone, PartialEq)]
pub struct Crossover {
    /// The request.
    pub spec: CrossoverSpec,
    /// The whole circuit: the amplifier ([`AMPLIFIER_REF`], 1 V) and every branch with its driver.
    pub circuit: Circuit,
    /// The branches, in the spec's order.
    pub branches: Vec<BranchDesign>,
}

/// The responses at one frequency.
#[derive(Debug, Clone, PartialEq)]
pub struct CrossoverPoint {
    /// Frequency in Hz.
    pub f_hz: f64,
    /// Per branch: V(driver)/V(amplifier).
    pub electrical: Vec<Complex64>,
    /// Per branch: the acoustic contribution (electrical × acoustic gain × polarity).
    pub acoustic: Vec<Complex64>,
    /// The complex sum of the acoustic contributions.
    pub sum: Complex64,
    /// The impedance the amplifier sees, in Ω.
    pub impedance: Complex64,
}

/// Per-branch summary of a response sweep.
#[derive(Debug, Clone, PartialEq)]
pub struct BranchResponse {
    /// The branch's name.
    pub name: String,
    /// The largest |dB difference| between the electrical response and its target (times the
    /// level factor), over the swept points where the target is within 10 dB of its passband
    /// (our choice: the stopband far below matters little); `None` if no such point was solved.
    pub max_deviation_db: Option<f64>,
    /// Where that largest difference occurs, Hz.
    pub max_deviation_hz: Option<f64>,
}

/// The lowest impedance the amplifier sees over a sweep, and the rule-of-thumb check.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ImpedanceMinimum {
    /// Its frequency in Hz.
    pub f_hz: f64,
    /// |Z| there in Ω.
    pub magnitude_ohm: f64,
    /// |Z| / nominal.
    pub fraction_of_nominal: f64,
    /// Whether it is below [`MINIMUM_IMPEDANCE_FRACTION`] of nominal (a rule of thumb of common
    /// practice, not a standard).
    pub below_rule_of_thumb: bool,
}

/// A response sweep of a crossover.
#[derive(Debug, Clone, PartialEq)]
pub struct CrossoverResponse {
    /// One entry per frequency asked for; a point that could not be solved keeps its error.
    pub points: Vec<Result<CrossoverPoint, SolveError>>,
    /// Per-branch deviation from target.
    pub branches: Vec<BranchResponse>,
    /// The impedance minimum over the solved points; `None` if none was solved.
    pub minimum: Option<ImpedanceMinimum>,
}

/// The passband loss that coil winding resistance causes in one branch.
#[derive(Debug, Clone, PartialEq)]
pub struct CoilLoss {
    /// The branch's name.
    pub name: String,
    /// The passband reference frequency used, Hz: fc/10 for a low-pass, 10·fc for a high-pass,
    /// the geometric centre for a band-pass (our choice).
    pub f_hz: f64,
    /// 20·log10 of |H| with the coils' DCR over |H| with ideal coils, dB (≤ 0 is a loss).
    pub loss_db: f64,
}

/// Why a crossover could not be designed.
#[derive(Debug, Clone, PartialEq)]
pub enum CrossoverError {
    /// The number of branches does not fit the number of crossover frequencies.
    BadCount {
        /// Branches given.
        branches: usize,
        /// Crossover frequencies given.
        frequencies: usize,
    },
    /// A crossover frequency is not finite and > 0.
    BadFrequency {
        /// The value in Hz.
        f_hz: f64,
    },
    /// Crossover frequencies are not strictly increasing.
    OutOfOrder {
        /// Position of the offending frequency (from 1).
        position: usize,
        /// Its value in Hz.
        f_hz: f64,
        /// The frequency before it in Hz.
        previous_hz: f64,
    },
    /// A value of the request is out of range.
    BadValue {
        /// What, e.g. "nominal impedance".
        what: String,
        /// The value.
        value: f64,
        /// What is accepted.
        allowed: &'static str,
    },
    /// A branch order is not offered.
    BadOrder {
        /// The branch.
        branch: String,
        /// The order asked for.
        order: usize,
        /// Why.
        why: &'static str,
    },
    /// A compensation needs a driver model that has the part it compensates.
    NeedsModel {
        /// The branch.
        branch: String,
        /// What was asked, e.g. "a Zobel".
        what: &'static str,
        /// What the model lacks.
        lacks: &'static str,
    },
    /// The driver's data is unusable.
    Driver(DriverError),
    /// The circuit could not be built.
    Circuit(CircuitError),
    /// The ladder could not be synthesized or missed its target.
    Synthesis {
        /// The branch.
        branch: String,
        /// What went wrong.
        detail: String,
    },
}

impl fmt::Display for CrossoverError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::BadCount { branches, frequencies } => write!(
                f,
                "{branches} branches with {frequencies} crossover frequencies; give 2 branches and 1 frequency (2-way) or 3 branches and 2 frequencies (3-way)"
            ),
            Self::BadFrequency { f_hz } => {
                write!(f, "crossover frequency {f_hz} Hz is not usable; give a finite frequency > 0")
            }
            Self::OutOfOrder { position, f_hz, previous_hz } => write!(
                f,
                "crossover frequency {position} ({f_hz} Hz) is not above the one before it ({previous_hz} Hz); list crossover frequencies from low to high"
            ),
            Self::BadValue { what, value, allowed } => write!(f, "{what} is {value}; it must be {allowed}"),
            Self::BadOrder { branch, order, why } => {
                write!(f, "branch {branch} has order {order}; {why}")
            }
            Self::NeedsModel { branch, what, lacks } if branch.is_empty() => {
                write!(f, "{what} needs a driver model with {lacks}; give one or leave {what} out")
            }
            Self::NeedsModel { branch, what, lacks } => write!(
                f,
                "branch {branch} asks for {what}, but its driver has no {lacks}; give a driver model with it or leave {what} out"
            ),
            Self::Driver(error) => write!(f, "{error}"),
            Self::Circuit(error) => write!(f, "{error}"),
            Self::Synthesis { branch, detail } => {
                write!(f, "branch {branch} could not be synthesized: {detail}; try another order or alignment")
            }
        }
    }
}

impl std::error::Error for CrossoverError {}

impl From<DriverError> for CrossoverError {
    fn from(error: DriverError) -> Self {
        CrossoverError::Driver(error)
    }
}

impl From<CircuitError> for CrossoverError {
    fn from(error: CircuitError) -> Self {
        CrossoverError::Circuit(error)
    }
}

/// Designs one branch ladder into a resistive load `load_ohm`.
///
/// # Errors
/// [`CrossoverError::BadOrder`] for an order outside 1..=4 or an odd Linkwitz-Riley order,
/// [`CrossoverError::BadFrequency`] / [`CrossoverError::OutOfOrder`] for unusable frequencies,
/// [`CrossoverError::BadValue`] for a load that is not finite and > 0, and
/// [`CrossoverError::Synthesis`] if the ladder misses its target (not expected).
pub fn design_branch(
    filter: BranchFilter,
    order: usize,
    alignment: CrossoverAlignment,
    load_ohm: f64,
) -> Result<BranchNetwork, CrossoverError> {
    design_branch_named("branch", filter, order, alignment, load_ohm)
}

/// The Zobel network that makes `model`'s coil look like Re (see the module doc).
///
/// # Errors
/// [`CrossoverError::NeedsModel`] for a model without inductance.
pub fn zobel(model: &DriverModel, choice: ZobelChoice) -> Result<Option<Zobel>, CrossoverError> {
    let re = model.re;
    let lacks =
        || CrossoverError::NeedsModel { branch: String::new(), what: "a Zobel", lacks: "voice-coil inductance" };
    Ok(match (choice, model.coil) {
        (ZobelChoice::None, _) => None,
        (_, Coil::Resistive) => return Err(lacks()),
        (_, Coil::Inductive { le }) | (ZobelChoice::Simple, Coil::Lossy { le, .. }) => {
            Some(Zobel { rz: re, cz: le / (re * re), lossy: None })
        }
        (ZobelChoice::MatchCoil, Coil::Lossy { le, l2, r2 }) => {
            Some(Zobel { rz: re, cz: le / (re * re), lossy: Some((l2 / (re * re), re * re / r2)) })
        }
    })
}

/// The series-RLC notch that flattens the resonance of Re + (Res ∥ Lces ∥ Cmes) (module doc).
pub fn resonance_notch(re: f64, resonance: &Resonance) -> Notch {
    let (res, lces, cmes) = resonance.elements(re);
    Notch { r: re + re * re / res, l: re * re * cmes, c: lces / (re * re) }
}

/// The L-pad for `attenuation_db` (> 0) into a resistive `load_ohm`, keeping the load seen at
/// its input equal to `load_ohm`.
///
/// # Errors
/// [`CrossoverError::BadValue`] for an attenuation that is not finite and > 0 or a bad load.
pub fn l_pad(load_ohm: f64, attenuation_db: f64) -> Result<LPad, CrossoverError> {
    check_positive("L-pad load", load_ohm)?;
    check_positive("attenuation in dB", attenuation_db)?;
    let a = 10f64.powf(-attenuation_db / 20.0);
    Ok(LPad { series_ohm: load_ohm * (1.0 - a), shunt_ohm: load_ohm * a / (1.0 - a) })
}

/// The series resistor for `attenuation_db` (> 0) into a resistive `load_ohm`.
///
/// # Errors
/// As [`l_pad`].
pub fn series_level_resistor(load_ohm: f64, attenuation_db: f64) -> Result<f64, CrossoverError> {
    check_positive("series resistor load", load_ohm)?;
    check_positive("attenuation in dB", attenuation_db)?;
    let a = 10f64.powf(-attenuation_db / 20.0);
    Ok(load_ohm * (1.0 / a - 1.0))
}

/// Designs a 2-way or 3-way crossover (see the module doc).
///
/// # Errors
/// [`CrossoverError`] for a bad count, frequency, order, value or compensation.
pub fn design_crossover(spec: &CrossoverSpec) -> Result<Crossover, CrossoverError> {
    check_positive("nominal impedance", spec.nominal_ohm)?;
    let dcr = spec.coil_dcr_ohm_per_henry;
    if !(dcr.is_finite() && dcr >= 0.0) {
        return Err(CrossoverError::BadValue {
            what: "coil resistance per henry".to_string(),
            value: dcr,
            allowed: "a finite value ≥ 0",
        });
    }
    let n = spec.branches.len();
    if !matches!((n, spec.crossover_hz.len()), (2, 1) | (3, 2)) {
        return Err(CrossoverError::BadCount { branches: n, frequencies: spec.crossover_hz.len() });
    }
    check_frequencies(&spec.crossover_hz)?;
    if let Some(reference) = spec.reference_sensitivity_db {
        if !reference.is_finite() {
            return Err(CrossoverError::BadValue {
                what: "reference sensitivity in dB".to_string(),
                value: reference,
                allowed: "a finite number",
            });
        }
    }
    let mut builder = CircuitBuilder::new();
    builder.voltage_source(AMPLIFIER_REF, AMPLIFIER_NODE, "0", 1.0, 0.0);
    let mut branches = Vec::new();
    for (index, branch) in spec.branches.iter().enumerate() {
        let filter = if index == 0 {
            BranchFilter::LowPass { f_hz: spec.crossover_hz[0] }
        } else if index + 1 == n {
            BranchFilter::HighPass { f_hz: spec.crossover_hz[index - 1] }
        } else {
            BranchFilter::BandPass { low_hz: spec.crossover_hz[index - 1], high_hz: spec.crossover_hz[index] }
        };
        branches.push(add_branch(&mut builder, branch, filter, spec)?);
    }
    let circuit = builder.build()?;
    Ok(Crossover { spec: spec.clone(), circuit, branches })
}

impl BranchFilter {
    /// The passband reference frequency used for losses: fc/10, 10·fc or the geometric centre.
    pub fn passband_hz(&self) -> f64 {
        match *self {
            BranchFilter::LowPass { f_hz } => f_hz / 10.0,
            BranchFilter::HighPass { f_hz } => f_hz * 10.0,
            BranchFilter::BandPass { low_hz, high_hz } => (low_hz * high_hz).sqrt(),
        }
    }
}

impl BranchNetwork {
    /// The ladder's V(load)/V(source) at `f_hz` by an ABCD cascade into `load_ohm` (independent of
    /// MNA).
    pub fn response_at(&self, f_hz: f64) -> Complex64 {
        ladder_response(&self.elements, self.load_ohm, Complex64::new(0.0, 2.0 * PI * f_hz))
    }

    /// The target at `f_hz`.
    pub fn target_at(&self, f_hz: f64) -> Complex64 {
        self.target.eval(Complex64::new(0.0, 2.0 * PI * f_hz))
    }
}

impl Crossover {
    /// The reference sensitivity the acoustic responses are relative to, dB.
    pub fn reference_sensitivity_db(&self) -> f64 {
        self.spec.reference_sensitivity_db.unwrap_or_else(|| {
            let lowest = self
                .spec
                .branches
                .iter()
                .filter_map(|b| b.acoustic.as_ref().map(|a| a.sensitivity_db))
                .fold(f64::INFINITY, f64::min);
            if lowest.is_finite() {
                lowest
            } else {
                0.0
            }
        })
    }

    /// Sweeps the crossover at `f_hz` (any order).
    pub fn response(&self, f_hz: &[f64]) -> CrossoverResponse {
        let probe = Probe {
            stimulus: self.circuit.element_index(AMPLIFIER_REF).expect("the crossover has its amplifier"),
            output: (self.node(&self.branches[0].driver_node), crate::circuit::Node::GROUND),
        };
        let mut system = AcSystem::new(&self.circuit, &probe);
        let reference_db = self.reference_sensitivity_db();
        let driver_nodes: Vec<_> = self.branches.iter().map(|b| self.node(&b.driver_node)).collect();
        let points: Vec<Result<CrossoverPoint, SolveError>> = f_hz
            .iter()
            .map(|&f| {
                let solution = system.solve_at(f, Detail::Full)?;
                let electrical: Vec<Complex64> =
                    driver_nodes.iter().map(|node| solution.node_voltages[node.index()]).collect();
                let mut acoustic = Vec::with_capacity(electrical.len());
                for (branch, h) in self.spec.branches.iter().zip(&electrical) {
                    let gain = match &branch.acoustic {
                        None => Some(Complex64::new(1.0, 0.0)),
                        Some(a) => a.gain_at(f, reference_db),
                    };
                    let Some(gain) = gain else {
                        let (low_hz, high_hz) = match &branch.acoustic.as_ref().map(|a| &a.response) {
                            Some(crate::driver::AcousticResponse::Measured(curve)) => curve.range_hz(),
                            _ => (f, f),
                        };
                        return Err(SolveError::OutsideCurve { f_hz: f, low_hz, high_hz });
                    };
                    let sign = if branch.polarity == Polarity::Inverted { -1.0 } else { 1.0 };
                    acoustic.push(h * gain * sign);
                }
                let sum = acoustic.iter().sum();
                let impedance = solution.input_impedance.ok_or(SolveError::Singular { f_hz: f })?;
                Ok(CrossoverPoint { f_hz: f, electrical, acoustic, sum, impedance })
            })
            .collect();
        let branches = self
            .branches
            .iter()
            .enumerate()
            .map(|(k, branch)| {
                let mut worst: Option<(f64, f64)> = None;
                for point in points.iter().flatten() {
                    let target = branch.network.target_at(point.f_hz) * branch.level;
                    let passband_level = branch.level;
                    if target.norm() < passband_level * 10f64.powf(-0.5) {
                        continue;
                    }
                    let deviation = 20.0 * (point.electrical[k].norm() / target.norm()).log10();
                    if worst.is_none_or(|(d, _)| deviation.abs() > d) {
                        worst = Some((deviation.abs(), point.f_hz));
                    }
                }
                BranchResponse {
                    name: branch.name.clone(),
                    max_deviation_db: worst.map(|w| w.0),
                    max_deviation_hz: worst.map(|w| w.1),
                }
            })
            .collect();
        let minimum =
            points.iter().flatten().min_by(|a, b| a.impedance.norm().total_cmp(&b.impedance.norm())).map(|p| {
                let fraction = p.impedance.norm() / self.spec.nominal_ohm;
                ImpedanceMinimum {
                    f_hz: p.f_hz,
                    magnitude_ohm: p.impedance.norm(),
                    fraction_of_nominal: fraction,
                    below_rule_of_thumb: fraction < MINIMUM_IMPEDANCE_FRACTION,
                }
            });
        CrossoverResponse { points, branches, minimum }
    }

    /// The passband loss each branch suffers from its coils' winding resistance
    /// ([`CrossoverSpec::coil_dcr_ohm_per_henry`]), against ideal coils.
    ///
    /// # Errors
    /// [`SolveError`] if a reference frequency cannot be solved (e.g. outside a measured curve).
    pub fn coil_losses(&self) -> Result<Vec<CoilLoss>, SolveError> {
        let mut ideal = self.circuit.clone();
        for (index, element) in self.circuit.elements().iter().enumerate() {
            if let ElementKind::Inductor { inductance, dcr } = element.kind {
                if dcr > 0.0 {
                    ideal = ideal
                        .with_kind(index, ElementKind::Inductor { inductance, dcr: 0.0 })
                        .expect("an inductor without DCR is valid");
                }
            }
        }
        let stimulus = self.circuit.element_index(AMPLIFIER_REF).expect("the crossover has its amplifier");
        let mut losses = Vec::new();
        for branch in &self.branches {
            let f = branch.network.filter.passband_hz();
            let probe = Probe { stimulus, output: (self.node(&branch.driver_node), crate::circuit::Node::GROUND) };
            let real = AcSystem::new(&self.circuit, &probe).solve_at(f, Detail::Transfer)?.transfer;
            let without = AcSystem::new(&ideal, &probe).solve_at(f, Detail::Transfer)?.transfer;
            losses.push(CoilLoss {
                name: branch.name.clone(),
                f_hz: f,
                loss_db: 20.0 * (real.norm() / without.norm()).log10(),
            });
        }
        Ok(losses)
    }

    /// Whether `reference` is a part of a driver model (not a crossover part).
    pub fn is_driver_part(&self, reference: &str) -> bool {
        self.branches.iter().any(|b| DriverLoad::owns(&b.driver_prefix, reference))
    }

    fn node(&self, name: &str) -> crate::circuit::Node {
        self.circuit.node(name).expect("the crossover's nodes exist")
    }
}

fn add_branch(
    builder: &mut CircuitBuilder,
    branch: &BranchSpec,
    filter: BranchFilter,
    spec: &CrossoverSpec,
) -> Result<BranchDesign, CrossoverError> {
    let name = &branch.name;
    if name.trim().is_empty() || name.contains(':') {
        return Err(CrossoverError::BadValue {
            what: format!("branch name {name:?}"),
            value: 0.0,
            allowed: "a non-empty name without ':'",
        });
    }
    if let DriverLoad::Resistor(r) = branch.driver {
        check_positive("driver resistance", r)?;
    }
    if let DriverLoad::Model(model) = &branch.driver {
        DriverModel::new(model.re, model.coil, model.resonance)?;
    }
    if let Some(acoustic) = &branch.acoustic {
        for (what, value) in [("sensitivity in dB", acoustic.sensitivity_db), ("acoustic delay in s", acoustic.delay_s)]
        {
            if !value.is_finite() {
                return Err(CrossoverError::BadValue {
                    what: format!("branch {name} {what}"),
                    value,
                    allowed: "a finite number",
                });
            }
        }
    }
    let driver_r = match branch.design_load {
        DesignLoad::Nominal => spec.nominal_ohm,
        DesignLoad::Driver => branch.driver.design_resistance(),
    };
    let (l_pad_parts, series_resistor, level, design_r) = match branch.level {
        LevelMatch::None => (None, None, 1.0, driver_r),
        LevelMatch::LPad { attenuation_db } => {
            let pad = l_pad(driver_r, attenuation_db)?;
            (Some(pad), None, 10f64.powf(-attenuation_db / 20.0), driver_r)
        }
        LevelMatch::SeriesResistor { attenuation_db } => {
            let rs = series_level_resistor(driver_r, attenuation_db)?;
            (None, Some(rs), 10f64.powf(-attenuation_db / 20.0), driver_r + rs)
        }
    };
    let network = design_branch_named(name, filter, branch.order, branch.alignment, design_r)?;
    let model = match &branch.driver {
        DriverLoad::Model(model) => Some(*model),
        _ => None,
    };
    let needs = |what, lacks| CrossoverError::NeedsModel { branch: name.clone(), what, lacks };
    let zobel = match (branch.zobel, model) {
        (ZobelChoice::None, _) => None,
        (_, None) => return Err(needs("a Zobel", "model with voice-coil inductance")),
        (choice, Some(model)) => zobel(&model, choice).map_err(|_| needs("a Zobel", "voice-coil inductance"))?,
    };
    let notch = match (branch.notch, model) {
        (NotchChoice::None, _) => None,
        (NotchChoice::Resonance, Some(DriverModel { re, resonance: Some(resonance), .. })) => {
            Some(resonance_notch(re, &resonance))
        }
        (NotchChoice::Resonance, _) => return Err(needs("a resonance notch", "resonance (fs, Qms, Qes)")),
    };

    // The ladder, from the amplifier node.
    let dcr_per_henry = spec.coil_dcr_ohm_per_henry;
    let mut node = AMPLIFIER_NODE.to_string();
    let (mut n_l, mut n_c, mut n_node) = (0, 0, 0);
    let fresh = |n_node: &mut usize| {
        *n_node += 1;
        format!("{name}:{n_node}")
    };
    for element in &network.elements {
        let (reference, kind) = match element.kind {
            Reactance::Inductor => {
                n_l += 1;
                (
                    format!("{name}.L{n_l}"),
                    ElementKind::Inductor { inductance: element.value, dcr: dcr_per_henry * element.value },
                )
            }
            Reactance::Capacitor => {
                n_c += 1;
                (format!("{name}.C{n_c}"), ElementKind::Capacitor { capacitance: element.value, esr: 0.0 })
            }
        };
        match element.placement {
            Placement::Series => {
                let next = fresh(&mut n_node);
                builder.add(&reference, kind, &node, &next);
                node = next;
            }
            Placement::Shunt => {
                builder.add(&reference, kind, &node, "0");
            }
        }
    }
    if let Some(rs) = series_resistor {
        let next = fresh(&mut n_node);
        builder.resistor(&format!("{name}.Rs"), &node, &next, rs);
        node = next;
    }
    if let Some(pad) = l_pad_parts {
        let next = fresh(&mut n_node);
        builder.resistor(&format!("{name}.Rs"), &node, &next, pad.series_ohm);
        builder.resistor(&format!("{name}.Rp"), &next, "0", pad.shunt_ohm);
        node = next;
    }
    // The driver and its compensation hang on the ladder's (or pad's) last node.
    if node == AMPLIFIER_NODE {
        return Err(CrossoverError::Synthesis {
            branch: name.clone(),
            detail: "the ladder has no series element".into(),
        });
    }
    let driver_node_actual = node.clone();
    let prefix = format!("{name}.drv");
    branch.driver.add_to(builder, &prefix, &driver_node_actual, "0");
    if let Some(z) = zobel {
        let mid = format!("{name}:z");
        builder.resistor(&format!("{name}.Rz"), &driver_node_actual, &mid, z.rz);
        builder.capacitor(&format!("{name}.Cz"), &mid, "0", z.cz);
        if let Some((cz2, rz2)) = z.lossy {
            let mid2 = format!("{name}:z2");
            builder.capacitor(&format!("{name}.Cz2"), &mid, &mid2, cz2);
            builder.resistor(&format!("{name}.Rz2"), &mid2, "0", rz2);
        }
    }
    if let Some(notch) = notch {
        let (m1, m2) = (format!("{name}:n1"), format!("{name}:n2"));
        builder.resistor(&format!("{name}.Rn"), &driver_node_actual, &m1, notch.r);
        builder.inductor(&format!("{name}.Ln"), &m1, &m2, notch.l);
        builder.capacitor(&format!("{name}.Cn"), &m2, "0", notch.c);
    }
    Ok(BranchDesign {
        name: name.clone(),
        network,
        zobel,
        notch,
        l_pad: l_pad_parts,
        series_resistor,
        level,
        driver_node: driver_node_actual,
        driver_prefix: prefix,
    })
}

fn design_branch_named(
    name: &str,
    filter: BranchFilter,
    order: usize,
    alignment: CrossoverAlignment,
    load_ohm: f64,
) -> Result<BranchNetwork, CrossoverError> {
    check_positive("load resistance", load_ohm)?;
    let bad_order = |why| CrossoverError::BadOrder { branch: name.to_string(), order, why };
    if !(1..=MAX_BRANCH_ORDER).contains(&order) {
        return Err(bad_order("crossover branches have order 1 to 4"));
    }
    if alignment == CrossoverAlignment::LinkwitzRiley && order % 2 == 1 {
        return Err(bad_order("Linkwitz-Riley needs an even order (2 or 4)"));
    }
    let prototype_alignment = match alignment {
        CrossoverAlignment::Butterworth => Alignment::Butterworth,
        CrossoverAlignment::LinkwitzRiley => Alignment::LinkwitzRiley,
        CrossoverAlignment::Bessel => Alignment::Bessel { normalization: BesselNormalization::Magnitude },
    };
    let prototype = lowpass_prototype(prototype_alignment, order)
        .map_err(|e| CrossoverError::Synthesis { branch: name.to_string(), detail: e.to_string() })?;
    // Poles (rad/s), zeros at 0 and the numerator constant of the target.
    let (poles, n_zero, omega_ref): (Vec<Complex64>, usize, f64) = match filter {
        BranchFilter::LowPass { f_hz } => {
            check_frequencies(&[f_hz])?;
            let w = 2.0 * PI * f_hz;
            (prototype.poles.iter().map(|p| p * w).collect(), 0, w)
        }
        BranchFilter::HighPass { f_hz } => {
            check_frequencies(&[f_hz])?;
            let w = 2.0 * PI * f_hz;
            (prototype.poles.iter().map(|p| w / p).collect(), order, w)
        }
        BranchFilter::BandPass { low_hz, high_hz } => {
            check_frequencies(&[low_hz, high_hz])?;
            let (w1, w2) = (2.0 * PI * low_hz, 2.0 * PI * high_hz);
            let mut poles: Vec<Complex64> = prototype.poles.iter().map(|p| w1 / p).collect();
            poles.extend(prototype.poles.iter().map(|p| p * w2));
            (poles, order, (w1 * w2).sqrt())
        }
    };
    let n_total = poles.len();
    // Target: unity passband. Low-pass part: Π(−p_lp); high-pass part: leading coefficient 1.
    let lowpass_poles: Vec<Complex64> = match filter {
        BranchFilter::LowPass { .. } => poles.clone(),
        BranchFilter::HighPass { .. } => Vec::new(),
        BranchFilter::BandPass { .. } => poles[order..].to_vec(),
    };
    let gain = lowpass_poles.iter().map(|p| -p).product::<Complex64>().re;
    let target = Zpk { zeros: vec![Complex64::new(0.0, 0.0); n_zero], poles: poles.clone(), gain };
    // The normalised denominator (ω_ref = 1, R = 1), ascending coefficients.
    let normalised: Vec<Complex64> = poles.iter().map(|p| p / omega_ref).collect();
    let denominator = real_polynomial(&normalised);
    let even: Vec<f64> = denominator.iter().enumerate().map(|(k, &c)| if k % 2 == 0 { c } else { 0.0 }).collect();
    let odd: Vec<f64> = denominator.iter().enumerate().map(|(k, &c)| if k % 2 == 1 { c } else { 0.0 }).collect();
    let (p, q) = if n_zero % 2 == 0 { (even, odd) } else { (odd, even) };
    let from_load = cauer_mixed(p, q, n_total - n_zero, n_zero)
        .map_err(|detail| CrossoverError::Synthesis { branch: name.to_string(), detail })?;
    let elements: Vec<LadderElement> = from_load
        .into_iter()
        .rev()
        .map(|(placement, kind, g)| {
            let value = match kind {
                Reactance::Inductor => g * load_ohm / omega_ref,
                Reactance::Capacitor => g / (load_ohm * omega_ref),
            };
            LadderElement { placement, kind, value }
        })
        .collect();
    let mut network = BranchNetwork { filter, order, alignment, load_ohm, elements, target, gain_offset_db: 0.0 };
    // A ladder with the target's poles and zeros has its own gain constant: exactly the target's
    // for a low-pass (H(0) = 1) and a high-pass (H(∞) = 1), and a little above the product of the
    // two for a band-pass. Read it at the centre, then check the shape everywhere.
    let f_ref = omega_ref / (2.0 * PI);
    let ratio = network.response_at(f_ref) / network.target_at(f_ref);
    if !(ratio.re > 0.0 && ratio.im.abs() <= 1e-9 * ratio.re) {
        return Err(CrossoverError::Synthesis {
            branch: name.to_string(),
            detail: format!("the ladder's gain constant came out as {ratio}, not a positive number"),
        });
    }
    network.target.gain *= ratio.re;
    network.gain_offset_db = 20.0 * ratio.re.log10();
    // Independent check of the synthesis by an ABCD cascade, over two decades either side.
    for k in -20..=20 {
        let f = omega_ref / (2.0 * PI) * 10f64.powf(k as f64 / 10.0);
        let (h, t) = (network.response_at(f), network.target_at(f));
        if (h - t).norm() > 1e-6 * t.norm().max(1e-3) {
            return Err(CrossoverError::Synthesis {
                branch: name.to_string(),
                detail: format!("the ladder misses its target at {f:.4} Hz ({h} vs {t})"),
            });
        }
    }
    Ok(network)
}

/// Cauer expansion of the LC immittance P/Q (admittance first) into one element per position,
/// from the load: (placement, kind, normalised value).
fn cauer_mixed(
    mut p: Vec<f64>,
    mut q: Vec<f64>,
    mut zeros_at_infinity: usize,
    mut zeros_at_zero: usize,
) -> Result<Vec<(Placement, Reactance, f64)>, String> {
    let mut out = Vec::new();
    let mut admittance = true;
    trim(&mut p);
    trim(&mut q);
    for _ in 0..4 * (zeros_at_infinity + zeros_at_zero + 2) {
        let placement = if admittance { Placement::Shunt } else { Placement::Series };
        let scale = p.iter().chain(&q).fold(0.0f64, |m, c| m.max(c.abs()));
        let degree = |v: &Vec<f64>| v.len().saturating_sub(1);
        if zeros_at_infinity > 0 && !p.is_empty() && !q.is_empty() && degree(&p) == degree(&q) + 1 {
            // Pole at infinity: c·s.
            let c = p[p.len() - 1] / q[q.len() - 1];
            let before = norm(&p);
            for (k, &qk) in q.iter().enumerate() {
                p[k + 1] -= c * qk;
            }
            p.pop();
            let kind = if admittance { Reactance::Capacitor } else { Reactance::Inductor };
            out.push((placement, kind, c));
            zeros_at_infinity -= 1;
            if settle(&mut p, before) {
                return finish(out, admittance, zeros_at_infinity + zeros_at_zero);
            }
        } else if zeros_at_zero > 0 && !q.is_empty() && q[0] == 0.0 && !p.is_empty() && p[0] != 0.0 {
            // Pole at zero: c/s.
            q.remove(0);
            let c = p[0] / q[0];
            let before = norm(&p);
            for (k, &qk) in q.iter().enumerate() {
                if k < p.len() {
                    p[k] -= c * qk;
                }
            }
            p[0] = 0.0;
            p.remove(0);
            let kind = if admittance { Reactance::Inductor } else { Reactance::Capacitor };
            out.push((placement, kind, 1.0 / c));
            zeros_at_zero -= 1;
            if settle(&mut p, before) {
                return finish(out, admittance, zeros_at_infinity + zeros_at_zero);
            }
        } else if scale == 0.0 {
            return Err("the immittance vanished".into());
        }
        // Next position.
        std::mem::swap(&mut p, &mut q);
        admittance = !admittance;
    }
    Err("the continued fraction did not terminate".into())
}

fn finish(
    out: Vec<(Placement, Reactance, f64)>,
    admittance: bool,
    remaining: usize,
) -> Result<Vec<(Placement, Reactance, f64)>, String> {
    if admittance || remaining > 0 {
        return Err("the expansion ended before every transmission zero was placed".into());
    }
    if out.iter().any(|e| !(e.2.is_finite() && e.2 > 0.0)) {
        return Err("an element came out non-positive".into());
    }
    Ok(out)
}

fn norm(v: &[f64]) -> f64 {
    v.iter().map(|c| c * c).sum::<f64>().sqrt()
}

/// Drops coefficients that cancelled to rounding; true if nothing is left.
fn settle(p: &mut Vec<f64>, before: f64) -> bool {
    for c in p.iter_mut() {
        if c.abs() <= 1e-10 * before {
            *c = 0.0;
        }
    }
    trim(p);
    p.is_empty()
}

fn trim(v: &mut Vec<f64>) {
    while v.last() == Some(&0.0) {
        v.pop();
    }
}

/// Π(s − r) as real ascending coefficients (the roots come in conjugate pairs).
fn real_polynomial(roots: &[Complex64]) -> Vec<f64> {
    let mut c = vec![Complex64::new(1.0, 0.0)];
    for &r in roots {
        let mut next = vec![Complex64::new(0.0, 0.0); c.len() + 1];
        for (k, &ck) in c.iter().enumerate() {
            next[k + 1] += ck;
            next[k] -= ck * r;
        }
        c = next;
    }
    c.iter().map(|z| z.re).collect()
}

/// V(load)/V(source) of a ladder from an ideal source into `load_ohm`, by ABCD matrices.
fn ladder_response(elements: &[LadderElement], load_ohm: f64, s: Complex64) -> Complex64 {
    let one = Complex64::new(1.0, 0.0);
    let zero = Complex64::new(0.0, 0.0);
    let (mut a, mut b, mut c, mut d) = (one, zero, zero, one);
    for e in elements {
        let z = match e.kind {
            Reactance::Inductor => s * e.value,
            Reactance::Capacitor => 1.0 / (s * e.value),
        };
        let (ea, eb, ec, ed) = match e.placement {
            Placement::Series => (one, z, zero, one),
            Placement::Shunt => (one, zero, 1.0 / z, one),
        };
        (a, b, c, d) = (a * ea + b * ec, a * eb + b * ed, c * ea + d * ec, c * eb + d * ed);
    }
    // V1 = A·V2 + B·I2 with I2 = V2/R.
    1.0 / (a + b / load_ohm)
}

fn check_positive(what: &str, value: f64) -> Result<(), CrossoverError> {
    if value.is_finite() && value > 0.0 {
        Ok(())
    } else {
        Err(CrossoverError::BadValue { what: what.to_string(), value, allowed: "a finite value > 0" })
    }
}

fn check_frequencies(f_hz: &[f64]) -> Result<(), CrossoverError> {
    for (k, &f) in f_hz.iter().enumerate() {
        if !(f.is_finite() && f > 0.0) {
            return Err(CrossoverError::BadFrequency { f_hz: f });
        }
        if k > 0 && f <= f_hz[k - 1] {
            return Err(CrossoverError::OutOfOrder { position: k + 1, f_hz: f, previous_hz: f_hz[k - 1] });
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn values(network: &BranchNetwork) -> Vec<(Placement, Reactance, f64)> {
        network.elements.iter().map(|e| (e.placement, e.kind, e.value)).collect()
    }

    #[test]
    fn lr4_values_in_normalised_units() {
        // R = 1, ωc = 1: the Cauer expansion worked by hand in the module doc's constants.
        let f = 1.0 / (2.0 * PI);
        let lp = design_branch(BranchFilter::LowPass { f_hz: f }, 4, CrossoverAlignment::LinkwitzRiley, 1.0).unwrap();
        let expected =
            [4.0 * 2f64.sqrt() / 3.0, 9.0 / (4.0 * 2f64.sqrt()), 2.0 * 2f64.sqrt() / 3.0, 1.0 / (2.0 * 2f64.sqrt())];
        for (e, want) in lp.elements.iter().zip(expected) {
            assert!((e.value - want).abs() < 1e-12, "{e:?} vs {want}");
        }
        assert_eq!(
            values(&lp).iter().map(|v| (v.0, v.1)).collect::<Vec<_>>(),
            [
                (Placement::Series, Reactance::Inductor),
                (Placement::Shunt, Reactance::Capacitor),
                (Placement::Series, Reactance::Inductor),
                (Placement::Shunt, Reactance::Capacitor)
            ]
        );
    }

    #[test]
    fn every_branch_synthesizes_and_meets_its_target() {
        for alignment in
            [CrossoverAlignment::Butterworth, CrossoverAlignment::LinkwitzRiley, CrossoverAlignment::Bessel]
        {
            for order in 1..=4 {
                if alignment == CrossoverAlignment::LinkwitzRiley && order % 2 == 1 {
                    continue;
                }
                for filter in [
                    BranchFilter::LowPass { f_hz: 2500.0 },
                    BranchFilter::HighPass { f_hz: 2500.0 },
                    BranchFilter::BandPass { low_hz: 300.0, high_hz: 3000.0 },
                    BranchFilter::BandPass { low_hz: 80.0, high_hz: 5000.0 },
                ] {
                    let network = design_branch(filter, order, alignment, 8.0)
                        .unwrap_or_else(|e| panic!("{alignment:?} {order} {filter:?}: {e}"));
                    let n = if matches!(filter, BranchFilter::BandPass { .. }) { 2 * order } else { order };
                    assert_eq!(network.elements.len(), n);
                }
            }
        }
    }

    #[test]
    fn lr_odd_and_out_of_range_orders_are_refused() {
        let f = BranchFilter::LowPass { f_hz: 1e3 };
        let e = design_branch(f, 3, CrossoverAlignment::LinkwitzRiley, 8.0).unwrap_err();
        assert!(e.to_string().contains("even order"), "{e}");
        for order in [0, 5] {
            let e = design_branch(f, order, CrossoverAlignment::Butterworth, 8.0).unwrap_err();
            assert!(e.to_string().contains("order 1 to 4"), "{e}");
        }
    }

    #[test]
    fn l_pad_keeps_the_load_and_attenuates() {
        let pad = l_pad(8.0, 6.0).unwrap();
        let a = 10f64.powf(-6.0 / 20.0);
        let parallel = pad.shunt_ohm * 8.0 / (pad.shunt_ohm + 8.0);
        assert!((pad.series_ohm + parallel - 8.0).abs() < 1e-12);
        assert!((parallel / (pad.series_ohm + parallel) - a).abs() < 1e-12);
        let rs = series_level_resistor(8.0, 6.0).unwrap();
        assert!((8.0 / (8.0 + rs) - a).abs() < 1e-12);
        assert!(l_pad(8.0, 0.0).unwrap_err().to_string().contains("attenuation in dB is 0"));
    }
}
