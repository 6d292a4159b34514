//! n-stage passive RC ladders: the loaded ladder's transfer function, and capacitor values that
//! realise a target with all stage interactions accounted for.
//!
//! # The ladder
//! Stage k (k = 1 is next to the source) is a series element and a shunt element:
//! - **low-pass**: series R_k, shunt C_k; the source resistance R_s adds to R_1, and the load
//!   (R_L, C_L) hangs across C_n;
//! - **high-pass**: series C_k, shunt R_k; R_s is in series with C_1, and R_L is in parallel with
//!   R_n.
//!
//! # The transfer function
//! The cascade of ABCD (chain) matrices of the source resistance, the stages and the load
//! admittance gives H = V_out/E = 1/A with A the top-left entry (output open after the load).
//! For the high-pass each series-C matrix [[1, 1/(sC)], [0, 1]] is multiplied by sC to keep the
//! entries polynomial, so H = s^n·ΠC_k / A(s). Source: the chain-matrix cascade of two-port theory
//! (common practice; e.g. any network-analysis text's ABCD parameters, from memory); checked here
//! against the MNA engine.
//!
//! # Realising a target
//! An RC ladder's natural frequencies are real, negative and distinct (common practice: RC
//! driving-point functions have simple poles on the negative real axis), so:
//! - a target with **distinct real poles** is met exactly: with the resistors fixed, the n
//!   capacitors are solved from the n normalised denominator coefficients by Newton's method
//!   ([`exact_capacitors`]), when a solution exists for that resistor taper;
//! - a target with **coincident poles** (critically damped, Linkwitz-Riley order 2) has no exact
//!   RC ladder. [`equal_time_constant_capacitors`] gives every stage the same R·C (with R_s
//!   counted in stage 1), scaled so that the loaded ladder has the target's gain at the cutoff,
//!   and [`least_squares_capacitors`] moves the capacitors from there to the response closest to
//!   the target in the least-squares dB sense. A larger impedance taper between stages
//!   (R_{k+1}/R_k) brings it closer; the fitter measures how close.
//!
//! Targets with complex poles (Q > 0.5) cannot be realised by any passive RC network.

use crate::synthesis::ResponseType;
use num_complex::Complex64;

/// The most Levenberg–Marquardt iterations per ladder.
pub const LM_ITERATIONS: usize = 40;

/// The weight of the pinned frequency in [`least_squares_capacitors`].
pub const PIN_WEIGHT: f64 = 30.0;

/// The load across the ladder's output.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct RcLoad {
    /// Load resistance in Ω (`None` = open).
    pub resistance: Option<f64>,
    /// Load capacitance in F (low-pass only).
    pub capacitance: Option<f64>,
}

/// The ladder's denominator A(s), ascending coefficients (degree n); H = 1/A for the low-pass
/// and H = s^n·ΠC_k/A for the high-pass. `resistors` and `capacitors` are the stage values,
/// stage 1 next to the source.
///
/// # Panics
/// If the two slices differ in length.
pub fn denominator(
    response: ResponseType,
    source_resistance: f64,
    resistors: &[f64],
    capacitors: &[f64],
    load: RcLoad,
) -> Vec<f64> {
    assert_eq!(resistors.len(), capacitors.len(), "one resistor and one capacitor per stage");
    let g = load.resistance.map_or(0.0, |r| 1.0 / r);
    // The chain matrix as polynomials [A, B, C, D], built from the load end backwards so that
    // only A and C of the accumulated product are needed: [A; C] = M_k · [A; C].
    let mut a = vec![1.0];
    let mut c = match response {
        ResponseType::HighPass => vec![g],
        _ => vec![g, load.capacitance.unwrap_or(0.0)],
    };
    for (&r, &cap) in resistors.iter().zip(capacitors).rev() {
        match response {
            ResponseType::HighPass => {
                // Shunt R: [[1, 0], [1/R, 1]]; then series C scaled by sC: [[sC, 1], [0, sC]].
                c = add(&c, &scale(&a, 1.0 / r));
                let a_new = add(&mul(&a, &[0.0, cap]), &c);
                c = mul(&c, &[0.0, cap]);
                a = a_new;
            }
            _ => {
                // Shunt C: [[1, 0], [sC, 1]]; then series R: [[1, R], [0, 1]].
                c = add(&c, &mul(&a, &[0.0, cap]));
                a = add(&a, &scale(&c, r));
            }
        }
    }
    // The source resistance: [[1, R_s], [0, 1]].
    add(&a, &scale(&c, source_resistance))
}

/// H(jω) normalised to the passband gain: |H(jω)/H(0)| for the low-pass and |H(jω)/H(∞)| for
/// the high-pass, from the denominator of [`denominator`] (or a target's, same convention).
pub fn normalised_gain(response: ResponseType, denominator: &[f64], omega: f64) -> f64 {
    let s = Complex64::new(0.0, omega);
    let value = denominator.iter().rev().fold(Complex64::new(0.0, 0.0), |acc, &k| acc * s + k);
    let n = denominator.len() - 1;
    match response {
        ResponseType::HighPass => (denominator[n] * omega.powi(n as i32) / value.norm()).abs(),
        _ => (denominator[0] / value.norm()).abs(),
    }
}

/// The monic polynomial with real roots −ω_k, ascending (the target denominator of real poles).
pub fn real_pole_polynomial(pole_frequencies: &[f64]) -> Vec<f64> {
    pole_frequencies.iter().fold(vec![1.0], |p, &omega| mul(&p, &[omega, 1.0]))
}

/// Capacitors that give the ladder with these resistors exactly the target denominator (up to a
/// constant factor), or `None` if Newton's method finds none (coincident or too closely spaced
/// poles for this resistor taper). The result is checked: every normalised coefficient within
/// 1e-10 of the target's.
pub fn exact_capacitors(
    response: ResponseType,
    source_resistance: f64,
    resistors: &[f64],
    load: RcLoad,
    target: &[f64],
) -> Option<Vec<f64>> {
    let n = resistors.len();
    if n == 0 || target.len() != n + 1 || target.iter().any(|t| !(t.is_finite() && *t > 0.0)) {
        return None;
    }
    let residual = |log_c: &[f64]| -> Option<Vec<f64>> {
        let caps: Vec<f64> = log_c.iter().map(|x| x.exp()).collect();
        let d = denominator(response, source_resistance, resistors, &caps, load);
        let values: Vec<f64> = (0..n).map(|k| (d[k] / d[n]) / (target[k] / target[n]) - 1.0).collect();
        values.iter().all(|v| v.is_finite()).then_some(values)
    };
    let norm = |r: &[f64]| r.iter().map(|x| x * x).sum::<f64>();
    // Starting points: each stage given one target pole, fastest first and slowest first.
    let mut poles: Vec<f64> = crate::rc_ladder::pole_frequencies(target);
    if poles.len() != n {
        return None;
    }
    poles.sort_by(|a, b| a.total_cmp(b));
    for order in [true, false] {
        let mut assigned = poles.clone();
        if order {
            assigned.reverse();
        }
        let mut x: Vec<f64> = (0..n)
            .map(|k| {
                let r =
                    resistors[k] + if k == 0 && response != ResponseType::HighPass { source_resistance } else { 0.0 };
                (1.0 / (assigned[k] * r)).ln()
            })
            .collect();
        let Some(mut f) = residual(&x) else { continue };
        for _ in 0..200 {
            if f.iter().all(|v| v.abs() < 1e-13) {
                break;
            }
            // Forward-difference Jacobian in log C.
            let h = 1e-7;
            let mut jacobian = vec![vec![0.0; n]; n];
            let mut ok = true;
            for j in 0..n {
                let mut xh = x.clone();
                xh[j] += h;
                match residual(&xh) {
                    Some(fh) => (0..n).for_each(|i| jacobian[i][j] = (fh[i] - f[i]) / h),
                    None => ok = false,
                }
            }
            let Some(step) = ok.then(|| solve_linear(jacobian, f.iter().map(|v| -v).collect())).flatten() else {
                break;
            };
            // Backtracking: halve the step until the residual falls.
            let mut t = 1.0;
            let current = norm(&f);
            let mut improved = false;
            for _ in 0..40 {
                let trial: Vec<f64> = x.iter().zip(&step).map(|(xi, si)| xi + t * si.clamp(-3.0, 3.0)).collect();
                if let Some(ft) = residual(&trial) {
                    if norm(&ft) < current {
                        x = trial;
                        f = ft;
                        improved = true;
                        break;
                    }
                }
                t *= 0.5;
            }
            if !improved {
                break;
            }
        }
        if f.iter().all(|v| v.abs() < 1e-10) {
            return Some(x.iter().map(|v| v.exp()).collect());
        }
    }
    None
}

/// Capacitors giving every stage the same time constant (R_s counted in stage 1 of a low-pass),
/// scaled so that the normalised gain at `omega` equals `gain` (0 < gain < 1). `None` if no
/// scale reaches it.
pub fn equal_time_constant_capacitors(
    response: ResponseType,
    source_resistance: f64,
    resistors: &[f64],
    load: RcLoad,
    omega: f64,
    gain: f64,
) -> Option<Vec<f64>> {
    if !(gain > 0.0 && gain < 1.0 && omega.is_finite() && omega > 0.0) {
        return None;
    }
    let caps_for = |tau: f64| -> Vec<f64> {
        resistors
            .iter()
            .enumerate()
            .map(|(k, &r)| {
                let r = r + if k == 0 && response != ResponseType::HighPass { source_resistance } else { 0.0 };
                tau / r
            })
            .collect()
    };
    let gain_at = |tau: f64| {
        let d = denominator(response, source_resistance, resistors, &caps_for(tau), load);
        normalised_gain(response, &d, omega)
    };
    // Low-pass: the gain at ω falls as τ grows; high-pass: it rises. Bracket in log τ.
    let falls = response != ResponseType::HighPass;
    let (mut low, mut high) = ((1e-6 / omega).ln(), (1e6 / omega).ln());
    let too_far = |tau: f64| (gain_at(tau) < gain) == falls;
    if too_far(low.exp()) || !too_far(high.exp()) {
        return None;
    }
    for _ in 0..200 {
        let mid = 0.5 * (low + high);
        if too_far(mid.exp()) {
            high = mid;
        } else {
            low = mid;
        }
    }
    let caps = caps_for((0.5 * (low + high)).exp());
    caps.iter().all(|c| c.is_finite() && *c > 0.0).then_some(caps)
}

/// Capacitors whose passband-normalised response is closest to the target's in the
/// least-squares sense over `omegas`: Levenberg–Marquardt on the dB errors, in log C, starting
/// from `start`. Source: K. Levenberg (1944), D. W. Marquardt (1963), in the textbook form
/// (JᵀJ + λ·diag JᵀJ)·δ = −Jᵀe (from memory). `pinned` is a frequency (rad/s) whose error is
/// weighted [`PIN_WEIGHT`] times, to hold the cutoff. Returns the best point found; it equals an
/// exact solution when one exists near the start.
#[allow(clippy::too_many_arguments)]
pub fn least_squares_capacitors(
    response: ResponseType,
    source_resistance: f64,
    resistors: &[f64],
    load: RcLoad,
    target: &[f64],
    omegas: &[f64],
    pinned: Option<f64>,
    start: &[f64],
) -> Vec<f64> {
    let n = resistors.len();
    let points: Vec<(f64, f64)> = omegas.iter().map(|&w| (w, 1.0)).chain(pinned.map(|w| (w, PIN_WEIGHT))).collect();
    let target_db: Vec<f64> =
        points.iter().map(|&(w, _)| 20.0 * normalised_gain(response, target, w).log10()).collect();
    let errors = |log_c: &[f64]| -> Option<Vec<f64>> {
        let caps: Vec<f64> = log_c.iter().map(|x| x.exp()).collect();
        let d = denominator(response, source_resistance, resistors, &caps, load);
        let e: Vec<f64> = points
            .iter()
            .zip(&target_db)
            .map(|(&(w, weight), t)| weight * (20.0 * normalised_gain(response, &d, w).log10() - t))
            .collect();
        e.iter().all(|v| v.is_finite()).then_some(e)
    };
    let cost = |e: &[f64]| e.iter().map(|v| v * v).sum::<f64>();
    let mut x: Vec<f64> = start.iter().map(|c| c.ln()).collect();
    let Some(mut e) = errors(&x) else { return start.to_vec() };
    let mut lambda = 1e-3;
    for _ in 0..LM_ITERATIONS {
        let h = 1e-6;
        let mut jacobian = vec![vec![0.0; n]; e.len()];
        for j in 0..n {
            let mut xh = x.clone();
            xh[j] += h;
            let Some(eh) = errors(&xh) else { return x.iter().map(|v| v.exp()).collect() };
            for i in 0..e.len() {
                jacobian[i][j] = (eh[i] - e[i]) / h;
            }
        }
        let jtj: Vec<Vec<f64>> = (0..n)
            .map(|a| (0..n).map(|b| (0..e.len()).map(|i| jacobian[i][a] * jacobian[i][b]).sum()).collect())
            .collect();
        let jte: Vec<f64> = (0..n).map(|a| (0..e.len()).map(|i| jacobian[i][a] * e[i]).sum()).collect();
        let current = cost(&e);
        let mut improved = false;
        for _ in 0..12 {
            let mut m = jtj.clone();
            for (k, row) in m.iter_mut().enumerate() {
                row[k] += lambda * jtj[k][k].max(1e-12);
            }
            let Some(step) = solve_linear(m, jte.iter().map(|v| -v).collect()) else { break };
            let trial: Vec<f64> = x.iter().zip(&step).map(|(a, b)| a + b.clamp(-2.0, 2.0)).collect();
            match errors(&trial) {
                Some(et) if cost(&et) < current => {
                    x = trial;
                    e = et;
                    lambda = (lambda * 0.3).max(1e-12);
                    improved = true;
                    break;
                }
                _ => lambda *= 10.0,
            }
        }
        // Stop when a step gains less than a millionth: the dB errors then move by well under
        // 1e-3 dB, far below the rounding to standard values that follows.
        if !improved || current - cost(&e) <= 1e-6 * current {
            break;
        }
    }
    x.iter().map(|v| v.exp()).collect()
}

/// The pole frequencies ω_k (rad/s) of a denominator with real negative roots, or fewer than its
/// degree if some roots are complex.
pub fn pole_frequencies(denominator: &[f64]) -> Vec<f64> {
    let n = denominator.len() - 1;
    // Companion matrix eigenvalues through nalgebra (general real Schur).
    let monic: Vec<f64> = denominator.iter().map(|c| c / denominator[n]).collect();
    let mut companion = nalgebra::DMatrix::<f64>::zeros(n, n);
    for i in 1..n {
        companion[(i, i - 1)] = 1.0;
    }
    for i in 0..n {
        companion[(i, n - 1)] = -monic[i];
    }
    companion
        .complex_eigenvalues()
        .iter()
        .filter(|z| z.im.abs() <= 1e-9 * z.norm().max(1e-300) && z.re < 0.0)
        .map(|z| -z.re)
        .collect()
}

fn add(a: &[f64], b: &[f64]) -> Vec<f64> {
    (0..a.len().max(b.len())).map(|k| a.get(k).unwrap_or(&0.0) + b.get(k).unwrap_or(&0.0)).collect()
}

fn scale(a: &[f64], k: f64) -> Vec<f64> {
    a.iter().map(|x| x * k).collect()
}

fn mul(a: &[f64], b: &[f64]) -> Vec<f64> {
    let mut out = vec![0.0; a.len() + b.len() - 1];
    for (i, x) in a.iter().enumerate() {
        for (j, y) in b.iter().enumerate() {
            out[i + j] += x * y;
        }
    }
    out
}

/// Solves the small dense system m·x = b through nalgebra's LU with partial pivoting; `None`
/// if it is singular or the solution is not finite.
fn solve_linear(m: Vec<Vec<f64>>, b: Vec<f64>) -> Option<Vec<f64>> {
    let n = b.len();
    let matrix = nalgebra::DMatrix::from_fn(n, n, |i, j| m[i][j]);
    let x = matrix.lu().solve(&nalgebra::DVector::from_vec(b))?;
    x.iter().all(|v| v.is_finite()).then(|| x.iter().copied().collect())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::design::{Design, Load, Part, Source, FORMAT, VERSION};
    use crate::mna::{AcSystem, Detail};

    /// The ladder as a design, to check the polynomial against the MNA engine.
    fn design(response: ResponseType, rs: f64, r: &[f64], c: &[f64], load: RcLoad) -> Design {
        let node = |k: usize| if k == 0 { "in".to_string() } else { format!("n{k}") };
        let mut elements = Vec::new();
        for k in 0..r.len() {
            let (a, b) = (node(k), node(k + 1));
            let (series, shunt) = match response {
                ResponseType::HighPass => (
                    Part::Capacitor {
                        reference: format!("C{}", k + 1),
                        value: c[k],
                        nodes: [a, b.clone()],
                        series_resistance: None,
                    },
                    Part::Resistor { reference: format!("R{}", k + 1), value: r[k], nodes: [b, "0".into()] },
                ),
                _ => (
                    Part::Resistor { reference: format!("R{}", k + 1), value: r[k], nodes: [a, b.clone()] },
                    Part::Capacitor {
                        reference: format!("C{}", k + 1),
                        value: c[k],
                        nodes: [b, "0".into()],
                        series_resistance: None,
                    },
                ),
            };
            elements.push(series);
            elements.push(shunt);
        }
        let out = node(r.len());
        Design {
            format: FORMAT.into(),
            version: VERSION,
            name: "rc ladder".into(),
            note: String::new(),
            source: Source { node: "in".into(), resistance: rs, amplitude: 1.0 },
            load: (load.resistance.is_some() || load.capacitance.is_some()).then(|| Load {
                node: out.clone(),
                resistance: load.resistance,
                capacitance: load.capacitance,
            }),
            output: out,
            elements,
            tolerances: Default::default(),
        }
    }

    fn transfer(d: &Design, f_hz: f64) -> Complex64 {
        let (circuit, probe) = d.to_circuit().unwrap();
        AcSystem::new(&circuit, &probe).solve_at(f_hz, Detail::Transfer).unwrap().transfer
    }

    // Source: the MNA engine (an independent formulation of the same circuit).
    #[test]
    fn polynomial_matches_the_engine() {
        let r = [1e3, 4.7e3, 22e3];
        let c = [100e-9, 22e-9, 4.7e-9];
        for (response, load) in [
            (ResponseType::LowPass, RcLoad { resistance: Some(100e3), capacitance: Some(1e-9) }),
            (ResponseType::LowPass, RcLoad::default()),
            (ResponseType::HighPass, RcLoad { resistance: Some(47e3), capacitance: None }),
            (ResponseType::HighPass, RcLoad::default()),
        ] {
            let d = denominator(response, 600.0, &r, &c, load);
            let circuit = design(response, 600.0, &r, &c, load);
            for f_hz in [10.0, 300.0, 1e3, 7e3, 1e5] {
                let s = Complex64::new(0.0, 2.0 * std::f64::consts::PI * f_hz);
                let a = d.iter().rev().fold(Complex64::new(0.0, 0.0), |acc, &k| acc * s + k);
                let h = match response {
                    ResponseType::HighPass => s.powu(3) * c.iter().product::<f64>() / a,
                    _ => 1.0 / a,
                };
                let mna = transfer(&circuit, f_hz);
                assert!((h - mna).norm() <= 1e-10 * mna.norm(), "{response:?} {load:?} f={f_hz}: {h} vs {mna}");
            }
        }
    }

    // Distinct real poles are met exactly, with source and load; checked by the engine's poles.
    #[test]
    fn exact_capacitors_place_distinct_poles() {
        for response in [ResponseType::LowPass, ResponseType::HighPass] {
            // Two stages reach poles spaced by r only if (1 + r)²/r ≥ 4·(1 + R1′/R2) (from
            // b1² ≥ 4·a2·(1 + R1′/R2), derived here): r = 3 needs a taper R2/R1′ ≥ 3.
            for (n, taper) in [(2i32, 5.0), (3, 10.0), (4, 20.0)] {
                let poles: Vec<f64> = (0..n).map(|k| 2e3 * 3f64.powi(k)).collect();
                let target = real_pole_polynomial(&poles);
                let r: Vec<f64> = (0..n).map(|k| 2e3 * f64::powi(taper, k)).collect();
                let load = RcLoad { resistance: Some(1e6), capacitance: None };
                let caps = exact_capacitors(response, 300.0, &r, load, &target)
                    .unwrap_or_else(|| panic!("{response:?} n={n}"));
                let circuit = design(response, 300.0, &r, &caps, load);
                // H from the engine, normalised to its passband gain (DC for the low-pass;
                // for the high-pass the capacitors are shorts at ∞, leaving R_s into all the
                // shunt resistors and the load in parallel), against the target T(0)/T(s) or
                // s^n/T(s) (monic T).
                let rl = 1e6;
                let passband = match response {
                    ResponseType::HighPass => {
                        let rp = 1.0 / (r.iter().map(|x| 1.0 / x).sum::<f64>() + 1.0 / rl);
                        rp / (300.0 + rp)
                    }
                    _ => rl / (rl + 300.0 + r.iter().sum::<f64>()),
                };
                for f_hz in [30.0, 300.0, 1e3, 3e3, 3e4] {
                    let s = Complex64::new(0.0, 2.0 * std::f64::consts::PI * f_hz);
                    let t = target.iter().rev().fold(Complex64::new(0.0, 0.0), |acc, &k| acc * s + k);
                    let want = match response {
                        ResponseType::HighPass => s.powu(n as u32) / t,
                        _ => target[0] / t,
                    };
                    let got = transfer(&circuit, f_hz) / passband;
                    assert!((got - want).norm() <= 1e-8 * want.norm(), "{response:?} n={n} f={f_hz}: {got} vs {want}");
                }
            }
        }
        assert!(exact_capacitors(
            ResponseType::LowPass,
            300.0,
            &[2e3, 2e3],
            RcLoad::default(),
            &real_pole_polynomial(&[2e3, 6e3])
        )
        .is_none());
        // Coincident poles have no exact RC ladder.
        let target = real_pole_polynomial(&[1e3, 1e3]);
        assert!(exact_capacitors(ResponseType::LowPass, 0.0, &[1e3, 1e4], RcLoad::default(), &target).is_none());
    }

    // Least squares recovers an exact solution from a poor start, and improves on equal time
    // constants for a coincident target.
    #[test]
    fn least_squares_finds_exact_and_closest_ladders() {
        let omegas: Vec<f64> =
            (0..60).map(|k| 2.0 * std::f64::consts::PI * 100.0 * 10f64.powf(k as f64 / 40.0)).collect();
        let load = RcLoad { resistance: Some(1e6), capacitance: None };
        let r = [2e3, 2e4];
        let target = real_pole_polynomial(&[2e3, 6e3]);
        let exact = exact_capacitors(ResponseType::LowPass, 0.0, &r, load, &target).unwrap();
        let found = least_squares_capacitors(
            ResponseType::LowPass,
            0.0,
            &r,
            load,
            &target,
            &omegas,
            None,
            &[exact[0] * 1.5, exact[1] / 1.5],
        );
        for (a, b) in found.iter().zip(&exact) {
            assert!((a / b - 1.0).abs() < 1e-5, "{found:?} vs {exact:?}");
        }
        let coincident = real_pole_polynomial(&[6e3, 6e3, 6e3]);
        let r = [1e3, 5e3, 25e3];
        let omega_c = 2.0 * std::f64::consts::PI * 1e3;
        let gain = normalised_gain(ResponseType::LowPass, &coincident, omega_c);
        let start = equal_time_constant_capacitors(ResponseType::LowPass, 0.0, &r, load, omega_c, gain).unwrap();
        let worst = |caps: &[f64]| {
            let d = denominator(ResponseType::LowPass, 0.0, &r, caps, load);
            omegas
                .iter()
                .map(|&w| {
                    (20.0
                        * (normalised_gain(ResponseType::LowPass, &d, w)
                            / normalised_gain(ResponseType::LowPass, &coincident, w))
                        .log10())
                    .abs()
                })
                .fold(0.0, f64::max)
        };
        let better = least_squares_capacitors(ResponseType::LowPass, 0.0, &r, load, &coincident, &omegas, None, &start);
        assert!(worst(&better) < 0.5 * worst(&start), "{} vs {}", worst(&better), worst(&start));
    }

    // The equal-time-constant ladder hits the gain asked for at the cutoff.
    #[test]
    fn equal_time_constants_meet_the_cutoff_gain() {
        let omega = 2.0 * std::f64::consts::PI * 1e3;
        for response in [ResponseType::LowPass, ResponseType::HighPass] {
            let r = [1e3, 1e4, 1e5];
            let load = RcLoad { resistance: Some(1e6), capacitance: None };
            let caps = equal_time_constant_capacitors(response, 50.0, &r, load, omega, 0.5f64.sqrt()).unwrap();
            let d = denominator(response, 50.0, &r, &caps, load);
            assert!((normalised_gain(response, &d, omega) - 0.5f64.sqrt()).abs() < 1e-12);
            assert!((caps[1] * r[1] / (caps[2] * r[2]) - 1.0).abs() < 1e-12);
        }
    }
}
