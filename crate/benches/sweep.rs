//! Sweep benchmark: a 7th-order doubly terminated Butterworth LC ladder over 10,000 log points.
//!
//! Times three paths side by side, alternating in one run so that machine noise hits all alike:
//! - the modal fast path, `sweep_fast` (pole–residue form, O(n) per point). Its setup, building
//!   and self-checking `Modal` against the LU path, is inside the timed region once per sweep,
//!   since a real sweep pays it;
//! - the core's LU path, `sweep` (hand-written banded LU, exact derivative, input impedance);
//! - a plain nalgebra dense LU on the same MNA matrices.
//!
//! Before timing, the fast sweep is checked against the LU sweep at every point (H, dH/dω and
//! Z_in, in the measures of `bandwright::modal`), and the bench stops if the modal path is not
//! taken. The numpy comparison lives in `compare_numpy.py` beside this file, which runs this
//! binary with `--json`: `seconds_per_point` is the fast path; `lu_seconds_per_point` and
//! `nalgebra_seconds_per_point` are the other two.
//!
//! Run: `cargo bench -p bandwright --bench sweep` (readable) or `-- --json` (one JSON line).

#[path = "common/ladder.rs"]
mod ladder;

use bandwright::sweep::sweep_fast;
use bandwright::{sweep, AcSystem, Detail, FrequencyGrid, Modal, Probe, Response, Spacing};
use nalgebra::DMatrix;
use num_complex::Complex64;
use std::f64::consts::PI;
use std::hint::black_box;
use std::time::Instant;

const POINTS: usize = 10_000;
const REPEATS: usize = 15;

/// The bench circuit: the 7th-order ladder of `common/ladder.rs` (50 Ω, 1 MHz).
fn ladder7() -> (bandwright::Circuit, Probe) {
    ladder::butterworth_ladder(7, 50.0, 1e6)
}

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

/// The same per-point work through nalgebra's dense LU: solve, derivative solve, H.
fn nalgebra_sweep(system: &AcSystem, grid: &FrequencyGrid, out_slot: usize) -> Complex64 {
    let n = system.n_unknowns();
    let mut checksum = Complex64::new(0.0, 0.0);
    for &f in grid.frequencies() {
        let (y, dy, b) = system.matrices_at(2.0 * PI * f);
        let lu = DMatrix::from_row_slice(n, n, &y).lu();
        let x = lu.solve(&nalgebra::DVector::from_vec(b)).expect("solvable");
        let rhs = -(DMatrix::from_row_slice(n, n, &dy) * &x);
        let dx = lu.solve(&rhs).expect("solvable");
        checksum += x[out_slot] + dx[out_slot] * 1e-9;
    }
    checksum
}

/// The largest deviation of `fast` from `exact` over the sweep: |ΔH|/|H|, |ΔZ|/|Z| and
/// |ΔH′| / (|H′| + |H|/max(ω, ωc)), as in the modal self-check.
fn max_deviation(fast: &Response, exact: &Response, omega_c: f64) -> f64 {
    let mut worst = 0.0f64;
    for (a, b) in fast.solutions().iter().zip(exact.solutions()) {
        let (a, b) = (a.as_ref().expect("fast point solved"), b.as_ref().expect("LU point solved"));
        let omega = 2.0 * PI * b.f_hz;
        let h = (a.transfer - b.transfer).norm() / b.transfer.norm();
        let dh = (a.transfer_derivative - b.transfer_derivative).norm()
            / (b.transfer_derivative.norm() + b.transfer.norm() / omega.max(omega_c));
        let (za, zb) = (a.input_impedance.expect("fast Z_in"), b.input_impedance.expect("LU Z_in"));
        let z = (za - zb).norm() / zb.norm();
        worst = worst.max(h).max(dh).max(z);
    }
    worst
}

fn main() {
    let json = std::env::args().any(|a| a == "--json");
    let (circuit, probe) = ladder7();
    let mut system = AcSystem::new(&circuit, &probe);
    let grid = FrequencyGrid::log(1e4, 1e8, Spacing::Points(POINTS)).expect("grid");
    let out_slot = system.node_slot(probe.output.0).expect("output is not ground");

    // The fast path must really be the modal one (sweep_fast would silently fall back), and it
    // must agree with the LU path at every point.
    let ends = [grid.frequencies()[0], grid.frequencies()[POINTS - 1]];
    let modal = Modal::verified_at(&mut system, &ends).unwrap_or_else(|e| panic!("modal path not available: {e}"));
    let deviation =
        max_deviation(&sweep_fast(&mut system, &grid), &sweep(&mut system, &grid, Detail::Transfer), 2.0 * PI * 1e6);
    assert!(deviation <= 1e-9, "fast sweep deviates from the LU sweep by {deviation:e}");

    // Warm up every path, then alternate them.
    black_box(sweep_fast(&mut system, &grid));
    black_box(sweep(&mut system, &grid, Detail::Transfer));
    black_box(nalgebra_sweep(&system, &grid, out_slot));
    let (mut fast, mut core, mut dense, mut setup) = (Vec::new(), Vec::new(), Vec::new(), Vec::new());
    for _ in 0..REPEATS {
        let start = Instant::now();
        black_box(sweep_fast(&mut system, &grid));
        fast.push(start.elapsed().as_secs_f64());
        let start = Instant::now();
        black_box(sweep(&mut system, &grid, Detail::Transfer));
        core.push(start.elapsed().as_secs_f64());
        let start = Instant::now();
        black_box(nalgebra_sweep(&system, &grid, out_slot));
        dense.push(start.elapsed().as_secs_f64());
        let start = Instant::now();
        black_box(Modal::verified_at(&mut system, &ends).expect("modal path"));
        setup.push(start.elapsed().as_secs_f64());
    }
    let (fast, core, dense, setup) = (median(fast), median(core), median(dense), median(setup));
    let h = modal.solve_at(1e6).expect("solvable").transfer;
    let per_point = |t: f64| t / POINTS as f64;
    if json {
        println!(
            "{{\"case\":\"ladder7_sweep\",\"points\":{POINTS},\"seconds_per_sweep_median\":{fast:e},\"seconds_per_point\":{:e},\"repeats\":{REPEATS},\"fast_path\":\"modal\",\"modal_setup_seconds\":{setup:e},\"max_deviation_vs_lu\":{deviation:e},\"lu_seconds_per_point\":{:e},\"nalgebra_seconds_per_point\":{:e},\"h_at\":{{\"f_hz\":1e6,\"re\":{:e},\"im\":{:e}}}}}",
            per_point(fast),
            per_point(core),
            per_point(dense),
            h.re,
            h.im
        );
    } else {
        println!(
            "ladder7_sweep: {POINTS} points, {} unknowns, band {:?}, median of {REPEATS}",
            system.n_unknowns(),
            system.bandwidth()
        );
        println!(
            "  modal fast path (sweep_fast, setup included): {:9.3} ms/sweep {:8.1} ns/point",
            fast * 1e3,
            per_point(fast) * 1e9
        );
        println!("    of which setup (Modal::verified_at):        {:9.3} ms", setup * 1e3);
        println!(
            "  core LU path (banded LU + exact derivative):  {:9.3} ms/sweep {:8.1} ns/point",
            core * 1e3,
            per_point(core) * 1e9
        );
        println!(
            "  nalgebra dense LU, same matrices:             {:9.3} ms/sweep {:8.1} ns/point",
            dense * 1e3,
            per_point(dense) * 1e9
        );
        println!("  ratio LU/fast: {:.1}x, nalgebra/fast: {:.1}x", core / fast, dense / fast);
        println!("  max deviation fast vs LU over the sweep: {deviation:.2e}");
    }
}
