//! Reference test: step and impulse responses (`bandwright::transient`) against closed forms and
//! against scipy.signal.
//!
//! (a) First-order RC: y = 1 − e^(−t/RC); settling to ½ LSB of N bits in ln(2^(N+1)) time
//!     constants and to 1 LSB in N·ln 2, against the formula (exact, [`EXACT_RTOL`]) and against
//!     the 3-decimal table of references.md §6 (half a unit of the last digit, 5e-4 τ).
//! (b) Series RLC low-pass, ζ = 0.1 … 0.9: overshoot exp(−πζ/√(1 − ζ²)) and peak time
//!     π/(ω0·√(1 − ζ²)) ([`EXACT_RTOL`]).
//! (c) Butterworth, Bessel (norm='mag') and Chebyshev (0.5 dB, 1 dB) orders 2…8, synthesized as
//!     doubly terminated LC ladders by the core (`synthesize_ladder`, 50 Ω, 1 kHz), against
//!     `tests/reference/gen_scipy_steps.py` (scipy.signal.step/impulse on buttap, besselap,
//!     cheb1ap). The ladder's H is scipy's H times a constant (1/2 for equal terminations; for
//!     even-order Chebyshev, which has the natural load ratio r = RL/Rs, √r/2), so the
//!     comparison is of y(t)/y(∞) with t scaled by ωc = 2π·1 kHz, and the ladder's DC gain is
//!     checked against that constant.
//! (d) The integrator against the pole–residue path on distinct-pole circuits, against the
//!     closed form 1 − (1 + t/τ)·e^(−t/τ) on two identical buffered RC stages (a double pole),
//!     and against the Erlang closed form on critically damped LC ladders, where the modal form
//!     refuses its defective basis and the integrator is chosen automatically.
//! (e) Bad input gets typed errors.
//!
//! Run with `--nocapture` to see the worst deviations each test measured.

use bandwright::circuit::{CircuitBuilder, Gain};
use bandwright::ladder::{synthesize_ladder, FirstElement, LadderOptions, Termination};
use bandwright::synthesis::{Alignment, Band, BesselNormalization, ResponseType};
use bandwright::{
    step_response, AcSystem, Method, MethodChoice, ModalError, Probe, SettleTolerance, Span, TimeGrid, TimeResponse,
    TransientError, TransientOptions,
};
use serde::Deserialize;
use std::f64::consts::PI;
use std::sync::OnceLock;

/// Both sides exact formulas in double precision; the core refines crossings by bisection to the
/// last bit, so what remains is the rounding of the residues (measured below 1e-12).
const EXACT_RTOL: f64 = 1e-9;

/// A 3-decimal table: half a unit of the last digit, in time constants.
const TABLE_ATOL: f64 = 5e-4;

/// Against scipy: both sides are exact in double precision (scipy's matrix exponential, our
/// residues of a ladder synthesized to about 1e-14 and verified by the modal self-check to
/// 1e-9). Step samples y/y(∞) to [`SCIPY_STEP_ATOL`] (absolute, in units of the final step),
/// the impulse response h/y(∞) (in units of ωc) to [`SCIPY_IMPULSE_ATOL`], overshoot to
/// [`SCIPY_OVERSHOOT_ATOL_PCT`] percentage points, crossing times (rise, settling, peak) to
/// [`SCIPY_TIME_RTOL`] relative (scipy's brentq runs to 1e-13 s on its side).
const SCIPY_STEP_ATOL: f64 = 1e-8;
/// See [`SCIPY_STEP_ATOL`].
const SCIPY_IMPULSE_ATOL: f64 = 1e-8;
/// See [`SCIPY_STEP_ATOL`].
const SCIPY_OVERSHOOT_ATOL_PCT: f64 = 1e-6;
/// See [`SCIPY_STEP_ATOL`]. The peak time is the least sharp: y′ = 0 there, so a value error ε
/// moves it by about √ε; it gets [`PEAK_TIME_RTOL`].
const SCIPY_TIME_RTOL: f64 = 1e-7;
/// See [`SCIPY_TIME_RTOL`].
const PEAK_TIME_RTOL: f64 = 1e-5;

/// The integrator against the pole–residue path: Radau IIA of order 5 at h·|p| ≤ 0.05 has a
/// global error near 1e-10 of the step (measured); step and impulse samples to
/// [`INTEGRATOR_ATOL`] of the final step (impulse in units of the fastest pole), times to
/// [`INTEGRATOR_TIME_RTOL`].
const INTEGRATOR_ATOL: f64 = 1e-8;
/// See [`INTEGRATOR_ATOL`].
const INTEGRATOR_TIME_RTOL: f64 = 1e-6;

/// The ladders of (c): 50 Ω, 1 kHz.
const R0: f64 = 50.0;
/// See [`R0`].
const FC_HZ: f64 = 1e3;

/// The data file written by gen_scipy_steps.py.
#[derive(Debug, Deserialize)]
struct Data {
    scipy_version: String,
    numpy_version: String,
    generator: String,
    cases: Vec<Case>,
}

/// One prototype's step figures (see the generator's docstring).
#[derive(Debug, Deserialize)]
struct Case {
    name: String,
    alignment: String,
    order: usize,
    ripple_db: Option<f64>,
    dc_gain: f64,
    overshoot_pct: f64,
    peak_time_s: f64,
    t10_s: f64,
    t90_s: f64,
    rise_time_s: f64,
    settling_1pct_s: f64,
    settling_2pow13_s: f64,
    sample_t_s: Vec<f64>,
    step_values: Vec<f64>,
    impulse_values: Vec<f64>,
}

fn data() -> &'static Data {
    static DATA: OnceLock<Data> = OnceLock::new();
    DATA.get_or_init(|| {
        let text = include_str!("data/scipy_steps.json");
        let data: Data = serde_json::from_str(text).expect("scipy_steps.json parses");
        assert_eq!(data.generator, "tests/reference/gen_scipy_steps.py");
        assert!(!data.scipy_version.is_empty() && !data.numpy_version.is_empty());
        data
    })
}

fn system(builder: &CircuitBuilder) -> AcSystem {
    let circuit = builder.build().unwrap();
    let probe = Probe::new(&circuit, "V1", "out", "0").unwrap();
    AcSystem::new(&circuit, &probe)
}

fn rc(r: f64, cap: f64) -> AcSystem {
    let mut b = CircuitBuilder::new();
    b.voltage_source("V1", "in", "0", 1.0, 0.0).resistor("R1", "in", "out", r).capacitor("C1", "out", "0", cap);
    system(&b)
}

fn series_rlc(zeta: f64, l: f64, cap: f64) -> AcSystem {
    let r = 2.0 * zeta * (l / cap).sqrt();
    let mut b = CircuitBuilder::new();
    b.voltage_source("V1", "in", "0", 1.0, 0.0)
        .resistor("R1", "in", "a", r)
        .inductor("L1", "a", "out", l)
        .capacitor("C1", "out", "0", cap);
    system(&b)
}

/// A doubly terminated LC low-pass ladder from the core's synthesis, and its load ratio RL/Rs.
fn ladder(alignment: Alignment, order: usize) -> (AcSystem, f64) {
    let options = LadderOptions {
        response: ResponseType::LowPass,
        band: Band::Cutoff(FC_HZ),
        source_resistance: R0,
        first: FirstElement::Series,
        name: String::new(),
    };
    let design = synthesize_ladder(alignment, order, Termination::Equal, &options).unwrap();
    let ratio = design.load.as_ref().and_then(|l| l.resistance).unwrap() / design.source.resistance;
    let (circuit, probe) = design.to_circuit().unwrap();
    (AcSystem::new(&circuit, &probe), ratio)
}

/// The one check helper: |got − want| ≤ atol; returns the difference.
fn check(what: &str, got: f64, want: f64, atol: f64) -> f64 {
    let difference = (got - want).abs();
    assert!(difference <= atol, "{what}: {got} vs {want} (difference {difference:.3e} > {atol:.1e})");
    difference
}

// ---------------------------------------------------------------------------------------------
// (a) First-order RC.

#[test]
fn rc_settling_rise_and_values_match_the_closed_form() {
    let (r, cap) = (4.7e3, 10e-9);
    let tau = r * cap;
    let response = TimeResponse::new(&mut rc(r, cap), MethodChoice::Automatic).unwrap();
    assert!(matches!(response.method(), Method::PoleResidue { .. }));
    let settle = |tolerance| response.step_metrics(tolerance).unwrap().settling.time_s.unwrap() / tau;
    let mut worst = 0.0f64;
    // Source: references.md §6, "RC settling to N bits" table (τ for ½ LSB, 3 decimals), and the
    // formula t = ln(2^(N+1))·τ beside it.
    for (bits, table) in [(8, 6.238), (12, 9.011), (16, 11.784), (20, 14.556)] {
        let got = settle(SettleTolerance::HalfLsb { bits });
        check(&format!("½ LSB, {bits} bits vs table"), got, table, TABLE_ATOL);
        let formula = ((bits + 1) as f64) * 2.0f64.ln();
        worst = worst.max(check(&format!("½ LSB, {bits} bits vs formula"), got, formula, EXACT_RTOL * formula));
    }
    // Source: references.md §6, same table, τ for 1 LSB = N·ln 2.
    for (bits, table) in [(8, 5.545), (12, 8.318), (16, 11.090), (20, 13.863)] {
        let got = settle(SettleTolerance::Lsb { bits });
        check(&format!("1 LSB, {bits} bits vs table"), got, table, TABLE_ATOL);
        let formula = bits as f64 * 2.0f64.ln();
        worst = worst.max(check(&format!("1 LSB, {bits} bits vs formula"), got, formula, EXACT_RTOL * formula));
    }
    // Source: y = 1 − e^(−t/τ) crosses 10 % at ln(10/9)·τ and 90 % at ln 10·τ, so the 10–90 % rise
    // time is ln 9·τ (closed form).
    let metrics = response.step_metrics(SettleTolerance::Percent(2.0)).unwrap();
    let rise = metrics.rise.unwrap();
    worst = worst.max(check("rise / τ", rise.rise_time_s / tau, 9.0f64.ln(), EXACT_RTOL));
    check("t90 / τ", rise.t90_s / tau, 10.0f64.ln(), EXACT_RTOL);
    // Source: settling to 2 % of a single pole, ln 50·τ (closed form, the "4 τ" of common practice).
    check("2 % / τ", metrics.settling.time_s.unwrap() / tau, 50.0f64.ln(), EXACT_RTOL);
    assert_eq!((metrics.peak, metrics.overshoot_pct), (None, Some(0.0)));
    // Source: the closed form y and h = e^(−t/τ)/τ on a grid.
    let grid = TimeGrid::new(12.0 * tau, 1000).unwrap();
    let (step, impulse) = (response.step(&grid).unwrap(), response.impulse(&grid).unwrap());
    for (k, t) in grid.times().into_iter().enumerate() {
        worst = worst.max(check(&format!("y({t})"), step[k], -(-t / tau).exp_m1(), EXACT_RTOL));
        worst = worst.max(check(&format!("h({t})·τ"), impulse[k] * tau, (-t / tau).exp(), EXACT_RTOL));
    }
    eprintln!("RC: worst deviation from the closed forms {worst:.2e}");
}

// ---------------------------------------------------------------------------------------------
// (b) Second order.

#[test]
fn series_rlc_overshoot_matches_the_second_order_formula() {
    let (l, cap): (f64, f64) = (10e-3, 100e-9);
    let omega0 = 1.0 / (l * cap).sqrt();
    let mut worst = 0.0f64;
    for k in 1..=9 {
        let zeta = k as f64 / 10.0;
        let response = TimeResponse::new(&mut series_rlc(zeta, l, cap), MethodChoice::Automatic).unwrap();
        let metrics = response.step_metrics(SettleTolerance::Percent(1.0)).unwrap();
        let damped = (1.0 - zeta * zeta).sqrt();
        // Source: second-order step overshoot exp(−πζ/√(1 − ζ²)) and peak time π/(ω0·√(1 − ζ²))
        // (Ogata, Modern Control Engineering, transient-response specifications; from memory).
        let overshoot = 100.0 * (-PI * zeta / damped).exp();
        let got = metrics.overshoot_pct.unwrap();
        worst =
            worst.max(check(&format!("ζ = {zeta}: overshoot %"), got, overshoot, EXACT_RTOL * overshoot) / overshoot);
        let peak = metrics.peak.unwrap();
        let peak_time = PI / (omega0 * damped);
        // The peak time is where y′ = 0: a value error ε moves it by √ε (PEAK_TIME_RTOL).
        check(&format!("ζ = {zeta}: peak time"), peak.time_s, peak_time, PEAK_TIME_RTOL * peak_time);
        check(&format!("ζ = {zeta}: peak value"), peak.value, 1.0 + overshoot / 100.0, EXACT_RTOL);
        // Source: H = ω0²/(s² + 2ζω0·s + ω0²) has DC group delay 2ζ/ω0 (closed form, −H′(0)/H(0)).
        check(&format!("ζ = {zeta}: dc delay"), metrics.dc_group_delay_s.unwrap() * omega0, 2.0 * zeta, EXACT_RTOL);
    }
    eprintln!("series RLC: worst relative overshoot deviation {worst:.2e}");
}

// ---------------------------------------------------------------------------------------------
// (c) Prototype ladders against scipy.signal.

/// Compares every case of `alignment_name` with the ladder `build(order, ripple)` gives.
fn check_against_scipy(alignment_name: &str, ripple: Option<f64>, build: impl Fn(usize) -> Alignment) {
    let omega_c = 2.0 * PI * FC_HZ;
    let cases: Vec<&Case> =
        data().cases.iter().filter(|c| c.alignment == alignment_name && c.ripple_db == ripple).collect();
    assert_eq!(cases.len(), 7, "{alignment_name} {ripple:?}: orders 2 to 8");
    let (mut worst_value, mut worst_overshoot, mut worst_time) = (0.0f64, 0.0f64, 0.0f64);
    for case in cases {
        let (mut system, ratio) = ladder(build(case.order), case.order);
        let response = TimeResponse::new(&mut system, MethodChoice::Automatic).unwrap();
        assert!(matches!(response.method(), Method::PoleResidue { .. }), "{}: {:?}", case.name, response.method());
        let name = &case.name;
        // The ladder's DC gain: scipy's H(0) times √r/2 (S21 = 2·√(Rs/RL)·V_L/E).
        let final_value = response.final_value();
        check(&format!("{name}: DC gain"), final_value, case.dc_gain * ratio.sqrt() / 2.0, 1e-12);

        let times: Vec<f64> = case.sample_t_s.iter().map(|t| t / omega_c).collect();
        for (k, &t) in times.iter().enumerate() {
            let grid = TimeGrid::new(t, 2).unwrap();
            let y = response.step(&grid).unwrap()[1] / final_value;
            let h = response.impulse(&grid).unwrap()[1] / final_value / omega_c;
            let t_proto = case.sample_t_s[k];
            worst_value = worst_value.max(check(
                &format!("{name}: y({t_proto})"),
                y,
                case.step_values[k] / case.dc_gain,
                SCIPY_STEP_ATOL,
            ));
            worst_value = worst_value.max(check(
                &format!("{name}: h({t_proto})"),
                h,
                case.impulse_values[k] / case.dc_gain,
                SCIPY_IMPULSE_ATOL,
            ));
        }
        let metrics = response.step_metrics(SettleTolerance::Percent(1.0)).unwrap();
        worst_overshoot = worst_overshoot.max(check(
            &format!("{name}: overshoot %"),
            metrics.overshoot_pct.unwrap(),
            case.overshoot_pct,
            SCIPY_OVERSHOOT_ATOL_PCT,
        ));
        let time = |what: &str, got_s: f64, want: f64, rtol: f64| {
            check(&format!("{name}: {what}"), got_s * omega_c, want, rtol * want) / want
        };
        let rise = metrics.rise.unwrap();
        worst_time = worst_time.max(time("rise", rise.rise_time_s, case.rise_time_s, SCIPY_TIME_RTOL));
        worst_time = worst_time.max(time("t10", rise.t10_s, case.t10_s, SCIPY_TIME_RTOL));
        worst_time = worst_time.max(time("t90", rise.t90_s, case.t90_s, SCIPY_TIME_RTOL));
        worst_time = worst_time.max(time(
            "1 % settling",
            metrics.settling.time_s.unwrap(),
            case.settling_1pct_s,
            SCIPY_TIME_RTOL,
        ));
        time("peak", metrics.peak.unwrap().time_s, case.peak_time_s, PEAK_TIME_RTOL);
        // ½ LSB of 12 bits is 2^−13.
        let metrics = response.step_metrics(SettleTolerance::HalfLsb { bits: 12 }).unwrap();
        worst_time = worst_time.max(time(
            "½ LSB 12-bit settling",
            metrics.settling.time_s.unwrap(),
            case.settling_2pow13_s,
            SCIPY_TIME_RTOL,
        ));
    }
    eprintln!(
        "{alignment_name} {ripple:?}: worst sample deviation {worst_value:.2e}, overshoot {worst_overshoot:.2e} points, relative time {worst_time:.2e}"
    );
}

// Source: scipy.signal.step/impulse on scipy.signal.buttap(n), n = 2…8
// (tests/reference/gen_scipy_steps.py, data/scipy_steps.json).
#[test]
fn butterworth_steps_match_scipy() {
    check_against_scipy("butterworth", None, |_| Alignment::Butterworth);
}

// Source: scipy.signal.step/impulse on scipy.signal.besselap(n, norm='mag'), n = 2…8
// (tests/reference/gen_scipy_steps.py, data/scipy_steps.json).
#[test]
fn bessel_steps_match_scipy() {
    check_against_scipy("bessel", None, |_| Alignment::Bessel { normalization: BesselNormalization::Magnitude });
}

// Source: scipy.signal.step/impulse on scipy.signal.cheb1ap(n, 0.5), n = 2…8
// (tests/reference/gen_scipy_steps.py, data/scipy_steps.json).
#[test]
fn chebyshev_0p5db_steps_match_scipy() {
    check_against_scipy("chebyshev", Some(0.5), |_| Alignment::Chebyshev { ripple_db: 0.5 });
}

// Source: scipy.signal.step/impulse on scipy.signal.cheb1ap(n, 1.0), n = 2…8
// (tests/reference/gen_scipy_steps.py, data/scipy_steps.json).
#[test]
fn chebyshev_1db_steps_match_scipy() {
    check_against_scipy("chebyshev", Some(1.0), |_| Alignment::Chebyshev { ripple_db: 1.0 });
}

// ---------------------------------------------------------------------------------------------
// (d) The integrator.

/// Runs both methods on `system` over the automatic span and compares them; returns the worst
/// step deviation in units of the final step.
fn check_integrator(what: &str, system: &mut AcSystem) -> f64 {
    let exact = TimeResponse::new(system, MethodChoice::Automatic).unwrap();
    assert!(matches!(exact.method(), Method::PoleResidue { .. }), "{what}: {:?}", exact.method());
    let integrated = TimeResponse::new(system, MethodChoice::Integration).unwrap();
    assert_eq!(integrated.method(), Method::Integration { refused: None });
    let final_value = exact.final_value();
    check(&format!("{what}: final value"), integrated.final_value(), final_value, 1e-12 * final_value.abs());
    let grid = exact.grid(Span::Automatic, 1000).unwrap();
    let (a, b) = (exact.step(&grid).unwrap(), integrated.step(&grid).unwrap());
    let mut worst = 0.0f64;
    for (k, t) in grid.times().into_iter().enumerate() {
        worst = worst.max(check(&format!("{what}: y({t})"), b[k] / final_value, a[k] / final_value, INTEGRATOR_ATOL));
    }
    // The impulse response in units of the final step times the time scale of the DC delay.
    let scale = exact.dc_group_delay_s().unwrap() / final_value;
    let (a, b) = (exact.impulse(&grid).unwrap(), integrated.impulse(&grid).unwrap());
    for (k, t) in grid.times().into_iter().enumerate() {
        check(&format!("{what}: h({t})"), b[k] * scale, a[k] * scale, INTEGRATOR_ATOL);
    }
    for tolerance in [SettleTolerance::Percent(1.0), SettleTolerance::HalfLsb { bits: 16 }] {
        let (m, n) = (exact.step_metrics(tolerance).unwrap(), integrated.step_metrics(tolerance).unwrap());
        check(&format!("{what}: overshoot %"), n.overshoot_pct.unwrap(), m.overshoot_pct.unwrap(), 1e-6);
        let pairs = [
            ("rise", n.rise.unwrap().rise_time_s, m.rise.unwrap().rise_time_s),
            ("settling", n.settling.time_s.unwrap(), m.settling.time_s.unwrap()),
        ];
        for (name, got, want) in pairs {
            check(&format!("{what}: {name} ({tolerance:?})"), got, want, INTEGRATOR_TIME_RTOL * want);
        }
        check(
            &format!("{what}: dc delay"),
            n.dc_group_delay_s.unwrap(),
            m.dc_group_delay_s.unwrap(),
            1e-9 * scale.abs(),
        );
    }
    worst
}

// Source: the pole–residue path of bandwright::transient, itself checked against closed forms
// and scipy above (an independent method: Radau IIA integration of the MNA pencil).
#[test]
fn the_integrator_matches_poles_and_residues_on_distinct_poles() {
    let mut worst = check_integrator("RC", &mut rc(1e3, 1e-6));
    // Source: as above.
    worst = worst.max(check_integrator("RLC ζ = 0.2", &mut series_rlc(0.2, 1e-3, 1e-6)));
    // Source: as above.
    worst = worst.max(check_integrator("Butterworth 5", &mut ladder(Alignment::Butterworth, 5).0));
    // Source: as above.
    worst = worst.max(check_integrator("Chebyshev 1 dB 6", &mut ladder(Alignment::Chebyshev { ripple_db: 1.0 }, 6).0));
    eprintln!("integrator vs pole–residue: worst step deviation {worst:.2e} of the final step");
}

// Source: two identical RC stages buffered by a unity-gain amplifier, H = 1/(1 + sτ)², whose
// step response is 1 − (1 + t/τ)·e^(−t/τ) and impulse response t/τ²·e^(−t/τ) (closed form).
#[test]
fn the_integrator_matches_the_closed_form_of_a_double_pole() {
    let (r, cap) = (2.2e3, 47e-9);
    let tau = r * cap;
    let mut b = CircuitBuilder::new();
    b.voltage_source("V1", "in", "0", 1.0, 0.0)
        .resistor("R1", "in", "a", r)
        .capacitor("C1", "a", "0", cap)
        .vcvs("E1", "b", "0", "a", "0", Gain::Constant(1.0))
        .resistor("R2", "b", "out", r)
        .capacitor("C2", "out", "0", cap);
    let mut system = system(&b);
    let response = TimeResponse::new(&mut system, MethodChoice::Automatic).unwrap();
    // The modal form refuses a double pole or is kept; either way the figures must hold. Forced
    // integration must hold too.
    eprintln!("double pole, automatic method: {:?}", response.method());
    let forced = TimeResponse::new(&mut system, MethodChoice::Integration).unwrap();
    let mut worst = 0.0f64;
    for response in [&response, &forced] {
        let grid = TimeGrid::new(25.0 * tau, 1001).unwrap();
        let (step, impulse) = (response.step(&grid).unwrap(), response.impulse(&grid).unwrap());
        for (k, t) in grid.times().into_iter().enumerate() {
            let x = t / tau;
            worst = worst.max(check(&format!("y({t})"), step[k], 1.0 - (1.0 + x) * (-x).exp(), INTEGRATOR_ATOL));
            check(&format!("h({t})·τ"), impulse[k] * tau, x * (-x).exp(), INTEGRATOR_ATOL);
        }
        // Settling to ½ LSB of N bits solves (1 + x)·e^(−x) = 2^−(N+1); rise from the crossings
        // of 0.1 and 0.9; both by bisection on the closed form.
        let solve = |level: f64, low: f64, high: f64| {
            let (mut low, mut high) = (low, high);
            for _ in 0..200 {
                let mid = 0.5 * (low + high);
                if (1.0 + mid) * (-mid).exp() > level {
                    low = mid;
                } else {
                    high = mid;
                }
            }
            0.5 * (low + high)
        };
        for bits in [8, 12, 16, 20] {
            let metrics = response.step_metrics(SettleTolerance::HalfLsb { bits }).unwrap();
            let want = solve(0.5f64.powi(bits as i32 + 1), 0.0, 60.0) * tau;
            check(&format!("½ LSB {bits} bits"), metrics.settling.time_s.unwrap(), want, INTEGRATOR_TIME_RTOL * want);
        }
        let metrics = response.step_metrics(SettleTolerance::Percent(1.0)).unwrap();
        let rise = metrics.rise.unwrap();
        let want = (solve(0.1, 0.0, 60.0) - solve(0.9, 0.0, 60.0)) * tau;
        check("rise", rise.rise_time_s, want, INTEGRATOR_TIME_RTOL * want);
        assert_eq!(metrics.peak, None, "critically damped: no overshoot");
        // Source: DC group delay of 1/(1 + sτ)² is 2τ (closed form).
        check("dc delay", metrics.dc_group_delay_s.unwrap(), 2.0 * tau, 1e-9 * tau);
    }
    eprintln!("double pole: worst step deviation from the closed form {worst:.2e}");
}

// ---------------------------------------------------------------------------------------------
// (e) Bad input.

#[test]
fn bad_input_gets_typed_errors() {
    let run = |options: TransientOptions| step_response(&mut rc(1e3, 1e-6), &options).map(|_| ());
    let default = TransientOptions::default();
    assert_eq!(run(TransientOptions { points: 1, ..default }), Err(TransientError::BadPoints { points: 1 }));
    assert_eq!(
        run(TransientOptions { span: Span::Seconds(0.0), ..default }),
        Err(TransientError::BadSpan { span_s: 0.0 })
    );
    assert!(matches!(
        run(TransientOptions { span: Span::Seconds(f64::INFINITY), ..default }),
        Err(TransientError::BadSpan { .. })
    ));
    for bits in [0, 33] {
        for tolerance in [SettleTolerance::HalfLsb { bits }, SettleTolerance::Lsb { bits }] {
            assert_eq!(run(TransientOptions { tolerance, ..default }), Err(TransientError::BadBits { bits }));
        }
    }
    assert_eq!(
        run(TransientOptions { tolerance: SettleTolerance::Percent(100.0), ..default }),
        Err(TransientError::BadTolerance { value: 100.0, kind: "percent" })
    );
    assert_eq!(
        run(TransientOptions { tolerance: SettleTolerance::Fraction(0.0), ..default }),
        Err(TransientError::BadTolerance { value: 0.0, kind: "fraction" })
    );
    let text = TransientError::BadBits { bits: 33 }.to_string();
    assert!(text.contains("33 bits") && text.contains("1 to 32"), "{text}");
    // A good request on the same circuit works, with the default 1000 points.
    let good = step_response(&mut rc(1e3, 1e-6), &default).unwrap();
    assert_eq!(good.values.len(), 1000);
    assert!(good.values.iter().all(|v| v.is_finite()));
    assert!(matches!(good.method, Method::PoleResidue { .. }));
    // Source: 1 % settling of a single pole, ln 100·RC (closed form).
    let settling = good.metrics.unwrap().settling.time_s.unwrap();
    check("bundled 1 % settling", settling, 100.0f64.ln() * 1e-3, EXACT_RTOL * 1e-3);
}

// Source: a critically damped low-pass of order n is ω1ⁿ/(s + ω1)ⁿ with ω1 = ωc/√(2^(1/n) − 1)
// (−3.01 dB at ωc; the core's `Alignment::Critical`), whose step response is the Erlang
// distribution function 1 − e^(−x)·Σ_{k<n} x^k/k!, x = ω1·t (closed form, common practice).
#[test]
fn critically_damped_ladders_match_the_erlang_closed_form() {
    let omega_c = 2.0 * PI * FC_HZ;
    for n in 2..=6usize {
        let (mut system, _) = ladder(Alignment::Critical, n);
        let response = TimeResponse::new(&mut system, MethodChoice::Automatic).unwrap();
        // n coincident poles make the eigenbasis defective: the modal form refuses it and the
        // integrator takes over on its own.
        assert!(
            matches!(response.method(), Method::Integration { refused: Some(ModalError::IllConditioned { .. }) }),
            "n = {n}: {:?}",
            response.method()
        );
        let omega_1 = omega_c / (2.0f64.powf(1.0 / n as f64) - 1.0).sqrt();
        let final_value = response.final_value();
        check(&format!("n = {n}: DC gain"), final_value, 0.5, 1e-12);
        let grid = TimeGrid::new((3.0 * n as f64 + 20.0) / omega_1, 1000).unwrap();
        let step = response.step(&grid).unwrap();
        let mut worst = 0.0f64;
        for (k, t) in grid.times().into_iter().enumerate() {
            let x = omega_1 * t;
            let mut sum = 0.0;
            let mut term = 1.0;
            for j in 0..n {
                sum += term;
                term *= x / (j + 1) as f64;
            }
            let want = 1.0 - (-x).exp() * sum;
            worst = worst.max(check(&format!("n = {n}: y({t})"), step[k] / final_value, want, INTEGRATOR_ATOL));
        }
        // Settling to ½ LSB of 12 bits: the last x with e^(−x)·Σ_{k<n} x^k/k! = 2^−13, by
        // bisection on the closed form (the error decreases monotonically).
        let tail =
            |x: f64| (0..n).fold((0.0, 1.0), |(sum, term), j| (sum + term, term * x / (j + 1) as f64)).0 * (-x).exp();
        let (mut low, mut high) = (0.0, 200.0);
        for _ in 0..200 {
            let mid = 0.5 * (low + high);
            if tail(mid) > 0.5f64.powi(13) {
                low = mid;
            } else {
                high = mid;
            }
        }
        let want = 0.5 * (low + high) / omega_1;
        let metrics = response.step_metrics(SettleTolerance::HalfLsb { bits: 12 }).unwrap();
        check(
            &format!("n = {n}: ½ LSB 12-bit settling"),
            metrics.settling.time_s.unwrap(),
            want,
            INTEGRATOR_TIME_RTOL * want,
        );
        assert_eq!(metrics.peak, None, "n = {n}: critically damped, no overshoot");
        eprintln!("critical n = {n}: {:?}, worst deviation {worst:.2e}", response.method());
    }
}
