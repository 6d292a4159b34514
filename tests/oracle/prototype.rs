//! Normalised low-pass prototype element values (g-values) and the doubly terminated ladders
//! built from them.
//!
//! Conventions (references.md §2; Matthaei, Young & Jones, *Microwave Filters,
//! Impedance-Matching Networks and Coupling Structures*, §4.04–4.05, section numbers from
//! memory): source g0 = 1 Ω, cutoff ω = 1 rad/s; the ladder alternates series L and shunt C; the
//! "series-L first" and "shunt-C first" forms use the same numbers. g(n+1) is the load: a
//! resistance if g_n is a shunt C, a conductance if g_n is a series L.
//!
//! The functions return g_1 … g_n followed by g(n+1), so a result has n + 1 entries.

use crate::abcd::{Ladder, Part, Section};
use bandwright::{Circuit, Probe};
use std::f64::consts::{LN_10, PI};

/// Which element of the ladder sits next to the source.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Form {
    /// g_1 is a series inductor; the shunt capacitors follow.
    SeriesFirst,
    /// g_1 is a shunt capacitor; the series inductors follow.
    ShuntFirst,
}

/// Butterworth g-values of order `n`: g_k = 2·sin((2k−1)π/(2n)) for k = 1…n, and g(n+1) = 1.
///
/// Source: references.md §2.1 (the same numbers as the RF Cafe Butterworth table); the formula is
/// common practice.
///
/// # Panics
/// If `n` is 0.
pub fn butterworth(n: usize) -> Vec<f64> {
    assert!(n >= 1, "a prototype has at least one element");
    let mut g: Vec<f64> = (1..=n).map(|k| 2.0 * ((2 * k - 1) as f64 * PI / (2 * n) as f64).sin()).collect();
    g.push(1.0);
    g
}

/// Chebyshev (type I, ripple-edge normalised: |H| = −ripple dB at ω = 1) g-values of order `n`
/// for a pass-band ripple of `ripple_db` dB.
///
/// The recursion exactly as references.md §2.2 writes it (the MYJ recursion; formula reference
/// from memory there):
/// β = ln coth(L_r/17.3718) with 17.3718 = 40/ln 10; γ = sinh(β/2n); a_k = sin((2k−1)π/2n);
/// b_k = γ² + sin²(kπ/n); g1 = 2a1/γ; g_k = 4·a_(k−1)·a_k/(b_(k−1)·g_(k−1));
/// g(n+1) = 1 for odd n, coth²(β/4) for even n.
///
/// # Panics
/// If `n` is 0 or the ripple is not finite and > 0.
pub fn chebyshev(n: usize, ripple_db: f64) -> Vec<f64> {
    assert!(n >= 1, "a prototype has at least one element");
    assert!(ripple_db.is_finite() && ripple_db > 0.0, "the ripple must be > 0 dB");
    let coth = |x: f64| 1.0 / x.tanh();
    let beta = coth(ripple_db / (40.0 / LN_10)).ln();
    let gamma = (beta / (2 * n) as f64).sinh();
    let a = |k: usize| ((2 * k - 1) as f64 * PI / (2 * n) as f64).sin();
    let b = |k: usize| gamma * gamma + (k as f64 * PI / n as f64).sin().powi(2);
    let mut g = vec![2.0 * a(1) / gamma];
    for k in 2..=n {
        let previous = g[k - 2];
        g.push(4.0 * a(k - 1) * a(k) / (b(k - 1) * previous));
    }
    g.push(if n % 2 == 1 { 1.0 } else { coth(beta / 4.0).powi(2) });
    g
}

/// The pass-band ripple factor ε = sqrt(10^(r/10) − 1) of a `ripple_db` dB Chebyshev response.
///
/// Source: common practice (|H|² = 1/(1 + ε²·T_n(ω)²) is −r dB where T_n = 1).
pub fn ripple_factor(ripple_db: f64) -> f64 {
    (10f64.powf(ripple_db / 10.0) - 1.0).sqrt()
}

/// The Chebyshev polynomial T_n(x), by the recurrence T_0 = 1, T_1 = x,
/// T_(k+1) = 2x·T_k − T_(k−1) (common practice).
pub fn chebyshev_polynomial(n: usize, x: f64) -> f64 {
    let (mut previous, mut current) = (1.0, x);
    if n == 0 {
        return previous;
    }
    for _ in 1..n {
        let next = 2.0 * x * current - previous;
        previous = current;
        current = next;
    }
    current
}

/// Denormalises the prototype `g` (g_1 … g_n, g(n+1)) into a doubly terminated ladder at impedance
/// level `r0` (Ω) and cutoff `omega_c` (rad/s).
///
/// L = g·R0/ωc for series elements, C = g/(R0·ωc) for shunt elements, Rs = R0 (g0 = 1), and the
/// load follows the rule of references.md §2: R_L = g(n+1)·R0 when g_n is a shunt C (a
/// resistance), R_L = R0/g(n+1) when g_n is a series L (a conductance). So an even-order Chebyshev
/// ladder has R_L = g(n+1)·R0 in the series-first form and R0/g(n+1) in the shunt-first form.
///
/// # Panics
/// If `g` has fewer than two entries.
pub fn ladder(g: &[f64], form: Form, r0: f64, omega_c: f64) -> Ladder {
    assert!(g.len() >= 2, "give g_1 … g_n and g(n+1)");
    let n = g.len() - 1;
    let is_series = |k: usize| match form {
        Form::SeriesFirst => k % 2 == 1,
        Form::ShuntFirst => k % 2 == 0,
    };
    let sections = (1..=n)
        .map(|k| {
            if is_series(k) {
                Section::Series(Part::Inductor { inductance: g[k - 1] * r0 / omega_c, dcr: 0.0 })
            } else {
                Section::Shunt(Part::Capacitor { capacitance: g[k - 1] / (r0 * omega_c), esr: 0.0 })
            }
        })
        .collect();
    let load_resistance = if is_series(n) { r0 / g[n] } else { g[n] * r0 };
    Ladder { sections, source_resistance: r0, load_resistance }
}

/// The ladder of [`ladder`] as a core circuit and probe (see [`Ladder::to_circuit`]).
pub fn ladder_circuit(g: &[f64], form: Form, r0: f64, omega_c: f64) -> (Circuit, Probe) {
    ladder(g, form, r0, omega_c).to_circuit()
}

#[cfg(test)]
mod tests {
    use super::*;

    // Source: references.md §2.2, "1.9841 Ω for 0.5 dB" with L-first, 0.5040 Ω with C-first.
    #[test]
    fn even_chebyshev_load_depends_on_form() {
        let g = chebyshev(2, 0.5);
        assert!((ladder(&g, Form::SeriesFirst, 1.0, 1.0).load_resistance - 1.984056).abs() < 5e-7);
        assert!((ladder(&g, Form::ShuntFirst, 1.0, 1.0).load_resistance - 1.0 / 1.984056).abs() < 5e-7);
    }

    // Source: common practice, T_3(x) = 4x³ − 3x and T_n(cos θ) = cos nθ.
    #[test]
    fn chebyshev_polynomial_values() {
        assert!((chebyshev_polynomial(3, 0.3) - (4.0 * 0.027 - 0.9)).abs() < 1e-15);
        assert!((chebyshev_polynomial(7, 0.4f64.cos()) - (2.8f64).cos()).abs() < 1e-13);
    }
}
