//! Time domain: the step and impulse responses of a circuit, and the figures read from a step
//! (final value, overshoot, 10–90 % rise time, settling time to a chosen tolerance such as ½ LSB
//! of an N-bit converter, group delay at DC).
//!
//! # What is computed
//! H(s) = V(out)/EMF is the transfer function of [`crate::mna`], so the **step response** y(t) is
//! the output for a 1 V step of the source EMF at t = 0 (1 A for a current source), starting
//! from rest, and the **impulse response** is its derivative: a Dirac weight H(∞) at t = 0 plus
//! a regular part h(t) for t > 0. A sample at t = 0 is the right-hand limit y(0+) = H(∞)
//! (h(0+) for the impulse response). Times are in seconds.
//!
//! # Primary method: poles and residues (exact)
//! [`Modal`] gives H(s) = d + Σ ρ_i/(s − p_i) (module doc of [`crate::modal`], verified there
//! against the LU path to 1e-9). The Laplace transform of the step response is H(s)/s, and the
//! inverse transform of ρ/(s·(s − p)) is ρ·(e^{pt} − 1)/p (partial fractions; the pair
//! 1/(s − p) ↔ e^{pt} is the standard transform table, e.g. Oppenheim & Willsky, *Signals and
//! Systems*, table of Laplace transforms; from memory). So
//! - y(t) = d + Σ ρ_i·(e^{p_i t} − 1)/p_i, with ρ_i·t for a pole at p_i = 0;
//! - h(t) = Σ ρ_i·e^{p_i t} for t > 0, and the Dirac weight d;
//! - the error from the final value is e(t) = y(t) − H(0) = Σ (ρ_i/p_i)·e^{p_i t}, bounded by
//!   the envelope E(t) = Σ |ρ_i/p_i|·e^{Re p_i·t}, which decreases monotonically.
//!
//! Conjugate pairs are summed as one real term 2·Re(ρ·f(p, t)). e^{pt} − 1 is evaluated without
//! cancellation, as expm1(x)·cos y − 2·sin²(y/2) + j·e^x·sin y for pt = x + jy.
//!
//! # Fallback: implicit integration of the descriptor system
//! [`Modal::new`] refuses an ill-conditioned eigenbasis, which is what repeated poles give (two
//! identical buffered RC stages form a Jordan block; the residues of nearly equal poles grow
//! without bound and cancel). The time response is then integrated from the MNA pencil
//! C·x′ + G·x = b·u ([`AcSystem::pencil`]) with u = 1 for t > 0 and x(0−) = 0. C is singular
//! (nodes without capacitors, source and amplifier branches), so this is a differential-algebraic
//! system of index 1 for the usual circuits, and the step makes its algebraic unknowns jump at
//! t = 0.
//!
//! The integrator is the 3-stage **Radau IIA** collocation method of order 5 (Hairer & Wanner,
//! *Solving Ordinary Differential Equations II*, §IV.5 for the method and its coefficients, §VI.1
//! for index-1 problems; section numbers from memory). Why this one:
//! - it is **L-stable**: A-stable with stability function R(z) → 0 as z → ∞, so the infinite
//!   poles (algebraic unknowns) and stiff fast poles are damped in one step instead of ringing;
//!   the trapezoidal rule, A-stable but with R(∞) = −1, would carry the jump at t = 0 as an
//!   undamped oscillation of period 2h (common practice);
//! - it is **stiffly accurate** (its last stage is the step's end point), so the algebraic
//!   equations hold exactly at every step's end. The stage equations
//!   C·(X_i − x_n) = h·Σ_j a_ij·(b − G·X_j) involve x_n only through C·x_n, and C·x is continuous
//!   across the step (index 1, no impulses), so starting from x(0−) = 0 gives exactly the steps of
//!   a start from the consistent x(0+): no separate initialisation is needed;
//! - for index-1 problems a stiffly accurate Radau IIA keeps its order 5 in every unknown
//!   (Hairer & Wanner, §VI.1, from memory), so a modest step is accurate: the step h is fixed
//!   within each output interval and at most [`MAX_STEP_PHASE`]/|p| for the fastest pole p that
//!   has not yet decayed below e^−46 (≈ 1e−20). The tests measure a global error of 4e−11 of
//!   the final step at that step size. Second-order backward differentiation (BDF2), whose
//!   global error grows as (h·|p|)², would need steps thousands of times smaller for the same
//!   accuracy (an estimate from its error constant 2/9, from memory).
//!
//! The system is linear with constant coefficients, so for each step size the block system
//! (I₃⊗C + h·A⊗G)·Z = h·(c⊗I)·(b − G·x_n) is factored once and each step is a few matrix–vector
//! products. Between step points the output follows the collocation polynomial through x_n and
//! the three stage values (a cubic; Hairer & Wanner, §IV.5, from memory), which is also where
//! extrema and crossings are refined. The impulse response at a step's end is that polynomial's
//! derivative there: the endpoint is a collocation point, so for index 1 the derivative is as
//! accurate as the values (the tests check it against closed forms to 1e−9). y(0+) = H(∞) and h(0+) come from the exact LU path
//! ([`AcSystem::solve_at`]) at ω and 2ω with ω = 1000·max|p|, by Richardson extrapolation of
//! H(jω) = H(∞) + h(0+)/(jω) + O(ω⁻²) (initial value theorem).
//!
//! # Figures of a step ([`StepMetrics`])
//! - **Final value** H(0) (exactly 0 for a high-pass or band-pass, a zero of H at DC). With a
//!   pole at s = 0 that carries a residue (an integrator) or any pole on or right of the
//!   imaginary axis the response has no final value and the figures are refused
//!   ([`TransientError::Unsettled`]); a pole at 0 without a residue in H (a node floating at DC)
//!   is harmless.
//! - **Overshoot** (peak − final)/final in % of the final step, the peak being the largest value
//!   in the direction of the final value (so an inverting filter's overshoot is positive too).
//! - **Rise time** 10–90 %: the first crossings of 10 % and 90 % of the final value (t10 = 0
//!   when the jump at t = 0 already reaches 10 %).
//! - **Settling time** to a [`SettleTolerance`]: the last time |y(t) − H(0)| leaves the band
//!   tolerance × reference. The reference is |H(0)|; when H(0) = 0 it is the peak |y|, since
//!   relative to a zero final value every band is empty ([`SettlingReference`]).
//!   ½ LSB of N bits is 2^−(N+1) and 1 LSB is 2^−N of the reference (references.md §6: a
//!   single pole settles to ½ LSB in ln(2^(N+1)) time constants).
//! - **Group delay at DC**, τ(0) = −H′(0)/H(0) = Σ(ρ_i/p_i²)/H(0), the centroid of the impulse
//!   response.
//!
//! Crossings and extrema are exact up to rounding: on the pole–residue path the response is
//! scanned at steps of at most 0.4 rad of the fastest pole still above a thousandth of the
//! band, extrema are located by bisection on h(t) = y′(t) (a sign change), and each crossing by
//! bisection on the exact expression inside a monotone piece. The scan runs until the envelope
//! E(t) is below half the band (and below 1e−9 of the reference, so no peak is missed), after
//! which the error cannot leave the band again. On the integrator path the figures are read the
//! same way from the collocation cubics of a run over [`TimeResponse::default_span_s`] (the
//! extrema of a cubic are the roots of its derivative); a response still outside the band at
//! the end of that run has no settling time ([`Settling::time_s`] is `None`).
//!
//! # Time grids and cost
//! A [`TimeGrid`] is uniform from 0 to its span. [`TimeResponse::default_span_s`] is long enough
//! for the envelope to fall to 2^−25 of the reference (below ½ LSB of 24 bits), at most 60
//! slowest time constants. On the pole–residue path 1000 points of an n-pole filter cost 1000·n
//! complex exponentials after the one modal decomposition; the figures add a scan of a few
//! hundred points per pole and the bisections. The integrator costs one (3n)×(3n) LU per step
//! size and O(n²) per step.

use crate::mna::{AcSystem, Detail, Pencil};
use crate::modal::{Modal, ModalError};
use nalgebra::{DMatrix, Matrix4, Vector4};
use num_complex::Complex64;
use std::f64::consts::PI;
use std::fmt;

/// The most points a [`TimeGrid`] may have.
pub const MAX_POINTS: usize = 1_000_000;

/// The most bits a [`SettleTolerance`] may name.
pub const MAX_BITS: u32 = 32;

/// The number of points of [`TransientOptions::default`].
pub const DEFAULT_POINTS: usize = 1000;

/// The fraction of the reference to which [`TimeResponse::default_span_s`] lets the envelope
/// decay: 2^−25, below ½ LSB of 24 bits.
pub const DEFAULT_SPAN_FRACTION: f64 = 1.0 / 33_554_432.0;

/// The largest h·|p| of the integrator for a pole p that is still alive (see the module doc).
pub const MAX_STEP_PHASE: f64 = 0.05;

/// The most internal steps one integration may take.
pub const MAX_STEPS: usize = 4_000_000;

/// A uniform time grid t_k = k·span/(points − 1), k = 0 … points − 1, in seconds.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TimeGrid {
    span_s: f64,
    points: usize,
}

/// How close to its final value a step response must stay to count as settled.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum SettleTolerance {
    /// A fraction of the reference, 0 < x < 1 (0.001 is 0.1 %).
    Fraction(f64),
    /// A percentage of the reference, 0 < x < 100.
    Percent(f64),
    /// Half a least significant bit of an N-bit converter whose full scale is the reference:
    /// 2^−(N+1), 1 ≤ N ≤ [`MAX_BITS`].
    HalfLsb {
        /// N.
        bits: u32,
    },
    /// One least significant bit of an N-bit converter: 2^−N, 1 ≤ N ≤ [`MAX_BITS`].
    Lsb {
        /// N.
        bits: u32,
    },
}

/// Which method to use.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum MethodChoice {
    /// Poles and residues when [`Modal::new`] verifies, else the integrator.
    #[default]
    Automatic,
    /// The integrator, even where the pole–residue form exists (for checks).
    Integration,
}

/// The method that produced a result.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Method {
    /// Exact, from the poles and residues of the verified modal form.
    PoleResidue {
        /// The 1-norm condition number of the eigenbasis the residues come from.
        condition: f64,
    },
    /// Radau IIA integration of the MNA descriptor system.
    Integration {
        /// Why the pole–residue form was not used (`None` when integration was asked for).
        refused: Option<ModalError>,
    },
}

/// The span of the time grid.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub enum Span {
    /// [`TimeResponse::default_span_s`].
    #[default]
    Automatic,
    /// A span in seconds, finite and > 0.
    Seconds(f64),
}

/// What [`step_response`] and [`impulse_response`] compute.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TransientOptions {
    /// The span of the output grid.
    pub span: Span,
    /// The number of output points, 2 ≤ points ≤ [`MAX_POINTS`].
    pub points: usize,
    /// The settling tolerance of the step figures.
    pub tolerance: SettleTolerance,
    /// The method.
    pub method: MethodChoice,
}

/// A time and a value of the response.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TimePoint {
    /// Time in s.
    pub time_s: f64,
    /// The response there (unit of H: V/V for a voltage source).
    pub value: f64,
}

/// The 10–90 % rise of a step.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Rise {
    /// First time the response reaches 10 % of the final value, in s (0 if it starts there).
    pub t10_s: f64,
    /// First time it reaches 90 %, in s.
    pub t90_s: f64,
    /// t90 − t10 in s.
    pub rise_time_s: f64,
}

/// What the settling band is a fraction of.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SettlingReference {
    /// |H(0)|, the final step.
    FinalValue,
    /// The peak |y(t)|, used when the final value is zero (high-pass, band-pass).
    Peak,
}

/// The settling of a step to a tolerance.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Settling {
    /// The tolerance as a fraction of the reference.
    pub fraction: f64,
    /// What it is a fraction of.
    pub reference: SettlingReference,
    /// The band's half-width, fraction × reference, in the unit of H.
    pub band: f64,
    /// The last time |y − H(0)| leaves the band, in s; 0 if it never is outside it after t = 0+.
    /// `None` when the integrator's span ended before the response settled (the pole–residue path
    /// always finds it).
    pub time_s: Option<f64>,
}

/// The figures of a step response (see the module doc for the definitions).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StepMetrics {
    /// H(0), the value the step settles to.
    pub final_value: f64,
    /// y(0+) = H(∞), the jump at t = 0 (also the Dirac weight of the impulse response).
    pub initial_value: f64,
    /// The largest value beyond the final value (in its direction); `None` when the response
    /// never passes it. For a zero final value, the value of largest magnitude.
    pub peak: Option<TimePoint>,
    /// 100·(peak − final)/final, 0 without overshoot; `None` for a zero final value.
    pub overshoot_pct: Option<f64>,
    /// The 10–90 % rise; `None` for a zero final value.
    pub rise: Option<Rise>,
    /// Settling to the tolerance asked for.
    pub settling: Settling,
    /// The group delay at DC, −H′(0)/H(0), in s; `None` for a zero final value.
    pub dc_group_delay_s: Option<f64>,
    /// The method used.
    pub method: Method,
}

/// A step response on a grid with its figures.
#[derive(Debug, Clone, PartialEq)]
pub struct StepResponse {
    /// The method used.
    pub method: Method,
    /// The grid times in s.
    pub times_s: Vec<f64>,
    /// y(t_k) in the unit of H (the sample at 0 is y(0+)).
    pub values: Vec<f64>,
    /// The figures, or why they are undefined (typically [`TransientError::Unsettled`] for a
    /// lossless or unstable circuit, whose response is still plotted).
    pub metrics: Result<StepMetrics, TransientError>,
}

/// An impulse response on a grid.
#[derive(Debug, Clone, PartialEq)]
pub struct ImpulseResponse {
    /// The method used.
    pub method: Method,
    /// The grid times in s.
    pub times_s: Vec<f64>,
    /// h(t_k) for t > 0 in the unit of H per second (the sample at 0 is h(0+)).
    pub values: Vec<f64>,
    /// The weight H(∞) of the Dirac impulse at t = 0, in the unit of H.
    pub dirac_weight: f64,
}

/// A circuit prepared for time-domain evaluation: its pole–residue form or its integrator.
#[derive(Debug, Clone)]
pub struct TimeResponse {
    engine: Engine,
    method: Method,
    final_value: f64,
    zero_final: bool,
    initial_value: f64,
    dc_group_delay_s: Option<f64>,
    /// A pole on or right of the imaginary axis that shows in H, if any.
    unstable: Option<Complex64>,
}

/// Why a time response could not be computed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum TransientError {
    /// A part is not rational in s, so there is no descriptor system.
    NoPencil,
    /// The circuit's equations are singular at every trial shift (or a step matrix is singular).
    Singular,
    /// The eigenvalue iteration for the time scale did not converge.
    Unconverged {
        /// The iteration limit.
        iterations: usize,
    },
    /// The span is not finite and > 0.
    BadSpan {
        /// The offending span in s.
        span_s: f64,
    },
    /// The point count is outside 2 ≤ points ≤ [`MAX_POINTS`].
    BadPoints {
        /// The offending count.
        points: usize,
    },
    /// An LSB tolerance names 0 or more than [`MAX_BITS`] bits.
    BadBits {
        /// The offending count.
        bits: u32,
    },
    /// A fraction or percentage tolerance is outside its range.
    BadTolerance {
        /// The offending value as given.
        value: f64,
        /// "fraction" or "percent".
        kind: &'static str,
    },
    /// A computed value is not finite (the response grows beyond the range of f64).
    NonFinite {
        /// The time where it happened, in s.
        time_s: f64,
    },
    /// The response has no final value: a pole on or right of the imaginary axis shows in H.
    Unsettled {
        /// Real part of the pole in rad/s.
        pole_re: f64,
        /// Imaginary part of the pole in rad/s.
        pole_im: f64,
    },
    /// The integration would need more than [`MAX_STEPS`] internal steps.
    TooManySteps {
        /// The steps it would take.
        steps: f64,
    },
}

/// One real term of the pole–residue sums: weight·Re(residue·f(pole, t)).
#[derive(Debug, Clone, Copy)]
struct Mode {
    pole: Complex64,
    residue: Complex64,
    /// 2 for the upper member of a conjugate pair (whose partner is left out), else 1.
    weight: f64,
}

#[derive(Debug, Clone)]
enum Engine {
    PoleResidue(Modes),
    Integration(Integrator),
}

/// H(s) = direct + Σ modes, as real terms.
#[derive(Debug, Clone)]
struct Modes {
    direct: f64,
    modes: Vec<Mode>,
}

/// The Radau IIA integrator of C·x′ + G·x = b.
#[derive(Debug, Clone)]
struct Integrator {
    n: usize,
    g: DMatrix<f64>,
    c: DMatrix<f64>,
    b: Vec<f64>,
    output: Vec<f64>,
    /// (|p|, Re p) of the pencil's finite poles.
    poles: Vec<(f64, f64)>,
    /// h(0+).
    initial_slope: f64,
    /// The span over which the step figures are read.
    horizon_s: f64,
}

/// The per-step linear map of one step size h: X_i = x + S_i·(b − G·x).
struct StepMap {
    h: f64,
    /// S_3 (the end point), n×n.
    end: DMatrix<f64>,
    /// output·S_i for the three stages.
    output_rows: [Vec<f64>; 3],
}

/// One integrator step: the output at θ = 0, c1, c2, 1 of [t0, t0 + h].
#[derive(Debug, Clone, Copy)]
struct StepRecord {
    t0: f64,
    h: f64,
    nodes: [f64; 4],
}

/// An integration run.
struct Trace {
    steps: Vec<StepRecord>,
    /// y at the output points.
    values: Vec<f64>,
    /// y′ at the output points.
    slopes: Vec<f64>,
}

/// A response the figures are read from.
trait Curve {
    /// y(t).
    fn value(&self, t: f64) -> f64;
    /// y(t) − H(0), accurately where it is small.
    fn error(&self, t: f64) -> f64;
}

/// Radau IIA (s = 3) collocation nodes c_i = (4 ∓ √6)/10, 1 (Hairer & Wanner, §IV.5, table 5.6;
/// from memory, checked by the order conditions in the tests).
const RADAU_C: [f64; 3] = [0.155_051_025_721_682_2, 0.644_948_974_278_317_8, 1.0];

/// Radau IIA (s = 3) coefficients a_ij (same source): with r = √6,
/// [(88 − 7r)/360, (296 − 169r)/1800, (−2 + 3r)/225;
///  (296 + 169r)/1800, (88 + 7r)/360, (−2 − 3r)/225;
///  (16 − r)/36, (16 + r)/36, 1/9].
fn radau_a() -> [[f64; 3]; 3] {
    let r = 6.0f64.sqrt();
    [
        [(88.0 - 7.0 * r) / 360.0, (296.0 - 169.0 * r) / 1800.0, (-2.0 + 3.0 * r) / 225.0],
        [(296.0 + 169.0 * r) / 1800.0, (88.0 + 7.0 * r) / 360.0, (-2.0 - 3.0 * r) / 225.0],
        [(16.0 - r) / 36.0, (16.0 + r) / 36.0, 1.0 / 9.0],
    ]
}

/// An H(0) at most this fraction of the response's scale counts as exactly zero (a zero of H at
/// DC): the scale is |d| + Σ|ρ/p| on the pole–residue path, whose verified accuracy is 1e-9
/// ([`crate::modal::MAX_DEVIATION`]), and max(|H(0)|, |H(∞)|) on the integrator path, or the
/// peak |y| of its run for the figures.
const ZERO_FINAL: f64 = 1e-9;

/// A pole with Re p ≥ −UNSTABLE_RE·|p| counts as on or right of the imaginary axis.
const UNSTABLE_RE: f64 = 1e-10;

/// The largest phase |p|·Δt of one scan step of the pole–residue path.
const SCAN_PHASE: f64 = 0.4;

impl TimeGrid {
    /// A uniform grid of `points` times from 0 to `span_s` inclusive.
    ///
    /// # Errors
    /// [`TransientError::BadSpan`] unless the span is finite and > 0,
    /// [`TransientError::BadPoints`] outside 2 ≤ points ≤ [`MAX_POINTS`].
    pub fn new(span_s: f64, points: usize) -> Result<TimeGrid, TransientError> {
        if !(span_s.is_finite() && span_s > 0.0) {
            return Err(TransientError::BadSpan { span_s });
        }
        if !(2..=MAX_POINTS).contains(&points) {
            return Err(TransientError::BadPoints { points });
        }
        Ok(TimeGrid { span_s, points })
    }

    /// The span in s.
    pub fn span_s(&self) -> f64 {
        self.span_s
    }

    /// The number of points.
    pub fn points(&self) -> usize {
        self.points
    }

    /// The spacing in s.
    pub fn step_s(&self) -> f64 {
        self.span_s / (self.points - 1) as f64
    }

    /// t_k in s (the last one exactly the span).
    pub fn time(&self, k: usize) -> f64 {
        if k + 1 == self.points {
            self.span_s
        } else {
            self.span_s * k as f64 / (self.points - 1) as f64
        }
    }

    /// All the times in s.
    pub fn times(&self) -> Vec<f64> {
        (0..self.points).map(|k| self.time(k)).collect()
    }
}

impl SettleTolerance {
    /// The tolerance as a fraction of the reference.
    ///
    /// # Errors
    /// [`TransientError::BadBits`] for 0 or more than [`MAX_BITS`] bits;
    /// [`TransientError::BadTolerance`] for a fraction outside 0 < x < 1 or a percentage outside
    /// 0 < x < 100 (or not finite).
    pub fn fraction(&self) -> Result<f64, TransientError> {
        let bits_ok =
            |bits: u32| if (1..=MAX_BITS).contains(&bits) { Ok(bits) } else { Err(TransientError::BadBits { bits }) };
        match *self {
            Self::Fraction(x) if x > 0.0 && x < 1.0 => Ok(x),
            Self::Fraction(value) => Err(TransientError::BadTolerance { value, kind: "fraction" }),
            Self::Percent(x) if x > 0.0 && x < 100.0 => Ok(x / 100.0),
            Self::Percent(value) => Err(TransientError::BadTolerance { value, kind: "percent" }),
            Self::HalfLsb { bits } => Ok(0.5f64.powi(bits_ok(bits)? as i32 + 1)),
            Self::Lsb { bits } => Ok(0.5f64.powi(bits_ok(bits)? as i32)),
        }
    }
}

impl Default for TransientOptions {
    /// Automatic span and method, [`DEFAULT_POINTS`] points, settling to 1 %.
    fn default() -> Self {
        TransientOptions {
            span: Span::Automatic,
            points: DEFAULT_POINTS,
            tolerance: SettleTolerance::Percent(1.0),
            method: MethodChoice::Automatic,
        }
    }
}

impl fmt::Display for TransientError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::NoPencil => write!(
                f,
                "the circuit has a part that is not rational in s, so it has no time-domain model; use parts with R, L, C or single-pole gain values"
            ),
            Self::Singular => write!(
                f,
                "the circuit's equations are singular, so it has no time response; check for floating nodes, loops of voltage sources or cutsets of current sources"
            ),
            Self::Unconverged { iterations } => write!(
                f,
                "the eigenvalue iteration for the circuit's time scale did not converge within {iterations} iterations; check the part values for extreme ratios"
            ),
            Self::BadSpan { span_s } => {
                write!(f, "the time span {span_s} s is not usable; give a finite span above 0 s")
            }
            Self::BadPoints { points } => {
                write!(f, "{points} time points is not a usable grid; use at least 2 and at most {MAX_POINTS}")
            }
            Self::BadBits { bits } => {
                write!(f, "{bits} bits is not a usable converter resolution; give 1 to {MAX_BITS} bits")
            }
            Self::BadTolerance { value, kind } => {
                let range = if *kind == "percent" { "between 0 and 100 %" } else { "between 0 and 1" };
                write!(f, "the settling tolerance {value} ({kind}) is not usable; give a value strictly {range}")
            }
            Self::NonFinite { time_s } => write!(
                f,
                "the response is not finite at {time_s} s (it grows without bound); check the circuit for an unstable loop or shorten the span"
            ),
            Self::Unsettled { pole_re, pole_im } => write!(
                f,
                "the step response does not settle: the transfer function has a pole at {pole_re} {} {}j rad/s, on or right of the imaginary axis; overshoot, rise and settling need a circuit whose poles all have damping",
                if *pole_im < 0.0 { "-" } else { "+" },
                pole_im.abs()
            ),
            Self::TooManySteps { steps } => write!(
                f,
                "the integration would take {steps:.3e} steps, more than the {MAX_STEPS} allowed; shorten the span"
            ),
        }
    }
}

impl std::error::Error for TransientError {}

impl From<ModalError> for TransientError {
    fn from(error: ModalError) -> Self {
        match error {
            ModalError::NotRational => TransientError::NoPencil,
            ModalError::Unconverged { iterations } => TransientError::Unconverged { iterations },
            _ => TransientError::Singular,
        }
    }
}

/// The step response of `system` on the grid of `options` and its figures.
///
/// # Errors
/// [`SettleTolerance::fraction`]'s errors for a bad tolerance, then as [`TimeResponse::new`],
/// [`TimeGrid::new`] and [`TimeResponse::step`]. Figures that are undefined do not fail the
/// call: [`StepResponse::metrics`] holds the error of [`TimeResponse::step_metrics`].
pub fn step_response(system: &mut AcSystem, options: &TransientOptions) -> Result<StepResponse, TransientError> {
    options.tolerance.fraction()?;
    let response = TimeResponse::new(system, options.method)?;
    let grid = response.grid(options.span, options.points)?;
    let values = response.step(&grid)?;
    let metrics = response.step_metrics(options.tolerance);
    Ok(StepResponse { method: response.method(), times_s: grid.times(), values, metrics })
}

/// The impulse response of `system` on the grid of `options` (the tolerance is not used).
///
/// # Errors
/// As [`TimeResponse::new`], [`TimeGrid::new`] and [`TimeResponse::impulse`].
pub fn impulse_response(system: &mut AcSystem, options: &TransientOptions) -> Result<ImpulseResponse, TransientError> {
    let response = TimeResponse::new(system, options.method)?;
    let grid = response.grid(options.span, options.points)?;
    let values = response.impulse(&grid)?;
    Ok(ImpulseResponse {
        method: response.method(),
        times_s: grid.times(),
        values,
        dirac_weight: response.initial_value(),
    })
}

impl TimeResponse {
    /// Prepares `system` for the time domain: the pole–residue form when [`Modal::new`] verifies
    /// it (and `choice` allows), else the integrator.
    ///
    /// # Errors
    /// [`TransientError::NoPencil`] when a part is not rational in s, [`TransientError::Singular`]
    /// when the equations are singular, [`TransientError::Unconverged`] when the integrator's
    /// time scale cannot be found.
    pub fn new(system: &mut AcSystem, choice: MethodChoice) -> Result<TimeResponse, TransientError> {
        let refused = match choice {
            MethodChoice::Integration => None,
            MethodChoice::Automatic => match Modal::new(system) {
                Ok(modal) => return Ok(TimeResponse::from_modal(&modal)),
                Err(error @ (ModalError::NotRational | ModalError::Singular)) => return Err(error.into()),
                Err(error) => Some(error),
            },
        };
        TimeResponse::integrated(system, refused)
    }

    /// The method in use.
    pub fn method(&self) -> Method {
        self.method
    }

    /// H(0), the final value of the step response (0 exactly for a zero of H at DC; for an
    /// unsettled response, the value the formula gives without the diverging terms).
    pub fn final_value(&self) -> f64 {
        self.final_value
    }

    /// y(0+) = H(∞): the jump of the step response at t = 0 and the Dirac weight of the impulse
    /// response.
    pub fn initial_value(&self) -> f64 {
        self.initial_value
    }

    /// The group delay at DC, −H′(0)/H(0), in s; `None` when H(0) = 0 or the response does not
    /// settle.
    pub fn dc_group_delay_s(&self) -> Option<f64> {
        self.dc_group_delay_s
    }

    /// A span that shows the whole step, in s: until the envelope of the error falls to
    /// [`DEFAULT_SPAN_FRACTION`] of the reference, at most 60 slowest time constants (pole–residue
    /// path); 30 slowest time constants on the integrator path, where residues are not known
    /// (enough for a pole of multiplicity three to settle to 2^−25: (1 + t + t²/2)·e^−t is 5e−11
    /// at t = 30, computed). An unsettled response gets 20/|p| of its slowest non-zero pole, and a
    /// circuit without poles 1 s.
    pub fn default_span_s(&self) -> f64 {
        match &self.engine {
            Engine::PoleResidue(modes) => {
                if self.unstable.is_some() {
                    return modes.marginal_span();
                }
                let reference = if self.zero_final { modes.size() } else { self.final_value.abs() };
                match modes.slowest_decay() {
                    Some(sigma) => {
                        let span = modes.horizon(DEFAULT_SPAN_FRACTION * reference).min(60.0 / sigma);
                        if span > 0.0 {
                            span
                        } else {
                            1.0 / sigma
                        }
                    }
                    None => 1.0,
                }
            }
            Engine::Integration(integrator) => integrator.horizon_s,
        }
    }

    /// The uniform grid of `points` over `span`.
    ///
    /// # Errors
    /// As [`TimeGrid::new`].
    pub fn grid(&self, span: Span, points: usize) -> Result<TimeGrid, TransientError> {
        let span_s = match span {
            Span::Automatic => self.default_span_s(),
            Span::Seconds(span_s) => span_s,
        };
        TimeGrid::new(span_s, points)
    }

    /// The step response y(t_k) on `grid` (y(0+) at t = 0).
    ///
    /// # Errors
    /// [`TransientError::NonFinite`] where the response overflows; on the integrator path also
    /// [`TransientError::TooManySteps`] and [`TransientError::Singular`].
    pub fn step(&self, grid: &TimeGrid) -> Result<Vec<f64>, TransientError> {
        let values = match &self.engine {
            Engine::PoleResidue(modes) => grid.times().into_iter().map(|t| modes.step(t)).collect(),
            Engine::Integration(integrator) => {
                integrator.run(grid.step_s(), grid.points() - 1, self.initial_value)?.values
            }
        };
        finite(grid, values)
    }

    /// The regular part h(t_k) of the impulse response on `grid` (h(0+) at t = 0); the Dirac
    /// weight at t = 0 is [`TimeResponse::initial_value`].
    ///
    /// # Errors
    /// As [`TimeResponse::step`].
    pub fn impulse(&self, grid: &TimeGrid) -> Result<Vec<f64>, TransientError> {
        let values = match &self.engine {
            Engine::PoleResidue(modes) => grid.times().into_iter().map(|t| modes.slope(t)).collect(),
            Engine::Integration(integrator) => {
                let mut slopes = integrator.run(grid.step_s(), grid.points() - 1, self.initial_value)?.slopes;
                slopes[0] = integrator.initial_slope;
                slopes
            }
        };
        finite(grid, values)
    }

    /// The figures of the step response for a settling `tolerance` (module doc).
    ///
    /// # Errors
    /// [`SettleTolerance::fraction`]'s errors; [`TransientError::Unsettled`] when a pole on or
    /// right of the imaginary axis shows in H (pole–residue path); on the integrator path as
    /// [`TimeResponse::step`].
    pub fn step_metrics(&self, tolerance: SettleTolerance) -> Result<StepMetrics, TransientError> {
        let fraction = tolerance.fraction()?;
        if let Some(pole) = self.unstable {
            return Err(TransientError::Unsettled { pole_re: pole.re, pole_im: pole.im });
        }
        let final_value = self.final_value;
        let figures = match &self.engine {
            Engine::PoleResidue(modes) => {
                let curve = ModesCurve { modes };
                // The reference: |H(0)|, or for a zero final value the peak |y|, found first.
                let (reference, kind) = if self.zero_final {
                    let knots = modes.knots(0.5 * 1e-9 * modes.size());
                    (peak_magnitude(&curve, &knots).value.abs(), SettlingReference::Peak)
                } else {
                    (final_value.abs(), SettlingReference::FinalValue)
                };
                let band = fraction * reference;
                let knots = modes.knots(0.5 * band.min(1e-9 * reference));
                figures(&curve, &knots, final_value, self.zero_final, fraction, band, kind)
            }
            Engine::Integration(integrator) => {
                let macro_steps = 4096;
                let trace =
                    integrator.run(integrator.horizon_s / macro_steps as f64, macro_steps, self.initial_value)?;
                if let Some(k) = trace.values.iter().position(|v| !v.is_finite()) {
                    return Err(TransientError::NonFinite {
                        time_s: integrator.horizon_s * k as f64 / macro_steps as f64,
                    });
                }
                let knots = trace.knots();
                let peak = peak_magnitude(&TraceCurve { steps: &trace.steps, final_value: 0.0 }, &knots).value.abs();
                // Only the run shows the response's scale: an H(0) below ZERO_FINAL of its peak
                // is a zero at DC too.
                let zero_final = self.zero_final || final_value.abs() <= ZERO_FINAL * peak;
                let final_value = if zero_final { 0.0 } else { final_value };
                let curve = TraceCurve { steps: &trace.steps, final_value };
                let (reference, kind) = if zero_final {
                    (peak, SettlingReference::Peak)
                } else {
                    (final_value.abs(), SettlingReference::FinalValue)
                };
                let figures = figures(&curve, &knots, final_value, zero_final, fraction, fraction * reference, kind);
                return Ok(self.metrics_from(final_value, zero_final, figures));
            }
        };
        Ok(self.metrics_from(final_value, self.zero_final, figures))
    }

    /// Assembles the [`StepMetrics`].
    fn metrics_from(&self, final_value: f64, zero_final: bool, figures: Figures) -> StepMetrics {
        let Figures { peak, overshoot_pct, rise, settling } = figures;
        StepMetrics {
            final_value,
            initial_value: self.initial_value,
            peak,
            overshoot_pct,
            rise,
            settling,
            dc_group_delay_s: if zero_final { None } else { self.dc_group_delay_s },
            method: self.method,
        }
    }

    /// The pole–residue form of a verified modal decomposition.
    fn from_modal(modal: &Modal) -> TimeResponse {
        let fractions = modal.transfer_partial_fractions();
        let terms = &fractions.terms;
        let mut modes = Vec::new();
        for (k, &(pole, residue)) in terms.iter().enumerate() {
            if residue == Complex64::new(0.0, 0.0) {
                continue;
            }
            let partner = |j: usize| j != k && terms[j].0 == pole.conj() && terms[j].1 == residue.conj();
            let paired = pole.im != 0.0 && (0..terms.len()).any(partner);
            match (pole.im == 0.0, paired) {
                (true, _) => modes.push(Mode { pole, residue: Complex64::new(residue.re, 0.0), weight: 1.0 }),
                (false, true) if pole.im > 0.0 => modes.push(Mode { pole, residue, weight: 2.0 }),
                (false, true) => {} // the lower member: counted by its partner
                (false, false) => modes.push(Mode { pole, residue, weight: 1.0 }),
            }
        }
        let modes = Modes { direct: fractions.direct, modes };
        let unstable = modes
            .modes
            .iter()
            .filter(|m| m.pole.re >= -UNSTABLE_RE * m.pole.norm())
            .map(|m| m.pole)
            .max_by(|a, b| a.re.total_cmp(&b.re));
        // H(0): the modal form's own DC value, exact 0 for a zero at DC; where it reports a pole
        // at 0 (one without a residue in H), the sum without that pole.
        let final_value = match modal.solve_at(0.0) {
            Ok(solution) => solution.transfer.re,
            Err(_) => modes.dc_value(),
        };
        // Below the modal form's verified accuracy H(0) is a zero at DC.
        let zero_final = final_value.abs() <= ZERO_FINAL * modes.size();
        let final_value = if zero_final { 0.0 } else { final_value };
        let dc_group_delay_s = (!zero_final && unstable.is_none()).then(|| modes.dc_moment() / final_value);
        TimeResponse {
            method: Method::PoleResidue { condition: fractions.condition },
            initial_value: modes.direct,
            engine: Engine::PoleResidue(modes),
            final_value,
            zero_final,
            dc_group_delay_s,
            unstable,
        }
    }

    /// The integrator for `system`.
    fn integrated(system: &mut AcSystem, refused: Option<ModalError>) -> Result<TimeResponse, TransientError> {
        let poles = Modal::pencil_poles(system)?;
        let Pencil { n, g, c, b, .. } = system.pencil().ok_or(TransientError::NoPencil)?;
        let output = system.functionals().padded(n).output;
        let magnitudes: Vec<f64> = poles.iter().map(|p| p.norm()).collect();
        let fastest = magnitudes.iter().copied().fold(0.0, f64::max);

        // H(0) and its group delay from the LU path; at a pole at 0 (a node floating at DC), just
        // above it.
        let slowest = magnitudes.iter().copied().filter(|&m| m > 0.0).fold(f64::INFINITY, f64::min);
        let (final_value, dc_derivative) = match system.solve_at(0.0, Detail::Transfer) {
            Ok(solution) => (solution.transfer.re, solution.transfer_derivative),
            Err(_) => {
                let f_hz = if slowest.is_finite() { 1e-6 * slowest / (2.0 * PI) } else { 1e-6 };
                let solution = system.solve_at(f_hz, Detail::Transfer).map_err(|_| TransientError::Singular)?;
                (solution.transfer.re, solution.transfer_derivative)
            }
        };
        // y(0+) and h(0+) from H(jω) = H(∞) + h(0+)/(jω) + h1/(jω)² + …, Richardson in ω.
        let (initial_value, initial_slope) = if fastest > 0.0 {
            let omega = 1e3 * fastest;
            let mut at = |omega: f64| system.solve_at(omega / (2.0 * PI), Detail::Transfer).map(|s| s.transfer);
            let (h1, h2) = (
                at(omega).map_err(|_| TransientError::Singular)?,
                at(2.0 * omega).map_err(|_| TransientError::Singular)?,
            );
            let initial = (4.0 * h2.re - h1.re) / 3.0;
            let slope = (4.0 * (-2.0 * omega * h2.im) - (-omega * h1.im)) / 3.0;
            (initial, slope)
        } else {
            (final_value, 0.0)
        };
        let scale = final_value.abs().max(initial_value.abs());
        let zero_final = final_value.abs() <= ZERO_FINAL * scale || final_value == 0.0;
        let final_value = if zero_final { 0.0 } else { final_value };
        let dc_group_delay_s = (!zero_final).then(|| -(dc_derivative / final_value).im);
        let decays: Vec<f64> = poles.iter().filter(|p| p.re < -UNSTABLE_RE * p.norm()).map(|p| -p.re).collect();
        let horizon_s = match decays.iter().copied().reduce(f64::min) {
            Some(sigma) => 30.0 / sigma,
            None if slowest.is_finite() => 20.0 / slowest,
            None => 1.0,
        };
        let integrator = Integrator {
            n,
            g: DMatrix::from_row_slice(n, n, &g),
            c: DMatrix::from_row_slice(n, n, &c),
            b: b.iter().map(|z| z.re).collect(),
            output,
            poles: poles.iter().map(|p| (p.norm(), p.re)).collect(),
            initial_slope,
            horizon_s,
        };
        Ok(TimeResponse {
            engine: Engine::Integration(integrator),
            method: Method::Integration { refused },
            final_value,
            zero_final,
            initial_value,
            dc_group_delay_s,
            unstable: None,
        })
    }
}

/// Checks that every value is finite.
fn finite(grid: &TimeGrid, values: Vec<f64>) -> Result<Vec<f64>, TransientError> {
    match values.iter().position(|v| !v.is_finite()) {
        Some(k) => Err(TransientError::NonFinite { time_s: grid.time(k) }),
        None => Ok(values),
    }
}

/// e^z − 1 without cancellation for small |z|.
fn exp_m1(z: Complex64) -> Complex64 {
    if z.im == 0.0 {
        return Complex64::new(z.re.exp_m1(), 0.0);
    }
    let half = (z.im / 2.0).sin();
    Complex64::new(z.re.exp_m1() * z.im.cos() - 2.0 * half * half, z.re.exp() * z.im.sin())
}

impl Modes {
    /// y(t) = d + Σ ρ·(e^{pt} − 1)/p (ρ·t at p = 0).
    fn step(&self, t: f64) -> f64 {
        let mut y = self.direct;
        for mode in &self.modes {
            let term = if mode.pole.norm() == 0.0 {
                mode.residue * t
            } else {
                mode.residue * exp_m1(mode.pole * t) / mode.pole
            };
            y += mode.weight * term.re;
        }
        y
    }

    /// h(t) = Σ ρ·e^{pt}, the derivative of the step response for t > 0.
    fn slope(&self, t: f64) -> f64 {
        self.modes.iter().map(|m| m.weight * (m.residue * (m.pole * t).exp()).re).sum()
    }

    /// e(t) = Σ (ρ/p)·e^{pt} over the poles off the origin: y(t) − H(0) when no pole at 0 carries
    /// a residue.
    fn error(&self, t: f64) -> f64 {
        self.modes
            .iter()
            .filter(|m| m.pole.norm() > 0.0)
            .map(|m| m.weight * (m.residue / m.pole * (m.pole * t).exp()).re)
            .sum()
    }

    /// The envelope E(t) = Σ |ρ/p|·e^{Re p·t} ≥ |e(t)|.
    fn envelope(&self, t: f64) -> f64 {
        self.modes
            .iter()
            .filter(|m| m.pole.norm() > 0.0)
            .map(|m| m.weight * (m.residue / m.pole).norm() * (m.pole.re * t).exp())
            .sum()
    }

    /// d + Σ|ρ/p|: a bound on |y| and the scale of its rounding error.
    fn size(&self) -> f64 {
        self.direct.abs() + self.envelope(0.0)
    }

    /// H(0) = d − Σ ρ/p over the poles off the origin.
    fn dc_value(&self) -> f64 {
        self.direct - self.error(0.0)
    }

    /// −H′(0) = Σ ρ/p².
    fn dc_moment(&self) -> f64 {
        self.modes.iter().filter(|m| m.pole.norm() > 0.0).map(|m| m.weight * (m.residue / (m.pole * m.pole)).re).sum()
    }

    /// The smallest decay rate −Re p (all poles stable), or `None` without poles.
    fn slowest_decay(&self) -> Option<f64> {
        self.modes.iter().map(|m| -m.pole.re).reduce(f64::min)
    }

    /// The span for a response that does not settle: 20/|p| of the slowest non-zero pole, or 1 s.
    fn marginal_span(&self) -> f64 {
        let slowest = self.modes.iter().map(|m| m.pole.norm()).filter(|&m| m > 0.0).fold(f64::INFINITY, f64::min);
        if slowest.is_finite() {
            20.0 / slowest
        } else {
            1.0
        }
    }

    /// The first time at which the envelope is at most `level` (0 if it already is at t = 0).
    /// All poles are stable here.
    fn horizon(&self, level: f64) -> f64 {
        if self.envelope(0.0) <= level {
            return 0.0;
        }
        let Some(sigma) = self.slowest_decay() else { return 0.0 };
        let mut high = 1.0 / sigma;
        while self.envelope(high) > level && high.is_finite() {
            high *= 2.0;
        }
        if !high.is_finite() {
            return f64::MAX;
        }
        bisect(|t| self.envelope(t) - level, 0.0, high)
    }

    /// Knots up to the horizon of `level`, between which the response is monotone: scan points
    /// (each step at most [`SCAN_PHASE`] rad of the fastest pole still above a thousandth of
    /// `level`, and at most 1/64 of the horizon) and the zeros of h(t) between them.
    fn knots(&self, level: f64) -> Vec<f64> {
        let mut knots = vec![0.0];
        if level.is_nan() || level <= 0.0 {
            return knots; // a response that is identically zero
        }
        let horizon = self.horizon(level);
        if horizon == 0.0 {
            return knots;
        }
        let alive = 1e-3 * level;
        let mut t = 0.0;
        let mut slope = self.slope(0.0);
        while t < horizon {
            let fastest = self
                .modes
                .iter()
                .filter(|m| m.pole.norm() > 0.0)
                .filter(|m| m.weight * (m.residue / m.pole).norm() * (m.pole.re * t).exp() > alive)
                .map(|m| m.pole.norm())
                .fold(0.0, f64::max);
            let step = if fastest > 0.0 { (SCAN_PHASE / fastest).min(horizon / 64.0) } else { horizon / 64.0 };
            let next = (t + step).min(horizon);
            let next_slope = self.slope(next);
            if slope * next_slope < 0.0 {
                knots.push(bisect(|x| self.slope(x), t, next));
            }
            knots.push(next);
            t = next;
            slope = next_slope;
        }
        knots
    }
}

/// The pole–residue response as a [`Curve`].
struct ModesCurve<'a> {
    modes: &'a Modes,
}

impl Curve for ModesCurve<'_> {
    fn value(&self, t: f64) -> f64 {
        self.modes.step(t)
    }

    fn error(&self, t: f64) -> f64 {
        // e(t) = Σ (ρ/p)·e^{pt} keeps its relative accuracy as it shrinks. Adding the rounding-level
        // difference between d − Σ ρ/p and the reported H(0) would not: relative to a band of
        // 2^−21 an offset of 1e-16 already moves the settling time by 2e-10 time constants.
        self.modes.error(t)
    }
}

impl Integrator {
    /// The map of one step of size h (module doc), with rows equilibrated before the LU.
    fn step_map(&self, h: f64) -> Result<StepMap, TransientError> {
        let n = self.n;
        let a = radau_a();
        let mut big = DMatrix::<f64>::zeros(3 * n, 3 * n);
        let mut rhs = DMatrix::<f64>::zeros(3 * n, n);
        for i in 0..3 {
            for j in 0..3 {
                for r in 0..n {
                    for col in 0..n {
                        let mut value = h * a[i][j] * self.g[(r, col)];
                        if i == j {
                            value += self.c[(r, col)];
                        }
                        big[(i * n + r, j * n + col)] = value;
                    }
                }
            }
            for r in 0..n {
                rhs[(i * n + r, r)] = h * RADAU_C[i];
            }
        }
        for row in 0..3 * n {
            let size = (0..3 * n).map(|col| big[(row, col)].abs()).fold(0.0, f64::max);
            if size > 0.0 {
                for col in 0..3 * n {
                    big[(row, col)] /= size;
                }
                for col in 0..n {
                    rhs[(row, col)] /= size;
                }
            }
        }
        let s = big.lu().solve(&rhs).ok_or(TransientError::Singular)?;
        if s.iter().any(|v| !v.is_finite()) {
            return Err(TransientError::Singular);
        }
        let output_row = |i: usize| -> Vec<f64> {
            (0..n).map(|col| (0..n).map(|r| self.output[r] * s[(i * n + r, col)]).sum()).collect()
        };
        Ok(StepMap {
            h,
            end: s.rows(2 * n, n).into_owned(),
            output_rows: [output_row(0), output_row(1), output_row(2)],
        })
    }

    /// The number of steps per output interval of `macro_step` starting at `t`: enough for
    /// h·|p| ≤ [`MAX_STEP_PHASE`] for every pole not yet decayed below e^−46.
    fn substeps(&self, t: f64, macro_step: f64) -> f64 {
        let fastest =
            self.poles.iter().filter(|&&(_, re)| re * t > -46.0).map(|&(magnitude, _)| magnitude).fold(0.0, f64::max);
        (macro_step * fastest / MAX_STEP_PHASE).ceil().max(1.0)
    }

    /// Integrates `macro_steps` output intervals of `macro_step` s from rest; `initial_value` is
    /// y(0+).
    fn run(&self, macro_step: f64, macro_steps: usize, initial_value: f64) -> Result<Trace, TransientError> {
        let n = self.n;
        let total: f64 = (0..macro_steps).map(|k| self.substeps(k as f64 * macro_step, macro_step)).sum();
        if total.is_nan() || total > MAX_STEPS as f64 {
            return Err(TransientError::TooManySteps { steps: total });
        }
        let mut maps: Vec<(usize, StepMap)> = Vec::new();
        let mut x = vec![0.0; n];
        let mut q = vec![0.0; n];
        let mut steps = Vec::with_capacity(total as usize);
        let mut values = Vec::with_capacity(macro_steps + 1);
        let mut slopes = Vec::with_capacity(macro_steps + 1);
        values.push(initial_value);
        slopes.push(self.initial_slope);
        let basis = collocation_basis();
        let mut y_start = initial_value;
        for k in 0..macro_steps {
            let t_start = k as f64 * macro_step;
            let m = self.substeps(t_start, macro_step) as usize;
            let index = match maps.iter().position(|(count, _)| *count == m) {
                Some(index) => index,
                None => {
                    maps.push((m, self.step_map(macro_step / m as f64)?));
                    maps.len() - 1
                }
            };
            let map = &maps[index].1;
            let mut last = [0.0; 4];
            for j in 0..m {
                for (r, q_r) in q.iter_mut().enumerate() {
                    *q_r = self.b[r] - (0..n).map(|col| self.g[(r, col)] * x[col]).sum::<f64>();
                }
                let y_x: f64 = self.output.iter().zip(&x).map(|(r, x)| r * x).sum();
                let stage = |i: usize| y_x + map.output_rows[i].iter().zip(&q).map(|(r, q)| r * q).sum::<f64>();
                let nodes = [y_start, stage(0), stage(1), stage(2)];
                for (r, x_r) in x.iter_mut().enumerate() {
                    *x_r += (0..n).map(|col| map.end[(r, col)] * q[col]).sum::<f64>();
                }
                steps.push(StepRecord { t0: t_start + j as f64 * map.h, h: map.h, nodes });
                y_start = nodes[3];
                last = nodes;
            }
            let a = basis * Vector4::from(last);
            values.push(last[3]);
            slopes.push((a[1] + 2.0 * a[2] + 3.0 * a[3]) / map.h);
        }
        Ok(Trace { steps, values, slopes })
    }
}

/// The inverse Vandermonde matrix of the nodes θ = 0, c1, c2, 1: the monomial coefficients of the
/// collocation cubic from its node values.
fn collocation_basis() -> Matrix4<f64> {
    let nodes = [0.0, RADAU_C[0], RADAU_C[1], RADAU_C[2]];
    let vandermonde = Matrix4::from_fn(|i, j| nodes[i].powi(j as i32));
    vandermonde.try_inverse().expect("distinct collocation nodes")
}

impl Trace {
    /// Step boundaries and the interior extrema of each step's cubic.
    fn knots(&self) -> Vec<f64> {
        let basis = collocation_basis();
        let mut knots = Vec::with_capacity(self.steps.len() + 1);
        for step in &self.steps {
            knots.push(step.t0);
            let a = basis * Vector4::from(step.nodes);
            // y′(θ) ∝ a1 + 2a2·θ + 3a3·θ².
            let mut roots = quadratic_roots(3.0 * a[3], 2.0 * a[2], a[1]);
            roots.retain(|&theta| theta > 0.0 && theta < 1.0);
            roots.sort_by(f64::total_cmp);
            knots.extend(roots.iter().map(|theta| step.t0 + theta * step.h));
        }
        if let Some(last) = self.steps.last() {
            knots.push(last.t0 + last.h);
        }
        knots
    }
}

/// The real roots of a·x² + b·x + c (numerically stable form).
fn quadratic_roots(a: f64, b: f64, c: f64) -> Vec<f64> {
    let scale = a.abs().max(b.abs()).max(c.abs());
    if scale == 0.0 {
        return Vec::new();
    }
    if a.abs() <= 1e-14 * scale {
        return if b != 0.0 { vec![-c / b] } else { Vec::new() };
    }
    let discriminant = b * b - 4.0 * a * c;
    if discriminant < 0.0 {
        return Vec::new();
    }
    let q = -0.5 * (b + b.signum() * discriminant.sqrt());
    if q == 0.0 {
        return vec![0.0];
    }
    vec![q / a, c / q]
}

/// The integrated response as a [`Curve`]: each step's collocation cubic.
struct TraceCurve<'a> {
    steps: &'a [StepRecord],
    final_value: f64,
}

impl Curve for TraceCurve<'_> {
    fn value(&self, t: f64) -> f64 {
        let k = self.steps.partition_point(|s| s.t0 <= t).saturating_sub(1);
        let step = &self.steps[k];
        let theta = ((t - step.t0) / step.h).clamp(0.0, 1.0);
        let nodes = [0.0, RADAU_C[0], RADAU_C[1], RADAU_C[2]];
        // Lagrange form through the four nodes.
        (0..4)
            .map(|i| {
                let basis: f64 =
                    (0..4).filter(|&j| j != i).map(|j| (theta - nodes[j]) / (nodes[i] - nodes[j])).product();
                step.nodes[i] * basis
            })
            .sum()
    }

    fn error(&self, t: f64) -> f64 {
        self.value(t) - self.final_value
    }
}

/// What [`figures`] finds.
struct Figures {
    peak: Option<TimePoint>,
    overshoot_pct: Option<f64>,
    rise: Option<Rise>,
    settling: Settling,
}

/// The point of largest |y| among the knots.
fn peak_magnitude(curve: &dyn Curve, knots: &[f64]) -> TimePoint {
    knots
        .iter()
        .map(|&t| TimePoint { time_s: t, value: curve.value(t) })
        .max_by(|a, b| a.value.abs().total_cmp(&b.value.abs()))
        .unwrap_or(TimePoint { time_s: 0.0, value: 0.0 })
}

/// Peak, overshoot, rise and settling from monotone pieces between `knots`.
fn figures(
    curve: &dyn Curve,
    knots: &[f64],
    final_value: f64,
    zero_final: bool,
    fraction: f64,
    band: f64,
    reference: SettlingReference,
) -> Figures {
    let values: Vec<f64> = knots.iter().map(|&t| curve.value(t)).collect();
    let (peak, overshoot_pct, rise) = if zero_final {
        (Some(peak_magnitude(curve, knots)), None, None)
    } else {
        // z = y/H(0): the response in units of the final step.
        let z = |k: usize| values[k] / final_value;
        let best = (0..knots.len()).max_by(|&a, &b| z(a).total_cmp(&z(b)));
        let peak = best.filter(|&k| z(k) - 1.0 > 1e-12).map(|k| TimePoint { time_s: knots[k], value: values[k] });
        let overshoot = peak.map_or(0.0, |p| 100.0 * (p.value / final_value - 1.0));
        let crossing = |level: f64| -> Option<f64> {
            if z(0) >= level {
                return Some(knots[0]);
            }
            let k = (1..knots.len()).find(|&k| z(k) >= level)?;
            Some(bisect(|t| curve.value(t) / final_value - level, knots[k - 1], knots[k]))
        };
        let rise = match (crossing(0.1), crossing(0.9)) {
            (Some(t10_s), Some(t90_s)) => Some(Rise { t10_s, t90_s, rise_time_s: t90_s - t10_s }),
            _ => None,
        };
        (peak, Some(overshoot), rise)
    };
    // Settling: the last knot outside the band; the exit lies in the monotone piece after it.
    let errors: Vec<f64> = knots.iter().map(|&t| curve.error(t)).collect();
    let last_outside = (0..knots.len()).rev().find(|&k| errors[k].abs() > band);
    let time_s = match last_outside {
        None => Some(0.0),
        Some(k) if k + 1 == knots.len() => None,
        Some(k) => {
            let target = errors[k].signum() * band;
            Some(bisect(|t| curve.error(t) - target, knots[k], knots[k + 1]))
        }
    };
    Figures { peak, overshoot_pct, rise, settling: Settling { fraction, reference, band, time_s } }
}

/// A root of `f` in [a, b], where f(a) and f(b) differ in sign (or one is zero), by bisection to
/// the last bit.
fn bisect(f: impl Fn(f64) -> f64, a: f64, b: f64) -> f64 {
    let (mut low, mut high) = (a, b);
    let f_low = f(low);
    if f_low == 0.0 {
        return low;
    }
    for _ in 0..200 {
        let mid = 0.5 * (low + high);
        if mid <= low || mid >= high {
            break;
        }
        let f_mid = f(mid);
        if f_mid == 0.0 {
            return mid;
        }
        if (f_mid < 0.0) == (f_low < 0.0) {
            low = mid;
        } else {
            high = mid;
        }
    }
    0.5 * (low + high)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::circuit::{CircuitBuilder, Gain};
    use crate::mna::Probe;

    fn system(builder: &CircuitBuilder, stimulus: &str) -> AcSystem {
        let circuit = builder.build().unwrap();
        let probe = Probe::new(&circuit, stimulus, "out", "0").unwrap();
        AcSystem::new(&circuit, &probe)
    }

    fn rc(r: f64, cap: f64) -> AcSystem {
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0).resistor("R1", "in", "out", r).capacitor("C1", "out", "0", cap);
        system(&b, "V1")
    }

    /// Series R–L–C driven by an ideal source, output across C.
    fn series_rlc(r: f64, l: f64, cap: f64) -> AcSystem {
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0)
            .resistor("R1", "in", "a", r)
            .inductor("L1", "a", "out", l)
            .capacitor("C1", "out", "0", cap);
        system(&b, "V1")
    }

    /// Two identical RC stages buffered by a unity-gain VCVS (a double pole at −1/RC).
    fn buffered_rc_pair(r: f64, cap: f64) -> AcSystem {
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0)
            .resistor("R1", "in", "a", r)
            .capacitor("C1", "a", "0", cap)
            .vcvs("E1", "b", "0", "a", "0", Gain::Constant(1.0))
            .resistor("R2", "b", "out", r)
            .capacitor("C2", "out", "0", cap);
        system(&b, "V1")
    }

    /// The one check helper: |got − want| ≤ atol, with a message.
    fn check(what: &str, got: f64, want: f64, atol: f64) {
        assert!(
            (got - want).abs() <= atol,
            "{what}: {got} vs {want} (difference {:.3e} > {atol:.1e})",
            (got - want).abs()
        );
    }

    // Source: Hairer & Wanner, Solving ODEs II, §IV.5 (from memory): a 3-stage Radau IIA has
    // stage order 3, C(3): Σ_j a_ij·c_j^(k−1) = c_i^k/k, and order 5, B(5): Σ_j b_j·c_j^(k−1) = 1/k
    // with b the last row of A (stiffly accurate).
    #[test]
    fn radau_coefficients_meet_their_order_conditions() {
        let a = radau_a();
        let r = 6.0f64.sqrt();
        check("c1", RADAU_C[0], (4.0 - r) / 10.0, 1e-16);
        check("c2", RADAU_C[1], (4.0 + r) / 10.0, 1e-16);
        for i in 0..3 {
            for k in 1..=3 {
                let sum: f64 = (0..3).map(|j| a[i][j] * RADAU_C[j].powi(k - 1)).sum();
                check(&format!("C(3), i = {i}, k = {k}"), sum, RADAU_C[i].powi(k) / k as f64, 1e-15);
            }
        }
        for k in 1..=5 {
            let sum: f64 = (0..3).map(|j| a[2][j] * RADAU_C[j].powi(k - 1)).sum();
            check(&format!("B(5), k = {k}"), sum, 1.0 / k as f64, 1e-15);
        }
    }

    #[test]
    fn exp_m1_has_no_cancellation() {
        for z in [Complex64::new(1e-12, 2e-12), Complex64::new(-3e-9, 1e-9), Complex64::new(0.3, -2.0)] {
            // Source: the series e^z − 1 = z + z²/2 + z³/6 + … (common practice), to four terms.
            let series = z + z * z / 2.0 + z * z * z / 6.0 + z * z * z * z / 24.0;
            let want = if z.norm() < 1e-3 { series } else { z.exp() - 1.0 };
            assert!((exp_m1(z) - want).norm() <= 1e-15 * want.norm(), "{z}: {} vs {want}", exp_m1(z));
        }
    }

    #[test]
    fn quadratic_roots_are_found_without_cancellation() {
        let mut roots = quadratic_roots(1.0, -1e8, 1.0);
        roots.sort_by(f64::total_cmp);
        // Source: Vieta, x1·x2 = c/a and x1 + x2 = −b/a (common practice).
        check("small root", roots[0], 1e-8, 1e-22);
        check("large root", roots[1], 1e8, 1e-6);
        assert!(quadratic_roots(1.0, 0.0, 1.0).is_empty());
        assert_eq!(quadratic_roots(0.0, 2.0, -1.0), vec![0.5]);
    }

    // Source: first-order RC step y = 1 − e^(−t/RC) (closed form); rise 10–90 % = ln 9·RC and
    // settling to ½ LSB of N bits = ln(2^(N+1))·RC (references.md §6).
    #[test]
    fn rc_step_matches_the_closed_form() {
        let (r, cap) = (1e3, 1e-6);
        let tau = r * cap;
        let response = TimeResponse::new(&mut rc(r, cap), MethodChoice::Automatic).unwrap();
        assert!(matches!(response.method(), Method::PoleResidue { .. }));
        let grid = TimeGrid::new(10.0 * tau, 101).unwrap();
        let values = response.step(&grid).unwrap();
        for (t, y) in grid.times().into_iter().zip(values) {
            check(&format!("y({t})"), y, -(-t / tau).exp_m1(), 1e-15);
        }
        let impulse = response.impulse(&grid).unwrap();
        check("h(0+)", impulse[0], 1.0 / tau, 1e-12 / tau);
        let metrics = response.step_metrics(SettleTolerance::HalfLsb { bits: 12 }).unwrap();
        check("final", metrics.final_value, 1.0, 1e-15);
        check("initial", metrics.initial_value, 0.0, 1e-15);
        assert_eq!(metrics.peak, None);
        assert_eq!(metrics.overshoot_pct, Some(0.0));
        let rise = metrics.rise.unwrap();
        check("rise", rise.rise_time_s, 9.0f64.ln() * tau, 1e-12 * tau);
        check("t10", rise.t10_s, (1.0f64 / 0.9).ln() * tau, 1e-12 * tau);
        check("settling", metrics.settling.time_s.unwrap(), 13.0 * 2.0f64.ln() * tau, 1e-12 * tau);
        assert_eq!(metrics.settling.reference, SettlingReference::FinalValue);
        // Source: group delay of 1/(1 + sτ) at DC is τ (closed form).
        check("dc delay", metrics.dc_group_delay_s.unwrap(), tau, 1e-12 * tau);
        // The default span lets e^(−t/τ) fall to 2^−25: 25·ln 2·τ.
        check("default span", response.default_span_s(), 25.0 * 2.0f64.ln() * tau, 1e-9 * tau);
    }

    // Source: the second-order step overshoot exp(−πζ/√(1 − ζ²)) (Ogata, Modern Control
    // Engineering, from memory), ζ = (R/2)·√(C/L).
    #[test]
    fn series_rlc_overshoot_and_the_integrator_agree() {
        let (l, cap): (f64, f64) = (1e-3, 1e-7);
        let zeta: f64 = 0.3;
        let r = 2.0 * zeta * (l / cap).sqrt();
        let mut system = series_rlc(r, l, cap);
        let exact = TimeResponse::new(&mut system, MethodChoice::Automatic).unwrap();
        let metrics = exact.step_metrics(SettleTolerance::Percent(1.0)).unwrap();
        let want = 100.0 * (-PI * zeta / (1.0 - zeta * zeta).sqrt()).exp();
        check("overshoot %", metrics.overshoot_pct.unwrap(), want, 1e-9);

        let integrated = TimeResponse::new(&mut system, MethodChoice::Integration).unwrap();
        assert_eq!(integrated.method(), Method::Integration { refused: None });
        let grid = exact.grid(Span::Automatic, 500).unwrap();
        let (a, b) = (exact.step(&grid).unwrap(), integrated.step(&grid).unwrap());
        let worst = a.iter().zip(&b).map(|(a, b)| (a - b).abs()).fold(0.0, f64::max);
        assert!(worst <= 1e-8, "step: integrator deviates by {worst:e}");
        let tau_0 = (l * cap).sqrt();
        let (a, b) = (exact.impulse(&grid).unwrap(), integrated.impulse(&grid).unwrap());
        let worst = a.iter().zip(&b).map(|(a, b)| (a - b).abs()).fold(0.0, f64::max) * tau_0;
        assert!(worst <= 1e-8, "impulse: integrator deviates by {worst:e} (times sqrt(LC))");
        let m = integrated.step_metrics(SettleTolerance::Percent(1.0)).unwrap();
        check("integrated overshoot %", m.overshoot_pct.unwrap(), want, 1e-6);
        check("integrated settling", m.settling.time_s.unwrap(), metrics.settling.time_s.unwrap(), 1e-8 * tau_0);
        check("integrated dc delay", m.dc_group_delay_s.unwrap(), metrics.dc_group_delay_s.unwrap(), 1e-12 * tau_0);
    }

    // Source: two identical buffered RC stages, y = 1 − (1 + t/τ)·e^(−t/τ) and
    // h = t/τ²·e^(−t/τ) (closed form of 1/(1 + sτ)²).
    #[test]
    fn repeated_pole_uses_an_exact_fallback() {
        let (r, cap) = (1e3, 1e-7);
        let tau = r * cap;
        let mut system = buffered_rc_pair(r, cap);
        let response = TimeResponse::new(&mut system, MethodChoice::Integration).unwrap();
        let grid = TimeGrid::new(20.0 * tau, 401).unwrap();
        let step = response.step(&grid).unwrap();
        let impulse = response.impulse(&grid).unwrap();
        for (k, t) in grid.times().into_iter().enumerate() {
            let x = t / tau;
            check(&format!("y({t})"), step[k], 1.0 - (1.0 + x) * (-x).exp(), 1e-9);
            check(&format!("h({t})·τ"), impulse[k] * tau, x * (-x).exp(), 1e-9);
        }
        let metrics = response.step_metrics(SettleTolerance::HalfLsb { bits: 16 }).unwrap();
        // The settling time solves (1 + x)·e^(−x) = 2^−17 (bisection on the closed form).
        let x = bisect(|x| (1.0 + x) * (-x).exp() - 0.5f64.powi(17), 1.0, 40.0);
        check("settling", metrics.settling.time_s.unwrap(), x * tau, 1e-8 * tau);
        assert_eq!(metrics.peak, None, "critically damped: no overshoot");
    }

    #[test]
    fn a_high_pass_settles_to_zero_relative_to_its_peak() {
        let (r, cap) = (1e3, 1e-6);
        let tau = r * cap;
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0).capacitor("C1", "in", "out", cap).resistor("R1", "out", "0", r);
        let response = TimeResponse::new(&mut system(&b, "V1"), MethodChoice::Automatic).unwrap();
        let metrics = response.step_metrics(SettleTolerance::Lsb { bits: 10 }).unwrap();
        // Source: CR high-pass step y = e^(−t/RC) (closed form): jump 1, final value 0.
        assert_eq!(metrics.final_value, 0.0);
        check("initial", metrics.initial_value, 1.0, 1e-15);
        assert_eq!(metrics.settling.reference, SettlingReference::Peak);
        check("peak", metrics.peak.unwrap().value, 1.0, 1e-15);
        check("settling", metrics.settling.time_s.unwrap(), 10.0 * 2.0f64.ln() * tau, 1e-12 * tau);
        assert_eq!((metrics.rise, metrics.overshoot_pct, metrics.dc_group_delay_s), (None, None, None));
        let impulse = impulse_response(&mut system(&b, "V1"), &TransientOptions::default()).unwrap();
        check("dirac weight", impulse.dirac_weight, 1.0, 1e-15);
        check("h(0+)", impulse.values[0] * tau, -1.0, 1e-12);
    }

    // Source: series RLC band-pass, output across R: H = sRC/(LCs² + RCs + 1), H(0) = H(∞) = 0
    // (closed form). Both methods settle it relative to its peak and agree.
    #[test]
    fn the_integrator_settles_a_band_pass_to_zero() {
        let (r, l, cap) = (30.0, 1e-3, 1e-6);
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0)
            .capacitor("C1", "in", "a", cap)
            .inductor("L1", "a", "out", l)
            .resistor("R1", "out", "0", r);
        let mut system = system(&b, "V1");
        let exact = TimeResponse::new(&mut system, MethodChoice::Automatic).unwrap();
        let integrated = TimeResponse::new(&mut system, MethodChoice::Integration).unwrap();
        let tolerance = SettleTolerance::HalfLsb { bits: 12 };
        let (m, n) = (exact.step_metrics(tolerance).unwrap(), integrated.step_metrics(tolerance).unwrap());
        assert_eq!((m.final_value, n.final_value), (0.0, 0.0));
        assert_eq!((m.settling.reference, n.settling.reference), (SettlingReference::Peak, SettlingReference::Peak));
        let (p, q) = (m.peak.unwrap(), n.peak.unwrap());
        check("peak value", q.value, p.value, 1e-9);
        check("peak time", q.time_s, p.time_s, 1e-6 * p.time_s);
        let want = m.settling.time_s.unwrap();
        check("settling", n.settling.time_s.unwrap(), want, 1e-6 * want);
        assert_eq!((n.rise, n.overshoot_pct, n.dc_group_delay_s), (None, None, None));
        // Source: the step response of sRC/(LCs² + RCs + 1) is (R/L)·e^(−αt)·sin(ωd·t)/ωd with
        // α = R/2L, ωd = √(1/LC − α²) (inverse Laplace transform, closed form).
        let (alpha, omega_d) = (r / (2.0 * l), (1.0 / (l * cap) - (r / (2.0 * l)).powi(2)).sqrt());
        let grid = TimeGrid::new(2e-3, 201).unwrap();
        for response in [&exact, &integrated] {
            for (t, y) in grid.times().into_iter().zip(response.step(&grid).unwrap()) {
                let want = r / l * (-alpha * t).exp() * (omega_d * t).sin() / omega_d;
                check(&format!("y({t})"), y, want, 1e-9);
            }
        }
    }

    #[test]
    fn a_floating_node_at_dc_is_harmless() {
        // Two series capacitors into R: the middle node floats at DC (a pole at 0 without a
        // residue in H). Source: H = s·Ceq·R/(1 + s·Ceq·R) with Ceq = C/2 (closed form).
        let (r, cap) = (1e3, 2e-9);
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0)
            .capacitor("C1", "in", "mid", cap)
            .capacitor("C2", "mid", "out", cap)
            .resistor("R1", "out", "0", r);
        let response = TimeResponse::new(&mut system(&b, "V1"), MethodChoice::Automatic).unwrap();
        let tau = r * cap / 2.0;
        let grid = TimeGrid::new(5.0 * tau, 11).unwrap();
        for (t, y) in grid.times().into_iter().zip(response.step(&grid).unwrap()) {
            check(&format!("y({t})"), y, (-t / tau).exp(), 1e-12);
        }
        let metrics = response.step_metrics(SettleTolerance::Percent(1.0)).unwrap();
        check("settling", metrics.settling.time_s.unwrap(), 100.0f64.ln() * tau, 1e-9 * tau);
    }

    #[test]
    fn an_integrator_or_a_lossless_tank_has_no_final_value() {
        // A current source into a capacitor: H = 1/(sC), a pole at 0 with residue 1/C; the step
        // response is the ramp t/C (closed form).
        let cap = 1e-6;
        let mut b = CircuitBuilder::new();
        b.current_source("I1", "out", "0", 1.0).capacitor("C1", "out", "0", cap);
        let response = TimeResponse::new(&mut system(&b, "I1"), MethodChoice::Automatic).unwrap();
        assert_eq!(
            response.step_metrics(SettleTolerance::Percent(1.0)),
            Err(TransientError::Unsettled { pole_re: 0.0, pole_im: 0.0 })
        );
        let grid = TimeGrid::new(1e-3, 11).unwrap();
        for (t, y) in grid.times().into_iter().zip(response.step(&grid).unwrap()) {
            check(&format!("y({t})"), y, t / cap, 1e-9 * t / cap);
        }

        // With a 1 TΩ leak in parallel the pole moves to −1/(1e12·C) = −1e-6 rad/s: it settles to
        // 1e12 Ω in ln(100)·1e6 s to 1 % (closed form).
        b.resistor("R1", "out", "0", 1e12);
        let response = TimeResponse::new(&mut system(&b, "I1"), MethodChoice::Automatic).unwrap();
        let metrics = response.step_metrics(SettleTolerance::Percent(1.0)).unwrap();
        check("final", metrics.final_value, 1e12, 1e3);
        check("settling", metrics.settling.time_s.unwrap(), 100.0f64.ln() * 1e6, 1e-3);

        // An ideal series LC into nothing but C: poles at ±j/√(LC).
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0).inductor("L1", "in", "out", 1e-3).capacitor("C1", "out", "0", 1e-6);
        let response = TimeResponse::new(&mut system(&b, "V1"), MethodChoice::Automatic).unwrap();
        match response.step_metrics(SettleTolerance::Percent(1.0)) {
            Err(TransientError::Unsettled { pole_re, pole_im }) => {
                check("|Im p|·√(LC)", pole_im.abs() * (1e-9f64).sqrt(), 1.0, 1e-9);
                assert!(pole_re.abs() <= 1e-6 * pole_im.abs());
                let text = TransientError::Unsettled { pole_re, pole_im }.to_string();
                assert!(text.contains("does not settle"), "{text}");
            }
            other => panic!("expected Unsettled, got {other:?}"),
        }
        let mut tank = system(&b, "V1");
        let bundled = step_response(&mut tank, &TransientOptions::default()).unwrap();
        assert!(matches!(bundled.metrics, Err(TransientError::Unsettled { .. })), "{:?}", bundled.metrics);
        assert!(bundled.values.iter().all(|y| y.is_finite() && (-1e-9..=2.0 + 1e-9).contains(y)));
        // Source: y = 1 − cos(t/√(LC)) (closed form); the response itself is still available.
        let grid = response.grid(Span::Automatic, 50).unwrap();
        let omega = 1.0 / 1e-9f64.sqrt();
        for (t, y) in grid.times().into_iter().zip(response.step(&grid).unwrap()) {
            check(&format!("y({t})"), y, 1.0 - (omega * t).cos(), 1e-9);
        }
    }

    #[test]
    fn a_resistive_divider_is_flat() {
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 50.0)
            .resistor("R1", "in", "out", 150.0)
            .resistor("R2", "out", "0", 50.0);
        let step = step_response(&mut system(&b, "V1"), &TransientOptions::default()).unwrap();
        // Source: divider ratio 50/250 (closed form).
        assert!(step.values.iter().all(|&y| (y - 0.2).abs() <= 1e-15), "{:?}", &step.values[..3]);
        assert_eq!(step.metrics.as_ref().unwrap().settling.time_s, Some(0.0));
        assert_eq!(step.times_s.len(), DEFAULT_POINTS);
        assert_eq!(*step.times_s.last().unwrap(), 1.0);
    }

    #[test]
    fn tolerances_become_fractions() {
        check("fraction", SettleTolerance::Fraction(0.02).fraction().unwrap(), 0.02, 0.0);
        check("percent", SettleTolerance::Percent(2.0).fraction().unwrap(), 0.02, 1e-18);
        check("½ LSB 12", SettleTolerance::HalfLsb { bits: 12 }.fraction().unwrap(), 1.0 / 8192.0, 0.0);
        check("1 LSB 12", SettleTolerance::Lsb { bits: 12 }.fraction().unwrap(), 1.0 / 4096.0, 0.0);
        check("½ LSB 32", SettleTolerance::HalfLsb { bits: 32 }.fraction().unwrap(), 0.5f64.powi(33), 0.0);
    }

    #[test]
    fn bad_input_gets_typed_errors_that_say_what_to_do() {
        let cases = [
            (SettleTolerance::HalfLsb { bits: 0 }.fraction().unwrap_err(), TransientError::BadBits { bits: 0 }),
            (SettleTolerance::Lsb { bits: 33 }.fraction().unwrap_err(), TransientError::BadBits { bits: 33 }),
            (
                SettleTolerance::Fraction(1.0).fraction().unwrap_err(),
                TransientError::BadTolerance { value: 1.0, kind: "fraction" },
            ),
            (
                SettleTolerance::Percent(-1.0).fraction().unwrap_err(),
                TransientError::BadTolerance { value: -1.0, kind: "percent" },
            ),
            (TimeGrid::new(0.0, 10).unwrap_err(), TransientError::BadSpan { span_s: 0.0 }),
            (TimeGrid::new(1.0, 1).unwrap_err(), TransientError::BadPoints { points: 1 }),
            (TimeGrid::new(1.0, MAX_POINTS + 1).unwrap_err(), TransientError::BadPoints { points: MAX_POINTS + 1 }),
        ];
        for (got, want) in cases {
            assert_eq!(got, want);
        }
        assert!(matches!(TimeGrid::new(f64::NAN, 10), Err(TransientError::BadSpan { .. })));
        assert!(matches!(SettleTolerance::Fraction(f64::NAN).fraction(), Err(TransientError::BadTolerance { .. })));
        let options = TransientOptions { span: Span::Seconds(-1.0), ..TransientOptions::default() };
        assert_eq!(step_response(&mut rc(1e3, 1e-6), &options).unwrap_err(), TransientError::BadSpan { span_s: -1.0 });
        let options = TransientOptions { tolerance: SettleTolerance::Lsb { bits: 40 }, ..TransientOptions::default() };
        assert_eq!(step_response(&mut rc(1e3, 1e-6), &options).unwrap_err(), TransientError::BadBits { bits: 40 });

        let messages = [
            TransientError::NoPencil,
            TransientError::Singular,
            TransientError::Unconverged { iterations: 300 },
            TransientError::BadSpan { span_s: -1.0 },
            TransientError::BadPoints { points: 1 },
            TransientError::BadBits { bits: 0 },
            TransientError::BadTolerance { value: 120.0, kind: "percent" },
            TransientError::NonFinite { time_s: 2.5 },
            TransientError::Unsettled { pole_re: 0.0, pole_im: 1e3 },
            TransientError::TooManySteps { steps: 1e9 },
        ];
        for error in messages {
            let text = error.to_string();
            assert!(!text.starts_with(char::is_uppercase) && !text.ends_with('.'), "{text}");
            assert!(text.contains(';'), "says what to do: {text}");
        }
        assert!(TransientError::BadBits { bits: 0 }.to_string().contains("0 bits"));
        assert!(TransientError::BadSpan { span_s: -1.0 }.to_string().contains("-1 s"));
    }
}
