//! Sweep benchmark: a 7th-order doubly terminated Butterworth LC ladder over 10,000 log points.
//!
//! Times the core's sweep (hand-written banded LU, exact derivative, input impedance) and, on the
//! same MNA matrices, a plain nalgebra dense LU path, side by side in one run. The numpy
//! comparison lives in `compare_numpy.py` beside this file, which runs this binary with `--json`.
//!
//! Run: `cargo bench -p bandwright --bench sweep` (readable) or `-- --json` (one JSON line).

use bandwright::{sweep, AcSystem, CircuitBuilder, Detail, FrequencyGrid, Probe, Spacing};
use nalgebra::DMatrix;
use num_complex::Complex64;
use std::f64::consts::PI;
use std::hint::black_box;
use std::time::Instant;

const POINTS: usize = 10_000;
const REPEATS: usize = 15;

fn ladder7() -> (bandwright::Circuit, Probe) {
    // Source: Butterworth prototype g_k = 2 sin((2k−1)π/2n) (references §2.1); shunt C first.
    let (r0, omega_c, n) = (50.0, 2.0 * PI * 1e6, 7);
    let mut b = CircuitBuilder::new();
    b.voltage_source("V1", "n1", "0", 1.0, r0);
    let mut node = 1;
    for k in 1..=n {
        let g = 2.0 * ((2 * k - 1) as f64 * PI / (2 * n) as f64).sin();
        if k % 2 == 1 {
            b.capacitor(&format!("C{k}"), &format!("n{node}"), "0", g / (r0 * omega_c));
        } else {
            b.inductor(&format!("L{k}"), &format!("n{node}"), &format!("n{}", node + 1), g * r0 / omega_c);
            node += 1;
        }
    }
    b.resistor("RL", &format!("n{node}"), "0", r0);
    let circuit = b.build().expect("ladder is valid");
    let probe = Probe::new(&circuit, "V1", &format!("n{node}"), "0").expect("probe");
    (circuit, probe)
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

fn main() {
    let json = std::env::args().any(|a| a == "--json");
    let (circuit, probe) = ladder7();
    let mut system = AcSystem::new(&circuit, &probe);
    let grid = FrequencyGrid::log(1e4, 1e8, Spacing::Points(POINTS)).expect("grid");
    let out_slot = system.node_slot(probe.output.0).expect("output is not ground");

    // Warm up both paths, then alternate them so that machine noise hits both alike.
    black_box(sweep(&mut system, &grid, Detail::Transfer));
    black_box(nalgebra_sweep(&system, &grid, out_slot));
    let (mut core, mut dense) = (Vec::new(), Vec::new());
    for _ in 0..REPEATS {
        let start = Instant::now();
        black_box(sweep(&mut system, &grid, Detail::Transfer));
        core.push(start.elapsed().as_secs_f64());
        let start = Instant::now();
        black_box(nalgebra_sweep(&system, &grid, out_slot));
        dense.push(start.elapsed().as_secs_f64());
    }
    let (core, dense) = (median(core), median(dense));
    let h = system.solve_at(1e6, Detail::Transfer).expect("solvable").transfer;
    if json {
        println!(
            "{{\"case\":\"ladder7_sweep\",\"points\":{POINTS},\"seconds_per_sweep_median\":{core:e},\"seconds_per_point\":{:e},\"repeats\":{REPEATS},\"nalgebra_seconds_per_point\":{:e},\"h_at\":{{\"f_hz\":1e6,\"re\":{:e},\"im\":{:e}}}}}",
            core / POINTS as f64,
            dense / POINTS as f64,
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
            "  core (banded LU + exact derivative): {:9.3} ms/sweep {:8.1} ns/point",
            core * 1e3,
            core / POINTS as f64 * 1e9
        );
        println!(
            "  nalgebra dense LU, same matrices:    {:9.3} ms/sweep {:8.1} ns/point",
            dense * 1e3,
            dense / POINTS as f64 * 1e9
        );
        println!("  ratio nalgebra/core: {:.1}x", dense / core);
    }
}
