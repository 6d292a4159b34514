//! The anti-aliasing front end of an ADC: from a sample rate, a signal band and a converter to a
//! recommended filter, its standard parts, and what the fitted circuit does at the converter's
//! sampling input (alias attenuation, settling within the acquisition time, the charge
//! reservoir, noise against the LSB, group delay).
//!
//! # The requirement and its mask
//! [`AdcRequirement`] becomes a low-pass [`SpecMask`]: the passband is 0 … `band_hz` with
//! `max_droop_db` of loss allowed, and the stopband starts at the alias frequency of
//! [`AliasBand`] with the attenuation of the [`AttenuationRule`]. Both are conventions of the
//! trade (references §6: "a derived convention, not a standard"):
//! - [`AttenuationRule::SnrFormula`]: the ideal N-bit SNR of a full-scale sine,
//!   20·log10(2^N·√1.5) = 6.02·N + 1.76 dB (W. Kester, ADI tutorial MT-001);
//! - [`AttenuationRule::HalfLsb`]: an alias brought below ½ LSB of full scale,
//!   20·log10(2^(N+1)) = 6.02·(N + 1) dB;
//! - [`AttenuationRule::Explicit`]: a figure the person states.
//!
//! [`AliasBand::FirstAlias`] (the default) puts the stopband edge at fs − f_band: sampling at fs
//! folds a frequency f onto |f − k·fs|, so the lowest frequency that lands inside the signal band
//! 0 … f_band is fs − f_band. What lands between f_band and fs/2 is outside the band and can be
//! removed by digital filtering after the converter (common practice for oversampled designs).
//! [`AliasBand::Nyquist`] puts the edge at fs/2, which is stricter: nothing above fs/2 may fold
//! at all, for when the whole Nyquist band is used.
//!
//! # Order, alignment and the recommendation
//! The minimum order of each alignment is [`crate::mask::minimum_order`]'s (verified on the
//! exact prototype response): Butterworth, Chebyshev I with ripple = the allowed droop (capped at
//! 10 dB), Bessel (−3 dB normalisation) and critically damped. **Recommendation rule**: among the
//! alignments the chosen [`Realization`] can build, the lowest order; at equal order, the one
//! whose group delay varies least over the signal band (a front end that settles cleanly after a
//! step, common practice; typically Bessel when it meets the mask at that order). The cutoff is the
//! geometric mean of the two cutoffs that just meet the passband and the stopband (see
//! [`crate::mask`]), in the alignment's own meaning.
//!
//! # Realization
//! [`Realization::Auto`] builds a passive RC ladder ([`crate::fit`], `Topology::Rc`) when every
//! pole of the recommended alignment is real (critically damped, or order 1: an RC network has
//! only real natural frequencies, so Q ≤ 0.5), and a unity-gain Sallen-Key cascade
//! ([`crate::active::fit_cascade`]) otherwise. The source resistance is part of every fitted
//! design; the converter input is treated as an open load between samples.
//!
//! # The sampling input (settling)
//! When the sampling switch closes, the sampling capacitor C_s, holding in the worst case a
//! full-scale difference from the new input, is connected through the switch resistance R_sw to
//! the filter output. The error decays through the filter's output impedance, in which the last
//! filter capacitor acts as a charge reservoir. [`sampling_circuit`] builds this as a circuit:
//! the fitted filter with its source EMF shorted (it is not the stimulus), then R_sw from the
//! output to a node `adc:sw`, then a step source V_init of 1 V from `adc:sw` (negative) to
//! `adc:cs` (positive), then an uncharged C_s from `adc:cs` to ground. **Equivalence**: a
//! capacitor charged to V0 behaves for t ≥ 0 exactly as an uncharged capacitor in series with a
//! constant source V0 (its Laplace model C·V(s) − C·V0 is the uncharged one driven by V0/s,
//! common practice). The physical capacitor voltage is V(adc:sw) = V(adc:cs) − 1, which starts at
//! −1 V (a full-scale step, normalised) and must reach 0; so the output V(adc:cs) is a step from
//! 0 to 1 whose error is the sampling error. [`crate::transient`] gives its exact settling time
//! to ½ LSB (2^−(N+1) of the full-scale step), which is compared with the acquisition time.
//!
//! # The charge reservoir
//! Rule of thumb (**common practice, not a standard**): the filter capacitor at the output is at
//! least 10× C_s. Charge sharing: C_f at V and C_s at 0 connected with no other current keep
//! their charge C_f·V = (C_f + C_s)·V′, so the output drops by ΔV/V = C_s/(C_f + C_s) (derived
//! here from charge conservation). For a full-scale V that is 2^N·C_s/(C_f + C_s) LSB before the
//! filter recharges it, which the settling figure includes. An output driven by an op-amp has no
//! such capacitor and the check does not apply.
//!
//! # Noise
//! [`crate::noise`] gives the thermal noise of every resistor and of the source resistance at
//! the filter output, integrated over 0 … f_band, 0 … fs/2 and all frequencies. The sampling
//! capacitor adds kT/C_s (the switch resistance's noise integrated over all frequencies, the
//! same calculation as the RC low-pass of [`crate::noise`]), and the quantisation noise of an
//! ideal converter is LSB/√12 (references §6). Sampling folds all the noise the input bandwidth
//! passes into the samples (common practice), so the **total analog noise** is
//! √(filter noise over all frequencies + kT/C_s) (the filter noise to fs/2 where its total is
//! unbounded); the switch's own low-pass only lowers it, so this is an upper estimate.
//! **Threshold** (common practice): total analog noise below ½ LSB rms passes; otherwise a
//! warning. Op-amp noise is not modelled.
//!
//! # Group delay
//! At DC and its spread (max − min) over the signal band, exact from the MNA derivative.
//!
//! # Cautions
//! The figures are small-signal and linear. They know nothing of the converter's reference,
//! input protection, supply rails or the op-amp's output swing and slew rate; check the data
//! sheets, and see [`crate::cautions`] (mains-powered equipment, capacitor voltage ratings).
use std::f64::consts::TAU;
use std::fmt;

use serde::Serialize;

use crate::active::{fit_cascade, ActiveError, ActiveOptions, ActiveParts, ActiveTopology, CascadeSpec, OpAmp};
use crate::circuit::{Circuit, ElementKind};
use crate::design::{Design, DesignError, Part};
use crate::eseries::{PartValues, Series};
use crate::fit::{fit, Combine, FitOptions, PartSets, Requirement, Topology};
use crate::ladder::FirstElement;
use crate::mask::{check_points, minimum_order, MaskBand, MaskError, SpecMask};
use crate::mna::{AcSystem, Detail, Probe};
use crate::noise::{
    extend_circuit, NoiseAnalysis, NoiseContribution, NoiseError, NoiseIntegral, NoiseOptions, BOLTZMANN_J_PER_K,
};
use crate::prototype::{lowpass_prototype, Zpk, MAX_ORDER};
use crate::response::{group_delay_s, magnitude_db};
use crate::synthesis::{Alignment, Band, BesselNormalization, ResponseType, SynthesisError};
use crate::transform::denormalize;
use crate::transient::{MethodChoice, SettleTolerance, TimeResponse, TransientError, MAX_BITS};

/// The charge-reservoir rule of thumb: filter capacitor ≥ this many times C_s (common practice).
pub const RESERVOIR_RATIO: f64 = 10.0;
/// The noise threshold: total analog noise below this many LSB rms passes (common practice).
pub const NOISE_THRESHOLD_LSB: f64 = 0.5;
/// Points of the passband grid used for droop and group delay.
pub const PASSBAND_POINTS: usize = 200;

/// What attenuation the alias band needs.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(tag = "rule", rename_all = "snake_case")]
pub enum AttenuationRule {
    /// The ideal SNR of an N-bit converter, 20·log10(2^N·√1.5) = 6.02·N + 1.76 dB.
    SnrFormula,
    /// Half an LSB of full scale, 20·log10(2^(N+1)) = 6.02·(N + 1) dB.
    HalfLsb,
    /// A stated attenuation in dB (finite, above the droop).
    Explicit {
        /// The attenuation in dB.
        db: f64,
    },
}

/// Where the stopband of the anti-aliasing filter starts.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum AliasBand {
    /// At fs − f_band, the lowest frequency that folds into the signal band (the default).
    #[default]
    FirstAlias,
    /// At fs/2: nothing above Nyquist may fold (stricter).
    Nyquist,
}

/// The converter's sampling input.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct AdcInput {
    /// The sampling capacitance C_s in F (finite, > 0).
    pub sampling_capacitance_f: f64,
    /// The sampling switch's on-resistance R_sw in Ω (finite, > 0).
    pub switch_ohms: f64,
    /// The acquisition (tracking) time in s (finite, > 0).
    pub acquisition_s: f64,
}

/// What the anti-aliasing front end must do.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct AdcRequirement {
    /// The sample rate fs in Hz (finite, above 2·`band_hz`).
    pub sample_rate_hz: f64,
    /// The signal band 0 … f_band, in Hz (finite, > 0).
    pub band_hz: f64,
    /// The converter's resolution N in bits, 1 ≤ N ≤ 32.
    pub bits: u32,
    /// The full-scale input span in V (finite, > 0); LSB = full scale / 2^N.
    pub full_scale_v: f64,
    /// The attenuation rule for the alias band.
    pub rule: AttenuationRule,
    /// Where the attenuation is required.
    pub alias_band: AliasBand,
    /// The passband loss allowed over the signal band, in dB (finite, > 0).
    pub max_droop_db: f64,
    /// The signal source's resistance in Ω (finite, ≥ 0).
    pub source_ohms: f64,
    /// The converter's sampling input.
    pub input: AdcInput,
}

/// Which circuit to build.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Realization {
    /// A passive RC ladder when the alignment has only real poles, else a Sallen-Key cascade.
    #[default]
    Auto,
    /// A passive RC ladder (only alignments with real poles are considered).
    PassiveRc,
    /// A unity-gain Sallen-Key cascade (buffered first-order section for a real pole).
    Active,
    /// A passive LC ladder (shunt capacitor first), terminated by the source resistance.
    Lc,
}

/// Options of the workflow.
#[derive(Debug, Clone, PartialEq)]
pub struct AdcOptions {
    /// Which circuit to build (default [`Realization::Auto`]).
    pub realization: Realization,
    /// The op-amp model of active sections (default ideal).
    pub op_amp: OpAmp,
    /// Resistor values (default E96).
    pub resistors: PartValues,
    /// Capacitor values (default E12).
    pub capacitors: PartValues,
    /// Inductor values (default E12).
    pub inductors: PartValues,
    /// Resistors for passive ladders in Ω (default 100 Ω – 100 kΩ: low values keep the thermal
    /// noise and the output impedance low, common practice).
    pub passive_resistor_range: (f64, f64),
    /// Resistors and capacitors for active sections (default as [`ActiveParts::new`]:
    /// 1 kΩ – 100 kΩ, 100 pF – 10 µF).
    pub active_ranges: ((f64, f64), (f64, f64)),
    /// The temperature of the resistors in K (default 300 K).
    pub temperature_k: f64,
    /// A name for the fitted design.
    pub name: String,
}

/// The minimum order of one alignment for the mask.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct AlignmentOrder {
    /// The alignment's name.
    pub alignment: &'static str,
    /// The Chebyshev ripple in dB, for Chebyshev.
    pub ripple_db: Option<f64>,
    /// The minimum order that meets the mask, `None` when no order up to 8 does.
    pub order: Option<usize>,
    /// The recommended cutoff in Hz, in the alignment's meaning.
    pub cutoff_hz: Option<f64>,
    /// The spread of the group delay over the signal band at that cutoff, in s.
    pub group_delay_spread_s: Option<f64>,
    /// When unmet: the closest order and how far it misses, in dB.
    pub closest_order: Option<usize>,
    /// When unmet: the shortfall of the closest order in dB.
    pub shortfall_db: Option<f64>,
    /// Whether all its poles are real at that order, so a passive RC ladder can make it.
    pub rc_realizable: bool,
}

/// The recommendation.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Recommendation {
    /// The alignment's name.
    pub alignment: &'static str,
    /// The Chebyshev ripple in dB, for Chebyshev.
    pub ripple_db: Option<f64>,
    /// The order.
    pub order: usize,
    /// The cutoff in Hz, in the alignment's meaning (Bessel: −3 dB; Chebyshev: the ripple edge).
    pub cutoff_hz: f64,
    /// The circuit built for it.
    pub realization: Realization,
    /// The rule that chose it, stated.
    pub rule: &'static str,
}

/// The figures of a frequency response against the front end's mask.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct AliasFigures {
    /// Attenuation in dB at fs − f_band, relative to the largest passband gain.
    pub first_alias_attenuation_db: f64,
    /// Attenuation in dB at fs/2.
    pub nyquist_attenuation_db: f64,
    /// The largest passband loss over 0 … f_band, in dB.
    pub passband_droop_db: f64,
    /// Whether the response meets the mask at every checked point.
    pub meets_mask: bool,
    /// The smaller of the passband and stopband margins, in dB.
    pub worst_margin_db: f64,
}

/// One part of the fitted design.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FrontEndPart {
    /// The reference.
    pub reference: String,
    /// "resistor", "capacitor" or "inductor".
    pub kind: &'static str,
    /// The ideal value in SI units.
    pub ideal_value: f64,
    /// The standard value chosen.
    pub chosen_value: f64,
    /// The series it comes from.
    pub series: String,
    /// 100·(chosen − ideal)/ideal.
    pub deviation_pct: f64,
}

/// The sampling input's settling.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SamplingSettling {
    /// The tolerance as a fraction of a full-scale step: 2^−(N+1) (½ LSB).
    pub tolerance: f64,
    /// The time to settle to ½ LSB after the switch closes, in s (`None`: the integrator's span
    /// ended first).
    pub settling_time_s: Option<f64>,
    /// The acquisition time in s.
    pub acquisition_s: f64,
    /// Whether it settles within the acquisition time.
    pub pass: bool,
    /// acquisition − settling, in s (negative when it fails).
    pub margin_s: Option<f64>,
    /// The same as a multiple: acquisition / settling.
    pub margin_ratio: Option<f64>,
    /// Whether the exact pole–residue path was used (else the Radau integrator).
    pub exact: bool,
}

/// The filter's own step response to ½ LSB (for information).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct FilterStep {
    /// Time to settle to ½ LSB of the final value, in s.
    pub settling_time_s: Option<f64>,
    /// Overshoot in % of the final step.
    pub overshoot_pct: Option<f64>,
    /// The 10–90 % rise time in s.
    pub rise_time_s: Option<f64>,
}

/// The charge-reservoir check.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct ChargeReservoir {
    /// The capacitance from the filter output to ground in F.
    pub filter_capacitance_f: f64,
    /// C_s in F.
    pub sampling_capacitance_f: f64,
    /// C_f / C_s.
    pub ratio: f64,
    /// Whether C_f ≥ 10·C_s.
    pub rule_met: bool,
    /// "rule of thumb (common practice): filter capacitor at least 10× the sampling capacitor".
    pub rule: &'static str,
    /// ΔV/V = C_s/(C_f + C_s), the charge-sharing drop of a full-scale difference.
    pub droop_fraction: f64,
    /// The same in LSB: 2^N·C_s/(C_f + C_s).
    pub droop_lsb: f64,
}

/// Whether a figure passes its stated threshold.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Verdict {
    /// Within the threshold.
    Pass,
    /// Outside it: a warning, not an error.
    Warn,
}

/// A noise figure in V rms and in LSB.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct NoiseFigure {
    /// V rms.
    pub rms_v: f64,
    /// LSB rms.
    pub lsb: f64,
}

/// The noise budget at the sampling input.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct NoiseBudget {
    /// The temperature in K.
    pub temperature_k: f64,
    /// One LSB in V.
    pub lsb_v: f64,
    /// Resistor thermal noise at the filter output over 0 … f_band.
    pub resistors_in_band: NoiseFigure,
    /// Over 0 … fs/2.
    pub resistors_to_nyquist: NoiseFigure,
    /// Over all frequencies (`None` when the density does not fall faster than 1/f).
    pub resistors_total: Option<NoiseFigure>,
    /// √(kT/C_s) of the sampling capacitor.
    pub kt_over_c: NoiseFigure,
    /// LSB/√12 of an ideal converter.
    pub quantization: NoiseFigure,
    /// √(resistor total + kT/C_s), an upper estimate of the analog noise in each sample.
    pub total_analog: NoiseFigure,
    /// Pass when the total analog noise is below ½ LSB rms (common practice).
    pub verdict: Verdict,
    /// The threshold in LSB rms.
    pub threshold_lsb: f64,
    /// Each source's share over 0 … fs/2.
    pub contributions_to_nyquist: Vec<NoiseContribution>,
}

/// The group delay of the fitted design.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct GroupDelay {
    /// At DC, in s.
    pub dc_s: f64,
    /// The smallest over 0 … f_band, in s.
    pub min_s: f64,
    /// The largest over 0 … f_band, in s.
    pub max_s: f64,
    /// max − min over the band, in s.
    pub spread_s: f64,
}

/// Everything the workflow found, for a table or JSON.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FrontEndReport {
    /// The requirement as given.
    pub requirement: AdcRequirement,
    /// The mask it became.
    pub mask: SpecMask,
    /// The stopband edge in Hz.
    pub stopband_edge_hz: f64,
    /// The attenuation rule, stated with its formula.
    pub rule_statement: String,
    /// One LSB in V.
    pub lsb_v: f64,
    /// The minimum order of each alignment.
    pub orders: Vec<AlignmentOrder>,
    /// The recommended alignment, order and cutoff.
    pub recommendation: Recommendation,
    /// The ideal (unrounded prototype) response's figures.
    pub ideal: AliasFigures,
    /// The fitted circuit's figures (MNA, with the source resistance).
    pub fitted: AliasFigures,
    /// The fitted parts.
    pub parts: Vec<FrontEndPart>,
    /// The fitted design.
    pub design: Design,
    /// The sampling input's settling.
    pub sampling: SamplingSettling,
    /// The filter's own step settling.
    pub filter_step: FilterStep,
    /// The charge-reservoir check; `None` when the output is driven by an amplifier.
    pub charge_reservoir: Option<ChargeReservoir>,
    /// The noise budget.
    pub noise: NoiseBudget,
    /// The group delay.
    pub group_delay: GroupDelay,
    /// Warnings: figures outside their thresholds, and what the model leaves out.
    pub warnings: Vec<String>,
    /// Safety cautions to show with the result (from [`crate::cautions`]).
    pub cautions: Vec<String>,
}

/// Why the workflow cannot run.
#[derive(Debug, Clone, PartialEq)]
pub enum AdcError {
    /// A value that is not finite or out of its range.
    BadValue {
        /// Which, e.g. "sample rate".
        what: &'static str,
        /// The value in SI units.
        value: f64,
        /// What is accepted.
        accepted: &'static str,
    },
    /// The sample rate is not above twice the band.
    SampleRateTooLow {
        /// fs in Hz.
        sample_rate_hz: f64,
        /// f_band in Hz.
        band_hz: f64,
    },
    /// Zero bits, or more than 32.
    BadBits {
        /// The value given.
        bits: u32,
    },
    /// The attenuation required does not exceed the allowed droop.
    AttenuationNotAboveDroop {
        /// The attenuation in dB.
        attenuation_db: f64,
        /// The droop in dB.
        droop_db: f64,
    },
    /// No alignment the realization can build meets the mask with an order up to 8.
    Unreachable {
        /// The stopband edge in Hz.
        stopband_edge_hz: f64,
        /// The attenuation required there, in dB.
        attenuation_db: f64,
        /// The alignment that comes closest.
        closest_alignment: &'static str,
        /// Its closest order.
        closest_order: usize,
        /// By how much it misses, in dB.
        shortfall_db: f64,
        /// The realization asked for.
        realization: Realization,
    },
    /// The mask could not be used.
    Mask(MaskError),
    /// The passive fit failed.
    Fit(SynthesisError),
    /// The active fit failed.
    Active(ActiveError),
    /// The fitted design is not a usable circuit (a fault in the builder).
    Design(DesignError),
    /// The fitted circuit could not be solved at a frequency.
    Unsolvable {
        /// The frequency in Hz.
        f_hz: f64,
    },
    /// The time response could not be computed.
    Transient(TransientError),
    /// The noise could not be computed.
    Noise(NoiseError),
}

impl AttenuationRule {
    /// The attenuation in dB this rule asks for at `bits` bits (exact forms, see the module docs).
    pub fn attenuation_db(&self, bits: u32) -> f64 {
        let n = f64::from(bits);
        match *self {
            // 20·log10(2^N·√1.5) = 20·N·log10 2 + 10·log10 1.5.
            AttenuationRule::SnrFormula => 20.0 * n * 2f64.log10() + 10.0 * 1.5f64.log10(),
            AttenuationRule::HalfLsb => 20.0 * (n + 1.0) * 2f64.log10(),
            AttenuationRule::Explicit { db } => db,
        }
    }

    /// The rule stated with its formula and value, e.g. for a table heading.
    pub fn statement(&self, bits: u32) -> String {
        let db = self.attenuation_db(bits);
        match self {
            AttenuationRule::SnrFormula => format!(
                "ideal SNR of {bits} bits: 20·log10(2^N·√1.5) = 6.02·N + 1.76 dB = {db:.3} dB (a derived convention, not a standard)"
            ),
            AttenuationRule::HalfLsb => format!(
                "½ LSB of {bits} bits: 20·log10(2^(N+1)) = 6.02·(N + 1) dB = {db:.3} dB (a derived convention, not a standard)"
            ),
            AttenuationRule::Explicit { .. } => format!("stated attenuation: {db:.3} dB"),
        }
    }
}

impl AliasBand {
    /// "first_alias" or "nyquist".
    pub fn name(self) -> &'static str {
        match self {
            AliasBand::FirstAlias => "first alias (fs − f_band)",
            AliasBand::Nyquist => "Nyquist (fs/2)",
        }
    }
}

impl Realization {
    /// A short lower-case name.
    pub fn name(self) -> &'static str {
        match self {
            Realization::Auto => "auto",
            Realization::PassiveRc => "passive RC ladder",
            Realization::Active => "Sallen-Key cascade",
            Realization::Lc => "LC ladder",
        }
    }
}

impl Default for AdcOptions {
    fn default() -> Self {
        Self {
            realization: Realization::Auto,
            op_amp: OpAmp::Ideal,
            resistors: PartValues::Series(Series::E96),
            capacitors: PartValues::Series(Series::E12),
            inductors: PartValues::Series(Series::E12),
            passive_resistor_range: (100.0, 1e5),
            active_ranges: ((1e3, 1e5), (1e-10, 1e-5)),
            temperature_k: crate::noise::DEFAULT_TEMPERATURE_K,
            name: "anti-alias".to_string(),
        }
    }
}

impl fmt::Display for AdcError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::BadValue { what, value, accepted } => write!(f, "the {what} {value} is not usable; give {accepted}"),
            Self::SampleRateTooLow { sample_rate_hz, band_hz } => write!(
                f,
                "the sample rate {sample_rate_hz} Hz is not above twice the signal band {band_hz} Hz ({} Hz), so the band would alias onto itself; raise the sample rate above {} Hz or narrow the band below {} Hz",
                2.0 * band_hz,
                2.0 * band_hz,
                sample_rate_hz / 2.0
            ),
            Self::BadBits { bits } => write!(
                f,
                "a converter of {bits} bits is not usable; give a resolution from 1 to {MAX_BITS} bits"
            ),
            Self::AttenuationNotAboveDroop { attenuation_db, droop_db } => write!(
                f,
                "the alias attenuation {attenuation_db} dB does not exceed the allowed droop {droop_db} dB; ask for more attenuation or less droop"
            ),
            Self::Unreachable { stopband_edge_hz, attenuation_db, closest_alignment, closest_order, shortfall_db, realization } => write!(
                f,
                "no order up to {MAX_ORDER} {} reaches {attenuation_db:.2} dB at {stopband_edge_hz} Hz; the closest is {closest_alignment} of order {closest_order}, which misses by {shortfall_db:.2} dB; raise the sample rate, narrow the band, allow more droop or ask for less attenuation",
                match realization {
                    Realization::Auto => "of any alignment".to_string(),
                    other => format!("of the alignments a {} can make", other.name()),
                }
            ),
            Self::Mask(error) => write!(f, "{error}"),
            Self::Fit(error) => write!(f, "{error}"),
            Self::Active(error) => write!(f, "{error}"),
            Self::Design(error) => write!(f, "the fitted design is not a usable circuit: {error}; please report the request"),
            Self::Unsolvable { f_hz } => write!(
                f,
                "the fitted circuit cannot be solved at {f_hz} Hz; this is a fault in the workflow, so please report the request"
            ),
            Self::Transient(error) => write!(f, "{error}"),
            Self::Noise(error) => write!(f, "{error}"),
        }
    }
}

impl std::error::Error for AdcError {}

impl From<MaskError> for AdcError {
    fn from(error: MaskError) -> Self {
        Self::Mask(error)
    }
}

impl From<DesignError> for AdcError {
    fn from(error: DesignError) -> Self {
        Self::Design(error)
    }
}

impl From<TransientError> for AdcError {
    fn from(error: TransientError) -> Self {
        Self::Transient(error)
    }
}

impl From<NoiseError> for AdcError {
    fn from(error: NoiseError) -> Self {
        Self::Noise(error)
    }
}

impl AdcRequirement {
    /// Checks every field.
    ///
    /// # Errors
    /// [`AdcError::BadValue`] naming the field and what is accepted, [`AdcError::BadBits`] for 0
    /// or more than 32 bits, [`AdcError::SampleRateTooLow`] when fs ≤ 2·f_band (naming both),
    /// [`AdcError::AttenuationNotAboveDroop`].
    pub fn validate(&self) -> Result<(), AdcError> {
        let positive = |what: &'static str, value: f64| {
            if value.is_finite() && value > 0.0 {
                Ok(())
            } else {
                Err(AdcError::BadValue { what, value, accepted: "a finite value above 0" })
            }
        };
        positive("sample rate (Hz)", self.sample_rate_hz)?;
        positive("signal band (Hz)", self.band_hz)?;
        if !(1..=MAX_BITS).contains(&self.bits) {
            return Err(AdcError::BadBits { bits: self.bits });
        }
        if self.sample_rate_hz <= 2.0 * self.band_hz {
            return Err(AdcError::SampleRateTooLow { sample_rate_hz: self.sample_rate_hz, band_hz: self.band_hz });
        }
        positive("full-scale span (V)", self.full_scale_v)?;
        positive("allowed passband droop (dB)", self.max_droop_db)?;
        if !(self.source_ohms.is_finite() && self.source_ohms >= 0.0) {
            return Err(AdcError::BadValue {
                what: "source resistance (Ω)",
                value: self.source_ohms,
                accepted: "a finite resistance of 0 Ω (ideal source) or more",
            });
        }
        positive("sampling capacitance (F)", self.input.sampling_capacitance_f)?;
        positive("sampling switch resistance (Ω)", self.input.switch_ohms)?;
        positive("acquisition time (s)", self.input.acquisition_s)?;
        let attenuation_db = self.rule.attenuation_db(self.bits);
        if !attenuation_db.is_finite() {
            return Err(AdcError::BadValue {
                what: "alias attenuation (dB)",
                value: attenuation_db,
                accepted: "a finite attenuation above the allowed droop",
            });
        }
        if attenuation_db <= self.max_droop_db {
            return Err(AdcError::AttenuationNotAboveDroop { attenuation_db, droop_db: self.max_droop_db });
        }
        Ok(())
    }

    /// The stopband edge in Hz: fs − f_band or fs/2.
    pub fn stopband_edge_hz(&self) -> f64 {
        match self.alias_band {
            AliasBand::FirstAlias => self.sample_rate_hz - self.band_hz,
            AliasBand::Nyquist => self.sample_rate_hz / 2.0,
        }
    }

    /// One LSB in V: full scale / 2^N.
    pub fn lsb_v(&self) -> f64 {
        self.full_scale_v / 2f64.powi(self.bits as i32)
    }

    /// The low-pass mask of the requirement (see the module docs).
    ///
    /// # Errors
    /// As [`AdcRequirement::validate`].
    pub fn spec_mask(&self) -> Result<SpecMask, AdcError> {
        self.validate()?;
        Ok(SpecMask {
            band: MaskBand::LowPass { passband_edge_hz: self.band_hz, stopband_edge_hz: self.stopband_edge_hz() },
            max_passband_loss_db: self.max_droop_db,
            min_stopband_attenuation_db: self.rule.attenuation_db(self.bits),
            max_group_delay_variation_s: None,
        })
    }
}

/// The alignments the workflow compares: Butterworth, Chebyshev (ripple = droop, at most 10 dB),
/// Bessel (−3 dB normalisation) and critically damped.
pub fn front_end_alignments(max_droop_db: f64) -> [Alignment; 4] {
    [
        Alignment::Butterworth,
        Alignment::Chebyshev { ripple_db: max_droop_db.min(10.0) },
        Alignment::Bessel { normalization: BesselNormalization::Magnitude },
        Alignment::Critical,
    ]
}

/// The minimum order of every alignment of [`front_end_alignments`] for the requirement.
///
/// # Errors
/// As [`AdcRequirement::validate`], and [`AdcError::Mask`] for a mask the order search rejects
/// (an unreachable mask is reported per alignment, not as an error).
pub fn alignment_orders(requirement: &AdcRequirement) -> Result<Vec<AlignmentOrder>, AdcError> {
    let mask = requirement.spec_mask()?;
    let mut orders = Vec::new();
    for alignment in front_end_alignments(requirement.max_droop_db) {
        let ripple_db = match alignment {
            Alignment::Chebyshev { ripple_db } => Some(ripple_db),
            _ => None,
        };
        let entry = match minimum_order(&mask, alignment) {
            Ok(choice) => {
                let cutoff_hz = match choice.band {
                    Band::Cutoff(fc) => fc,
                    _ => unreachable!("a low-pass mask gives a cutoff"),
                };
                let target = ideal_target(alignment, choice.order, cutoff_hz)?;
                AlignmentOrder {
                    alignment: alignment.name(),
                    ripple_db,
                    order: Some(choice.order),
                    cutoff_hz: Some(cutoff_hz),
                    group_delay_spread_s: Some(zpk_delay_spread(&target, requirement.band_hz)),
                    closest_order: None,
                    shortfall_db: None,
                    rc_realizable: all_poles_real(&target),
                }
            }
            Err(MaskError::Unreachable { closest_order, shortfall_db, .. }) => AlignmentOrder {
                alignment: alignment.name(),
                ripple_db,
                order: None,
                cutoff_hz: None,
                group_delay_spread_s: None,
                closest_order: Some(closest_order),
                shortfall_db: Some(shortfall_db),
                rc_realizable: ideal_target(alignment, closest_order, 1.0).map(|z| all_poles_real(&z)).unwrap_or(false),
            },
            Err(error) => return Err(error.into()),
        };
        orders.push(entry);
    }
    Ok(orders)
}

/// The statement of the recommendation rule.
pub const RECOMMENDATION_RULE: &str = "the lowest order among the alignments the realization can build; at equal order, the smallest group-delay spread over the signal band (typically Bessel when it meets the mask at that order), since a front end should settle cleanly";

/// Chooses the alignment, order and cutoff (see [`RECOMMENDATION_RULE`]).
///
/// # Errors
/// [`AdcError::Unreachable`] naming the closest alignment and order when nothing meets the mask.
pub fn recommend(
    requirement: &AdcRequirement,
    orders: &[AlignmentOrder],
    realization: Realization,
) -> Result<Recommendation, AdcError> {
    let allowed = |o: &AlignmentOrder| realization != Realization::PassiveRc || o.rc_realizable;
    let best = orders.iter().filter(|o| o.order.is_some() && allowed(o)).min_by(|a, b| {
        a.order.cmp(&b.order).then(
            a.group_delay_spread_s.unwrap_or(f64::INFINITY).total_cmp(&b.group_delay_spread_s.unwrap_or(f64::INFINITY)),
        )
    });
    let Some(best) = best else {
        let closest = orders
            .iter()
            .filter(|o| allowed(o))
            .min_by(|a, b| a.shortfall_db.unwrap_or(0.0).total_cmp(&b.shortfall_db.unwrap_or(0.0)));
        let (closest_alignment, closest_order, shortfall_db) = match closest {
            Some(o) => (o.alignment, o.closest_order.or(o.order).unwrap_or(MAX_ORDER), o.shortfall_db.unwrap_or(0.0)),
            None => ("critical", MAX_ORDER, f64::INFINITY),
        };
        return Err(AdcError::Unreachable {
            stopband_edge_hz: requirement.stopband_edge_hz(),
            attenuation_db: requirement.rule.attenuation_db(requirement.bits),
            closest_alignment,
            closest_order,
            shortfall_db,
            realization,
        });
    };
    let order = best.order.expect("filtered on a met order");
    let built = match realization {
        Realization::Auto if best.rc_realizable => Realization::PassiveRc,
        Realization::Auto => Realization::Active,
        other => other,
    };
    Ok(Recommendation {
        alignment: best.alignment,
        ripple_db: best.ripple_db,
        order,
        cutoff_hz: best.cutoff_hz.expect("a met order has a cutoff"),
        realization: built,
        rule: RECOMMENDATION_RULE,
    })
}

/// Runs the whole workflow: mask, orders, recommendation, fitted parts and every check of the
/// module docs.
///
/// # Errors
/// Any [`AdcError`]: bad input first, then an unreachable mask, then a fit that finds no parts.
pub fn plan_front_end(requirement: &AdcRequirement, options: &AdcOptions) -> Result<FrontEndReport, AdcError> {
    if !(options.temperature_k.is_finite() && options.temperature_k > 0.0) {
        return Err(AdcError::BadValue {
            what: "temperature (K)",
            value: options.temperature_k,
            accepted: "a finite absolute temperature above 0 K",
        });
    }
    let mask = requirement.spec_mask()?;
    let orders = alignment_orders(requirement)?;
    let recommendation = recommend(requirement, &orders, options.realization)?;
    let alignment = alignment_of(&recommendation);
    let target = ideal_target(alignment, recommendation.order, recommendation.cutoff_hz)?;
    let ideal = figures_of(requirement, &mask, |f| Some(crate::transform::target_response(&target, f)))?;
    let (design, parts) = fit_design(requirement, options, &recommendation, alignment)?;
    let (circuit, probe) = design.to_circuit()?;
    let mut system = AcSystem::new(&circuit, &probe);
    let fitted = figures_of(requirement, &mask, |f| system.solve_at(f, Detail::Transfer).ok().map(|s| s.transfer))?;
    let group_delay = group_delay_of(&mut system, requirement.band_hz)?;
    let bits = requirement.bits;
    let mut warnings = Vec::new();
    // The filter's own step is for information: a failure there is a warning, not an error.
    let filter_step = match TimeResponse::new(&mut system, MethodChoice::Automatic)
        .and_then(|time| time.step_metrics(SettleTolerance::HalfLsb { bits }))
    {
        Ok(metrics) => FilterStep {
            settling_time_s: metrics.settling.time_s,
            overshoot_pct: metrics.overshoot_pct,
            rise_time_s: metrics.rise.map(|r| r.rise_time_s),
        },
        Err(error) => {
            warnings.push(format!("the filter's own step response could not be computed: {error}"));
            FilterStep { settling_time_s: None, overshoot_pct: None, rise_time_s: None }
        }
    };
    let sampling = sampling_settling(&design, &requirement.input, bits)?;
    let charge_reservoir = charge_reservoir(&design, &requirement.input, bits);
    let noise = noise_budget(&design, requirement, options.temperature_k)?;
    if !fitted.meets_mask {
        warnings.push(format!(
            "the fitted parts miss the mask by {:.3} dB (the ideal design meets it); try a finer series or a different realization",
            -fitted.worst_margin_db
        ));
    }
    if !sampling.pass {
        warnings.push(format!(
            "the sampling input does not settle to ½ LSB within the acquisition time {} s; lengthen the acquisition, lower the output impedance or enlarge the output capacitor",
            requirement.input.acquisition_s
        ));
    }
    match &charge_reservoir {
        Some(reservoir) if !reservoir.rule_met => warnings.push(format!(
            "the output capacitor is {:.2}× the sampling capacitor, below the 10× rule of thumb (common practice)",
            reservoir.ratio
        )),
        None => warnings.push(
            "the output is driven by an amplifier, so there is no charge-reservoir capacitor; the op-amp must deliver the sampling charge itself, and its output settling is modelled only as far as the op-amp model goes"
                .to_string(),
        ),
        _ => {}
    }
    if noise.verdict == Verdict::Warn {
        warnings.push(format!(
            "the total analog noise is {:.3} LSB rms, above the ½ LSB rms threshold (common practice)",
            noise.total_analog.lsb
        ));
    }
    if recommendation.realization == Realization::Active {
        warnings.push("op-amp voltage and current noise, slew rate and output swing are not modelled".to_string());
    }
    let cautions = crate::cautions::CAUTIONS
        .iter()
        .filter(|c| c.title != "Amplifier outputs" && c.title != "Heat")
        .map(|c| format!("{}: {}", c.title, c.text))
        .collect();
    Ok(FrontEndReport {
        requirement: *requirement,
        mask,
        stopband_edge_hz: requirement.stopband_edge_hz(),
        rule_statement: requirement.rule.statement(bits),
        lsb_v: requirement.lsb_v(),
        orders,
        recommendation,
        ideal,
        fitted,
        parts,
        design,
        sampling,
        filter_step,
        charge_reservoir,
        noise,
        group_delay,
        warnings,
        cautions,
    })
}

/// The settling circuit of the sampling input (see the module docs): the design with its source
/// EMF shorted, R_sw, a 1 V step source and C_s; the probe's output is V(`adc:cs`), a step from
/// 0 to 1 whose error is the sampling error.
///
/// # Errors
/// [`AdcError::BadValue`] for an unusable input, [`AdcError::Design`] for a design that is not a
/// circuit.
pub fn sampling_circuit(design: &Design, input: &AdcInput) -> Result<(Circuit, Probe), AdcError> {
    for (what, value) in [
        ("sampling capacitance (F)", input.sampling_capacitance_f),
        ("sampling switch resistance (Ω)", input.switch_ohms),
    ] {
        if !(value.is_finite() && value > 0.0) {
            return Err(AdcError::BadValue { what, value, accepted: "a finite value above 0" });
        }
    }
    let (circuit, _) = design.to_circuit()?;
    let output = design.output.clone();
    let extra = vec![
        ("adc:Rsw".to_string(), ElementKind::Resistor { resistance: input.switch_ohms }, output, "adc:sw".to_string()),
        (
            "adc:Vinit".to_string(),
            ElementKind::VoltageSource { emf: 1.0, series_resistance: 0.0 },
            "adc:cs".to_string(),
            "adc:sw".to_string(),
        ),
        (
            "adc:Cs".to_string(),
            ElementKind::Capacitor { capacitance: input.sampling_capacitance_f, esr: 0.0 },
            "adc:cs".to_string(),
            "0".to_string(),
        ),
    ];
    let circuit = extend_circuit(&circuit, &extra).map_err(|e| AdcError::Design(DesignError::from(e)))?;
    let probe = Probe::new(&circuit, "adc:Vinit", "adc:cs", "0").map_err(|e| AdcError::Design(DesignError::from(e)))?;
    Ok((circuit, probe))
}

/// The settling of the sampling input to ½ LSB of `bits` after the switch closes, against the
/// acquisition time.
///
/// # Errors
/// As [`sampling_circuit`], [`AdcError::BadBits`], [`AdcError::BadValue`] for the acquisition
/// time, and [`AdcError::Transient`] when the time response cannot be computed.
pub fn sampling_settling(design: &Design, input: &AdcInput, bits: u32) -> Result<SamplingSettling, AdcError> {
    if !(1..=MAX_BITS).contains(&bits) {
        return Err(AdcError::BadBits { bits });
    }
    if !(input.acquisition_s.is_finite() && input.acquisition_s > 0.0) {
        return Err(AdcError::BadValue {
            what: "acquisition time (s)",
            value: input.acquisition_s,
            accepted: "a finite value above 0",
        });
    }
    let (circuit, probe) = sampling_circuit(design, input)?;
    let mut system = AcSystem::new(&circuit, &probe);
    let time = TimeResponse::new(&mut system, MethodChoice::Automatic)?;
    let metrics = time.step_metrics(SettleTolerance::HalfLsb { bits })?;
    let settling_time_s = metrics.settling.time_s;
    let pass = settling_time_s.is_some_and(|t| t <= input.acquisition_s);
    Ok(SamplingSettling {
        tolerance: metrics.settling.fraction,
        settling_time_s,
        acquisition_s: input.acquisition_s,
        pass,
        margin_s: settling_time_s.map(|t| input.acquisition_s - t),
        margin_ratio: settling_time_s.filter(|t| *t > 0.0).map(|t| input.acquisition_s / t),
        exact: matches!(metrics.method, crate::transient::Method::PoleResidue { .. }),
    })
}

/// The charge-reservoir check: the capacitance from the design's output to ground (its parts and
/// the load capacitance) against C_s; `None` when there is none (an amplifier output).
pub fn charge_reservoir(design: &Design, input: &AdcInput, bits: u32) -> Option<ChargeReservoir> {
    let is_ground = |n: &str| crate::circuit::is_ground_name(n);
    let at_output = |a: &str, b: &str| (a == design.output && is_ground(b)) || (b == design.output && is_ground(a));
    let mut filter_capacitance_f: f64 = design
        .elements
        .iter()
        .filter_map(|p| match p {
            Part::Capacitor { value, nodes, .. } if at_output(&nodes[0], &nodes[1]) => Some(*value),
            _ => None,
        })
        .sum();
    if let Some(load) = &design.load {
        if load.node == design.output {
            filter_capacitance_f += load.capacitance.unwrap_or(0.0);
        }
    }
    let cs = input.sampling_capacitance_f;
    if !(filter_capacitance_f > 0.0 && cs.is_finite() && cs > 0.0) {
        return None;
    }
    let droop_fraction = cs / (filter_capacitance_f + cs);
    Some(ChargeReservoir {
        filter_capacitance_f,
        sampling_capacitance_f: cs,
        ratio: filter_capacitance_f / cs,
        rule_met: filter_capacitance_f >= RESERVOIR_RATIO * cs,
        rule: "rule of thumb (common practice): filter capacitor at least 10× the sampling capacitor",
        droop_fraction,
        droop_lsb: droop_fraction * 2f64.powi(bits as i32),
    })
}

/// The noise budget of a design at the sampling input (see the module docs).
///
/// # Errors
/// As [`AdcRequirement::validate`], [`AdcError::BadValue`] for the temperature, and
/// [`AdcError::Noise`].
pub fn noise_budget(
    design: &Design,
    requirement: &AdcRequirement,
    temperature_k: f64,
) -> Result<NoiseBudget, AdcError> {
    requirement.validate()?;
    let options = NoiseOptions { temperature_k, ..NoiseOptions::default() };
    let lsb_v = requirement.lsb_v();
    let figure = |rms_v: f64| NoiseFigure { rms_v, lsb: rms_v / lsb_v };
    // A design without any resistance (an LC ladder from an ideal source) makes no thermal noise.
    let silent = |f_lo_hz: f64, f_hi_hz: f64| NoiseIntegral {
        f_lo_hz,
        f_hi_hz,
        total_rms_v: 0.0,
        total_v2: 0.0,
        contributions: Vec::new(),
        tail_v2: 0.0,
        relative_change: 0.0,
        panels: 0,
    };
    let (in_band, to_nyquist, total) = match NoiseAnalysis::for_design(design, &options) {
        Ok(mut analysis) => {
            let in_band = analysis.integrate(0.0, requirement.band_hz)?;
            let to_nyquist = analysis.integrate(0.0, requirement.sample_rate_hz / 2.0)?;
            let total = match analysis.integrate(0.0, f64::INFINITY) {
                Ok(total) => Some(total),
                Err(NoiseError::Unbounded { .. }) => None,
                Err(error) => return Err(error.into()),
            };
            (in_band, to_nyquist, total)
        }
        Err(NoiseError::Noiseless) => (
            silent(0.0, requirement.band_hz),
            silent(0.0, requirement.sample_rate_hz / 2.0),
            Some(silent(0.0, f64::INFINITY)),
        ),
        Err(error) => return Err(error.into()),
    };
    let kt_c_v2 = BOLTZMANN_J_PER_K * temperature_k / requirement.input.sampling_capacitance_f;
    let resistor_v2 = total.as_ref().map_or(to_nyquist.total_v2, |t| t.total_v2);
    let total_analog = figure((resistor_v2 + kt_c_v2).sqrt());
    let verdict = if total_analog.lsb < NOISE_THRESHOLD_LSB { Verdict::Pass } else { Verdict::Warn };
    Ok(NoiseBudget {
        temperature_k,
        lsb_v,
        resistors_in_band: figure(in_band.total_rms_v),
        resistors_to_nyquist: figure(to_nyquist.total_rms_v),
        resistors_total: total.as_ref().map(|t| figure(t.total_rms_v)),
        kt_over_c: figure(kt_c_v2.sqrt()),
        quantization: figure(lsb_v / 12f64.sqrt()),
        total_analog,
        verdict,
        threshold_lsb: NOISE_THRESHOLD_LSB,
        contributions_to_nyquist: to_nyquist.contributions,
    })
}

fn alignment_of(recommendation: &Recommendation) -> Alignment {
    match (recommendation.alignment, recommendation.ripple_db) {
        ("chebyshev", Some(ripple_db)) => Alignment::Chebyshev { ripple_db },
        ("bessel", _) => Alignment::Bessel { normalization: BesselNormalization::Magnitude },
        ("critical", _) => Alignment::Critical,
        _ => Alignment::Butterworth,
    }
}

fn ideal_target(alignment: Alignment, order: usize, cutoff_hz: f64) -> Result<Zpk, AdcError> {
    let prototype = lowpass_prototype(alignment, order).map_err(AdcError::Fit)?;
    denormalize(&prototype, ResponseType::LowPass, Band::Cutoff(cutoff_hz)).map_err(AdcError::Fit)
}

fn all_poles_real(target: &Zpk) -> bool {
    target.poles.iter().all(|p| p.im.abs() <= 1e-9 * p.norm())
}

/// τ(ω) = Σ_p −Re p/((Re p)² + (ω − Im p)²) for an all-pole H (references §7), spread over 0 … band.
fn zpk_delay_spread(target: &Zpk, band_hz: f64) -> f64 {
    let delay = |f: f64| {
        let omega = TAU * f;
        target.poles.iter().map(|p| -p.re / (p.re * p.re + (omega - p.im).powi(2))).sum::<f64>()
    };
    let (lo, hi) = passband_frequencies(band_hz)
        .iter()
        .map(|&f| delay(f))
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), d| (lo.min(d), hi.max(d)));
    hi - lo
}

/// 0 Hz and a linear grid up to the band edge.
fn passband_frequencies(band_hz: f64) -> Vec<f64> {
    (0..=PASSBAND_POINTS).map(|k| band_hz * k as f64 / PASSBAND_POINTS as f64).collect()
}

/// Droop, alias attenuation and the mask check of a response given as a function of f.
fn figures_of(
    requirement: &AdcRequirement,
    mask: &SpecMask,
    mut response: impl FnMut(f64) -> Option<num_complex::Complex64>,
) -> Result<AliasFigures, AdcError> {
    let edge = requirement.stopband_edge_hz();
    let first_alias = requirement.sample_rate_hz - requirement.band_hz;
    let nyquist = requirement.sample_rate_hz / 2.0;
    let mut frequencies = passband_frequencies(requirement.band_hz);
    // The stopband from its edge to 100× the sample rate, 100 points per decade, and the two
    // named frequencies exactly.
    let decades = (100.0 * requirement.sample_rate_hz / edge).log10();
    let n = (100.0 * decades).ceil() as usize;
    frequencies.extend((0..=n).map(|k| edge * 10f64.powf(decades * k as f64 / n as f64)));
    frequencies.extend([first_alias, nyquist]);
    let mut gains = Vec::with_capacity(frequencies.len());
    for &f in &frequencies {
        let h = response(f).ok_or(AdcError::Unsolvable { f_hz: f })?;
        gains.push(Some(magnitude_db(h).unwrap_or(-400.0).max(-400.0)));
    }
    let report = check_points(mask, &frequencies, &gains, &[])?;
    let at = |f: f64| {
        let idx = frequencies.iter().rposition(|x| *x == f).expect("the named frequency is on the grid");
        report.reference_gain_db - gains[idx].expect("every point was solved")
    };
    Ok(AliasFigures {
        first_alias_attenuation_db: at(first_alias),
        nyquist_attenuation_db: at(nyquist),
        passband_droop_db: report.passband.measured,
        meets_mask: report.pass,
        worst_margin_db: report.worst_margin_db,
    })
}

fn group_delay_of(system: &mut AcSystem, band_hz: f64) -> Result<GroupDelay, AdcError> {
    let mut delays = Vec::with_capacity(PASSBAND_POINTS + 1);
    for f in passband_frequencies(band_hz) {
        let solution = system.solve_at(f, Detail::Transfer).map_err(|_| AdcError::Unsolvable { f_hz: f })?;
        delays.push(group_delay_s(&solution).ok_or(AdcError::Unsolvable { f_hz: f })?);
    }
    let min_s = delays.iter().copied().fold(f64::INFINITY, f64::min);
    let max_s = delays.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    Ok(GroupDelay { dc_s: delays[0], min_s, max_s, spread_s: max_s - min_s })
}

fn fit_design(
    requirement: &AdcRequirement,
    options: &AdcOptions,
    recommendation: &Recommendation,
    alignment: Alignment,
) -> Result<(Design, Vec<FrontEndPart>), AdcError> {
    let passive = |topology: Topology, resistor_range: (f64, f64)| -> Result<(Design, Vec<FrontEndPart>), AdcError> {
        let fitted = fit(
            &Requirement {
                response: ResponseType::LowPass,
                alignment,
                order: recommendation.order,
                band: Band::Cutoff(recommendation.cutoff_hz),
                source_resistance: requirement.source_ohms,
                load_resistance: None,
                load_capacitance: None,
            },
            topology,
            &FitOptions {
                parts: PartSets {
                    resistors: options.resistors.clone(),
                    capacitors: options.capacitors.clone(),
                    inductors: options.inductors.clone(),
                },
                combine: Combine::Single,
                alternatives: 1,
                resistor_range,
                name: options.name.clone(),
            },
        )
        .map_err(AdcError::Fit)?;
        let best = fitted.alternatives.into_iter().next().ok_or_else(|| {
            AdcError::Fit(SynthesisError::NoCandidates { reason: "the fit returned no alternative".to_string() })
        })?;
        let parts = best
            .parts
            .iter()
            .map(|p| FrontEndPart {
                reference: p.reference.clone(),
                kind: p.kind,
                ideal_value: p.ideal_value,
                chosen_value: p.choice.value,
                series: p.series.clone(),
                deviation_pct: p.deviation_pct,
            })
            .collect();
        Ok((best.design, parts))
    };
    match recommendation.realization {
        Realization::PassiveRc | Realization::Auto => passive(Topology::Rc, options.passive_resistor_range),
        Realization::Lc => passive(Topology::Ladder(FirstElement::Shunt), options.passive_resistor_range),
        Realization::Active => {
            let (resistor_range, capacitor_range) = options.active_ranges;
            let cascade = fit_cascade(
                &CascadeSpec {
                    topology: ActiveTopology::SallenKey,
                    alignment,
                    order: recommendation.order,
                    response: ResponseType::LowPass,
                    cutoff_hz: recommendation.cutoff_hz,
                },
                &ActiveOptions { op_amp: options.op_amp, name: options.name.clone(), ..ActiveOptions::default() },
                &ActiveParts {
                    resistors: options.resistors.clone(),
                    capacitors: options.capacitors.clone(),
                    resistor_range,
                    capacitor_range,
                },
            )
            .map_err(AdcError::Active)?;
            let parts = cascade
                .sections
                .iter()
                .flat_map(|s| s.parts.iter())
                .map(|p| FrontEndPart {
                    reference: p.reference.clone(),
                    kind: p.kind,
                    ideal_value: p.ideal_value,
                    chosen_value: p.choice.value,
                    series: p.series.clone(),
                    deviation_pct: p.deviation_pct,
                })
                .collect();
            let mut design = cascade.design;
            // The real source drives the first section.
            design.source.resistance = requirement.source_ohms;
            Ok((design, parts))
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn requirement() -> AdcRequirement {
        AdcRequirement {
            sample_rate_hz: 100e3,
            band_hz: 5e3,
            bits: 12,
            full_scale_v: 3.3,
            rule: AttenuationRule::SnrFormula,
            alias_band: AliasBand::FirstAlias,
            max_droop_db: 0.5,
            source_ohms: 50.0,
            input: AdcInput { sampling_capacitance_f: 20e-12, switch_ohms: 500.0, acquisition_s: 2e-6 },
        }
    }

    #[test]
    fn rules_give_the_exact_forms() {
        // Source: references §6 (Kester, ADI MT-001): 6.02·N + 1.76 dB, exact 74.008 dB at 12 bits.
        assert!((AttenuationRule::SnrFormula.attenuation_db(12) - 74.008).abs() < 5e-4);
        // ½ LSB: 20·log10(2^13) = 78.27 dB.
        assert!((AttenuationRule::HalfLsb.attenuation_db(12) - 20.0 * 8192f64.log10()).abs() < 1e-12);
        assert_eq!(AttenuationRule::Explicit { db: 60.0 }.attenuation_db(12), 60.0);
        assert!(AttenuationRule::SnrFormula.statement(12).contains("74.008"));
    }

    #[test]
    fn mask_edges_follow_the_alias_band() {
        let r = requirement();
        assert_eq!(r.stopband_edge_hz(), 95e3);
        let r = AdcRequirement { alias_band: AliasBand::Nyquist, ..requirement() };
        assert_eq!(r.stopband_edge_hz(), 50e3);
        let mask = r.spec_mask().unwrap();
        assert_eq!(mask.max_passband_loss_db, 0.5);
        assert!((r.lsb_v() - 3.3 / 4096.0).abs() < 1e-18);
    }

    #[test]
    fn bad_input_gets_typed_errors() {
        let low = AdcRequirement { sample_rate_hz: 9e3, ..requirement() };
        let error = low.validate().unwrap_err();
        assert_eq!(error, AdcError::SampleRateTooLow { sample_rate_hz: 9e3, band_hz: 5e3 });
        let text = error.to_string();
        assert!(text.contains("9000 Hz") && text.contains("5000 Hz") && !text.ends_with('.'), "{text}");
        // Exactly 2·band has no transition band either.
        assert!(matches!(
            AdcRequirement { sample_rate_hz: 10e3, ..requirement() }.validate(),
            Err(AdcError::SampleRateTooLow { .. })
        ));
        assert_eq!(AdcRequirement { bits: 0, ..requirement() }.validate().unwrap_err(), AdcError::BadBits { bits: 0 });
        assert_eq!(
            AdcRequirement { bits: 33, ..requirement() }.validate().unwrap_err(),
            AdcError::BadBits { bits: 33 }
        );
        assert!(AdcError::BadBits { bits: 0 }.to_string().contains("from 1 to 32"));
        for bad in [
            AdcRequirement { band_hz: f64::NAN, ..requirement() },
            AdcRequirement { full_scale_v: 0.0, ..requirement() },
            AdcRequirement { max_droop_db: -1.0, ..requirement() },
            AdcRequirement { source_ohms: -5.0, ..requirement() },
            AdcRequirement { input: AdcInput { switch_ohms: 0.0, ..requirement().input }, ..requirement() },
            AdcRequirement { input: AdcInput { acquisition_s: f64::INFINITY, ..requirement().input }, ..requirement() },
        ] {
            assert!(matches!(bad.validate(), Err(AdcError::BadValue { .. })), "{bad:?}");
        }
        let weak = AdcRequirement { rule: AttenuationRule::Explicit { db: 0.3 }, ..requirement() };
        assert!(matches!(weak.validate(), Err(AdcError::AttenuationNotAboveDroop { .. })));
    }

    #[test]
    fn an_oversampled_12_bit_front_end_is_planned_and_checked() {
        let report = plan_front_end(&requirement(), &AdcOptions::default()).unwrap();
        let rec = &report.recommendation;
        assert!(report.ideal.meets_mask);
        assert!(report.ideal.first_alias_attenuation_db >= 74.0);
        // The lowest order wins.
        let lowest = report.orders.iter().filter_map(|o| o.order).min().unwrap();
        assert_eq!(rec.order, lowest);
        assert!(!report.parts.is_empty());
        // Nyquist (50 kHz) is below the first alias (95 kHz), so it is attenuated less.
        assert!(report.fitted.nyquist_attenuation_db < report.fitted.first_alias_attenuation_db);
        assert!(report.group_delay.dc_s > 0.0 && report.group_delay.spread_s >= 0.0);
        assert!(report.noise.kt_over_c.rms_v > 0.0);
        let json = serde_json::to_string(&report).unwrap();
        assert!(json.contains("\"recommendation\""));
    }

    #[test]
    fn an_active_output_has_no_reservoir_and_settles_as_rsw_cs() {
        // An ideal op-amp output drives R_sw·C_s alone: t = ln(2^(N+1))·R_sw·C_s (references §6).
        let options = AdcOptions { realization: Realization::Active, ..AdcOptions::default() };
        let report = plan_front_end(&requirement(), &options).unwrap();
        assert!(report.charge_reservoir.is_none());
        let tau = 500.0 * 20e-12;
        let expected = 8192f64.ln() * tau;
        let got = report.sampling.settling_time_s.unwrap();
        assert!((got - expected).abs() < 1e-9 * expected, "{got} vs {expected}");
        assert!(report.sampling.pass);
    }

    #[test]
    fn a_passive_rc_front_end_is_fitted_with_its_reservoir_check() {
        // A slow band far below the sample rate: one real pole (or a critical ladder) is enough.
        for (band_hz, sample_rate_hz, realization) in
            [(100.0, 2e6, Realization::Auto), (1e3, 400e3, Realization::PassiveRc)]
        {
            let r = AdcRequirement { band_hz, sample_rate_hz, max_droop_db: 1.0, ..requirement() };
            let options = AdcOptions { realization, ..AdcOptions::default() };
            let report = plan_front_end(&r, &options).unwrap();
            let rec = &report.recommendation;
            eprintln!(
                "{band_hz} Hz at {sample_rate_hz} Hz: {} order {} fc {:.2} as {:?}; parts {:?}; fitted alias {:.2} dB droop {:.3} dB meets {}; sampling {:?} s; reservoir {:?}; noise {:.4} LSB {:?}; warnings {:?}",
                rec.alignment,
                rec.order,
                rec.cutoff_hz,
                rec.realization,
                report.parts.iter().map(|p| (p.reference.clone(), p.chosen_value)).collect::<Vec<_>>(),
                report.fitted.first_alias_attenuation_db,
                report.fitted.passband_droop_db,
                report.fitted.meets_mask,
                report.sampling.settling_time_s,
                report.charge_reservoir.map(|c| (c.ratio, c.droop_lsb)),
                report.noise.total_analog.lsb,
                report.noise.verdict,
                report.warnings,
            );
            assert_eq!(rec.realization, Realization::PassiveRc);
            assert!(report.orders.iter().any(|o| o.rc_realizable && o.order == Some(rec.order)));
            let reservoir = report.charge_reservoir.expect("an RC ladder ends in a capacitor");
            assert!(reservoir.filter_capacitance_f > 0.0);
            assert!((reservoir.droop_fraction - 20e-12 / (reservoir.filter_capacitance_f + 20e-12)).abs() < 1e-18);
            // The ladder's resistors and the 50 Ω source all appear in the noise.
            assert!(report.noise.contributions_to_nyquist.iter().any(|c| c.reference == "source"));
            assert!(report.noise.resistors_total.is_some());
            // The sampling network through a passive filter settles no faster than R_sw·C_s alone.
            let alone = 8192f64.ln() * 500.0 * 20e-12;
            assert!(report.sampling.settling_time_s.unwrap() >= alone * (1.0 - 1e-9));
        }
    }

    #[test]
    fn an_lc_ladder_can_be_asked_for() {
        // The 50 Ω source terminates the ladder; the converter input is an open load.
        let options = AdcOptions { realization: Realization::Lc, ..AdcOptions::default() };
        let report = plan_front_end(&requirement(), &options).unwrap();
        assert_eq!(report.recommendation.realization, Realization::Lc);
        assert!(report.parts.iter().any(|p| p.kind == "inductor"));
        assert!(report.ideal.meets_mask);
        assert!(report.fitted.first_alias_attenuation_db > 60.0, "{:?}", report.fitted);
        // With no resistor but the source, the noise is the source resistance's alone.
        assert!(report.noise.contributions_to_nyquist.iter().all(|c| c.reference == "source"));
    }
}
