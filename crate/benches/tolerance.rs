//! Tolerance benchmark: a Monte Carlo run of 10,000 trials × 200 log-spaced frequencies on a
//! 5th-order doubly terminated Butterworth LC ladder (50 Ω, 1 MHz; R 1 %, C 5 %, L 10 %, uniform).
//!
//! Times, alternating in one run so that machine noise hits all alike:
//! - the run on one thread (`TolerancePlan::run_trials` over all trials, then `summarize`);
//! - the same run split over every core with `std::thread::scope` (the CLI's way), checked
//!   equal to the one-thread result before timing.
//!
//! Pole spread and corners are off in the timed run (they are separate costs, printed once).
//!
//! The numpy comparison (`compare_tolerance_numpy.py` beside this file) runs this binary with
//! `--json` and reads `seconds` (the all-cores run) and `one_thread_seconds`.
//!
//! Run: `cargo bench -p bandwright --bench tolerance` (readable) or `-- --json` (one JSON line).

#[path = "common/ladder.rs"]
mod ladder;

use bandwright::tolerance::{Distribution, KindTolerances, ToleranceOptions, TolerancePlan, TrialBatch};
use bandwright::{FrequencyGrid, Probe, Spacing};
use std::hint::black_box;
use std::time::Instant;

const TRIALS: usize = 10_000;
const POINTS: usize = 200;
const REPEATS: usize = 7;

/// The bench circuit: the 5th-order ladder of `common/ladder.rs` (50 Ω, 1 MHz).
fn ladder5() -> (bandwright::Circuit, Probe) {
    ladder::butterworth_ladder(5, 50.0, 1e6)
}

fn options(pole_spread: bool) -> ToleranceOptions {
    ToleranceOptions {
        trials: TRIALS,
        seed: 20261202,
        distribution: Distribution::Uniform,
        by_kind: KindTolerances { resistor: 0.01, capacitor: 0.05, inductor: 0.10 },
        by_part: Vec::new(),
        band: 0.9,
        corners: false,
        pole_spread,
    }
}

fn threaded(plan: &TolerancePlan, threads: usize) -> Vec<TrialBatch> {
    let chunk = TRIALS.div_ceil(threads);
    std::thread::scope(|scope| {
        let handles: Vec<_> = (0..threads)
            .map(|t| {
                let range = (t * chunk).min(TRIALS)..((t + 1) * chunk).min(TRIALS);
                scope.spawn(move || plan.run_trials(range))
            })
            .collect();
        handles.into_iter().map(|h| h.join().expect("worker")).collect()
    })
}

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

fn main() {
    let json = std::env::args().any(|a| a == "--json");
    let threads = std::thread::available_parallelism().map_or(1, |n| n.get());
    let (circuit, probe) = ladder5();
    let grid = FrequencyGrid::log(1e5, 1e7, Spacing::Points(POINTS)).expect("grid");
    let plan = TolerancePlan::new(&circuit, &probe, &grid, &options(false)).expect("plan");

    let one = plan.summarize(&[plan.run_trials(0..TRIALS)]);
    assert_eq!(plan.summarize(&threaded(&plan, threads)), one, "a split run must equal the one-thread run");

    let (mut single, mut all) = (Vec::new(), Vec::new());
    for _ in 0..REPEATS {
        let start = Instant::now();
        black_box(plan.summarize(&[plan.run_trials(0..TRIALS)]));
        single.push(start.elapsed().as_secs_f64());
        let start = Instant::now();
        black_box(plan.summarize(&threaded(&plan, threads)));
        all.push(start.elapsed().as_secs_f64());
    }
    let with_poles = TolerancePlan::new(&circuit, &probe, &grid, &options(true)).expect("plan");
    let start = Instant::now();
    black_box(with_poles.summarize(&threaded(&with_poles, threads)));
    let poles_seconds = start.elapsed().as_secs_f64();
    let (single, all) = (median(single), median(all));
    let corner = &one.corner_hz[0].1;
    if json {
        println!(
            "{{\"trials\":{TRIALS},\"points\":{POINTS},\"threads\":{threads},\"seconds\":{all},\"one_thread_seconds\":{single},\"with_pole_spread_seconds\":{poles_seconds},\"corner_mean_hz\":{},\"corner_std_hz\":{}}}",
            corner.mean, corner.std_dev
        );
    } else {
        println!("Monte Carlo, 5th-order LC ladder, {TRIALS} trials x {POINTS} frequencies (median of {REPEATS}):");
        println!("  one thread       {:8.1} ms", single * 1e3);
        println!("  {threads} threads        {:8.1} ms  (target: under 250 ms)", all * 1e3);
        println!("  with pole spread {:8.1} ms  ({threads} threads, once)", poles_seconds * 1e3);
        println!("  -3 dB corner: mean {:.6e} Hz, std {:.4e} Hz", corner.mean, corner.std_dev);
    }
}
