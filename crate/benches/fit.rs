//! Fit benchmark: the two searches of `bandwright::fit` named in the project's targets.
//!
//! - `ladder5_combine`: a 5th-order Butterworth LC ladder, 10 MHz, 50 Ω / 50 Ω, shunt C first,
//!   E96 resistors, E12 capacitors and inductors, two-part pairs allowed. Target: under 20 ms.
//! - `rc_six_decades`: a first-order RC low-pass at 1 kHz from an ideal source into an open load,
//!   every E96 resistor from 100 Ω to 100 MΩ (six decades), E12 capacitors, single parts.
//!   Target: under 2 ms.
//!
//! Each case runs once untimed as a warm-up; then the cases alternate for `REPEATS` rounds, so
//! that machine noise hits both alike, and each reports the median. Each timed call is the whole
//! `fit`, including the sweeps that rank the alternatives. Meeting a target is reported, never
//! enforced: the exit status is 0 either way.
//!
//! `compare_fit_python.py` beside this file runs this binary with `--json`, which prints one JSON
//! line per case: {"case", "seconds_median", "repeats", "best_objective", "best_parts" (the
//! chosen effective values in part order), "best_choices" (how each is made), "target_seconds",
//! "meets_target"}.
//!
//! Run: `cargo bench -p bandwright --bench fit` (readable) or `-- --json` (JSON lines).

use bandwright::fit::{fit, Arrangement, Combine, FitOptions, FitResult, PartSets, Requirement, Topology};
use bandwright::synthesis::{Alignment, Band, ResponseType};
use bandwright::{FirstElement, PartValues, Series};
use std::hint::black_box;
use std::time::Instant;

const REPEATS: usize = 21;

/// One timed case: the fit call and its target.
struct Case {
    name: &'static str,
    requirement: Requirement,
    topology: Topology,
    options: FitOptions,
    target_seconds: f64,
}

fn part_sets() -> PartSets {
    PartSets {
        resistors: PartValues::Series(Series::E96),
        capacitors: PartValues::Series(Series::E12),
        inductors: PartValues::Series(Series::E12),
    }
}

fn cases() -> Vec<Case> {
    let ladder = Case {
        name: "ladder5_combine",
        requirement: Requirement {
            response: ResponseType::LowPass,
            alignment: Alignment::Butterworth,
            order: 5,
            band: Band::Cutoff(10e6),
            source_resistance: 50.0,
            load_resistance: Some(50.0),
            load_capacitance: None,
        },
        topology: Topology::Ladder(FirstElement::Shunt),
        options: FitOptions {
            parts: part_sets(),
            combine: Combine::Pairs,
            alternatives: 5,
            resistor_range: (100.0, 1e6),
            name: "bench-ladder5".to_string(),
        },
        target_seconds: 20e-3,
    };
    let rc = Case {
        name: "rc_six_decades",
        requirement: Requirement {
            response: ResponseType::LowPass,
            alignment: Alignment::Butterworth,
            order: 1,
            band: Band::Cutoff(1e3),
            source_resistance: 0.0,
            load_resistance: None,
            load_capacitance: None,
        },
        topology: Topology::Rc,
        options: FitOptions {
            parts: part_sets(),
            combine: Combine::Single,
            alternatives: 5,
            resistor_range: (100.0, 1e8),
            name: "bench-rc".to_string(),
        },
        target_seconds: 2e-3,
    };
    vec![ladder, rc]
}

fn run(case: &Case) -> FitResult {
    fit(&case.requirement, case.topology, &case.options)
        .unwrap_or_else(|e| panic!("{}: the fit failed: {e}", case.name))
}

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

fn arrangement_name(arrangement: Arrangement) -> &'static str {
    match arrangement {
        Arrangement::Single => "single",
        Arrangement::Series => "series",
        Arrangement::Parallel => "parallel",
    }
}

fn main() {
    let json = std::env::args().any(|a| a == "--json");
    let cases = cases();

    // Warm-up, and the result each case reports (the search is deterministic).
    let results: Vec<FitResult> = cases.iter().map(run).collect();
    for (case, result) in cases.iter().zip(&results) {
        assert!(!result.alternatives.is_empty(), "{}: no alternative returned", case.name);
    }
    let mut times: Vec<Vec<f64>> = vec![Vec::with_capacity(REPEATS); cases.len()];
    for _ in 0..REPEATS {
        for (case, slot) in cases.iter().zip(times.iter_mut()) {
            let start = Instant::now();
            black_box(run(black_box(case)));
            slot.push(start.elapsed().as_secs_f64());
        }
    }
    let medians: Vec<f64> = times.into_iter().map(median).collect();

    if !json {
        println!("fit benchmark: median of {REPEATS} alternating repeats after one warm-up each");
        println!(
            "  {:<16} {:>12} {:>10} {:>8}  {:>18}  best parts",
            "case", "median ms", "target ms", "target", "best objective"
        );
    }
    for ((case, result), seconds) in cases.iter().zip(&results).zip(&medians) {
        let best = &result.alternatives[0];
        let meets = *seconds < case.target_seconds;
        if json {
            let record = serde_json::json!({
                "case": case.name,
                "seconds_median": seconds,
                "repeats": REPEATS,
                "best_objective": best.objective,
                "best_parts": best.parts.iter().map(|p| p.choice.value).collect::<Vec<f64>>(),
                "best_choices": best.parts.iter().map(|p| serde_json::json!({
                    "reference": p.reference,
                    "arrangement": arrangement_name(p.choice.arrangement),
                    "parts": p.choice.parts,
                })).collect::<Vec<_>>(),
                "target_seconds": case.target_seconds,
                "meets_target": meets,
            });
            println!("{record}");
        } else {
            let parts: Vec<String> = best
                .parts
                .iter()
                .map(|p| {
                    let made = match p.choice.arrangement {
                        Arrangement::Single => String::new(),
                        other => format!(
                            " ({} {})",
                            arrangement_name(other),
                            p.choice.parts.iter().map(|v| format!("{v:e}")).collect::<Vec<_>>().join(" + ")
                        ),
                    };
                    format!("{}={:e}{made}", p.reference, p.choice.value)
                })
                .collect();
            println!(
                "  {:<16} {:>12.3} {:>10.1} {:>8}  {:>18.6e}  {}",
                case.name,
                seconds * 1e3,
                case.target_seconds * 1e3,
                if meets { "met" } else { "not met" },
                best.objective,
                parts.join(", ")
            );
        }
    }
    if !json {
        println!("  (ladder objective: worst |dB(fitted) - dB(ideal)| over the deviation band;");
        println!("   RC objective: |fc_achieved - fc| / fc; targets are informational)");
    }
}
