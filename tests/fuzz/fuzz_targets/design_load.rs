//! Fuzz target: reading design files with `bandwright::design` and solving what they describe.
//!
//! For any bytes (read as UTF-8, invalid sequences replaced by U+FFFD):
//! - `parse_design` returns, never panics; an error's message can be written.
//! - A design it accepts converts with `to_circuit`, and writing it with `to_json` and reading
//!   that back gives an equal design and an equal circuit and probe (the module promises a
//!   written file reads back bit for bit).
//! - `AcSystem::new` on that circuit and `solve_at(1 kHz, Detail::Full)` return without
//!   panicking; a solve error is fine, and a solution has one voltage per node and one state per
//!   element.
#![no_main]

use bandwright::design::parse_design;
use bandwright::mna::{AcSystem, Detail};
use libfuzzer_sys::fuzz_target;

/// The frequency every accepted design is solved at, in Hz.
const F_HZ: f64 = 1000.0;

fuzz_target!(|data: &[u8]| {
    let text = String::from_utf8_lossy(data);
    let design = match parse_design(&text) {
        Ok(design) => design,
        Err(error) => {
            let _message = error.to_string();
            return;
        }
    };
    let (circuit, probe) = match design.to_circuit() {
        Ok(pair) => pair,
        Err(error) => panic!("parse_design accepted a design that to_circuit refuses: {error}"),
    };

    let written = design.to_json();
    let again = match parse_design(&written) {
        Ok(again) => again,
        Err(error) => panic!("the written design cannot be read back: {error}\n{written}"),
    };
    assert_eq!(design, again, "the design changed on a write and read\n{written}");
    let again_pair = again.to_circuit().expect("the read-back design converts");
    assert_eq!((&circuit, &probe), (&again_pair.0, &again_pair.1), "the circuit changed on a write and read");

    let mut system = AcSystem::new(&circuit, &probe);
    if let Ok(solution) = system.solve_at(F_HZ, Detail::Full) {
        assert_eq!(solution.node_voltages.len(), circuit.n_nodes());
        assert_eq!(solution.elements.len(), circuit.elements().len());
    }
});
