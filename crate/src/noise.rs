//! Thermal noise of a circuit at its output: the Johnson–Nyquist noise of every resistance,
//! carried to the output through the MNA, as a density per frequency and as an RMS total over a
//! band.
//!
//! # The noise sources
//! A resistance R at absolute temperature T has an open-circuit noise voltage of one-sided power
//! density 4kTR (V²/Hz), or equivalently a short-circuit noise current of density 4kT/R (A²/Hz)
//! in parallel with it (J. B. Johnson, "Thermal agitation of electricity in conductors", Phys.
//! Rev. 32, 1928; H. Nyquist, "Thermal agitation of electric charge in conductors", Phys. Rev.
//! 32, 1928; cited from memory). k = 1.380649e-23 J/K is exact by the 2019 redefinition of the
//! SI. The default temperature is 300 K (common practice for noise figures at room temperature).
//! The sources are uncorrelated, so their output powers add.
//!
//! - **Resistors**: a 1 A current source is placed across each resistor in a copy of the circuit
//!   and used as the stimulus of its own [`Probe`]; the MNA transfer is then the transimpedance
//!   Z_i(f) = V(out)/I_i in Ω, and the output density is (4kT/R)·|Z_i|².
//! - **Capacitor ESR and inductor DCR**: the noise voltage e (4kT·R_s) is in series with the
//!   element of branch admittance Y_b = 1/(R_s + 1/(jωC)) or 1/(R_s + jωL). A voltage e in
//!   series with a branch is the same, seen from the network, as a current e·Y_b across the
//!   branch's terminals (Thevenin–Norton equivalence, common practice), so the density is
//!   4kT·R_s·|Z_i·Y_b|² with Z_i from a current source across the element.
//! - **Source resistances**: a voltage source's series resistance R_s makes a noise voltage in
//!   series with its EMF, so the density is 4kT·R_s·|H_s|² with H_s = V(out)/EMF of that source.
//!   For the design's driving source, H_s is the filter's own transfer function.
//!
//! Controlled sources (op-amps) are noiseless here: op-amp voltage and current noise are not
//! modelled, only the resistors around them.
//!
//! # Integration
//! The RMS over a band [f_a, f_b] is the square root of ∫ S(f) df. It is computed in the variable
//! u = ln f, ∫ S(e^u)·e^u du, by composite 8-point Gauss–Legendre quadrature on panels of equal
//! width in log f (Abramowitz & Stegun, *Handbook of Mathematical Functions*, 25.4.30, for the
//! rule; nodes and weights to 16 digits from memory, checked in the tests by integrating
//! polynomials of degree 15 exactly). The panels span from [`TAIL_DECADES`] decades below the
//! slowest pole of the circuit to [`TAIL_DECADES`] decades above the fastest (or the band edges,
//! where those are inside), with [`NoiseOptions::panels_per_decade`] panels per decade.
//!
//! What lies outside the panels is added in closed form from the local power law S ∝ f^m, m
//! measured from two densities a factor 2 apart at the end of the panels:
//! - below f_lo, ∫₀^{f_lo} S df = S(f_lo)·f_lo/(m + 1) (m ≥ 0 for a network that is resistive or
//!   open at DC; S is flat to a relative 1e−8 four decades below the slowest pole);
//! - above f_hi (for an infinite upper edge), ∫_{f_hi}^∞ S df = S(f_hi)·f_hi/(−m − 1), which
//!   needs m < −1; a density that falls more slowly (a resistive divider's flat density) has no
//!   finite total and is refused with [`NoiseError::Unbounded`].
//!
//! **Convergence**: every integral is computed with P and with 2P panels per decade and the
//! answer is the 2P one; [`NoiseIntegral::relative_change`] reports |I_2P − I_P|/I_2P. For the
//! RC low-pass the tests find the total equal to kT/C to 2e−12 relative (the tails are 1.3e−4 of it,
//! and P → 2P changes it by 1e−15).
use std::f64::consts::TAU;
use std::fmt;

use num_complex::Complex64;
use serde::Serialize;

use crate::circuit::{Circuit, CircuitBuilder, CircuitError, ElementKind};
use crate::design::{Design, DesignError};
use crate::mna::{AcSystem, Detail, Probe};
use crate::modal::Modal;

/// The Boltzmann constant in J/K, exact by the 2019 SI.
pub const BOLTZMANN_J_PER_K: f64 = 1.380649e-23;
/// The default temperature in K (common practice for room temperature).
pub const DEFAULT_TEMPERATURE_K: f64 = 300.0;
/// Decades of panels beyond the slowest and the fastest pole.
pub const TAIL_DECADES: f64 = 4.0;
/// The largest number of panels per decade accepted.
pub const MAX_PANELS_PER_DECADE: usize = 256;

/// Options of a noise analysis.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct NoiseOptions {
    /// The absolute temperature of every resistance in K (default 300 K).
    pub temperature_k: f64,
    /// Gauss–Legendre panels per decade of frequency, P (default 4; the answer uses 2P).
    pub panels_per_decade: usize,
}

/// What makes a noise source.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum NoiseSourceKind {
    /// A resistor.
    Resistor,
    /// The ESR of a capacitor.
    CapacitorEsr,
    /// The DCR of an inductor.
    InductorDcr,
    /// The series resistance of a voltage source.
    SourceResistance,
}

/// One noise source of a circuit.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct NoiseSource {
    /// The part's reference.
    pub reference: String,
    /// What kind of resistance it is.
    pub kind: NoiseSourceKind,
    /// The resistance in Ω.
    pub resistance_ohms: f64,
}

/// The output noise density at one frequency.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct NoiseDensity {
    /// Frequency in Hz.
    pub f_hz: f64,
    /// The total one-sided output density in V²/Hz.
    pub total_v2_per_hz: f64,
    /// Each source's output density in V²/Hz, in the order of [`NoiseAnalysis::sources`].
    pub contributions_v2_per_hz: Vec<f64>,
}

/// One source's share of an integrated noise.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct NoiseContribution {
    /// The part's reference.
    pub reference: String,
    /// What kind of resistance it is.
    pub kind: NoiseSourceKind,
    /// Its output noise in V rms over the band.
    pub rms_v: f64,
    /// Its share of the total noise power (0..=1).
    pub power_share: f64,
}

/// The output noise integrated over a band.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct NoiseIntegral {
    /// The lower edge in Hz (0 allowed).
    pub f_lo_hz: f64,
    /// The upper edge in Hz (`f64::INFINITY` for all frequencies; serialized as null).
    pub f_hi_hz: f64,
    /// The total output noise in V rms.
    pub total_rms_v: f64,
    /// The total output noise power in V².
    pub total_v2: f64,
    /// Each source's contribution, in the order of [`NoiseAnalysis::sources`].
    pub contributions: Vec<NoiseContribution>,
    /// The part of `total_v2` added in closed form outside the panels (both tails), in V².
    pub tail_v2: f64,
    /// |I_2P − I_P|/I_2P between P and 2P panels per decade (the convergence estimate).
    pub relative_change: f64,
    /// The panels of the answer (2P per decade).
    pub panels: usize,
}

/// A circuit prepared for noise analysis: one compiled probe per noise source.
#[derive(Debug, Clone)]
pub struct NoiseAnalysis {
    sources: Vec<NoiseSource>,
    probes: Vec<SourceProbe>,
    temperature_k: f64,
    panels_per_decade: usize,
    /// The slowest and fastest nonzero finite pole magnitudes in Hz, when known.
    pole_range_hz: Option<(f64, f64)>,
}

/// Why a noise analysis cannot be made.
#[derive(Debug, Clone, PartialEq)]
pub enum NoiseError {
    /// The temperature is not finite and above 0 K.
    BadTemperature {
        /// The value in K.
        value_k: f64,
    },
    /// The panel count is outside 1..=[`MAX_PANELS_PER_DECADE`].
    BadPanels {
        /// The value given.
        panels: usize,
    },
    /// The band is not 0 ≤ f_lo < f_hi with f_lo finite.
    BadBand {
        /// The lower edge in Hz.
        f_lo_hz: f64,
        /// The upper edge in Hz.
        f_hi_hz: f64,
    },
    /// The frequency is negative or not finite.
    BadFrequency {
        /// The value in Hz.
        f_hz: f64,
    },
    /// The circuit has no resistance, so it makes no thermal noise.
    Noiseless,
    /// The circuit with the probe sources could not be built.
    Circuit(CircuitError),
    /// The design could not be converted to a circuit.
    Design(DesignError),
    /// A source's transfer could not be solved at a frequency.
    Unsolvable {
        /// The noise source's reference.
        reference: String,
        /// The frequency in Hz.
        f_hz: f64,
    },
    /// The density falls no faster than 1/f at high frequency, so the total to infinity diverges.
    Unbounded {
        /// The measured log-log slope m of the density (S ∝ f^m).
        slope: f64,
        /// The frequency where it was measured, in Hz.
        f_hz: f64,
    },
}

#[derive(Debug, Clone)]
struct SourceProbe {
    system: AcSystem,
    weight: Weight,
}

/// How a probe's transfer becomes an output density.
#[derive(Debug, Clone, Copy)]
enum Weight {
    /// A noise current 4kT/R across the part: density = (4kT/R)·|Z|².
    ParallelCurrent { resistance: f64 },
    /// A noise voltage 4kT·R in series with a capacitor: density = 4kT·R·|Z·Y_b|².
    CapacitorSeries { resistance: f64, capacitance: f64 },
    /// A noise voltage 4kT·R in series with an inductor.
    InductorSeries { resistance: f64, inductance: f64 },
    /// A noise voltage 4kT·R in series with a source EMF: density = 4kT·R·|H|².
    SourceSeries { resistance: f64 },
}

impl Default for NoiseOptions {
    fn default() -> Self {
        Self { temperature_k: DEFAULT_TEMPERATURE_K, panels_per_decade: 4 }
    }
}

impl fmt::Display for NoiseError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::BadTemperature { value_k } => {
                write!(f, "the temperature {value_k} K is not usable; give a finite absolute temperature above 0 K")
            }
            Self::BadPanels { panels } => write!(
                f,
                "{panels} integration panels per decade is not usable; give a whole number from 1 to {MAX_PANELS_PER_DECADE}"
            ),
            Self::BadBand { f_lo_hz, f_hi_hz } => write!(
                f,
                "the noise band {f_lo_hz} Hz to {f_hi_hz} Hz is not usable; give a finite lower edge of 0 Hz or more and an upper edge above it"
            ),
            Self::BadFrequency { f_hz } => {
                write!(f, "the frequency {f_hz} Hz is not usable; give a finite frequency of 0 Hz or more")
            }
            Self::Noiseless => write!(f, "the circuit has no resistance, so it makes no thermal noise; add its resistors"),
            Self::Circuit(error) => write!(f, "the noise probes could not be added: {error}"),
            Self::Design(error) => write!(f, "{error}"),
            Self::Unsolvable { reference, f_hz } => write!(
                f,
                "the noise of {reference} cannot be carried to the output at {f_hz} Hz (the circuit is singular there); check that every node has a path to ground"
            ),
            Self::Unbounded { slope, f_hz } => write!(
                f,
                "the output noise density falls as f^{slope:.3} near {f_hz:.6e} Hz, no faster than 1/f, so its total over all frequencies is unbounded; give a finite upper band edge"
            ),
        }
    }
}

impl std::error::Error for NoiseError {}

impl From<CircuitError> for NoiseError {
    fn from(error: CircuitError) -> Self {
        Self::Circuit(error)
    }
}

impl From<DesignError> for NoiseError {
    fn from(error: DesignError) -> Self {
        Self::Design(error)
    }
}

impl NoiseAnalysis {
    /// Prepares the noise analysis of `circuit` at the output of `probe`.
    ///
    /// Every resistor, every capacitor ESR and inductor DCR above 0 Ω, and every voltage source's
    /// series resistance above 0 Ω is a source (see the module docs).
    ///
    /// # Errors
    /// [`NoiseError::BadTemperature`], [`NoiseError::BadPanels`], [`NoiseError::Noiseless`] for a
    /// circuit without resistance, [`NoiseError::Circuit`] if the probe sources cannot be added.
    ///
    /// # Panics
    /// If `probe` was made for another circuit.
    pub fn new(circuit: &Circuit, probe: &Probe, options: &NoiseOptions) -> Result<NoiseAnalysis, NoiseError> {
        let temperature_k = options.temperature_k;
        if !(temperature_k.is_finite() && temperature_k > 0.0) {
            return Err(NoiseError::BadTemperature { value_k: temperature_k });
        }
        if !(1..=MAX_PANELS_PER_DECADE).contains(&options.panels_per_decade) {
            return Err(NoiseError::BadPanels { panels: options.panels_per_decade });
        }
        let output = (circuit.node_name(probe.output.0).to_string(), circuit.node_name(probe.output.1).to_string());
        // One copy of the circuit with a 1 A current source across every part with a parallel or
        // series resistance; each becomes the stimulus of its own probe.
        let mut extra: Vec<(String, ElementKind, String, String)> = Vec::new();
        let mut plan: Vec<(NoiseSource, Weight, Stimulus)> = Vec::new();
        for (index, element) in circuit.elements().iter().enumerate() {
            let (a, b) =
                (circuit.node_name(element.nodes.0).to_string(), circuit.node_name(element.nodes.1).to_string());
            let (kind, resistance, weight) = match element.kind {
                ElementKind::Resistor { resistance } => {
                    (NoiseSourceKind::Resistor, resistance, Weight::ParallelCurrent { resistance })
                }
                ElementKind::Capacitor { capacitance, esr } if esr > 0.0 => {
                    (NoiseSourceKind::CapacitorEsr, esr, Weight::CapacitorSeries { resistance: esr, capacitance })
                }
                ElementKind::Inductor { inductance, dcr } if dcr > 0.0 => {
                    (NoiseSourceKind::InductorDcr, dcr, Weight::InductorSeries { resistance: dcr, inductance })
                }
                ElementKind::VoltageSource { series_resistance, .. } if series_resistance > 0.0 => {
                    let source = NoiseSource {
                        reference: element.reference.clone(),
                        kind: NoiseSourceKind::SourceResistance,
                        resistance_ohms: series_resistance,
                    };
                    plan.push((
                        source,
                        Weight::SourceSeries { resistance: series_resistance },
                        Stimulus::Existing(index),
                    ));
                    continue;
                }
                _ => continue,
            };
            let probe_ref = unique_reference(circuit, &format!("noise:{}", element.reference));
            extra.push((probe_ref.clone(), ElementKind::CurrentSource { current: 1.0 }, a, b));
            plan.push((
                NoiseSource { reference: element.reference.clone(), kind, resistance_ohms: resistance },
                weight,
                Stimulus::Added(probe_ref),
            ));
        }
        if plan.is_empty() {
            return Err(NoiseError::Noiseless);
        }
        let augmented = extend_circuit(circuit, &extra)?;
        let mut sources = Vec::with_capacity(plan.len());
        let mut probes = Vec::with_capacity(plan.len());
        for (source, weight, stimulus) in plan {
            let reference = match stimulus {
                Stimulus::Existing(index) => circuit.elements()[index].reference.clone(),
                Stimulus::Added(reference) => reference,
            };
            let probe = Probe::new(&augmented, &reference, &output.0, &output.1)?;
            probes.push(SourceProbe { system: AcSystem::new(&augmented, &probe), weight });
            sources.push(source);
        }
        // The frequency scale: the poles of the original circuit.
        let original = AcSystem::new(circuit, probe);
        let pole_range_hz = Modal::pencil_poles(&original).ok().and_then(|poles| {
            let magnitudes: Vec<f64> =
                poles.iter().map(|p| p.norm() / TAU).filter(|m| m.is_finite() && *m > 0.0).collect();
            let lo = magnitudes.iter().copied().fold(f64::INFINITY, f64::min);
            let hi = magnitudes.iter().copied().fold(0.0, f64::max);
            (lo.is_finite() && hi > 0.0).then_some((lo, hi))
        });
        Ok(NoiseAnalysis {
            sources,
            probes,
            temperature_k,
            panels_per_decade: options.panels_per_decade,
            pole_range_hz,
        })
    }

    /// Prepares the noise analysis of a design at its output.
    ///
    /// # Errors
    /// As [`NoiseAnalysis::new`], and [`NoiseError::Design`] for a design that is not a circuit.
    pub fn for_design(design: &Design, options: &NoiseOptions) -> Result<NoiseAnalysis, NoiseError> {
        let (circuit, probe) = design.to_circuit()?;
        NoiseAnalysis::new(&circuit, &probe, options)
    }

    /// The noise sources, in circuit order.
    pub fn sources(&self) -> &[NoiseSource] {
        &self.sources
    }

    /// The temperature in K.
    pub fn temperature_k(&self) -> f64 {
        self.temperature_k
    }

    /// The slowest and fastest nonzero pole magnitudes of the circuit in Hz, when its poles are
    /// known (they set the integration range).
    pub fn pole_range_hz(&self) -> Option<(f64, f64)> {
        self.pole_range_hz
    }

    /// The output noise density at `f_hz`, in total and per source.
    ///
    /// # Errors
    /// [`NoiseError::BadFrequency`], or [`NoiseError::Unsolvable`] naming the source.
    pub fn density_at(&mut self, f_hz: f64) -> Result<NoiseDensity, NoiseError> {
        if !(f_hz.is_finite() && f_hz >= 0.0) {
            return Err(NoiseError::BadFrequency { f_hz });
        }
        let four_kt = 4.0 * BOLTZMANN_J_PER_K * self.temperature_k;
        let omega = TAU * f_hz;
        let mut contributions = Vec::with_capacity(self.probes.len());
        for (source, probe) in self.sources.iter().zip(self.probes.iter_mut()) {
            let solution = probe
                .system
                .solve_at(f_hz, Detail::Transfer)
                .map_err(|_| NoiseError::Unsolvable { reference: source.reference.clone(), f_hz })?;
            let h = solution.transfer;
            let density = match probe.weight {
                Weight::ParallelCurrent { resistance } => four_kt / resistance * h.norm_sqr(),
                Weight::SourceSeries { resistance } => four_kt * resistance * h.norm_sqr(),
                Weight::CapacitorSeries { resistance, capacitance } => {
                    // Y_b = 1/(R + 1/(jωC)) = jωC/(1 + jωRC); 0 at DC.
                    let jwc = Complex64::new(0.0, omega * capacitance);
                    let y = jwc / (Complex64::new(1.0, 0.0) + jwc * resistance);
                    four_kt * resistance * (h * y).norm_sqr()
                }
                Weight::InductorSeries { resistance, inductance } => {
                    let y = Complex64::new(1.0, 0.0) / Complex64::new(resistance, omega * inductance);
                    four_kt * resistance * (h * y).norm_sqr()
                }
            };
            contributions.push(density);
        }
        Ok(NoiseDensity { f_hz, total_v2_per_hz: contributions.iter().sum(), contributions_v2_per_hz: contributions })
    }

    /// The output noise integrated from `f_lo_hz` (0 allowed) to `f_hi_hz` (`f64::INFINITY`
    /// allowed), in total and per source (see the module docs for the method).
    ///
    /// # Errors
    /// [`NoiseError::BadBand`], [`NoiseError::Unsolvable`], and [`NoiseError::Unbounded`] when
    /// `f_hi_hz` is infinite and the density does not fall faster than 1/f.
    pub fn integrate(&mut self, f_lo_hz: f64, f_hi_hz: f64) -> Result<NoiseIntegral, NoiseError> {
        if !(f_lo_hz.is_finite() && f_lo_hz >= 0.0 && !f_hi_hz.is_nan() && f_hi_hz > f_lo_hz) {
            return Err(NoiseError::BadBand { f_lo_hz, f_hi_hz });
        }
        let tail = 10f64.powf(TAIL_DECADES);
        // The frequency scale of the circuit; without poles (a resistive network), the band.
        let (p_lo, p_hi) = self.pole_range_hz.unwrap_or_else(|| {
            let hi = if f_hi_hz.is_finite() { f_hi_hz } else { 1.0 };
            (if f_lo_hz > 0.0 { f_lo_hz } else { hi }, hi)
        });
        let panel_lo = if f_lo_hz > 0.0 { f_lo_hz } else { (p_lo / tail).min(f_hi_hz / tail) };
        let panel_hi = if f_hi_hz.is_finite() { f_hi_hz } else { (p_hi * tail).max(panel_lo * tail) };
        let n_sources = self.sources.len();
        let mut tails = vec![0.0; n_sources];
        if f_lo_hz == 0.0 {
            let (s, m) = self.local_power_law(panel_lo, 2.0)?;
            for (t, (s, m)) in tails.iter_mut().zip(s.iter().zip(m)) {
                // Flat or rising from DC: ∫₀^f S df = S·f/(m + 1) with m > −1.
                *t += s * panel_lo / (m.max(0.0) + 1.0);
            }
        }
        if f_hi_hz.is_infinite() {
            let (s, m) = self.local_power_law(panel_hi, 0.5)?;
            let total: f64 = s.iter().sum();
            let total_lower: f64 = {
                let d = self.density_at(panel_hi / 2.0)?;
                d.total_v2_per_hz
            };
            let total_slope =
                if total > 0.0 && total_lower > 0.0 { (total / total_lower).ln() / 2f64.ln() } else { -2.0 };
            if total_slope > -1.0 - 1e-3 {
                return Err(NoiseError::Unbounded { slope: total_slope, f_hz: panel_hi });
            }
            for (t, (s, m)) in tails.iter_mut().zip(s.iter().zip(m)) {
                if *s > 0.0 {
                    // A source that falls no faster than 1/f while the total does is at rounding
                    // level (its part of S is negligible); bound its tail with the total's slope.
                    let m = if m < -1.0 - 1e-3 { m } else { total_slope };
                    *t += s * panel_hi / (-m - 1.0);
                }
            }
        }
        let coarse = self.panels_integral(panel_lo, panel_hi, self.panels_per_decade)?;
        let fine = self.panels_integral(panel_lo, panel_hi, 2 * self.panels_per_decade)?;
        let coarse_total: f64 = coarse.0.iter().sum();
        let fine_total: f64 = fine.0.iter().sum();
        let relative_change = if fine_total > 0.0 { (fine_total - coarse_total).abs() / fine_total } else { 0.0 };
        let per_source: Vec<f64> = fine.0.iter().zip(&tails).map(|(a, b)| a + b).collect();
        let total_v2: f64 = per_source.iter().sum();
        let contributions = self
            .sources
            .iter()
            .zip(&per_source)
            .map(|(source, v2)| NoiseContribution {
                reference: source.reference.clone(),
                kind: source.kind,
                rms_v: v2.sqrt(),
                power_share: if total_v2 > 0.0 { v2 / total_v2 } else { 0.0 },
            })
            .collect();
        Ok(NoiseIntegral {
            f_lo_hz,
            f_hi_hz,
            total_rms_v: total_v2.sqrt(),
            total_v2,
            contributions,
            tail_v2: tails.iter().sum(),
            relative_change,
            panels: fine.1,
        })
    }

    /// Per-source densities at `f_hz` and their log-log slopes measured against `f_hz·ratio`.
    fn local_power_law(&mut self, f_hz: f64, ratio: f64) -> Result<(Vec<f64>, Vec<f64>), NoiseError> {
        let here = self.density_at(f_hz)?.contributions_v2_per_hz;
        let there = self.density_at(f_hz * ratio)?.contributions_v2_per_hz;
        let slopes = here
            .iter()
            .zip(&there)
            .map(|(a, b)| if *a > 0.0 && *b > 0.0 { (b / a).ln() / ratio.ln() } else { 0.0 })
            .collect();
        Ok((here, slopes))
    }

    /// Composite Gauss–Legendre in ln f over [f_lo, f_hi]: per-source integrals and the panel count.
    fn panels_integral(&mut self, f_lo: f64, f_hi: f64, per_decade: usize) -> Result<(Vec<f64>, usize), NoiseError> {
        let (u_lo, u_hi) = (f_lo.ln(), f_hi.ln());
        let decades = (f_hi / f_lo).log10();
        let panels = ((decades * per_decade as f64).ceil() as usize).max(1);
        let width = (u_hi - u_lo) / panels as f64;
        let mut sums = vec![0.0; self.sources.len()];
        for panel in 0..panels {
            let centre = u_lo + (panel as f64 + 0.5) * width;
            for (x, w) in GAUSS_LEGENDRE_8 {
                for sign in [-1.0, 1.0] {
                    let f = (centre + sign * x * 0.5 * width).exp();
                    let density = self.density_at(f)?;
                    for (sum, s) in sums.iter_mut().zip(&density.contributions_v2_per_hz) {
                        *sum += 0.5 * width * w * s * f;
                    }
                }
            }
        }
        Ok((sums, panels))
    }
}

/// Positive nodes and weights of the 8-point Gauss–Legendre rule on [−1, 1] (Abramowitz &
/// Stegun 25.4.30; from memory, checked by the tests on polynomials up to degree 15).
const GAUSS_LEGENDRE_8: [(f64, f64); 4] = [
    (0.183_434_642_495_649_8, 0.362_683_783_378_362),
    (0.525_532_409_916_329, 0.313_706_645_877_887_3),
    (0.796_666_477_413_626_7, 0.222_381_034_453_374_5),
    (0.960_289_856_497_536_3, 0.101_228_536_290_376_3),
];

enum Stimulus {
    Existing(usize),
    Added(String),
}

/// A reference based on `base` that the circuit does not use yet.
fn unique_reference(circuit: &Circuit, base: &str) -> String {
    let mut candidate = base.to_string();
    let mut k = 1;
    while circuit.element_index(&candidate).is_some() {
        k += 1;
        candidate = format!("{base}#{k}");
    }
    candidate
}

/// A copy of `circuit` with the parts `extra` (reference, kind, node a, node b) added, validated.
/// Controlled sources keep their sensing nodes by name.
pub(crate) fn extend_circuit(
    circuit: &Circuit,
    extra: &[(String, ElementKind, String, String)],
) -> Result<Circuit, CircuitError> {
    let mut builder = CircuitBuilder::new();
    for element in circuit.elements() {
        let (a, b) = (circuit.node_name(element.nodes.0), circuit.node_name(element.nodes.1));
        match element.kind {
            ElementKind::Vcvs { gain, control } => {
                let (p, n) = (circuit.node_name(control.0), circuit.node_name(control.1));
                builder.vcvs(&element.reference, a, b, p, n, gain)
            }
            kind => builder.add(&element.reference, kind, a, b),
        };
    }
    for (reference, kind, a, b) in extra {
        builder.add(reference, *kind, a, b);
    }
    builder.build()
}

#[cfg(test)]
mod tests {
    use super::*;

    const KT: f64 = BOLTZMANN_J_PER_K * DEFAULT_TEMPERATURE_K;

    fn rc_lowpass(source_ohms: f64, r: f64, c: f64) -> (Circuit, Probe) {
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, source_ohms)
            .resistor("R1", "in", "out", r)
            .capacitor("C1", "out", "0", c);
        let circuit = b.build().unwrap();
        let probe = Probe::new(&circuit, "V1", "out", "0").unwrap();
        (circuit, probe)
    }

    fn check_close(got: f64, expected: f64, rtol: f64, what: &str) {
        assert!(
            ((got - expected) / expected).abs() <= rtol,
            "{what}: got {got:e}, expected {expected:e}, rtol {rtol:e}"
        );
    }

    #[test]
    fn gauss_legendre_integrates_degree_15_exactly() {
        // ∫_{-1}^{1} x^k dx = 2/(k+1) for even k, 0 for odd k.
        for k in 0..=15 {
            let sum: f64 = GAUSS_LEGENDRE_8.iter().map(|(x, w)| w * (x.powi(k) + (-x).powi(k))).sum();
            let exact = if k % 2 == 0 { 2.0 / (k as f64 + 1.0) } else { 0.0 };
            assert!((sum - exact).abs() < 1e-15, "degree {k}: {sum} vs {exact}");
        }
    }

    #[test]
    fn rc_lowpass_total_noise_is_kt_over_c_for_any_r() {
        // Source: Johnson/Nyquist density with the RC low-pass: ∫₀^∞ 4kTR/(1 + (2πfRC)²) df = kT/C
        // (common practice, derived in the module docs of adc).
        for (rs, r) in [(0.0, 1e3), (0.0, 1e5), (470.0, 1e3), (0.0, 10.0)] {
            let c = 100e-9;
            let (circuit, probe) = rc_lowpass(rs, r, c);
            let mut analysis = NoiseAnalysis::new(&circuit, &probe, &NoiseOptions::default()).unwrap();
            let total = analysis.integrate(0.0, f64::INFINITY).unwrap();
            eprintln!(
                "Rs {rs} R {r}: total {:.15e} V², kT/C {:.15e} V², relative error {:.2e}, P→2P change {:.2e}, tails {:.2e} of total",
                total.total_v2,
                KT / c,
                (total.total_v2 / (KT / c) - 1.0).abs(),
                total.relative_change,
                total.tail_v2 / total.total_v2
            );
            check_close(total.total_v2, KT / c, 1e-10, "kT/C");
            assert!(total.relative_change < 1e-10, "convergence {}", total.relative_change);
            // Tails are small and accounted for.
            assert!(total.tail_v2 < 1e-3 * total.total_v2);
            let share_sum: f64 = total.contributions.iter().map(|c| c.power_share).sum();
            assert!((share_sum - 1.0).abs() < 1e-12);
            if rs > 0.0 {
                // Source resistance and R share the noise in proportion to their resistance.
                let source = total.contributions.iter().find(|c| c.kind == NoiseSourceKind::SourceResistance).unwrap();
                check_close(source.power_share, rs / (rs + r), 1e-9, "source share");
            }
        }
    }

    #[test]
    fn rc_band_limited_noise_matches_the_arctangent() {
        // ∫₀^B 4kTR/(1 + (f/fc)²) df = 4kTR·fc·atan(B/fc) (calculus, from memory).
        let (r, c) = (1e4, 1e-9);
        let fc = 1.0 / (TAU * r * c);
        let (circuit, probe) = rc_lowpass(0.0, r, c);
        let mut analysis = NoiseAnalysis::new(&circuit, &probe, &NoiseOptions::default()).unwrap();
        for band in [fc / 10.0, fc, 7.3 * fc] {
            let got = analysis.integrate(0.0, band).unwrap();
            check_close(got.total_v2, 4.0 * KT * r * fc * (band / fc).atan(), 1e-10, "band");
        }
        let part = analysis.integrate(fc, 2.0 * fc).unwrap();
        check_close(part.total_v2, 4.0 * KT * r * fc * (2f64.atan() - 1f64.atan()), 1e-10, "fc..2fc");
    }

    #[test]
    fn resistive_divider_has_a_flat_density_and_no_finite_total() {
        // Two resistors to ground in parallel seen from the output: 4kT·(R1 ∥ R2) (common practice).
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0).resistor("R1", "in", "out", 3e3).resistor("R2", "out", "0", 6e3);
        let circuit = b.build().unwrap();
        let probe = Probe::new(&circuit, "V1", "out", "0").unwrap();
        let mut analysis = NoiseAnalysis::new(&circuit, &probe, &NoiseOptions::default()).unwrap();
        let expected = 4.0 * KT * 2e3;
        for f in [0.0, 1.0, 1e3, 1e9] {
            check_close(analysis.density_at(f).unwrap().total_v2_per_hz, expected, 1e-12, "flat density");
        }
        check_close(analysis.integrate(0.0, 20e3).unwrap().total_v2, expected * 20e3, 1e-12, "band");
        assert!(matches!(analysis.integrate(0.0, f64::INFINITY), Err(NoiseError::Unbounded { .. })));
    }

    #[test]
    fn capacitor_esr_adds_its_own_noise() {
        // R1 into a capacitor with ESR, output across the capacitor (common practice, by hand):
        // at high frequency the output sees R1 ∥ ESR; at DC the capacitor is open, so only R1
        // makes noise (4kT·R1) and the ESR's share is zero (its branch admittance is 0).
        let c = 1e-6;
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0).resistor("R1", "in", "mid", 50.0).add(
            "C1",
            ElementKind::Capacitor { capacitance: c, esr: 50.0 },
            "mid",
            "0",
        );
        let circuit = b.build().unwrap();
        let probe = Probe::new(&circuit, "V1", "mid", "0").unwrap();
        let mut analysis = NoiseAnalysis::new(&circuit, &probe, &NoiseOptions::default()).unwrap();
        assert_eq!(analysis.sources().len(), 2);
        // At high frequency the node sees R1 ∥ ESR: density 4kT·25 Ω.
        check_close(analysis.density_at(1e9).unwrap().total_v2_per_hz, 4.0 * KT * 25.0, 1e-6, "high f");
        let dc = analysis.density_at(0.0).unwrap();
        check_close(dc.total_v2_per_hz, 4.0 * KT * 50.0, 1e-12, "dc");
        assert_eq!(dc.contributions_v2_per_hz[1], 0.0);
    }

    #[test]
    fn bad_inputs_are_refused() {
        let (circuit, probe) = rc_lowpass(0.0, 1e3, 1e-9);
        let bad = NoiseOptions { temperature_k: -1.0, ..NoiseOptions::default() };
        assert_eq!(
            NoiseAnalysis::new(&circuit, &probe, &bad).unwrap_err(),
            NoiseError::BadTemperature { value_k: -1.0 }
        );
        let bad = NoiseOptions { panels_per_decade: 0, ..NoiseOptions::default() };
        assert!(matches!(NoiseAnalysis::new(&circuit, &probe, &bad), Err(NoiseError::BadPanels { panels: 0 })));
        let mut analysis = NoiseAnalysis::new(&circuit, &probe, &NoiseOptions::default()).unwrap();
        assert!(matches!(analysis.integrate(10.0, 5.0), Err(NoiseError::BadBand { .. })));
        assert!(matches!(analysis.integrate(f64::NAN, 5.0), Err(NoiseError::BadBand { .. })));
        assert!(matches!(analysis.density_at(-1.0), Err(NoiseError::BadFrequency { .. })));
        let message = NoiseError::BadTemperature { value_k: -1.0 }.to_string();
        assert!(message.contains("-1 K") && !message.ends_with('.'));
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0).capacitor("C1", "in", "0", 1e-9);
        let circuit = b.build().unwrap();
        let probe = Probe::new(&circuit, "V1", "in", "0").unwrap();
        assert_eq!(NoiseAnalysis::new(&circuit, &probe, &NoiseOptions::default()).unwrap_err(), NoiseError::Noiseless);
    }
}
