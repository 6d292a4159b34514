//! Modal fast path: the exact AC response of a circuit in pole–residue form, evaluated in O(n)
//! work per frequency instead of one LU factorisation per frequency.
//!
//! # Method
//! When every part is polynomial in s, the MNA system is a matrix pencil,
//! Y(s)·x = (G + s·C)·x = b with real G, C and b ([`AcSystem::pencil`]). Every quantity of a
//! [`Detail::Transfer`] solution is a linear read-out r·x of the solution: H = output·x, the port
//! voltage V = port_voltage·x and the delivered current I = port_current·x + offset, with
//! Z_in = V/I ([`AcSystem::functionals`]).
//!
//! 1. **Spectral shift** (Golub & Van Loan, *Matrix Computations*, 4th ed., §7.7, the generalized
//!    eigenproblem of a pencil; section number from memory). Pick a real shift s0 that is not a
//!    pole, factor K = G + s0·C and write Y(s) = K·(I + (s − s0)·M) with M = K⁻¹C and b0 = K⁻¹b,
//!    so x(s) = (I + (s − s0)·M)⁻¹·b0. This turns the pencil, whose C may be singular, into one
//!    ordinary matrix M. An eigenvalue λ of M belongs to the pole p = s0 − 1/λ of the pencil, and
//!    λ = 0 to an infinite pole, which arises where C is singular (a node without a capacitor,
//!    the branch of an ideal source or amplifier).
//! 2. **Eigenbasis.** M is balanced by an exact power-of-two diagonal similarity D⁻¹MD
//!    (Parlett & Reinsch, "Balancing a matrix for calculation of eigenvalues and eigenvectors",
//!    Numer. Math. 13, 1969; from memory), reduced to complex Schur form Q·T·Q* by nalgebra's
//!    implicit shifted QR, and the eigenvectors of the upper-triangular T follow by back
//!    substitution (Golub & Van Loan §7.6, eigenvectors of a Schur form; section number from
//!    memory), V = D·Q·Y. A divisor T_ii − T_jj at rounding level is raised to ε·max|T|, as
//!    LAPACK's `ztrevc` does, so a cluster of zero eigenvalues gets a usable basis. With
//!    M = V·Λ·V⁻¹ and w = V⁻¹·b0, each read-out is
//!    r·x(s) = Σ_i α_i / (1 + (s − s0)·λ_i) with α_i = (r·V)_i · w_i,
//!    which is the partial-fraction form d + Σ_i ρ_i / (s − p_i) with residues ρ_i = α_i/λ_i over
//!    the finite poles and direct term d = Σ α_i over the eigenvalues that are zero (plus the
//!    constant offset of the port current).
//! 3. **Stop-band accuracy.** Summed as it stands, the partial-fraction form is not accurate
//!    relative to |H| where H is many orders below its terms: above the poles of a 7th-order
//!    low-pass the terms fall as 1/s but H as 1/s⁷. For the 7th-order ladder of the tests we
//!    measured relative errors of about 2e-3 at 100·fc and 1e3 at 1000·fc. The cure is exact
//!    algebra, not an approximation. Since 1/(s − p) = Σ_{k<m} p^k/s^{k+1} + (p/s)^m/(s − p), a read-out
//!    with d = 0 whose first m moments Σ ρ_i p_i^k (k < m) vanish (a zero of order m at
//!    infinity, the relative degree minus one) is *identically*
//!    r·x(s) = s^(−m) · Σ_i ρ_i p_i^m / (s − p_i),
//!    a sum that no longer cancels above the poles. Symmetrically, when the Taylor coefficients
//!    at s = 0 vanish up to order m (a zero of order m at DC, as in a high-pass), it is
//!    s^m · Σ_i ρ_i p_i^(−m) / (s − p_i). Each read-out keeps both forms and uses the DC one
//!    below the geometric-mean pole magnitude and the infinity one above it. A moment counts as
//!    zero when it is below 64·n·ε·max(1, cond V) of the sum of its terms' magnitudes; such a
//!    moment is rounding noise around an exact structural zero (for the ladder in the tests
//!    they sit at 1e-15 of their terms). If that classification were ever wrong, the
//!    self-check below sees it. Because G, C, b and the read-outs are real, complex poles and
//!    their residues come in conjugate pairs; each pair is made exactly conjugate and summed
//!    as one real quadratic term
//!    c/(s − p) + c̄/(s − p̄) = (2·Re c·s − 2·Re(c·p̄)) / (s² − 2·Re p·s + |p|²).
//!    Per frequency the work is one reciprocal per real pole or pole pair, shared by all
//!    read-outs, plus four dot products, and d/dω = j·d/ds is exact:
//!    d/ds[s^k·S] = k·s^(k−1)·S + s^k·S′ with S′ = −Σ c_i/(s − p_i)² (for a pair, (α − T·D′)/D).
//! 4. **Shift choice.** A first decomposition at the scale ‖G‖_F/‖C‖_F finds the poles. If
//!    their geometric-mean magnitude differs from that shift by more than a factor 2, the
//!    decomposition is repeated with the mean as the shift, which is preferred (it spreads the
//!    λ_i evenly). The first shift is kept as the fallback if the preferred one fails its
//!    self-check. A shift at which K is singular is nudged by irrational-looking factors
//!    (1.9, 0.53, 3.7, 0.27).
//!
//! # Self-check
//! An eigenbasis can be ill-conditioned or defective: repeated poles, as in two identical
//! buffered sections, give a Jordan block. [`Modal::new`] therefore refuses a basis whose
//! 1-norm condition number exceeds [`MAX_CONDITION`] and compares itself with the exact LU path
//! ([`AcSystem::solve_at`]) at 8 frequencies log-spaced from min|p|/100 to max|p|·100. It also
//! checks just below and just above the crossover between the two forms, at the geometric
//! midpoint of every gap of more than a decade between pole magnitudes, and at any frequencies
//! the caller adds ([`Modal::verified_at`], which [`crate::sweep::sweep_fast`] calls with the
//! ends of its grid). The deviation measures are:
//! - H and Z_in: |Δ| / |exact| (pointwise relative, including deep in the stop band);
//! - H′ = dH/dω: |ΔH′| / (|H′| + |H| / max(ω, ω_min)), with ω_min the smallest pole magnitude.
//!   This is the relative error of ω·H′/H, the quantity from which group delay (ω·τ) and the dB
//!   slope are formed, allowing an absolute error of 1e-9 in ω·H′/H where H′ itself is near
//!   zero (a flat, delay-free stretch), and never looser than 1/ω_min in time.
//!
//! A point that one path solves and the other calls singular counts as an infinite deviation.
//! Any deviation above [`MAX_DEVIATION`] (1e-9) makes construction fail with
//! [`ModalError::Inaccurate`]; callers then use the LU path, which is exact.
//!
//! # Poles
//! [`Modal::poles`] returns the finite poles p_i = s0 − 1/λ_i in rad/s, and
//! [`Modal::transfer_partial_fractions`] the plain form d + Σ ρ_i/(s − p_i) of H before step 3,
//! for the time domain ([`crate::transient`]). [`Modal::pencil_poles`] gives the poles alone,
//! without a verified basis, for a time scale where the basis is refused. A pole within
//! 1000·n·ε·s0 of the origin is set to exactly 0 (a node that floats at DC), so that
//! [`Modal::solve_at`] reports 0 Hz as singular, as the LU path does.

use crate::lu::Lu;
use crate::mna::{AcSystem, Detail, Functionals, Pencil, Solution, SolveError};
use nalgebra::{DMatrix, Schur};
use num_complex::Complex64;
use std::f64::consts::PI;
use std::fmt;

/// Largest deviation from the LU path (see the module doc for the measures) that the self-check
/// accepts.
pub const MAX_DEVIATION: f64 = 1e-9;

/// Largest 1-norm condition number of the eigenvector basis that is accepted.
pub const MAX_CONDITION: f64 = 1e8;

/// A circuit's AC response in pole–residue form, verified against the LU path on construction.
///
/// Build it with [`Modal::new`]; [`Modal::solve_at`] then costs O(n) per frequency.
#[derive(Debug, Clone)]
pub struct Modal {
    /// Finite poles in rad/s, complex ones in exactly conjugate pairs.
    poles: Vec<Complex64>,
    /// |p_i| of `poles`.
    pole_magnitudes: Vec<f64>,
    /// The poles evaluated one by one: real poles and any complex pole without a partner.
    singles: Vec<Single>,
    /// The conjugate pairs, evaluated as one real quadratic term each.
    pairs: Vec<Pair>,
    /// Geometric mean of the non-zero pole magnitudes in rad/s (1 when there are none): the
    /// crossover between the DC and the infinity forms, and the unit of ŝ = s/scale.
    scale: f64,
    transfer: Readout,
    port_voltage: Readout,
    port_current: Readout,
    /// 1-norm condition number of the eigenvector basis.
    condition: f64,
}

/// A read-out in plain partial-fraction form, r·x(s) = direct + Σ_i residue_i / (s − pole_i).
///
/// For the transfer function H = V(out)/EMF the direct term is H(∞) (dimensionless for a voltage
/// stimulus, Ω for a current stimulus), poles are in rad/s and residues in the unit of H times
/// rad/s. Real poles have real residues; a complex pole and its conjugate are both listed, with
/// exactly conjugate poles and residues. A residue that the decomposition found to be rounding
/// noise is exactly zero (its pole is then invisible in this read-out, such as a node that floats
/// at DC).
#[derive(Debug, Clone, PartialEq)]
pub struct PartialFractions {
    /// The direct term d = r·x(∞) (the constant offset included).
    pub direct: f64,
    /// (pole, residue) pairs in the order of [`Modal::poles`].
    pub terms: Vec<(Complex64, Complex64)>,
    /// The 1-norm condition number of the eigenvector basis the residues come from; the residues'
    /// relative rounding error grows with it (about ε times it).
    pub condition: f64,
}

/// Why the modal fast path is not available for a circuit. The exact LU path always is.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum ModalError {
    /// A part is not rational in s ([`AcSystem::pencil`] gives no pencil).
    NotRational,
    /// K = G + s0·C was singular at every shift tried (the circuit is singular at every
    /// frequency or nearly so).
    Singular,
    /// The self-check against the LU path failed.
    Inaccurate {
        /// The frequency of the largest deviation, in Hz.
        f_hz: f64,
        /// The deviation there (see the module doc for the measure).
        relative_error: f64,
    },
    /// The eigenvector basis is too ill-conditioned (typically repeated poles).
    IllConditioned {
        /// Its 1-norm condition number estimate (infinite if it is singular).
        condition: f64,
    },
    /// The Schur (QR) iteration did not converge.
    Unconverged {
        /// The iteration limit that was reached.
        iterations: usize,
    },
}

/// One read-out (H, port voltage or port current) in its two exact forms.
#[derive(Debug, Clone)]
struct Readout {
    /// Used for |s| below `Modal::scale`.
    below: Form,
    /// Used for |s| at or above `Modal::scale`.
    above: Form,
    /// The plain partial-fraction form d + Σ ρ_i/(s − p_i) from which both forms derive, kept
    /// for [`Modal::transfer_partial_fractions`].
    plain: PartialFractions,
}

/// f(s) = direct + ŝ^power · S(s), ŝ = s / scale, with
/// S(s) = Σ_singles c_k/(s − p_k) + Σ_pairs (α_k·s + β_k)/(s² − 2·Re p_k·s + |p_k|²).
///
/// A pair term is c/(s − p) + c̄/(s − p̄) over a common denominator: α = 2·Re c and
/// β = −2·Re(c·p̄). It holds exactly because G, C, b and the read-outs are real, so complex poles
/// and their residues come in conjugate pairs; it halves the reciprocals per point and does not
/// cancel when c is nearly imaginary.
#[derive(Debug, Clone)]
struct Form {
    power: i32,
    direct: Complex64,
    singles: Vec<Complex64>,
    pairs: Vec<(f64, f64)>,
}

/// The sums of one frequency: S and dS/ds for H, S for the port voltage and current.
#[derive(Debug, Clone, Copy, Default)]
struct Sums {
    h: Complex64,
    h_ds: Complex64,
    v: Complex64,
    i: Complex64,
}

/// A pole evaluated on its own.
#[derive(Debug, Clone, Copy)]
struct Single {
    pole: Complex64,
    magnitude: f64,
}

/// The upper member p = re + j·im (im > 0) of a conjugate pair.
#[derive(Debug, Clone, Copy)]
struct Pair {
    re: f64,
    magnitude_sqr: f64,
    magnitude: f64,
}

/// What every read-out of one decomposition shares.
struct Spectrum<'a> {
    eigen: &'a Eigen,
    /// Indices of the finite eigenvalues, in pole order.
    finite: &'a [usize],
    poles: &'a [Complex64],
    layout: &'a Layout,
    scale: f64,
    /// Relative size below which a moment or a term is rounding noise.
    tolerance: f64,
}

/// Which poles (by index) are evaluated alone and which in conjugate pairs (upper member first).
struct Layout {
    singles: Vec<usize>,
    pairs: Vec<(usize, usize)>,
}

/// An eigendecomposition of M = K⁻¹C at one shift.
struct Eigen {
    shift: f64,
    n: usize,
    /// Eigenvalues of M.
    lambda: Vec<Complex64>,
    /// Eigenvectors as columns, row-major n×n, unit 2-norm columns.
    vectors: Vec<Complex64>,
    /// V⁻¹·b0.
    weights: Vec<Complex64>,
    condition: f64,
    /// Eigenvalues at most this large are zero (infinite poles).
    zero_eigenvalue: f64,
}

/// On-a-pole test: |s − p| at most this times (|s| + |p|) counts as exactly on the pole. For a
/// pair the test is |(s − p)(s − p̄)| ≤ ON_POLE·(|s| + |p|)², the same within a factor 2.
const ON_POLE: f64 = 8.0 * f64::EPSILON;

impl fmt::Display for ModalError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        const FALLBACK: &str = "the sweep falls back to the exact LU path";
        match self {
            Self::NotRational => write!(
                f,
                "the circuit has a part that is not rational in s, so there is no modal fast path; {FALLBACK}"
            ),
            Self::Singular => write!(
                f,
                "the MNA matrix is singular at every trial shift, so there is no modal fast path; {FALLBACK}"
            ),
            Self::Inaccurate { f_hz, relative_error } => write!(
                f,
                "the modal fast path deviates from the LU path by {relative_error:.3e} at {f_hz} Hz, above the {MAX_DEVIATION:e} limit; {FALLBACK}"
            ),
            Self::IllConditioned { condition } => write!(
                f,
                "the circuit's eigenvector basis has condition number {condition:.3e}, above the {MAX_CONDITION:e} limit (typically repeated poles, such as identical cascaded sections); {FALLBACK}"
            ),
            Self::Unconverged { iterations } => write!(
                f,
                "the eigenvalue iteration did not converge within {iterations} iterations; {FALLBACK}"
            ),
        }
    }
}

impl std::error::Error for ModalError {}

impl Modal {
    /// Builds the modal form of `system` and verifies it against the LU path over the pole
    /// range (see the module doc).
    ///
    /// `system` is only used for [`AcSystem::pencil`], [`AcSystem::functionals`] and the LU
    /// solves of the self-check.
    ///
    /// # Errors
    /// [`ModalError`] when the circuit is not rational in s, singular at every trial shift,
    /// has an ill-conditioned eigenbasis, or fails the self-check.
    pub fn new(system: &mut AcSystem) -> Result<Modal, ModalError> {
        Self::verified_at(system, &[])
    }

    /// As [`Modal::new`], and also verifies the result at each frequency in `f_hz` (for example
    /// the ends of a sweep). Negative or non-finite entries are skipped.
    ///
    /// # Errors
    /// As [`Modal::new`].
    pub fn verified_at(system: &mut AcSystem, f_hz: &[f64]) -> Result<Modal, ModalError> {
        let Pencil { n, g, c, b, .. } = system.pencil().ok_or(ModalError::NotRational)?;
        let functionals = system.functionals().padded(n);
        let norm = |m: &[f64]| m.iter().map(|v| v * v).sum::<f64>().sqrt();
        let (g_norm, c_norm) = (norm(&g), norm(&c));
        let first_shift =
            if c_norm > 0.0 && g_norm > 0.0 && (g_norm / c_norm).is_finite() { g_norm / c_norm } else { 1.0 };

        // The first shift only finds the pole scale; the preferred shift is that scale, and the
        // first one is kept as the fallback if the preferred one fails its self-check.
        let first = eigen_near(&g, &c, &b, n, first_shift)?;
        let scale = first.pole_scale();
        let mut candidates = Vec::new();
        if !(0.5..=2.0).contains(&(scale / first.shift)) {
            if let Ok(preferred) = eigen_near(&g, &c, &b, n, scale) {
                candidates.push(preferred);
            }
        }
        candidates.push(first);
        let mut first_error = None;
        for eigen in &candidates {
            let modal = Modal::from_eigen(eigen, &functionals);
            let error = if modal.condition.is_nan() || modal.condition > MAX_CONDITION {
                ModalError::IllConditioned { condition: modal.condition }
            } else {
                let (at, deviation) = modal.worst_deviation(system, f_hz);
                if deviation <= MAX_DEVIATION {
                    return Ok(modal);
                }
                ModalError::Inaccurate { f_hz: at, relative_error: deviation }
            };
            first_error.get_or_insert(error);
        }
        Err(first_error.unwrap_or(ModalError::Singular))
    }

    /// Solves at `f_hz`, with the semantics of [`AcSystem::solve_at`] with [`Detail::Transfer`]:
    /// transfer function, its exact derivative dH/dω and the input impedance; no node voltages or
    /// element states.
    ///
    /// # Errors
    /// [`SolveError::BadFrequency`] for a negative or non-finite frequency, and
    /// [`SolveError::Singular`] exactly on a pole (to working precision) or where the result
    /// is not finite.
    pub fn solve_at(&self, f_hz: f64) -> Result<Solution, SolveError> {
        if !(f_hz.is_finite() && f_hz >= 0.0) {
            return Err(SolveError::BadFrequency { f_hz });
        }
        let omega = 2.0 * PI * f_hz;
        let above = omega >= self.scale;
        match self.sums([omega], above) {
            Some([sums]) => self.finish_point(f_hz, omega, above, sums),
            None => Err(SolveError::Singular { f_hz }),
        }
    }

    /// Solves at every frequency of `f_hz`, with results identical to [`Modal::solve_at`] one by
    /// one (bit for bit), but four frequencies at a time so that the pole loop vectorises.
    pub fn solve_all(&self, f_hz: &[f64]) -> Vec<Result<Solution, SolveError>> {
        const LANES: usize = 4;
        let mut solutions = Vec::with_capacity(f_hz.len());
        let mut chunks = f_hz.chunks_exact(LANES);
        for chunk in &mut chunks {
            let f: [f64; LANES] = chunk.try_into().expect("chunks_exact gives LANES values");
            let omega = f.map(|f_hz| 2.0 * PI * f_hz);
            let above = omega[0] >= self.scale;
            // Lanes must be valid frequencies on one side of the crossover (one form); any other
            // chunk, or one with a point on a pole, is solved point by point.
            let usable =
                f.iter().all(|x| x.is_finite() && *x >= 0.0) && omega.iter().all(|&w| (w >= self.scale) == above);
            match usable.then(|| self.sums(omega, above)).flatten() {
                Some(sums) => {
                    for lane in 0..LANES {
                        solutions.push(self.finish_point(f[lane], omega[lane], above, sums[lane]));
                    }
                }
                None => solutions.extend(chunk.iter().map(|&x| self.solve_at(x))),
            }
        }
        solutions.extend(chunks.remainder().iter().map(|&x| self.solve_at(x)));
        solutions
    }

    /// The finite poles of the circuit in rad/s (s-plane), in no particular order. Infinite
    /// poles, from a singular C, are not listed.
    pub fn poles(&self) -> Vec<Complex64> {
        self.poles.clone()
    }

    /// The transfer function's plain partial-fraction form H(s) = d + Σ ρ_i/(s − p_i), over the
    /// poles of [`Modal::poles`] in the same order (see [`PartialFractions`]).
    ///
    /// This is the form before the stop-band rewriting of the module doc (step 3): exact algebra
    /// for H, but summed as it stands it loses relative accuracy where |H| is far below its
    /// terms. It is the natural form for the time domain, where the step response is
    /// d + Σ ρ_i·(e^{p_i t} − 1)/p_i.
    pub fn transfer_partial_fractions(&self) -> PartialFractions {
        self.transfer.plain.clone()
    }

    /// The 1-norm condition number of the eigenvector basis (at most [`MAX_CONDITION`]).
    pub fn condition(&self) -> f64 {
        self.condition
    }

    /// The finite poles of the pencil of `system` in rad/s, without building or verifying a
    /// modal form: for a time scale where [`Modal::new`] refuses the basis (repeated poles).
    ///
    /// The eigenvalues come from the same shifted Schur form as [`Modal::new`] (module doc,
    /// steps 1, 2 and 4); a pole of multiplicity m is accurate only to about ε^(1/m) of its
    /// magnitude, which is ample for a time scale. A pole near the origin is set to exactly 0 as
    /// in [`Modal::poles`]; conjugate pairs are not made exactly conjugate.
    ///
    /// # Errors
    /// [`ModalError::NotRational`] without a pencil, [`ModalError::Singular`] when K = G + s0·C is
    /// singular at every shift tried, [`ModalError::Unconverged`] when the QR iteration fails.
    pub fn pencil_poles(system: &AcSystem) -> Result<Vec<Complex64>, ModalError> {
        let Pencil { n, g, c, b, .. } = system.pencil().ok_or(ModalError::NotRational)?;
        let norm = |m: &[f64]| m.iter().map(|v| v * v).sum::<f64>().sqrt();
        let (g_norm, c_norm) = (norm(&g), norm(&c));
        let first_shift =
            if c_norm > 0.0 && g_norm > 0.0 && (g_norm / c_norm).is_finite() { g_norm / c_norm } else { 1.0 };
        let poles_near = |base: f64| -> Result<Vec<Complex64>, ModalError> {
            let mut last = ModalError::Singular;
            for factor in [1.0, 1.9, 0.53, 3.7, 0.27] {
                let shift = base * factor;
                match shifted_schur(&g, &c, &b, n, shift) {
                    Ok(schur) => {
                        let zero_eigenvalue = 64.0 * n as f64 * f64::EPSILON * schur.t_norm;
                        return Ok((0..n)
                            .map(|i| schur.t[(i, i)])
                            .filter(|lambda| lambda.norm() > zero_eigenvalue)
                            .map(|lambda| {
                                let p = shift - lambda.inv();
                                if p.norm() <= 1e3 * n as f64 * f64::EPSILON * shift {
                                    Complex64::new(0.0, 0.0)
                                } else {
                                    p
                                }
                            })
                            .collect());
                    }
                    Err(ModalError::Singular) => continue,
                    Err(error) => last = error,
                }
            }
            Err(last)
        };
        let poles = poles_near(first_shift)?;
        let magnitudes: Vec<f64> = poles.iter().map(|p| p.norm()).collect();
        let scale = geometric_mean(&magnitudes);
        if !(0.5..=2.0).contains(&(scale / first_shift)) {
            if let Ok(preferred) = poles_near(scale) {
                return Ok(preferred);
            }
        }
        Ok(poles)
    }

    /// S and dS/ds for H, and S for the port voltage and current (see [`Form`]), at `N`
    /// frequencies that use one form; `None` if any of them lies on a pole.
    fn sums<const N: usize>(&self, omega: [f64; N], above: bool) -> Option<[Sums; N]> {
        let (h, v, i) = (self.transfer.form(above), self.port_voltage.form(above), self.port_current.form(above));
        let mut sums = [Sums::default(); N];
        let mut singular = false;
        for (k, single) in self.singles.iter().enumerate() {
            let (c_h, c_v, c_i) = (h.singles[k], v.singles[k], i.singles[k]);
            for (lane, sum) in sums.iter_mut().enumerate() {
                let d = Complex64::new(-single.pole.re, omega[lane] - single.pole.im);
                let d2 = d.norm_sqr();
                let on_pole = ON_POLE * (omega[lane] + single.magnitude);
                singular |= d2.is_nan() | (d2 <= on_pole * on_pole);
                let scale = 1.0 / d2;
                let u = Complex64::new(d.re * scale, -d.im * scale);
                let hu = c_h * u;
                sum.h += hu;
                sum.h_ds -= hu * u;
                sum.v += c_v * u;
                sum.i += c_i * u;
            }
        }
        for (k, pair) in self.pairs.iter().enumerate() {
            let ((alpha_h, beta_h), (alpha_v, beta_v), (alpha_i, beta_i)) = (h.pairs[k], v.pairs[k], i.pairs[k]);
            for (lane, sum) in sums.iter_mut().enumerate() {
                let omega = omega[lane];
                // D = (s − p)(s − p̄) = s² − 2·Re p·s + |p|² at s = jω, and D′ = dD/ds.
                let d = Complex64::new(pair.magnitude_sqr - omega * omega, -2.0 * pair.re * omega);
                let d2 = d.norm_sqr();
                let reach = omega + pair.magnitude;
                let on_pole = ON_POLE * reach * reach;
                singular |= d2.is_nan() | (d2 <= on_pole * on_pole);
                let scale = 1.0 / d2;
                let inverse = Complex64::new(d.re * scale, -d.im * scale);
                let term = Complex64::new(beta_h, alpha_h * omega) * inverse;
                sum.h += term;
                // d/ds (N/D) = (α − (N/D)·D′) / D with N = α·s + β.
                let d_prime = Complex64::new(-2.0 * pair.re, 2.0 * omega);
                sum.h_ds += (alpha_h - term * d_prime) * inverse;
                sum.v += Complex64::new(beta_v, alpha_v * omega) * inverse;
                sum.i += Complex64::new(beta_i, alpha_i * omega) * inverse;
            }
        }
        (!singular).then_some(sums)
    }

    /// The solution at one frequency from its sums.
    fn finish_point(&self, f_hz: f64, omega: f64, above: bool, sums: Sums) -> Result<Solution, SolveError> {
        let (h, v, i) = (self.transfer.form(above), self.port_voltage.form(above), self.port_current.form(above));
        let s_hat = omega / self.scale;
        let (transfer, transfer_ds) = h.finish(s_hat, self.scale, sums.h, sums.h_ds);
        let voltage = v.value(s_hat, sums.v);
        let current = i.value(s_hat, sums.i);
        // d/dω = j·d/ds on s = jω.
        let transfer_derivative = Complex64::new(-transfer_ds.im, transfer_ds.re);
        if ![transfer, transfer_derivative, voltage, current].iter().all(|z| z.re.is_finite() && z.im.is_finite()) {
            return Err(SolveError::Singular { f_hz });
        }
        let input_impedance = if current.norm() > 0.0 {
            let z = voltage / current;
            (z.re.is_finite() && z.im.is_finite()).then_some(z)
        } else {
            None
        };
        Ok(Solution {
            f_hz,
            transfer,
            transfer_derivative,
            input_impedance,
            node_voltages: Vec::new(),
            elements: Vec::new(),
        })
    }

    /// Assembles the read-outs from an eigendecomposition.
    fn from_eigen(eigen: &Eigen, functionals: &Functionals) -> Modal {
        let n = eigen.n;
        let finite = eigen.finite();
        let mut poles: Vec<Complex64> = finite.iter().map(|&i| eigen.pole(i)).collect();
        let tolerance = 64.0 * n as f64 * f64::EPSILON * eigen.condition.max(1.0);
        let layout = Layout::new(&mut poles, tolerance);
        let pole_magnitudes: Vec<f64> = poles.iter().map(|p| p.norm()).collect();
        let scale = geometric_mean(&pole_magnitudes);
        let spectrum = Spectrum { eigen, finite: &finite, poles: &poles, layout: &layout, scale, tolerance };
        let readout = |r: &[f64], offset: f64| Readout::new(&spectrum, r, Complex64::new(offset, 0.0));
        let singles =
            layout.singles.iter().map(|&k| Single { pole: poles[k], magnitude: pole_magnitudes[k] }).collect();
        let pairs = layout
            .pairs
            .iter()
            .map(|&(k, _)| Pair { re: poles[k].re, magnitude_sqr: poles[k].norm_sqr(), magnitude: pole_magnitudes[k] })
            .collect();
        Modal {
            transfer: readout(&functionals.output, 0.0),
            port_voltage: readout(&functionals.port_voltage, 0.0),
            port_current: readout(&functionals.port_current, functionals.port_current_offset),
            poles,
            pole_magnitudes,
            singles,
            pairs,
            scale,
            condition: eigen.condition,
        }
    }

    /// The frequencies of the self-check, in Hz.
    fn check_frequencies(&self, extra: &[f64]) -> Vec<f64> {
        let mut magnitudes: Vec<f64> = self.pole_magnitudes.iter().copied().filter(|&m| m > 0.0).collect();
        magnitudes.sort_by(f64::total_cmp);
        let mut f_hz = Vec::new();
        let (low, high) = match (magnitudes.first(), magnitudes.last()) {
            (Some(&low), Some(&high)) => (low / (2.0 * PI) / 100.0, high / (2.0 * PI) * 100.0),
            _ => (1.0, 1e9),
        };
        let count = 8;
        for k in 0..count {
            f_hz.push(low * (high / low).powf(k as f64 / (count - 1) as f64));
        }
        let crossover_hz = self.scale / (2.0 * PI);
        f_hz.extend([crossover_hz * (1.0 - 1e-3), crossover_hz * (1.0 + 1e-3)]);
        for pair in magnitudes.windows(2) {
            if pair[1] > 10.0 * pair[0] {
                f_hz.push((pair[0] * pair[1]).sqrt() / (2.0 * PI));
            }
        }
        f_hz.extend(extra.iter().copied().filter(|f| f.is_finite() && *f >= 0.0));
        f_hz
    }

    /// The largest deviation from the LU path over the self-check frequencies, and where.
    fn worst_deviation(&self, system: &mut AcSystem, extra: &[f64]) -> (f64, f64) {
        let omega_min = self.pole_magnitudes.iter().copied().filter(|&m| m > 0.0).fold(f64::INFINITY, f64::min);
        let omega_min = if omega_min.is_finite() { omega_min } else { self.scale };
        let mut worst = (0.0, 0.0);
        for f_hz in self.check_frequencies(extra) {
            let deviation = match (system.solve_at(f_hz, Detail::Transfer), self.solve_at(f_hz)) {
                (Ok(exact), Ok(fast)) => deviation(&exact, &fast, omega_min),
                (Err(_), Err(_)) => 0.0,
                _ => f64::INFINITY,
            };
            if deviation.is_nan() || deviation > worst.1 {
                worst = (f_hz, if deviation.is_nan() { f64::INFINITY } else { deviation });
            }
        }
        worst
    }
}

impl Readout {
    /// Builds both forms of the read-out r·x + offset.
    fn new(spectrum: &Spectrum, r: &[f64], offset: Complex64) -> Readout {
        let Spectrum { eigen, finite, poles, layout, scale, tolerance } = *spectrum;
        let n = eigen.n;
        let alpha: Vec<Complex64> = (0..n)
            .map(|i| {
                let rv: Complex64 = (0..n).map(|k| r[k] * eigen.vectors[k * n + i]).sum();
                rv * eigen.weights[i]
            })
            .collect();
        let total = offset.norm() + alpha.iter().map(|a| a.norm()).sum::<f64>();
        let mut direct = offset;
        for (i, a) in alpha.iter().enumerate() {
            if eigen.lambda[i].norm() <= eigen.zero_eigenvalue {
                direct += a;
            }
        }
        if direct.norm() <= tolerance * total {
            direct = Complex64::new(0.0, 0.0);
        }
        // Residues ρ_i = α_i / λ_i; a term that is rounding noise at the shift is exactly zero.
        let residues: Vec<Complex64> = finite
            .iter()
            .map(|&i| {
                if alpha[i].norm() <= tolerance * total {
                    Complex64::new(0.0, 0.0)
                } else {
                    alpha[i] / eigen.lambda[i]
                }
            })
            .collect();
        let scaled: Vec<Complex64> = poles.iter().map(|p| p / scale).collect();
        let plain_form = PartialFractions {
            direct: direct.re,
            terms: plain_terms(&residues, poles, layout),
            condition: eigen.condition,
        };
        let plain = Form::new(0, direct, &residues, poles, layout);
        let n_poles = residues.len();

        // Order of the zero at infinity: the leading moments Σ ρ_i p̂_i^k that vanish (d = 0).
        let mut at_infinity = 0;
        if direct.norm() == 0.0 {
            while at_infinity < n_poles {
                let k = at_infinity as i32;
                let (sum, size) = moment(&residues, &scaled, |p| p.powi(k));
                if !(size > 0.0 && sum.norm() <= tolerance * size) {
                    break;
                }
                at_infinity += 1;
            }
            if at_infinity == n_poles {
                at_infinity = 0; // every moment vanishes: the read-out is zero; keep the plain form
            }
        }
        // Order of the zero at DC: the leading Taylor coefficients at s = 0 that vanish.
        let mut at_dc = 0;
        let has_dc_pole = residues.iter().zip(poles).any(|(r, p)| r.norm() > 0.0 && p.norm() == 0.0);
        if !has_dc_pole {
            let q: Vec<Complex64> =
                residues.iter().zip(poles).map(|(r, p)| if r.norm() > 0.0 { r / p } else { *r }).collect();
            while at_dc <= n_poles {
                let (sum, size) = if at_dc == 0 {
                    let (sum, size) = moment(&q, &scaled, |_| Complex64::new(1.0, 0.0));
                    (direct - sum, direct.norm() + size)
                } else {
                    let k = at_dc as i32;
                    moment(&q, &scaled, |p| p.powi(-k))
                };
                if !(size > 0.0 && sum.norm() <= tolerance * size) {
                    break;
                }
                at_dc += 1;
            }
            if at_dc > n_poles {
                at_dc = 0;
            }
        }
        let deflated = |power: i32| {
            let coefficients: Vec<Complex64> = residues
                .iter()
                .zip(&scaled)
                .map(|(r, p)| if r.norm() > 0.0 { r * p.powi(-power) } else { *r })
                .collect();
            let usable = coefficients.iter().all(|c| c.re.is_finite() && c.im.is_finite());
            usable.then(|| Form::new(power, Complex64::new(0.0, 0.0), &coefficients, poles, layout))
        };
        let below = if at_dc > 0 { deflated(at_dc as i32) } else { None }.unwrap_or_else(|| plain.clone());
        let above = if at_infinity > 0 { deflated(-(at_infinity as i32)) } else { None }.unwrap_or(plain);
        Readout { below, above, plain: plain_form }
    }

    fn form(&self, above: bool) -> &Form {
        if above {
            &self.above
        } else {
            &self.below
        }
    }
}

impl Layout {
    /// Pairs each complex pole with its conjugate and makes the pair exactly conjugate (the
    /// mean of the two); a pole within `real_tolerance` of the real axis becomes exactly real.
    fn new(poles: &mut [Complex64], real_tolerance: f64) -> Layout {
        let mut singles = Vec::new();
        let mut pairs = Vec::new();
        let mut used = vec![false; poles.len()];
        for i in 0..poles.len() {
            if used[i] {
                continue;
            }
            used[i] = true;
            let p = poles[i];
            if p.im.abs() <= real_tolerance * p.norm() {
                poles[i].im = 0.0;
                singles.push(i);
                continue;
            }
            let partner = (0..poles.len())
                .filter(|&j| !used[j] && poles[j].im * p.im < 0.0)
                .min_by(|&a, &b| (poles[a] - p.conj()).norm().total_cmp(&(poles[b] - p.conj()).norm()));
            match partner {
                Some(j) if (poles[j] - p.conj()).norm() <= 1e-8 * p.norm() => {
                    used[j] = true;
                    let (upper, lower) = if p.im > 0.0 { (i, j) } else { (j, i) };
                    let mean = (poles[upper] + poles[lower].conj()) / 2.0;
                    poles[upper] = mean;
                    poles[lower] = mean.conj();
                    pairs.push((upper, lower));
                }
                _ => singles.push(i),
            }
        }
        Layout { singles, pairs }
    }
}

impl Form {
    /// The form from one coefficient per pole, laid out as singles and pairs.
    fn new(power: i32, direct: Complex64, coefficients: &[Complex64], poles: &[Complex64], layout: &Layout) -> Form {
        let singles = layout
            .singles
            .iter()
            .map(|&k| if poles[k].im == 0.0 { Complex64::new(coefficients[k].re, 0.0) } else { coefficients[k] })
            .collect();
        let pairs = layout
            .pairs
            .iter()
            .map(|&(upper, lower)| {
                let c = (coefficients[upper] + coefficients[lower].conj()) / 2.0;
                (2.0 * c.re, -2.0 * (c * poles[upper].conj()).re)
            })
            .collect();
        Form { power, direct, singles, pairs }
    }

    /// The value from the sum S = Σ c_i/(s − p_i), at ŝ = ω/scale (times j).
    fn value(&self, s_hat: f64, sum: Complex64) -> Complex64 {
        if self.power == 0 {
            self.direct + sum
        } else {
            self.direct + j_power(s_hat, self.power) * sum
        }
    }

    /// The value and d/ds from S and S′ = dS/ds.
    fn finish(&self, s_hat: f64, scale: f64, sum: Complex64, sum_ds: Complex64) -> (Complex64, Complex64) {
        if self.power == 0 {
            (self.direct + sum, sum_ds)
        } else {
            let k = self.power;
            let value = self.direct + j_power(s_hat, k) * sum;
            let derivative = j_power(s_hat, k - 1) * (k as f64 / scale) * sum + j_power(s_hat, k) * sum_ds;
            (value, derivative)
        }
    }
}

/// The (pole, residue) list in pole order, laid out as [`Form::new`] reads it: a real pole gets
/// the real part of its residue, and a conjugate pair gets c and c̄ with c the mean of the upper
/// residue and the conjugate of the lower one.
fn plain_terms(residues: &[Complex64], poles: &[Complex64], layout: &Layout) -> Vec<(Complex64, Complex64)> {
    let mut terms: Vec<(Complex64, Complex64)> = poles.iter().copied().zip(residues.iter().copied()).collect();
    for &k in &layout.singles {
        if poles[k].im == 0.0 {
            terms[k].1 = Complex64::new(residues[k].re, 0.0);
        }
    }
    for &(upper, lower) in &layout.pairs {
        let c = (residues[upper] + residues[lower].conj()) / 2.0;
        terms[upper].1 = c;
        terms[lower].1 = c.conj();
    }
    terms
}

/// (jx)^k, exact in the quarter turns.
fn j_power(x: f64, k: i32) -> Complex64 {
    let magnitude = x.powi(k);
    match k.rem_euclid(4) {
        0 => Complex64::new(magnitude, 0.0),
        1 => Complex64::new(0.0, magnitude),
        2 => Complex64::new(-magnitude, 0.0),
        _ => Complex64::new(0.0, -magnitude),
    }
}

/// Σ c_i·w(p_i) and Σ |c_i|·|w(p_i)| over the terms with c_i ≠ 0.
fn moment(c: &[Complex64], p: &[Complex64], weight: impl Fn(Complex64) -> Complex64) -> (Complex64, f64) {
    let mut sum = Complex64::new(0.0, 0.0);
    let mut size = 0.0;
    for (c, p) in c.iter().zip(p) {
        if c.norm() > 0.0 {
            let term = c * weight(*p);
            sum += term;
            size += term.norm();
        }
    }
    (sum, size)
}

/// The eigendecomposition at `base`, nudged off a singular shift.
fn eigen_near(g: &[f64], c: &[f64], b: &[Complex64], n: usize, base: f64) -> Result<Eigen, ModalError> {
    let mut last = ModalError::Singular;
    for factor in [1.0, 1.9, 0.53, 3.7, 0.27] {
        match eigen_at(g, c, b, n, base * factor) {
            Ok(eigen) => return Ok(eigen),
            Err(ModalError::Singular) => continue,
            Err(error) => last = error,
        }
    }
    Err(last)
}

/// The converged complex Schur form Q·T·Q* of the balanced M = K⁻¹C at one shift.
struct ShiftedSchur {
    q: DMatrix<Complex64>,
    t: DMatrix<Complex64>,
    /// The diagonal D of the balancing similarity D⁻¹MD.
    balance: Vec<f64>,
    /// b0 = K⁻¹b.
    b0: Vec<Complex64>,
    /// Frobenius norm of T.
    t_norm: f64,
}

/// Factors K = G + s0·C, forms M = K⁻¹C, balances it and reduces it to a converged Schur form.
fn shifted_schur(g: &[f64], c: &[f64], b: &[Complex64], n: usize, shift: f64) -> Result<ShiftedSchur, ModalError> {
    let zero = Complex64::new(0.0, 0.0);
    let k: Vec<Complex64> = g.iter().zip(c).map(|(g, c)| Complex64::new(g + shift * c, 0.0)).collect();
    let mut lu = Lu::new();
    lu.factor(&k, n).map_err(|_| ModalError::Singular)?;
    // M = K⁻¹C, one column at a time.
    let mut m = vec![zero; n * n];
    let mut column = vec![zero; n];
    for j in 0..n {
        for i in 0..n {
            column[i] = Complex64::new(c[i * n + j], 0.0);
        }
        lu.solve_in_place(&mut column);
        for i in 0..n {
            m[i * n + j] = column[i];
        }
    }
    let mut b0 = b.to_vec();
    lu.solve_in_place(&mut b0);
    if m.iter().chain(&b0).any(|z| !(z.re.is_finite() && z.im.is_finite())) {
        return Err(ModalError::Singular);
    }

    let balance = balance(&mut m, n);
    let max_iterations = 100 * n.max(3);
    let schur = Schur::try_new(DMatrix::from_row_slice(n, n, &m), f64::EPSILON, max_iterations)
        .ok_or(ModalError::Unconverged { iterations: max_iterations })?;
    let (q, t) = schur.unpack();
    let t_norm = t.iter().map(|z| z.norm_sqr()).sum::<f64>().sqrt();
    for j in 0..n {
        for i in j + 1..n {
            if t[(i, j)].norm() > n as f64 * f64::EPSILON * t_norm {
                return Err(ModalError::Unconverged { iterations: max_iterations });
            }
        }
    }
    Ok(ShiftedSchur { q, t, balance, b0, t_norm })
}

/// Factors K = G + s0·C and eigendecomposes M = K⁻¹C (see the module doc).
fn eigen_at(g: &[f64], c: &[f64], b: &[Complex64], n: usize, shift: f64) -> Result<Eigen, ModalError> {
    let zero = Complex64::new(0.0, 0.0);
    let ShiftedSchur { q, t, balance, b0, t_norm } = shifted_schur(g, c, b, n, shift)?;
    let mut column = vec![zero; n];
    let t_max = t.iter().map(|z| z.norm()).fold(0.0, f64::max);
    let lambda: Vec<Complex64> = (0..n).map(|i| t[(i, i)]).collect();

    // Eigenvectors of T by back substitution (column j has y_j = 1 and zeros below).
    // When T = 0 every divisor is 0 and every numerator too; any positive divisor will do.
    let smallest_divisor = if t_max > 0.0 { f64::EPSILON * t_max } else { 1.0 };
    let mut y = vec![zero; n * n];
    for j in 0..n {
        y[j * n + j] = Complex64::new(1.0, 0.0);
        for i in (0..j).rev() {
            let mut sum = zero;
            for l in i + 1..=j {
                sum += t[(i, l)] * y[l * n + j];
            }
            let mut divisor = t[(i, i)] - t[(j, j)];
            if divisor.norm() < smallest_divisor {
                divisor = Complex64::new(smallest_divisor, 0.0);
            }
            y[i * n + j] = -sum / divisor;
        }
    }
    // V = D·Q·Y with unit columns.
    let mut vectors = vec![zero; n * n];
    for i in 0..n {
        for j in 0..n {
            let mut sum = zero;
            for l in 0..=j {
                sum += q[(i, l)] * y[l * n + j];
            }
            vectors[i * n + j] = sum * balance[i];
        }
    }
    for j in 0..n {
        let length = (0..n).map(|i| vectors[i * n + j].norm_sqr()).sum::<f64>().sqrt();
        if !(length > 0.0 && length.is_finite()) {
            return Err(ModalError::IllConditioned { condition: f64::INFINITY });
        }
        for i in 0..n {
            vectors[i * n + j] /= length;
        }
    }
    let singular_basis = ModalError::IllConditioned { condition: f64::INFINITY };
    let mut basis = Lu::new();
    basis.factor(&vectors, n).map_err(|_| singular_basis)?;
    let one_norm = |columns: &dyn Fn(usize, usize) -> Complex64| {
        (0..n).map(|j| (0..n).map(|i| columns(i, j).norm()).sum::<f64>()).fold(0.0, f64::max)
    };
    let mut inverse = vec![zero; n * n];
    for j in 0..n {
        column.iter_mut().for_each(|z| *z = zero);
        column[j] = Complex64::new(1.0, 0.0);
        basis.solve_in_place(&mut column);
        for i in 0..n {
            inverse[i * n + j] = column[i];
        }
    }
    let condition = one_norm(&|i, j| vectors[i * n + j]) * one_norm(&|i, j| inverse[i * n + j]);
    let mut weights = b0;
    basis.solve_in_place(&mut weights);
    if !condition.is_finite() || weights.iter().any(|z| !(z.re.is_finite() && z.im.is_finite())) {
        return Err(singular_basis);
    }
    Ok(Eigen {
        shift,
        n,
        lambda,
        vectors,
        weights,
        condition: if condition.is_nan() { f64::INFINITY } else { condition },
        zero_eigenvalue: 64.0 * n as f64 * f64::EPSILON * t_norm,
    })
}

impl Eigen {
    /// Indices of the finite eigenvalues (the rest are infinite poles).
    fn finite(&self) -> Vec<usize> {
        (0..self.n).filter(|&i| self.lambda[i].norm() > self.zero_eigenvalue).collect()
    }

    /// The pole p = s0 − 1/λ_i, exactly 0 within 1000·n·ε·s0 of the origin.
    fn pole(&self, i: usize) -> Complex64 {
        let p = self.shift - self.lambda[i].inv();
        if p.norm() <= 1e3 * self.n as f64 * f64::EPSILON * self.shift {
            Complex64::new(0.0, 0.0)
        } else {
            p
        }
    }

    /// The geometric mean of the non-zero finite pole magnitudes (1 if there are none).
    fn pole_scale(&self) -> f64 {
        let magnitudes: Vec<f64> = self.finite().into_iter().map(|i| self.pole(i).norm()).collect();
        geometric_mean(&magnitudes)
    }
}

/// The geometric mean of the positive entries of `values`, or 1 if there are none.
fn geometric_mean(values: &[f64]) -> f64 {
    let logs: Vec<f64> = values.iter().filter(|&&v| v > 0.0).map(|v| v.ln()).collect();
    if logs.is_empty() {
        1.0
    } else {
        (logs.iter().sum::<f64>() / logs.len() as f64).exp()
    }
}

/// Balances the row-major `m` in place by a power-of-two diagonal similarity D⁻¹·m·D (Parlett &
/// Reinsch 1969, without permutations) and returns D's diagonal.
fn balance(m: &mut [Complex64], n: usize) -> Vec<f64> {
    let mut d = vec![1.0; n];
    for _ in 0..100 {
        let mut converged = true;
        for i in 0..n {
            let mut column = 0.0;
            let mut row = 0.0;
            for j in (0..n).filter(|&j| j != i) {
                column += m[j * n + i].l1_norm();
                row += m[i * n + j].l1_norm();
            }
            if column == 0.0 || row == 0.0 {
                continue;
            }
            let total = column + row;
            let mut f = 1.0;
            while column < row / 2.0 {
                column *= 2.0;
                row /= 2.0;
                f *= 2.0;
            }
            while column >= row * 2.0 {
                column /= 2.0;
                row *= 2.0;
                f /= 2.0;
            }
            if column + row < 0.95 * total {
                converged = false;
                d[i] *= f;
                for j in 0..n {
                    m[i * n + j] /= f;
                    m[j * n + i] *= f;
                }
            }
        }
        if converged {
            break;
        }
    }
    d
}

/// The deviation of `fast` from `exact` (measures in the module doc).
fn deviation(exact: &Solution, fast: &Solution, omega_min: f64) -> f64 {
    let relative = |delta: f64, size: f64| if delta == 0.0 { 0.0 } else { delta / size };
    let omega = 2.0 * PI * exact.f_hz;
    let h = relative((fast.transfer - exact.transfer).norm(), exact.transfer.norm());
    let h_prime = relative(
        (fast.transfer_derivative - exact.transfer_derivative).norm(),
        exact.transfer_derivative.norm() + exact.transfer.norm() / omega.max(omega_min),
    );
    let z = match (exact.input_impedance, fast.input_impedance) {
        (Some(a), Some(b)) => relative((b - a).norm(), a.norm()),
        (None, None) => 0.0,
        _ => f64::INFINITY,
    };
    h.max(h_prime).max(z)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::circuit::{Circuit, CircuitBuilder, ElementKind, Gain};
    use crate::mna::Probe;
    use crate::sweep::{sweep, sweep_fast, FrequencyGrid, Spacing};

    fn c(re: f64, im: f64) -> Complex64 {
        Complex64::new(re, im)
    }

    fn system(builder: &CircuitBuilder, stimulus: &str) -> AcSystem {
        let circuit = builder.build().unwrap();
        let probe = Probe::new(&circuit, stimulus, "out", "0").unwrap();
        AcSystem::new(&circuit, &probe)
    }

    fn system_for(builder: &CircuitBuilder) -> AcSystem {
        system(builder, "V1")
    }

    fn log_points(start_hz: f64, stop_hz: f64, n: usize) -> Vec<f64> {
        FrequencyGrid::log(start_hz, stop_hz, Spacing::Points(n)).unwrap().frequencies().to_vec()
    }

    fn relative(a: Complex64, b: Complex64) -> f64 {
        (a - b).norm() / b.norm()
    }

    /// The one check helper: the modal path agrees with the LU path at every frequency in `f_hz`
    /// to `rtol` in the module's measures, and optionally with closed forms for H and Z_in.
    fn check(
        system: &mut AcSystem,
        f_hz: &[f64],
        rtol: f64,
        transfer: Option<&dyn Fn(Complex64) -> Complex64>,
        impedance: Option<&dyn Fn(Complex64) -> Complex64>,
    ) -> Modal {
        let modal = Modal::new(system).unwrap_or_else(|e| panic!("modal path refused: {e}"));
        let omega_min = modal.pole_magnitudes.iter().copied().filter(|&m| m > 0.0).fold(f64::INFINITY, f64::min);
        let omega_min = if omega_min.is_finite() { omega_min } else { 1.0 };
        for &f in f_hz {
            let exact = system.solve_at(f, Detail::Transfer).unwrap();
            let fast = modal.solve_at(f).unwrap();
            let d = deviation(&exact, &fast, omega_min);
            assert!(d <= rtol, "f = {f} Hz: deviation {d:e}; LU {exact:?}, modal {fast:?}");
            assert!(fast.node_voltages.is_empty() && fast.elements.is_empty());
            let s = c(0.0, 2.0 * PI * f);
            if let Some(h) = transfer {
                let e = relative(fast.transfer, h(s));
                assert!(e <= rtol, "f = {f} Hz: H {} vs closed form {} (rel {e:e})", fast.transfer, h(s));
            }
            if let Some(z) = impedance {
                let e = relative(fast.input_impedance.unwrap(), z(s));
                assert!(e <= rtol, "f = {f} Hz: Z_in vs closed form (rel {e:e})");
            }
        }
        modal
    }

    /// Matches `got` to `want` one to one, each within `rtol` of |want|.
    fn assert_same_poles(got: &[Complex64], want: &[Complex64], rtol: f64) {
        assert_eq!(got.len(), want.len(), "poles {got:?} vs {want:?}");
        let mut unused: Vec<Complex64> = got.to_vec();
        for w in want {
            let (index, distance) =
                unused.iter().enumerate().map(|(i, g)| (i, (g - w).norm())).min_by(|a, b| a.1.total_cmp(&b.1)).unwrap();
            assert!(distance <= rtol * w.norm(), "pole {w} not found (nearest off by {distance:e}); got {got:?}");
            unused.remove(index);
        }
    }

    /// The bench's circuit: a 7th-order doubly terminated Butterworth ladder, shunt C first,
    /// 50 Ω, fc = 1 MHz (copied from crate/benches/sweep.rs).
    fn ladder7() -> (Circuit, Probe) {
        // Source: Butterworth prototype g_k = 2 sin((2k−1)π/2n) (references §2.1); shunt C first.
        let (r0, omega_c, n) = (50.0, 2.0 * PI * 1e6, 7);
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "n1", "0", 1.0, r0);
        let mut node = 1;
        for k in 1..=n {
            let g = 2.0 * ((2 * k - 1) as f64 * PI / (2 * n) as f64).sin();
            if k % 2 == 1 {
                b.capacitor(&format!("C{k}"), &format!("n{node}"), "0", g / (r0 * omega_c));
            } else {
                b.inductor(&format!("L{k}"), &format!("n{node}"), &format!("n{}", node + 1), g * r0 / omega_c);
                node += 1;
            }
        }
        b.resistor("RL", &format!("n{node}"), "0", r0);
        let circuit = b.build().expect("ladder is valid");
        let probe = Probe::new(&circuit, "V1", &format!("n{node}"), "0").expect("probe");
        (circuit, probe)
    }

    // Source: Butterworth prototype poles e^{jπ(2k+n−1)/(2n)}, k = 1..n, scaled by ωc (closed
    // form; scipy.signal.buttap(7) gives the same poles). The doubly terminated ladder realises
    // H(s) = 0.5 · Π(−p_k) / Π(s − p_k) (0.5 from the matched terminations).
    #[test]
    fn butterworth_ladder_matches_lu_closed_form_and_poles() {
        let (circuit, probe) = ladder7();
        let mut system = AcSystem::new(&circuit, &probe);
        let (n, omega_c) = (7, 2.0 * PI * 1e6);
        let expected: Vec<Complex64> =
            (1..=n).map(|k| Complex64::from_polar(omega_c, PI * (2 * k + n - 1) as f64 / (2 * n) as f64)).collect();
        let closed_form = |s: Complex64| {
            let mut h = c(0.5, 0.0);
            for p in &expected {
                h *= -p / (s - p);
            }
            h
        };
        // 200 log points from 1 kHz to 1 GHz: |H| spans 0.5 down to 5e-22.
        let modal = check(&mut system, &log_points(1e3, 1e9, 200), 1e-9, Some(&closed_form), None);
        assert_same_poles(&modal.poles(), &expected, 1e-9);
        // The deep stop band is relatively accurate, not only the pass band (the plain
        // partial-fraction sum is off by 1e3 here). The residues carry about cond(V)·ε ≈ 2e-13
        // relative error and the leading moment cancels about 15-fold, hence 1e-10.
        let deep = modal.solve_at(1e9).unwrap().transfer;
        assert!(relative(deep, closed_form(c(0.0, 2.0 * PI * 1e9))) < 1e-10, "H(1 GHz) = {deep}");
    }

    // Source: the low-pass to high-pass transform s → ωc²/s of the same Butterworth prototype
    // (shunt C_k → shunt L = R0/(g_k ωc), series L_k → series C = 1/(g_k R0 ωc); common
    // practice), so H(s) = 0.5 / Π(ωc/s − p̂_k) with the normalised Butterworth poles p̂_k. The
    // poles are the same set, and the deep stop band now lies below fc (zero of order 7 at DC).
    #[test]
    fn butterworth_high_pass_ladder_is_accurate_far_below_cutoff() {
        let (r0, omega_c, n) = (50.0, 2.0 * PI * 1e6, 7);
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "n1", "0", 1.0, r0);
        let mut node = 1;
        for k in 1..=n {
            let g = 2.0 * ((2 * k - 1) as f64 * PI / (2 * n) as f64).sin();
            if k % 2 == 1 {
                b.inductor(&format!("L{k}"), &format!("n{node}"), "0", r0 / (g * omega_c));
            } else {
                b.capacitor(&format!("C{k}"), &format!("n{node}"), &format!("n{}", node + 1), 1.0 / (g * r0 * omega_c));
                node += 1;
            }
        }
        b.resistor("RL", &format!("n{node}"), "0", r0);
        let circuit = b.build().unwrap();
        let probe = Probe::new(&circuit, "V1", &format!("n{node}"), "0").unwrap();
        let mut system = AcSystem::new(&circuit, &probe);
        let normalised: Vec<Complex64> =
            (1..=n).map(|k| Complex64::from_polar(1.0, PI * (2 * k + n - 1) as f64 / (2 * n) as f64)).collect();
        let closed_form = |s: Complex64| {
            let mut h = c(0.5, 0.0);
            for p in &normalised {
                h /= omega_c / s - p;
            }
            h
        };
        // 1 kHz to 1 GHz: |H| from 5e-22 up to 0.5.
        let modal = check(&mut system, &log_points(1e3, 1e9, 200), 1e-9, Some(&closed_form), None);
        let expected: Vec<Complex64> = normalised.iter().map(|p| p * omega_c).collect();
        assert_same_poles(&modal.poles(), &expected, 1e-9);
        // |H(1 Hz)| = 5e-43; tolerance as for the low-pass deep stop band.
        let deep = modal.solve_at(1.0).unwrap().transfer;
        assert!(relative(deep, closed_form(c(0.0, 2.0 * PI))) < 1e-10, "H(1 Hz) = {deep}");
    }

    // Source: first-order RC divider H = 1/(1 + sRC), Z_in = R + 1/(sC), pole −1/RC (closed form).
    #[test]
    fn rc_lowpass_from_ideal_source() {
        let (r, cap) = (1e3, 1e-6);
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0).resistor("R1", "in", "out", r).capacitor("C1", "out", "0", cap);
        let mut system = system(&b, "V1");
        let h = |s: Complex64| 1.0 / (1.0 + s * r * cap);
        let z = |s: Complex64| r + 1.0 / (s * cap);
        let modal = check(&mut system, &log_points(1e-2, 1e8, 101), 1e-9, Some(&h), Some(&z));
        assert_same_poles(&modal.poles(), &[c(-1.0 / (r * cap), 0.0)], 1e-12);
        // At DC the source delivers no current at all: H = 1, no input impedance.
        let dc = modal.solve_at(0.0).unwrap();
        assert!(relative(dc.transfer, c(1.0, 0.0)) < 1e-15 && dc.input_impedance.is_none(), "{dc:?}");
    }

    // Source: series RLC, output across C: H = 1/(LCs² + RCs + 1), poles from
    // s² + (R/L)s + 1/(LC) = 0 (closed form). The Thevenin source's 50 Ω adds to R.
    #[test]
    fn series_rlc_has_the_quadratic_poles() {
        for (r_source, r) in [(0.0, 20.0), (50.0, 10.0), (0.0, 500.0)] {
            let (l, cap) = (1e-3, 1e-7);
            let mut b = CircuitBuilder::new();
            b.voltage_source("V1", "in", "0", 1.0, r_source)
                .resistor("R1", "in", "a", r)
                .inductor("L1", "a", "out", l)
                .capacitor("C1", "out", "0", cap);
            let mut system = system(&b, "V1");
            let total = r + r_source;
            let h = |s: Complex64| 1.0 / (l * cap * s * s + total * cap * s + 1.0);
            let z = |s: Complex64| r + s * l + 1.0 / (s * cap);
            let modal = check(&mut system, &log_points(1.0, 1e9, 120), 1e-9, Some(&h), Some(&z));
            let discriminant = Complex64::new((total / l).powi(2) - 4.0 / (l * cap), 0.0).sqrt();
            let roots = [(-total / l + discriminant) / 2.0, (-total / l - discriminant) / 2.0];
            assert_same_poles(&modal.poles(), &roots, 1e-10);
        }
    }

    // Source: ideal amplifier between an RC low-pass and a CR high-pass (closed form,
    // H = A · 1/(1 + sR1C1) · sR2C2/(1 + sR2C2)): zeros at DC and at infinity.
    #[test]
    fn ideal_vcvs_band_pass() {
        let (r1, c1, r2, c2, gain) = (1e3, 1e-8, 1e4, 1e-6, -4.0);
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 2.0, 0.0)
            .resistor("R1", "in", "a", r1)
            .capacitor("C1", "a", "0", c1)
            .vcvs("E1", "b", "0", "a", "0", Gain::Constant(gain))
            .capacitor("C2", "b", "out", c2)
            .resistor("R2", "out", "0", r2);
        let mut system = system(&b, "V1");
        let h = |s: Complex64| gain / (1.0 + s * r1 * c1) * (s * r2 * c2) / (1.0 + s * r2 * c2);
        let z = |s: Complex64| r1 + 1.0 / (s * c1);
        let modal = check(&mut system, &log_points(0.1, 1e10, 150), 1e-9, Some(&h), Some(&z));
        assert_same_poles(&modal.poles(), &[c(-1.0 / (r1 * c1), 0.0), c(-1.0 / (r2 * c2), 0.0)], 1e-12);
        // Seven decades below the input corner the LU path's Re Z_in drifts (987 Ω instead of
        // 1 kΩ at 1.8 mHz, 1.5e-9 of |Z_in|); the modal path still matches the closed form.
        for f in log_points(1e-3, 0.1, 20) {
            let s = c(0.0, 2.0 * PI * f);
            let fast = modal.solve_at(f).unwrap();
            assert!(relative(fast.transfer, h(s)) < 1e-12, "f = {f}: H");
            assert!(relative(fast.input_impedance.unwrap(), z(s)) < 1e-12, "f = {f}: Z_in");
            assert!((fast.input_impedance.unwrap().re - r1).abs() < 1e-6 * r1, "f = {f}: Re Z_in");
        }
    }

    // Source: parallel RLC driven by a current source, Z = 1/(1/R + sC + 1/(sL)), poles from
    // s² + s/(RC) + 1/(LC) = 0 (closed form). The transfer is the transimpedance V/I.
    #[test]
    fn current_source_into_parallel_rlc() {
        let (r, l, cap, amps) = (2e3, 1e-3, 1e-8, 1e-3);
        let mut b = CircuitBuilder::new();
        b.current_source("I1", "out", "0", amps)
            .resistor("R1", "out", "0", r)
            .inductor("L1", "out", "0", l)
            .capacitor("C1", "out", "0", cap);
        let mut system = system(&b, "I1");
        let z = |s: Complex64| 1.0 / (1.0 / r + s * cap + 1.0 / (s * l));
        let modal = check(&mut system, &log_points(1.0, 1e10, 150), 1e-9, Some(&z), Some(&z));
        let discriminant = Complex64::new((1.0 / (r * cap)).powi(2) - 4.0 / (l * cap), 0.0).sqrt();
        let roots = [(-1.0 / (r * cap) + discriminant) / 2.0, (-1.0 / (r * cap) - discriminant) / 2.0];
        assert_same_poles(&modal.poles(), &roots, 1e-10);
    }

    // A repeated real pole (two identical RC sections buffered by a unity-gain VCVS: a Jordan
    // block) is either verified or refused; the fast sweep agrees with the LU sweep either way.
    #[test]
    fn repeated_pole_verifies_or_falls_back() {
        let (r, cap) = (1e3, 1e-7);
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0)
            .resistor("R1", "in", "a", r)
            .capacitor("C1", "a", "0", cap)
            .vcvs("E1", "b", "0", "a", "0", Gain::Constant(1.0))
            .resistor("R2", "b", "out", r)
            .capacitor("C2", "out", "0", cap);
        let mut system = system(&b, "V1");
        let grid = FrequencyGrid::log(1.0, 1e8, Spacing::Points(300)).unwrap();
        match Modal::new(&mut system) {
            Ok(_) => {
                let h = |s: Complex64| 1.0 / ((1.0 + s * r * cap) * (1.0 + s * r * cap));
                check(&mut system, grid.frequencies(), 1e-9, Some(&h), None);
            }
            Err(error) => {
                assert!(matches!(error, ModalError::Inaccurate { .. } | ModalError::IllConditioned { .. }), "{error}");
                assert!(error.to_string().contains("falls back to the exact LU path"));
            }
        }
        let fast = sweep_fast(&mut system, &grid);
        let exact = sweep(&mut system, &grid, Detail::Transfer);
        for (a, b) in fast.solutions().iter().zip(exact.solutions()) {
            let (a, b) = (a.as_ref().unwrap(), b.as_ref().unwrap());
            assert!(deviation(b, a, 1.0 / (r * cap)) <= 1e-9, "{a:?} vs {b:?}");
        }
    }

    #[test]
    fn capacitor_with_esr_gets_a_modal_form_through_internal_unknowns() {
        let (r, cap, esr) = (1e3, 1e-6, 10.0);
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0).resistor("R1", "in", "out", r).add(
            "C1",
            ElementKind::Capacitor { capacitance: cap, esr },
            "out",
            "0",
        );
        let mut system = system(&b, "V1");
        // Source: voltage divider of R and the series ESR + 1/(sC) (closed form):
        // H = (1 + s·C·esr)/(1 + s·C·(R + esr)); one pole at −1/(C·(R + esr)).
        let h = |s: Complex64| (1.0 + s * cap * esr) / (1.0 + s * cap * (r + esr));
        let z = |s: Complex64| r + esr + 1.0 / (s * cap);
        let modal = check(&mut system, &log_points(1.0, 1e7, 60), 1e-9, Some(&h), Some(&z));
        let poles = modal.poles();
        assert_eq!(poles.len(), 1, "{poles:?}");
        assert!((poles[0].re + 1.0 / (cap * (r + esr))).abs() <= 1e-9 * poles[0].norm(), "{poles:?}");
    }

    #[test]
    fn single_pole_gain_gets_a_modal_form_through_its_pole_state() {
        let (a0, pole_hz) = (1e5, 10.0);
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0)
            .resistor("R1", "in", "0", 1e3)
            .vcvs("E1", "out", "0", "in", "0", Gain::SinglePole { dc_gain: a0, pole_hz })
            .resistor("R2", "out", "0", 1e3);
        let mut system = system(&b, "V1");
        // Source: the gain itself, H = A0/(1 + s/ωp) (the model's definition).
        let wp = 2.0 * PI * pole_hz;
        let h = move |s: Complex64| a0 / (1.0 + s / wp);
        let modal = check(&mut system, &log_points(0.1, 1e8, 60), 1e-9, Some(&h), None);
        assert_eq!(modal.poles().len(), 1);
        assert!((modal.poles()[0].re + wp).abs() <= 1e-9 * wp);
    }

    #[test]
    fn a_unity_follower_with_a_single_pole_gain_closes_its_loop() {
        // V(out) = A(s)·(V(in) − V(out)): the closed loop A/(1 + A), one pole at −ωp·(1 + A0).
        let (a0, pole_hz) = (2e5, 5.0);
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 50.0)
            .resistor("R1", "in", "0", 1e4)
            .vcvs("E1", "out", "0", "in", "out", Gain::SinglePole { dc_gain: a0, pole_hz })
            .resistor("RL", "out", "0", 1e3);
        let mut system = system(&b, "V1");
        let wp = 2.0 * PI * pole_hz;
        let divider = 1e4 / (1e4 + 50.0);
        // Source: closed-loop gain of a follower, A/(1 + A) with A = A0/(1 + s/ωp) (common practice).
        let h = move |s: Complex64| {
            let a = a0 / (1.0 + s / wp);
            divider * a / (1.0 + a)
        };
        let modal = check(&mut system, &log_points(1.0, 1e9, 60), 1e-9, Some(&h), None);
        assert!((modal.poles()[0].re + wp * (1.0 + a0)).abs() <= 1e-9 * wp * a0);
    }

    #[test]
    fn bad_frequencies_and_the_dc_pole_of_a_floating_node() {
        // The node between two series capacitors floats at DC: a pole at s = 0.
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0)
            .capacitor("C1", "in", "mid", 1e-9)
            .capacitor("C2", "mid", "out", 1e-9)
            .resistor("R1", "out", "0", 1e3);
        let mut system = system(&b, "V1");
        let modal = check(&mut system, &log_points(1e3, 1e9, 40), 1e-9, None, None);
        assert!(modal.poles().contains(&c(0.0, 0.0)), "poles {:?}", modal.poles());
        assert_eq!(modal.solve_at(0.0), Err(SolveError::Singular { f_hz: 0.0 }));
        assert_eq!(system.solve_at(0.0, Detail::Transfer), Err(SolveError::Singular { f_hz: 0.0 }));
        for f in [-1.0, f64::NAN, f64::INFINITY] {
            assert!(matches!(modal.solve_at(f), Err(SolveError::BadFrequency { .. })), "f = {f}");
        }
    }

    #[test]
    fn resistive_divider_has_no_poles() {
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 50.0)
            .resistor("R1", "in", "out", 150.0)
            .resistor("R2", "out", "0", 50.0);
        let mut system = system(&b, "V1");
        // Source: resistive divider H = R2/(Rs + R1 + R2) (closed form).
        let h = |_: Complex64| c(50.0 / 250.0, 0.0);
        let z = |_: Complex64| c(200.0, 0.0);
        let modal = check(&mut system, &[0.0, 1.0, 1e6], 1e-12, Some(&h), Some(&z));
        assert!(modal.poles().is_empty());
        assert_eq!(modal.solve_at(5.0).unwrap().transfer_derivative, c(0.0, 0.0));
    }

    #[test]
    fn sweep_fast_matches_sweep_on_the_ladder() {
        let (circuit, probe) = ladder7();
        let mut system = AcSystem::new(&circuit, &probe);
        let grid = FrequencyGrid::log(1e4, 1e8, Spacing::Points(500)).unwrap();
        let fast = sweep_fast(&mut system, &grid);
        let exact = sweep(&mut system, &grid, Detail::Transfer);
        assert_eq!(fast.frequencies(), exact.frequencies());
        for (a, b) in fast.solutions().iter().zip(exact.solutions()) {
            let (a, b) = (a.as_ref().unwrap(), b.as_ref().unwrap());
            assert!(deviation(b, a, 2.0 * PI * 1e6) <= 1e-9, "{a:?} vs {b:?}");
        }
    }

    #[test]
    fn solve_all_is_solve_at_bit_for_bit() {
        let (circuit, probe) = ladder7();
        let mut system = AcSystem::new(&circuit, &probe);
        let modal = Modal::new(&mut system).unwrap();
        // 1001 points (not a multiple of 4) whose chunks straddle the 1 MHz crossover, plus bad
        // frequencies inside a chunk.
        let mut f_hz = log_points(1e4, 1e8, 1001);
        f_hz[10] = -1.0;
        f_hz[11] = f64::INFINITY; // not NaN: NaN ≠ NaN would fail the equality on its own
        let one_by_one: Vec<_> = f_hz.iter().map(|&f| modal.solve_at(f)).collect();
        assert_eq!(modal.solve_all(&f_hz), one_by_one);
        assert!(one_by_one.iter().filter(|r| r.is_err()).count() == 2);

        // A chunk holding a point on a pole (0 Hz with a node floating at DC).
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0)
            .capacitor("C1", "in", "mid", 1e-9)
            .capacitor("C2", "mid", "out", 1e-9)
            .resistor("R1", "out", "0", 1e3);
        let modal = Modal::new(&mut system_for(&b)).unwrap();
        let f_hz = [1e3, 0.0, 2e3, 3e3, 4e3, 5e3, 6e3, 7e3];
        let one_by_one: Vec<_> = f_hz.iter().map(|&f| modal.solve_at(f)).collect();
        assert_eq!(modal.solve_all(&f_hz), one_by_one);
        assert_eq!(one_by_one[1], Err(SolveError::Singular { f_hz: 0.0 }));
    }

    // Source: series RLC, H = ω0²/((s − p)(s − p̄)) = ρ/(s − p) + ρ̄/(s − p̄) with
    // ρ = ω0²/(p − p̄) (partial fractions, closed form); d = H(∞) = 0.
    #[test]
    fn transfer_partial_fractions_are_the_plain_residues() {
        let (r, l, cap) = (20.0, 1e-3, 1e-7);
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0)
            .resistor("R1", "in", "a", r)
            .inductor("L1", "a", "out", l)
            .capacitor("C1", "out", "0", cap);
        let modal = Modal::new(&mut system_for(&b)).unwrap();
        let fractions = modal.transfer_partial_fractions();
        assert_eq!(fractions.direct, 0.0);
        assert!(fractions.condition >= 1.0 && fractions.condition == modal.condition());
        let omega0_sqr = 1.0 / (l * cap);
        let p = (-r / l + Complex64::new((r / l).powi(2) - 4.0 * omega0_sqr, 0.0).sqrt()) / 2.0;
        let p = if p.im > 0.0 { p } else { p.conj() };
        let rho = omega0_sqr / (p - p.conj());
        assert_eq!(fractions.terms.len(), 2);
        let poles: Vec<Complex64> = fractions.terms.iter().map(|t| t.0).collect();
        assert_eq!(poles, modal.poles(), "same order as poles()");
        for &(pole, residue) in &fractions.terms {
            let want = if pole.im > 0.0 { rho } else { rho.conj() };
            assert!(relative(residue, want) < 1e-12, "{pole}: {residue} vs {want}");
        }
        // Exactly conjugate, and the sum is H itself at a test frequency.
        assert_eq!(fractions.terms[0].1, fractions.terms[1].1.conj());
        let s = c(0.0, 2.0 * PI * 3e3);
        let sum: Complex64 = fractions.terms.iter().map(|(p, r)| r / (s - p)).sum();
        assert!(relative(sum, modal.solve_at(3e3).unwrap().transfer) < 1e-12);

        // Source: CR high-pass H = sτ/(1 + sτ) = 1 − (1/τ)/(s + 1/τ): d = 1, ρ = −1/τ.
        let (r, cap) = (1e3, 1e-6);
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0).capacitor("C1", "in", "out", cap).resistor("R1", "out", "0", r);
        let fractions = Modal::new(&mut system_for(&b)).unwrap().transfer_partial_fractions();
        assert!((fractions.direct - 1.0).abs() < 1e-15, "{fractions:?}");
        let (pole, residue) = fractions.terms[0];
        assert!((pole.re * r * cap + 1.0).abs() < 1e-12 && pole.im == 0.0, "{pole}");
        assert!((residue.re * r * cap + 1.0).abs() < 1e-12 && residue.im == 0.0, "{residue}");
    }

    // Source: two identical buffered RC stages have a double pole at −1/RC (closed form); the
    // pencil's eigenvalues find it even where the basis is refused, to about √ε.
    #[test]
    fn pencil_poles_need_no_eigenbasis() {
        let (r, cap) = (1e3, 1e-7);
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0)
            .resistor("R1", "in", "a", r)
            .capacitor("C1", "a", "0", cap)
            .vcvs("E1", "b", "0", "a", "0", Gain::Constant(1.0))
            .resistor("R2", "b", "out", r)
            .capacitor("C2", "out", "0", cap);
        let poles = Modal::pencil_poles(&system_for(&b)).unwrap();
        assert_eq!(poles.len(), 2, "{poles:?}");
        for p in poles {
            assert!(relative(p, c(-1.0 / (r * cap), 0.0)) < 1e-6, "{p}");
        }
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 50.0)
            .resistor("R1", "in", "out", 150.0)
            .resistor("R2", "out", "0", 50.0);
        assert!(Modal::pencil_poles(&system_for(&b)).unwrap().is_empty());
    }

    #[test]
    fn messages_are_lower_case_and_name_the_fallback() {
        let errors = [
            ModalError::NotRational,
            ModalError::Singular,
            ModalError::Inaccurate { f_hz: 1e6, relative_error: 3e-7 },
            ModalError::IllConditioned { condition: 4e9 },
            ModalError::Unconverged { iterations: 700 },
        ];
        for error in errors {
            let text = error.to_string();
            assert!(text.starts_with(|ch: char| ch.is_lowercase()) && !text.ends_with('.'), "{text}");
            assert!(text.ends_with("the sweep falls back to the exact LU path"), "{text}");
        }
        assert!(ModalError::Inaccurate { f_hz: 1e6, relative_error: 3e-7 }.to_string().contains("1000000 Hz"));
    }
}
