//! Denormalisation: the standard frequency transformations that move a normalised low-pass prototype
//! (cutoff ω = 1 rad/s, see [`crate::prototype`]) to a real low-pass, high-pass, band-pass or band-stop
//! response.
//!
//! Each transformation is a substitution for s in the prototype's H(s), with ωc, ω0 and B in rad/s:
//! - low-pass: s → s/ωc;
//! - high-pass: s → ωc/s (each zero at infinity of the prototype becomes a zero at s = 0);
//! - band-pass: s → (s² + ω0²)/(B·s), with ω0 = √(ωl·ωh) and B = ωh − ωl (the order doubles; zeros at
//!   infinity become zeros at 0 and at infinity);
//! - band-stop: s → B·s/(s² + ω0²) (the order doubles; zeros at infinity become zeros at ±jω0).
//!
//! These substitutions are common practice in filter design. The zero, pole and gain bookkeeping
//! follows `scipy.signal.lp2lp_zpk`, `lp2hp_zpk`, `lp2bp_zpk` and `lp2bs_zpk` (SciPy 1.17.1, read from
//! the installed source), which is the convention reference and the test oracle:
//! - low-pass: z·ωc, p·ωc, gain·ωc^d, where d = #poles − #zeros (the relative degree);
//! - high-pass: ωc/z, ωc/p, d zeros at 0, gain·Re(Π(−z)/Π(−p));
//! - band-pass: each z (and p) scaled to c = z·B/2 splits into c ± √(c² − ω0²); d zeros at 0;
//!   gain·B^d;
//! - band-stop: each z (and p) inverted to c = (B/2)/z splits into c ± √(c² − ω0²); d zeros at +jω0
//!   and d at −jω0; gain·Re(Π(−z)/Π(−p)).
//!
//! With these gains the result equals the prototype evaluated at the substituted s, exactly (for a
//! conjugate-symmetric prototype, where Π(−z)/Π(−p) is real). The lists come in SciPy's order: the
//! "+" roots of all poles, then the "−" roots; then the added zeros. Of each ± pair the root without
//! cancellation is computed directly and the other as ω0²/root (their product), which is exact in
//! arithmetic and avoids the cancellation SciPy's direct form has in very wide bands.

use num_complex::Complex64;

use crate::prototype::Zpk;
use crate::synthesis::{positive, Band, ResponseType, SynthesisError};

/// Moves a normalised low-pass prototype to a low-pass, high-pass, band-pass or band-stop response.
///
/// The band is in Hz; the result is in rad/s. Low-pass and high-pass take [`Band::Cutoff`] (ωc = 2π·f);
/// band-pass and band-stop take [`Band::Edges`] or [`Band::CentreBandwidth`] (ω0 = 2π·√(f_low·f_high),
/// B = 2π·(f_high − f_low)). See the module docs for the substitutions and the gain convention, which
/// is that of `scipy.signal.lp2lp_zpk`, `lp2hp_zpk`, `lp2bp_zpk` and `lp2bs_zpk`.
///
/// # Errors
/// - [`SynthesisError::BadFrequency`] for a cutoff (or centre, or bandwidth) that is not finite and
///   positive, or so large that the result overflows.
/// - [`SynthesisError::BadBand`] for reversed, equal or non-positive edges, or edges whose result
///   overflows.
/// - [`SynthesisError::Unsupported`] for the wrong kind of band (saying which to give), a prototype
///   with more zeros than poles or a non-finite value, or (for high-pass and band-stop, which invert
///   s) a prototype zero or pole at s = 0.
pub fn denormalize(prototype: &Zpk, response: ResponseType, band: Band) -> Result<Zpk, SynthesisError> {
    check_prototype(prototype, response)?;
    let degree = prototype.poles.len() - prototype.zeros.len();
    match (response, band) {
        (ResponseType::LowPass | ResponseType::HighPass, Band::Cutoff(f_hz)) => {
            let omega_c = rad_per_s(positive("cutoff", f_hz)?);
            let result = if response == ResponseType::LowPass {
                to_lowpass(prototype, omega_c, degree)
            } else {
                to_highpass(prototype, omega_c, degree)
            };
            finite_or(result, SynthesisError::BadFrequency { what: "cutoff", value: f_hz })
        }
        (ResponseType::LowPass | ResponseType::HighPass, _) => Err(SynthesisError::Unsupported {
            asked: format!("a {} response from two band edges", response.name()),
            instead: "give one cutoff frequency".to_string(),
        }),
        (ResponseType::BandPass | ResponseType::BandStop, Band::Cutoff(f_hz)) => Err(SynthesisError::Unsupported {
            asked: format!("a {} response from a single cutoff ({f_hz} Hz)", response.name()),
            instead: "give the two band edges (low and high), or the centre frequency and bandwidth".to_string(),
        }),
        (ResponseType::BandPass | ResponseType::BandStop, _) => {
            let (low_hz, high_hz) = band.edges()?;
            let omega_0 = rad_per_s(low_hz.sqrt() * high_hz.sqrt());
            let bandwidth = rad_per_s(high_hz - low_hz);
            let result = if response == ResponseType::BandPass {
                to_bandpass(prototype, omega_0, bandwidth, degree)
            } else {
                to_bandstop(prototype, omega_0, bandwidth, degree)
            };
            finite_or(result, SynthesisError::BadBand { low_hz, high_hz })
        }
    }
}

/// The response of a denormalised transfer function at a frequency in Hz: H(j·2π·f).
pub fn target_response(target: &Zpk, f_hz: f64) -> Complex64 {
    target.eval(Complex64::new(0.0, rad_per_s(f_hz)))
}

/// ω = 2π·f: Hz to rad/s.
fn rad_per_s(f_hz: f64) -> f64 {
    std::f64::consts::TAU * f_hz
}

/// Rejects prototypes the transformations cannot take (as SciPy's `_relative_degree` rejects improper
/// ones), before any arithmetic.
fn check_prototype(prototype: &Zpk, response: ResponseType) -> Result<(), SynthesisError> {
    let finite = |z: &Complex64| z.re.is_finite() && z.im.is_finite();
    if !(prototype.gain.is_finite() && prototype.zeros.iter().all(finite) && prototype.poles.iter().all(finite)) {
        return Err(SynthesisError::Unsupported {
            asked: format!("a {} transform of a prototype with a non-finite pole, zero or gain", response.name()),
            instead: "give finite poles, zeros and gain, such as those of lowpass_prototype".to_string(),
        });
    }
    if prototype.zeros.len() > prototype.poles.len() {
        return Err(SynthesisError::Unsupported {
            asked: format!(
                "a {} transform of a prototype with {} zeros and {} poles",
                response.name(),
                prototype.zeros.len(),
                prototype.poles.len()
            ),
            instead: "give a proper prototype, with at least as many poles as zeros".to_string(),
        });
    }
    let inverts = matches!(response, ResponseType::HighPass | ResponseType::BandStop);
    let at_origin = |z: &Complex64| z.re == 0.0 && z.im == 0.0;
    if inverts && (prototype.zeros.iter().any(at_origin) || prototype.poles.iter().any(at_origin)) {
        return Err(SynthesisError::Unsupported {
            asked: format!("a {} transform of a prototype with a zero or pole at s = 0", response.name()),
            instead: "give a low-pass prototype with its zeros and poles away from s = 0".to_string(),
        });
    }
    Ok(())
}

/// The result, or `error` if any of its values overflowed.
fn finite_or(zpk: Zpk, error: SynthesisError) -> Result<Zpk, SynthesisError> {
    let finite = |z: &Complex64| z.re.is_finite() && z.im.is_finite();
    if zpk.gain.is_finite() && zpk.zeros.iter().all(finite) && zpk.poles.iter().all(finite) {
        Ok(zpk)
    } else {
        Err(error)
    }
}

/// s → s/ωc (scipy `lp2lp_zpk`).
fn to_lowpass(prototype: &Zpk, omega_c: f64, degree: usize) -> Zpk {
    Zpk {
        zeros: prototype.zeros.iter().map(|z| z * omega_c).collect(),
        poles: prototype.poles.iter().map(|p| p * omega_c).collect(),
        gain: prototype.gain * omega_c.powi(degree as i32),
    }
}

/// s → ωc/s (scipy `lp2hp_zpk`).
fn to_highpass(prototype: &Zpk, omega_c: f64, degree: usize) -> Zpk {
    let mut zeros: Vec<Complex64> = prototype.zeros.iter().map(|z| omega_c / z).collect();
    zeros.extend(std::iter::repeat_n(Complex64::new(0.0, 0.0), degree));
    Zpk {
        zeros,
        poles: prototype.poles.iter().map(|p| omega_c / p).collect(),
        gain: prototype.gain * inversion_gain(prototype),
    }
}

/// s → (s² + ω0²)/(B·s) (scipy `lp2bp_zpk`).
fn to_bandpass(prototype: &Zpk, omega_0: f64, bandwidth: f64, degree: usize) -> Zpk {
    let half = bandwidth / 2.0;
    let mut zeros = split_all(prototype.zeros.iter().map(|z| z * half), omega_0);
    zeros.extend(std::iter::repeat_n(Complex64::new(0.0, 0.0), degree));
    Zpk {
        zeros,
        poles: split_all(prototype.poles.iter().map(|p| p * half), omega_0),
        gain: prototype.gain * bandwidth.powi(degree as i32),
    }
}

/// s → B·s/(s² + ω0²) (scipy `lp2bs_zpk`).
fn to_bandstop(prototype: &Zpk, omega_0: f64, bandwidth: f64, degree: usize) -> Zpk {
    let half = bandwidth / 2.0;
    let mut zeros = split_all(prototype.zeros.iter().map(|z| half / z), omega_0);
    zeros.extend(std::iter::repeat_n(Complex64::new(0.0, omega_0), degree));
    zeros.extend(std::iter::repeat_n(Complex64::new(0.0, -omega_0), degree));
    Zpk {
        zeros,
        poles: split_all(prototype.poles.iter().map(|p| half / p), omega_0),
        gain: prototype.gain * inversion_gain(prototype),
    }
}

/// Re(Π(−z)/Π(−p)), the gain factor of an inversion s → 1/s, formed by alternating multiplication and
/// division.
fn inversion_gain(prototype: &Zpk) -> f64 {
    let mut value = Complex64::new(1.0, 0.0);
    let mut zeros = prototype.zeros.iter();
    let mut poles = prototype.poles.iter();
    loop {
        match (zeros.next(), poles.next()) {
            (None, None) => return value.re,
            (Some(z), Some(p)) => value *= z / p,
            (Some(z), None) => value *= -z,
            (None, Some(p)) => value /= -p,
        }
    }
}

/// For each c: the "+" roots c + √(c² − ω0²) of all, then the "−" roots c − √(c² − ω0²) of all (the two
/// roots of x² − 2cx + ω0² = 0, SciPy's order), each pair computed without cancellation.
fn split_all(centres: impl Iterator<Item = Complex64>, omega_0: f64) -> Vec<Complex64> {
    let (plus, minus): (Vec<Complex64>, Vec<Complex64>) = centres.map(|c| split(c, omega_0)).unzip();
    plus.into_iter().chain(minus).collect()
}

/// (c + w, c − w) with w = √(c² − ω0²) (principal root): the larger in modulus directly, the other as
/// ω0²/(larger), since their product is ω0².
fn split(c: Complex64, omega_0: f64) -> (Complex64, Complex64) {
    let w = (c * c - omega_0 * omega_0).sqrt();
    let (plus, minus) = (c + w, c - w);
    let square = omega_0 * omega_0;
    if plus.norm() >= minus.norm() {
        (plus, square / plus)
    } else {
        (square / minus, minus)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::prototype::{lowpass_prototype, MAX_ORDER};
    use crate::synthesis::{Alignment, BesselNormalization};
    use proptest::prelude::*;
    use serde::Deserialize;
    use std::collections::BTreeMap;

    #[derive(Deserialize)]
    struct ScipyData {
        versions: BTreeMap<String, String>,
        transforms: Vec<ScipyTransform>,
    }

    #[derive(Deserialize)]
    struct ScipyTransform {
        transform: String,
        kind: String,
        order: usize,
        ripple_db: Option<f64>,
        norm: Option<String>,
        band: BTreeMap<String, f64>,
        wo: f64,
        bw: Option<f64>,
        zeros: Vec<[f64; 2]>,
        poles: Vec<[f64; 2]>,
        gain: f64,
        response: ScipyResponse,
    }

    #[derive(Deserialize)]
    struct ScipyResponse {
        omega: Vec<f64>,
        h: Vec<[f64; 2]>,
    }

    fn complex(pair: &[f64; 2]) -> Complex64 {
        Complex64::new(pair[0], pair[1])
    }

    /// The largest |ours − theirs|/|theirs| (|ours| where theirs is 0) after matching each reference
    /// value to its nearest unused value of ours; the lists come in different orders.
    fn worst_matched_error(ours: &[Complex64], theirs: &[Complex64]) -> f64 {
        assert_eq!(ours.len(), theirs.len(), "different counts: {ours:?} vs {theirs:?}");
        let mut unused: Vec<Complex64> = ours.to_vec();
        let mut worst: f64 = 0.0;
        for reference in theirs {
            let idx = (0..unused.len())
                .min_by(|&a, &b| (unused[a] - reference).norm().total_cmp(&(unused[b] - reference).norm()))
                .unwrap();
            let error = (unused.swap_remove(idx) - reference).norm();
            worst = worst.max(if reference.norm() == 0.0 { error } else { error / reference.norm() });
        }
        worst
    }

    fn prototype_of(case: &ScipyTransform) -> Zpk {
        let alignment = match case.kind.as_str() {
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
        };
        lowpass_prototype(alignment, case.order).unwrap()
    }

    fn band_of(case: &ScipyTransform) -> Band {
        let b = &case.band;
        if let Some(&f) = b.get("cutoff_hz") {
            Band::Cutoff(f)
        } else if let (Some(&low_hz), Some(&high_hz)) = (b.get("low_hz"), b.get("high_hz")) {
            Band::Edges { low_hz, high_hz }
        } else {
            Band::CentreBandwidth { centre_hz: b["centre_hz"], bandwidth_hz: b["bandwidth_hz"] }
        }
    }

    fn response_of(name: &str) -> ResponseType {
        match name {
            "lowpass" => ResponseType::LowPass,
            "highpass" => ResponseType::HighPass,
            "bandpass" => ResponseType::BandPass,
            "bandstop" => ResponseType::BandStop,
            other => panic!("unknown transform {other}"),
        }
    }

    // Source: scipy.signal lp2lp_zpk / lp2hp_zpk / lp2bp_zpk / lp2bs_zpk and freqs_zpk (SciPy 1.17.1,
    // NumPy 2.4.6), generated by tests/reference/gen_scipy_poles.py. Tolerance 1e-9 relative (brief):
    // both sides are double precision, and the bands chosen (widest 300–3400 Hz) keep SciPy's direct
    // c ± √(c² − ω0²) far from cancellation.
    #[test]
    fn transforms_match_scipy() {
        let data: ScipyData =
            serde_json::from_str(include_str!("testdata/scipy_poles.json")).expect("scipy_poles.json parses");
        assert_eq!(data.versions["scipy"], "1.17.1");
        assert_eq!(data.transforms.len(), 11);
        let (mut worst_root, mut worst_gain, mut worst_response) = (0f64, 0f64, 0f64);
        for case in &data.transforms {
            let label = format!("{} of {} n={} {:?}", case.transform, case.kind, case.order, case.band);
            let ours = denormalize(&prototype_of(case), response_of(&case.transform), band_of(case)).unwrap();
            // The band in Hz reproduces the wo and bw handed to scipy (they were computed from it).
            if let Some(bw) = case.bw {
                let (low, high) = band_of(case).edges().unwrap();
                assert!((rad_per_s((low * high).sqrt()) - case.wo).abs() < 1e-12 * case.wo, "{label}");
                assert!((rad_per_s(high - low) - bw).abs() < 1e-12 * bw, "{label}");
            }
            let zeros: Vec<Complex64> = case.zeros.iter().map(complex).collect();
            let poles: Vec<Complex64> = case.poles.iter().map(complex).collect();
            let root_error = worst_matched_error(&ours.zeros, &zeros).max(worst_matched_error(&ours.poles, &poles));
            let gain_error = (ours.gain - case.gain).abs() / case.gain.abs();
            assert!(root_error < 1e-9, "{label}: zero/pole error {root_error:e}");
            assert!(gain_error < 1e-9, "{label}: gain {} vs scipy {} ({gain_error:e})", ours.gain, case.gain);
            for (omega, h) in case.response.omega.iter().zip(&case.response.h) {
                let reference = complex(h);
                let value = target_response(&ours, omega / std::f64::consts::TAU);
                let error = (value - reference).norm() / reference.norm();
                assert!(error < 1e-9, "{label}: H(j{omega}) = {value} vs scipy {reference} ({error:e})");
                worst_response = worst_response.max(error);
            }
            worst_root = worst_root.max(root_error);
            worst_gain = worst_gain.max(gain_error);
        }
        println!("worst vs scipy transforms: zeros/poles {worst_root:.2e}, gain {worst_gain:.2e}, H(jω) {worst_response:.2e}");
    }

    /// The prototype evaluated at the substituted variable: the definition of each transformation.
    fn substituted(prototype: &Zpk, response: ResponseType, band: Band, f_hz: f64) -> Complex64 {
        let s = Complex64::new(0.0, rad_per_s(f_hz));
        let u = match band {
            Band::Cutoff(fc) => {
                let omega_c = rad_per_s(fc);
                if response == ResponseType::LowPass {
                    s / omega_c
                } else {
                    omega_c / s
                }
            }
            _ => {
                let (low, high) = band.edges().unwrap();
                let (omega_0, bandwidth) = (rad_per_s((low * high).sqrt()), rad_per_s(high - low));
                let ratio = (s * s + omega_0 * omega_0) / (bandwidth * s);
                if response == ResponseType::BandPass {
                    ratio
                } else {
                    ratio.inv()
                }
            }
        };
        prototype.eval(u)
    }

    // Source: the substitutions themselves (common practice), an oracle independent of scipy.
    // Tolerance 1e-10 relative: both sides round at ~1e-15 per factor, amplified near the band edges
    // of a 1 dB Chebyshev by the pole sensitivity (still < 1e-12 in practice).
    #[test]
    fn transforms_equal_the_substitution() {
        let prototypes = [
            lowpass_prototype(Alignment::Butterworth, 5).unwrap(),
            lowpass_prototype(Alignment::Chebyshev { ripple_db: 1.0 }, 4).unwrap(),
            lowpass_prototype(Alignment::Bessel { normalization: BesselNormalization::Phase }, MAX_ORDER).unwrap(),
            lowpass_prototype(Alignment::Quality { q: 3.0 }, 2).unwrap(),
            Zpk {
                zeros: vec![Complex64::new(0.0, 1.5), Complex64::new(0.0, -1.5)],
                poles: lowpass_prototype(Alignment::Butterworth, 3).unwrap().poles,
                gain: 0.4,
            },
        ];
        let cases = [
            (ResponseType::LowPass, Band::Cutoff(440.0)),
            (ResponseType::HighPass, Band::Cutoff(35.0)),
            (ResponseType::BandPass, Band::Edges { low_hz: 2000.0, high_hz: 2500.0 }),
            (ResponseType::BandStop, Band::CentreBandwidth { centre_hz: 60.0, bandwidth_hz: 30.0 }),
        ];
        let mut worst: f64 = 0.0;
        for prototype in &prototypes {
            for (response, band) in cases {
                let target = denormalize(prototype, response, band).unwrap();
                let expected_order =
                    if matches!(response, ResponseType::BandPass | ResponseType::BandStop) { 2 } else { 1 };
                assert_eq!(target.poles.len(), expected_order * prototype.poles.len());
                for f_hz in [1.0, 20.0, 59.0, 61.0, 300.0, 2250.0, 2600.0, 1e5] {
                    let expected = substituted(prototype, response, band, f_hz);
                    let error = (target_response(&target, f_hz) - expected).norm() / expected.norm();
                    assert!(error < 1e-10, "{response:?} {band:?} at {f_hz} Hz: {error:e}");
                    worst = worst.max(error);
                }
            }
        }
        println!("worst vs substitution: {worst:.2e}");
    }

    fn lr_pair(order: usize, f_hz: f64) -> (Zpk, Zpk) {
        let prototype = lowpass_prototype(Alignment::LinkwitzRiley, order).unwrap();
        (
            denormalize(&prototype, ResponseType::LowPass, Band::Cutoff(f_hz)).unwrap(),
            denormalize(&prototype, ResponseType::HighPass, Band::Cutoff(f_hz)).unwrap(),
        )
    }

    fn sweep_hz(centre_hz: f64) -> impl Iterator<Item = f64> {
        (-60..=60).map(move |k| centre_hz * 10f64.powf(k as f64 / 20.0))
    }

    // Source: references.md §3.4 (LR4: −6.0206 dB at ωc, LP and HP phase −180° there, LP + HP all-pass
    // 0 dB at all ω). Tolerances: 5e-5 dB for the 4-decimal table value; 1e-12 for the exact identities
    // LP(jωc) = HP(jωc) = −1/2 and |LP + HP| = |1 + s⁴|/|s² + √2s + 1|² = (1 + ω⁴)/(1 + ω⁴) = 1 at s = jω
    // (normalised), which hold to rounding.
    #[test]
    fn linkwitz_riley_4_crossover_sums_to_all_pass() {
        let f_c = 2200.0;
        let (low, high) = lr_pair(4, f_c);
        let at_cutoff_db = 20.0 * target_response(&low, f_c).norm().log10();
        assert!((at_cutoff_db + 6.0206).abs() <= 5e-5, "{at_cutoff_db}");
        assert!((20.0 * target_response(&high, f_c).norm().log10() + 6.0206).abs() <= 5e-5);
        assert!((target_response(&low, f_c) + 0.5).norm() < 1e-12);
        assert!((target_response(&high, f_c) + 0.5).norm() < 1e-12);
        assert_eq!(high.zeros.len(), 4);
        for f_hz in sweep_hz(f_c) {
            let sum = target_response(&low, f_hz) + target_response(&high, f_hz);
            assert!((sum.norm() - 1.0).abs() < 1e-12, "|LP + HP| = {} at {f_hz} Hz", sum.norm());
        }
    }

    // Source: references.md §3.4 (LR2: −6.0206 dB, LP − HP all-pass, LP + HP null at ωc; LR8: LP + HP
    // all-pass). Tolerances as above.
    #[test]
    fn linkwitz_riley_2_and_8_crossovers() {
        let f_c = 350.0;
        let (low, high) = lr_pair(2, f_c);
        assert!((20.0 * target_response(&low, f_c).norm().log10() + 6.0206).abs() <= 5e-5);
        assert!((target_response(&low, f_c) + target_response(&high, f_c)).norm() < 1e-12);
        for f_hz in sweep_hz(f_c) {
            let difference = target_response(&low, f_hz) - target_response(&high, f_hz);
            assert!((difference.norm() - 1.0).abs() < 1e-12, "LR2 |LP − HP| at {f_hz} Hz");
        }
        let (low, high) = lr_pair(8, f_c);
        assert!((20.0 * target_response(&low, f_c).norm().log10() + 6.0206).abs() <= 5e-5);
        for f_hz in sweep_hz(f_c) {
            let sum = target_response(&low, f_hz) + target_response(&high, f_hz);
            assert!((sum.norm() - 1.0).abs() < 1e-11, "LR8 |LP + HP| at {f_hz} Hz");
        }
    }

    #[test]
    fn bad_cutoffs_are_rejected() {
        let prototype = lowpass_prototype(Alignment::Butterworth, 2).unwrap();
        for f_hz in [0.0, -10.0, f64::NAN, f64::INFINITY] {
            for response in [ResponseType::LowPass, ResponseType::HighPass] {
                match denormalize(&prototype, response, Band::Cutoff(f_hz)) {
                    Err(error @ SynthesisError::BadFrequency { what: "cutoff", value }) => {
                        assert!(value.to_bits() == f_hz.to_bits());
                        assert!(error.to_string().contains("above 0 Hz"), "{error}");
                    }
                    other => panic!("cutoff {f_hz}: expected BadFrequency, got {other:?}"),
                }
            }
        }
        // Finite but so large that the poles overflow.
        let error = denormalize(&prototype, ResponseType::LowPass, Band::Cutoff(1e308)).unwrap_err();
        assert_eq!(error, SynthesisError::BadFrequency { what: "cutoff", value: 1e308 });
    }

    #[test]
    fn bad_bands_are_rejected() {
        let prototype = lowpass_prototype(Alignment::Butterworth, 2).unwrap();
        for response in [ResponseType::BandPass, ResponseType::BandStop] {
            let reversed = denormalize(&prototype, response, Band::Edges { low_hz: 2000.0, high_hz: 1000.0 });
            assert_eq!(reversed, Err(SynthesisError::BadBand { low_hz: 2000.0, high_hz: 1000.0 }));
            let equal = denormalize(&prototype, response, Band::Edges { low_hz: 1000.0, high_hz: 1000.0 });
            assert!(matches!(equal, Err(SynthesisError::BadBand { .. })));
            let zero_bandwidth =
                denormalize(&prototype, response, Band::CentreBandwidth { centre_hz: 1e3, bandwidth_hz: 0.0 });
            assert!(matches!(zero_bandwidth, Err(SynthesisError::BadFrequency { what: "bandwidth", .. })));
            let message = reversed.unwrap_err().to_string();
            assert!(message.contains("upper above the lower"), "{message}");
        }
    }

    #[test]
    fn wrong_band_kinds_say_what_to_give() {
        let prototype = lowpass_prototype(Alignment::Butterworth, 3).unwrap();
        let error = denormalize(&prototype, ResponseType::BandPass, Band::Cutoff(1000.0)).unwrap_err();
        assert!(matches!(error, SynthesisError::Unsupported { .. }));
        assert!(error.to_string().contains("two band edges"), "{error}");
        let error =
            denormalize(&prototype, ResponseType::HighPass, Band::Edges { low_hz: 1.0, high_hz: 2.0 }).unwrap_err();
        assert!(matches!(error, SynthesisError::Unsupported { .. }));
        assert!(error.to_string().contains("give one cutoff frequency"), "{error}");
    }

    #[test]
    fn unusable_prototypes_are_rejected() {
        let improper =
            Zpk { zeros: vec![Complex64::new(-1.0, 0.0); 2], poles: vec![Complex64::new(-1.0, 0.0)], gain: 1.0 };
        let error = denormalize(&improper, ResponseType::LowPass, Band::Cutoff(1.0)).unwrap_err();
        assert!(error.to_string().contains("2 zeros and 1 poles"), "{error}");
        let integrator = Zpk { zeros: Vec::new(), poles: vec![Complex64::new(0.0, 0.0)], gain: 1.0 };
        assert!(denormalize(&integrator, ResponseType::LowPass, Band::Cutoff(1.0)).is_ok());
        let error = denormalize(&integrator, ResponseType::HighPass, Band::Cutoff(1.0)).unwrap_err();
        assert!(error.to_string().contains("s = 0"), "{error}");
        let not_finite = Zpk { zeros: Vec::new(), poles: vec![Complex64::new(f64::NAN, 0.0)], gain: 1.0 };
        assert!(matches!(
            denormalize(&not_finite, ResponseType::BandPass, Band::Edges { low_hz: 1.0, high_hz: 2.0 }),
            Err(SynthesisError::Unsupported { .. })
        ));
    }

    proptest! {
        // Source: frequency scaling (common practice): H_lp(j2πf) = H_proto(jf/fc) and
        // H_hp(j2πf) = H_proto(fc/(jf)); a band-pass is geometrically symmetric about f0,
        // |H(jω)| = |H(jω0²/ω)|. Tolerance 1e-10 relative, as for the substitution test.
        #[test]
        fn scaling_and_symmetry(
            f_c in 1.0f64..1e5,
            ratio in 1e-2f64..1e2,
            order in 1usize..=MAX_ORDER,
            fraction in 0.05f64..0.95,
        ) {
            let prototype = lowpass_prototype(Alignment::Butterworth, order).unwrap();
            let low = denormalize(&prototype, ResponseType::LowPass, Band::Cutoff(f_c)).unwrap();
            let high = denormalize(&prototype, ResponseType::HighPass, Band::Cutoff(f_c)).unwrap();
            let expected = prototype.eval(Complex64::new(0.0, ratio));
            prop_assert!((target_response(&low, f_c * ratio) - expected).norm() <= 1e-10 * expected.norm());
            let expected = prototype.eval(Complex64::new(0.0, -1.0 / ratio));
            prop_assert!((target_response(&high, f_c * ratio) - expected).norm() <= 1e-10 * expected.norm());
            let band = Band::Edges { low_hz: f_c * fraction, high_hz: f_c };
            let band_pass = denormalize(&prototype, ResponseType::BandPass, band).unwrap();
            let f_0 = f_c * fraction.sqrt();
            let (above, below) = (target_response(&band_pass, f_0 * ratio), target_response(&band_pass, f_0 / ratio));
            prop_assert!((above.norm() - below.norm()).abs() <= 1e-10 * above.norm().max(below.norm()));
        }
    }
}
