//! Reference test: doubly terminated prototype ladders swept by the core against scipy.signal
//! reference vectors.
//!
//! The vectors come from `tests/reference/gen_scipy.py` (SciPy 1.17.1, NumPy 2.4.6; the versions
//! are written into the data): `buttap`, `cheb1ap` and `besselap(norm='mag')` responses H(jω) from
//! `freqs_zpk`, with the unwrapped phase and the analytic group delay, at 63 ascending ω in rad/s
//! from 0.01 to 100.
//!
//! Each case is built as a ladder at R0 = 1 Ω, ωc = 1 rad/s (so the core sweeps f = ω/2π) and
//! compared through S21 = 2·sqrt(Rs/RL)·V_L/E, which for these all-pole prototypes is scipy's H
//! exactly (same DC sign, same normalisation; even-order Chebyshev ladders have RL ≠ Rs and a DC
//! gain of −ripple dB, like `cheb1ap`).
//!
//! - Butterworth and Chebyshev (0.5 dB, 1 dB), n = 1…8, g-values from the oracle's formulas, both
//!   ladder forms: complex H to [`H_RTOL`], unwrapped phase to [`PHASE_ATOL_DEG`], group delay to
//!   [`DELAY_RTOL`]. Both sides are exact formulas in double precision.
//! - Bessel, n = 1…7, g-values printed to 6 decimals in references.md §2.3(a): magnitude to
//!   [`BESSEL_DB_ATOL`] and group delay to [`BESSEL_DELAY_RTOL`], bounds set by the rounding of
//!   the printed values (see [`bessel_rounding_bound`]).

use bandwright::{sweep, AcSystem, Detail, FrequencyGrid, Response};
use bandwright_tests::prototype::{self, Form};
use num_complex::Complex64;
use serde::Deserialize;
use std::f64::consts::PI;
use std::sync::OnceLock;

/// Relative tolerance on the complex H (double precision on both sides; measured ≤ 1e-12).
const H_RTOL: f64 = 1e-9;
/// Absolute tolerance on the unwrapped phase in degrees.
const PHASE_ATOL_DEG: f64 = 1e-7;
/// Relative tolerance on the group delay.
const DELAY_RTOL: f64 = 1e-9;
/// Bessel magnitude tolerance in dB, for g-values rounded to 6 decimals.
const BESSEL_DB_ATOL: f64 = 1e-4;
/// Bessel group-delay relative tolerance, for g-values rounded to 6 decimals.
const BESSEL_DELAY_RTOL: f64 = 2e-5;

/// The data file written by gen_scipy.py.
#[derive(Debug, Deserialize)]
struct Data {
    scipy_version: String,
    numpy_version: String,
    cases: Vec<Case>,
}

/// One prototype response (see the generator's docstring for the layout).
#[derive(Debug, Deserialize)]
struct Case {
    name: String,
    alignment: String,
    order: usize,
    ripple_db: Option<f64>,
    bessel_norm: Option<String>,
    omega: Vec<f64>,
    re: Vec<f64>,
    im: Vec<f64>,
    mag_db: Vec<f64>,
    phase_deg_unwrapped: Vec<f64>,
    group_delay_s: Vec<f64>,
}

fn data() -> &'static Data {
    static DATA: OnceLock<Data> = OnceLock::new();
    DATA.get_or_init(|| {
        let path = concat!(env!("CARGO_MANIFEST_DIR"), "/reference/data/scipy_prototypes.json");
        let text = std::fs::read_to_string(path).unwrap_or_else(|e| panic!("cannot read {path}: {e}"));
        serde_json::from_str(&text).unwrap_or_else(|e| panic!("cannot parse {path}: {e}"))
    })
}

/// The cases of one alignment (and ripple), in order.
fn cases(alignment: &str, ripple_db: Option<f64>) -> Vec<&'static Case> {
    let found: Vec<&Case> =
        data().cases.iter().filter(|c| c.alignment == alignment && c.ripple_db == ripple_db).collect();
    assert!(!found.is_empty(), "no {alignment} {ripple_db:?} cases in the data");
    found
}

/// The core's sweep of the ladder of `g` over the case's ω list, and S21 = 2·sqrt(Rs/RL) at
/// R0 = 1 Ω, ωc = 1 rad/s.
fn sweep_case(case: &Case, g: &[f64], form: Form) -> (Response, f64) {
    let ladder = prototype::ladder(g, form, 1.0, 1.0);
    let (circuit, probe) = ladder.to_circuit();
    let f_hz: Vec<f64> = case.omega.iter().map(|w| w / (2.0 * PI)).collect();
    let grid = FrequencyGrid::list(f_hz).unwrap();
    let response = sweep(&mut AcSystem::new(&circuit, &probe), &grid, Detail::Transfer);
    assert!(response.unsolved().is_empty(), "{}: unsolved points", case.name);
    (response, 2.0 * (ladder.source_resistance / ladder.load_resistance).sqrt())
}

/// Worst errors of one comparison: H relative, phase in degrees, delay relative.
#[derive(Debug, Default, Clone, Copy)]
struct Worst {
    h: f64,
    phase_deg: f64,
    delay: f64,
}

impl Worst {
    fn max(self, other: Worst) -> Worst {
        Worst {
            h: self.h.max(other.h),
            phase_deg: self.phase_deg.max(other.phase_deg),
            delay: self.delay.max(other.delay),
        }
    }
}

/// Compares the ladder of `g` in `form` with `case` point by point: H, unwrapped phase and group
/// delay to the exact-formula tolerances.
fn check(case: &Case, g: &[f64], form: Form) -> Worst {
    let (response, s21_scale) = sweep_case(case, g, form);
    let phases = response.phase_deg();
    let delays = response.group_delay_s();
    let mut worst = Worst::default();
    for (i, h) in response.transfer().into_iter().enumerate() {
        let omega = case.omega[i];
        let s21 = s21_scale * h.unwrap();
        let want = Complex64::new(case.re[i], case.im[i]);
        let error_h = (s21 - want).norm() / want.norm();
        assert!(error_h <= H_RTOL, "{} {form:?} ω = {omega}: S21 {s21} vs scipy {want} ({error_h:.1e})", case.name);

        let phase = phases[i].unwrap();
        let error_phase = (phase - case.phase_deg_unwrapped[i]).abs();
        assert!(
            error_phase <= PHASE_ATOL_DEG,
            "{} {form:?} ω = {omega}: phase {phase}° vs scipy {}°",
            case.name,
            case.phase_deg_unwrapped[i]
        );

        let tau = delays[i].unwrap();
        let error_delay = (tau - case.group_delay_s[i]).abs() / case.group_delay_s[i];
        assert!(
            error_delay <= DELAY_RTOL,
            "{} {form:?} ω = {omega}: delay {tau} s vs scipy {} s ({error_delay:.1e})",
            case.name,
            case.group_delay_s[i]
        );
        worst = worst.max(Worst { h: error_h, phase_deg: error_phase, delay: error_delay });
    }
    worst
}

/// Checks every case of `alignment`/`ripple_db` against the oracle's g-values from `g_values`,
/// in both ladder forms.
fn check_family(alignment: &str, ripple_db: Option<f64>, g_values: impl Fn(usize) -> Vec<f64>) {
    let mut worst = Worst::default();
    for case in cases(alignment, ripple_db) {
        let g = g_values(case.order);
        for form in [Form::SeriesFirst, Form::ShuntFirst] {
            worst = worst.max(check(case, &g, form));
        }
    }
    // Shown with `cargo test -- --nocapture`.
    eprintln!(
        "{alignment} {ripple_db:?}: worst H {:.1e} relative, phase {:.1e}°, delay {:.1e} relative",
        worst.h, worst.phase_deg, worst.delay
    );
}

// Source: the generator's own record of its versions (gen_scipy.py writes scipy.__version__).
#[test]
fn data_records_the_scipy_version() {
    assert_eq!(data().scipy_version, "1.17.1");
    assert_eq!(data().numpy_version, "2.4.6");
    // Orders 1…8 of each family, as the generator's ORDERS = range(1, 9).
    for (alignment, ripple) in [("butterworth", None), ("chebyshev", Some(0.5)), ("chebyshev", Some(1.0))] {
        let orders: Vec<usize> = cases(alignment, ripple).iter().map(|c| c.order).collect();
        assert_eq!(orders, (1..=8).collect::<Vec<_>>());
    }
    assert!(cases("bessel", None).iter().all(|c| c.bessel_norm.as_deref() == Some("mag")));
    for case in &data().cases {
        assert_eq!(case.omega.len(), 63, "{}", case.name);
        assert!(case.omega.windows(2).all(|w| w[0] < w[1]), "{}: ω must ascend", case.name);
    }
}

// Source: scipy.signal.buttap + freqs_zpk (SciPy 1.17.1), n = 1…8; ladder from
// g_k = 2·sin((2k−1)π/2n).
#[test]
fn butterworth_ladders_match_scipy() {
    check_family("butterworth", None, prototype::butterworth);
}

// Source: scipy.signal.cheb1ap(n, 0.5) + freqs_zpk (SciPy 1.17.1), n = 1…8; ladder from the
// references.md §2.2 recursion.
#[test]
fn chebyshev_0p5db_ladders_match_scipy() {
    check_family("chebyshev", Some(0.5), |n| prototype::chebyshev(n, 0.5));
}

// Source: scipy.signal.cheb1ap(n, 1) + freqs_zpk (SciPy 1.17.1), n = 1…8; ladder from the
// references.md §2.2 recursion.
#[test]
fn chebyshev_1db_ladders_match_scipy() {
    check_family("chebyshev", Some(1.0), |n| prototype::chebyshev(n, 1.0));
}

// ---------------------------------------------------------------------------------------------
// Bessel, from the printed g-values.

/// Bessel (−3 dB at ω = 1, `norm='mag'`) g-values, 1 Ω / 1 Ω, listed from the source, with
/// g(n+1) = 1 appended.
fn bessel_printed(n: usize) -> Vec<f64> {
    let mut g = match n {
        // Source: references.md §2.3: "n = 1 is 2.000, the same as Butterworth".
        1 => vec![2.0],
        // Source: references.md §2.3(a) (Darlington synthesis from scipy.signal.besselap poles;
        // agrees with RF Cafe's Bessel table and Winder, Table 2.3), printed to 6 decimals.
        2 => vec![0.575503, 2.147806],
        // Source: as above.
        3 => vec![0.337421, 0.970512, 2.203411],
        // Source: as above.
        4 => vec![0.233416, 0.672525, 1.081516, 2.240379],
        // Source: as above.
        5 => vec![0.174319, 0.507241, 0.804011, 1.111033, 2.258217],
        // Source: as above.
        6 => vec![0.136492, 0.400190, 0.639155, 0.853786, 1.112643, 2.264524],
        // Source: as above.
        7 => vec![0.110562, 0.325888, 0.524893, 0.702009, 0.869027, 1.105164, 2.265901],
        _ => panic!("references.md prints Bessel g-values for n = 1…7 only"),
    };
    g.push(1.0);
    g
}

/// The magnitude (dB) and group delay of the ladder of `g` over the case's ω list.
fn bessel_curves(case: &Case, g: &[f64], form: Form) -> (Vec<f64>, Vec<f64>) {
    let (response, s21_scale) = sweep_case(case, g, form);
    let db = response.magnitude_db().into_iter().map(|d| d.unwrap() + 20.0 * s21_scale.log10()).collect();
    let tau = response.group_delay_s().into_iter().map(Option::unwrap).collect();
    (db, tau)
}

/// A first-order bound on what the 6-decimal rounding of the printed g-values can do: the sum
/// over the elements of |change| when one element moves by half a unit of the last digit
/// (5e-7), for the magnitude (dB) and the relative group delay, worst over the ω list.
fn bessel_rounding_bound(case: &Case, g: &[f64], form: Form) -> (f64, f64) {
    let (db, tau) = bessel_curves(case, g, form);
    let n = g.len() - 1;
    let mut sum_db = vec![0.0; db.len()];
    let mut sum_tau = vec![0.0; tau.len()];
    for k in 0..n {
        let mut moved = g.to_vec();
        moved[k] += 5e-7;
        let (db_moved, tau_moved) = bessel_curves(case, &moved, form);
        for i in 0..db.len() {
            sum_db[i] += (db_moved[i] - db[i]).abs();
            sum_tau[i] += ((tau_moved[i] - tau[i]) / tau[i]).abs();
        }
    }
    (sum_db.iter().copied().fold(0.0, f64::max), sum_tau.iter().copied().fold(0.0, f64::max))
}

// Source: scipy.signal.besselap(n, norm='mag') + freqs_zpk (SciPy 1.17.1), n = 1…7; ladder from
// the printed −3 dB-normalised g-values of references.md §2.3(a).
// Tolerances: rounding each g to 6 decimals moves it by up to 5e-7. The first-order bound
// computed by `bessel_rounding_bound` (asserted below to fit inside the tolerances) came to
// 7.8e-5 dB and 4.5e-6 relative delay over these cases (worst in the deep stop band, where |H|
// scales with the product of the g's); the tolerances 1e-4 dB and 2e-5 cover it. Measured worst
// errors when written: 3.6e-5 dB and 3.8e-6 relative delay (printed with --nocapture).
#[test]
fn bessel_ladders_from_printed_values_match_scipy() {
    let (mut worst_db, mut worst_delay) = (0.0f64, 0.0f64);
    let (mut bound_db, mut bound_delay) = (0.0f64, 0.0f64);
    for case in cases("bessel", None).into_iter().filter(|c| c.order <= 7) {
        let g = bessel_printed(case.order);
        for form in [Form::SeriesFirst, Form::ShuntFirst] {
            let (db, tau) = bessel_curves(case, &g, form);
            for i in 0..db.len() {
                let error_db = (db[i] - case.mag_db[i]).abs();
                let error_delay = (tau[i] - case.group_delay_s[i]).abs() / case.group_delay_s[i];
                assert!(
                    error_db <= BESSEL_DB_ATOL,
                    "{} {form:?} ω = {}: {} dB vs scipy {} dB",
                    case.name,
                    case.omega[i],
                    db[i],
                    case.mag_db[i]
                );
                assert!(
                    error_delay <= BESSEL_DELAY_RTOL,
                    "{} {form:?} ω = {}: delay {} s vs scipy {} s ({error_delay:.1e})",
                    case.name,
                    case.omega[i],
                    tau[i],
                    case.group_delay_s[i]
                );
                worst_db = worst_db.max(error_db);
                worst_delay = worst_delay.max(error_delay);
            }
            let (case_bound_db, case_bound_delay) = bessel_rounding_bound(case, &g, form);
            bound_db = bound_db.max(case_bound_db);
            bound_delay = bound_delay.max(case_bound_delay);
        }
    }
    eprintln!(
        "Bessel: worst {worst_db:.1e} dB and {worst_delay:.1e} relative delay; \
         rounding bound {bound_db:.1e} dB and {bound_delay:.1e}"
    );
    assert!(bound_db < BESSEL_DB_ATOL && bound_delay < BESSEL_DELAY_RTOL, "tolerances below the rounding bound");
}
