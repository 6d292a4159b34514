//! Normalised low-pass prototypes: the poles (and gain) of each alignment with its cutoff at ω = 1 rad/s.
//!
//! A prototype is a [`Zpk`]: H(s) = gain·Π(s − z)/Π(s − p), with s in rad/s. All prototypes here are
//! all-pole (no finite zeros), have real coefficients (poles come in exact conjugate pairs, a real pole
//! is exactly real) and are listed in order of descending imaginary part. The frequency
//! transformations that place them at a real cutoff or band live in [`crate::transform`].
//!
//! # The alignments and their sources
//! - **Butterworth**: p_k = e^{jπ(2k+n−1)/(2n)}, k = 1..n, gain 1, so |H(j1)|² = 1/2. Computed as
//!   p_k = −sin φ_k + j·cos φ_k with φ_k = (2k−1)π/(2n), which makes the real pole of an odd order
//!   exactly −1. Source: the pole formula of S. Butterworth, "On the theory of filter amplifiers",
//!   Wireless Engineer 7 (1930) (citation from memory); it is the formula `scipy.signal.buttap` uses
//!   (SciPy 1.17.1, read from the installed source), and the section Q_k = 1/(2 sin φ_k) of
//!   references.md §3.1.
//! - **Chebyshev type I**, ripple-edge normalised: ε = √(10^{r/10} − 1), μ = asinh(1/ε)/n,
//!   p = −sinh(μ + jθ_m) with θ_m = πm/(2n), m = −n+1, −n+3, …, n−1; gain = Π(−p), divided by
//!   √(1 + ε²) for even n. So |H(j1)| = −r dB, the peak passband gain is 0 dB, and the DC gain is
//!   −r dB for even n and 0 dB for odd n. Source: `scipy.signal.cheb1ap` (SciPy 1.17.1 source and
//!   docstring), references.md §3.3. Order 1 is the single pole −sinh(asinh(1/ε)) = −1/ε.
//! - **Bessel** (Thomson): the roots of the reverse Bessel polynomial
//!   θ_n(s) = Σ_k a_k s^k, a_k = (2n−k)!/(2^{n−k}·k!·(n−k)!), which has group delay 1 s at DC
//!   (W. E. Thomson, "Delay networks having maximally flat frequency characteristics", Proc. IEE
//!   Part III 96 (1949), as cited by the `scipy.signal.besselap` docstring; coefficient lists in
//!   references.md §3.2). The roots are found here by the Aberth–Ehrlich simultaneous iteration
//!   (O. Aberth, Math. Comp. 27 (1973); L. W. Ehrlich, Comm. ACM 10 (1967), both as cited by the same
//!   docstring) and polished by Newton steps on θ_n. Then, as in `scipy.signal.besselap`:
//!   - [`BesselNormalization::Delay`]: the roots as found, gain a_0 (DC gain 1, τ(0) = 1 s).
//!   - [`BesselNormalization::Magnitude`]: poles divided by the ω where |H|² = 1/2 (found by
//!     bisection to full precision), so |H(j1)| = −3.0103 dB; gain Π(−p).
//!   - [`BesselNormalization::Phase`]: poles divided by a_0^{1/n}, so Π|p| = 1 and the magnitude
//!     asymptote is the Butterworth one; gain 1. This is exactly what SciPy's `norm='phase'` computes.
//!     Its docstring describes it as "the phase response reaches its midpoint at … 1"; that holds
//!     exactly for n = 1 and 2 only. For n ≥ 3 the phase at ω = 1 is 0.5 % (n = 3) to 2.7 % (n = 8)
//!     short of −n·π/4 (measured on SciPy 1.17.1's own poles and on ours; see the tests).
//! - **Linkwitz-Riley**: the Butterworth poles of order n/2, each twice, gain 1, so |H(j1)| =
//!   −6.0206 dB and low-pass + high-pass is all-pass for n = 4 and 8. Definition as in references.md
//!   §3.4 (LR2 = (1st-order Butterworth)², LR4 = (2nd-order Butterworth)²).
//! - **Critical** (critically damped): n coincident real poles at −1/√(2^{1/n} − 1), gain Π(−p),
//!   so the DC gain is 1 and |H(j1)|² = 1/2 exactly (common practice: the response of n identical
//!   buffered first-order stages, scaled to −3 dB at the cutoff). Passive RC ladders approach it.
//! - **Quality**: the roots of s² + s/q + 1, gain 1 (common practice for a single second-order
//!   section at ω0 = 1).

use num_complex::Complex64;

use crate::synthesis::{Alignment, BesselNormalization, SynthesisError};

/// The highest prototype order offered.
pub const MAX_ORDER: usize = 8;

/// A transfer function as zeros, poles and gain: H(s) = gain·Π(s − z)/Π(s − p), with s in rad/s.
#[derive(Debug, Clone, PartialEq)]
pub struct Zpk {
    /// The finite zeros, in rad/s.
    pub zeros: Vec<Complex64>,
    /// The poles, in rad/s.
    pub poles: Vec<Complex64>,
    /// The constant factor in front of the products (not the DC gain unless all |z|, |p| products
    /// cancel).
    pub gain: f64,
}

/// One factor of an all-pole cascade: a real pole or a conjugate pole pair.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Section {
    /// A real pole at s = −omega: 1/(s/omega + 1).
    FirstOrder {
        /// The pole magnitude |p| in rad/s.
        omega: f64,
    },
    /// A conjugate pole pair: 1/(s²/omega0² + s/(q·omega0) + 1).
    SecondOrder {
        /// The pole magnitude |p| in rad/s.
        omega0: f64,
        /// The pole quality factor Q = |p|/(2·|Re p|).
        q: f64,
    },
}

/// The normalised low-pass prototype of an alignment and order, with its cutoff at ω = 1 rad/s.
///
/// The meaning of "cutoff" is that of the alignment (see [`Alignment`] and the module docs): −3 dB for
/// Butterworth and magnitude-normalised Bessel, the ripple edge for Chebyshev, −6 dB for
/// Linkwitz-Riley, ω0 for a [`Alignment::Quality`] section. The poles are in exact conjugate pairs and
/// in order of descending imaginary part; there are no finite zeros.
///
/// # Errors
/// - [`SynthesisError::BadOrder`] for an order outside 1..=[`MAX_ORDER`], an odd Linkwitz-Riley order,
///   or a [`Alignment::Quality`] order other than 2.
/// - [`SynthesisError::BadRipple`] for a Chebyshev ripple not in (0, 10] dB.
/// - [`SynthesisError::BadQ`] for a Q that is not finite and positive, or so small that its poles
///   overflow.
pub fn lowpass_prototype(alignment: Alignment, order: usize) -> Result<Zpk, SynthesisError> {
    // Quality checks its own (single) order; Linkwitz-Riley orders start at 2.
    let min = if alignment == Alignment::LinkwitzRiley { 2 } else { 1 };
    if !matches!(alignment, Alignment::Quality { .. }) {
        if order == 0 {
            return Err(SynthesisError::BadOrder {
                order,
                min,
                max: MAX_ORDER,
                why: "a filter needs at least one pole",
            });
        }
        if order > MAX_ORDER {
            return Err(SynthesisError::BadOrder { order, min, max: MAX_ORDER, why: "orders above 8 are not offered" });
        }
    }
    match alignment {
        Alignment::Butterworth => Ok(butterworth(order)),
        Alignment::Chebyshev { ripple_db } => chebyshev(order, ripple_db),
        Alignment::Bessel { normalization } => Ok(bessel(order, normalization)),
        Alignment::LinkwitzRiley => linkwitz_riley(order),
        Alignment::Critical => Ok(critical(order)),
        Alignment::Quality { q } => quality(order, q),
    }
}

impl Zpk {
    /// Evaluates H(s) = gain·Π(s − z)/Π(s − p), with s in rad/s.
    ///
    /// Factors are multiplied and divided in turn, so intermediate products do not overflow for
    /// realistic orders and frequencies. At a pole the result is infinite or NaN.
    pub fn eval(&self, s: Complex64) -> Complex64 {
        self.ratio(s, None)
    }

    /// Evaluates the exact derivative dH/ds at s (rad/s).
    ///
    /// dH/ds = H·(Σ 1/(s − z) − Σ 1/(s − p)); the zero sum is taken in its product-rule form
    /// gain·Σ_i Π_{j≠i}(s − z_j)/Π(s − p), so the result stays finite at a zero of H.
    pub fn eval_derivative(&self, s: Complex64) -> Complex64 {
        let from_zeros: Complex64 = (0..self.zeros.len()).map(|skip| self.ratio(s, Some(skip))).sum();
        let pole_sum: Complex64 = self.poles.iter().map(|&p| (s - p).inv()).sum();
        from_zeros - self.eval(s) * pole_sum
    }

    /// The poles as first- and second-order sections, in ascending Q with real poles first.
    ///
    /// A pole counts as real when |Im p| ≤ 1e-12·|p|; each real pole is its own
    /// [`Section::FirstOrder`] (a double real pole, as in LR2, is two first-order sections; together
    /// they equal one second-order section with ω0 = √(ω1·ω2) and Q = ω0/(ω1 + ω2), 0.5 when equal).
    /// Each pole with Im p > 0 gives a [`Section::SecondOrder`]; the poles are assumed to come in
    /// conjugate pairs (a real-coefficient H), so those with Im p < 0 are not listed again. Real poles
    /// are sorted by ascending ω, complex pairs by ascending Q and then ω0. Zeros are not described.
    pub fn sections(&self) -> Vec<Section> {
        let mut first: Vec<f64> = Vec::new();
        let mut second: Vec<(f64, f64)> = Vec::new();
        for pole in &self.poles {
            let omega = pole.norm();
            if pole.im.abs() <= REAL_POLE_TOLERANCE * omega {
                first.push(omega);
            } else if pole.im > 0.0 {
                second.push((omega, omega / (2.0 * pole.re.abs())));
            }
        }
        first.sort_by(f64::total_cmp);
        second.sort_by(|a, b| a.1.total_cmp(&b.1).then(a.0.total_cmp(&b.0)));
        first
            .into_iter()
            .map(|omega| Section::FirstOrder { omega })
            .chain(second.into_iter().map(|(omega0, q)| Section::SecondOrder { omega0, q }))
            .collect()
    }

    /// gain·Π_{j≠skip}(s − z_j)/Π(s − p), alternating multiplications and divisions.
    fn ratio(&self, s: Complex64, skip: Option<usize>) -> Complex64 {
        let mut zeros = self.zeros.iter().enumerate().filter(|(idx, _)| Some(*idx) != skip).map(|(_, &z)| z);
        let mut poles = self.poles.iter();
        let mut value = Complex64::new(self.gain, 0.0);
        loop {
            match (zeros.next(), poles.next()) {
                (None, None) => return value,
                (Some(z), Some(&p)) => value *= (s - z) / (s - p),
                (Some(z), None) => value *= s - z,
                (None, Some(&p)) => value /= s - p,
            }
        }
    }
}

/// |Im p| ≤ this × |p| makes a pole real in [`Zpk::sections`]. Poles built here are exactly real or
/// clearly complex; the margin absorbs rounding in transformed poles.
const REAL_POLE_TOLERANCE: f64 = 1e-12;

/// Builds an exactly conjugate-symmetric pole list, in descending imaginary part, from the poles with
/// Im > 0 (in descending Im) and the real poles.
fn conjugate_symmetric(upper: &[Complex64], real: &[f64]) -> Vec<Complex64> {
    let mut poles: Vec<Complex64> = upper.to_vec();
    poles.extend(real.iter().map(|&re| Complex64::new(re, 0.0)));
    poles.extend(upper.iter().rev().map(|p| p.conj()));
    poles
}

/// Butterworth poles of order n ≥ 1, gain 1.
fn butterworth(order: usize) -> Zpk {
    let n = order as f64;
    let upper: Vec<Complex64> = (1..=order / 2)
        .map(|k| {
            let phi = (2 * k - 1) as f64 * std::f64::consts::PI / (2.0 * n);
            Complex64::new(-phi.sin(), phi.cos())
        })
        .collect();
    let real: &[f64] = if order % 2 == 1 { &[-1.0] } else { &[] };
    Zpk { zeros: Vec::new(), poles: conjugate_symmetric(&upper, real), gain: 1.0 }
}

/// Chebyshev type I poles (ripple-edge normalised), with scipy's `cheb1ap` gain convention.
fn chebyshev(order: usize, ripple_db: f64) -> Result<Zpk, SynthesisError> {
    if !(ripple_db > 0.0 && ripple_db <= 10.0) {
        return Err(SynthesisError::BadRipple { ripple_db });
    }
    let n = order as f64;
    let epsilon = (10f64.powf(ripple_db / 10.0) - 1.0).sqrt();
    let mu = (1.0 / epsilon).asinh() / n;
    // m = −n+1, −n+3, … < 0 give Im p > 0 in descending order; m = 0 (odd n) is the real pole.
    let upper: Vec<Complex64> = (0..order / 2)
        .map(|idx| {
            let m = -(n - 1.0) + 2.0 * idx as f64;
            let theta = std::f64::consts::PI * m / (2.0 * n);
            -Complex64::new(mu, theta).sinh()
        })
        .collect();
    let real: Vec<f64> = if order % 2 == 1 { vec![-mu.sinh()] } else { Vec::new() };
    let poles = conjugate_symmetric(&upper, &real);
    let mut gain = dc_product(&poles);
    if order % 2 == 0 {
        gain /= (1.0 + epsilon * epsilon).sqrt();
    }
    Ok(Zpk { zeros: Vec::new(), poles, gain })
}

/// Bessel poles in the requested normalisation; DC gain 1 in all three.
fn bessel(order: usize, normalization: BesselNormalization) -> Zpk {
    let coefficients = reverse_bessel_coefficients(order);
    let a0 = coefficients[0];
    let delay_poles = clean_conjugates(polynomial_roots(&coefficients));
    let delay = Zpk { zeros: Vec::new(), poles: delay_poles, gain: a0 };
    match normalization {
        BesselNormalization::Delay => delay,
        BesselNormalization::Magnitude => {
            let omega_3db = omega_at_gain_sq(&delay, 0.5);
            let poles: Vec<Complex64> = delay.poles.iter().map(|p| p / omega_3db).collect();
            let gain = dc_product(&poles);
            Zpk { zeros: Vec::new(), poles, gain }
        }
        BesselNormalization::Phase => {
            let scale = a0.powf(1.0 / order as f64);
            Zpk { zeros: Vec::new(), poles: delay.poles.iter().map(|p| p / scale).collect(), gain: 1.0 }
        }
    }
}

/// Linkwitz-Riley: each Butterworth pole of half the order, twice (even orders 2..=8).
fn linkwitz_riley(order: usize) -> Result<Zpk, SynthesisError> {
    if order % 2 == 1 {
        return Err(SynthesisError::BadOrder {
            order,
            min: 2,
            max: MAX_ORDER,
            why: "Linkwitz-Riley needs an even order",
        });
    }
    let half = butterworth(order / 2);
    let poles = half.poles.iter().flat_map(|&p| [p, p]).collect();
    Ok(Zpk { zeros: Vec::new(), poles, gain: 1.0 })
}

/// n coincident real poles at −1/√(2^{1/n} − 1), gain Π(−p): DC gain 1, −3.01 dB at ω = 1.
fn critical(order: usize) -> Zpk {
    let omega = critical_pole(order);
    Zpk { zeros: Vec::new(), poles: vec![Complex64::new(-omega, 0.0); order], gain: omega.powi(order as i32) }
}

/// The pole frequency of the order-n critically damped prototype: |1/(1 + j/ω)|^(2n) = 1/2 gives
/// ω = 1/√(2^{1/n} − 1) (n = 1: 1; n = 2: 1.5538).
pub fn critical_pole(order: usize) -> f64 {
    1.0 / (2f64.powf(1.0 / order as f64) - 1.0).sqrt()
}

/// The roots of s² + s/q + 1 (order 2 only), gain 1.
fn quality(order: usize, q: f64) -> Result<Zpk, SynthesisError> {
    if order != 2 {
        return Err(SynthesisError::BadOrder { order, min: 2, max: 2, why: "an f0/Q section is second order" });
    }
    if !(q.is_finite() && q > 0.0) {
        return Err(SynthesisError::BadQ { q });
    }
    let half_b = 0.5 / q;
    let poles = if q > 0.5 {
        let upper = Complex64::new(-half_b, (1.0 - half_b * half_b).sqrt());
        vec![upper, upper.conj()]
    } else {
        // Real roots; the larger one without cancellation, the other from their product 1.
        let far = -half_b * (1.0 + (1.0 - 1.0 / (half_b * half_b)).max(0.0).sqrt());
        vec![Complex64::new(1.0 / far, 0.0), Complex64::new(far, 0.0)]
    };
    if poles.iter().any(|p| !(p.re.is_finite() && p.im.is_finite()) || p.norm() == 0.0) {
        return Err(SynthesisError::BadQ { q });
    }
    Ok(Zpk { zeros: Vec::new(), poles, gain: 1.0 })
}

/// Π(−p) for a conjugate-symmetric pole set, formed as a real number: Π|p|² over pairs × Π(−p) over
/// real poles. Used as the gain that makes the DC gain 1.
fn dc_product(poles: &[Complex64]) -> f64 {
    poles.iter().filter(|p| p.im >= 0.0).map(|p| if p.im == 0.0 { -p.re } else { p.norm_sqr() }).product()
}

/// The coefficients a_0..a_n (lowest power first) of the reverse Bessel polynomial of order n:
/// a_k = (2n−k)!/(2^{n−k}·k!·(n−k)!), by the recurrence a_{k+1} = a_k·2(n−k)/((k+1)(2n−k)) from
/// a_0 = (2n)!/(2^n·n!). All values are integers below 2^53 for n ≤ 8, so they are exact.
fn reverse_bessel_coefficients(order: usize) -> Vec<f64> {
    let n = order as u64;
    // (2n)!/(2^n n!) = 1·3·5·…·(2n−1).
    let mut a: u64 = (1..=n).map(|i| 2 * i - 1).product();
    let mut coefficients = vec![a as f64];
    for k in 0..n {
        a = a * 2 * (n - k) / ((k + 1) * (2 * n - k));
        coefficients.push(a as f64);
    }
    coefficients
}

/// Horner evaluation of p(s) and p'(s) for real coefficients, lowest power first.
fn horner(coefficients: &[f64], s: Complex64) -> (Complex64, Complex64) {
    let mut value = Complex64::new(0.0, 0.0);
    let mut derivative = Complex64::new(0.0, 0.0);
    for &c in coefficients.iter().rev() {
        derivative = derivative * s + value;
        value = value * s + c;
    }
    (value, derivative)
}

/// All complex roots of a real polynomial (coefficients lowest power first, leading one non-zero) by
/// the Aberth–Ehrlich iteration, then up to a few Newton steps on the polynomial to polish each root.
///
/// Start values lie on a circle of radius |a_0/a_n|^{1/n} (the geometric mean of the root moduli),
/// rotated off the real axis so that no two start values are conjugates of each other.
fn polynomial_roots(coefficients: &[f64]) -> Vec<Complex64> {
    let degree = coefficients.len() - 1;
    let leading = coefficients[degree];
    let monic: Vec<f64> = coefficients.iter().map(|c| c / leading).collect();
    let radius = monic[0].abs().powf(1.0 / degree as f64).max(f64::MIN_POSITIVE);
    let mut roots: Vec<Complex64> = (0..degree)
        .map(|k| Complex64::from_polar(radius, 2.0 * std::f64::consts::PI * k as f64 / degree as f64 + 0.4))
        .collect();
    for _ in 0..ABERTH_MAX_ITERATIONS {
        let mut largest_step: f64 = 0.0;
        for i in 0..degree {
            let (value, derivative) = horner(&monic, roots[i]);
            if value == Complex64::new(0.0, 0.0) {
                continue;
            }
            let newton = value / derivative;
            let repulsion: Complex64 = (0..degree).filter(|&j| j != i).map(|j| (roots[i] - roots[j]).inv()).sum();
            let step = newton / (Complex64::new(1.0, 0.0) - newton * repulsion);
            if step.re.is_finite() && step.im.is_finite() {
                roots[i] -= step;
                largest_step = largest_step.max(step.norm() / roots[i].norm().max(f64::MIN_POSITIVE));
            }
        }
        if largest_step < 1e-15 {
            break;
        }
    }
    for root in &mut roots {
        for _ in 0..NEWTON_POLISH_STEPS {
            let (value, derivative) = horner(&monic, *root);
            let candidate = *root - value / derivative;
            if horner(&monic, candidate).0.norm() < value.norm() {
                *root = candidate;
            } else {
                break;
            }
        }
    }
    roots
}

const ABERTH_MAX_ITERATIONS: usize = 200;
const NEWTON_POLISH_STEPS: usize = 4;

/// Makes the roots of a real polynomial exactly conjugate-symmetric and orders them by descending
/// imaginary part: near-real roots (|Im| ≤ 1e-9·|z|) become real, and each upper root is averaged with
/// the conjugate of its nearest lower partner.
fn clean_conjugates(roots: Vec<Complex64>) -> Vec<Complex64> {
    let is_real = |z: &Complex64| z.im.abs() <= 1e-9 * z.norm();
    let mut real: Vec<f64> = roots.iter().filter(|z| is_real(z)).map(|z| z.re).collect();
    let upper: Vec<Complex64> = roots.iter().filter(|z| !is_real(z) && z.im > 0.0).copied().collect();
    let mut lower: Vec<Complex64> = roots.iter().filter(|z| !is_real(z) && z.im < 0.0).copied().collect();
    if upper.len() != lower.len() {
        // Not a conjugate-symmetric set (cannot happen for a real polynomial with converged roots):
        // return it unchanged rather than invent roots.
        let mut all = roots;
        all.sort_by(|a, b| b.im.total_cmp(&a.im).then(a.re.total_cmp(&b.re)));
        return all;
    }
    let mut paired: Vec<Complex64> = upper
        .iter()
        .map(|&z| {
            let nearest = (0..lower.len())
                .min_by(|&a, &b| (lower[a].conj() - z).norm().total_cmp(&(lower[b].conj() - z).norm()))
                .unwrap_or(0);
            let partner = lower.swap_remove(nearest);
            (z + partner.conj()) / 2.0
        })
        .collect();
    paired.sort_by(|a, b| b.im.total_cmp(&a.im));
    real.sort_by(|a, b| b.total_cmp(a));
    conjugate_symmetric(&paired, &real)
}

/// The lowest ω (rad/s) where |H(jω)|² falls to `target` (0 < target < |H(0)|²), by bracketing
/// (doubling from ω = 1) and bisection to the resolution of f64. Uses ln|H|² summed over factors, so it
/// neither overflows nor underflows. Meant for responses whose gain falls monotonically through the
/// target (Bessel; Chebyshev with ripple below 3 dB when the target is 1/2).
pub(crate) fn omega_at_gain_sq(zpk: &Zpk, target: f64) -> f64 {
    let log_target = target.ln();
    let above = |omega: f64| {
        let s = Complex64::new(0.0, omega);
        let log_gain_sq = 2.0 * zpk.gain.abs().ln() + zpk.zeros.iter().map(|z| (s - z).norm_sqr().ln()).sum::<f64>()
            - zpk.poles.iter().map(|p| (s - p).norm_sqr().ln()).sum::<f64>();
        log_gain_sq >= log_target
    };
    let (mut low, mut high) = (0.0, 1.0);
    let mut doublings = 0;
    while above(high) && doublings < 1100 {
        low = high;
        high *= 2.0;
        doublings += 1;
    }
    for _ in 0..200 {
        let middle = 0.5 * (low + high);
        if middle <= low || middle >= high {
            break;
        }
        if above(middle) {
            low = middle;
        } else {
            high = middle;
        }
    }
    0.5 * (low + high)
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde::Deserialize;

    #[derive(Deserialize)]
    struct ScipyData {
        versions: Versions,
        prototypes: Vec<ScipyPrototype>,
    }

    #[derive(Deserialize)]
    struct Versions {
        scipy: String,
        numpy: String,
    }

    #[derive(Deserialize)]
    struct ScipyPrototype {
        kind: String,
        order: usize,
        ripple_db: Option<f64>,
        norm: Option<String>,
        poles: Vec<[f64; 2]>,
        gain: f64,
        response: ScipyResponse,
    }

    #[derive(Deserialize)]
    struct ScipyResponse {
        omega: Vec<f64>,
        h: Vec<[f64; 2]>,
    }

    fn scipy_data() -> ScipyData {
        serde_json::from_str(include_str!("testdata/scipy_poles.json")).expect("scipy_poles.json parses")
    }

    fn complex(pair: &[f64; 2]) -> Complex64 {
        Complex64::new(pair[0], pair[1])
    }

    /// The largest |ours − theirs|/|theirs| after matching each reference value to its nearest unused
    /// value of ours (the two lists come in different orders; the poles are far apart compared with
    /// the tolerances, so the matching is unambiguous).
    fn worst_matched_error(ours: &[Complex64], theirs: &[Complex64]) -> f64 {
        assert_eq!(ours.len(), theirs.len(), "different counts: {ours:?} vs {theirs:?}");
        let mut unused: Vec<Complex64> = ours.to_vec();
        let mut worst: f64 = 0.0;
        for reference in theirs {
            let idx = (0..unused.len())
                .min_by(|&a, &b| (unused[a] - reference).norm().total_cmp(&(unused[b] - reference).norm()))
                .unwrap();
            let value = unused.swap_remove(idx);
            let error = (value - reference).norm();
            worst = worst.max(if reference.norm() == 0.0 { error } else { error / reference.norm() });
        }
        worst
    }

    fn alignment_of(case: &ScipyPrototype) -> Alignment {
        match case.kind.as_str() {
            "butterworth" => Alignment::Butterworth,
            "chebyshev" => Alignment::Chebyshev { ripple_db: case.ripple_db.unwrap() },
            "bessel" => Alignment::Bessel {
                normalization: match case.norm.as_deref() {
                    Some("mag") => BesselNormalization::Magnitude,
                    Some("delay") => BesselNormalization::Delay,
                    Some("phase") => BesselNormalization::Phase,
                    other => panic!("unknown norm {other:?}"),
                },
            },
            other => panic!("unknown kind {other}"),
        }
    }

    // Source: scipy.signal buttap / cheb1ap / besselap (SciPy 1.17.1, NumPy 2.4.6), generated by
    // tests/reference/gen_scipy_poles.py. Tolerance 1e-9 relative for poles and gain (brief), 1e-10 for
    // Bessel poles: both sides are double-precision roots of the same well-conditioned polynomials.
    #[test]
    fn poles_and_gains_match_scipy() {
        let data = scipy_data();
        assert_eq!((data.versions.scipy.as_str(), data.versions.numpy.as_str()), ("1.17.1", "2.4.6"));
        assert_eq!(data.prototypes.len(), 48);
        let (mut worst_pole, mut worst_bessel_pole, mut worst_gain, mut worst_response) = (0f64, 0f64, 0f64, 0f64);
        let mut worst_gain_case = String::new();
        for case in &data.prototypes {
            let ours = lowpass_prototype(alignment_of(case), case.order).unwrap();
            let theirs: Vec<Complex64> = case.poles.iter().map(complex).collect();
            let pole_error = worst_matched_error(&ours.poles, &theirs);
            let gain_error = (ours.gain - case.gain).abs() / case.gain.abs();
            let label = format!("{} n={} rp={:?} norm={:?}", case.kind, case.order, case.ripple_db, case.norm);
            let pole_tolerance = if case.kind == "bessel" { 1e-10 } else { 1e-9 };
            assert!(pole_error < pole_tolerance, "{label}: pole error {pole_error:e}");
            assert!(gain_error < 1e-9, "{label}: gain {} vs scipy {} ({gain_error:e})", ours.gain, case.gain);
            assert!(ours.zeros.is_empty());
            for (omega, h) in case.response.omega.iter().zip(&case.response.h) {
                let reference = complex(h);
                let error = (ours.eval(Complex64::new(0.0, *omega)) - reference).norm() / reference.norm();
                assert!(error < 1e-9, "{label}: H(j{omega}) error {error:e}");
                worst_response = worst_response.max(error);
            }
            if case.kind == "bessel" {
                worst_bessel_pole = worst_bessel_pole.max(pole_error);
            } else {
                worst_pole = worst_pole.max(pole_error);
            }
            if gain_error > worst_gain {
                worst_gain_case = label;
            }
            worst_gain = worst_gain.max(gain_error);
        }
        println!(
            "worst vs scipy: poles {worst_pole:.2e} (Bessel {worst_bessel_pole:.2e}), gain {worst_gain:.2e} \
             ({worst_gain_case}), H(jω) {worst_response:.2e}"
        );
    }

    #[test]
    fn poles_are_conjugate_symmetric_and_ordered() {
        let alignments = [
            Alignment::Butterworth,
            Alignment::Chebyshev { ripple_db: 1.0 },
            Alignment::Bessel { normalization: BesselNormalization::Magnitude },
        ];
        for alignment in alignments {
            for order in 1..=MAX_ORDER {
                let poles = lowpass_prototype(alignment, order).unwrap().poles;
                for (p, mirror) in poles.iter().zip(poles.iter().rev()) {
                    assert_eq!(*p, mirror.conj(), "{alignment:?} {order}");
                }
                assert!(poles.windows(2).all(|w| w[0].im >= w[1].im), "{alignment:?} {order}");
                assert!(
                    poles.iter().all(|p| p.re < 0.0),
                    "{alignment:?} {order}: a pole is not in the left half-plane"
                );
                assert_eq!(poles.iter().filter(|p| p.im == 0.0).count(), order % 2);
            }
        }
    }

    // Source: references.md §3.2 (reverse Bessel polynomial coefficients, computed from scipy besselap
    // norm='delay'); n = 8 from the same formula (common practice), exact integers.
    #[test]
    fn reverse_bessel_coefficients_match_the_listed_polynomials() {
        let listed: [&[f64]; 7] = [
            &[1.0, 3.0, 3.0],
            &[1.0, 6.0, 15.0, 15.0],
            &[1.0, 10.0, 45.0, 105.0, 105.0],
            &[1.0, 15.0, 105.0, 420.0, 945.0, 945.0],
            &[1.0, 21.0, 210.0, 1260.0, 4725.0, 10395.0, 10395.0],
            &[1.0, 28.0, 378.0, 3150.0, 17325.0, 62370.0, 135135.0, 135135.0],
            &[1.0, 36.0, 630.0, 6930.0, 51975.0, 270270.0, 945945.0, 2027025.0, 2027025.0],
        ];
        for (idx, highest_first) in listed.iter().enumerate() {
            let mut ours = reverse_bessel_coefficients(idx + 2);
            ours.reverse();
            assert_eq!(&ours[..], *highest_first, "n = {}", idx + 2);
        }
    }

    #[test]
    fn bessel_roots_are_roots() {
        // Residual test of the root finder, independent of scipy: |θ(p)| relative to Σ|a_k||p|^k, the
        // size of the rounding in evaluating θ there. 1e-13 leaves a margin over that rounding scale.
        for order in 1..=MAX_ORDER {
            let coefficients = reverse_bessel_coefficients(order);
            let zpk =
                lowpass_prototype(Alignment::Bessel { normalization: BesselNormalization::Delay }, order).unwrap();
            for p in &zpk.poles {
                let scale: f64 = coefficients.iter().enumerate().map(|(k, c)| c * p.norm().powi(k as i32)).sum();
                let residual = horner(&coefficients, *p).0.norm() / scale;
                assert!(residual < 1e-13, "n = {order}, p = {p}: residual {residual:e}");
            }
        }
    }

    #[test]
    fn root_finder_handles_other_polynomials() {
        // (s − 1)(s + 2)(s² + 2s + 5) = s⁴ + 3s³ + 5s² + s − 10 has roots 1, −2, −1 ± 2j.
        let roots = clean_conjugates(polynomial_roots(&[-10.0, 1.0, 5.0, 3.0, 1.0]));
        let expected = [
            Complex64::new(-1.0, 2.0),
            Complex64::new(1.0, 0.0),
            Complex64::new(-2.0, 0.0),
            Complex64::new(-1.0, -2.0),
        ];
        assert!(worst_matched_error(&roots, &expected) < 1e-13, "{roots:?}");
    }

    /// Checks the sections of a prototype against a table, to `tolerance` absolute.
    fn check_sections(alignment: Alignment, order: usize, expected: &[Section], tolerance: f64) {
        let sections = lowpass_prototype(alignment, order).unwrap().sections();
        assert_eq!(sections.len(), expected.len(), "{alignment:?} n = {order}: {sections:?}");
        for (ours, table) in sections.iter().zip(expected) {
            let close = match (ours, table) {
                (Section::FirstOrder { omega: a }, Section::FirstOrder { omega: b }) => (a - b).abs() <= tolerance,
                (Section::SecondOrder { omega0: a, q: qa }, Section::SecondOrder { omega0: b, q: qb }) => {
                    (a - b).abs() <= tolerance && (qa - qb).abs() <= tolerance
                }
                _ => false,
            };
            assert!(close, "{alignment:?} n = {order}: {ours:?} vs table {table:?}");
        }
    }

    fn real(omega: f64) -> Section {
        Section::FirstOrder { omega }
    }

    fn pair(omega0: f64, q: f64) -> Section {
        Section::SecondOrder { omega0, q }
    }

    /// The tables print 4 decimals, so ±5e-5 absolute.
    const TABLE: f64 = 5e-5;

    // Source: references.md §3.1 (computed from scipy buttap and Q_k = 1/(2 sin((2k−1)π/2n))); TI,
    // Op Amps for Everyone 5th ed., Table 16.7 agrees to its 2 digits.
    #[test]
    #[allow(clippy::approx_constant)] // 0.7071 is the table's 4-decimal value, not 1/√2
    fn butterworth_sections_match_table() {
        let b = Alignment::Butterworth;
        check_sections(b, 1, &[real(1.0)], TABLE);
        check_sections(b, 2, &[pair(1.0, 0.7071)], TABLE);
        check_sections(b, 3, &[real(1.0), pair(1.0, 1.0)], TABLE);
        check_sections(b, 4, &[pair(1.0, 0.5412), pair(1.0, 1.3066)], TABLE);
        check_sections(b, 5, &[real(1.0), pair(1.0, 0.6180), pair(1.0, 1.6180)], TABLE);
        check_sections(b, 6, &[pair(1.0, 0.5176), pair(1.0, 0.7071), pair(1.0, 1.9319)], TABLE);
        check_sections(b, 7, &[real(1.0), pair(1.0, 0.5550), pair(1.0, 0.8019), pair(1.0, 2.2470)], TABLE);
        check_sections(b, 8, &[pair(1.0, 0.5098), pair(1.0, 0.6013), pair(1.0, 0.9000), pair(1.0, 2.5629)], TABLE);
    }

    const MAG: Alignment = Alignment::Bessel { normalization: BesselNormalization::Magnitude };
    const PHASE: Alignment = Alignment::Bessel { normalization: BesselNormalization::Phase };
    const DELAY: Alignment = Alignment::Bessel { normalization: BesselNormalization::Delay };

    // Source: references.md §3.2, norm='mag' column (computed from scipy besselap); TI Op Amps for
    // Everyone Table 16.6 agrees for n = 2 and 4.
    #[test]
    fn bessel_magnitude_sections_match_table() {
        check_sections(MAG, 2, &[pair(1.2720, 0.5774)], TABLE);
        check_sections(MAG, 3, &[real(1.3227), pair(1.4476, 0.6910)], TABLE);
        check_sections(MAG, 4, &[pair(1.4302, 0.5219), pair(1.6034, 0.8055)], TABLE);
        check_sections(MAG, 5, &[real(1.5023), pair(1.5563, 0.5635), pair(1.7554, 0.9165)], TABLE);
        check_sections(MAG, 6, &[pair(1.6039, 0.5103), pair(1.6892, 0.6112), pair(1.9047, 1.0233)], TABLE);
        check_sections(
            MAG,
            7,
            &[real(1.6844), pair(1.7164, 0.5324), pair(1.8224, 0.6608), pair(2.0495, 1.1263)],
            TABLE,
        );
        check_sections(
            MAG,
            8,
            &[pair(1.7785, 0.5060), pair(1.8321, 0.5596), pair(1.9532, 0.7109), pair(2.1887, 1.2257)],
            TABLE,
        );
    }

    // Source: references.md §3.2, norm='phase' column (computed from scipy besselap).
    #[test]
    fn bessel_phase_sections_match_table() {
        check_sections(PHASE, 2, &[pair(1.0000, 0.5774)], TABLE);
        check_sections(PHASE, 3, &[real(0.9416), pair(1.0305, 0.6910)], TABLE);
        check_sections(PHASE, 4, &[pair(0.9444, 0.5219), pair(1.0588, 0.8055)], TABLE);
        check_sections(PHASE, 5, &[real(0.9264), pair(0.9598, 0.5635), pair(1.0825, 0.9165)], TABLE);
        check_sections(PHASE, 6, &[pair(0.9282, 0.5103), pair(0.9775, 0.6112), pair(1.1022, 1.0233)], TABLE);
        check_sections(
            PHASE,
            7,
            &[real(0.9195), pair(0.9369, 0.5324), pair(0.9948, 0.6608), pair(1.1188, 1.1263)],
            TABLE,
        );
        check_sections(
            PHASE,
            8,
            &[pair(0.9206, 0.5060), pair(0.9483, 0.5596), pair(1.0110, 0.7109), pair(1.1329, 1.2257)],
            TABLE,
        );
    }

    // Source: references.md §3.2, norm='delay' column (computed from scipy besselap).
    #[test]
    fn bessel_delay_sections_match_table() {
        check_sections(DELAY, 2, &[pair(1.7321, 0.5774)], TABLE);
        check_sections(DELAY, 3, &[real(2.3222), pair(2.5415, 0.6910)], TABLE);
        check_sections(DELAY, 4, &[pair(3.0233, 0.5219), pair(3.3894, 0.8055)], TABLE);
        check_sections(DELAY, 5, &[real(3.6467), pair(3.7779, 0.5635), pair(4.2610, 0.9165)], TABLE);
        check_sections(DELAY, 6, &[pair(4.3360, 0.5103), pair(4.5665, 0.6112), pair(5.1492, 1.0233)], TABLE);
        check_sections(
            DELAY,
            7,
            &[real(4.9718), pair(5.0662, 0.5324), pair(5.3793, 0.6608), pair(6.0495, 1.1263)],
            TABLE,
        );
        check_sections(
            DELAY,
            8,
            &[pair(5.6548, 0.5060), pair(5.8254, 0.5596), pair(6.2104, 0.7109), pair(6.9593, 1.2257)],
            TABLE,
        );
    }

    // Source: references.md §3.3, 0.5 dB column (computed from scipy cheb1ap).
    #[test]
    fn chebyshev_half_db_sections_match_table() {
        let c = Alignment::Chebyshev { ripple_db: 0.5 };
        check_sections(c, 1, &[real(2.8628)], TABLE);
        check_sections(c, 2, &[pair(1.2313, 0.8637)], TABLE);
        check_sections(c, 3, &[real(0.6265), pair(1.0689, 1.7062)], TABLE);
        check_sections(c, 4, &[pair(0.5970, 0.7051), pair(1.0313, 2.9406)], TABLE);
        check_sections(c, 5, &[real(0.3623), pair(0.6905, 1.1778), pair(1.0177, 4.5450)], TABLE);
        check_sections(c, 6, &[pair(0.3962, 0.6836), pair(0.7681, 1.8104), pair(1.0114, 6.5128)], TABLE);
        check_sections(c, 7, &[real(0.2562), pair(0.5039, 1.0916), pair(0.8227, 2.5755), pair(1.0080, 8.8418)], TABLE);
    }

    // Source: references.md §3.3, 1 dB column (computed from scipy cheb1ap).
    #[test]
    fn chebyshev_one_db_sections_match_table() {
        let c = Alignment::Chebyshev { ripple_db: 1.0 };
        check_sections(c, 1, &[real(1.9652)], TABLE);
        check_sections(c, 2, &[pair(1.0500, 0.9565)], TABLE);
        check_sections(c, 3, &[real(0.4942), pair(0.9971, 2.0177)], TABLE);
        check_sections(c, 4, &[pair(0.5286, 0.7845), pair(0.9932, 3.5590)], TABLE);
        check_sections(c, 5, &[real(0.2895), pair(0.6552, 1.3988), pair(0.9941, 5.5564)], TABLE);
        check_sections(c, 6, &[pair(0.3531, 0.7609), pair(0.7468, 2.1980), pair(0.9954, 8.0037)], TABLE);
        check_sections(c, 7, &[real(0.2054), pair(0.4801, 1.2969), pair(0.8084, 3.1559), pair(0.9963, 10.8987)], TABLE);
    }

    // Source: references.md §3.3, ω3dB columns ("3.0103 dB below the passband peak"; formula
    // cosh(acosh(1/ε)/n) and root finding agree there). Tolerance 5e-5: 4-decimal table.
    #[test]
    fn chebyshev_3db_frequencies_match_table() {
        let table: [(f64, [f64; 7]); 2] = [
            (0.5, [2.8628, 1.3897, 1.1675, 1.0931, 1.0593, 1.0410, 1.0301]),
            (1.0, [1.9652, 1.2176, 1.0949, 1.0530, 1.0338, 1.0234, 1.0172]),
        ];
        for (ripple_db, omegas) in table {
            for (idx, expected) in omegas.iter().enumerate() {
                let zpk = lowpass_prototype(Alignment::Chebyshev { ripple_db }, idx + 1).unwrap();
                let omega = omega_at_gain_sq(&zpk, 0.5);
                assert!((omega - expected).abs() <= TABLE, "{ripple_db} dB n = {}: {omega}", idx + 1);
            }
        }
    }

    fn gain_db(zpk: &Zpk, omega: f64) -> f64 {
        20.0 * zpk.eval(Complex64::new(0.0, omega)).norm().log10()
    }

    // Source: scipy.signal.cheb1ap docstring and references.md §3.3 ("even orders have DC gain −ripple
    // dB, odd 0 dB"); the ripple edge is at ω = 1. Exact in principle; 1e-12 dB allows rounding.
    #[test]
    fn chebyshev_gain_convention() {
        for ripple_db in [0.5, 1.0, 3.0] {
            for order in 1..=MAX_ORDER {
                let zpk = lowpass_prototype(Alignment::Chebyshev { ripple_db }, order).unwrap();
                let dc_expected = if order % 2 == 0 { -ripple_db } else { 0.0 };
                assert!((gain_db(&zpk, 0.0) - dc_expected).abs() < 1e-12, "{ripple_db} dB n = {order}");
                assert!((gain_db(&zpk, 1.0) + ripple_db).abs() < 1e-12, "{ripple_db} dB n = {order}");
            }
        }
        // cheb1ap(1, rp): the single pole is −1/ε (brief; the generated scipy data confirms 2.8628 for 0.5 dB).
        let epsilon = (10f64.powf(0.05) - 1.0).sqrt();
        let zpk = lowpass_prototype(Alignment::Chebyshev { ripple_db: 0.5 }, 1).unwrap();
        assert!((zpk.poles[0] + 1.0 / epsilon).norm() < 1e-14);
    }

    // Source: the definition of norm='mag' (scipy besselap docstring); −10·log10(2) = −3.0103 dB.
    // Tolerance 1e-9 dB (brief); the bisection resolves ω3dB to f64 precision.
    #[test]
    fn bessel_magnitude_is_minus_3db_at_one() {
        for order in 1..=MAX_ORDER {
            let zpk = lowpass_prototype(MAG, order).unwrap();
            let error = gain_db(&zpk, 1.0) + 10.0 * 2f64.log10();
            assert!(error.abs() < 1e-9, "n = {order}: {error:e}");
            assert!(gain_db(&zpk, 0.0).abs() < 1e-12, "n = {order}: DC gain not 0 dB");
        }
    }

    // Source: references.md §3.2, the −3.0103 dB frequencies of the 'phase' and 'delay' forms
    // (computed from scipy besselap). Tolerance 5e-5: 4-decimal list.
    #[test]
    fn bessel_3db_frequencies_match_table() {
        let phase = [0.7862, 0.7119, 0.6604, 0.6167, 0.5787, 0.5459, 0.5176];
        let delay = [1.3617, 1.7557, 2.1139, 2.4274, 2.7034, 2.9517, 3.1796];
        for (idx, (expected_phase, expected_delay)) in phase.iter().zip(delay).enumerate() {
            let order = idx + 2;
            let omega_phase = omega_at_gain_sq(&lowpass_prototype(PHASE, order).unwrap(), 0.5);
            let omega_delay = omega_at_gain_sq(&lowpass_prototype(DELAY, order).unwrap(), 0.5);
            assert!((omega_phase - expected_phase).abs() <= TABLE, "phase n = {order}: {omega_phase}");
            assert!((omega_delay - expected_delay).abs() <= TABLE, "delay n = {order}: {omega_delay}");
        }
    }

    // Source: scipy besselap docstring and source: 'delay' has group delay 1 s at DC, 'phase' has
    // Π|p| = 1 (the Butterworth asymptote). For an all-pole H, τ(ω) = Σ_p −Re p/((Re p)² + (ω − Im p)²)
    // (references.md §7), so τ(0) = Σ_p −Re p/|p|². Exact in principle; 1e-12 allows rounding.
    #[test]
    fn bessel_delay_and_phase_normalisations() {
        for order in 1..=MAX_ORDER {
            let delay = lowpass_prototype(DELAY, order).unwrap();
            let tau0: f64 = delay.poles.iter().map(|p| -p.re / p.norm_sqr()).sum();
            assert!((tau0 - 1.0).abs() < 1e-12, "n = {order}: τ(0) = {tau0}");
            let phase = lowpass_prototype(PHASE, order).unwrap();
            let modulus: f64 = phase.poles.iter().map(|p| p.norm()).product();
            assert!((modulus - 1.0).abs() < 1e-12, "n = {order}: Π|p| = {modulus}");
        }
    }

    // Source: scipy besselap docstring ("phase response reaches its midpoint at … 1"). That holds
    // exactly only for n = 1, 2; for n ≥ 3 scipy's own poles (in the generated data) give the
    // same shortfall as ours, which the pole comparison pins down. Here: exact at n ≤ 2 (1e-12), and
    // for n ≥ 3 our phase at ω = 1 equals scipy's freqs_zpk phase there to 1e-9.
    #[test]
    fn bessel_phase_at_one() {
        let data = scipy_data();
        for order in 1..=MAX_ORDER {
            let zpk = lowpass_prototype(PHASE, order).unwrap();
            let phase: f64 = zpk.poles.iter().map(|p| -(Complex64::new(0.0, 1.0) - p).arg()).sum();
            let midpoint = -(order as f64) * std::f64::consts::FRAC_PI_4;
            if order <= 2 {
                assert!((phase - midpoint).abs() < 1e-12, "n = {order}: {phase}");
            } else {
                assert!(phase > midpoint, "n = {order}: {phase} vs {midpoint}");
            }
            let case = data
                .prototypes
                .iter()
                .find(|c| c.kind == "bessel" && c.order == order && c.norm.as_deref() == Some("phase"))
                .unwrap();
            let at_one = case.response.omega.iter().position(|&w| w == 1.0).unwrap();
            let scipy_h = complex(&case.response.h[at_one]);
            let ours_h = zpk.eval(Complex64::new(0.0, 1.0));
            assert!((ours_h / scipy_h).arg().abs() < 1e-9, "n = {order}");
        }
    }

    // Source: references.md §3.4 (LR2 = (1st-order Butterworth)², one Q = 0.5 section at ω0 = 1;
    // LR4 two Q = 0.7071 sections; LR8 Q 0.5412, 0.5412, 1.3066, 1.3066). Tolerance 5e-5: 4 decimals.
    #[test]
    #[allow(clippy::approx_constant)] // 0.7071 is the table's 4-decimal value, not 1/√2
    fn linkwitz_riley_sections_match_table() {
        let lr = Alignment::LinkwitzRiley;
        check_sections(lr, 2, &[real(1.0), real(1.0)], TABLE);
        // The double real pole as one section: ω0 = √(ω1ω2), Q = ω0/(ω1 + ω2).
        let sections = lowpass_prototype(lr, 2).unwrap().sections();
        let [Section::FirstOrder { omega: w1 }, Section::FirstOrder { omega: w2 }] = sections[..] else { panic!() };
        assert!(((w1 * w2).sqrt() / (w1 + w2) - 0.5).abs() <= TABLE);
        check_sections(lr, 4, &[pair(1.0, 0.7071), pair(1.0, 0.7071)], TABLE);
        check_sections(lr, 6, &[real(1.0), real(1.0), pair(1.0, 1.0), pair(1.0, 1.0)], TABLE);
        check_sections(lr, 8, &[pair(1.0, 0.5412), pair(1.0, 0.5412), pair(1.0, 1.3066), pair(1.0, 1.3066)], TABLE);
    }

    // Source: references.md §3.4, LR4 denominator s⁴ + 2.828427s³ + 4s² + 2.828427s + 1 and −6.0206 dB at ωc.
    #[test]
    fn linkwitz_riley_4_polynomial_and_gain() {
        let zpk = lowpass_prototype(Alignment::LinkwitzRiley, 4).unwrap();
        for omega in [0.1, 0.7, 1.0, 3.0] {
            let s = Complex64::new(0.0, omega);
            let denominator = s.powi(4) + 2.828427 * s.powi(3) + 4.0 * s * s + 2.828427 * s + 1.0;
            // 2.828427 is printed to 7 digits: relative 2e-7 of the s³ and s terms.
            assert!((zpk.eval(s) * denominator - 1.0).norm() < 1e-6, "ω = {omega}");
        }
        assert!((gain_db(&zpk, 1.0) + 6.0206).abs() <= TABLE);
    }

    // Source: the definition s² + s/q + 1 (common practice); Q = |p|/(2|Re p|) by references.md notation.
    #[test]
    #[allow(clippy::approx_constant)] // 0.7071 is the table's 4-decimal value, not 1/√2
    fn quality_sections_round_trip() {
        for q in [0.1, 0.5, 0.5773, 0.7071, 2.0, 25.0] {
            let zpk = lowpass_prototype(Alignment::Quality { q }, 2).unwrap();
            let s = Complex64::new(0.3, 0.8);
            let expected = 1.0 / (s * s + s / q + 1.0);
            assert!((zpk.eval(s) - expected).norm() < 1e-14 * expected.norm(), "q = {q}");
            let sections = zpk.sections();
            if q > 0.5 {
                let [Section::SecondOrder { omega0, q: found }] = sections[..] else { panic!("{sections:?}") };
                assert!((omega0 - 1.0).abs() < 1e-14 && (found - q).abs() < 1e-13 * q, "q = {q}");
            } else {
                assert!(sections.iter().all(|s| matches!(s, Section::FirstOrder { .. })), "q = {q}");
            }
        }
    }

    #[test]
    fn derivative_matches_difference_and_is_finite_at_zeros() {
        let zpk = Zpk {
            zeros: vec![Complex64::new(0.0, 2.0), Complex64::new(0.0, -2.0), Complex64::new(-0.5, 0.0)],
            poles: lowpass_prototype(Alignment::Chebyshev { ripple_db: 1.0 }, 5).unwrap().poles,
            gain: 0.7,
        };
        // Central difference with step h: truncation ~h²·|H'''|, rounding ~eps/h; h = 1e-5 gives ~1e-10.
        let h = 1e-5;
        for s in [Complex64::new(0.0, 0.4), Complex64::new(0.1, 1.1), Complex64::new(-0.2, 3.0)] {
            let difference = (zpk.eval(s + h) - zpk.eval(s - h)) / (2.0 * h);
            let exact = zpk.eval_derivative(s);
            assert!((difference - exact).norm() < 1e-8 * exact.norm().max(1.0), "s = {s}");
        }
        // At a simple zero z0: dH/ds = gain·Π_{z≠z0}(z0 − z)/Π(z0 − p).
        let s = Complex64::new(0.0, 2.0);
        let others = zpk.zeros.iter().skip(1).map(|z| s - z).product::<Complex64>();
        let expected = 0.7 * others / zpk.poles.iter().map(|p| s - p).product::<Complex64>();
        assert!((zpk.eval_derivative(s) - expected).norm() < 1e-13 * expected.norm());
    }

    #[test]
    fn sections_sort_real_first_then_by_q() {
        let zpk = Zpk {
            zeros: Vec::new(),
            poles: vec![
                Complex64::new(-0.1, 1.0),
                Complex64::new(-2.0, 0.0),
                Complex64::new(-1.0, 1.0),
                Complex64::new(-0.5, 0.0),
                Complex64::new(-1.0, -1.0),
                Complex64::new(-0.1, -1.0),
            ],
            gain: 1.0,
        };
        let sections = zpk.sections();
        assert!(matches!(sections[0], Section::FirstOrder { omega } if omega == 0.5));
        assert!(matches!(sections[1], Section::FirstOrder { omega } if omega == 2.0));
        assert!(matches!(sections[2], Section::SecondOrder { q, .. } if (q - 2f64.sqrt() / 2.0).abs() < 1e-15));
        assert!(matches!(sections[3], Section::SecondOrder { q, .. } if q > 5.0));
        assert_eq!(sections.len(), 4);
    }

    fn bad_order_of(alignment: Alignment, order: usize) -> (usize, usize, usize, String) {
        match lowpass_prototype(alignment, order) {
            Err(error @ SynthesisError::BadOrder { order, min, max, .. }) => (order, min, max, error.to_string()),
            other => panic!("{alignment:?} order {order}: expected BadOrder, got {other:?}"),
        }
    }

    #[test]
    fn orders_out_of_range_are_rejected() {
        for alignment in
            [Alignment::Butterworth, Alignment::Chebyshev { ripple_db: 1.0 }, MAG, Alignment::LinkwitzRiley]
        {
            let (order, _, max, message) = bad_order_of(alignment, 0);
            assert_eq!((order, max), (0, 8));
            assert!(message.contains("at least one pole"), "{message}");
            let (order, min, max, message) = bad_order_of(alignment, 9);
            assert_eq!((order, max), (9, 8));
            assert!(message.contains("order 9") && message.contains(&format!("from {min} to 8")), "{message}");
            assert_eq!(min, if alignment == Alignment::LinkwitzRiley { 2 } else { 1 });
        }
        for order in [0, 1, 9] {
            let (_, min, max, message) = bad_order_of(Alignment::Quality { q: 0.7 }, order);
            assert_eq!((min, max), (2, 2));
            assert!(message.contains("second order"), "{message}");
        }
    }

    #[test]
    fn odd_linkwitz_riley_is_rejected() {
        for order in [1, 3, 5, 7] {
            let (found, min, max, message) = bad_order_of(Alignment::LinkwitzRiley, order);
            assert_eq!((found, min, max), (order, 2, 8));
            assert!(message.contains("Linkwitz-Riley needs an even order"), "{message}");
        }
    }

    #[test]
    fn quality_needs_order_two_and_a_usable_q() {
        let (_, min, max, message) = bad_order_of(Alignment::Quality { q: 0.7 }, 3);
        assert_eq!((min, max), (2, 2));
        assert!(message.contains("second order"), "{message}");
        for q in [0.0, -1.0, f64::NAN, f64::INFINITY, 1e-320] {
            match lowpass_prototype(Alignment::Quality { q }, 2) {
                Err(SynthesisError::BadQ { q: found }) => assert!(found.to_bits() == q.to_bits()),
                other => panic!("q = {q}: expected BadQ, got {other:?}"),
            }
        }
    }

    #[test]
    fn bad_ripple_is_rejected() {
        for ripple_db in [0.0, -0.5, 10.5, f64::NAN, f64::INFINITY] {
            match lowpass_prototype(Alignment::Chebyshev { ripple_db }, 4) {
                Err(error @ SynthesisError::BadRipple { .. }) => {
                    assert!(error.to_string().contains("at most 10 dB"), "{error}");
                }
                other => panic!("ripple {ripple_db}: expected BadRipple, got {other:?}"),
            }
        }
        assert!(lowpass_prototype(Alignment::Chebyshev { ripple_db: 10.0 }, 4).is_ok());
    }
}
