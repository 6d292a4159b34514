//! End-to-end tests of `bandwright crossover`: the examples, hand-checked figures, the output
//! formats, and bad files giving exit code 2 with a message that names the field or CSV line.

use std::path::PathBuf;
use std::process::Command;

fn examples() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../examples/crossover")
}

fn example(name: &str) -> String {
    examples().join(name).to_str().unwrap().to_string()
}

fn run(args: &[&str]) -> (i32, String, String) {
    let output = Command::new(env!("CARGO_BIN_EXE_bandwright")).args(args).output().expect("binary runs");
    (
        output.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&output.stdout).into_owned(),
        String::from_utf8_lossy(&output.stderr).into_owned(),
    )
}

fn temp_dir() -> PathBuf {
    let dir = std::env::temp_dir().join(format!("bandwright-cli-crossover-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

fn write_temp(name: &str, text: &str) -> String {
    let path = temp_dir().join(name);
    std::fs::write(&path, text).unwrap();
    path.to_str().unwrap().to_string()
}

fn json_of(args: &[&str]) -> serde_json::Value {
    let (code, stdout, stderr) = run(args);
    assert_eq!(code, 0, "{stderr}");
    serde_json::from_str(&stdout).expect("the JSON output parses")
}

/// Runs `crossover` on a file text that must be refused and checks the message.
fn check_rejected(name: &str, text: &str, expected: &str) {
    let path = write_temp(name, text);
    check_rejected_args(&["crossover", &path], expected);
}

fn check_rejected_args(args: &[&str], expected: &str) {
    let (code, stdout, stderr) = run(args);
    assert_eq!(code, 2, "{args:?}: exit code, stderr {stderr}");
    assert!(stdout.is_empty(), "{args:?}: nothing on stdout");
    assert!(!stderr.contains("panicked"), "{args:?}: {stderr}");
    assert!(stderr.contains(expected), "{args:?}: {stderr:?} lacks {expected:?}");
}

/// A 2-way into plain resistors, with ideal coils.
fn resistor_two_way(order: usize, alignment: &str, f: &str) -> String {
    format!(
        r#"{{"format": "bandwright-crossover", "version": 1, "name": "resistor check",
         "nominal_impedance": 8, "crossover_frequencies": ["{f}"],
         "defaults": {{"order": {order}, "alignment": "{alignment}"}},
         "branches": [{{"name": "low", "driver": {{"resistor": 8}}}},
                      {{"name": "high", "driver": {{"resistor": "8R"}}}}]}}"#
    )
}

fn number(value: &serde_json::Value) -> f64 {
    value.as_f64().unwrap_or_else(|| panic!("{value} is not a number"))
}

#[test]
fn examples_print_every_section() {
    for (file, branches) in [
        ("crossover-2way-lr4.json", &["woofer", "tweeter"][..]),
        ("crossover-3way.json", &["woofer", "mid", "tweeter"]),
    ] {
        let (code, stdout, stderr) = run(&["crossover", &example(file)]);
        assert_eq!(code, 0, "{file}: {stderr}");
        for name in branches {
            assert!(stdout.contains(&format!("branch {name}: ")), "{file}: branch {name}");
            assert!(stdout.contains(&format!("driver {name}: up to ")), "{file}: driver power {name}");
        }
        for needle in [
            "4th-order Linkwitz-Riley",
            "minimum rating",
            "worst deviation, designed",
            "sum, as built: ",
            "flatness",
            "minimum |Z|, as built: ",
            "% of nominal",
            "rule of thumb (common practice, not a standard)",
            "coil DCR passband loss",
            "stress at 100.0 W into 8.000 Ω (28.28 V rms from the amplifier)",
            "2 × peak",
            "margins are common practice",
        ] {
            assert!(stdout.contains(needle), "{file}: lacks {needle:?}");
        }
        // The cautions come with the stress results, all of them, after the stress table.
        let stress_at = stdout.find("stress at").unwrap();
        for caution in bandwright::STRESS_CAUTIONS {
            let at = stdout.find(caution.title).unwrap_or_else(|| panic!("{file}: caution {}", caution.title));
            assert!(at > stress_at, "{file}: caution before the stress table");
        }
        assert!(stdout.contains("bipolar"), "{file}");
    }
}

#[test]
fn example_json_has_all_parts_and_plausible_figures() {
    for file in ["crossover-2way-lr4.json", "crossover-3way.json"] {
        let value = json_of(&["crossover", &example(file), "--format", "json", "--per-decade", "24"]);
        let f = value["frequency_hz"].as_array().unwrap();
        assert_eq!(f.len(), 3 * 24 + 1, "{file}");
        assert_eq!((number(&f[0]), number(&f[f.len() - 1])), (20.0, 20e3));
        for analysis in ["designed", "as_built"] {
            let a = &value[analysis];
            assert!(a["unsolved"].as_array().unwrap().is_empty(), "{file} {analysis}: the CSV covers the band");
            assert_eq!(a["sum_db"].as_array().unwrap().len(), f.len());
            assert_eq!(a["impedance_ohm"].as_array().unwrap().len(), f.len());
            for branch in a["branches"].as_array().unwrap() {
                assert_eq!(branch["acoustic_db"].as_array().unwrap().len(), f.len());
                // Coil DCR can only lose level in the passband.
                let loss = number(&branch["coil_loss"]["loss_db"]);
                assert!((-2.0..=1e-9).contains(&loss), "{file}: coil loss {loss}");
            }
            // The demo drivers are not compensated perfectly, but the sum stays within a few dB.
            let flatness = number(&a["sum"]["flatness_db"]);
            assert!(flatness > 0.0 && flatness < 6.0, "{file} {analysis}: flatness {flatness}");
            let minimum = &a["impedance_minimum"];
            let z = number(&minimum["magnitude_ohm"]);
            let at = number(&minimum["f_hz"]);
            assert!(z > 1.0 && z < 8.0 && (20.0..=20e3).contains(&at), "{file}: |Z| min {z} at {at}");
            assert_eq!(minimum["below_rule_of_thumb"].as_bool(), Some(z < 0.8 * 8.0));
            assert_eq!(minimum["rule_source"], "common practice, not a standard");
            let stress = &a["stress"];
            assert!((number(&stress["amplifier_volts_rms"]) - 800f64.sqrt()).abs() < 1e-9);
            for part in stress["parts"].as_array().unwrap() {
                let worst = number(&part["worst"]);
                let rating = number(&part["minimum_rating"]);
                assert!(worst > 0.0 && rating > worst, "{file}: {part}");
            }
        }
        // Every crossover part is in the parts list with a standard value and a rating.
        let parts = value["parts"].as_array().unwrap();
        assert!(parts.len() >= 10, "{file}");
        for part in parts {
            let (ideal, standard) = (number(&part["ideal"]), number(&part["standard"]));
            // E12 / E24: the nearest value is within half the widest step (11.1 % for E12,
            // references.md §1.3).
            assert!((standard / ideal - 1.0).abs() < 0.125, "{file}: {part}");
            assert!(number(&part["minimum_rating"]["value"]) > 0.0, "{file}: {part}");
        }
        assert_eq!(value["cautions"].as_array().unwrap().len(), bandwright::STRESS_CAUTIONS.len());
        assert_eq!(value["request"]["format"], "bandwright-crossover");
    }
}

// Source: the Linkwitz-Riley alignment is the square of a Butterworth one, so each 4th-order
// branch is 2 × −3.01 dB = −6.02 dB at the crossover and the in-phase sum is an all-pass, 0 dB
// (common practice; the core's own reference tests check the ladder values against the published
// constants).
#[test]
fn lr4_into_resistors_sums_flat() {
    let path = write_temp("lr4.json", &resistor_two_way(4, "linkwitz-riley", "2k"));
    let value = json_of(&["crossover", &path, "--format", "json"]);
    let designed = &value["designed"];
    let (max, min) = (number(&designed["sum"]["max_db"]), number(&designed["sum"]["min_db"]));
    assert!(max < 0.2 && min > -0.2 && max - min < 1e-6, "designed sum {min} .. {max}");
    for branch in designed["branches"].as_array().unwrap() {
        let at = &branch["at_crossover_db"][0];
        assert_eq!(number(&at["f_hz"]), 2000.0);
        assert!((number(&at["db"]) + 6.0206).abs() < 1e-3, "{at}");
    }
    // Source: scipy.signal 1.17.1, butter(2, 2π·2000, btype, analog=True) squared, freqs at
    // 20 Hz, 632.46 Hz, 2 kHz, 6.3246 kHz and 20 kHz; dB and np.unwrap'd phase in degrees.
    // Values printed to 9 and 6 decimals, so tolerances of 1e-8 dB and 1e-5°.
    let value = json_of(&["crossover", &path, "--format", "json", "--per-decade", "2"]);
    let f = value["frequency_hz"].as_array().unwrap();
    let picks = [0, 3, 4, 5, 6];
    assert_eq!(picks.map(|i| (number(&f[i]) * 1e3).round() / 1e3), [20.0, 632.456, 2000.0, 6324.555, 20000.0]);
    let scipy_db = [
        [-0.000000087, -0.086427476, -6.020599913, -40.086427476, -80.000868546],
        [-160.000000087, -40.086427476, -6.020599913, -0.086427476, -0.000868546],
    ];
    let scipy_phase = [-1.620623, -52.845930, -180.0, -307.154070, -343.740614];
    for (k, branch) in value["designed"]["branches"].as_array().unwrap().iter().enumerate() {
        for (j, &i) in picks.iter().enumerate() {
            let db = number(&branch["electrical_db"][i]);
            let phase = number(&branch["electrical_phase_deg"][i]);
            assert!((db - scipy_db[k][j]).abs() < 1e-8, "branch {k} at {}: {db} dB", f[i]);
            assert!((phase - scipy_phase[j]).abs() < 1e-5, "branch {k} at {}: {phase}°", f[i]);
        }
    }
    // Built from E192 values (half-gap 0.97 %, references.md §1.3) the sum stays within ±0.2 dB.
    let value = json_of(&["crossover", &path, "--format", "json", "--capacitors", "E192", "--inductors", "E192"]);
    let built = &value["as_built"]["sum"];
    let (max, min) = (number(&built["max_db"]), number(&built["min_db"]));
    assert!(max < 0.2 && min > -0.2, "E192 sum {min} .. {max}");
    // The table says the same.
    let (code, stdout, _) = run(&["crossover", &path, "--capacitors", "E192", "--inductors", "E192"]);
    assert_eq!(code, 0);
    assert!(stdout.contains("sum, designed: +0.000 dB at "), "{stdout}");
    assert!(stdout.contains("to +0.000 dB at ") && stdout.contains("flatness 0.000 dB"), "{stdout}");
}

// Hand calculation: 100 W into 8 Ω is √800 = 28.28 V rms. A 1st-order Butterworth 2-way into
// 8 Ω resistors (L = R/ωc, C = 1/(ωc·R)) is a constant-resistance network: L/C = R², so the
// amplifier sees exactly 8 Ω at every frequency (constant-resistance condition, from memory),
// and the sum LP + HP = 1/(1 + s) + s/(1 + s) = 1 is flat. At 20 Hz, far below fc = 3 kHz, the
// high-pass capacitor takes nearly all of the 28.28 V: |V_C| = 28.28/√(1 + (20/3000)²), and the
// low-pass coil carries 28.28/|8 + jωL| with ωL = 8·20/3000 Ω.
#[test]
fn first_order_two_way_matches_hand_calculation() {
    let path = write_temp("first.json", &resistor_two_way(1, "butterworth", "3k"));
    let value = json_of(&["crossover", &path, "--format", "json", "--power", "100"]);
    let designed = &value["designed"];
    let volts = 800f64.sqrt();
    assert!((number(&designed["stress"]["amplifier_volts_rms"]) - 28.284_271).abs() < 1e-6);
    let parts = designed["stress"]["parts"].as_array().unwrap();
    let find = |reference: &str| parts.iter().find(|p| p["reference"] == reference).unwrap();
    let cap = find("high.C1");
    let expected_v = volts / (1.0 + (20.0f64 / 3000.0).powi(2)).sqrt();
    assert!((number(&cap["worst"]) - expected_v).abs() < 1e-9 * expected_v, "{cap}");
    assert_eq!(number(&cap["at_hz"]), 20.0);
    // Minimum rating: margin 2 over the peak √2·|V|.
    assert!((number(&cap["minimum_rating"]) - 2.0 * 2f64.sqrt() * expected_v).abs() < 1e-6, "{cap}");
    let coil = find("low.L1");
    let expected_i = volts / (64.0 + (8.0f64 * 20.0 / 3000.0).powi(2)).sqrt();
    assert!((number(&coil["worst"]) - expected_i).abs() < 1e-9 * expected_i, "{coil}");
    assert!((number(&coil["minimum_rating"]) - 1.5 * expected_i).abs() < 1e-9, "{coil}");
    let minimum = &designed["impedance_minimum"];
    assert!((number(&minimum["magnitude_ohm"]) - 8.0).abs() < 1e-9, "{minimum}");
    assert_eq!(minimum["below_rule_of_thumb"].as_bool(), Some(false));
    let sum = &designed["sum"];
    assert!(number(&sum["flatness_db"]) < 1e-9 && number(&sum["max_db"]).abs() < 1e-9, "{sum}");
    // Each driver's worst is at its own band edge: 100 W·|H|² with |H|² = 1/(1 + r²) for the
    // low-pass at r = 20/3000 and r²/(1 + r²) for the high-pass at r = 20000/3000.
    let drivers = designed["stress"]["drivers"].as_array().unwrap();
    let (r_low, r_high) = (20.0f64 / 3000.0, 20000.0f64 / 3000.0);
    let expected = [(20.0, 100.0 / (1.0 + r_low * r_low)), (20e3, 100.0 * r_high * r_high / (1.0 + r_high * r_high))];
    for (driver, (f, watts)) in drivers.iter().zip(expected) {
        assert_eq!(number(&driver["at_hz"]), f, "{driver}");
        assert!((number(&driver["worst_w"]) - watts).abs() < 1e-9 * watts, "{driver}: {watts}");
    }
    // The table prints the capacitor's figure.
    let (_, stdout, _) = run(&["crossover", &path, "--power", "100"]);
    assert!(stdout.contains("28.28 V rms from the amplifier"), "{stdout}");
}

#[test]
fn csv_has_a_column_pair_per_branch_and_a_row_per_frequency() {
    let (code, stdout, stderr) = run(&[
        "crossover",
        &example("crossover-3way.json"),
        "--format",
        "csv",
        "--from",
        "100",
        "--to",
        "10k",
        "--per-decade",
        "10",
    ]);
    assert_eq!(code, 0, "{stderr}");
    let mut lines = stdout.lines().filter(|l| !l.starts_with('#'));
    let header = lines.next().unwrap();
    assert_eq!(
        header,
        "frequency_hz,woofer_db,woofer_phase_deg,mid_db,mid_phase_deg,tweeter_db,tweeter_phase_deg,sum_db,sum_phase_deg,impedance_ohm,impedance_phase_deg"
    );
    let rows: Vec<Vec<f64>> = lines.map(|l| l.split(',').map(|c| c.parse::<f64>().unwrap()).collect()).collect();
    assert_eq!(rows.len(), 2 * 10 + 1);
    assert_eq!((rows[0][0], rows[20][0]), (100.0, 1e4));
    for row in &rows {
        assert_eq!(row.len(), 11);
        assert!(row[9] > 0.0 && row[10].abs() <= 90.0, "a passive load: {row:?}");
    }
    // Phase is unwrapped: no step of 180° or more between rows.
    for column in [2, 4, 6, 8] {
        for pair in rows.windows(2) {
            assert!((pair[1][column] - pair[0][column]).abs() < 180.0, "column {column}");
        }
    }
}

#[test]
fn svg_plot_is_written() {
    let svg = temp_dir().join("crossover.svg");
    let (code, _, stderr) = run(&["crossover", &example("crossover-2way-lr4.json"), "--svg", svg.to_str().unwrap()]);
    assert_eq!(code, 0, "{stderr}");
    let text = std::fs::read_to_string(&svg).unwrap();
    assert!(text.starts_with("<svg") && text.contains("tweeter") && text.contains("sum"), "{}", &text[..200]);
}

#[test]
fn bad_files_name_the_field() {
    let good = resistor_two_way(4, "linkwitz_riley", "2k");
    check_rejected(
        "order.json",
        &good
            .replace("[\"2k\"]", "[\"2k\", \"300\"]")
            .replace("\"branches\": [", "\"branches\": [{\"name\": \"mid\", \"driver\": {\"resistor\": 8}},"),
        "crossover_frequencies[1] is 300 Hz; it must be above crossover_frequencies[0] (2000 Hz)",
    );
    check_rejected(
        "re.json",
        &good.replace("{\"resistor\": 8}", "{\"model\": {\"re\": 0, \"le\": \"0.5m\"}}"),
        "branches[0].driver.model.re is 0",
    );
    check_rejected(
        "re-negative.json",
        &good.replace("{\"resistor\": \"8R\"}", "{\"model\": {\"re\": \"-6\"}}"),
        "branches[1].driver.model.re is -6",
    );
    check_rejected(
        "unknown.json",
        &good.replace("\"nominal_impedance\"", "\"impedance\": 8, \"nominal_impedance\""),
        "unknown field `impedance`",
    );
    check_rejected("notation.json", &good.replace("[\"2k\"]", "[\"2q\"]"), "2q");
    check_rejected("design.json", &good.replace("bandwright-crossover", "bandwright-design"), "not a crossover file");
}

#[test]
fn bad_csv_names_its_line() {
    let dir = temp_dir();
    std::fs::write(dir.join("bad-z.csv"), "# demo\nf,z,p\n100,8,0\n1000,9,5\n800,9,5\n20000,10,9\n").unwrap();
    let text =
        resistor_two_way(2, "butterworth", "2k").replace("{\"resistor\": \"8R\"}", "{\"measured\": \"bad-z.csv\"}");
    check_rejected("csv.json", &text, "line 5: frequency 800 Hz is not above the 1000 Hz before it");
    check_rejected("csv2.json", &text, "named by branches[1].driver.measured");
    let missing = text.replace("bad-z.csv", "no-such.csv");
    check_rejected("missing.json", &missing, "cannot read");
}

#[test]
fn bad_flags_are_named() {
    let path = write_temp("flags.json", &resistor_two_way(2, "butterworth", "2k"));
    check_rejected_args(&["crossover", &path, "--power", "-5"], "--power -5");
    check_rejected_args(&["crossover", &path, "--power", "lots"], "--power");
    check_rejected_args(&["crossover", &path, "--from", "2k", "--to", "1k"], "--to 1k");
    check_rejected_args(&["crossover", &path, "--per-decade", "2.5"], "--per-decade 2.5");
    check_rejected_args(&["crossover", &path, "--capacitors", "E7"], "--capacitors E7");
    check_rejected_args(&["crossover", "/nonexistent/x.json"], "cannot read crossover file");
}
