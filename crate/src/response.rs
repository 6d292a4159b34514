//! A swept response and the quantities derived from it: magnitude in dB, unwrapped phase, exact
//! group delay and input impedance.
//!
//! Conventions: dB = 20·log10|H|; phase = arg H in degrees; group delay τ = −dφ/dω in seconds,
//! computed from the exact derivative as τ = −Im(H′/H) with H′ = dH/dω. A point where the
//! circuit could not be solved, or where H = 0 exactly, yields `None` for the quantities that are
//! undefined there, never NaN.
//!
//! Phase unwrapping: the first solved point takes its principal value in (−180°, 180°]. Each
//! following point takes the 360° branch nearest to the previous phase plus a predicted step. The
//! prediction is −τ_min·Δω, where τ_min is the smaller of the two end points' group delays in
//! magnitude when both have the same sign, and 0 otherwise. This never predicts more phase change
//! than the delay at either end implies, so a resonance sampled at its peak cannot throw the
//! branch off, while a long pure delay between coarse points is still followed.

use crate::mna::{Solution, SolveError};
use num_complex::Complex64;
use std::f64::consts::PI;

/// dB per neper of amplitude: 20/ln 10.
pub const DB_PER_NEPER: f64 = 8.685_889_638_065_037;

/// The results of a sweep, one per frequency, in grid order.
#[derive(Debug, Clone, PartialEq)]
pub struct Response {
    f_hz: Vec<f64>,
    solutions: Vec<Result<Solution, SolveError>>,
}

impl Response {
    /// A response from frequencies and their solutions.
    ///
    /// # Panics
    /// If the two lists differ in length.
    pub fn new(f_hz: Vec<f64>, solutions: Vec<Result<Solution, SolveError>>) -> Self {
        assert_eq!(f_hz.len(), solutions.len(), "one solution per frequency");
        Self { f_hz, solutions }
    }

    /// The frequencies in Hz.
    pub fn frequencies(&self) -> &[f64] {
        &self.f_hz
    }

    /// The per-point results.
    pub fn solutions(&self) -> &[Result<Solution, SolveError>] {
        &self.solutions
    }

    /// The number of points.
    pub fn len(&self) -> usize {
        self.f_hz.len()
    }

    /// Whether there are no points.
    pub fn is_empty(&self) -> bool {
        self.f_hz.is_empty()
    }

    /// The points that could not be solved, with their errors.
    pub fn unsolved(&self) -> Vec<(usize, SolveError)> {
        self.solutions.iter().enumerate().filter_map(|(i, s)| s.as_ref().err().map(|e| (i, *e))).collect()
    }

    /// H at each point (`None` where unsolved).
    pub fn transfer(&self) -> Vec<Option<Complex64>> {
        self.solutions.iter().map(|s| s.as_ref().ok().map(|s| s.transfer)).collect()
    }

    /// 20·log10|H| at each point.
    pub fn magnitude_db(&self) -> Vec<Option<f64>> {
        self.solutions.iter().map(|s| s.as_ref().ok().and_then(|s| magnitude_db(s.transfer))).collect()
    }

    /// Group delay τ = −Im(H′/H) in seconds at each point.
    pub fn group_delay_s(&self) -> Vec<Option<f64>> {
        self.solutions.iter().map(|s| s.as_ref().ok().and_then(group_delay_s)).collect()
    }

    /// The slope of the magnitude, d(dB)/d(ln f) = (20/ln 10)·ω·Re(H′/H), at each point.
    pub fn magnitude_slope_db_per_neper(&self) -> Vec<Option<f64>> {
        self.solutions.iter().map(|s| s.as_ref().ok().and_then(magnitude_slope)).collect()
    }

    /// The input impedance seen by the stimulus at each point, in Ω.
    pub fn input_impedance(&self) -> Vec<Option<Complex64>> {
        self.solutions.iter().map(|s| s.as_ref().ok().and_then(|s| s.input_impedance)).collect()
    }

    /// The phase of H in degrees, unwrapped along the grid (see the module doc).
    pub fn phase_deg(&self) -> Vec<Option<f64>> {
        let mut out = Vec::with_capacity(self.len());
        let mut previous: Option<(f64, f64, Option<f64>)> = None; // (omega, phase_rad, tau)
        for (f, solution) in self.f_hz.iter().zip(&self.solutions) {
            let Some(solution) = solution.as_ref().ok().filter(|s| s.transfer.norm() > 0.0) else {
                out.push(None);
                continue;
            };
            let omega = 2.0 * PI * f;
            let principal = solution.transfer.arg();
            let tau = group_delay_s(solution);
            let phase = match previous {
                None => principal,
                Some((omega_prev, phase_prev, tau_prev)) => {
                    let step = match (tau_prev, tau) {
                        (Some(a), Some(b)) if a.signum() == b.signum() => -a.abs().min(b.abs()) * a.signum(),
                        _ => 0.0,
                    } * (omega - omega_prev);
                    let target = phase_prev + step;
                    principal + 2.0 * PI * ((target - principal) / (2.0 * PI)).round()
                }
            };
            previous = Some((omega, phase, tau));
            out.push(Some(phase.to_degrees()));
        }
        out
    }
}

/// 20·log10|h|, or `None` for h = 0.
pub fn magnitude_db(h: Complex64) -> Option<f64> {
    let m = h.norm();
    (m > 0.0 && m.is_finite()).then(|| 20.0 * m.log10())
}

/// τ = −Im(H′/H) for one solution, or `None` where H = 0.
pub fn group_delay_s(solution: &Solution) -> Option<f64> {
    log_derivative(solution).map(|d| -d.im)
}

fn magnitude_slope(solution: &Solution) -> Option<f64> {
    let omega = 2.0 * PI * solution.f_hz;
    log_derivative(solution).map(|d| DB_PER_NEPER * omega * d.re)
}

fn log_derivative(solution: &Solution) -> Option<Complex64> {
    if solution.transfer.norm() == 0.0 {
        return None;
    }
    let d = solution.transfer_derivative / solution.transfer;
    (d.re.is_finite() && d.im.is_finite()).then_some(d)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn point(f_hz: f64, transfer: Complex64, transfer_derivative: Complex64) -> Result<Solution, SolveError> {
        Ok(Solution {
            f_hz,
            transfer,
            transfer_derivative,
            input_impedance: None,
            node_voltages: vec![],
            elements: vec![],
        })
    }

    /// A pure delay e^{−jωT}: H′ = −jT·H.
    fn delay_response(f: &[f64], t: f64) -> Response {
        let solutions = f
            .iter()
            .map(|&f| {
                let h = Complex64::from_polar(1.0, -2.0 * PI * f * t);
                point(f, h, Complex64::new(0.0, -t) * h)
            })
            .collect();
        Response::new(f.to_vec(), solutions)
    }

    #[test]
    fn pure_delay_is_followed_across_coarse_points() {
        // 1 ms delay sampled every 1.7 kHz: the phase falls 612° between points.
        let f: Vec<f64> = (0..6).map(|i| 100.0 + 1700.0 * i as f64).collect();
        let response = delay_response(&f, 1e-3);
        for (phase, f) in response.phase_deg().iter().zip(&f) {
            let exact = -360.0 * f * 1e-3;
            assert!((phase.unwrap() - exact).abs() < 1e-9, "f = {f}: {phase:?} vs {exact}");
        }
        for tau in response.group_delay_s() {
            assert!((tau.unwrap() - 1e-3).abs() < 1e-15);
        }
    }

    #[test]
    fn zero_transfer_gives_none_not_nan() {
        let zero = Complex64::new(0.0, 0.0);
        let response =
            Response::new(vec![1.0, 2.0], vec![point(1.0, zero, zero), Err(SolveError::Singular { f_hz: 2.0 })]);
        assert_eq!(response.magnitude_db(), vec![None, None]);
        assert_eq!(response.phase_deg(), vec![None, None]);
        assert_eq!(response.group_delay_s(), vec![None, None]);
        assert_eq!(response.unsolved().len(), 1);
    }
}
