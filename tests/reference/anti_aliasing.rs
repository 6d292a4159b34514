//! Reference test: the anti-aliasing front-end workflow (`bandwright::adc`) and the thermal noise
//! it reports (`bandwright::noise`).
//!
//! Oracles, each named above its case:
//! - references.md §6 (W. Kester, ADI MT-001, "SNR = 6.02N + 1.76 dB"; the RC settling rule
//!   t = ln(2^(N+1))·τ; the computed quantisation example 12 bits at 3.3 V → 0.2326 mV rms);
//! - `tests/reference/gen_scipy_adc.py` (SciPy 1.17.1, NumPy 2.4.6, versions written into
//!   `data/scipy_adc.json`): `scipy.signal.buttord`/`cheb1ord` minimum orders of the masks, and the
//!   exact two-capacitor sampling network by `scipy.linalg.expm` with `scipy.optimize.brentq` for
//!   the settling time;
//! - closed forms derived in the comments (kT/C of an RC low-pass; charge sharing).

use bandwright::adc::{
    alignment_orders, charge_reservoir, noise_budget, plan_front_end, sampling_circuit, sampling_settling, AdcError,
    AdcInput, AdcOptions, AdcRequirement, AliasBand, AttenuationRule, Realization,
};
use bandwright::design::{Design, Part, Source, FORMAT, VERSION};
use bandwright::noise::{BOLTZMANN_J_PER_K, DEFAULT_TEMPERATURE_K};
use bandwright::{AcSystem, MethodChoice, TimeGrid, TimeResponse};
use serde::Deserialize;

/// The data file written by gen_scipy_adc.py.
#[derive(Debug, Deserialize)]
struct Data {
    scipy_version: String,
    masks: Vec<MaskCase>,
    settling: Vec<SettlingCase>,
}

#[derive(Debug, Deserialize)]
struct MaskCase {
    name: String,
    band_hz: f64,
    sample_rate_hz: f64,
    alias: String,
    bits: u32,
    rule: String,
    attenuation_db: f64,
    droop_db: f64,
    buttord_order: usize,
    cheb1ord_order: usize,
}

#[derive(Debug, Deserialize)]
struct SettlingCase {
    name: String,
    r_ohms: f64,
    cf_f: f64,
    rsw_ohms: f64,
    cs_f: f64,
    bits: u32,
    eigenvalues: Vec<f64>,
    settling_time_s: f64,
    samples: Vec<(f64, f64)>,
}

fn data() -> Data {
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/reference/data/scipy_adc.json");
    let text = std::fs::read_to_string(path).unwrap_or_else(|e| panic!("cannot read {path}: {e}"));
    let data: Data = serde_json::from_str(&text).unwrap_or_else(|e| panic!("cannot parse {path}: {e}"));
    assert_eq!(data.scipy_version, "1.17.1");
    data
}

fn input() -> AdcInput {
    AdcInput { sampling_capacitance_f: 20e-12, switch_ohms: 500.0, acquisition_s: 2e-6 }
}

fn requirement(band_hz: f64, sample_rate_hz: f64, bits: u32, rule: AttenuationRule, droop_db: f64) -> AdcRequirement {
    AdcRequirement {
        sample_rate_hz,
        band_hz,
        bits,
        full_scale_v: 3.3,
        rule,
        alias_band: AliasBand::FirstAlias,
        max_droop_db: droop_db,
        source_ohms: 0.0,
        input: input(),
    }
}

fn requirement_of(case: &MaskCase) -> AdcRequirement {
    let rule = match case.rule.as_str() {
        "snr" => AttenuationRule::SnrFormula,
        "half_lsb" => AttenuationRule::HalfLsb,
        _ => AttenuationRule::Explicit { db: case.attenuation_db },
    };
    let alias_band = if case.alias == "nyquist" { AliasBand::Nyquist } else { AliasBand::FirstAlias };
    AdcRequirement { alias_band, ..requirement(case.band_hz, case.sample_rate_hz, case.bits, rule, case.droop_db) }
}

/// A single RC low-pass from an ideal source: R from `in` to `out`, C from `out` to ground.
fn rc_design(r: f64, c: f64) -> Design {
    Design {
        format: FORMAT.to_string(),
        version: VERSION,
        name: "rc".to_string(),
        note: String::new(),
        source: Source { node: "in".to_string(), resistance: 0.0, amplitude: 1.0 },
        load: None,
        output: "out".to_string(),
        elements: vec![
            Part::Resistor { reference: "R1".to_string(), value: r, nodes: ["in".to_string(), "out".to_string()] },
            Part::Capacitor {
                reference: "C1".to_string(),
                value: c,
                nodes: ["out".to_string(), "0".to_string()],
                series_resistance: None,
            },
        ],
        tolerances: Default::default(),
    }
}

fn check(got: f64, expected: f64, rtol: f64, what: &str) {
    let error = ((got - expected) / expected).abs();
    assert!(
        error <= rtol,
        "{what}: got {got:.12e}, expected {expected:.12e} (relative error {error:.2e} > {rtol:.0e})"
    );
}

// ---------------------------------------------------------------------------------------------
// Attenuation rules

#[test]
fn snr_rule_matches_the_section_6_table() {
    // Source: references.md §6, table "SNR 6.02N+1.76 (exact) dB", printed to 3 decimals → atol 5e-4 dB.
    for (bits, exact) in
        [(8, 49.926), (10, 61.967), (12, 74.008), (14, 86.049), (16, 98.091), (20, 122.173), (24, 146.255)]
    {
        let got = AttenuationRule::SnrFormula.attenuation_db(bits);
        assert!((got - exact).abs() <= 5e-4, "{bits} bits: {got} vs {exact}");
    }
    // Source: references.md §6: 12 bits → 74.0 dB (the "6.02·N + 1.76" reading, 2 decimals there: 74.00).
    assert!((AttenuationRule::SnrFormula.attenuation_db(12) - 74.00).abs() < 0.01);
}

#[test]
fn half_lsb_rule_is_6_02_times_n_plus_1() {
    // Source: references.md §6, "the stricter version uses 6.02(N+1) dB (½ LSB)": 6.02·13 = 78.26,
    // exact 20·log10(2^13) = 78.268 dB (78.3 dB to one decimal).
    let got = AttenuationRule::HalfLsb.attenuation_db(12);
    assert!((got - 78.3).abs() < 0.05, "{got}");
    assert!((got - 6.02 * 13.0).abs() < 0.01, "{got}");
    assert!((got - 20.0 * 8192f64.log10()).abs() < 1e-12);
}

// ---------------------------------------------------------------------------------------------
// Minimum orders through the workflow

#[test]
fn minimum_orders_match_buttord_and_cheb1ord() {
    // Source: scipy.signal.buttord / cheb1ord (analog=True), gen_scipy_adc.py. The first case is
    // references.md §6: buttord(1, 10, 3, 74, analog=True) = 4 (here 1 kHz and 10 kHz).
    let data = data();
    assert_eq!(data.masks[0].buttord_order, 4, "the §6 example as scipy gives it");
    for case in &data.masks {
        let req = requirement_of(case);
        assert!((req.rule.attenuation_db(req.bits) - case.attenuation_db).abs() < 1e-9, "{}: rule", case.name);
        let orders = alignment_orders(&req).unwrap();
        let find = |name: &str| orders.iter().find(|o| o.alignment == name).unwrap();
        for (name, scipy_order) in [("butterworth", case.buttord_order), ("chebyshev", case.cheb1ord_order)] {
            let ours = find(name);
            if scipy_order <= 8 {
                assert_eq!(ours.order, Some(scipy_order), "{}: {name}", case.name);
            } else {
                // Above our highest order: say so and name 8 as the closest.
                assert_eq!(ours.order, None, "{}: {name}", case.name);
                assert_eq!(ours.closest_order, Some(8), "{}: {name}", case.name);
            }
        }
        eprintln!(
            "{}: {}",
            case.name,
            orders
                .iter()
                .map(|o| format!("{} {:?} (closest {:?})", o.alignment, o.order, o.closest_order))
                .collect::<Vec<_>>()
                .join(", ")
        );
    }
}

#[test]
fn the_section_6_scenario_runs_end_to_end() {
    // Source: references.md §6 scenario (1 kHz band, alias at 10 kHz, 3 dB, 12-bit SNR rule); the
    // Butterworth order against buttord = 4. The recommendation follows the stated rule: lowest
    // order of any alignment, so it must not exceed 4, and the ideal design must meet the mask.
    let data = data();
    let case = data.masks.iter().find(|c| c.name == "section6_example_snr").unwrap();
    let req = requirement_of(case);
    for realization in [Realization::Auto, Realization::Active] {
        let options = AdcOptions { realization, ..AdcOptions::default() };
        let report = plan_front_end(&req, &options).unwrap();
        let rec = &report.recommendation;
        eprintln!(
            "{realization:?}: {} order {} fc {:.2} Hz as {:?}; ideal {:.2} dB at alias, {:.2} dB at Nyquist; fitted {:.2} / {:.2} dB, droop {:.3} dB, meets {}; sampling settles in {:?} s (acq {} s); filter step {:?} s; reservoir {:?}; noise total {:.4} LSB; delay dc {:.3e} s spread {:.3e} s",
            rec.alignment,
            rec.order,
            rec.cutoff_hz,
            rec.realization,
            report.ideal.first_alias_attenuation_db,
            report.ideal.nyquist_attenuation_db,
            report.fitted.first_alias_attenuation_db,
            report.fitted.nyquist_attenuation_db,
            report.fitted.passband_droop_db,
            report.fitted.meets_mask,
            report.sampling.settling_time_s,
            report.sampling.acquisition_s,
            report.filter_step.settling_time_s,
            report.charge_reservoir.map(|c| (c.ratio, c.droop_lsb)),
            report.noise.total_analog.lsb,
            report.group_delay.dc_s,
            report.group_delay.spread_s,
        );
        assert!(rec.order <= case.buttord_order);
        let butterworth = report.orders.iter().find(|o| o.alignment == "butterworth").unwrap();
        assert_eq!(butterworth.order, Some(4));
        assert!(report.ideal.meets_mask);
        assert!(report.ideal.first_alias_attenuation_db >= case.attenuation_db - 1e-9);
        // The named frequencies: 10 kHz (fs − f_band) and 5.5 kHz (fs/2), attenuation lower at the
        // lower frequency of a low-pass.
        assert_eq!(report.stopband_edge_hz, 10e3);
        assert!(report.ideal.nyquist_attenuation_db < report.ideal.first_alias_attenuation_db);
        if realization == Realization::Active {
            assert_eq!(rec.realization, Realization::Active);
            assert!(report.charge_reservoir.is_none());
        }
        let json = serde_json::to_value(&report).unwrap();
        assert!(json["noise"]["quantization"]["rms_v"].as_f64().unwrap() > 0.0);
    }
}

// ---------------------------------------------------------------------------------------------
// Sampling-input settling

#[test]
fn rc_into_a_sampling_capacitor_settles_as_the_exact_two_capacitor_network() {
    // Source: scipy.linalg.expm of the two-capacitor network and scipy.optimize.brentq for the
    // settling time (gen_scipy_adc.py). The state equations, by KCL (derived here):
    //   Cf·u′ = −u/R − (u − w)/Rsw,   Cs·w′ = (u − w)/Rsw,   u(0) = 0, w(0) = −1 (full scale),
    // with u on the filter capacitor (R to ground through the shorted source) and w the voltage on
    // the sampling capacitor. Our circuit's output y = 1 + w (module docs of adc).
    // Tolerance: both sides are exact up to rounding (pole–residue vs matrix exponential); the
    // settling times agree to 1e-9 relative, which allows for brentq's stopping rule.
    for case in data().settling {
        let design = rc_design(case.r_ohms, case.cf_f);
        let adc_input = AdcInput { sampling_capacitance_f: case.cs_f, switch_ohms: case.rsw_ohms, acquisition_s: 1.0 };
        let settling = sampling_settling(&design, &adc_input, case.bits).unwrap();
        let got = settling.settling_time_s.unwrap();
        eprintln!(
            "{}: settles in {got:.9e} s (scipy {:.9e} s), exact path {}",
            case.name, case.settling_time_s, settling.exact
        );
        check(got, case.settling_time_s, 1e-9, &case.name);
        check(settling.tolerance, 2f64.powi(-(case.bits as i32 + 1)), 1e-15, "½ LSB");
        // The waveform at the sampled times.
        let (circuit, probe) = sampling_circuit(&design, &adc_input).unwrap();
        let mut system = AcSystem::new(&circuit, &probe);
        let time = TimeResponse::new(&mut system, MethodChoice::Automatic).unwrap();
        for (t, w) in &case.samples {
            let grid = TimeGrid::new(*t, 2).unwrap();
            let y = time.step(&grid).unwrap()[1];
            assert!((y - 1.0 - w).abs() < 1e-10, "{} at {t:e} s: {} vs {w}", case.name, y - 1.0);
        }
        // Lumped limit (R ≫ Rsw): the fast pole is the charge sharing of Cs and Cf through Rsw,
        // τ = Rsw·Cs·Cf/(Cs + Cf) (two capacitors in series seen by Rsw; derived here), and the
        // error then rests at −Cs/(Cs + Cf), the charge-sharing drop of the reservoir check.
        if case.r_ohms >= 1e6 {
            let tau = case.rsw_ohms * case.cs_f * case.cf_f / (case.cs_f + case.cf_f);
            let share = case.cs_f / (case.cs_f + case.cf_f);
            // The scipy eigenvalue differs from −1/τ by O(τ/(R·(Cs + Cf))) ≈ 2e−7 here.
            check(-1.0 / case.eigenvalues[0], tau, 1e-6, "τ of charge sharing (scipy eigenvalue)");
            // The fast phase, lumped: w(t) = −Cs/(Cs + Cf) − Cf/(Cs + Cf)·e^(−t/τ); the scipy
            // samples at 0.5, 1 and 2 τ (the last three) follow it to the slow pole's drift,
            // 2τ/(R·(Cs + Cf)) ≈ 3e−6 of the plateau.
            for (t, w) in &case.samples[4..] {
                let lumped = -share - (1.0 - share) * (-t / tau).exp();
                assert!((w - lumped).abs() < 1e-5 * share, "{} at {t:e} s: {w} vs lumped {lumped}", case.name);
            }
            let reservoir = charge_reservoir(&design, &adc_input, case.bits).unwrap();
            check(reservoir.droop_fraction, share, 1e-15, "ΔV/V");
            let plateau = time.step(&TimeGrid::new(40.0 * tau, 2).unwrap()).unwrap()[1] - 1.0;
            // At 40 τ the fast term is e^−40 ≈ 4e−18; the slow pole has moved the plateau by
            // 40·τ/(R·(Cs + Cf)) ≈ 7e−5 of itself.
            assert!((plateau + share).abs() < 1e-4 * share, "{plateau} vs {}", -share);
            assert!(reservoir.rule_met, "Cf = 10·Cs meets the 10× rule exactly");
        }
    }
}

#[test]
fn an_ideal_driver_settles_in_n_plus_1_ln2_time_constants() {
    // Source: references.md §6: RC settling to ½ LSB takes (N + 1)·ln 2·τ; e.g. 9.011 τ at 12 bits.
    // An active design's ideal op-amp output drives Rsw·Cs alone, so τ = Rsw·Cs.
    let req = AdcRequirement { input: input(), ..requirement(5e3, 100e3, 12, AttenuationRule::SnrFormula, 0.5) };
    let options = AdcOptions { realization: Realization::Active, ..AdcOptions::default() };
    let report = plan_front_end(&req, &options).unwrap();
    let tau = req.input.switch_ohms * req.input.sampling_capacitance_f;
    let got = report.sampling.settling_time_s.unwrap() / tau;
    assert!((got - 9.011).abs() < 5e-4, "{got} τ");
    // 2 µs of acquisition against 9.011·10 ns.
    assert!(report.sampling.pass && report.sampling.margin_s.unwrap() > 0.0);
}

// ---------------------------------------------------------------------------------------------
// Noise

#[test]
fn rc_output_noise_is_kt_over_c_and_the_budget_adds_up() {
    // Closed form (derived, common practice): ∫₀^∞ 4kTR/(1 + (2πfRC)²) df = 4kTR·(π/2)/(2πRC) = kT/C,
    // independent of R. Temperature 300 K (common practice), k exact (2019 SI).
    let kt = BOLTZMANN_J_PER_K * DEFAULT_TEMPERATURE_K;
    let req = requirement(1e3, 48e3, 12, AttenuationRule::SnrFormula, 1.0);
    for (r, c) in [(1e3, 10e-9), (22e3, 10e-9), (1e3, 1e-6)] {
        let budget = noise_budget(&rc_design(r, c), &req, DEFAULT_TEMPERATURE_K).unwrap();
        let total = budget.resistors_total.unwrap();
        check(total.rms_v * total.rms_v, kt / c, 1e-9, "kT/C of the RC");
        // Band-limited: 4kTR·fc·atan(B/fc) (calculus, from memory).
        let fc = 1.0 / (std::f64::consts::TAU * r * c);
        let band = 4.0 * kt * r * fc * (req.band_hz / fc).atan();
        check(budget.resistors_in_band.rms_v.powi(2), band, 1e-9, "in-band");
        // kT/Cs of the sampling capacitor.
        check(budget.kt_over_c.rms_v, (kt / req.input.sampling_capacitance_f).sqrt(), 1e-15, "kT/Cs");
        // Total analog noise: √(filter total + kT/Cs).
        check(budget.total_analog.rms_v.powi(2), kt / c + kt / req.input.sampling_capacitance_f, 1e-9, "total");
        eprintln!(
            "R {r} C {c}: total {:.4e} V rms = {:.4} LSB, kT/Cs {:.4e} V, verdict {:?}",
            total.rms_v, total.lsb, budget.kt_over_c.rms_v, budget.verdict
        );
    }
    // Source: references.md §6, computed example: 12 bits at 3.3 V → LSB 0.8057 mV, 0.2326 mV rms
    // (4 digits → rtol 5e-4).
    let budget = noise_budget(&rc_design(1e3, 10e-9), &req, DEFAULT_TEMPERATURE_K).unwrap();
    check(budget.lsb_v, 0.8057e-3, 5e-4, "LSB");
    check(budget.quantization.rms_v, 0.2326e-3, 5e-4, "LSB/√12");
}

// ---------------------------------------------------------------------------------------------
// Errors

#[test]
fn a_sample_rate_below_twice_the_band_names_both_values() {
    // Common practice (sampling theorem): fs must exceed 2·f_band.
    let req = requirement(30e3, 48e3, 16, AttenuationRule::SnrFormula, 0.1);
    let error = plan_front_end(&req, &AdcOptions::default()).unwrap_err();
    assert_eq!(error, AdcError::SampleRateTooLow { sample_rate_hz: 48e3, band_hz: 30e3 });
    let text = error.to_string();
    assert!(text.contains("48000 Hz") && text.contains("30000 Hz") && text.contains("60000 Hz"), "{text}");
}

#[test]
fn zero_bits_are_refused() {
    let req = requirement(1e3, 48e3, 0, AttenuationRule::SnrFormula, 0.1);
    let error = plan_front_end(&req, &AdcOptions::default()).unwrap_err();
    assert_eq!(error, AdcError::BadBits { bits: 0 });
    assert!(error.to_string().contains("0 bits"));
}

#[test]
fn a_mask_no_order_up_to_8_meets_names_the_closest_order() {
    // 16 bits (98.09 dB) at 1.2·f_band with 0.1 dB droop: Chebyshev I would need
    // acosh(√((10^9.809 − 1)/(10^0.01 − 1)))/acosh(1.2) ≈ 22 orders (closed form, references §3/mask docs).
    let req = requirement(1e3, 2.2e3, 16, AttenuationRule::SnrFormula, 0.1);
    let error = plan_front_end(&req, &AdcOptions::default()).unwrap_err();
    let AdcError::Unreachable { closest_order, closest_alignment, .. } = &error else {
        panic!("expected Unreachable, got {error:?}")
    };
    assert_eq!(*closest_order, 8);
    let text = error.to_string();
    assert!(
        text.contains("no order up to 8") && text.contains("order 8") && text.contains(closest_alignment),
        "{text}"
    );
    // A passive RC ladder can make only real-pole alignments: the §6 scenario with 0.1 dB droop is
    // beyond them, and the error says which one came closest.
    let req = requirement(1e3, 11e3, 12, AttenuationRule::SnrFormula, 0.1);
    let options = AdcOptions { realization: Realization::PassiveRc, ..AdcOptions::default() };
    match plan_front_end(&req, &options) {
        Err(AdcError::Unreachable { closest_alignment, .. }) => assert_eq!(closest_alignment, "critical"),
        Ok(report) => assert_eq!(report.recommendation.alignment, "critical"),
        Err(other) => panic!("{other}"),
    }
}
