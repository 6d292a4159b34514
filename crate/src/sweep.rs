//! Frequency grids (log-spaced or listed) and the sweep that solves a circuit over one.
//!
//! A log grid from f_start to f_stop with N points is f_i = f_start·(f_stop/f_start)^(i/(N−1)),
//! i = 0…N−1, with both end points exact. Given points per decade P instead, N = ⌈P·decades⌉ + 1.
//! A sweep never fails as a whole: each point holds its own result.

use crate::mna::{AcSystem, Detail};
use crate::modal::Modal;
use crate::response::Response;
use std::fmt;

/// The most points a grid may have (a guard against typing an exponent by mistake).
pub const MAX_POINTS: usize = 10_000_000;

/// How a log grid is spaced.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Spacing {
    /// A total number of points, ≥ 2.
    Points(usize),
    /// Points per decade, ≥ 1.
    PerDecade(f64),
}

/// An ordered list of frequencies in Hz.
#[derive(Debug, Clone, PartialEq)]
pub struct FrequencyGrid {
    f_hz: Vec<f64>,
}

/// Why a grid could not be made.
#[derive(Debug, Clone, PartialEq)]
pub enum GridError {
    /// A start or stop frequency is not finite and > 0.
    BadEdge {
        /// "start" or "stop".
        which: &'static str,
        /// The offending value in Hz.
        f_hz: f64,
    },
    /// The stop frequency is not above the start.
    Reversed {
        /// Start in Hz.
        start_hz: f64,
        /// Stop in Hz.
        stop_hz: f64,
    },
    /// The point count is too small or too large.
    BadCount {
        /// The resulting or given count.
        points: f64,
    },
    /// A listed frequency is negative or not finite.
    BadListed {
        /// Its position in the list.
        index: usize,
        /// The value in Hz.
        f_hz: f64,
    },
    /// The list is empty.
    EmptyList,
}

impl fmt::Display for GridError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::BadEdge { which, f_hz } => {
                write!(f, "the {which} frequency {f_hz} Hz is not usable; give a finite frequency above 0 Hz")
            }
            Self::Reversed { start_hz, stop_hz } => write!(
                f,
                "the sweep runs from {start_hz} Hz to {stop_hz} Hz; the stop frequency must be above the start"
            ),
            Self::BadCount { points } => write!(
                f,
                "{points} points is not a usable grid; use at least 2 points (or ≥ 1 per decade) and at most {MAX_POINTS}"
            ),
            Self::BadListed { index, f_hz } => {
                write!(f, "listed frequency #{} is {f_hz} Hz; frequencies must be finite and ≥ 0", index + 1)
            }
            Self::EmptyList => write!(f, "the frequency list is empty; give at least one frequency"),
        }
    }
}

impl std::error::Error for GridError {}

impl FrequencyGrid {
    /// A log-spaced grid from `start_hz` to `stop_hz`, both included.
    ///
    /// # Errors
    /// [`GridError`] for non-positive or reversed edges and unusable point counts.
    pub fn log(start_hz: f64, stop_hz: f64, spacing: Spacing) -> Result<Self, GridError> {
        for (which, f_hz) in [("start", start_hz), ("stop", stop_hz)] {
            if !(f_hz.is_finite() && f_hz > 0.0) {
                return Err(GridError::BadEdge { which, f_hz });
            }
        }
        if stop_hz <= start_hz {
            return Err(GridError::Reversed { start_hz, stop_hz });
        }
        let n = match spacing {
            Spacing::Points(n) => n as f64,
            Spacing::PerDecade(p) => {
                if !(p.is_finite() && p >= 1.0) {
                    return Err(GridError::BadCount { points: p });
                }
                (p * (stop_hz / start_hz).log10()).ceil() + 1.0
            }
        };
        if !(2.0..=MAX_POINTS as f64).contains(&n) {
            return Err(GridError::BadCount { points: n });
        }
        let n = n as usize;
        let ratio_ln = (stop_hz / start_hz).ln();
        let mut f_hz: Vec<f64> = (0..n).map(|i| start_hz * (ratio_ln * i as f64 / (n - 1) as f64).exp()).collect();
        f_hz[0] = start_hz;
        f_hz[n - 1] = stop_hz;
        Ok(Self { f_hz })
    }

    /// A grid of the listed frequencies, kept in the given order (0 Hz is allowed).
    ///
    /// # Errors
    /// [`GridError::EmptyList`] or [`GridError::BadListed`].
    pub fn list(f_hz: Vec<f64>) -> Result<Self, GridError> {
        if f_hz.is_empty() {
            return Err(GridError::EmptyList);
        }
        if f_hz.len() > MAX_POINTS {
            return Err(GridError::BadCount { points: f_hz.len() as f64 });
        }
        if let Some((index, &bad)) = f_hz.iter().enumerate().find(|(_, f)| !(f.is_finite() && **f >= 0.0)) {
            return Err(GridError::BadListed { index, f_hz: bad });
        }
        Ok(Self { f_hz })
    }

    /// The frequencies in Hz.
    pub fn frequencies(&self) -> &[f64] {
        &self.f_hz
    }

    /// The number of points.
    pub fn len(&self) -> usize {
        self.f_hz.len()
    }

    /// Whether the grid is empty (never, for a grid made by the constructors).
    pub fn is_empty(&self) -> bool {
        self.f_hz.is_empty()
    }
}

/// A default sweep range for `circuit`: two decades beyond the lowest and highest of its
/// characteristic frequencies 1/(2π·RC), R/(2π·L) and 1/(2π·√(LC)) over every pair of parts,
/// limited to ten decades and to 1 mHz … 100 GHz. Falls back to 10 Hz … 100 kHz (the audio band
/// and beyond, common practice) for a circuit with no reactive part.
pub fn suggested_range(circuit: &crate::circuit::Circuit) -> (f64, f64) {
    use crate::circuit::ElementKind;
    let (mut r, mut c, mut l) = (Vec::new(), Vec::new(), Vec::new());
    for element in circuit.elements() {
        match element.kind {
            ElementKind::Resistor { resistance } => r.push(resistance),
            ElementKind::VoltageSource { series_resistance, .. } if series_resistance > 0.0 => {
                r.push(series_resistance)
            }
            ElementKind::Capacitor { capacitance, .. } => c.push(capacitance),
            ElementKind::Inductor { inductance, .. } => l.push(inductance),
            _ => {}
        }
    }
    let two_pi = 2.0 * std::f64::consts::PI;
    let mut f: Vec<f64> = Vec::new();
    for &cap in &c {
        f.extend(r.iter().map(|&res| 1.0 / (two_pi * res * cap)));
        f.extend(l.iter().map(|&ind| 1.0 / (two_pi * (ind * cap).sqrt())));
    }
    for &ind in &l {
        f.extend(r.iter().map(|&res| res / (two_pi * ind)));
    }
    f.retain(|x| x.is_finite() && *x > 0.0);
    if f.is_empty() {
        return (10.0, 1e5);
    }
    let low = f.iter().copied().fold(f64::INFINITY, f64::min);
    let high = f.iter().copied().fold(0.0, f64::max);
    let round_down = |x: f64| 10f64.powf(x.log10().floor());
    let round_up = |x: f64| 10f64.powf(x.log10().ceil());
    let (mut start, mut stop) = (round_down(low / 100.0).max(1e-3), round_up(high * 100.0).min(1e11));
    if stop / start > 1e10 {
        // Keep ten decades centred on the geometric middle of the characteristic frequencies.
        let middle = (low * high).sqrt();
        start = round_down(middle / 1e5);
        stop = start * 1e10;
    }
    if stop <= start {
        stop = start * 1e4;
    }
    (start, stop)
}

/// Solves `system` at every frequency of `grid`.
pub fn sweep(system: &mut AcSystem, grid: &FrequencyGrid, detail: Detail) -> Response {
    let solutions = grid.frequencies().iter().map(|&f| system.solve_at(f, detail)).collect();
    Response::new(grid.frequencies().to_vec(), solutions)
}

/// Solves `system` at every frequency of `grid` through the modal fast path ([`Modal`]) when it
/// is available and verified, and otherwise through [`sweep`] with [`Detail::Transfer`].
///
/// The result has the same meaning either way: transfer function, its exact derivative and the
/// input impedance at each point, within the modal self-check's 1e-9 of the LU path. The modal
/// form is built once per call and checked against the LU path at its own frequencies and at the
/// lowest and highest frequency of `grid`; building it costs about as much as a few dozen LU
/// points, and each point after that O(n).
pub fn sweep_fast(system: &mut AcSystem, grid: &FrequencyGrid) -> Response {
    let f_hz = grid.frequencies();
    let ends = [f_hz.iter().copied().fold(f64::INFINITY, f64::min), f_hz.iter().copied().fold(0.0, f64::max)];
    match Modal::verified_at(system, &ends) {
        Ok(modal) => Response::new(f_hz.to_vec(), modal.solve_all(f_hz)),
        Err(_) => sweep(system, grid, Detail::Transfer),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn log_grid_includes_both_ends() {
        let grid = FrequencyGrid::log(10.0, 1e5, Spacing::Points(5)).unwrap();
        assert_eq!(grid.frequencies()[0], 10.0);
        assert_eq!(grid.frequencies()[4], 1e5);
        for (got, want) in grid.frequencies().iter().zip([10.0, 100.0, 1e3, 1e4, 1e5]) {
            assert!((got - want).abs() / want < 1e-14);
        }
    }

    #[test]
    fn per_decade_count() {
        // 4 decades at 10 per decade: 41 points.
        assert_eq!(FrequencyGrid::log(1.0, 1e4, Spacing::PerDecade(10.0)).unwrap().len(), 41);
        // 2.5 decades at 4 per decade: ceil(10) + 1 = 11.
        assert_eq!(FrequencyGrid::log(1.0, 10f64.powf(2.5), Spacing::PerDecade(4.0)).unwrap().len(), 11);
    }

    #[test]
    fn suggested_range_brackets_the_corner() {
        let mut b = crate::circuit::CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0).resistor("R1", "in", "out", 1e3).capacitor("C1", "out", "0", 1e-7);
        // fc = 1.59 kHz: two decades either side, rounded out to decades.
        assert_eq!(suggested_range(&b.build().unwrap()), (10.0, 1e6));
    }

    #[test]
    fn bad_grids_are_named() {
        assert!(FrequencyGrid::log(0.0, 1.0, Spacing::Points(3))
            .unwrap_err()
            .to_string()
            .contains("start frequency 0"));
        assert!(FrequencyGrid::log(10.0, 1.0, Spacing::Points(3)).unwrap_err().to_string().contains("must be above"));
        assert!(FrequencyGrid::log(1.0, 10.0, Spacing::Points(1)).is_err());
        assert!(FrequencyGrid::log(1.0, 10.0, Spacing::PerDecade(f64::NAN)).is_err());
        assert!(FrequencyGrid::log(1.0, 1e300, Spacing::PerDecade(1e6)).is_err());
        assert!(FrequencyGrid::list(vec![1.0, -2.0]).unwrap_err().to_string().contains("#2 is -2"));
        assert_eq!(FrequencyGrid::list(vec![]), Err(GridError::EmptyList));
    }
}
