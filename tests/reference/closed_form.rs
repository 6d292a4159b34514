//! Reference test: first- and second-order RC, RL and RLC circuits swept by the core against their
//! closed-form H(jω), phase, group delay and input impedance.
//!
//! Every circuit is driven by a Thevenin source of EMF 1 V (`V1`), so H = V(out). Each closed form
//! is written out beside its circuit, together with the phase φ = arg H and the group delay
//! τ = −dφ/dω derived from it by hand.
//!
//! Tolerances. Both sides are evaluated in double precision without any interpolation; the MNA
//! systems have 2–5 unknowns. So H must agree to [`RTOL`] relative. A relative error δ in
//! H moves its argument by at most δ radians, so the phase is held to RTOL radians. The group
//! delay is a difference of terms in some circuits (it changes sign); its error scales with the
//! size of those terms, so it is held to RTOL times the sum of their magnitudes. The input
//! impedance has its own, looser bound ([`RTOL_Z_IN`]), explained there.

use bandwright::{sweep, AcSystem, CircuitBuilder, Detail, ElementKind, FrequencyGrid, Probe, Spacing};
use num_complex::Complex64;
use std::f64::consts::PI;

/// Relative tolerance of the comparison: double precision, no interpolation. Rounding in a
/// handful of operations on either side is ~1e-15; 1e-12 leaves a thousandfold margin.
const RTOL: f64 = 1e-12;

/// Relative tolerance of the input impedance. Z_in = V/I, and with an ideal source the port
/// current through a small series impedance Z_s is recovered from the difference of two nearly
/// equal node voltages, so its rounding error is about ε·|Z_in|/|Z_s|: 2.2e-16 × 31620/3.16 =
/// 2.2e-12 for the series RLC at f0/100 (measured 1.0e-12 there; ≤ 2.4e-13 in every other case).
/// 1e-10 covers that bound with margin and is still far below any physical effect.
const RTOL_Z_IN: f64 = 1e-10;

/// The closed-form values at one angular frequency.
struct Expected {
    /// V(out)/EMF.
    h: Complex64,
    /// arg H in radians, continuous along the sweep.
    phase_rad: f64,
    /// The terms whose sum is the group delay τ in seconds.
    tau_terms: Vec<f64>,
    /// The impedance seen past the source resistance, in Ω.
    z_in: Complex64,
}

fn c(re: f64, im: f64) -> Complex64 {
    Complex64::new(re, im)
}

/// The group delay of a first-order factor with time constant `t`: d/dω atan(ωt) = t/(1 + ω²t²).
fn lag(t: f64, omega: f64) -> f64 {
    t / (1.0 + (omega * t).powi(2))
}

/// Sweeps `builder`'s circuit from source `V1` to `output` two decades either side of the
/// circuit's characteristic frequencies `special_hz` (10 points per decade, plus those
/// frequencies themselves) and compares every point with `expected(ω)`.
fn check(builder: &CircuitBuilder, output: &str, special_hz: &[f64], expected: impl Fn(f64) -> Expected) {
    let circuit = builder.build().expect("valid circuit");
    let probe = Probe::new(&circuit, "V1", output, "0").expect("valid probe");
    let low = special_hz.iter().copied().fold(f64::INFINITY, f64::min) / 100.0;
    let high = special_hz.iter().copied().fold(0.0, f64::max) * 100.0;
    let mut f_hz = FrequencyGrid::log(low, high, Spacing::PerDecade(10.0)).unwrap().frequencies().to_vec();
    f_hz.extend_from_slice(special_hz);
    f_hz.sort_by(f64::total_cmp);
    f_hz.dedup();
    let grid = FrequencyGrid::list(f_hz).unwrap();
    let response = sweep(&mut AcSystem::new(&circuit, &probe), &grid, Detail::Transfer);
    assert!(response.unsolved().is_empty(), "unsolved points: {:?}", response.unsolved());

    let phases = response.phase_deg();
    let delays = response.group_delay_s();
    let impedances = response.input_impedance();
    let mut worst = [0.0f64; 4];
    for (i, (&f, h)) in grid.frequencies().iter().zip(response.transfer()).enumerate() {
        let want = expected(2.0 * PI * f);
        let h = h.unwrap();
        worst[0] = worst[0].max((h - want.h).norm() / want.h.norm());
        assert!((h - want.h).norm() <= RTOL * want.h.norm(), "H at {f} Hz: {h} vs {}", want.h);

        let phase_deg = phases[i].unwrap();
        let want_deg = want.phase_rad.to_degrees();
        worst[1] = worst[1].max((phase_deg - want_deg).abs().to_radians());
        assert!((phase_deg - want_deg).abs() <= RTOL.to_degrees(), "phase at {f} Hz: {phase_deg}° vs {want_deg}°");

        let tau = delays[i].unwrap();
        let want_tau: f64 = want.tau_terms.iter().sum();
        let scale: f64 = want.tau_terms.iter().map(|t| t.abs()).sum();
        worst[2] = worst[2].max((tau - want_tau).abs() / scale);
        assert!((tau - want_tau).abs() <= RTOL * scale, "group delay at {f} Hz: {tau} s vs {want_tau} s");

        let z = impedances[i].unwrap();
        worst[3] = worst[3].max((z - want.z_in).norm() / want.z_in.norm());
        assert!((z - want.z_in).norm() <= RTOL_Z_IN * want.z_in.norm(), "Z_in at {f} Hz: {z} vs {}", want.z_in);
    }
    // Shown with `cargo test -- --nocapture`, for the record of the accuracy actually reached.
    eprintln!(
        "worst relative errors: H {:.1e}, phase {:.1e} rad, tau {:.1e}, Z_in {:.1e}",
        worst[0], worst[1], worst[2], worst[3]
    );
}

// ---------------------------------------------------------------------------------------------
// RC low-pass: series R, shunt C, output across C.
// H = 1/(1 + jωT) with T = (Rs + R)·C; φ = −atan(ωT); τ = T/(1 + ω²T²); Z_in = R + 1/(jωC).
// With ESR r in the capacitor: H = (1 + jω·rC)/(1 + jω(Rs + R + r)C), so
// φ = atan(ω·rC) − atan(ω(Rs + R + r)C) and τ = lag((Rs + R + r)C) − lag(rC).

fn rc_low_pass(rs: f64, r: f64, cap: f64, esr: f64) -> (CircuitBuilder, Vec<f64>, impl Fn(f64) -> Expected) {
    let mut b = CircuitBuilder::new();
    b.voltage_source("V1", "in", "0", 1.0, rs).resistor("R1", "in", "out", r).add(
        "C1",
        ElementKind::Capacitor { capacitance: cap, esr },
        "out",
        "0",
    );
    let t_pole = (rs + r + esr) * cap;
    let t_zero = esr * cap;
    let mut special = vec![1.0 / (2.0 * PI * t_pole)];
    if esr > 0.0 {
        special.push(1.0 / (2.0 * PI * t_zero));
    }
    let expected = move |omega: f64| Expected {
        h: c(1.0, omega * t_zero) / c(1.0, omega * t_pole),
        phase_rad: (omega * t_zero).atan() - (omega * t_pole).atan(),
        tau_terms: vec![lag(t_pole, omega), -lag(t_zero, omega)],
        z_in: c(r + esr, -1.0 / (omega * cap)),
    };
    (b, special, expected)
}

// Source: common practice (first-order RC low-pass, fc = 1/(2πRC)).
#[test]
fn rc_low_pass_ideal_source() {
    let (b, special, expected) = rc_low_pass(0.0, 1e3, 100e-9, 0.0);
    check(&b, "out", &special, expected);
}

// Source: common practice (first-order RC low-pass; a Thevenin source resistance adds to R).
#[test]
fn rc_low_pass_thevenin_source() {
    let (b, special, expected) = rc_low_pass(600.0, 4.7e3, 3.3e-9, 0.0);
    check(&b, "out", &special, expected);
}

// Source: common practice (the ESR of the capacitor adds a zero at 1/(2π·ESR·C)).
#[test]
fn rc_low_pass_capacitor_esr() {
    let (b, special, expected) = rc_low_pass(0.0, 100.0, 1e-6, 5.0);
    check(&b, "out", &special, expected);
}

// ---------------------------------------------------------------------------------------------
// RC high-pass: series C, shunt R, output across R.
// H = jωRC/(1 + jωT) with T = (Rs + R)·C; φ = π/2 − atan(ωT); τ = T/(1 + ω²T²);
// Z_in = R + 1/(jωC).

fn rc_high_pass(rs: f64, r: f64, cap: f64) -> (CircuitBuilder, Vec<f64>, impl Fn(f64) -> Expected) {
    let mut b = CircuitBuilder::new();
    b.voltage_source("V1", "in", "0", 1.0, rs).capacitor("C1", "in", "out", cap).resistor("R1", "out", "0", r);
    let t = (rs + r) * cap;
    let expected = move |omega: f64| Expected {
        h: c(0.0, omega * r * cap) / c(1.0, omega * t),
        phase_rad: PI / 2.0 - (omega * t).atan(),
        tau_terms: vec![lag(t, omega)],
        z_in: c(r, -1.0 / (omega * cap)),
    };
    (b, vec![1.0 / (2.0 * PI * t)], expected)
}

// Source: common practice (first-order RC high-pass).
#[test]
fn rc_high_pass_ideal_source() {
    let (b, special, expected) = rc_high_pass(0.0, 10e3, 47e-9);
    check(&b, "out", &special, expected);
}

// Source: common practice (first-order RC high-pass fed from a 600 Ω Thevenin source).
#[test]
fn rc_high_pass_thevenin_source() {
    let (b, special, expected) = rc_high_pass(600.0, 10e3, 47e-9);
    check(&b, "out", &special, expected);
}

// ---------------------------------------------------------------------------------------------
// RL low-pass: series L (DCR r), shunt R, output across R.
// H = R/(Rt + jωL) with Rt = Rs + r + R; φ = −atan(ωL/Rt); τ = lag(L/Rt); Z_in = r + R + jωL.

fn rl_low_pass(rs: f64, ind: f64, dcr: f64, r: f64) -> (CircuitBuilder, Vec<f64>, impl Fn(f64) -> Expected) {
    let mut b = CircuitBuilder::new();
    b.voltage_source("V1", "in", "0", 1.0, rs)
        .add("L1", ElementKind::Inductor { inductance: ind, dcr }, "in", "out")
        .resistor("R1", "out", "0", r);
    let rt = rs + dcr + r;
    let expected = move |omega: f64| Expected {
        h: r / c(rt, omega * ind),
        phase_rad: -(omega * ind / rt).atan(),
        tau_terms: vec![lag(ind / rt, omega)],
        z_in: c(dcr + r, omega * ind),
    };
    (b, vec![rt / (2.0 * PI * ind)], expected)
}

// Source: common practice (first-order RL low-pass, fc = R/(2πL)).
#[test]
fn rl_low_pass_ideal() {
    let (b, special, expected) = rl_low_pass(0.0, 10e-3, 0.0, 100.0);
    check(&b, "out", &special, expected);
}

// Source: common practice (the inductor's DCR and the source resistance add to the loop
// resistance).
#[test]
fn rl_low_pass_inductor_dcr_and_source_resistance() {
    let (b, special, expected) = rl_low_pass(2.0, 1.5e-3, 0.35, 8.0);
    check(&b, "out", &special, expected);
}

// ---------------------------------------------------------------------------------------------
// RL high-pass: series R, shunt L (DCR r), output across the inductor.
// H = (r + jωL)/(Rt + jωL) with Rt = Rs + R + r; φ = atan(ωL/r) − atan(ωL/Rt) (π/2 − atan(ωL/Rt)
// for r = 0); τ = lag(L/Rt) − lag(L/r) (the second term vanishes for r = 0); Z_in = R + r + jωL.

fn rl_high_pass(rs: f64, r: f64, ind: f64, dcr: f64) -> (CircuitBuilder, Vec<f64>, impl Fn(f64) -> Expected) {
    let mut b = CircuitBuilder::new();
    b.voltage_source("V1", "in", "0", 1.0, rs).resistor("R1", "in", "out", r).add(
        "L1",
        ElementKind::Inductor { inductance: ind, dcr },
        "out",
        "0",
    );
    let rt = rs + r + dcr;
    let mut special = vec![rt / (2.0 * PI * ind)];
    if dcr > 0.0 {
        special.push(dcr / (2.0 * PI * ind));
    }
    let expected = move |omega: f64| {
        let (zero_phase, zero_delay) =
            if dcr > 0.0 { ((omega * ind / dcr).atan(), -lag(ind / dcr, omega)) } else { (PI / 2.0, 0.0) };
        Expected {
            h: c(dcr, omega * ind) / c(rt, omega * ind),
            phase_rad: zero_phase - (omega * ind / rt).atan(),
            tau_terms: vec![lag(ind / rt, omega), zero_delay],
            z_in: c(r + dcr, omega * ind),
        }
    };
    (b, special, expected)
}

// Source: common practice (first-order RL high-pass).
#[test]
fn rl_high_pass_ideal() {
    let (b, special, expected) = rl_high_pass(0.0, 220.0, 22e-3, 0.0);
    check(&b, "out", &special, expected);
}

// Source: common practice (the DCR leaves a floor of r/(R + r) at low frequency).
#[test]
fn rl_high_pass_inductor_dcr() {
    let (b, special, expected) = rl_high_pass(0.0, 220.0, 22e-3, 4.7);
    check(&b, "out", &special, expected);
}

// ---------------------------------------------------------------------------------------------
// Series RLC band-pass: L and C in series from the source, R to ground, output across R.
// H = R/(Rt + jX) with Rt = Rs + R and X = ωL − 1/(ωC); φ = −atan(X/Rt);
// τ = Rt·X′/(Rt² + X²) with X′ = L + 1/(ω²C); Z_in = R + jX.
// (Nilsson & Riedel, *Electric Circuits*, the series RLC band-pass section, from memory.)

fn series_rlc_band_pass(rs: f64, ind: f64, cap: f64, r: f64) -> (CircuitBuilder, Vec<f64>, impl Fn(f64) -> Expected) {
    let mut b = CircuitBuilder::new();
    b.voltage_source("V1", "in", "0", 1.0, rs)
        .inductor("L1", "in", "mid", ind)
        .capacitor("C1", "mid", "out", cap)
        .resistor("R1", "out", "0", r);
    let rt = rs + r;
    let f0 = 1.0 / (2.0 * PI * (ind * cap).sqrt());
    let expected = move |omega: f64| {
        let x = omega * ind - 1.0 / (omega * cap);
        let dx = ind + 1.0 / (omega * omega * cap);
        Expected {
            h: r / c(rt, x),
            phase_rad: -(x / rt).atan(),
            tau_terms: vec![rt * dx / (rt * rt + x * x)],
            z_in: c(r, x),
        }
    };
    (b, vec![f0], expected)
}

// Source: common practice (series RLC band-pass, f0 = 1/(2π√(LC))).
#[test]
fn series_rlc_band_pass_ideal_source() {
    let (b, special, expected) = series_rlc_band_pass(0.0, 10e-3, 100e-9, 100.0);
    check(&b, "out", &special, expected);
}

// Source: common practice (the source resistance lowers Q = ω0·L/(Rs + R)).
#[test]
fn series_rlc_band_pass_thevenin_source() {
    let (b, special, expected) = series_rlc_band_pass(50.0, 10e-3, 100e-9, 100.0);
    check(&b, "out", &special, expected);
}

// ---------------------------------------------------------------------------------------------
// Parallel RLC tank fed by a resistor: R_f from the source to `out`, then L (DCR r), C and R_p
// from `out` to ground; output across the tank.
// Y = 1/R_p + jωC + 1/(r + jωL); with R = Rs + R_f, H = 1/D where D = 1 + R·Y.
// 1/(r + jωL) = (r − jωL)/m with m = r² + ω²L², so
//   Re D = 1 + R·(1/R_p + r/m),            d Re D/dω = −R·2ωL²r/m²,
//   Im D = R·(ωC − ωL/m),                  d Im D/dω = R·(C − L(r² − ω²L²)/m²).
// Re D > 0, so φ = −atan2(Im D, Re D) is continuous, and
// τ = −dφ/dω = (Re D·Im D′ − Im D·Re D′)/|D|². Z_in = R_f + 1/Y.

fn parallel_tank(
    rs: f64,
    r_feed: f64,
    ind: f64,
    dcr: f64,
    cap: f64,
    r_p: f64,
) -> (CircuitBuilder, Vec<f64>, impl Fn(f64) -> Expected) {
    let mut b = CircuitBuilder::new();
    b.voltage_source("V1", "in", "0", 1.0, rs)
        .resistor("R1", "in", "out", r_feed)
        .add("L1", ElementKind::Inductor { inductance: ind, dcr }, "out", "0")
        .capacitor("C1", "out", "0", cap)
        .resistor("R2", "out", "0", r_p);
    let f0 = 1.0 / (2.0 * PI * (ind * cap).sqrt());
    let r = rs + r_feed;
    let expected = move |omega: f64| {
        let m = dcr * dcr + (omega * ind).powi(2);
        let re = 1.0 + r * (1.0 / r_p + dcr / m);
        let im = r * (omega * cap - omega * ind / m);
        let d_re = -r * 2.0 * omega * ind * ind * dcr / (m * m);
        let d_im = r * (cap - ind * (dcr * dcr - (omega * ind).powi(2)) / (m * m));
        let norm = re * re + im * im;
        let y = c(1.0 / r_p, omega * cap) + 1.0 / c(dcr, omega * ind);
        Expected {
            h: 1.0 / c(re, im),
            phase_rad: -im.atan2(re),
            tau_terms: vec![re * d_im / norm, -im * d_re / norm],
            z_in: r_feed + 1.0 / y,
        }
    };
    (b, vec![f0], expected)
}

// Source: common practice (parallel resonance at f0 = 1/(2π√(LC)) for an ideal inductor).
#[test]
fn parallel_tank_ideal_inductor() {
    let (b, special, expected) = parallel_tank(0.0, 1e3, 10e-3, 0.0, 100e-9, 10e3);
    check(&b, "out", &special, expected);
}

// Source: common practice (the inductor's DCR damps the tank and shifts its peak).
#[test]
fn parallel_tank_inductor_dcr_and_source_resistance() {
    let (b, special, expected) = parallel_tank(50.0, 1e3, 10e-3, 5.0, 100e-9, 10e3);
    check(&b, "out", &special, expected);
}
