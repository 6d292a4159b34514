//! Bandwright core: the exact AC behaviour of passive (and op-amp) filter circuits.
//!
//! This crate is pure: it does no file, clock, environment or console access, draws nothing and
//! knows nothing of the command line or the browser. Adapters (the `bandwright` CLI and the web
//! bindings) parse and print; the plot layer draws.
//!
//! # Conventions
//! - All values are `f64` in SI units: Ω, S, F, H, Hz, s, V, A, W. Angular frequency ω is in
//!   rad/s and complex values are [`num_complex::Complex64`]. Engineering notation ("4k7",
//!   "100n") is parsed and formatted only at the edges, by [`notation`].
//! - Ground is node `0` (also written `gnd`). Phasors are rms and use e^{jωt}; s = jω.
//! - dB = 20·log10|H|. Phase is arg H in degrees, unwrapped along a sweep (see [`response`]).
//!   Group delay τ = −dφ/dω is computed exactly from the differentiated MNA system.
//! - The transfer function H = V(output)/EMF of the driving source, with every other independent
//!   source set to zero.
//! - Errors are one enum per area, carry the offending values, and say what to do. A sweep never
//!   fails as a whole: a frequency that cannot be solved is recorded as such.
//!
//! # Reading order
//! [`notation`] → [`circuit`] → [`lu`] → [`mna`] → [`modal`] → [`sweep`] → [`response`] →
//! [`measure`] → [`transient`] (step and impulse responses) → [`design`], and [`cautions`] for
//! the safety text every adapter shows. Synthesis: [`synthesis`] → [`eseries`] → [`prototype`] →
//! [`transform`] → [`ladder`] → [`fit`] → [`request`] (the requirement as typed); [`active`] →
//! [`sallen_key`], [`multiple_feedback`] (op-amp RC sections and their cascades); [`mask`] (spec
//! masks and minimum orders); [`tolerance`] spreads real parts and [`yield_rank`] ranks a fit by yield; [`noise`] (resistor thermal
//! noise at the output) → [`adc`] (the anti-aliasing front end); [`share`] packs a design into a
//! link. Loudspeaker crossovers: [`driver`] (loads and acoustic data) → [`crossover`] (branches,
//! compensation, summed response) → [`stress`] (part ratings and the parts list); [`crossover_file`]
//! reads the crossover file into a request.
#![deny(missing_docs)]

pub mod notation;

pub mod circuit;
pub mod design;
pub mod lu;
pub mod measure;
pub mod mna;
pub mod modal;
pub mod response;
pub mod sweep;
pub mod transient;

// Thermal noise at the output; the anti-aliasing front-end workflow built on it.
pub mod noise;

pub mod adc;

pub mod cautions;

// Synthesis: from a requirement to a circuit of standard parts.
pub mod synthesis;

pub mod eseries;

pub mod prototype;

pub mod transform;

pub mod ladder;

pub mod rc_ladder;

// Active RC sections and their cascades.
pub mod active;
pub mod multiple_feedback;
pub mod sallen_key;

pub mod fit;

pub mod request;

// Spec masks: limits, minimum orders and pass/fail checks.
pub mod mask;

// Real parts: tolerance bands, solved fast on ladders by series–parallel reduction.
pub mod lanes;
pub mod reduction;
pub mod tolerance;
pub mod yield_rank;

// Sharing a design as text.
pub mod share;

// Loudspeaker crossovers: driver loads, networks, and part stress.
pub mod driver;

pub mod crossover;

pub mod crossover_file;

pub mod stress;

pub use active::{
    cascade_sections, design_cascade, fit_cascade, ActiveCascade, ActiveError, ActiveOptions, ActiveParts,
    ActiveSection, ActiveTopology, CascadeSpec, FirstOrderSection, OpAmp, PartSensitivity, SectionResult,
    SectionTarget,
};
pub use adc::{
    plan_front_end, AdcError, AdcInput, AdcOptions, AdcRequirement, AliasBand, AttenuationRule, FrontEndReport,
    Realization,
};
pub use circuit::{Circuit, CircuitBuilder, CircuitError, CurveError, Element, ElementKind, Gain, MeasuredCurve, Node};
pub use crossover::{
    design_branch, design_crossover, l_pad, resonance_notch, series_level_resistor, zobel, BranchDesign, BranchFilter,
    BranchNetwork, BranchResponse, BranchSpec, CoilLoss, Crossover, CrossoverAlignment, CrossoverError, CrossoverPoint,
    CrossoverResponse, CrossoverSpec, DesignLoad, ImpedanceMinimum, LPad, LadderElement, LevelMatch, Notch,
    NotchChoice, Placement, Polarity, Reactance, Zobel, ZobelChoice,
};
pub use crossover_file::{parse_crossover_file, CrossoverFile, CrossoverFileError};
pub use design::{parse_design, Design, DesignError, Load, Part, Source};
pub use driver::{
    parse_impedance_csv, parse_response_csv, Acoustic, AcousticResponse, Coil, DriverError, DriverLoad, DriverModel,
    Resonance,
};
pub use eseries::{PartValues, Series, StockError, StockList};
pub use ladder::{
    prototype_values, prototype_values_for, synthesize_ladder, FirstElement, LadderOptions, Prototype, Termination,
};
pub use mask::{
    minimum_order, minimum_orders, Forbidden, ForbiddenRegion, MaskBand, MaskError, MaskRegion, MaskReport,
    MinimumOrders, OrderChoice, RegionMargin, SpecMask,
};
pub use measure::{
    attenuation_db_at, gain_db_at, measure, Corner, Edge, Extremum, GainReference, MeasureError, Measurements,
    ReferenceKind,
};
pub use mna::{AcSystem, Detail, ElementState, Pencil, Probe, Solution, SolveError};
pub use modal::{Modal, ModalError, PartialFractions};
pub use multiple_feedback::{MultipleFeedbackHighPass, MultipleFeedbackLowPass};
pub use noise::{NoiseAnalysis, NoiseError, NoiseIntegral, NoiseOptions};
pub use notation::{format_quantity, format_value, parse_value, ParseError, Quantity};
pub use prototype::{lowpass_prototype, Section, Zpk, MAX_ORDER};
pub use request::{FitRequest, RequestError, ResolvedFit};
pub use response::Response;
pub use sallen_key::{SallenKeyHighPass, SallenKeyLowPass};
pub use share::{decode_share, encode_share, ShareError};
pub use stress::{
    circuit_stress, crossover_stress, parts_list, stress_frequencies, DriverPower, PartStress, PartsListEntry,
    PartsOptions, RatingMargins, StressError, StressOptions, StressQuantity, StressReport, STRESS_CAUTIONS,
};
pub use sweep::{sweep, FrequencyGrid, GridError, Spacing};
pub use tolerance::{
    Distribution, KindTolerances, ToleranceError, ToleranceOptions, TolerancePlan, ToleranceReport, TrialBatch,
};
pub use transform::{denormalize, target_response};
pub use transient::{
    impulse_response, step_response, ImpulseResponse, Method, MethodChoice, Rise, SettleTolerance, Settling,
    SettlingReference, Span, StepMetrics, StepResponse, TimeGrid, TimePoint, TimeResponse, TransientError,
    TransientOptions,
};
