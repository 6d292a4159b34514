//! Active RC filters: the op-amp model, the buffered first-order section, and cascades of
//! Sallen-Key ([`crate::sallen_key`]) or multiple-feedback ([`crate::multiple_feedback`])
//! second-order sections that realize an alignment of order 1 to 8, with E-series fitting.
//!
//! # The op-amp model
//! [`OpAmp::Ideal`] is modelled **exactly**, with no large finite gain:
//! - a **follower** (the unity-gain Sallen-Key stage and the first-order buffer) is a VCVS of gain
//!   exactly 1 from the non-inverting input to the output: V(out) = V(+). That is what an ideal
//!   op-amp with its output tied to its inverting input does.
//! - an **inverting stage with its non-inverting input grounded** (multiple feedback) is the
//!   nullor of the ideal limit (virtual ground: V(−) = 0, no input current, the output takes
//!   whatever current it must). The MNA has no nullor element, so it is written as a VCVS of gain
//!   exactly 1 that senses its own output: V(out) − 0 = 1·(V(out) − V(−)). Its branch equation
//!   reduces to V(−) = 0 exactly (the two V(out) terms cancel to an exact 0.0 in the matrix), and
//!   its branch current is free, which is the norator. A large constant gain A would instead leave
//!   a relative error of about (noise gain)/A; this form has none.
//!
//! [`OpAmp::SinglePole`] wraps the real feedback loop: a VCVS of (V+ − V−) with the single-pole
//! gain A(s) = A0/(1 + s/ωp), ωp = 2π·GBW/A0, drives an internal node, and the output resistance
//! R_o joins it to the output pin (omitted when R_o = 0). Finite gain-bandwidth and R_o effects,
//! such as the high-frequency feedthrough of the Sallen-Key low-pass
//! ([`crate::sallen_key::SallenKeyLowPass::feedthrough_limit`]), are therefore real circuit
//! behaviour of the design, not corrections added afterwards.
//!
//! # Cascades
//! [`design_cascade`] and [`fit_cascade`] take an alignment and order (1..=8), low-pass or
//! high-pass, and a cutoff. The sections are those of
//! [`crate::prototype::lowpass_prototype`]`(..).sections()`, denormalised: low-pass ω0 = ωc·ω0′,
//! high-pass ω0 = ωc/ω0′ (the substitution s → ωc/s keeps Q). They are ordered as
//! [`crate::prototype::Zpk::sections`] lists them: real poles (first-order sections) first, then
//! ascending Q, so the section with the highest peaking comes last and earlier stages do not clip
//! on its peak (common practice; the rule of rising Q is the one TI's *Op Amps for Everyone*
//! ch. 16 follows, from memory). Every section is buffered by its own op-amp, so the sections do
//! not load each other and the cascade's H is the product of the sections' H (for an ideal
//! op-amp). The design is driven by an ideal source (0 Ω) at node `in`; the output is node `out`,
//! with the optional load resistance there.
//!
//! Passband gain: unity-gain Sallen-Key and first-order sections have gain +1; each
//! multiple-feedback section has gain −K (K = [`ActiveOptions::gain`], default 1). The cascade's
//! nominal passband gain is the product, which differs from the alignment target's passband gain
//! for even-order Chebyshev (whose target is −ripple dB at DC); [`ActiveCascade::expected_response`]
//! is the target scaled to the cascade's nominal passband gain.
//!
//! # Fitting
//! [`fit_cascade`] fits each section on its own (buffered sections do not interact): every
//! standard capacitor in a window derived from the resistor range, the few standard capacitor
//! values just above the minimum ratio a unity-gain low-pass needs for its Q, and for each the
//! resistors' exact values snapped to the two standard neighbours either side. The objective is
//! √(e_f0² + e_Q² + e_K²) of relative errors in closed form (e_K, the gain error, is 0 for
//! Sallen-Key); ties go to resistors nearer the geometric centre of the resistor range. Then the
//! whole design is swept by MNA with the chosen op-amp model, and the worst deviation in dB from
//! [`ActiveCascade::expected_response`] is reported over the deviation band of [`crate::fit`]
//! (low-pass [fc/10, 3·fc], high-pass [fc/3, 10·fc], common practice), at points where the target
//! is within [`crate::fit::DEVIATION_FLOOR_DB`] of its peak.
//!
//! # Sensitivities
//! Each section reports the relative sensitivities S_x^F = (dF/F)/(dx/x) = ∂ln F/∂ln x of f0 and
//! Q to every part, in closed form from its f0 and Q formulas (see each section type).
//!
//! # Cautions
//! The model is small-signal and linear: it knows nothing of supply rails, output swing, slew
//! rate or output current. A high-Q section peaks inside the cascade and can clip before the
//! output shows it. Check the op-amp's data sheet, and keep mains-powered supplies to licensed
//! practice and local codes (see [`crate::cautions`]).

use std::f64::consts::TAU;
use std::fmt;

use num_complex::Complex64;

use crate::design::{Design, Load, Part, Source, FORMAT, VERSION};
use crate::eseries::PartValues;
use crate::fit::{Arrangement, Choice, FittedPart, DEVIATION_FLOOR_DB, DEVIATION_POINTS_PER_DECADE};
use crate::mna::{AcSystem, Detail};
use crate::multiple_feedback::{MultipleFeedbackHighPass, MultipleFeedbackLowPass};
use crate::prototype::{lowpass_prototype, Section, Zpk, MAX_ORDER};
use crate::sallen_key::{SallenKeyHighPass, SallenKeyLowPass};
use crate::sweep::{sweep, FrequencyGrid, Spacing};
use crate::synthesis::{Alignment, Band, ResponseType, SynthesisError};

/// The op-amp model of every active section.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum OpAmp {
    /// Infinite gain and bandwidth, zero output resistance, modelled exactly (see the module docs).
    Ideal,
    /// A dominant-pole op-amp: A(s) = A0/(1 + s·A0/(2π·GBW)), behind an output resistance.
    SinglePole {
        /// Gain-bandwidth product in Hz (> 0).
        gbw_hz: f64,
        /// DC open-loop gain A0 (dimensionless, > 1).
        dc_gain: f64,
        /// Open-loop output resistance R_o in Ω (≥ 0).
        output_ohms: f64,
    },
}

/// The kind of second-order section a cascade is made of.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum ActiveTopology {
    /// Unity-gain Sallen-Key sections.
    SallenKey,
    /// Multiple-feedback (inverting, gain −K) sections.
    MultipleFeedback,
}

/// Why an active section or cascade cannot be made.
#[derive(Debug, Clone, PartialEq)]
pub enum ActiveError {
    /// A frequency is not finite and positive.
    BadFrequency {
        /// Which, e.g. "f0" or "cutoff".
        what: &'static str,
        /// The value in Hz.
        f_hz: f64,
    },
    /// A Q that is not finite and positive.
    BadQ {
        /// The Q.
        q: f64,
    },
    /// A part value, gain, impedance level or range that is not finite and positive.
    BadValue {
        /// Which, e.g. "capacitor C2".
        what: &'static str,
        /// The value in SI units.
        value: f64,
    },
    /// A capacitor ratio too small for the Q of a unity-gain low-pass section.
    RatioTooSmall {
        /// "Sallen-Key" or "multiple-feedback".
        topology: &'static str,
        /// The ratio given (feedback or grounded capacitor over the other, see the section type).
        ratio: f64,
        /// The Q asked for.
        q: f64,
        /// The smallest ratio that gives this Q.
        min_ratio: f64,
    },
    /// An order outside 1..=8.
    BadOrder {
        /// The order asked for.
        order: usize,
    },
    /// A band-pass or band-stop response, which these cascades do not make.
    BadResponse {
        /// The response asked for.
        response: ResponseType,
    },
    /// An op-amp parameter that is not usable.
    BadOpAmp {
        /// Which, e.g. "gain-bandwidth product".
        what: &'static str,
        /// The value.
        value: f64,
        /// What is accepted.
        accepted: &'static str,
    },
    /// The alignment itself cannot be made at this order (e.g. odd Linkwitz-Riley).
    Prototype(SynthesisError),
    /// The built design could not be swept (a fault in the builder, not in the request).
    Unsweepable {
        /// What the engine reported.
        reason: String,
    },
    /// No standard parts in range realize a section.
    NoCandidates {
        /// The section number (1-based).
        section: usize,
        /// Why.
        reason: String,
    },
}

/// The relative sensitivities of a section's f0 and Q to one part: S_x^F = (dF/F)/(dx/x).
#[derive(Debug, Clone, PartialEq)]
pub struct PartSensitivity {
    /// The part's reference (local to the section, e.g. `R1`, or the design's, e.g. `R21`).
    pub reference: String,
    /// S_x^{f0} (for a first-order section, of its pole frequency).
    pub f0: f64,
    /// S_x^{Q}, `None` for a first-order section.
    pub q: Option<f64>,
}

/// A buffered first-order RC section: low-pass R in series then C to ground, or high-pass C in
/// series then R to ground, into a unity-gain follower.
///
/// H(s) = 1/(1 + sRC) (low-pass) or sRC/(1 + sRC) (high-pass), f_c = 1/(2π·R·C) (common practice).
/// Local references: `R1`, `C1`; the follower is `U`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FirstOrderSection {
    /// Low-pass or high-pass.
    pub response: ResponseType,
    /// The resistor in Ω.
    pub r1: f64,
    /// The capacitor in F.
    pub c1: f64,
}

/// One section of a cascade, with its part values.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum ActiveSection {
    /// A buffered first-order RC section.
    FirstOrder(FirstOrderSection),
    /// A unity-gain Sallen-Key low-pass.
    SallenKeyLowPass(SallenKeyLowPass),
    /// A unity-gain Sallen-Key high-pass.
    SallenKeyHighPass(SallenKeyHighPass),
    /// A multiple-feedback low-pass.
    MultipleFeedbackLowPass(MultipleFeedbackLowPass),
    /// A multiple-feedback high-pass.
    MultipleFeedbackHighPass(MultipleFeedbackHighPass),
}

/// What a cascade must realize.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CascadeSpec {
    /// Sallen-Key or multiple-feedback second-order sections.
    pub topology: ActiveTopology,
    /// The alignment.
    pub alignment: Alignment,
    /// The order, 1..=8.
    pub order: usize,
    /// [`ResponseType::LowPass`] or [`ResponseType::HighPass`].
    pub response: ResponseType,
    /// The cutoff in Hz, in the alignment's meaning (see [`crate::prototype::lowpass_prototype`]).
    pub cutoff_hz: f64,
}

/// Options of an active cascade.
#[derive(Debug, Clone, PartialEq)]
pub struct ActiveOptions {
    /// The op-amp model of every section.
    pub op_amp: OpAmp,
    /// K, the magnitude of each multiple-feedback section's passband gain −K (default 1).
    pub gain: f64,
    /// The resistance level of an unfitted ([`design_cascade`]) design in Ω (default 10 kΩ):
    /// equal-resistor sections use it as R.
    pub impedance_ohms: f64,
    /// Load resistance at the output in Ω (`None` = open).
    pub load_ohms: Option<f64>,
    /// Load capacitance in parallel at the output in F (`None` = none).
    pub load_farads: Option<f64>,
    /// The driving source's resistance in Ω (0 = ideal). The first section sees it in series
    /// with its input. A low-pass fit absorbs it into the first section's input resistor R1 (chosen
    /// for R1 + Rs); a high-pass section starts with a capacitor and cannot, so there the measured
    /// deviation shows it.
    pub source_ohms: f64,
    /// A name for the design.
    pub name: String,
}

/// The values parts may take in [`fit_cascade`].
#[derive(Debug, Clone, PartialEq)]
pub struct ActiveParts {
    /// Resistor values (e.g. E96).
    pub resistors: PartValues,
    /// Capacitor values (e.g. E12 or a stock list).
    pub capacitors: PartValues,
    /// Allowed resistors in Ω, default 1 kΩ to 100 kΩ (common practice for op-amp RC filters:
    /// below, the op-amp's output drive and R_o matter; above, noise and bias currents).
    pub resistor_range: (f64, f64),
    /// Allowed capacitors in F, default 100 pF to 10 µF (common practice: below, stray
    /// capacitance matters; above, film capacitors get large).
    pub capacitor_range: (f64, f64),
}

/// A section's target: f0 (or a first-order pole frequency) and Q.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SectionTarget {
    /// f0 of a second-order section, or the pole frequency of a first-order one, in Hz.
    pub f0_hz: f64,
    /// Q, `None` for a first-order section.
    pub q: Option<f64>,
}

/// One section of a built cascade: its target, parts, what they achieve and the sensitivities.
#[derive(Debug, Clone, PartialEq)]
pub struct SectionResult {
    /// The section number, 1-based, in signal order.
    pub index: usize,
    /// What the section should realize.
    pub target: SectionTarget,
    /// The section with its (chosen) values.
    pub section: ActiveSection,
    /// Its parts with the design's references, ideal and chosen values.
    pub parts: Vec<FittedPart>,
    /// The achieved f0 (or pole frequency) in Hz, closed form with an ideal op-amp.
    pub f0_hz: f64,
    /// The achieved Q (`None` for first order).
    pub q: Option<f64>,
    /// The achieved passband gain (+1, or −K for multiple feedback).
    pub gain: f64,
    /// 100·(achieved − target)/target for f0.
    pub f0_error_pct: f64,
    /// The same for Q.
    pub q_error_pct: Option<f64>,
    /// S^{f0} and S^{Q} for every part, with the design's references.
    pub sensitivities: Vec<PartSensitivity>,
}

/// A built cascade: the target, the sections, the design and its measured deviation.
#[derive(Debug, Clone, PartialEq)]
pub struct ActiveCascade {
    /// What was asked.
    pub spec: CascadeSpec,
    /// The denormalised alignment target (rad/s), as [`crate::transform::denormalize`] gives it.
    pub target: Zpk,
    /// The cascade's nominal passband gain: the product of the sections' target gains.
    pub passband_gain: f64,
    /// The sections in signal order.
    pub sections: Vec<SectionResult>,
    /// The whole circuit: ideal source at `in`, sections, output `out` with the load.
    pub design: Design,
    /// The band over which the deviation is measured, in Hz.
    pub deviation_band_hz: (f64, f64),
    /// The worst |dB(design, MNA, with the chosen op-amp) − dB(expected)| over the band.
    pub max_response_deviation_db: f64,
}

impl fmt::Display for ActiveError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::BadFrequency { what, f_hz } => {
                write!(f, "the {what} {f_hz} Hz is not usable; give a finite frequency above 0 Hz")
            }
            Self::BadQ { q } => write!(f, "Q {q} is not usable; give a finite Q above 0"),
            Self::BadValue { what, value } => {
                write!(f, "the {what} {value} is not usable; give a finite value above 0")
            }
            Self::RatioTooSmall { topology, ratio, q, min_ratio } => write!(
                f,
                "a unity-gain {topology} low-pass cannot reach Q {q} with a capacitor ratio of {ratio}; use a ratio of at least {min_ratio:.6}"
            ),
            Self::BadOrder { order } => {
                write!(f, "order {order} cannot be made as an active cascade; use an order from 1 to {MAX_ORDER}")
            }
            Self::BadResponse { response } => write!(
                f,
                "active cascades make low-pass and high-pass responses, not {}; ask for lowpass or highpass",
                response.name()
            ),
            Self::BadOpAmp { what, value, accepted } => {
                write!(f, "the op-amp {what} {value} is not usable; give {accepted}")
            }
            Self::Prototype(error) => write!(f, "{error}"),
            Self::Unsweepable { reason } => write!(
                f,
                "the active design could not be swept: {reason}; this is a fault in the section builder, so please report the request"
            ),
            Self::NoCandidates { section, reason } => {
                write!(f, "no standard parts fit section {section}: {reason}; widen the resistor or capacitor range")
            }
        }
    }
}

impl std::error::Error for ActiveError {}

impl From<SynthesisError> for ActiveError {
    fn from(error: SynthesisError) -> Self {
        Self::Prototype(error)
    }
}

impl Default for ActiveOptions {
    fn default() -> Self {
        Self {
            op_amp: OpAmp::Ideal,
            gain: 1.0,
            impedance_ohms: 1e4,
            load_ohms: None,
            load_farads: None,
            source_ohms: 0.0,
            name: "active".to_string(),
        }
    }
}

impl ActiveParts {
    /// The given value sets with the default ranges (1 kΩ–100 kΩ, 100 pF–10 µF).
    pub fn new(resistors: PartValues, capacitors: PartValues) -> Self {
        Self { resistors, capacitors, resistor_range: (1e3, 1e5), capacitor_range: (1e-10, 1e-5) }
    }
}

impl OpAmp {
    /// Checks the model's parameters.
    ///
    /// # Errors
    /// [`ActiveError::BadOpAmp`] naming the parameter: GBW must be finite and > 0, A0 finite and
    /// > 1, R_o finite and ≥ 0.
    pub fn validate(&self) -> Result<(), ActiveError> {
        if let OpAmp::SinglePole { gbw_hz, dc_gain, output_ohms } = *self {
            if !(gbw_hz.is_finite() && gbw_hz > 0.0) {
                return Err(ActiveError::BadOpAmp {
                    what: "gain-bandwidth product (Hz)",
                    value: gbw_hz,
                    accepted: "a finite frequency above 0 Hz",
                });
            }
            if !(dc_gain.is_finite() && dc_gain > 1.0) {
                return Err(ActiveError::BadOpAmp {
                    what: "DC gain",
                    value: dc_gain,
                    accepted: "a finite open-loop gain above 1 (typically 1e5 to 1e6)",
                });
            }
            if !(output_ohms.is_finite() && output_ohms >= 0.0) {
                return Err(ActiveError::BadOpAmp {
                    what: "output resistance (Ω)",
                    value: output_ohms,
                    accepted: "a finite resistance of 0 Ω or more",
                });
            }
        }
        Ok(())
    }

    /// The open-loop gain A(jω) at `f_hz`, `None` for the ideal op-amp.
    pub fn open_loop_gain(&self, f_hz: f64) -> Option<Complex64> {
        match *self {
            OpAmp::Ideal => None,
            OpAmp::SinglePole { gbw_hz, dc_gain, .. } => {
                Some(Complex64::new(dc_gain, 0.0) / Complex64::new(1.0, f_hz * dc_gain / gbw_hz))
            }
        }
    }
}

impl FirstOrderSection {
    /// Designs the section for a pole frequency `f_hz` with capacitor `c1`: R = 1/(2π·f·C).
    ///
    /// # Errors
    /// [`ActiveError::BadFrequency`], [`ActiveError::BadValue`] or [`ActiveError::BadResponse`].
    pub fn design(response: ResponseType, f_hz: f64, c1: f64) -> Result<Self, ActiveError> {
        check_pass(response)?;
        check_frequency("pole frequency", f_hz)?;
        check_value("capacitor C1", c1)?;
        Ok(Self { response, r1: 1.0 / (TAU * f_hz * c1), c1 })
    }

    /// The pole frequency 1/(2π·R·C) in Hz.
    pub fn f_hz(&self) -> f64 {
        1.0 / (TAU * self.r1 * self.c1)
    }

    /// The closed-form H(s) with an ideal follower, s in rad/s.
    pub fn transfer(&self, s: Complex64) -> Complex64 {
        let x = s * self.r1 * self.c1;
        match self.response {
            ResponseType::HighPass => x / (x + 1.0),
            _ => (x + 1.0).inv(),
        }
    }

    /// S^{f} = −1 for both parts.
    pub fn sensitivities(&self) -> Vec<PartSensitivity> {
        ["R1", "C1"].iter().map(|r| PartSensitivity { reference: r.to_string(), f0: -1.0, q: None }).collect()
    }

    /// Adds the section as section number `section` between nodes `input` and `output`.
    pub fn add_to(&self, design: &mut Design, section: usize, input: &str, output: &str, op_amp: &OpAmp) {
        let mid = node(section, "a");
        match self.response {
            ResponseType::HighPass => {
                push_capacitor(design, &reference("C1", section), self.c1, input, &mid);
                push_resistor(design, &reference("R1", section), self.r1, &mid, "0");
            }
            _ => {
                push_resistor(design, &reference("R1", section), self.r1, input, &mid);
                push_capacitor(design, &reference("C1", section), self.c1, &mid, "0");
            }
        }
        add_follower(design, section, &mid, output, op_amp);
    }
}

impl ActiveSection {
    /// f0 (or the first-order pole frequency) in Hz, closed form.
    pub fn f0_hz(&self) -> f64 {
        match self {
            Self::FirstOrder(s) => s.f_hz(),
            Self::SallenKeyLowPass(s) => s.f0_hz(),
            Self::SallenKeyHighPass(s) => s.f0_hz(),
            Self::MultipleFeedbackLowPass(s) => s.f0_hz(),
            Self::MultipleFeedbackHighPass(s) => s.f0_hz(),
        }
    }

    /// Q in closed form, `None` for first order.
    pub fn q(&self) -> Option<f64> {
        match self {
            Self::FirstOrder(_) => None,
            Self::SallenKeyLowPass(s) => Some(s.q()),
            Self::SallenKeyHighPass(s) => Some(s.q()),
            Self::MultipleFeedbackLowPass(s) => Some(s.q()),
            Self::MultipleFeedbackHighPass(s) => Some(s.q()),
        }
    }

    /// The passband gain: +1, or −K for multiple feedback.
    pub fn gain(&self) -> f64 {
        match self {
            Self::MultipleFeedbackLowPass(s) => -s.gain(),
            Self::MultipleFeedbackHighPass(s) => -s.gain(),
            _ => 1.0,
        }
    }

    /// The closed-form H(s) with an ideal op-amp, s in rad/s.
    pub fn transfer(&self, s: Complex64) -> Complex64 {
        match self {
            Self::FirstOrder(x) => x.transfer(s),
            Self::SallenKeyLowPass(x) => x.transfer(s),
            Self::SallenKeyHighPass(x) => x.transfer(s),
            Self::MultipleFeedbackLowPass(x) => x.transfer(s),
            Self::MultipleFeedbackHighPass(x) => x.transfer(s),
        }
    }

    /// The analytic sensitivities, with local references.
    pub fn sensitivities(&self) -> Vec<PartSensitivity> {
        match self {
            Self::FirstOrder(x) => x.sensitivities(),
            Self::SallenKeyLowPass(x) => x.sensitivities(),
            Self::SallenKeyHighPass(x) => x.sensitivities(),
            Self::MultipleFeedbackLowPass(x) => x.sensitivities(),
            Self::MultipleFeedbackHighPass(x) => x.sensitivities(),
        }
    }

    /// The parts as (local reference, kind, value), in the order the section adds them.
    pub fn parts(&self) -> Vec<(&'static str, &'static str, f64)> {
        match *self {
            Self::FirstOrder(x) => vec![("R1", "resistor", x.r1), ("C1", "capacitor", x.c1)],
            Self::SallenKeyLowPass(x) => vec![
                ("R1", "resistor", x.r1),
                ("R2", "resistor", x.r2),
                ("C1", "capacitor", x.c1),
                ("C2", "capacitor", x.c2),
            ],
            Self::SallenKeyHighPass(x) => vec![
                ("C1", "capacitor", x.c1),
                ("C2", "capacitor", x.c2),
                ("R1", "resistor", x.r1),
                ("R2", "resistor", x.r2),
            ],
            Self::MultipleFeedbackLowPass(x) => vec![
                ("R1", "resistor", x.r1),
                ("R2", "resistor", x.r2),
                ("R3", "resistor", x.r3),
                ("C1", "capacitor", x.c1),
                ("C2", "capacitor", x.c2),
            ],
            Self::MultipleFeedbackHighPass(x) => vec![
                ("C1", "capacitor", x.c1),
                ("C2", "capacitor", x.c2),
                ("C3", "capacitor", x.c3),
                ("R1", "resistor", x.r1),
                ("R2", "resistor", x.r2),
            ],
        }
    }

    /// Adds the section as section number `section` between nodes `input` and `output`.
    pub fn add_to(&self, design: &mut Design, section: usize, input: &str, output: &str, op_amp: &OpAmp) {
        match self {
            Self::FirstOrder(x) => x.add_to(design, section, input, output, op_amp),
            Self::SallenKeyLowPass(x) => x.add_to(design, section, input, output, op_amp),
            Self::SallenKeyHighPass(x) => x.add_to(design, section, input, output, op_amp),
            Self::MultipleFeedbackLowPass(x) => x.add_to(design, section, input, output, op_amp),
            Self::MultipleFeedbackHighPass(x) => x.add_to(design, section, input, output, op_amp),
        }
    }

    /// A design of this section alone: ideal source at `in`, output `out`, optional load.
    pub fn to_design(&self, op_amp: &OpAmp, load_ohms: Option<f64>) -> Design {
        let mut design = empty_design("section", load_ohms);
        self.add_to(&mut design, 1, "in", "out", op_amp);
        design
    }
}

impl ActiveCascade {
    /// The response the cascade should have with an ideal op-amp and exact values: the target
    /// scaled to the cascade's nominal passband gain, at `f_hz`.
    pub fn expected_response(&self, f_hz: f64) -> Complex64 {
        crate::transform::target_response(&self.target, f_hz) * (self.passband_gain / target_passband(&self.target))
    }
}

/// The section targets of a cascade, in signal order (real poles first, then ascending Q).
///
/// # Errors
/// [`ActiveError::BadOrder`], [`ActiveError::BadResponse`], [`ActiveError::BadFrequency`] for the
/// cutoff, or [`ActiveError::Prototype`] for an alignment that cannot take this order.
pub fn cascade_sections(spec: &CascadeSpec) -> Result<Vec<SectionTarget>, ActiveError> {
    check_spec(spec)?;
    let prototype = lowpass_prototype(spec.alignment, spec.order)?;
    let scale = |omega: f64| match spec.response {
        ResponseType::HighPass => spec.cutoff_hz / omega,
        _ => spec.cutoff_hz * omega,
    };
    Ok(prototype
        .sections()
        .into_iter()
        .map(|section| match section {
            Section::FirstOrder { omega } => SectionTarget { f0_hz: scale(omega), q: None },
            Section::SecondOrder { omega0, q } => SectionTarget { f0_hz: scale(omega0), q: Some(q) },
        })
        .collect())
}

/// Builds the cascade with exact (unrounded) values at the impedance level of `options`.
///
/// First-order sections have R = `impedance_ohms`. Low-pass second-order sections take the
/// capacitor ratio at its minimum for the Q (4Q² for Sallen-Key, 4Q²(1 + K) for multiple
/// feedback), which gives equal resistors (R1 = R2, or R2 = (1 + K)·R3), or the ratio 1 where that
/// minimum is below 1; their capacitors are scaled so that the resistors sit near
/// `impedance_ohms`. High-pass sections use equal capacitors (C2 = C/K for multiple feedback),
/// chosen so that the geometric mean of the two resistors is `impedance_ohms`.
///
/// # Errors
/// As [`cascade_sections`], and [`ActiveError::BadValue`] or [`ActiveError::BadOpAmp`] for
/// unusable options.
pub fn design_cascade(spec: &CascadeSpec, options: &ActiveOptions) -> Result<ActiveCascade, ActiveError> {
    check_options(options)?;
    let targets = cascade_sections(spec)?;
    let level = options.impedance_ohms;
    let mut sections = Vec::with_capacity(targets.len());
    for target in &targets {
        let omega = TAU * target.f0_hz;
        let section = match (target.q, spec.topology, spec.response) {
            (None, _, response) => {
                ActiveSection::FirstOrder(FirstOrderSection::design(response, target.f0_hz, 1.0 / (omega * level))?)
            }
            (Some(q), ActiveTopology::SallenKey, ResponseType::LowPass) => {
                // Equal resistors R: ω0 = 1/(R·√(C1·C2)), C1/C2 = ratio.
                let ratio = SallenKeyLowPass::min_capacitor_ratio(q).max(1.0);
                let c2 = 1.0 / (omega * level * ratio.sqrt());
                ActiveSection::SallenKeyLowPass(SallenKeyLowPass::design(target.f0_hz, q, c2, ratio)?)
            }
            (Some(q), ActiveTopology::SallenKey, _) => {
                // Equal capacitors: R1·R2 = 1/(ω0·C)², so C = 1/(ω0·level) gives √(R1·R2) = level.
                ActiveSection::SallenKeyHighPass(SallenKeyHighPass::design(target.f0_hz, q, 1.0 / (omega * level))?)
            }
            (Some(q), ActiveTopology::MultipleFeedback, ResponseType::LowPass) => {
                let ratio = MultipleFeedbackLowPass::min_capacitor_ratio(q, options.gain).max(1.0);
                let c2 = 1.0 / (omega * level * ratio.sqrt());
                ActiveSection::MultipleFeedbackLowPass(MultipleFeedbackLowPass::design(
                    target.f0_hz,
                    q,
                    options.gain,
                    c2,
                    ratio,
                )?)
            }
            (Some(q), ActiveTopology::MultipleFeedback, _) => {
                // C1 = C3 = C, C2 = C/K: R1·R2 = K/(ω0·C)², so C = √K/(ω0·level).
                let c = options.gain.sqrt() / (omega * level);
                ActiveSection::MultipleFeedbackHighPass(MultipleFeedbackHighPass::design(
                    target.f0_hz,
                    q,
                    options.gain,
                    c,
                )?)
            }
        };
        sections.push(section);
    }
    let chosen: Vec<(ActiveSection, Vec<FittedPart>)> = sections
        .iter()
        .enumerate()
        .map(|(idx, section)| {
            let parts = section
                .parts()
                .into_iter()
                .map(|(local, kind, value)| FittedPart {
                    reference: reference(local, idx + 1),
                    kind,
                    ideal_value: value,
                    choice: Choice { value, parts: vec![value], arrangement: Arrangement::Single },
                    series: "exact".to_string(),
                    tolerance_pct: None,
                    deviation_pct: 0.0,
                })
                .collect();
            (*section, parts)
        })
        .collect();
    assemble(spec, options, &targets, chosen)
}

/// Fits every section of the cascade to standard parts (see the module docs for the search and
/// its objective) and measures the fitted design against the target.
///
/// # Errors
/// As [`design_cascade`], [`ActiveError::BadValue`] for unusable ranges, and
/// [`ActiveError::NoCandidates`] naming the section when no standard parts in range realize it.
pub fn fit_cascade(
    spec: &CascadeSpec,
    options: &ActiveOptions,
    parts: &ActiveParts,
) -> Result<ActiveCascade, ActiveError> {
    check_options(options)?;
    check_range("resistor range", parts.resistor_range)?;
    check_range("capacitor range", parts.capacitor_range)?;
    let targets = cascade_sections(spec)?;
    let mut chosen = Vec::with_capacity(targets.len());
    for (idx, target) in targets.iter().enumerate() {
        let best = fit_section(spec, options, parts, target, idx + 1)?;
        // The ideal R1 of a first low-pass section is what remains after the source's resistance.
        let absorbed = if idx == 0 && spec.response == ResponseType::LowPass { options.source_ohms } else { 0.0 };
        let ideal_values =
            ideal_of(&best, target, options.gain).map(|x| with_series_input(x, -absorbed)).unwrap_or(best);
        let fitted_parts = best
            .parts()
            .into_iter()
            .zip(ideal_values.parts())
            .map(|((local, kind, value), (_, _, ideal_value))| {
                let set = if kind == "resistor" { &parts.resistors } else { &parts.capacitors };
                FittedPart {
                    reference: reference(local, idx + 1),
                    kind,
                    ideal_value,
                    choice: Choice { value, parts: vec![value], arrangement: Arrangement::Single },
                    series: set.name(),
                    tolerance_pct: set.tolerance_pct(),
                    deviation_pct: 100.0 * (value - ideal_value) / ideal_value,
                }
            })
            .collect();
        chosen.push((best, fitted_parts));
    }
    assemble(spec, options, &targets, chosen)
}

/// Fits an active cascade for the fitting front door ([`crate::fit::fit`] with
/// [`crate::fit::Topology::Active`]) and reports it as a fit result with one alternative: the
/// parts of every section, the worst section f0 and Q errors, and the response deviation measured
/// on the whole circuit with the chosen op-amp model, the source resistance and the load.
///
/// # Errors
/// [`SynthesisError::Unsupported`] for band-pass and band-stop, and the cascade's own errors as
/// [`SynthesisError::Realization`].
pub fn fit_requirement(
    requirement: &crate::fit::Requirement,
    topology: ActiveTopology,
    op_amp: OpAmp,
    options: &crate::fit::FitOptions,
) -> Result<crate::fit::FitResult, SynthesisError> {
    let realization = |e: ActiveError| match e {
        ActiveError::Prototype(inner) => inner,
        other => SynthesisError::Realization { message: other.to_string() },
    };
    let cutoff_hz = match (requirement.response, requirement.band) {
        (ResponseType::LowPass | ResponseType::HighPass, Band::Cutoff(f)) => f,
        (response, _) => {
            return Err(SynthesisError::Unsupported {
                asked: format!("an active {} cascade", response.name()),
                instead: "active sections make low-pass and high-pass responses; use an LC ladder or RLC section for band-pass and band-stop".to_string(),
            })
        }
    };
    let spec = CascadeSpec {
        topology,
        alignment: requirement.alignment,
        order: requirement.order,
        response: requirement.response,
        cutoff_hz,
    };
    let active_options = ActiveOptions {
        op_amp,
        load_ohms: requirement.load_resistance,
        load_farads: requirement.load_capacitance.filter(|&c| c > 0.0),
        source_ohms: requirement.source_resistance,
        name: options.name.clone(),
        ..ActiveOptions::default()
    };
    let mut parts = ActiveParts::new(options.parts.resistors.clone(), options.parts.capacitors.clone());
    // The fit's resistor range, narrowed to what suits op-amp sections (see [`ActiveParts`])
    // where the two overlap; a range outside that is the person's explicit choice and is used
    // as given.
    let (lo, hi) = options.resistor_range;
    let (suited_lo, suited_hi) = parts.resistor_range;
    let (overlap_lo, overlap_hi) = (lo.max(suited_lo), hi.min(suited_hi));
    parts.resistor_range = if overlap_lo <= overlap_hi { (overlap_lo, overlap_hi) } else { (lo, hi) };
    let fitted = fit_cascade(&spec, &active_options, &parts).map_err(realization)?;
    let ideal = design_cascade(&spec, &active_options).map_err(realization)?;
    let worst = |pick: &dyn Fn(&SectionResult) -> Option<f64>| {
        fitted.sections.iter().filter_map(pick).fold(None, |acc: Option<f64>, e| {
            Some(match acc {
                Some(a) if a.abs() >= e.abs() => a,
                _ => e,
            })
        })
    };
    let f0_error_pct = worst(&|s| Some(s.f0_error_pct));
    let q_error_pct = worst(&|s| s.q_error_pct);
    let objective = f0_error_pct.unwrap_or(0.0).abs().max(q_error_pct.unwrap_or(0.0).abs());
    let achieved_cutoff = achieved_cutoff_hz(&fitted);
    let alternative = crate::fit::Alternative {
        parts: fitted.sections.iter().flat_map(|s| s.parts.iter().cloned()).collect(),
        achieved: crate::fit::Figures { cutoff_hz: achieved_cutoff, f0_hz: None, q: None },
        cutoff_error_pct: achieved_cutoff.map(|f| 100.0 * (f - cutoff_hz) / cutoff_hz),
        f0_error_pct,
        q_error_pct,
        max_response_deviation_db: fitted.max_response_deviation_db,
        objective,
        design: fitted.design.clone(),
    };
    Ok(crate::fit::FitResult {
        ideal: ideal.design,
        target: crate::fit::Figures { cutoff_hz: Some(cutoff_hz), f0_hz: None, q: None },
        deviation_band_hz: fitted.deviation_band_hz,
        objective: "the worst section f0 or Q error in %; each section's parts searched among the standard values nearest its ideal ones; the response deviation is measured on the whole circuit with the chosen op-amp model".to_string(),
        alternatives: vec![alternative],
    })
}

/// The fitted circuit's cutoff in the alignment's own meaning: where its gain, relative to the
/// passband gain, falls to the target's level at the cutoff (−3.01 dB for Butterworth, the ripple
/// edge for Chebyshev, −6.02 dB for Linkwitz-Riley), found on a 400-point log sweep of the
/// deviation band with linear interpolation in (ln f, dB), taking the crossing nearest the
/// target cutoff. `None` if the sweep does not cross that level.
fn achieved_cutoff_hz(cascade: &ActiveCascade) -> Option<f64> {
    let fc = cascade.spec.cutoff_hz;
    let passband = cascade.passband_gain.abs();
    let level_db = 20.0 * (cascade.expected_response(fc).norm() / passband).log10();
    let (circuit, probe) = cascade.design.to_circuit().ok()?;
    let (low, high) = cascade.deviation_band_hz;
    let grid = FrequencyGrid::log(low, high, Spacing::Points(400)).ok()?;
    let response = sweep(&mut AcSystem::new(&circuit, &probe), &grid, Detail::Transfer);
    let reference_db = 20.0 * passband.log10();
    let gain: Vec<Option<f64>> =
        response.magnitude_db().into_iter().map(|g| g.map(|g| g - reference_db - level_db)).collect();
    let f = grid.frequencies();
    let mut best: Option<f64> = None;
    for k in 1..f.len() {
        if let (Some(y0), Some(y1)) = (gain[k - 1], gain[k]) {
            if y0 * y1 <= 0.0 && y0 != y1 {
                let (u0, u1) = (f[k - 1].ln(), f[k].ln());
                let crossing = (u0 + (u1 - u0) * y0 / (y0 - y1)).exp();
                if best.is_none_or(|b| (b / fc).ln().abs() > (crossing / fc).ln().abs()) {
                    best = Some(crossing);
                }
            }
        }
    }
    best
}

/// Joins the sections into one design, and measures it.
fn assemble(
    spec: &CascadeSpec,
    options: &ActiveOptions,
    targets: &[SectionTarget],
    chosen: Vec<(ActiveSection, Vec<FittedPart>)>,
) -> Result<ActiveCascade, ActiveError> {
    let prototype = lowpass_prototype(spec.alignment, spec.order)?;
    let target = crate::transform::denormalize(&prototype, spec.response, Band::Cutoff(spec.cutoff_hz))?;
    let mut design = empty_design(&options.name, options.load_ohms);
    design.source.resistance = options.source_ohms;
    if let Some(c) = options.load_farads {
        let load = design.load.get_or_insert(Load { node: "out".to_string(), resistance: None, capacitance: None });
        load.capacitance = Some(c);
    }
    design.note = format!(
        "{} {} {} order {}, cutoff {} Hz; {} sections in ascending Q",
        match spec.topology {
            ActiveTopology::SallenKey => "unity-gain Sallen-Key",
            ActiveTopology::MultipleFeedback => "multiple-feedback",
        },
        spec.alignment.name(),
        spec.response.name(),
        spec.order,
        spec.cutoff_hz,
        chosen.len()
    );
    let count = chosen.len();
    let mut passband_gain = 1.0;
    let mut sections = Vec::with_capacity(count);
    for (idx, ((section, parts), target)) in chosen.into_iter().zip(targets).enumerate() {
        let number = idx + 1;
        let input = if idx == 0 { "in".to_string() } else { node(idx, "out") };
        let output = if number == count { "out".to_string() } else { node(number, "out") };
        section.add_to(&mut design, number, &input, &output, &options.op_amp);
        let nominal_gain = match section {
            ActiveSection::MultipleFeedbackLowPass(_) | ActiveSection::MultipleFeedbackHighPass(_) => -options.gain,
            _ => 1.0,
        };
        passband_gain *= nominal_gain;
        let f0_hz = section.f0_hz();
        let q = section.q();
        sections.push(SectionResult {
            index: number,
            target: *target,
            section,
            parts,
            f0_hz,
            q,
            gain: section.gain(),
            f0_error_pct: 100.0 * (f0_hz - target.f0_hz) / target.f0_hz,
            q_error_pct: q.zip(target.q).map(|(q, want)| 100.0 * (q - want) / want),
            sensitivities: section
                .sensitivities()
                .into_iter()
                .map(|s| PartSensitivity { reference: reference(&s.reference, number), ..s })
                .collect(),
        });
    }
    let band = match spec.response {
        ResponseType::HighPass => (spec.cutoff_hz / 3.0, spec.cutoff_hz * 10.0),
        _ => (spec.cutoff_hz / 10.0, spec.cutoff_hz * 3.0),
    };
    let mut cascade = ActiveCascade {
        spec: *spec,
        target,
        passband_gain,
        sections,
        design,
        deviation_band_hz: band,
        max_response_deviation_db: 0.0,
    };
    cascade.max_response_deviation_db = deviation_db(&cascade)?;
    Ok(cascade)
}

/// The worst |dB(MNA) − dB(expected)| over the deviation band, where the target is within
/// `DEVIATION_FLOOR_DB` of its peak.
fn deviation_db(cascade: &ActiveCascade) -> Result<f64, ActiveError> {
    let failure = |reason: String| ActiveError::Unsweepable { reason };
    let (circuit, probe) = cascade.design.to_circuit().map_err(|e| failure(e.to_string()))?;
    let (low, high) = cascade.deviation_band_hz;
    let grid = FrequencyGrid::log(low, high, Spacing::PerDecade(DEVIATION_POINTS_PER_DECADE))
        .map_err(|e| failure(e.to_string()))?;
    let response = sweep(&mut AcSystem::new(&circuit, &probe), &grid, Detail::Transfer);
    let expected_db: Vec<f64> =
        grid.frequencies().iter().map(|&f| 20.0 * cascade.expected_response(f).norm().log10()).collect();
    let peak = expected_db.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let mut worst: f64 = 0.0;
    for (got, want) in response.magnitude_db().into_iter().zip(expected_db) {
        if want < peak - DEVIATION_FLOOR_DB {
            continue;
        }
        match got {
            Some(got) => worst = worst.max((got - want).abs()),
            None => return Err(failure("the fitted design could not be solved at every frequency".to_string())),
        }
    }
    Ok(worst)
}

/// The passband gain of a denormalised all-pole low-pass (at DC) or high-pass (at ∞) target.
fn target_passband(target: &Zpk) -> f64 {
    if target.zeros.len() == target.poles.len() {
        target.gain
    } else {
        target.eval(Complex64::new(0.0, 0.0)).re
    }
}

/// The exact section at the fitted section's impedance level (for the parts' ideal values): the
/// same capacitors, with the resistors solved exactly.
fn ideal_of(fitted: &ActiveSection, target: &SectionTarget, gain: f64) -> Option<ActiveSection> {
    let f0 = target.f0_hz;
    Some(match (*fitted, target.q) {
        (ActiveSection::FirstOrder(x), _) => {
            ActiveSection::FirstOrder(FirstOrderSection::design(x.response, f0, x.c1).ok()?)
        }
        (ActiveSection::SallenKeyLowPass(x), Some(q)) => {
            ActiveSection::SallenKeyLowPass(SallenKeyLowPass::design(f0, q, x.c2, x.c1 / x.c2).ok()?)
        }
        (ActiveSection::SallenKeyHighPass(x), Some(q)) => {
            ActiveSection::SallenKeyHighPass(SallenKeyHighPass::design(f0, q, x.c1).ok()?)
        }
        (ActiveSection::MultipleFeedbackLowPass(x), Some(q)) => ActiveSection::MultipleFeedbackLowPass(
            MultipleFeedbackLowPass::design(f0, q, gain, x.c2, x.c1 / x.c2).ok()?,
        ),
        (ActiveSection::MultipleFeedbackHighPass(x), Some(q)) => ActiveSection::MultipleFeedbackHighPass(
            MultipleFeedbackHighPass::resistors_for(f0, q, x.c1, x.c1 / gain, x.c3).ok()?,
        ),
        _ => return None,
    })
}

/// The section as driven through `series_ohms` more at its input resistor (low-pass sections, whose
/// input part is R1); other sections are returned as they are.
fn with_series_input(section: ActiveSection, series_ohms: f64) -> ActiveSection {
    if series_ohms == 0.0 {
        return section;
    }
    match section {
        ActiveSection::FirstOrder(x) if x.response == ResponseType::LowPass => {
            ActiveSection::FirstOrder(FirstOrderSection { r1: x.r1 + series_ohms, ..x })
        }
        ActiveSection::SallenKeyLowPass(x) => {
            ActiveSection::SallenKeyLowPass(SallenKeyLowPass { r1: x.r1 + series_ohms, ..x })
        }
        ActiveSection::MultipleFeedbackLowPass(x) => {
            ActiveSection::MultipleFeedbackLowPass(MultipleFeedbackLowPass { r1: x.r1 + series_ohms, ..x })
        }
        other => other,
    }
}

/// The best standard-part realization of one section.
fn fit_section(
    spec: &CascadeSpec,
    options: &ActiveOptions,
    parts: &ActiveParts,
    target: &SectionTarget,
    number: usize,
) -> Result<ActiveSection, ActiveError> {
    let (r_low, r_high) = parts.resistor_range;
    let omega = TAU * target.f0_hz;
    let k = options.gain;
    let q = target.q.unwrap_or(0.5);
    // Capacitor window: resistors of the range at this ω0, widened by the largest capacitor
    // ratio or resistor spread the section needs (4Q²(1 + K) for a low-pass, 4Q² for a
    // high-pass), plus a factor 2 either side.
    let spread = 4.0 * q * q * (1.0 + k) + 1.0;
    let window = (
        (1.0 / (omega * r_high * spread.sqrt() * 2.0)).max(parts.capacitor_range.0),
        (2.0 * spread.sqrt() / (omega * r_low)).min(parts.capacitor_range.1),
    );
    let capacitors = parts.capacitors.values_between(window.0, window.1);
    let neighbours = |ideal: f64| -> Vec<f64> {
        let set = &parts.resistors;
        let mut out: Vec<f64> = Vec::new();
        if let Some(floor) = set.floor(ideal) {
            out.push(floor);
            out.extend(set.next_below(floor));
        }
        if let Some(ceil) = set.ceil(ideal) {
            out.push(ceil);
            out.extend(set.next_above(ceil));
        }
        out.retain(|r| *r >= r_low * (1.0 - 1e-9) && *r <= r_high * (1.0 + 1e-9));
        out.sort_by(f64::total_cmp);
        out.dedup();
        out
    };
    // Capacitors from `set` at or above `x`: the first `count`.
    let at_or_above = |x: f64, count: usize| -> Vec<f64> {
        let mut out = Vec::new();
        let mut next = parts.capacitors.ceil(x);
        while let Some(v) = next {
            if out.len() == count || v > parts.capacitor_range.1 * (1.0 + 1e-9) {
                break;
            }
            out.push(v);
            next = parts.capacitors.next_above(v);
        }
        out
    };
    let centre = (r_low * r_high).sqrt();
    // The first low-pass section's input resistor is in series with the source's resistance, so
    // the source is absorbed there: R1 is chosen for R1 + Rs, and every candidate is judged with
    // the source in place (exact: a Thevenin source's resistance adds to the series resistor).
    // High-pass sections start with a capacitor and cannot absorb it; their measured deviation
    // includes it.
    let absorbed = if number == 1 && spec.response == ResponseType::LowPass { options.source_ohms } else { 0.0 };
    let r1_for = |ideal_r1: f64| -> Option<f64> { (ideal_r1 - absorbed > 0.0).then_some(ideal_r1 - absorbed) };
    let mut best: Option<(f64, f64, ActiveSection)> = None;
    let mut consider = |section: ActiveSection, resistors: &[f64]| {
        let driven = with_series_input(section, absorbed);
        let f0 = driven.f0_hz();
        let e_f0 = (f0 - target.f0_hz) / target.f0_hz;
        let e_q = match (driven.q(), target.q) {
            (Some(got), Some(want)) => (got - want) / want,
            _ => 0.0,
        };
        let e_k = (driven.gain().abs() - if driven.gain() < 0.0 { k } else { 1.0 }) / k.max(1.0);
        let error = (e_f0 * e_f0 + e_q * e_q + e_k * e_k).sqrt();
        let spread: f64 = resistors.iter().map(|r| (r / centre).ln().abs()).fold(0.0, f64::max);
        if !error.is_finite() {
            return;
        }
        let better = match &best {
            None => true,
            Some((e, s, _)) => error < e - 1e-12 || (error <= e + 1e-12 && spread < *s),
        };
        if better {
            best = Some((error, spread, section));
        }
    };
    const RATIO_CHOICES: usize = 4;
    for &c in &capacitors {
        match (target.q, spec.topology, spec.response) {
            (None, _, response) => {
                let ideal = 1.0 / (omega * c);
                let Some(wanted) = (if response == ResponseType::LowPass { r1_for(ideal) } else { Some(ideal) }) else {
                    continue;
                };
                for r in neighbours(wanted) {
                    consider(ActiveSection::FirstOrder(FirstOrderSection { response, r1: r, c1: c }), &[r]);
                }
            }
            (Some(q), ActiveTopology::SallenKey, ResponseType::LowPass) => {
                for c1 in at_or_above(c * SallenKeyLowPass::min_capacitor_ratio(q), RATIO_CHOICES) {
                    let Ok(ideal) = SallenKeyLowPass::design(target.f0_hz, q, c, c1 / c) else { continue };
                    let Some(wanted) = r1_for(ideal.r1) else { continue };
                    for r1 in neighbours(wanted) {
                        for r2 in neighbours(ideal.r2) {
                            let section = SallenKeyLowPass { r1, r2, c1, c2: c };
                            consider(ActiveSection::SallenKeyLowPass(section), &[r1, r2]);
                        }
                    }
                }
            }
            (Some(q), ActiveTopology::SallenKey, _) => {
                let Ok(ideal) = SallenKeyHighPass::design(target.f0_hz, q, c) else { continue };
                for r1 in neighbours(ideal.r1) {
                    for r2 in neighbours(ideal.r2) {
                        let section = SallenKeyHighPass { c1: c, c2: c, r1, r2 };
                        consider(ActiveSection::SallenKeyHighPass(section), &[r1, r2]);
                    }
                }
            }
            (Some(q), ActiveTopology::MultipleFeedback, ResponseType::LowPass) => {
                for c1 in at_or_above(c * MultipleFeedbackLowPass::min_capacitor_ratio(q, k), RATIO_CHOICES) {
                    let Ok(ideal) = MultipleFeedbackLowPass::design(target.f0_hz, q, k, c, c1 / c) else { continue };
                    let Some(wanted) = r1_for(ideal.r1) else { continue };
                    for r1 in neighbours(wanted) {
                        for r2 in neighbours(ideal.r2) {
                            for r3 in neighbours(ideal.r3) {
                                let section = MultipleFeedbackLowPass { r1, r2, r3, c1, c2: c };
                                consider(ActiveSection::MultipleFeedbackLowPass(section), &[r1, r2, r3]);
                            }
                        }
                    }
                }
            }
            (Some(q), ActiveTopology::MultipleFeedback, _) => {
                let mut feedback: Vec<f64> =
                    [parts.capacitors.floor(c / k), parts.capacitors.ceil(c / k)].into_iter().flatten().collect();
                feedback.dedup();
                for c2 in feedback {
                    // The exact resistors for the standard C2 (it moves Q through C1 + C2 + C3).
                    let Ok(ideal) = MultipleFeedbackHighPass::resistors_for(target.f0_hz, q, c, c2, c) else {
                        continue;
                    };
                    for r1 in neighbours(ideal.r1) {
                        for r2 in neighbours(ideal.r2) {
                            let section = MultipleFeedbackHighPass { c1: c, c2, c3: c, r1, r2 };
                            consider(ActiveSection::MultipleFeedbackHighPass(section), &[r1, r2]);
                        }
                    }
                }
            }
        }
    }
    best.map(|(_, _, section)| section).ok_or_else(|| ActiveError::NoCandidates {
        section: number,
        reason: format!(
            "f0 {:.6} Hz{} needs capacitors of about {:.3e} F to {:.3e} F with resistors from {} Ω to {} Ω, and no {} capacitor from {:e} F to {:e} F gives it",
            target.f0_hz,
            target.q.map(|q| format!(" and Q {q:.4}")).unwrap_or_default(),
            1.0 / (omega * r_high * spread.sqrt() * 2.0),
            2.0 * spread.sqrt() / (omega * r_low),
            r_low,
            r_high,
            parts.capacitors.name(),
            parts.capacitor_range.0,
            parts.capacitor_range.1,
        ),
    })
}

/// The design reference of a section's local part: `R1` of section 2 is `R21`.
pub fn reference(local: &str, section: usize) -> String {
    let (letter, digits) = local.split_at(1);
    format!("{letter}{section}{digits}")
}

/// A node of section `section`, e.g. `s2.a`.
pub(crate) fn node(section: usize, name: &str) -> String {
    format!("s{section}.{name}")
}

pub(crate) fn push_resistor(design: &mut Design, reference: &str, value: f64, a: &str, b: &str) {
    design.elements.push(Part::Resistor { reference: reference.to_string(), value, nodes: [a.into(), b.into()] });
}

pub(crate) fn push_capacitor(design: &mut Design, reference: &str, value: f64, a: &str, b: &str) {
    design.elements.push(Part::Capacitor {
        reference: reference.to_string(),
        value,
        nodes: [a.into(), b.into()],
        series_resistance: None,
    });
}

/// Adds op-amp `U{section}` as a follower: output `output`, non-inverting input `plus`, inverting
/// input tied to the output pin.
pub(crate) fn add_follower(design: &mut Design, section: usize, plus: &str, output: &str, op_amp: &OpAmp) {
    match *op_amp {
        OpAmp::Ideal => design.elements.push(Part::Vcvs {
            reference: format!("U{section}"),
            gain: 1.0,
            nodes: [output.into(), "0".into()],
            control: [plus.into(), "0".into()],
            pole_hz: None,
        }),
        OpAmp::SinglePole { .. } => add_single_pole(design, section, plus, output, output, op_amp),
    }
}

/// Adds op-amp `U{section}` as an inverting stage with its non-inverting input grounded:
/// output `output`, inverting input `minus`. The ideal case is the exact nullor of the module docs.
pub(crate) fn add_inverting(design: &mut Design, section: usize, minus: &str, output: &str, op_amp: &OpAmp) {
    match *op_amp {
        // V(out) − 0 = 1·(V(out) − V(minus)), i.e. V(minus) = 0 with a free output current.
        OpAmp::Ideal => design.elements.push(Part::Vcvs {
            reference: format!("U{section}"),
            gain: 1.0,
            nodes: [output.into(), "0".into()],
            control: [output.into(), minus.into()],
            pole_hz: None,
        }),
        OpAmp::SinglePole { .. } => add_single_pole(design, section, "0", minus, output, op_amp),
    }
}

/// The single-pole op-amp: VCVS of (V+ − V−) into an internal node, then R_o to the output.
fn add_single_pole(design: &mut Design, section: usize, plus: &str, minus: &str, output: &str, op_amp: &OpAmp) {
    let OpAmp::SinglePole { gbw_hz, dc_gain, output_ohms } = *op_amp else { return };
    let internal = if output_ohms > 0.0 { node(section, "e") } else { output.to_string() };
    design.elements.push(Part::Vcvs {
        reference: format!("U{section}"),
        gain: dc_gain,
        nodes: [internal.clone(), "0".into()],
        control: [plus.into(), minus.into()],
        pole_hz: Some(gbw_hz / dc_gain),
    });
    if output_ohms > 0.0 {
        push_resistor(design, &format!("U{section}.ro"), output_ohms, &internal, output);
    }
}

/// A design with an ideal source at `in`, output `out` and the optional load, and no parts yet.
pub(crate) fn empty_design(name: &str, load_ohms: Option<f64>) -> Design {
    Design {
        format: FORMAT.to_string(),
        version: VERSION,
        name: name.to_string(),
        note: String::new(),
        source: Source { node: "in".to_string(), resistance: 0.0, amplitude: 1.0 },
        load: load_ohms.map(|r| Load { node: "out".to_string(), resistance: Some(r), capacitance: None }),
        output: "out".to_string(),
        elements: Vec::new(),
        tolerances: Default::default(),
    }
}

/// The relative sensitivity ∂ln F/∂ln x by a central difference in ln x with step `h`.
///
/// Used by the tests to check the closed-form sensitivities; exposed for the same use by callers.
pub fn log_derivative(function: impl Fn(f64) -> f64, x: f64, h: f64) -> f64 {
    (function(x * h.exp()).ln() - function(x * (-h).exp()).ln()) / (2.0 * h)
}

pub(crate) fn check_frequency(what: &'static str, f_hz: f64) -> Result<f64, ActiveError> {
    if f_hz.is_finite() && f_hz > 0.0 {
        Ok(f_hz)
    } else {
        Err(ActiveError::BadFrequency { what, f_hz })
    }
}

pub(crate) fn check_q(q: f64) -> Result<f64, ActiveError> {
    if q.is_finite() && q > 0.0 {
        Ok(q)
    } else {
        Err(ActiveError::BadQ { q })
    }
}

pub(crate) fn check_value(what: &'static str, value: f64) -> Result<f64, ActiveError> {
    if value.is_finite() && value > 0.0 {
        Ok(value)
    } else {
        Err(ActiveError::BadValue { what, value })
    }
}

/// Checks that every derived part value is finite and positive (a Q or f0 so extreme that the
/// arithmetic overflows or underflows is refused, never returned as NaN).
pub(crate) fn check_results(values: &[(&'static str, f64)]) -> Result<(), ActiveError> {
    for &(what, value) in values {
        check_value(what, value)?;
    }
    Ok(())
}

fn check_pass(response: ResponseType) -> Result<(), ActiveError> {
    match response {
        ResponseType::LowPass | ResponseType::HighPass => Ok(()),
        other => Err(ActiveError::BadResponse { response: other }),
    }
}

fn check_spec(spec: &CascadeSpec) -> Result<(), ActiveError> {
    if !(1..=MAX_ORDER).contains(&spec.order) {
        return Err(ActiveError::BadOrder { order: spec.order });
    }
    check_pass(spec.response)?;
    check_frequency("cutoff", spec.cutoff_hz)?;
    Ok(())
}

fn check_options(options: &ActiveOptions) -> Result<(), ActiveError> {
    options.op_amp.validate()?;
    check_value("multiple-feedback gain K", options.gain)?;
    check_value("impedance level (Ω)", options.impedance_ohms)?;
    if let Some(r) = options.load_ohms {
        check_value("load resistance (Ω)", r)?;
    }
    if let Some(c) = options.load_farads {
        if !(c.is_finite() && c >= 0.0) {
            return Err(ActiveError::BadValue { what: "load capacitance (F)", value: c });
        }
    }
    if !(options.source_ohms.is_finite() && options.source_ohms >= 0.0) {
        return Err(ActiveError::BadValue { what: "source resistance (Ω)", value: options.source_ohms });
    }
    Ok(())
}

fn check_range(what: &'static str, (low, high): (f64, f64)) -> Result<(), ActiveError> {
    check_value(what, low)?;
    check_value(what, high)?;
    if high < low {
        return Err(ActiveError::BadValue { what, value: high });
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::eseries::Series;

    fn spec(topology: ActiveTopology, alignment: Alignment, order: usize, response: ResponseType) -> CascadeSpec {
        CascadeSpec { topology, alignment, order, response, cutoff_hz: 1000.0 }
    }

    #[test]
    fn a_low_pass_fit_absorbs_the_source_resistance_into_the_first_input_resistor() {
        let fit_with = |topology: &str, response: &str, source: &str| {
            let request = crate::request::FitRequest {
                response: Some(response.into()),
                cutoff: Some("1k".into()),
                order: Some("3".into()),
                topology: Some(topology.into()),
                source: Some(source.into()),
                ..Default::default()
            };
            let resolved = request.resolve().unwrap();
            crate::fit::fit(&resolved.requirement, resolved.topology, &resolved.options).unwrap().alternatives.remove(0)
        };
        for topology in ["sallen-key", "mfb"] {
            let ideal_source = fit_with(topology, "lowpass", "0");
            let driven = fit_with(topology, "lowpass", "2k");
            // The deviation is measured on the whole circuit with the 2 kΩ source in place; without
            // the absorption a 2 kΩ source moved a unity-gain Sallen-Key cutoff by about 8 %.
            assert!(driven.max_response_deviation_db < 0.1, "{topology}: {}", driven.max_response_deviation_db);
            assert!(
                driven.max_response_deviation_db < 2.0 * ideal_source.max_response_deviation_db + 0.02,
                "{topology}: {} vs {}",
                driven.max_response_deviation_db,
                ideal_source.max_response_deviation_db
            );
            // The first section's R1 is chosen for R1 + Rs: its ideal value is the exact one less 2 kΩ.
            let r1 = driven.parts.iter().find(|p| p.reference == "R11").unwrap();
            let c = |name: &str| driven.parts.iter().find(|p| p.reference == name).map(|p| p.choice.value);
            assert!(r1.ideal_value > 0.0 && r1.deviation_pct.abs() < 3.0, "{topology}: {r1:?}");
            if topology == "sallen-key" {
                // The odd order's first section is first order: R·C = 1/(2π·f) of the real pole.
                let (Some(c1), None) = (c("C11"), c("C12")) else { panic!("{:?}", driven.parts) };
                let tau = (r1.choice.value + 2000.0) * c1;
                let real_pole_hz = 1.0 / (TAU * tau);
                assert!((real_pole_hz / 1000.0 - 1.0).abs() < 0.03, "{real_pole_hz}");
            }
        }
        // A high-pass section starts with a capacitor: the source is not absorbed, and it shows.
        let high = fit_with("sallen-key", "highpass", "2k");
        assert!(high.max_response_deviation_db.is_finite());
    }

    #[test]
    fn the_fitting_front_door_reports_an_active_cascade() {
        let request = crate::request::FitRequest {
            cutoff: Some("2k".into()),
            order: Some("4".into()),
            topology: Some("sallen-key".into()),
            source: Some("100".into()),
            load: Some("10k".into()),
            ..Default::default()
        };
        let resolved = request.resolve().unwrap();
        let result = crate::fit::fit(&resolved.requirement, resolved.topology, &resolved.options).unwrap();
        assert_eq!(result.alternatives.len(), 1);
        let best = &result.alternatives[0];
        assert_eq!(best.parts.len(), 8);
        for part in &best.parts {
            let set = if part.kind == "resistor" { Series::E96 } else { Series::E12 };
            assert!(PartValues::Series(set).is_value(part.choice.value), "{} = {}", part.reference, part.choice.value);
        }
        // The source resistance is in the design and in the measured figures.
        assert_eq!(best.design.source.resistance, 100.0);
        let cutoff_error = best.cutoff_error_pct.unwrap();
        assert!(cutoff_error.abs() < 2.0, "cutoff error {cutoff_error} %");
        assert!(best.max_response_deviation_db < 0.5, "{}", best.max_response_deviation_db);
        let band_pass = crate::request::FitRequest {
            low: Some("1k".into()),
            high: Some("2k".into()),
            response: Some("bandpass".into()),
            topology: Some("mfb".into()),
            ..Default::default()
        }
        .resolve()
        .unwrap();
        let error = crate::fit::fit(&band_pass.requirement, band_pass.topology, &band_pass.options).unwrap_err();
        assert!(error.to_string().contains("low-pass and high-pass"), "{error}");
    }

    fn engine(design: &Design, f_hz: f64) -> Complex64 {
        let (circuit, probe) = design.to_circuit().unwrap();
        AcSystem::new(&circuit, &probe).solve_at(f_hz, Detail::Transfer).unwrap().transfer
    }

    #[test]
    fn cascades_of_every_order_match_the_target() {
        let alignments = [
            Alignment::Butterworth,
            Alignment::Chebyshev { ripple_db: 0.5 },
            Alignment::Bessel { normalization: Default::default() },
        ];
        let mut worst: f64 = 0.0;
        for topology in [ActiveTopology::SallenKey, ActiveTopology::MultipleFeedback] {
            for response in [ResponseType::LowPass, ResponseType::HighPass] {
                for alignment in alignments {
                    for order in 1..=MAX_ORDER {
                        let cascade =
                            design_cascade(&spec(topology, alignment, order, response), &ActiveOptions::default())
                                .unwrap();
                        assert_eq!(
                            cascade.sections.iter().map(|s| if s.q.is_some() { 2 } else { 1 }).sum::<usize>(),
                            order
                        );
                        for f in [37.0, 700.0, 1000.0, 1300.0, 25_000.0] {
                            let want = cascade.expected_response(f);
                            let got = engine(&cascade.design, f);
                            let error = (got - want).norm() / want.norm();
                            worst = worst.max(error);
                            assert!(
                                error < 1e-9,
                                "{topology:?} {response:?} {alignment:?} n={order} at {f} Hz: {error:e}"
                            );
                        }
                        assert!(cascade.max_response_deviation_db < 1e-8);
                    }
                }
            }
        }
        eprintln!("worst relative error of ideal cascades vs target: {worst:.2e}");
    }

    #[test]
    fn sections_come_in_ascending_q() {
        let targets = cascade_sections(&spec(
            ActiveTopology::SallenKey,
            Alignment::Chebyshev { ripple_db: 1.0 },
            7,
            ResponseType::HighPass,
        ))
        .unwrap();
        assert!(targets[0].q.is_none());
        let qs: Vec<f64> = targets[1..].iter().map(|t| t.q.unwrap()).collect();
        assert!(qs.windows(2).all(|w| w[0] <= w[1]), "{qs:?}");
        // High-pass: the real pole at 0.2054·ωc (references.md §3.3, 1 dB n = 7) moves to ωc/0.2054.
        assert!((targets[0].f0_hz - 1000.0 / 0.2054).abs() / targets[0].f0_hz < 5e-4);
    }

    #[test]
    fn fitting_returns_standard_values_with_small_errors() {
        let parts = ActiveParts::new(PartValues::Series(Series::E96), PartValues::Series(Series::E12));
        for topology in [ActiveTopology::SallenKey, ActiveTopology::MultipleFeedback] {
            for response in [ResponseType::LowPass, ResponseType::HighPass] {
                let spec = spec(topology, Alignment::Butterworth, 5, response);
                let cascade = fit_cascade(&spec, &ActiveOptions::default(), &parts).unwrap();
                for section in &cascade.sections {
                    for part in &section.parts {
                        let set = if part.kind == "resistor" { &parts.resistors } else { &parts.capacitors };
                        assert!(set.is_value(part.choice.value), "{} = {}", part.reference, part.choice.value);
                    }
                    assert!(section.f0_error_pct.abs() < 1.0, "{section:?}");
                    assert!(section.q_error_pct.unwrap_or(0.0).abs() < 1.5, "{section:?}");
                }
                assert!(cascade.max_response_deviation_db < 0.3, "{}", cascade.max_response_deviation_db);
            }
        }
    }

    #[test]
    fn bad_requests_name_the_value() {
        let good = spec(ActiveTopology::SallenKey, Alignment::Butterworth, 4, ResponseType::LowPass);
        let options = ActiveOptions::default();
        for (order, text) in [(0, "order 0"), (9, "order 9")] {
            let error = design_cascade(&CascadeSpec { order, ..good }, &options).unwrap_err();
            assert_eq!(error, ActiveError::BadOrder { order });
            assert!(error.to_string().contains(text));
        }
        let error = design_cascade(&CascadeSpec { cutoff_hz: -5.0, ..good }, &options).unwrap_err();
        assert!(error.to_string().contains("-5 Hz"), "{error}");
        let error = design_cascade(&CascadeSpec { response: ResponseType::BandPass, ..good }, &options).unwrap_err();
        assert!(error.to_string().contains("bandpass"), "{error}");
        let error = design_cascade(&CascadeSpec { alignment: Alignment::LinkwitzRiley, order: 3, ..good }, &options)
            .unwrap_err();
        assert!(matches!(error, ActiveError::Prototype(_)), "{error}");
        let bad_op_amp = ActiveOptions {
            op_amp: OpAmp::SinglePole { gbw_hz: f64::NAN, dc_gain: 1e5, output_ohms: 50.0 },
            ..Default::default()
        };
        assert!(design_cascade(&good, &bad_op_amp).unwrap_err().to_string().contains("NaN"));
        let bad_gain = ActiveOptions { gain: 0.0, ..Default::default() };
        assert!(design_cascade(&good, &bad_gain).unwrap_err().to_string().contains("gain K 0"));
    }

    #[test]
    fn op_amp_gain_is_single_pole() {
        let op_amp = OpAmp::SinglePole { gbw_hz: 1e6, dc_gain: 1e5, output_ohms: 0.0 };
        // At 100 kHz, well above the 10 Hz pole, |A| ≈ GBW/f = 10.
        let a = op_amp.open_loop_gain(1e5).unwrap();
        assert!((a.norm() - 10.0).abs() < 1e-3);
        assert_eq!(OpAmp::Ideal.open_loop_gain(1e5), None);
    }

    #[test]
    fn references_carry_the_section_number() {
        assert_eq!(reference("R1", 3), "R31");
        assert_eq!(reference("C2", 1), "C12");
    }
}
