//! End-to-end tests of the `bandwright` binary: the commands on the examples, and bad input
//! giving a clear message, exit code 2 and no panic.

use std::path::PathBuf;
use std::process::Command;

fn examples() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../examples")
}

fn run(args: &[&str]) -> (i32, String, String) {
    let output = Command::new(env!("CARGO_BIN_EXE_bandwright")).args(args).output().expect("binary runs");
    (
        output.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&output.stdout).into_owned(),
        String::from_utf8_lossy(&output.stderr).into_owned(),
    )
}

fn write_temp(name: &str, text: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("bandwright-cli-tests-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join(name);
    std::fs::write(&path, text).unwrap();
    path
}

const GOOD: &str = r#"{"format": "bandwright-design", "version": 1, "name": "example",
 "source": {"node": "in", "resistance": 50},
 "load": {"node": "out", "resistance": 10000},
 "output": "out",
 "elements": [
   {"ref": "R1", "kind": "resistor",  "value": "1k",   "nodes": ["in", "mid"]},
   {"ref": "L1", "kind": "inductor",  "value": "10m",  "nodes": ["mid", "out"], "series_resistance": 0.2},
   {"ref": "C1", "kind": "capacitor", "value": 1e-7,   "nodes": ["out", "0"]}
 ]}"#;

/// Runs `sweep` on a design text that must be rejected, and checks the message.
fn check_rejected(name: &str, text: &str, expected: &str) {
    let path = write_temp(name, text);
    let (code, stdout, stderr) = run(&["sweep", path.to_str().unwrap()]);
    assert_eq!(code, 2, "{name}: exit code, stderr {stderr}");
    assert!(stdout.is_empty(), "{name}: nothing on stdout");
    assert!(!stderr.contains("panicked"), "{name}: {stderr}");
    assert!(stderr.contains(expected), "{name}: {stderr:?} lacks {expected:?}");
}

#[test]
fn sweep_json_has_the_documented_arrays() {
    let path = write_temp("good.json", GOOD);
    let (code, stdout, stderr) =
        run(&["sweep", path.to_str().unwrap(), "--from", "10", "--to", "100k", "--points", "41", "--format", "json"]);
    assert_eq!(code, 0, "{stderr}");
    let value: serde_json::Value = serde_json::from_str(&stdout).unwrap();
    let f = value["frequency_hz"].as_array().unwrap();
    assert_eq!(f.len(), 41);
    assert_eq!(f[0].as_f64(), Some(10.0));
    assert_eq!(f[40].as_f64(), Some(1e5));
    for key in ["magnitude_db", "phase_deg", "group_delay_s"] {
        assert_eq!(value[key].as_array().unwrap().len(), 41, "{key}");
    }
    assert_eq!(value["input_impedance_ohm"]["re"].as_array().unwrap().len(), 41);
    assert_eq!(value["input_impedance_ohm"]["im"].as_array().unwrap().len(), 41);
    // At 10 Hz the RLC passes almost everything: 10k/(10k + 1k + 50 + 0.2) of the EMF.
    let db0 = value["magnitude_db"][0].as_f64().unwrap();
    assert!((db0 - 20.0 * (1e4f64 / 11_050.2).log10()).abs() < 1e-3, "{db0}");
}

#[test]
fn sweep_accepts_engineering_notation_and_per_decade() {
    let path = write_temp("good2.json", GOOD);
    let (code, stdout, stderr) = run(&[
        "sweep",
        path.to_str().unwrap(),
        "--from",
        "1k",
        "--to",
        "1MHz",
        "--per-decade",
        "10",
        "--format",
        "csv",
    ]);
    assert_eq!(code, 0, "{stderr}");
    // Header plus 3 decades × 10 + 1 points.
    assert_eq!(stdout.lines().count(), 32);
    assert!(stdout.starts_with("frequency_hz,magnitude_db,phase_deg,group_delay_s,zin_re_ohm,zin_im_ohm"));
}

#[test]
fn sweep_writes_an_svg_bode_plot() {
    let path = write_temp("good3.json", GOOD);
    let svg = path.with_extension("svg");
    let (code, _, stderr) = run(&["sweep", path.to_str().unwrap(), "--svg", svg.to_str().unwrap()]);
    assert_eq!(code, 0, "{stderr}");
    let text = std::fs::read_to_string(&svg).unwrap();
    assert!(text.starts_with("<svg"), "an SVG document");
    assert!(text.contains("magnitude (dB)") && text.contains("phase") && text.contains("group delay"));
}

#[test]
fn info_reports_the_measurements_of_every_example() {
    for entry in std::fs::read_dir(examples()).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().and_then(|e| e.to_str()) != Some("json") {
            continue;
        }
        let (code, stdout, stderr) = run(&["info", path.to_str().unwrap(), "--format", "json"]);
        assert_eq!(code, 0, "{}: {stderr}", path.display());
        let value: serde_json::Value = serde_json::from_str(&stdout).unwrap();
        assert!(value["passband_gain_db"].as_f64().unwrap().is_finite(), "{}", path.display());
        assert!(!value["corners_hz"].as_array().unwrap().is_empty(), "{}: has a -3 dB point", path.display());
    }
}

#[test]
fn info_finds_the_rlc_centre_frequency() {
    // Source: closed form f0 = 1/(2π·sqrt(LC)) for the series RLC of the example (1 mH, 15 nF).
    let path = examples().join("ultrasonic-rlc-bandpass.json");
    let (code, stdout, stderr) = run(&["info", path.to_str().unwrap(), "--format", "json", "--at", "100k"]);
    assert_eq!(code, 0, "{stderr}");
    let value: serde_json::Value = serde_json::from_str(&stdout).unwrap();
    let f0 = 1.0 / (2.0 * std::f64::consts::PI * (1e-3f64 * 15e-9).sqrt());
    let peak = value["peak"]["frequency_hz"].as_f64().unwrap();
    assert!((peak / f0 - 1.0).abs() < 1e-4, "{peak} vs {f0}");
    // At the peak the divider is R_L/(R_s + DCR + R_L) = 100/152.2.
    let gain = value["peak"]["gain_db"].as_f64().unwrap();
    assert!((gain - 20.0 * (100.0f64 / 152.2).log10()).abs() < 1e-6, "{gain}");
    assert!(value["attenuation_db"][0]["db"].as_f64().unwrap() > 10.0);
}

#[test]
fn malformed_json_is_named_with_its_line() {
    check_rejected("broken.json", "{\"format\": \"bandwright-design\",\n \"version\": 1,\n", "line 3");
}

#[test]
fn unknown_kind_is_named() {
    check_rejected("kind.json", &GOOD.replace("\"inductor\"", "\"coil\""), "unknown variant `coil`");
}

#[test]
fn unknown_field_is_named() {
    check_rejected("field.json", &GOOD.replace("\"series_resistance\"", "\"dcr\""), "unknown field `dcr`");
}

#[test]
fn missing_output_node_is_named() {
    check_rejected("output.json", &GOOD.replace("\"output\": \"out\"", "\"output\": \"adc\""), "output names node adc");
}

#[test]
fn island_is_named() {
    let text = GOOD.replace(
        "\n ]}",
        ",\n {\"ref\": \"R7\", \"kind\": \"resistor\", \"value\": 1, \"nodes\": [\"p\", \"q\"]}\n ]}",
    );
    check_rejected("island.json", &text, "parts R7 (nodes p, q) are not connected to ground");
}

#[test]
fn zero_negative_and_nan_values_are_named() {
    check_rejected("zero.json", &GOOD.replace("\"1k\"", "0"), "part R1 has resistance 0");
    check_rejected("negative.json", &GOOD.replace("1e-7", "-1e-7"), "part C1 has capacitance -0.0000001");
    check_rejected("nan.json", &GOOD.replace("\"10m\"", "\"nan\""), "\"nan\"");
}

#[test]
fn unparseable_value_is_quoted() {
    check_rejected("4k7k.json", &GOOD.replace("\"1k\"", "\"4k7k\""), "\"4k7k\"");
}

#[test]
fn wrong_format_and_version_are_named() {
    check_rejected("format.json", &GOOD.replace("bandwright-design", "other-tool"), "its format is \"other-tool\"");
    check_rejected("version.json", &GOOD.replace("\"version\": 1", "\"version\": 9"), "version 9 cannot be read");
}

#[test]
fn bad_flags_are_named() {
    let path = write_temp("flags.json", GOOD);
    let path = path.to_str().unwrap();
    for (args, expected) in [
        (vec!["sweep", path, "--to", "4k7k"], "\"4k7k\""),
        (vec!["sweep", path, "--from", "0"], "--from 0: give a frequency above 0 Hz"),
        (vec!["sweep", path, "--from", "10k", "--to", "1k"], "must be above the start"),
        (vec!["sweep", path, "--points", "1"], "--points 1"),
        (vec!["sweep", path, "--points", "2.5"], "whole number"),
        (vec!["sweep", "/nonexistent/design.json"], "cannot read design file"),
    ] {
        let (code, _, stderr) = run(&args);
        assert_eq!(code, 2, "{args:?}: {stderr}");
        assert!(!stderr.contains("panicked"), "{stderr}");
        assert!(stderr.contains(expected), "{args:?}: {stderr:?} lacks {expected:?}");
    }
}

#[test]
fn cautions_are_printed() {
    let (code, stdout, _) = run(&["cautions"]);
    assert_eq!(code, 0);
    assert!(stdout.contains("hazardous voltages") && stdout.contains("voltage rating"));
}

/// Runs `fit` with the arguments and returns the parsed JSON.
fn fit_json(args: &[&str]) -> serde_json::Value {
    let mut all = vec!["fit", "--format", "json"];
    all.extend_from_slice(args);
    let (code, stdout, stderr) = run(&all);
    assert_eq!(code, 0, "{args:?}: {stderr}");
    serde_json::from_str(&stdout).unwrap()
}

fn check_fit_rejected(args: &[&str], expected: &str) {
    let mut all = vec!["fit"];
    all.extend_from_slice(args);
    let (code, _, stderr) = run(&all);
    assert_eq!(code, 2, "{args:?}: {stderr}");
    assert!(!stderr.contains("panicked"), "{stderr}");
    assert!(stderr.contains(expected), "{args:?}: {stderr:?} lacks {expected:?}");
}

#[test]
fn fit_json_has_the_documented_shape() {
    let value = fit_json(&[
        "--response",
        "lowpass",
        "--alignment",
        "butterworth",
        "--order",
        "5",
        "--cutoff",
        "10M",
        "--source",
        "50",
        "--load",
        "50",
        "--topology",
        "ladder",
        "--first",
        "shunt",
        "--capacitors",
        "E12",
        "--inductors",
        "E12",
        "--combine",
        "--alternatives",
        "3",
    ]);
    let alternatives = value["alternatives"].as_array().unwrap();
    assert_eq!(alternatives.len(), 3);
    for a in alternatives {
        let parts = a["parts"].as_array().unwrap();
        assert_eq!(parts.len(), 5);
        for p in parts {
            for key in ["ref", "kind", "ideal_value", "chosen_value", "chosen_parts", "deviation_pct"] {
                assert!(!p[key].is_null(), "{key} in {p}");
            }
            let n = p["chosen_parts"].as_array().unwrap().len();
            assert!(n == 1 || n == 2);
        }
        assert!(a["achieved"]["cutoff_hz"].as_f64().unwrap() > 0.0);
        assert!(a["max_response_deviation_db"].as_f64().unwrap() >= 0.0);
    }
    // Best first.
    let deviations: Vec<f64> = alternatives.iter().map(|a| a["max_response_deviation_db"].as_f64().unwrap()).collect();
    assert!(deviations.windows(2).all(|w| w[0] <= w[1]), "{deviations:?}");
}

#[test]
fn fit_save_writes_a_design_that_sweep_reads() {
    let saved = write_temp("saved.json", "");
    let (code, _, stderr) = run(&[
        "fit",
        "--response",
        "highpass",
        "--order",
        "3",
        "--cutoff",
        "2k",
        "--source",
        "600",
        "--load",
        "600",
        "--save",
        saved.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{stderr}");
    let (code, stdout, stderr) =
        run(&["info", saved.to_str().unwrap(), "--format", "json", "--from", "20", "--to", "200k"]);
    assert_eq!(code, 0, "{stderr}");
    let info: serde_json::Value = serde_json::from_str(&stdout).unwrap();
    // A Butterworth high-pass fitted to E12 parts: its -3 dB point lands within 10 % of 2 kHz.
    let corner = info["corners_hz"][0].as_f64().unwrap();
    assert!((corner / 2000.0 - 1.0).abs() < 0.1, "{corner}");
}

#[test]
fn fit_rc_and_rlc_report_their_figures() {
    let rc = fit_json(&["--order", "1", "--cutoff", "1k", "--topology", "rc", "--source", "100", "--load", "1M"]);
    let cutoff = rc["alternatives"][0]["achieved"]["cutoff_hz"].as_f64().unwrap();
    assert!((cutoff / 1000.0 - 1.0).abs() < 0.01, "{cutoff}");
    let rlc = fit_json(&[
        "--response",
        "bandpass",
        "--f0",
        "40k",
        "--q",
        "5",
        "--source",
        "50",
        "--load",
        "100",
        "--topology",
        "rlc",
    ]);
    let best = &rlc["alternatives"][0]["achieved"];
    assert!((best["f0_hz"].as_f64().unwrap() / 40e3 - 1.0).abs() < 0.05);
    assert!((best["q"].as_f64().unwrap() / 5.0 - 1.0).abs() < 0.05);
}

#[test]
fn fit_with_a_stock_list() {
    let stock = write_temp("coils.txt", "# my drawer of air-core coils\n0.33m\n0.47m\n0.68m\n1mH\n1.5m\n");
    let value = fit_json(&[
        "--order",
        "2",
        "--cutoff",
        "2k",
        "--topology",
        "rlc",
        "--load",
        "8",
        "--inductors",
        stock.to_str().unwrap(),
        "--capacitors",
        "E6",
    ]);
    let inductor =
        value["alternatives"][0]["parts"].as_array().unwrap().iter().find(|p| p["kind"] == "inductor").unwrap().clone();
    let chosen = inductor["chosen_value"].as_f64().unwrap();
    assert!([0.33e-3, 0.47e-3, 0.68e-3, 1e-3, 1.5e-3].iter().any(|v| (v / chosen - 1.0).abs() < 1e-9), "{chosen}");
    assert_eq!(inductor["series"], "coils");
}

#[test]
fn impossible_requirements_are_named() {
    check_fit_rejected(&["--order", "2", "--cutoff", "1k", "--topology", "rc"], "cannot exceed Q = 0.5");
    check_fit_rejected(&["--order", "0", "--cutoff", "1k"], "order 0");
    check_fit_rejected(&["--order", "9", "--cutoff", "1k", "--source", "50", "--load", "50"], "order 9");
    check_fit_rejected(
        &["--order", "3", "--cutoff", "0"],
        "--cutoff: \"0\" is not accepted: give a frequency above 0 Hz",
    );
    check_fit_rejected(&["--order", "3", "--cutoff", "-5k"], "give a frequency above 0 Hz");
    check_fit_rejected(
        &["--order", "4", "--cutoff", "1k", "--source", "50", "--load", "25", "--first", "series"],
        "cannot be synthesized",
    );
    let empty = write_temp("empty.txt", "# nothing here yet\n\n");
    check_fit_rejected(
        &["--order", "3", "--cutoff", "1k", "--source", "50", "--load", "50", "--inductors", empty.to_str().unwrap()],
        "stock list",
    );
    check_fit_rejected(&["--order", "3", "--cutoff", "1k", "--capacitors", "E7"], "not an E-series name");
    check_fit_rejected(&["--order", "3", "--cutoff", "1k", "--q", "2"], "--q: q goes with f0");
    check_fit_rejected(
        &["--order", "3", "--alignment", "linkwitz-riley", "--cutoff", "1k", "--source", "8", "--load", "8"],
        "needs an even order",
    );
    check_fit_rejected(
        &["--f0", "1k", "--q", "2", "--topology", "rlc", "--first", "shunt", "--source", "50"],
        "needs a resistive load",
    );
    check_fit_rejected(
        &["--cutoff", "1k", "--first", "middle"],
        "--first: \"middle\" is not a choice: use series or shunt",
    );
}
