//! Loudspeaker driver loads as circuits of the core model, and their optional acoustic side.
//!
//! A [`DriverLoad`] is what a crossover branch drives. It is either a [`DriverModel`] built from
//! parts of the core model, or a measured impedance curve read from CSV text
//! ([`parse_impedance_csv`]) and placed in the circuit as an
//! [`ElementKind::MeasuredImpedance`](crate::circuit::ElementKind::MeasuredImpedance).
//!
//! # The models (all in series, from the hot terminal to the return)
//! - **Re + Le**: the voice-coil resistance and inductance ([`Coil::Inductive`]).
//! - **Lossy voice coil** ([`Coil::Lossy`]): Le in series with L2 ∥ R2. The parallel pair
//!   models the eddy-current losses that make a real coil's impedance rise more slowly than
//!   ωLe. It is the first rung of the R–L ladder approximations to the lossy inductance in
//!   W. M. Leach, "Loudspeaker voice-coil inductance losses: circuit models, parameter
//!   estimation, and effect on frequency response", J. Audio Eng. Soc. 50(6), 2002 (from memory).
//!   The semi-inductance K·(jω)^n of the same paper and of J. Vanderkooy, J. Audio Eng. Soc.
//!   37(3), 1989 (from memory) is not rational in s, so it is not offered as a circuit.
//! - **Mechanical resonance** ([`Resonance`]): the motional impedance seen at the terminals, a
//!   parallel Res ∥ Lces ∥ Cmes with Res = Re·Qms/Qes, Lces = Re/(2π·fs·Qes) and
//!   Cmes = Qes/(2π·fs·Re) (R. H. Small, "Direct-radiator loudspeaker system analysis",
//!   J. Audio Eng. Soc. 20(5), 1972; formulas from memory, checked here: the tank resonates at
//!   fs, its own Q is Res·√(Cmes/Lces) = Qms, and with Re as its source Re·√(Cmes/Lces) = Qes).
//!
//! # CSV files (our own simple format)
//! One point a line: frequency in Hz, then |Z| in Ω (or the response in dB), then the phase in
//! degrees, separated by commas, semicolons, tabs or spaces. Blank lines and lines starting with
//! `#` are skipped, and the first other line is skipped as a header if none of its fields is a
//! number. Frequencies must increase strictly. Every refused row is named by its line number
//! (counting from 1). Between points the curve is interpolated in log frequency as
//! [`MeasuredCurve`] states; it is not extrapolated.

use crate::circuit::{CircuitBuilder, ElementKind, MeasuredCurve};
use num_complex::Complex64;
use std::f64::consts::PI;
use std::fmt;

/// The voice coil's reactive part.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Coil {
    /// No inductance: the coil is Re alone.
    Resistive,
    /// A lossless inductance Le in H.
    Inductive {
        /// Voice-coil inductance in H, > 0.
        le: f64,
    },
    /// Le in series with L2 ∥ R2 (the lossy-coil model, see the module doc).
    Lossy {
        /// Series inductance in H, > 0.
        le: f64,
        /// The shunted inductance in H, > 0.
        l2: f64,
        /// Its shunt resistance in Ω, > 0.
        r2: f64,
    },
}

/// The electrical equivalent of the driver's mechanical resonance, from its small-signal
/// parameters.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Resonance {
    /// Free-air resonance in Hz, > 0.
    pub fs_hz: f64,
    /// Mechanical Q, > 0.
    pub qms: f64,
    /// Electrical Q, > 0.
    pub qes: f64,
}

/// A driver's impedance model as parts: Re, the coil and (optionally) the resonance.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DriverModel {
    /// Voice-coil DC resistance in Ω, > 0.
    pub re: f64,
    /// The coil's reactive part.
    pub coil: Coil,
    /// The mechanical resonance, or `None` to leave it out (a driver used well above fs).
    pub resonance: Option<Resonance>,
}

/// What a crossover branch drives.
#[derive(Debug, Clone, PartialEq)]
pub enum DriverLoad {
    /// A plain resistor of this many ohms (a dummy load, or the nominal impedance).
    Resistor(f64),
    /// A model of parts.
    Model(DriverModel),
    /// A measured impedance curve (|Z| in Ω).
    Measured(MeasuredCurve),
}

/// A driver's acoustic response shape.
#[derive(Debug, Clone, PartialEq)]
pub enum AcousticResponse {
    /// An ideal driver: flat, zero phase, at every frequency.
    Flat,
    /// A measured response (relative magnitude and phase; see [`parse_response_csv`]).
    Measured(MeasuredCurve),
}

/// A driver's acoustic side: its response, its sensitivity and its acoustic offset.
#[derive(Debug, Clone, PartialEq)]
pub struct Acoustic {
    /// The response shape.
    pub response: AcousticResponse,
    /// Sensitivity in dB (for example dB SPL at 2.83 V, 1 m); only differences between drivers
    /// matter.
    pub sensitivity_db: f64,
    /// The acoustic offset as a delay in s (≥ 0 lags, < 0 leads), e.g. the extra path from a
    /// voice coil set further back: delay = offset / c with c ≈ 343 m/s at 20 °C (common practice).
    pub delay_s: f64,
}

/// Why a driver or its data was refused.
#[derive(Debug, Clone, PartialEq)]
pub enum DriverError {
    /// A model value is not finite, or out of its range.
    BadValue {
        /// Which value, e.g. "Re".
        what: &'static str,
        /// The offending value.
        value: f64,
        /// What is accepted.
        allowed: &'static str,
    },
    /// A CSV row could not be read.
    BadRow {
        /// The line number, from 1.
        line: usize,
        /// The line's text.
        text: String,
        /// What is wrong with it.
        problem: String,
    },
    /// A CSV frequency is not above the one before it.
    NotIncreasing {
        /// The line number, from 1.
        line: usize,
        /// Its frequency in Hz.
        f_hz: f64,
        /// The previous row's frequency in Hz.
        previous_hz: f64,
    },
    /// The CSV has fewer than two data rows.
    TooFewRows {
        /// How many rows were read.
        count: usize,
    },
}

impl fmt::Display for DriverError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::BadValue { what, value, allowed } => write!(f, "driver {what} is {value}; it must be {allowed}"),
            Self::BadRow { line, text, problem } => {
                write!(f, "line {line} ({text:?}): {problem}; give frequency, magnitude and phase in degrees")
            }
            Self::NotIncreasing { line, f_hz, previous_hz } => write!(
                f,
                "line {line}: frequency {f_hz} Hz is not above the {previous_hz} Hz before it; sort the rows by strictly increasing frequency"
            ),
            Self::TooFewRows { count } => {
                write!(f, "the curve needs at least two data rows of frequency, magnitude and phase; it has {count}")
            }
        }
    }
}

impl std::error::Error for DriverError {}

impl Resonance {
    /// The parallel tank (Res, Lces, Cmes) for a coil resistance `re`, in Ω, H and F (formulas in
    /// the module doc).
    pub fn elements(&self, re: f64) -> (f64, f64, f64) {
        let omega_s = 2.0 * PI * self.fs_hz;
        (re * self.qms / self.qes, re / (omega_s * self.qes), self.qes / (omega_s * re))
    }
}

impl DriverModel {
    /// A model after checking every value.
    ///
    /// # Errors
    /// [`DriverError::BadValue`] for a non-positive or non-finite Re, Le, L2, R2, fs, Qms or Qes.
    pub fn new(re: f64, coil: Coil, resonance: Option<Resonance>) -> Result<DriverModel, DriverError> {
        positive("Re", re)?;
        match coil {
            Coil::Resistive => {}
            Coil::Inductive { le } => positive("Le", le)?,
            Coil::Lossy { le, l2, r2 } => {
                positive("Le", le)?;
                positive("L2", l2)?;
                positive("R2", r2)?;
            }
        }
        if let Some(r) = resonance {
            positive("fs", r.fs_hz)?;
            positive("Qms", r.qms)?;
            positive("Qes", r.qes)?;
        }
        Ok(DriverModel { re, coil, resonance })
    }

    /// The model's impedance at `f_hz` (closed form of the same series chain the circuit holds).
    pub fn impedance_at(&self, f_hz: f64) -> Complex64 {
        let s = Complex64::new(0.0, 2.0 * PI * f_hz);
        let mut z = Complex64::new(self.re, 0.0);
        match self.coil {
            Coil::Resistive => {}
            Coil::Inductive { le } => z += s * le,
            Coil::Lossy { le, l2, r2 } => z += s * le + (s * l2 * r2) / (s * l2 + r2),
        }
        if let Some(resonance) = self.resonance {
            let (res, lces, cmes) = resonance.elements(self.re);
            let y = 1.0 / res + s * cmes + 1.0 / (s * lces);
            z += 1.0 / y;
        }
        z
    }

    /// Adds the model between `hot` and `ret` as parts named `{prefix}.Re`, `{prefix}.Le`,
    /// `{prefix}.L2`, `{prefix}.R2`, `{prefix}.Res`, `{prefix}.Lces` and `{prefix}.Cmes`, with
    /// internal nodes `{prefix}:1`, `{prefix}:2`, ….
    pub fn add_to(&self, builder: &mut CircuitBuilder, prefix: &str, hot: &str, ret: &str) {
        // The chain's stages, each between two successive nodes.
        let mut stages: Vec<Vec<(String, ElementKind)>> = Vec::new();
        let part = |name: &str, kind| (format!("{prefix}.{name}"), kind);
        stages.push(vec![part("Re", ElementKind::Resistor { resistance: self.re })]);
        match self.coil {
            Coil::Resistive => {}
            Coil::Inductive { le } => stages.push(vec![part("Le", ElementKind::Inductor { inductance: le, dcr: 0.0 })]),
            Coil::Lossy { le, l2, r2 } => {
                stages.push(vec![part("Le", ElementKind::Inductor { inductance: le, dcr: 0.0 })]);
                stages.push(vec![
                    part("L2", ElementKind::Inductor { inductance: l2, dcr: 0.0 }),
                    part("R2", ElementKind::Resistor { resistance: r2 }),
                ]);
            }
        }
        if let Some(resonance) = self.resonance {
            let (res, lces, cmes) = resonance.elements(self.re);
            stages.push(vec![
                part("Res", ElementKind::Resistor { resistance: res }),
                part("Lces", ElementKind::Inductor { inductance: lces, dcr: 0.0 }),
                part("Cmes", ElementKind::Capacitor { capacitance: cmes, esr: 0.0 }),
            ]);
        }
        let n = stages.len();
        for (k, stage) in stages.into_iter().enumerate() {
            let from = if k == 0 { hot.to_string() } else { format!("{prefix}:{k}") };
            let to = if k + 1 == n { ret.to_string() } else { format!("{prefix}:{}", k + 1) };
            for (reference, kind) in stage {
                builder.add(&reference, kind, &from, &to);
            }
        }
    }
}

impl DriverLoad {
    /// The load's impedance at `f_hz`, or `None` outside a measured curve's range.
    pub fn impedance_at(&self, f_hz: f64) -> Option<Complex64> {
        match self {
            DriverLoad::Resistor(r) => Some(Complex64::new(*r, 0.0)),
            DriverLoad::Model(model) => Some(model.impedance_at(f_hz)),
            DriverLoad::Measured(curve) => curve.value_at(f_hz),
        }
    }

    /// The resistance a branch is designed into by [`crate::crossover::DesignLoad::Driver`]:
    /// the resistor, the model's Re, or the lowest |Z| of a measured curve (the usual reading of
    /// a measured curve's resistive floor, common practice).
    pub fn design_resistance(&self) -> f64 {
        match self {
            DriverLoad::Resistor(r) => *r,
            DriverLoad::Model(model) => model.re,
            DriverLoad::Measured(curve) => {
                curve.f_hz().iter().filter_map(|&f| curve.value_at(f)).map(|z| z.norm()).fold(f64::INFINITY, f64::min)
            }
        }
    }

    /// Adds the load between `hot` and `ret`; parts are named as in [`DriverModel::add_to`] (a
    /// resistor is `{prefix}.R`, a measured curve `{prefix}.Z`).
    pub fn add_to(&self, builder: &mut CircuitBuilder, prefix: &str, hot: &str, ret: &str) {
        match self {
            DriverLoad::Resistor(r) => {
                builder.resistor(&format!("{prefix}.R"), hot, ret, *r);
            }
            DriverLoad::Model(model) => model.add_to(builder, prefix, hot, ret),
            DriverLoad::Measured(curve) => {
                builder.measured_impedance(&format!("{prefix}.Z"), hot, ret, curve.clone());
            }
        }
    }

    /// Whether `reference` names one of the parts [`DriverLoad::add_to`] added under `prefix`
    /// (it starts with `{prefix}.`); used to tell driver parts from crossover parts.
    pub fn owns(prefix: &str, reference: &str) -> bool {
        reference.strip_prefix(prefix).is_some_and(|rest| rest.starts_with('.'))
    }
}

impl Acoustic {
    /// An ideal flat driver of `sensitivity_db` with no offset.
    pub fn flat(sensitivity_db: f64) -> Acoustic {
        Acoustic { response: AcousticResponse::Flat, sensitivity_db, delay_s: 0.0 }
    }

    /// The driver's complex acoustic gain at `f_hz` relative to `reference_db`:
    /// 10^((sensitivity − reference)/20) · A(f) · e^(−jω·delay), or `None` outside a measured
    /// response's range.
    pub fn gain_at(&self, f_hz: f64, reference_db: f64) -> Option<Complex64> {
        let shape = match &self.response {
            AcousticResponse::Flat => Complex64::new(1.0, 0.0),
            AcousticResponse::Measured(curve) => curve.value_at(f_hz)?,
        };
        let level = 10f64.powf((self.sensitivity_db - reference_db) / 20.0);
        let delay = Complex64::from_polar(1.0, -2.0 * PI * f_hz * self.delay_s);
        Some(shape * level * delay)
    }
}

/// Reads a measured impedance curve: frequency (Hz), |Z| (Ω, > 0), phase (degrees, within ±90°
/// as for any passive impedance).
///
/// # Errors
/// [`DriverError::BadRow`] for a row that is not three numbers or has an impossible value,
/// [`DriverError::NotIncreasing`] for a frequency that does not increase, and
/// [`DriverError::TooFewRows`].
pub fn parse_impedance_csv(text: &str) -> Result<MeasuredCurve, DriverError> {
    let rows = parse_rows(text, RowKind::Impedance)?;
    let magnitude: Vec<f64> = rows.iter().map(|r| r.1).collect();
    curve_from(&rows, &magnitude)
}

/// Reads a measured acoustic response: frequency (Hz), level (dB), phase (degrees). The phase is
/// unwrapped (a step of more than 180° between rows is taken as a wrap) so that interpolation
/// runs the short way round.
///
/// # Errors
/// As [`parse_impedance_csv`].
pub fn parse_response_csv(text: &str) -> Result<MeasuredCurve, DriverError> {
    let mut rows = parse_rows(text, RowKind::Response)?;
    for k in 1..rows.len() {
        let step = rows[k].2 - rows[k - 1].2;
        rows[k].2 -= 360.0 * (step / 360.0).round();
    }
    let magnitude: Vec<f64> = rows.iter().map(|r| 10f64.powf(r.1 / 20.0)).collect();
    curve_from(&rows, &magnitude)
}

#[derive(Clone, Copy, PartialEq)]
enum RowKind {
    Impedance,
    Response,
}

/// (frequency, magnitude field, phase, line number) per data row.
fn parse_rows(text: &str, kind: RowKind) -> Result<Vec<(f64, f64, f64, usize)>, DriverError> {
    let mut rows: Vec<(f64, f64, f64, usize)> = Vec::new();
    let mut first_content = true;
    for (index, raw) in text.lines().enumerate() {
        let line = index + 1;
        let trimmed = raw.trim();
        if trimmed.is_empty() || trimmed.starts_with('#') {
            continue;
        }
        let fields: Vec<&str> =
            trimmed.split(|c: char| c == ',' || c == ';' || c.is_whitespace()).filter(|f| !f.is_empty()).collect();
        let numbers: Vec<Option<f64>> = fields.iter().map(|f| f.parse::<f64>().ok()).collect();
        let is_header = first_content && numbers.iter().all(Option::is_none);
        first_content = false;
        if is_header {
            continue;
        }
        let bad = |problem: String| DriverError::BadRow { line, text: trimmed.to_string(), problem };
        if fields.len() != 3 {
            return Err(bad(format!("expected 3 fields, found {}", fields.len())));
        }
        let names = ["frequency", if kind == RowKind::Impedance { "|Z|" } else { "level" }, "phase"];
        let mut values = [0.0; 3];
        for (k, value) in numbers.iter().enumerate() {
            match value {
                Some(v) if v.is_finite() => values[k] = *v,
                _ => return Err(bad(format!("{} {:?} is not a finite number", names[k], fields[k]))),
            }
        }
        let [f_hz, magnitude, phase] = values;
        if f_hz <= 0.0 {
            return Err(bad(format!("frequency {f_hz} Hz must be > 0")));
        }
        if kind == RowKind::Impedance {
            if magnitude <= 0.0 {
                return Err(bad(format!("|Z| {magnitude} Ω must be > 0")));
            }
            if phase.abs() > 90.0 {
                return Err(bad(format!("phase {phase}° is outside ±90°, which no passive impedance has")));
            }
        }
        if let Some(&(previous_hz, ..)) = rows.last() {
            if f_hz <= previous_hz {
                return Err(DriverError::NotIncreasing { line, f_hz, previous_hz });
            }
        }
        rows.push((f_hz, magnitude, phase, line));
    }
    if rows.len() < 2 {
        return Err(DriverError::TooFewRows { count: rows.len() });
    }
    Ok(rows)
}

fn curve_from(rows: &[(f64, f64, f64, usize)], magnitude: &[f64]) -> Result<MeasuredCurve, DriverError> {
    let f: Vec<f64> = rows.iter().map(|r| r.0).collect();
    let phase: Vec<f64> = rows.iter().map(|r| r.2).collect();
    MeasuredCurve::new(&f, magnitude, &phase).map_err(|error| {
        // Rows were checked above; a level so low that 10^(dB/20) underflows lands here.
        let point = match error {
            crate::circuit::CurveError::BadPoint { point, .. }
            | crate::circuit::CurveError::NotIncreasing { point, .. } => point,
            crate::circuit::CurveError::TooFewPoints { .. } => 0,
        };
        let line = rows.get(point).map_or(0, |r| r.3);
        DriverError::BadRow { line, text: String::new(), problem: error.to_string() }
    })
}

fn positive(what: &'static str, value: f64) -> Result<(), DriverError> {
    if value.is_finite() && value > 0.0 {
        Ok(())
    } else {
        Err(DriverError::BadValue { what, value, allowed: "a finite value > 0" })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::mna::{AcSystem, Detail, Probe};

    fn driver_impedance_by_mna(load: &DriverLoad, f_hz: f64) -> Complex64 {
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0);
        load.add_to(&mut b, "D", "in", "0");
        let circuit = b.build().unwrap();
        let probe = Probe::new(&circuit, "V1", "in", "0").unwrap();
        AcSystem::new(&circuit, &probe).solve_at(f_hz, Detail::Transfer).unwrap().input_impedance.unwrap()
    }

    #[test]
    fn model_circuit_matches_its_closed_form() {
        let model = DriverModel::new(
            6.2,
            Coil::Lossy { le: 0.4e-3, l2: 0.8e-3, r2: 3.5 },
            Some(Resonance { fs_hz: 38.0, qms: 3.1, qes: 0.42 }),
        )
        .unwrap();
        let load = DriverLoad::Model(model);
        for f in [5.0, 38.0, 200.0, 3e3, 2e4] {
            let (a, b) = (driver_impedance_by_mna(&load, f), model.impedance_at(f));
            assert!((a - b).norm() < 1e-10 * b.norm(), "f = {f}: {a} vs {b}");
        }
    }

    // Source: Small 1972 (from memory): the motional tank peaks at fs with |Z| = Re + Res =
    // Re·(1 + Qms/Qes), and its −3 dB-like points follow from Qms.
    #[test]
    fn resonance_peaks_at_fs_with_re_plus_res() {
        let model =
            DriverModel::new(5.5, Coil::Resistive, Some(Resonance { fs_hz: 52.0, qms: 4.0, qes: 0.5 })).unwrap();
        let z = model.impedance_at(52.0);
        assert!((z.re - 5.5 * (1.0 + 8.0)).abs() < 1e-9 && z.im.abs() < 1e-9, "{z}");
        // The tank's own Q: with bandwidth fs/Qms between the points where its reactance equals Res.
        let (res, lces, cmes) = model.resonance.unwrap().elements(5.5);
        assert!((res * (cmes / lces).sqrt() - 4.0).abs() < 1e-12);
        assert!((5.5 * (cmes / lces).sqrt() - 0.5).abs() < 1e-12);
    }

    #[test]
    fn non_positive_re_is_refused_by_name() {
        for re in [0.0, -4.0, f64::NAN] {
            let error = DriverModel::new(re, Coil::Resistive, None).unwrap_err();
            assert!(error.to_string().starts_with("driver Re is"), "{error}");
        }
    }

    #[test]
    fn csv_reads_header_comments_and_separators() {
        let text = "# our bench, 2026\nfreq,mag,phase\n10, 8.0, 10\n\n100;6.0;0\n1000\t12.0\t45\n";
        let curve = parse_impedance_csv(text).unwrap();
        assert_eq!(curve.f_hz(), [10.0, 100.0, 1000.0]);
        let z = curve.value_at(100.0).unwrap();
        assert!((z.re - 6.0).abs() < 1e-12 && z.im.abs() < 1e-12);
        // Halfway in log f: |Z| is the geometric mean and the phase the mean.
        let z = curve.value_at(316.227_766_016_837_9).unwrap();
        assert!((z.norm() - (72.0f64).sqrt()).abs() < 1e-9 && (z.arg().to_degrees() - 22.5).abs() < 1e-9);
        assert!(curve.value_at(5.0).is_none() && curve.value_at(1001.0).is_none());
    }

    #[test]
    fn csv_bad_rows_are_named_by_line() {
        let cases = [
            ("10,8,0\n20,x,0\n", "line 2"),
            ("10,8,0\n20,8\n", "line 2"),
            ("10,8,0\n\n20,-1,0\n", "line 3"),
            ("10,8,0\n20,8,120\n", "line 2"),
            ("10,8,0\n20,8,0\n15,8,0\n", "line 3"),
            ("10,8,0\n", "it has 1"),
        ];
        for (text, expected) in cases {
            let message = parse_impedance_csv(text).unwrap_err().to_string();
            assert!(message.contains(expected), "{text:?}: {message}");
        }
        let message = parse_impedance_csv("10,8,0\n20,8,0\n15,8,0\n").unwrap_err().to_string();
        assert!(message.contains("not above"), "{message}");
    }

    #[test]
    fn response_phase_is_unwrapped() {
        let curve = parse_response_csv("100,0,170\n200,-6,-170\n").unwrap();
        // −170° follows 170° as 190°, so halfway in log f the phase is 180°, not 0°.
        let h = curve.value_at((100.0f64 * 200.0).sqrt()).unwrap();
        assert!((h.arg().to_degrees().abs() - 180.0).abs() < 1e-9, "{h}");
        assert!((20.0 * h.norm().log10() + 3.0).abs() < 1e-9);
    }

    #[test]
    fn measured_element_solves_and_refuses_outside_its_range() {
        let curve = parse_impedance_csv("10,8,0\n100,10,30\n1000,20,60\n").unwrap();
        let load = DriverLoad::Measured(curve.clone());
        let z = driver_impedance_by_mna(&load, 300.0);
        assert!((z - curve.value_at(300.0).unwrap()).norm() < 1e-12);
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0);
        load.add_to(&mut b, "D", "in", "0");
        let circuit = b.build().unwrap();
        let probe = Probe::new(&circuit, "V1", "in", "0").unwrap();
        let mut system = AcSystem::new(&circuit, &probe);
        let error = system.solve_at(2000.0, Detail::Transfer).unwrap_err();
        assert!(error.to_string().contains("outside the measured impedance curve"), "{error}");
        assert!(system.pencil().is_none());
        // The exact ω-derivative matches a central difference inside a segment.
        let h = 1e-3;
        let (_, dz) = curve.value_and_derivative_at(300.0).unwrap();
        let numeric = (curve.value_at(300.0 + h).unwrap() - curve.value_at(300.0 - h).unwrap()) / (2.0 * PI * 2.0 * h);
        assert!((numeric - dz).norm() < 1e-6 * dz.norm());
    }
}
