//! Reference test: active RC sections (unity-gain Sallen-Key, multiple feedback) and their cascades,
//! swept by the core's MNA, against scipy.signal, the alignment targets, a hand-derived
//! high-frequency feedthrough limit, and finite-difference sensitivities measured on the engine.
//!
//! Tolerances. With the ideal op-amp (modelled exactly, see `bandwright::active`) the engine and
//! the closed forms are both double-precision evaluations of the same rational function, with
//! 5–40 MNA unknowns; [`RTOL`] = 1e-9 relative leaves a wide margin over the ~1e-13 rounding seen.
//! The scipy vectors are complex floats printed with round-trip precision, so they carry no
//! rounding of their own beyond SciPy's evaluation (~1e-15).

use bandwright::active::{
    design_cascade, fit_cascade, ActiveOptions, ActiveParts, ActiveSection, ActiveTopology, CascadeSpec, OpAmp,
};
use bandwright::design::Part;
use bandwright::synthesis::{Alignment, BesselNormalization, ResponseType};
use bandwright::{
    sweep, AcSystem, ActiveError, Design, Detail, FrequencyGrid, MultipleFeedbackHighPass, MultipleFeedbackLowPass,
    PartValues, SallenKeyHighPass, SallenKeyLowPass, Series,
};
use num_complex::Complex64;
use serde::Deserialize;
use std::f64::consts::TAU;

/// Relative tolerance of engine vs closed form or scipy with an ideal op-amp (see the module docs).
const RTOL: f64 = 1e-9;

#[derive(Deserialize)]
struct Data {
    scipy: String,
    sections: Vec<SectionCase>,
    cascades: Vec<CascadeCase>,
}

#[derive(Deserialize)]
struct SectionCase {
    response: String,
    f0_hz: f64,
    q: f64,
    f_hz: Vec<f64>,
    h_re: Vec<f64>,
    h_im: Vec<f64>,
}

#[derive(Deserialize)]
struct CascadeCase {
    alignment: String,
    ripple_db: Option<f64>,
    order: usize,
    response: String,
    cutoff_hz: f64,
    f_hz: Vec<f64>,
    h_re: Vec<f64>,
    h_im: Vec<f64>,
}

fn data() -> Data {
    let text = include_str!("data/scipy_active.json");
    let data: Data = serde_json::from_str(text).expect("scipy_active.json parses");
    assert_eq!(data.scipy, "1.17.1", "regenerate with tests/reference/gen_scipy_active.py");
    data
}

fn response_of(name: &str) -> ResponseType {
    if name == "lowpass" {
        ResponseType::LowPass
    } else {
        ResponseType::HighPass
    }
}

/// The engine's H(j2πf) of a design at each frequency (LU sweep).
fn engine(design: &Design, f_hz: &[f64]) -> Vec<Complex64> {
    let (circuit, probe) = design.to_circuit().expect("valid design");
    let grid = FrequencyGrid::list(f_hz.to_vec()).unwrap();
    let response = sweep(&mut AcSystem::new(&circuit, &probe), &grid, Detail::Transfer);
    response.transfer().into_iter().map(|h| h.expect("solved")).collect()
}

/// Compares `got` with `want` point by point, relative to |want|; returns the worst error.
fn check(label: &str, f_hz: &[f64], got: &[Complex64], want: &[Complex64], rtol: f64) -> f64 {
    let mut worst: f64 = 0.0;
    for ((f, g), w) in f_hz.iter().zip(got).zip(want) {
        let error = (g - w).norm() / w.norm();
        worst = worst.max(error);
        assert!(error <= rtol, "{label} at {f} Hz: {g} vs {w} (relative error {error:e})");
    }
    worst
}

/// Every section form designed for each (f0, Q) of the scipy data.
fn sections_for(response: ResponseType, f0: f64, q: f64) -> Vec<ActiveSection> {
    match response {
        ResponseType::LowPass => vec![
            ActiveSection::SallenKeyLowPass(
                SallenKeyLowPass::design(f0, q, 10e-9, SallenKeyLowPass::min_capacitor_ratio(q).max(1.0) * 1.5)
                    .unwrap(),
            ),
            ActiveSection::MultipleFeedbackLowPass(
                MultipleFeedbackLowPass::design(
                    f0,
                    q,
                    1.0,
                    4.7e-9,
                    MultipleFeedbackLowPass::min_capacitor_ratio(q, 1.0),
                )
                .unwrap(),
            ),
            ActiveSection::MultipleFeedbackLowPass(
                MultipleFeedbackLowPass::design(
                    f0,
                    q,
                    3.3,
                    1e-9,
                    MultipleFeedbackLowPass::min_capacitor_ratio(q, 3.3) * 2.0,
                )
                .unwrap(),
            ),
        ],
        _ => vec![
            ActiveSection::SallenKeyHighPass(SallenKeyHighPass::design(f0, q, 22e-9).unwrap()),
            ActiveSection::SallenKeyHighPass(SallenKeyHighPass::resistors_for(f0, q, 22e-9, 6.8e-9).unwrap()),
            ActiveSection::MultipleFeedbackHighPass(MultipleFeedbackHighPass::design(f0, q, 1.0, 10e-9).unwrap()),
            ActiveSection::MultipleFeedbackHighPass(MultipleFeedbackHighPass::design(f0, q, 2.0, 10e-9).unwrap()),
        ],
    }
}

// Source: scipy.signal.freqs (SciPy 1.17.1) of w0²/(s² + (w0/Q)s + w0²) and s²/(…), the standard
// second-order forms that the published unity-gain Sallen-Key and MFB sections realize (TI, Op Amps
// for Everyone, ch. 16, from memory), times the section's passband gain (+1, or −K for MFB).
// Also the engine against each section's own closed form H(s) (module docs of sallen_key and
// multiple_feedback), which is an independent route: the nodal derivation, not the MNA.
#[test]
fn sections_match_scipy_and_their_closed_forms() {
    let data = data();
    let mut worst = [0.0f64; 2];
    for case in &data.sections {
        let response = response_of(&case.response);
        let scipy: Vec<Complex64> = case.h_re.iter().zip(&case.h_im).map(|(&re, &im)| Complex64::new(re, im)).collect();
        for section in sections_for(response, case.f0_hz, case.q) {
            let label = format!("{section:?}");
            let got = engine(&section.to_design(&OpAmp::Ideal, Some(10e3)), &case.f_hz);
            let want: Vec<Complex64> = scipy.iter().map(|h| h * section.gain()).collect();
            worst[0] = worst[0].max(check(&label, &case.f_hz, &got, &want, RTOL));
            let closed: Vec<Complex64> =
                case.f_hz.iter().map(|&f| section.transfer(Complex64::new(0.0, TAU * f))).collect();
            worst[1] = worst[1].max(check(&label, &case.f_hz, &got, &closed, RTOL));
        }
    }
    eprintln!("sections: worst relative error vs scipy {:.2e}, vs closed form {:.2e}", worst[0], worst[1]);
}

fn alignment_of(case: &CascadeCase) -> Alignment {
    match case.alignment.as_str() {
        "butterworth" => Alignment::Butterworth,
        "chebyshev" => Alignment::Chebyshev { ripple_db: case.ripple_db.unwrap() },
        _ => Alignment::Bessel { normalization: BesselNormalization::Magnitude },
    }
}

// Source: scipy.signal.butter / cheby1 / bessel(norm='mag') with analog=True, output='zpk', and
// freqs_zpk (SciPy 1.17.1); and `transform::target_response` of the same alignment. The cascade's
// passband gain (+1 per Sallen-Key section, −K per MFB section) differs from the target's for
// even-order Chebyshev (−ripple dB at DC), so the target is scaled by the ratio of the two.
#[test]
fn ideal_cascades_match_scipy_and_the_target() {
    let data = data();
    let mut worst: f64 = 0.0;
    for case in &data.cascades {
        for topology in [ActiveTopology::SallenKey, ActiveTopology::MultipleFeedback] {
            for gain in [1.0, 2.0] {
                if topology == ActiveTopology::SallenKey && gain != 1.0 {
                    continue;
                }
                let spec = CascadeSpec {
                    topology,
                    alignment: alignment_of(case),
                    order: case.order,
                    response: response_of(&case.response),
                    cutoff_hz: case.cutoff_hz,
                };
                let options = ActiveOptions { gain, load_ohms: Some(2e3), ..Default::default() };
                let cascade = design_cascade(&spec, &options).unwrap();
                let target_passband = match spec.response {
                    ResponseType::LowPass => bandwright::transform::target_response(&cascade.target, 0.0).re,
                    _ => cascade.target.gain,
                };
                let scale = cascade.passband_gain / target_passband;
                let label = format!("{topology:?} K={gain} {} {} n={}", case.alignment, case.response, case.order);
                let got = engine(&cascade.design, &case.f_hz);
                let scipy: Vec<Complex64> =
                    case.h_re.iter().zip(&case.h_im).map(|(&re, &im)| Complex64::new(re, im) * scale).collect();
                worst = worst.max(check(&label, &case.f_hz, &got, &scipy, RTOL));
                let target: Vec<Complex64> = case
                    .f_hz
                    .iter()
                    .map(|&f| bandwright::transform::target_response(&cascade.target, f) * scale)
                    .collect();
                worst = worst.max(check(&label, &case.f_hz, &got, &target, RTOL));
                assert!(cascade.max_response_deviation_db < 1e-8, "{label}: {}", cascade.max_response_deviation_db);
            }
        }
    }
    eprintln!("cascades: worst relative error vs scipy and the target {worst:.2e}");
}

// Source: hand derivation (the doc of `SallenKeyLowPass::feedthrough_limit`). Far above f0, C1
// shorts node a to the output pin and C2 shorts the non-inverting input to ground. The op-amp's
// internal source is A(jω)·(V+ − V−) = −A·V_out behind R_o. KCL at the output pin:
//   (V_in − V_out)/R1 = V_out/R2 + (V_out + A·V_out)/R_o + V_out/R_L
//   ⇒ H ≈ G1/(G1 + G2 + G_L + (1 + A)/R_o),                                     (1)
// and as A → 0 (far above the gain-bandwidth product) H → H∞ = G1/(G1 + G2 + G_o + G_L).   (2)
// Neglected in (1): the capacitor impedances. The largest neglected term is the voltage left on
// the non-inverting input, V_p/V_out ≈ Z_C2/R2 = 1/(ω·C2·R2): 1.41e-3 at 1 MHz (= 1000·f0, with
// C2 = 10 nF and R2 = 11.25 kΩ), falling as 1/f to 1.4e-6 at 1 GHz (computed by an independent
// 3×3 nodal solve in NumPy: 1.38e-3 and 1.38e-6 relative). So (1) is held to 3e-3 at 1000·f0
// and to 1e-5 at 1e6·f0.
// (2): with GBW = 100 kHz, |A(1 MHz)| ≈ 0.1 and A is nearly −j·0.1, so |H|/H∞ ≈ 1/|1 − j·0.1·G_o/ΣG|
// = 0.995 at 1000·f0; we allow 2 %. At 1e6·f0, |A| ≈ 1e-4 and the capacitor terms are 1.4e-6:
// (2) to 1e-5.
#[test]
fn sallen_key_lowpass_feedthrough_approaches_the_hand_derived_limit() {
    let section = SallenKeyLowPass::design(1e3, std::f64::consts::FRAC_1_SQRT_2, 10e-9, 2.0).unwrap();
    let (output_ohms, load_ohms, gbw_hz, dc_gain) = (100.0, 10e3, 1e5, 1e5);
    let op_amp = OpAmp::SinglePole { gbw_hz, dc_gain, output_ohms };
    let design = ActiveSection::SallenKeyLowPass(section).to_design(&op_amp, Some(load_ohms));
    let limit = section.feedthrough_limit(output_ohms, Some(load_ohms));
    let (g1, g2, go, gl) = (1.0 / section.r1, 1.0 / section.r2, 1.0 / output_ohms, 1.0 / load_ohms);

    let f_hz = [1e6, 1e9];
    let got = engine(&design, &f_hz);
    // (1) at 1000·f0 with the op-amp's own A(jω).
    let a = op_amp.open_loop_gain(f_hz[0]).unwrap();
    let formula = g1 / (g1 + g2 + gl + (1.0 + a) * go);
    let error_1 = (got[0] - formula).norm() / formula.norm();
    assert!(error_1 < 3e-3, "at 1 MHz: {} vs formula {formula} ({error_1:e})", got[0]);
    let a = op_amp.open_loop_gain(f_hz[1]).unwrap();
    let formula = g1 / (g1 + g2 + gl + (1.0 + a) * go);
    assert!((got[1] - formula).norm() < 1e-5 * formula.norm(), "at 1 GHz: {} vs formula {formula}", got[1]);
    // (2) the limit, at 1000·f0 and 1e6·f0.
    let error_2 = (got[0].norm() - limit).abs() / limit;
    let error_3 = (got[1].norm() - limit).abs() / limit;
    assert!(error_2 < 2e-2, "at 1 MHz: |H| {} vs limit {limit}", got[0].norm());
    assert!(error_3 < 1e-5, "at 1 GHz: |H| {} vs limit {limit}", got[1].norm());
    // The ideal op-amp keeps falling at 40 dB/decade: at 1000·f0 it is about (f0/f)² = 1e-6.
    let ideal = engine(&ActiveSection::SallenKeyLowPass(section).to_design(&OpAmp::Ideal, Some(load_ohms)), &f_hz);
    assert!(ideal[0].norm() < 2e-6 && got[0].norm() > 1000.0 * ideal[0].norm());
    eprintln!(
        "feedthrough: limit {:.4e} ({:.2} dB); engine at 1 MHz {:.4e} (formula (1) error {error_1:.1e}, limit error {error_2:.1e}), at 1 GHz {:.4e} (error {error_3:.1e}); ideal op-amp at 1 MHz {:.2e}",
        limit,
        20.0 * limit.log10(),
        got[0].norm(),
        got[1].norm(),
        ideal[0].norm()
    );
}

/// f0, Q and the passband gain measured on the engine: for a second-order section
/// 1/H(jω) = a + b·ω² + j·c·ω (low-pass) or a + b/ω² − j·c/ω (high-pass), solved from two
/// frequencies; then K = 1/a, ω0² = −a/b (low-pass) or −b/a (high-pass), Q = … (below).
fn measured_f0_q(design: &Design, response: ResponseType, f0_guess: f64) -> (f64, f64) {
    let (f1, f2) = (0.5 * f0_guess, 1.7 * f0_guess);
    let h = engine(design, &[f1, f2]);
    let (w1, w2) = (TAU * f1, TAU * f2);
    let (y1, y2) = (h[0].inv(), h[1].inv());
    match response {
        ResponseType::LowPass => {
            // Re: a + b·ω²; Im: c·ω, with a = 1/G, b = −1/(G·ω0²), c = 1/(G·Q·ω0).
            let b = (y1.re - y2.re) / (w1 * w1 - w2 * w2);
            let a = y1.re - b * w1 * w1;
            let c = y1.im / w1;
            let omega0 = (-a / b).sqrt();
            (omega0 / TAU, a / (c * omega0))
        }
        _ => {
            // Re: a + b/ω²; Im: −c/ω, with a = 1/G, b = −ω0²/G, c = ω0/(G·Q).
            let b = (y1.re - y2.re) / (1.0 / (w1 * w1) - 1.0 / (w2 * w2));
            let a = y1.re - b / (w1 * w1);
            let c = -y1.im * w1;
            let omega0 = (-b / a).sqrt();
            (omega0 / TAU, omega0 * a / c)
        }
    }
}

/// A copy of `design` with part `reference` scaled by `factor`.
fn scaled(design: &Design, reference: &str, factor: f64) -> Design {
    let mut copy = design.clone();
    for part in &mut copy.elements {
        match part {
            Part::Resistor { reference: r, value, .. } | Part::Capacitor { reference: r, value, .. }
                if r == reference =>
            {
                *value *= factor
            }
            _ => {}
        }
    }
    copy
}

// Source: central finite differences of f0 and Q measured on the MNA engine (an independent
// route: no closed-form f0/Q formula is used) against each section's analytic sensitivities.
// Step h = 1e-4 in ln x: truncation error ~h²·(third log-derivative) ~ 1e-8, rounding
// ~1e-13/h = 1e-9; we allow 1e-6.
#[test]
fn sensitivities_match_engine_finite_differences() {
    let cases: Vec<(ActiveSection, ResponseType)> = vec![
        (
            ActiveSection::SallenKeyLowPass(SallenKeyLowPass::design(1e3, 1.3, 4.7e-9, 10.0).unwrap()),
            ResponseType::LowPass,
        ),
        (
            ActiveSection::SallenKeyHighPass(SallenKeyHighPass::resistors_for(1e3, 0.9, 10e-9, 4.7e-9).unwrap()),
            ResponseType::HighPass,
        ),
        (
            ActiveSection::MultipleFeedbackLowPass(
                MultipleFeedbackLowPass::design(1e3, 0.8, 2.0, 2.2e-9, 12.0).unwrap(),
            ),
            ResponseType::LowPass,
        ),
        (
            ActiveSection::MultipleFeedbackHighPass(
                MultipleFeedbackHighPass::resistors_for(1e3, 1.7, 10e-9, 4.7e-9, 6.8e-9).unwrap(),
            ),
            ResponseType::HighPass,
        ),
    ];
    let h: f64 = 1e-4;
    let mut worst: f64 = 0.0;
    for (section, response) in cases {
        let design = section.to_design(&OpAmp::Ideal, None);
        let (f0, q) = measured_f0_q(&design, response, section.f0_hz());
        assert!((f0 / section.f0_hz() - 1.0).abs() < 1e-10 && (q / section.q().unwrap() - 1.0).abs() < 1e-10);
        for s in section.sensitivities() {
            let reference = bandwright::active::reference(&s.reference, 1);
            let (f_up, q_up) = measured_f0_q(&scaled(&design, &reference, h.exp()), response, f0);
            let (f_down, q_down) = measured_f0_q(&scaled(&design, &reference, (-h).exp()), response, f0);
            let s_f0 = (f_up.ln() - f_down.ln()) / (2.0 * h);
            let s_q = (q_up.ln() - q_down.ln()) / (2.0 * h);
            worst = worst.max((s_f0 - s.f0).abs()).max((s_q - s.q.unwrap()).abs());
            assert!((s_f0 - s.f0).abs() < 1e-6, "{section:?} {reference}: S^f0 {s_f0} vs {}", s.f0);
            assert!((s_q - s.q.unwrap()).abs() < 1e-6, "{section:?} {reference}: S^Q {s_q} vs {:?}", s.q);
        }
    }
    eprintln!("sensitivities: worst |engine finite difference − analytic| {worst:.2e}");
}

// Source: IEC 60063 (the series tables of bandwright::eseries, references.md §1.2) for the values;
// the f0/Q errors are figures of our own fit, bounded by half an E96 step (1.5 %) in f0 per
// resistor pair and the capacitor-ratio choice in Q (common practice: E96 resistors and E12 or
// E6 capacitors). The deviation bound is ours, generous, from the printed figures.
#[test]
fn fitted_cascades_use_standard_values_with_small_errors() {
    let cases = [
        (ActiveTopology::SallenKey, Alignment::Butterworth, 4, ResponseType::LowPass, Series::E12),
        (ActiveTopology::SallenKey, Alignment::Chebyshev { ripple_db: 0.5 }, 5, ResponseType::HighPass, Series::E12),
        (
            ActiveTopology::MultipleFeedback,
            Alignment::Bessel { normalization: BesselNormalization::Magnitude },
            6,
            ResponseType::LowPass,
            Series::E6,
        ),
        (ActiveTopology::MultipleFeedback, Alignment::Butterworth, 3, ResponseType::HighPass, Series::E12),
        (ActiveTopology::SallenKey, Alignment::LinkwitzRiley, 4, ResponseType::LowPass, Series::E6),
    ];
    for (topology, alignment, order, response, capacitors) in cases {
        let spec = CascadeSpec { topology, alignment, order, response, cutoff_hz: 1234.0 };
        let parts = ActiveParts::new(PartValues::Series(Series::E96), PartValues::Series(capacitors));
        let cascade = fit_cascade(&spec, &ActiveOptions::default(), &parts).unwrap();
        let label =
            format!("{topology:?} {} {} n={order} E96/{}", alignment.name(), response.name(), capacitors.name());
        for section in &cascade.sections {
            for part in &section.parts {
                let set = if part.kind == "resistor" { &parts.resistors } else { &parts.capacitors };
                assert!(set.is_value(part.choice.value), "{label}: {} = {}", part.reference, part.choice.value);
                let (low, high) = if part.kind == "resistor" { parts.resistor_range } else { parts.capacitor_range };
                assert!(part.choice.value >= low && part.choice.value <= high, "{label}: {part:?}");
            }
            assert!(section.f0_error_pct.abs() < 1.0, "{label}: {section:?}");
            assert!(section.q_error_pct.unwrap_or(0.0).abs() < 1.5, "{label}: {section:?}");
            assert_eq!(section.sensitivities.len(), section.parts.len());
            eprintln!(
                "{label} section {}: target f0 {:.2} Hz Q {:?}, error f0 {:+.3} % Q {:+.3} %, parts {}",
                section.index,
                section.target.f0_hz,
                section.target.q.map(|q| (q * 1e4).round() / 1e4),
                section.f0_error_pct,
                section.q_error_pct.unwrap_or(0.0),
                section
                    .parts
                    .iter()
                    .map(|p| format!("{}={:e}", p.reference, p.choice.value))
                    .collect::<Vec<_>>()
                    .join(" ")
            );
        }
        eprintln!("{label}: worst response deviation {:.4} dB", cascade.max_response_deviation_db);
        assert!(cascade.max_response_deviation_db < 0.5, "{label}: {}", cascade.max_response_deviation_db);
    }
}

// Source: common practice (a single-pole op-amp model): the deviation from the ideal response falls
// as the gain-bandwidth product rises, since the loop gain at the band edge grows with it.
#[test]
fn finite_gain_bandwidth_shows_in_the_deviation() {
    let spec = CascadeSpec {
        topology: ActiveTopology::SallenKey,
        alignment: Alignment::Butterworth,
        order: 6,
        response: ResponseType::LowPass,
        cutoff_hz: 10e3,
    };
    let deviation = |gbw_hz: f64| {
        let op_amp = OpAmp::SinglePole { gbw_hz, dc_gain: 2e5, output_ohms: 50.0 };
        design_cascade(&spec, &ActiveOptions { op_amp, load_ohms: Some(10e3), ..Default::default() })
            .unwrap()
            .max_response_deviation_db
    };
    let figures: Vec<f64> = [1e5, 1e6, 1e7, 1e8].iter().map(|&g| deviation(g)).collect();
    eprintln!("6th-order SK Butterworth at 10 kHz, deviation vs GBW 100k/1M/10M/100M: {figures:?} dB");
    assert!(figures.windows(2).all(|w| w[1] < w[0]), "{figures:?}");
    assert!(figures[0] > 0.5 && figures[3] < 0.01, "{figures:?}");
}

// Bad input gets typed errors naming the value (house rules).
#[test]
fn bad_input_gets_typed_errors() {
    let good = CascadeSpec {
        topology: ActiveTopology::MultipleFeedback,
        alignment: Alignment::Butterworth,
        order: 4,
        response: ResponseType::HighPass,
        cutoff_hz: 1e3,
    };
    let options = ActiveOptions::default();
    assert_eq!(
        design_cascade(&CascadeSpec { order: 0, ..good }, &options).unwrap_err(),
        ActiveError::BadOrder { order: 0 }
    );
    assert_eq!(
        design_cascade(&CascadeSpec { order: 9, ..good }, &options).unwrap_err(),
        ActiveError::BadOrder { order: 9 }
    );
    let error = design_cascade(&CascadeSpec { cutoff_hz: 0.0, ..good }, &options).unwrap_err();
    assert_eq!(error, ActiveError::BadFrequency { what: "cutoff", f_hz: 0.0 });
    assert_eq!(SallenKeyLowPass::design(1e3, 0.0, 1e-9, 4.0).unwrap_err(), ActiveError::BadQ { q: 0.0 });
    assert_eq!(
        SallenKeyLowPass::design(-1.0, 0.7, 1e-9, 4.0).unwrap_err(),
        ActiveError::BadFrequency { what: "f0", f_hz: -1.0 }
    );
    let error = MultipleFeedbackLowPass::design(1e3, 2.0, 1.0, 1e-9, 31.9).unwrap_err();
    assert_eq!(
        error,
        ActiveError::RatioTooSmall { topology: "multiple-feedback", ratio: 31.9, q: 2.0, min_ratio: 32.0 }
    );
    let op_amp = OpAmp::SinglePole { gbw_hz: 1e6, dc_gain: 1e5, output_ohms: -1.0 };
    let error = design_cascade(&good, &ActiveOptions { op_amp, ..Default::default() }).unwrap_err();
    assert!(error.to_string().contains("output resistance (Ω) -1"), "{error}");
    // A capacitor range that holds nothing for this cutoff: a typed error naming the section.
    let mut parts = ActiveParts::new(PartValues::Series(Series::E96), PartValues::Series(Series::E12));
    parts.capacitor_range = (1e-15, 2e-15);
    let error = fit_cascade(&good, &options, &parts).unwrap_err();
    assert!(matches!(error, ActiveError::NoCandidates { section: 1, .. }), "{error}");
    eprintln!("example messages: {error}");
}
