//! Synthetic data for the chart tests and the demo example: a first-order RC low-pass,
//! H(f) = 1 / (1 + j f/fc), computed here in closed form. Invented demo data, not a design.

#![allow(dead_code)]

use std::f64::consts::PI;

/// Cutoff of the synthetic low-pass, in Hz.
pub const CUTOFF_HZ: f64 = 1000.0;

/// Sampled responses of the RC low-pass on a log grid.
pub struct LowPass {
    pub f_hz: Vec<f64>,
    pub magnitude_db: Vec<Option<f64>>,
    pub phase_deg: Vec<Option<f64>>,
    pub group_delay_s: Vec<Option<f64>>,
    /// The straight-line (asymptotic) magnitude: 0 dB below fc, -20 dB/decade above.
    pub asymptote_db: Vec<Option<f64>>,
    /// |Z| seen at the input of the RC divider (R = 1 kΩ, C = 1/(2π R fc)), in ohms.
    pub input_impedance_ohm: Vec<Option<f64>>,
}

/// `n_points` log-spaced frequencies from `f_lo` to `f_hi` (inclusive), in Hz.
pub fn log_grid(f_lo: f64, f_hi: f64, n_points: usize) -> Vec<f64> {
    let (a, b) = (f_lo.log10(), f_hi.log10());
    (0..n_points).map(|i| 10f64.powf(a + (b - a) * i as f64 / (n_points - 1) as f64)).collect()
}

/// The low-pass sampled over 10 Hz to 100 kHz. The point at index `gap_idx` (if any) is
/// marked unsolvable (`None`) in every response, to exercise gaps.
pub fn low_pass(n_points: usize, gap_idx: Option<usize>) -> LowPass {
    let f_hz = log_grid(10.0, 100_000.0, n_points);
    let resistance_ohm = 1000.0;
    let capacitance_f = 1.0 / (2.0 * PI * resistance_ohm * CUTOFF_HZ);
    let keep = |i: usize, value: f64| (Some(i) != gap_idx).then_some(value);
    let mut response = LowPass {
        f_hz: f_hz.clone(),
        magnitude_db: Vec::new(),
        phase_deg: Vec::new(),
        group_delay_s: Vec::new(),
        asymptote_db: Vec::new(),
        input_impedance_ohm: Vec::new(),
    };
    for (i, &f) in f_hz.iter().enumerate() {
        let ratio = f / CUTOFF_HZ;
        // |H|² = 1 / (1 + ratio²); phase = -atan(ratio); tau = (1 / ω_c) / (1 + ratio²).
        response.magnitude_db.push(keep(i, -10.0 * (1.0 + ratio * ratio).log10()));
        response.phase_deg.push(keep(i, -ratio.atan().to_degrees()));
        response.group_delay_s.push(keep(i, 1.0 / (2.0 * PI * CUTOFF_HZ) / (1.0 + ratio * ratio)));
        response.asymptote_db.push(Some(if ratio <= 1.0 { 0.0 } else { -20.0 * ratio.log10() }));
        // Z_in = R + 1/(jωC): |Z| = sqrt(R² + (1/(ωC))²).
        let reactance_ohm = 1.0 / (2.0 * PI * f * capacitance_f);
        response.input_impedance_ohm.push(keep(i, resistance_ohm.hypot(reactance_ohm)));
    }
    response
}
