//! The benchmarks' circuit: a doubly terminated Butterworth LC ladder, shunt C first, with
//! g_k = 2 sin((2k−1)π/2n) (references §2.1), C_k = g_k/(R0·ωc), L_k = g_k·R0/ωc.

use bandwright::{Circuit, CircuitBuilder, Probe};
use std::f64::consts::PI;

/// The n-th order ladder between `r0` ohms at both ends, cutoff `fc_hz`; output at the last node.
pub fn butterworth_ladder(n: usize, r0: f64, fc_hz: f64) -> (Circuit, Probe) {
    let omega_c = 2.0 * PI * fc_hz;
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
