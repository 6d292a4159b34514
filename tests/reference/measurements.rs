//! Reference test: `bandwright::measure` on swept circuits whose corner, peak and impedance
//! minimum have closed forms.
//!
//! Every sweep here has 50 points per decade unless a case says otherwise. The measurements
//! interpolate between grid points (a cubic Hermite in ln f with exact slopes for the gain, a
//! parabola in (ln f, ln|Z|) for the impedance), so their error is interpolation error, not
//! rounding, and it depends on where the feature falls between grid points. So each case is
//! measured on [`OFFSETS`] grids shifted by fractions of one grid step, and the tolerances are
//! about twice the worst error over 400 such shifts, as printed by
//! `tests/reference/scan_measure_interpolation.py`, a separate Python replica of the documented
//! interpolation (which reproduced the core's results to the last digit). Where the feature sits
//! on a grid point and symmetry makes the interpolation exact, the tolerance is the rounding-level
//! one instead. The errors reached are printed by the tests under `--nocapture`.

use bandwright::{measure, sweep, AcSystem, Circuit, CircuitBuilder, Detail, Edge, ElementKind, FrequencyGrid};
use bandwright::{Measurements, Probe, ReferenceKind, Spacing};
use bandwright_tests::prototype::{self, Form};
use std::f64::consts::PI;

/// Points per decade of the sweeps.
const PER_DECADE: f64 = 50.0;

/// How many shifted grids each case is measured on (shifts j/OFFSETS of one grid step).
const OFFSETS: usize = 8;

/// Sweeps `circuit` over `start_hz … stop_hz` at `per_decade` and measures it.
fn measure_circuit(circuit: &Circuit, probe: &Probe, start_hz: f64, stop_hz: f64, per_decade: f64) -> Measurements {
    let grid = FrequencyGrid::log(start_hz, stop_hz, Spacing::PerDecade(per_decade)).unwrap();
    let response = sweep(&mut AcSystem::new(circuit, probe), &grid, Detail::Transfer);
    measure(&response).expect("a usable response")
}

/// The circuit of `builder` and its probe from `V1` to `output`.
fn build(builder: &CircuitBuilder, output: &str) -> (Circuit, Probe) {
    let circuit = builder.build().expect("valid circuit");
    let probe = Probe::new(&circuit, "V1", output, "0").expect("valid probe");
    (circuit, probe)
}

/// Measures on the grid `low … high` (`per_decade`) and on [`OFFSETS`] − 1 copies shifted up by
/// fractions of one grid step; returns the measurements of each.
fn measure_shifted(circuit: &Circuit, probe: &Probe, low: f64, high: f64, per_decade: f64) -> Vec<Measurements> {
    (0..OFFSETS)
        .map(|j| {
            let shift = 10f64.powf(j as f64 / (OFFSETS as f64 * per_decade));
            measure_circuit(circuit, probe, low * shift, high * shift, per_decade)
        })
        .collect()
}

/// Asserts |got/want − 1| ≤ rtol and returns the relative error.
fn check(what: &str, got: f64, want: f64, rtol: f64) -> f64 {
    let error = (got / want - 1.0).abs();
    assert!(error <= rtol, "{what}: measured {got} vs closed form {want} (relative {error:.1e} > {rtol:.0e})");
    error
}

// ---------------------------------------------------------------------------------------------
// Butterworth corner: by definition |H|² = (1/4)/(1 + (f/fc)^{2n}) is 3.0103 dB below its DC
// value at f = fc (the low-end reference at ≤ fc/100 is below DC by 10·log10(1 + 1e-20) dB, nil).

/// Sweeps the 5th-order Butterworth ladder (50 Ω, fc = 1 kHz) from `start_hz` over four decades,
/// on the shifted grids when `shifted`, and checks the one falling corner at fc to `rtol`.
fn check_butterworth_corner(form: Form, start_hz: f64, per_decade: f64, shifted: bool, rtol: f64) {
    let fc = 1e3;
    let (circuit, probe) = prototype::ladder_circuit(&prototype::butterworth(5), form, 50.0, 2.0 * PI * fc);
    let all = if shifted {
        measure_shifted(&circuit, &probe, start_hz, start_hz * 1e4, per_decade)
    } else {
        vec![measure_circuit(&circuit, &probe, start_hz, start_hz * 1e4, per_decade)]
    };
    let mut worst = 0.0f64;
    for m in all {
        assert_eq!(m.reference.kind, ReferenceKind::LowEnd);
        assert_eq!(m.corners.len(), 1, "{:?}", m.corners);
        assert_eq!(m.corners[0].edge, Edge::Falling);
        worst = worst.max(check(&format!("Butterworth n = 5 {form:?} corner"), m.corners[0].f_hz, fc, rtol));
    }
    eprintln!("Butterworth n = 5 {form:?}, {per_decade}/decade, shifted {shifted}: worst relative error {worst:.1e}");
}

// Source: common practice, the Butterworth definition (−3.0103 dB at fc); g-values from
// references.md §2.1. The grid 10 Hz … 100 kHz has a point at fc, so the corner is held to 1e-6
// (measured 2.2e-16).
#[test]
fn butterworth_5_corner_on_a_grid_point() {
    check_butterworth_corner(Form::SeriesFirst, 10.0, PER_DECADE, false, 1e-6);
    check_butterworth_corner(Form::ShuntFirst, 10.0, PER_DECADE, false, 1e-6);
}

// Source: as above, with fc anywhere between grid points. At 50 points per decade the Hermite
// interpolation is off by up to 2.9e-6 (worst of 400 shifts), so 1e-6 does not hold
// between points; tolerance 6e-6.
#[test]
fn butterworth_5_corner_between_grid_points() {
    check_butterworth_corner(Form::SeriesFirst, 7.0, PER_DECADE, true, 6e-6);
    check_butterworth_corner(Form::ShuntFirst, 7.0, PER_DECADE, true, 6e-6);
}

// Source: as above. At 100 points per decade the worst of 400 shifts is 1.8e-7, inside 1e-6.
#[test]
fn butterworth_5_corner_between_grid_points_100_per_decade() {
    check_butterworth_corner(Form::SeriesFirst, 7.0, 100.0, true, 1e-6);
    check_butterworth_corner(Form::ShuntFirst, 7.0, 100.0, true, 1e-6);
}

// ---------------------------------------------------------------------------------------------
// Series RLC band-pass (L, C in series, R to ground, output across R):
// H = R/(Rt + jX), Rt = Rs + R, X = ωL − 1/(ωC). The peak R/Rt is at f0 = 1/(2π√(LC)); |H|² is
// half of it where X = ±Rt, i.e. f = f0·(sqrt(1 + 1/(4Q²)) ± 1/(2Q)) with Q = 2πf0·L/Rt
// (common practice). The corners inherit the error of the interpolated peak, their reference.

/// Measures the band-pass on the shifted 1 Hz … 1 MHz grids and checks both corners to `rtol`.
fn check_band_pass(rs: f64, r: f64, ind: f64, cap: f64, rtol: f64) {
    let mut b = CircuitBuilder::new();
    b.voltage_source("V1", "in", "0", 1.0, rs)
        .inductor("L1", "in", "mid", ind)
        .capacitor("C1", "mid", "out", cap)
        .resistor("R1", "out", "0", r);
    let (circuit, probe) = build(&b, "out");
    let f0 = 1.0 / (2.0 * PI * (ind * cap).sqrt());
    let q = 2.0 * PI * f0 * ind / (rs + r);
    let root = (1.0 + 1.0 / (4.0 * q * q)).sqrt();
    let (low, high) = (f0 * (root - 1.0 / (2.0 * q)), f0 * (root + 1.0 / (2.0 * q)));
    let mut worst = 0.0f64;
    for m in measure_shifted(&circuit, &probe, 1.0, 1e6, PER_DECADE) {
        assert_eq!(m.reference.kind, ReferenceKind::Peak);
        assert_eq!(m.corners.len(), 2, "{:?}", m.corners);
        assert_eq!((m.corners[0].edge, m.corners[1].edge), (Edge::Rising, Edge::Falling));
        worst = worst.max(check(&format!("band-pass Q = {q:.3} lower corner"), m.corners[0].f_hz, low, rtol));
        worst = worst.max(check(&format!("band-pass Q = {q:.3} upper corner"), m.corners[1].f_hz, high, rtol));
    }
    eprintln!("band-pass Q = {q:.3}: worst relative corner error {worst:.1e}");
}

// Source: common practice (series RLC band-pass half-power frequencies); Q = 0.67. Worst of
// 400 shifts 2.3e-7; tolerance 1e-6.
#[test]
fn band_pass_corners_q_0p67() {
    check_band_pass(0.0, 470.0, 10e-3, 100e-9, 1e-6);
}

// Source: as above; Q = 2.1 with a 50 Ω source. Worst of 400 shifts 1.2e-5; tolerance 3e-5.
#[test]
fn band_pass_corners_q_2p1() {
    check_band_pass(50.0, 100.0, 10e-3, 100e-9, 3e-5);
}

// Source: as above; Q = 10. The peak spans only a few grid points, and the corners move with the
// interpolated peak value: worst of 400 shifts 1.1e-3; tolerance 3e-3.
#[test]
fn band_pass_corners_q_10() {
    check_band_pass(0.0, 316.227766, 100e-3, 10e-9, 3e-3);
}

// ---------------------------------------------------------------------------------------------
// Underdamped second-order low-pass (series R and L, C to ground, output across C):
// H = 1/(1 − (ω/ω0)² + j(ω/ω0)/Q) with ω0 = 1/√(LC), Q = √(L/C)/Rt. For Q > 1/√2 the peak is at
// f0·sqrt(1 − 1/(2Q²)) and has |H| = Q/sqrt(1 − 1/(4Q²)) (common practice).

/// Measures the low-pass on the shifted 1 Hz … 1 MHz grids and checks the peak frequency to
/// `f_rtol` and the peak gain to `db_atol`.
fn check_low_pass_peak(rs: f64, r: f64, ind: f64, cap: f64, f_rtol: f64, db_atol: f64) {
    let mut b = CircuitBuilder::new();
    b.voltage_source("V1", "in", "0", 1.0, rs)
        .resistor("R1", "in", "a", r)
        .inductor("L1", "a", "out", ind)
        .capacitor("C1", "out", "0", cap);
    let (circuit, probe) = build(&b, "out");
    let f0 = 1.0 / (2.0 * PI * (ind * cap).sqrt());
    let q = (ind / cap).sqrt() / (rs + r);
    let peak_hz = f0 * (1.0 - 1.0 / (2.0 * q * q)).sqrt();
    let peak_db = 20.0 * (q / (1.0 - 1.0 / (4.0 * q * q)).sqrt()).log10();
    let (mut worst_f, mut worst_db) = (0.0f64, 0.0f64);
    for m in measure_shifted(&circuit, &probe, 1.0, 1e6, PER_DECADE) {
        worst_f = worst_f.max(check(&format!("low-pass Q = {q:.3} peak frequency"), m.peak.f_hz, peak_hz, f_rtol));
        let error_db = (m.peak.value - peak_db).abs();
        assert!(error_db <= db_atol, "Q = {q:.3}: peak {} dB vs closed form {peak_db} dB", m.peak.value);
        worst_db = worst_db.max(error_db);
    }
    eprintln!("low-pass Q = {q:.3}: worst peak frequency error {worst_f:.1e}, peak gain error {worst_db:.1e} dB");
}

// Source: common practice (second-order low-pass resonant peak); Q = 1. Worst of 400 shifts
// 1.6e-5 in frequency and 2.7e-6 dB; tolerances 3e-5 and 6e-6 dB.
#[test]
fn low_pass_peak_q_1() {
    check_low_pass_peak(0.0, 100.0, 10e-3, 1e-6, 3e-5, 6e-6);
}

// Source: as above; Q = 5 with a 4 Ω source and 16 Ω in series. Worst of 400 shifts 4.5e-4 in
// frequency and 5.2e-3 dB; tolerances 1e-3 and 1.1e-2 dB.
#[test]
fn low_pass_peak_q_5() {
    check_low_pass_peak(4.0, 16.0, 10e-3, 1e-6, 1e-3, 1.1e-2);
}

// ---------------------------------------------------------------------------------------------
// Series RLC input impedance: Z_in = R + DCR + ESR + j(ωL − 1/(ωC)), so |Z_in| is smallest at
// f0 = 1/(2π√(LC)) and equals the total series resistance there (common practice). The
// reactance is ω0·L·(x − 1/x) with x = f/f0, odd in ln x, so |Z_in| is even in ln(f/f0): with f0
// on a grid point the parabola through it and its two neighbours has its vertex exactly there.

/// A series R–L(DCR)–C(ESR) from a 50 Ω source, and its f0, total resistance and Q.
fn series_rlc(r: f64, ind: f64, dcr: f64, cap: f64, esr: f64) -> (Circuit, Probe, f64, f64, f64) {
    let mut b = CircuitBuilder::new();
    b.voltage_source("V1", "in", "0", 1.0, 50.0)
        .resistor("R1", "in", "a", r)
        .add("L1", ElementKind::Inductor { inductance: ind, dcr }, "a", "b")
        .add("C1", ElementKind::Capacitor { capacitance: cap, esr }, "b", "0");
    let (circuit, probe) = build(&b, "b");
    let f0 = 1.0 / (2.0 * PI * (ind * cap).sqrt());
    let total = r + dcr + esr;
    (circuit, probe, f0, total, 2.0 * PI * f0 * ind / total)
}

/// Checks the |Z_in| minimum of `all` against (f0, total) to `rtol` in value and `f_rtol` in
/// frequency.
fn check_minimum(all: Vec<Measurements>, f0: f64, total: f64, q: f64, rtol: f64, f_rtol: f64) {
    let (mut worst, mut worst_f) = (0.0f64, 0.0f64);
    for m in all {
        let minimum = m.impedance_min.expect("Z_in is defined");
        worst = worst.max(check(&format!("series RLC Q = {q:.2} |Z_in| minimum"), minimum.value, total, rtol));
        worst_f = worst_f.max(check(&format!("series RLC Q = {q:.2} |Z_in| minimum at"), minimum.f_hz, f0, f_rtol));
    }
    eprintln!("series RLC Q = {q:.2}: worst |Z_in| minimum error {worst:.1e}, frequency {worst_f:.1e}");
}

// Source: common practice (series resonance), f0 on a grid point (sweep f0/100 … 100·f0); by the
// symmetry above the result is exact up to rounding (measured ≤ 1e-13), so 1e-9.
#[test]
fn series_rlc_impedance_minimum_on_a_grid_point() {
    for (r, dcr, esr) in [(90.0, 8.0, 2.0), (15.0, 4.0, 1.0)] {
        let (circuit, probe, f0, total, q) = series_rlc(r, 10e-3, dcr, 1e-6, esr);
        let m = measure_circuit(&circuit, &probe, f0 / 100.0, f0 * 100.0, PER_DECADE);
        check_minimum(vec![m], f0, total, q, 1e-9, 1e-9);
    }
}

// Source: as above, f0 anywhere between grid points; Q = 1. Worst of 400 shifts 9.0e-6 in value
// and 3.3e-5 in frequency; tolerances 2e-5 and 7e-5.
#[test]
fn series_rlc_impedance_minimum_q_1() {
    let (circuit, probe, f0, total, q) = series_rlc(90.0, 10e-3, 8.0, 1e-6, 2.0);
    check_minimum(measure_shifted(&circuit, &probe, 1.0, 1e6, PER_DECADE), f0, total, q, 2e-5, 7e-5);
}

// Source: as above; Q = 5. The parabola in (ln f, ln|Z|) fits a sharp minimum poorly: worst of
// 400 shifts 5.0e-3 in value and 8.5e-4 in frequency; tolerances 1e-2 and 2e-3.
#[test]
fn series_rlc_impedance_minimum_q_5() {
    let (circuit, probe, f0, total, q) = series_rlc(15.0, 10e-3, 4.0, 1e-6, 1.0);
    check_minimum(measure_shifted(&circuit, &probe, 1.0, 1e6, PER_DECADE), f0, total, q, 1e-2, 2e-3);
}
