//! End-to-end tests of the analysis commands (`spread`, `step`, `mask`, `frontend`) and of the
//! active topologies of `fit`: their figures against closed forms or published tables, the
//! seed's reproducibility, and bad input giving exit code 2 with the flag named.

use std::path::PathBuf;
use std::process::Command;

fn examples() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../examples")
}

fn example(name: &str) -> String {
    examples().join(name).to_string_lossy().into_owned()
}

fn run(args: &[&str]) -> (i32, String, String) {
    let output = Command::new(env!("CARGO_BIN_EXE_bandwright")).args(args).output().expect("binary runs");
    (
        output.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&output.stdout).into_owned(),
        String::from_utf8_lossy(&output.stderr).into_owned(),
    )
}

fn json(args: &[&str]) -> serde_json::Value {
    let (code, out, err) = run(args);
    assert_eq!(code, 0, "{args:?}: {err}");
    serde_json::from_str(&out).unwrap_or_else(|e| panic!("{args:?}: {e}\n{out}"))
}

fn rejected(args: &[&str], fragment: &str) {
    let (code, _, err) = run(args);
    assert_eq!(code, 2, "{args:?} should fail with 2: {err}");
    assert!(err.contains(fragment), "{args:?}: {err}");
    assert!(!err.contains("panicked"), "{err}");
}

#[test]
fn spread_is_reproducible_and_independent_of_threads() {
    let design = example("sensor-rc-lowpass.json");
    let args = |threads: &'static str| {
        json(&["spread", &design, "--trials", "600", "--seed", "42", "--threads", threads, "--format", "json"])
    };
    let (one, two) = (args("1"), args("3"));
    assert_eq!(one, two, "the same seed must give the same run on 1 and 3 threads");
    assert_eq!(one["seed"], 42);
    assert_eq!(one["trials"], 600);
    let corner = &one["corner_hz"][0][1];
    let (nominal, std) = (corner["nominal"].as_f64().unwrap(), corner["std_dev"].as_f64().unwrap());
    assert!(std > 0.0 && std < 0.1 * nominal, "{corner}");
    let other = json(&["spread", &design, "--trials", "600", "--seed", "43", "--format", "json"]);
    assert_ne!(other["corner_hz"], one["corner_hz"]);
}

#[test]
fn spread_counts_the_yield_against_a_mask() {
    let dir = std::env::temp_dir().join(format!("bandwright-analysis-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let mask = dir.join("loose.mask.json");
    let (code, _, err) = run(&[
        "mask",
        "--pass",
        "100",
        "--stop",
        "20k",
        "--loss",
        "1",
        "--atten",
        "20",
        "--save",
        &mask.to_string_lossy(),
    ]);
    assert_eq!(code, 0, "{err}");
    let report = json(&[
        "spread",
        &example("sensor-rc-lowpass.json"),
        "--trials",
        "200",
        "--mask",
        &mask.to_string_lossy(),
        "--format",
        "json",
    ]);
    let y = &report["mask_yield"];
    assert_eq!(y["trials"], 200);
    assert!(y["passed"].as_u64().unwrap() <= 200);
    assert!(y["nominal"]["pass"].is_boolean());
}

#[test]
fn spread_rejects_bad_tolerances() {
    let design = example("sensor-rc-lowpass.json");
    rejected(&["spread", &design, "--tol-c", "-5"], "--tol-c -5");
    rejected(&["spread", &design, "--tol", "R9=1%"], "\"R9\"");
    rejected(&["spread", &design, "--tol", "R1"], "such as --tol R2=0.1%");
    rejected(&["spread", &design, "--distribution", "triangle"], "uniform");
    rejected(&["spread", &design, "--band", "150"], "percentile band");
}

#[test]
fn step_settles_a_first_order_rc_as_the_closed_form() {
    // Source: references.md §6, settling to ½ LSB of N bits takes ln(2^(N+1)) time constants.
    let dir = std::env::temp_dir().join(format!("bandwright-analysis-rc-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let design = dir.join("rc.json");
    std::fs::write(
        &design,
        r#"{"format": "bandwright-design", "version": 1, "name": "rc", "source": {"node": "in", "resistance": 0},
            "output": "out", "elements": [
              {"ref": "R1", "kind": "resistor", "value": "1k", "nodes": ["in", "out"]},
              {"ref": "C1", "kind": "capacitor", "value": "100n", "nodes": ["out", "0"]}]}"#,
    )
    .unwrap();
    let tau = 1e3 * 100e-9;
    for bits in [12u32, 16] {
        let settle = format!("half-lsb:{bits}");
        let r = json(&["step", &design.to_string_lossy(), "--settle", &settle, "--format", "json"]);
        let t = r["metrics"]["settling"]["time_s"].as_f64().unwrap();
        let expected = ((bits + 1) as f64 * 2f64.ln()) * tau;
        assert!((t / expected - 1.0).abs() < 1e-9, "{bits} bits: {t} vs {expected}");
        // Source: rise time 10-90 % of a first-order lag is ln 9 · τ (closed form).
        let rise = r["metrics"]["rise"]["rise_time_s"].as_f64().unwrap();
        assert!((rise / (9f64.ln() * tau) - 1.0).abs() < 1e-9);
    }
    let (code, out, _) = run(&["step", &design.to_string_lossy(), "--format", "csv", "--points", "11"]);
    assert_eq!(code, 0);
    assert_eq!(out.lines().count(), 12);
    rejected(&["step", &design.to_string_lossy(), "--settle", "lsb:0"], "bits must be from 1 to 32");
    rejected(&["step", &design.to_string_lossy(), "--settle", "2"], "strictly between 0 and 1");
    rejected(&["step", &design.to_string_lossy(), "--span", "-1m"], "--span");
}

#[test]
fn mask_orders_match_the_published_example_and_a_check_sets_the_exit_status() {
    // Source: references.md §6: scipy.signal.buttord(1, 10, 3, 74, analog=True) returns order 4.
    let r = json(&["mask", "--pass", "1k", "--stop", "10k", "--loss", "3", "--atten", "74", "--format", "json"]);
    let butterworth = r["met"].as_array().unwrap().iter().find(|o| o["alignment"] == "butterworth").unwrap();
    assert_eq!(butterworth["order"], 4);
    let design = example("sensor-rc-lowpass.json");
    let (code, out, _) =
        run(&["mask", "--pass", "1k", "--stop", "10k", "--loss", "1", "--atten", "30", "--design", &design]);
    assert_eq!(code, 1, "a failing check exits 1: {out}");
    assert!(out.contains("FAIL"));
    let (code, out, _) =
        run(&["mask", "--pass", "10", "--stop", "100k", "--loss", "3", "--atten", "10", "--design", &design]);
    assert_eq!(code, 0, "{out}");
    assert!(out.contains("PASS"));
    rejected(&["mask", "--pass", "10k", "--stop", "1k"], "must lie above the passband edge");
    let (code, _, err) = run(&["mask", "--pass", "1k", "--stop", "1.01k", "--atten", "100"]);
    assert_eq!(code, 2);
    assert!(err.contains("closest order 8"), "{err}");
}

#[test]
fn frontend_plans_the_published_scenario() {
    // Source: references.md §6: 12 bits need 74.0 dB (6.02·N + 1.76); buttord(1, 10, 3, 74) = 4.
    let r = json(&["frontend", "--fs", "11k", "--band", "1k", "--bits", "12", "--droop", "3", "--format", "json"]);
    let orders = r["orders"].as_array().unwrap();
    let butterworth = orders.iter().find(|o| o["alignment"] == "butterworth").unwrap();
    assert_eq!(butterworth["order"], 4);
    assert!((r["fitted"]["first_alias_attenuation_db"].as_f64().unwrap() - 74.0).abs() < 10.0);
    assert!(r["sampling"]["pass"].is_boolean());
    assert!(!r["cautions"].as_array().unwrap().is_empty());
    rejected(&["frontend", "--fs", "30k", "--band", "20k", "--bits", "16"], "20000");
    rejected(&["frontend", "--fs", "48k", "--band", "20k", "--bits", "0"], "bits");
    rejected(&["frontend", "--fs", "48k", "--band", "20k", "--bits", "16"], "closest is");
}

#[test]
fn fit_makes_active_cascades_with_standard_parts() {
    let r = json(&["fit", "--topology", "sallen-key", "--order", "4", "--cutoff", "1k", "--format", "json"]);
    let best = &r["alternatives"][0];
    assert_eq!(best["parts"].as_array().unwrap().len(), 8);
    assert!(best["max_response_deviation_db"].as_f64().unwrap() < 0.2, "{best}");
    let finite = json(&[
        "fit",
        "--topology",
        "mfb",
        "--order",
        "2",
        "--cutoff",
        "10k",
        "--gbw",
        "100k",
        "--op-amp-rout",
        "75",
        "--format",
        "json",
    ]);
    // A 100 kHz GBW op-amp moves a 10 kHz section visibly.
    assert!(finite["alternatives"][0]["max_response_deviation_db"].as_f64().unwrap() > 0.05);
    rejected(&["fit", "--topology", "rc", "--cutoff", "1k", "--gbw", "1M"], "sallen-key and mfb topologies only");
    rejected(
        &["fit", "--topology", "mfb", "--response", "bandpass", "--low", "1k", "--high", "2k"],
        "low-pass and high-pass",
    );
}

#[test]
fn fit_ranks_alternatives_by_yield_against_a_mask() {
    let mask = example("masks/sensor-aa-rc-ladder-3rd.mask.json");
    let fit = [
        "fit",
        "--topology",
        "rc",
        "--order",
        "3",
        "--alignment",
        "critical",
        "--cutoff",
        "1k",
        "--source",
        "100",
        "--load",
        "1M",
        "--resistors",
        "E24",
        "--capacitors",
        "E12",
        "--alternatives",
        "4",
    ];
    let with = |extra: &[&str]| json(&[&fit[..], extra, &["--format", "json"]].concat());
    let ranked = with(&["--rank-by", "yield", "--mask", &mask, "--trials", "300", "--seed", "5"]);
    let alternatives = ranked["alternatives"].as_array().unwrap();
    assert_eq!(alternatives.len(), 4);
    assert_eq!(ranked["yield_run"]["seed"], 5);
    let passed: Vec<u64> = alternatives.iter().map(|a| a["yield"]["mask_yield"]["passed"].as_u64().unwrap()).collect();
    assert!(passed.windows(2).all(|w| w[0] >= w[1]), "{passed:?}");
    assert!(alternatives.iter().all(|a| a["yield"]["mask_yield"]["trials"] == 300));
    assert!(ranked["objective"].as_str().unwrap().starts_with("yield against the spec mask"));
    // The same seed gives the same ranking.
    let again = with(&["--rank-by", "yield", "--mask", &mask, "--trials", "300", "--seed", "5"]);
    assert_eq!(again, ranked);
    // The nominal ranking carries no yield.
    let nominal = with(&[]);
    assert!(nominal["alternatives"][0].get("yield").is_none());
    rejected(&[&fit[..], &["--rank-by", "yield"]].concat(), "needs a spec mask");
    rejected(&[&fit[..], &["--mask", &mask]].concat(), "only with --rank-by yield");
    rejected(&[&fit[..], &["--rank-by", "yield", "--mask", &mask, "--trials", "0"]].concat(), "--trials");
}
