//! Tolerance benchmark: a Monte Carlo run of 10,000 trials × 200 log-spaced frequencies on a
//! 5th-order doubly terminated Butterworth LC ladder (50 Ω, 1 MHz; R 1 %, C 5 %, L 10 %, uniform).
//!
//! Times, alternating in one run so that machine noise hits all alike:
//! - the run on one thread, each trial folded into the envelopes as it is solved
//!   (`fold_plan`, `run_folded`, `summarize_folded`: the CLI's way without a mask);
//! - the same split over every core with `std::thread::scope` (`Parallel` jobs: the sample, the
//!   trials by index, the summary's columns);
//! - every trial's response kept (`run_trials` on every core, then `summarize_with`), as a mask
//!   yield or the browser's workers need.
//!
//! Before timing, the folded runs (one thread and split) are checked equal, bit for bit, to the
//! kept run on one thread.
//!
//! Pole spread and corners are off in the timed run (they are separate costs, printed once).
//!
//! The numpy comparison (`compare_tolerance_numpy.py` beside this file) runs this binary with
//! `--json` and reads `seconds` (the folded all-cores run) and `one_thread_seconds`.
//!
//! Run: `cargo bench -p bandwright --bench tolerance` (readable) or `-- --json` (one JSON line).

#[path = "common/ladder.rs"]
mod ladder;

use bandwright::tolerance::{
    Distribution, KindTolerances, Parallel, ToleranceOptions, TolerancePlan, ToleranceReport, TrialBatch,
};
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

/// Scoped threads, as the CLI runs them (`bandwright-cli`'s `spread::Threads`).
struct Threads(usize);

impl Parallel for Threads {
    fn width(&self) -> usize {
        self.0
    }

    fn map<T: Send>(&self, jobs: usize, job: &(dyn Fn(usize) -> T + Sync)) -> Vec<T> {
        std::thread::scope(|scope| {
            let handles: Vec<_> = (0..jobs).map(|j| scope.spawn(move || job(j))).collect();
            handles.into_iter().map(|h| h.join().expect("worker")).collect()
        })
    }
}

fn threaded(plan: &TolerancePlan, threads: usize) -> Vec<TrialBatch> {
    let chunk = TRIALS.div_ceil(threads);
    Threads(threads).map(threads, &|t| plan.run_trials((t * chunk).min(TRIALS)..((t + 1) * chunk).min(TRIALS)))
}

/// The whole run folded as it goes (what the CLI's `spread` does without a mask), each stage
/// split over `threads` threads: the brackets' sample, the trials by index, then the summary's
/// columns.
fn folded(plan: &TolerancePlan, threads: usize) -> ToleranceReport {
    let fold = plan.fold_plan_with(&Threads(threads));
    let chunk = TRIALS.div_ceil(threads);
    let parts = Threads(threads)
        .map(threads, &|t| plan.run_folded(&fold, (t * chunk).min(TRIALS)..((t + 1) * chunk).min(TRIALS)));
    plan.summarize_folded_with(parts, None, &Threads(threads))
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
    assert_eq!(folded(&plan, 1), one, "a folded run must equal the kept run");
    assert_eq!(folded(&plan, threads), one, "a folded split run must equal the kept run");
    assert_eq!(
        plan.summarize_with(&threaded(&plan, threads), &Threads(threads)),
        one,
        "a split run must equal the one-thread run"
    );

    let (mut single, mut all, mut kept) = (Vec::new(), Vec::new(), Vec::new());
    for _ in 0..REPEATS {
        let start = Instant::now();
        black_box(folded(&plan, 1));
        single.push(start.elapsed().as_secs_f64());
        let start = Instant::now();
        black_box(folded(&plan, threads));
        all.push(start.elapsed().as_secs_f64());
        let start = Instant::now();
        black_box(plan.summarize_with(&threaded(&plan, threads), &Threads(threads)));
        kept.push(start.elapsed().as_secs_f64());
    }
    let with_poles = TolerancePlan::new(&circuit, &probe, &grid, &options(true)).expect("plan");
    let start = Instant::now();
    black_box(folded(&with_poles, threads));
    let poles_seconds = start.elapsed().as_secs_f64();
    let (single, all, kept) = (median(single), median(all), median(kept));
    let corner = &one.corner_hz[0].1;
    if json {
        println!(
            "{{\"trials\":{TRIALS},\"points\":{POINTS},\"threads\":{threads},\"seconds\":{all},\"one_thread_seconds\":{single},\"kept_seconds\":{kept},\"with_pole_spread_seconds\":{poles_seconds},\"corner_mean_hz\":{},\"corner_std_hz\":{}}}",
            corner.mean, corner.std_dev
        );
    } else {
        println!("Monte Carlo, 5th-order LC ladder, {TRIALS} trials x {POINTS} frequencies (median of {REPEATS}):");
        println!("  one thread       {:8.1} ms", single * 1e3);
        println!("  {threads} threads        {:8.1} ms  (target: under 250 ms)", all * 1e3);
        println!("  {threads} threads, every trial's response kept {:8.1} ms", kept * 1e3);
        println!("  with pole spread {:8.1} ms  ({threads} threads, once)", poles_seconds * 1e3);
        println!("  -3 dB corner: mean {:.6e} Hz, std {:.4e} Hz", corner.mean, corner.std_dev);
    }
}
