//! Part stress at a stated amplifier power: the voltage on every capacitor, the current in every
//! coil and the power in every resistor, their minimum ratings, and the parts list with standard
//! values.
//!
//! # Method (common practice, not a standard)
//! Power into the nominal impedance sets the amplifier's rms voltage, V = √(P·R_nominal). The
//! circuit is swept with that sine voltage over the band given, at `points_per_decade` log-spaced
//! frequencies plus both band edges, and each part's worst value over the sweep is kept with its
//! frequency: |V| across a capacitor, |I| through an inductor and |I|²·R in a resistor, all rms.
//! A full-power continuous sine at the worst frequency is a deliberately pessimistic load; music
//! has a much lower average power. The sweep is sampled, so a sharp peak between points can be
//! missed by a little; more points per decade narrow that.
//!
//! # Minimum ratings (margins are common practice; change them in [`RatingMargins`])
//! - Capacitor voltage rating ≥ margin × the peak voltage √2·|V| (a capacitor's rated voltage is a
//!   DC or peak figure); default margin 2.
//! - Inductor current rating ≥ margin × |I| rms; default 1.5.
//! - Resistor power rating ≥ margin × |I|²·R; default 2 (a power resistor run at half its rating).
//!
//! These figures come with [`STRESS_CAUTIONS`], which every adapter shows beside them.

use crate::cautions::Caution;
use crate::circuit::{Circuit, ElementKind};
use crate::crossover::{Crossover, AMPLIFIER_REF};
use crate::eseries::{PartValues, Series};
use crate::mna::{AcSystem, Detail, Probe, SolveError};
use std::fmt;

/// Rating margins over the worst figures (common practice defaults in [`Default`]).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RatingMargins {
    /// Capacitor voltage rating over the peak voltage (default 2).
    pub capacitor_voltage: f64,
    /// Inductor current rating over the rms current (default 1.5).
    pub inductor_current: f64,
    /// Resistor power rating over the dissipated power (default 2).
    pub resistor_power: f64,
}

/// What a stress sweep is run at.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StressOptions {
    /// Amplifier power into the nominal impedance, W (> 0).
    pub power_w: f64,
    /// The nominal impedance the power is stated into, Ω (> 0).
    pub nominal_ohm: f64,
    /// Lower band edge, Hz (> 0).
    pub low_hz: f64,
    /// Upper band edge, Hz (≥ `low_hz`).
    pub high_hz: f64,
    /// Sweep density (1..=1000).
    pub points_per_decade: usize,
    /// Rating margins.
    pub margins: RatingMargins,
}

/// Which figure a part's stress is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum StressQuantity {
    /// The rms voltage across a capacitor, V; its rating is a peak voltage.
    CapacitorVoltage,
    /// The rms current through an inductor, A.
    InductorCurrent,
    /// The power in a resistor, W.
    ResistorPower,
}

/// One part's worst figure over the sweep.
#[derive(Debug, Clone, PartialEq)]
pub struct PartStress {
    /// The part's reference.
    pub reference: String,
    /// What the figure is.
    pub quantity: StressQuantity,
    /// The worst figure: V rms, A rms or W.
    pub worst: f64,
    /// The frequency where it occurs, Hz.
    pub at_hz: f64,
    /// The minimum rating with margin: V (peak), A (rms) or W.
    pub minimum_rating: f64,
}

/// The worst power delivered into one driver (its voice coil heats with it).
#[derive(Debug, Clone, PartialEq)]
pub struct DriverPower {
    /// The branch's name.
    pub branch: String,
    /// The worst real power into the driver, W.
    pub worst_w: f64,
    /// The frequency where it occurs, Hz.
    pub at_hz: f64,
}

/// The result of a stress sweep.
#[derive(Debug, Clone, PartialEq)]
pub struct StressReport {
    /// The power asked for, W.
    pub power_w: f64,
    /// The amplifier's rms voltage √(P·R_nominal), V.
    pub amplifier_volts_rms: f64,
    /// Every resistor, capacitor and inductor of the crossover (driver model parts excluded).
    pub parts: Vec<PartStress>,
    /// Per driver, the worst power it takes (empty for [`circuit_stress`]).
    pub drivers: Vec<DriverPower>,
    /// Frequencies that could not be solved.
    pub unsolved: Vec<SolveError>,
    /// The cautions to show with these figures.
    pub cautions: &'static [Caution],
}

/// Which standard values the parts list uses for each kind.
#[derive(Debug, Clone, PartialEq)]
pub struct PartsOptions {
    /// Capacitors (default E12).
    pub capacitors: PartValues,
    /// Inductors (default E12).
    pub inductors: PartValues,
    /// Resistors (default E24).
    pub resistors: PartValues,
}

/// One line of the parts list.
#[derive(Debug, Clone, PartialEq)]
pub struct PartsListEntry {
    /// The part's reference.
    pub reference: String,
    /// "capacitor", "inductor" or "resistor".
    pub kind: &'static str,
    /// The designed value in SI units.
    pub ideal: f64,
    /// The nearest standard value (`None` if the set has none).
    pub standard: Option<f64>,
    /// The name of the set the standard value is from.
    pub series: String,
    /// The winding resistance of an inductor as designed, Ω.
    pub dcr: Option<f64>,
    /// The minimum rating from the stress sweep and what it rates.
    pub minimum_rating: Option<(f64, StressQuantity)>,
}

/// Why a stress sweep could not be run.
#[derive(Debug, Clone, PartialEq)]
pub enum StressError {
    /// A value is out of range.
    BadValue {
        /// Which value.
        what: &'static str,
        /// The value.
        value: f64,
        /// What is accepted.
        allowed: &'static str,
    },
    /// The source named is not a voltage source of the circuit.
    NoSource {
        /// The reference given.
        reference: String,
    },
    /// No frequency of the band could be solved.
    NothingSolved {
        /// The first error met.
        first: SolveError,
    },
}

/// The cautions shown with every stress result (common practice, not a standard; they defer to
/// the driver maker's data and local codes).
pub const STRESS_CAUTIONS: &[Caution] = &[
    Caution {
        title: "Hazardous amplifier voltages",
        text:
            "Amplifier outputs can carry hazardous voltages: the figures above assume a continuous sine at the stated \
               power. Work with the amplifier off and its supply capacitors discharged.",
    },
    Caution {
        title: "Capacitor voltage ratings",
        text: "Choose capacitors rated above the minimum voltage shown, which already includes a margin, and use \
               bipolar (non-polarised) capacitors only: the signal swings both ways.",
    },
    Caution {
        title: "Resistors and coils heat",
        text: "Resistors, crossover coils and voice coils turn power into heat. Use parts rated at least as shown, \
               mount hot resistors away from wiring and wood, and keep within the driver maker's power data.",
    },
    Caution {
        title: "Defer to the maker and local codes",
        text: "These are estimates from a model. The driver maker's data and local electrical codes take precedence; \
               check a built crossover by measurement.",
    },
];

impl Default for RatingMargins {
    fn default() -> Self {
        RatingMargins { capacitor_voltage: 2.0, inductor_current: 1.5, resistor_power: 2.0 }
    }
}

impl Default for PartsOptions {
    fn default() -> Self {
        PartsOptions {
            capacitors: PartValues::Series(Series::E12),
            inductors: PartValues::Series(Series::E12),
            resistors: PartValues::Series(Series::E24),
        }
    }
}

impl StressQuantity {
    /// The unit symbol of the rating: "V", "A" or "W".
    pub fn unit(self) -> &'static str {
        match self {
            StressQuantity::CapacitorVoltage => "V",
            StressQuantity::InductorCurrent => "A",
            StressQuantity::ResistorPower => "W",
        }
    }

    /// What is rated: "voltage", "current" or "power".
    pub fn name(self) -> &'static str {
        match self {
            StressQuantity::CapacitorVoltage => "voltage",
            StressQuantity::InductorCurrent => "current",
            StressQuantity::ResistorPower => "power",
        }
    }

    /// A minimum rating as written in a parts list ("84 V peak", "9.1 A rms", "141 W"), or "—"
    /// when it is not finite.
    pub fn rating_text(self, value: f64) -> String {
        self.text(value, 3, "peak")
    }

    /// A worst figure over the band as measured ("29.59 V rms"), or "—" when it is not finite.
    pub fn worst_text(self, value: f64) -> String {
        self.text(value, 4, "rms")
    }

    /// The margin a rating carries over the worst figure (common practice, see [`RatingMargins`]).
    pub fn margin_text(self, margins: &RatingMargins) -> String {
        match self {
            StressQuantity::CapacitorVoltage => format!("{} × peak (√2 × rms)", margins.capacitor_voltage),
            StressQuantity::InductorCurrent => format!("{} × rms", margins.inductor_current),
            StressQuantity::ResistorPower => format!("{} × dissipation", margins.resistor_power),
        }
    }

    /// A voltage is rated as a peak and measured as rms; a current is rms both ways.
    fn text(self, value: f64, digits: usize, voltage_kind: &str) -> String {
        use crate::notation::{format_quantity, Quantity};
        if !value.is_finite() {
            return "—".to_string();
        }
        match self {
            StressQuantity::CapacitorVoltage => {
                format!("{} {voltage_kind}", format_quantity(value, Quantity::Voltage, digits))
            }
            StressQuantity::InductorCurrent => format!("{} rms", format_quantity(value, Quantity::Current, digits)),
            StressQuantity::ResistorPower => format_quantity(value, Quantity::Power, digits),
        }
    }
}

impl fmt::Display for StressError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::BadValue { what, value, allowed } => write!(f, "{what} is {value}; it must be {allowed}"),
            Self::NoSource { reference } => {
                write!(f, "{reference} is not a voltage source of the circuit; name the source the amplifier drives")
            }
            Self::NothingSolved { first } => {
                write!(f, "no frequency of the band could be solved ({first}); choose another band")
            }
        }
    }
}

impl std::error::Error for StressError {}

/// Sweeps `circuit`, driven by the voltage source `source`, at the amplifier voltage of
/// `options`, and reports every resistor, capacitor and inductor for which `is_part` is true.
///
/// # Errors
/// [`StressError`] for bad options, a source that is not a voltage source, or a band where no
/// frequency solves.
pub fn circuit_stress(
    circuit: &Circuit,
    source: &str,
    options: &StressOptions,
    is_part: &dyn Fn(&str) -> bool,
) -> Result<StressReport, StressError> {
    let (report, _) = sweep_stress(circuit, source, options, is_part, &[])?;
    Ok(report)
}

/// The stress report of a crossover: its own parts (driver model parts excluded) and the power
/// into each driver.
///
/// # Errors
/// As [`circuit_stress`].
pub fn crossover_stress(crossover: &Crossover, options: &StressOptions) -> Result<StressReport, StressError> {
    let prefixes: Vec<(String, String)> =
        crossover.branches.iter().map(|b| (b.name.clone(), b.driver_prefix.clone())).collect();
    let is_part = |reference: &str| !crossover.is_driver_part(reference);
    let (mut report, drivers) = sweep_stress(&crossover.circuit, AMPLIFIER_REF, options, &is_part, &prefixes)?;
    report.drivers = drivers;
    Ok(report)
}

/// The parts list of a crossover: every crossover part with its nearest standard value and, from
/// `report`, its minimum rating.
pub fn parts_list(crossover: &Crossover, report: &StressReport, options: &PartsOptions) -> Vec<PartsListEntry> {
    let mut list = Vec::new();
    for element in crossover.circuit.elements() {
        if crossover.is_driver_part(&element.reference) {
            continue;
        }
        let (kind, ideal, set, dcr) = match element.kind {
            ElementKind::Capacitor { capacitance, .. } => ("capacitor", capacitance, &options.capacitors, None),
            ElementKind::Inductor { inductance, dcr } => ("inductor", inductance, &options.inductors, Some(dcr)),
            ElementKind::Resistor { resistance } => ("resistor", resistance, &options.resistors, None),
            _ => continue,
        };
        let minimum_rating =
            report.parts.iter().find(|p| p.reference == element.reference).map(|p| (p.minimum_rating, p.quantity));
        list.push(PartsListEntry {
            reference: element.reference.clone(),
            kind,
            ideal,
            standard: set.nearest(ideal),
            series: set.name(),
            dcr,
            minimum_rating,
        });
    }
    list
}

/// The log-spaced sweep of `options`, both edges included.
pub fn stress_frequencies(options: &StressOptions) -> Vec<f64> {
    let (low, high) = (options.low_hz, options.high_hz);
    let decades = (high / low).log10();
    let steps = (decades * options.points_per_decade as f64).ceil().max(0.0) as usize;
    if steps == 0 {
        return if high > low { vec![low, high] } else { vec![low] };
    }
    (0..=steps).map(|k| if k == steps { high } else { low * 10f64.powf(decades * k as f64 / steps as f64) }).collect()
}

type Sweep = (StressReport, Vec<DriverPower>);

fn sweep_stress(
    circuit: &Circuit,
    source: &str,
    options: &StressOptions,
    is_part: &dyn Fn(&str) -> bool,
    drivers: &[(String, String)],
) -> Result<Sweep, StressError> {
    check_options(options)?;
    let stimulus =
        circuit.element_index(source).ok_or_else(|| StressError::NoSource { reference: source.to_string() })?;
    let ElementKind::VoltageSource { emf, .. } = circuit.elements()[stimulus].kind else {
        return Err(StressError::NoSource { reference: source.to_string() });
    };
    let probe =
        Probe { stimulus, output: (circuit.elements()[stimulus].nodes.0, circuit.elements()[stimulus].nodes.1) };
    let mut system = AcSystem::new(circuit, &probe);
    let volts = (options.power_w * options.nominal_ohm).sqrt();
    let scale = volts / emf.abs();
    let margins = options.margins;

    let mut parts: Vec<PartStress> = Vec::new();
    let mut slots: Vec<(usize, usize)> = Vec::new();
    for (index, element) in circuit.elements().iter().enumerate() {
        let quantity = match element.kind {
            ElementKind::Capacitor { .. } => StressQuantity::CapacitorVoltage,
            ElementKind::Inductor { .. } => StressQuantity::InductorCurrent,
            ElementKind::Resistor { .. } => StressQuantity::ResistorPower,
            _ => continue,
        };
        if !is_part(&element.reference) {
            continue;
        }
        slots.push((index, parts.len()));
        parts.push(PartStress {
            reference: element.reference.clone(),
            quantity,
            worst: 0.0,
            at_hz: 0.0,
            minimum_rating: 0.0,
        });
    }
    let members: Vec<Vec<usize>> = drivers
        .iter()
        .map(|(_, prefix)| {
            (0..circuit.elements().len())
                .filter(|&i| crate::driver::DriverLoad::owns(prefix, &circuit.elements()[i].reference))
                .collect()
        })
        .collect();
    let mut driver_power: Vec<DriverPower> =
        drivers.iter().map(|(name, _)| DriverPower { branch: name.clone(), worst_w: 0.0, at_hz: 0.0 }).collect();

    let mut unsolved = Vec::new();
    let mut solved = 0;
    for f in stress_frequencies(options) {
        let solution = match system.solve_at(f, Detail::Full) {
            Ok(solution) => solution,
            Err(error) => {
                unsolved.push(error);
                continue;
            }
        };
        solved += 1;
        for &(index, slot) in &slots {
            let state = solution.elements[index];
            let figure = match parts[slot].quantity {
                StressQuantity::CapacitorVoltage => state.voltage.norm() * scale,
                StressQuantity::InductorCurrent => state.current.norm() * scale,
                StressQuantity::ResistorPower => state.power.re * scale * scale,
            };
            if figure > parts[slot].worst {
                parts[slot].worst = figure;
                parts[slot].at_hz = f;
            }
        }
        for (power, indices) in driver_power.iter_mut().zip(&members) {
            let total: f64 = indices.iter().map(|&i| solution.elements[i].power.re).sum::<f64>() * scale * scale;
            if total > power.worst_w {
                power.worst_w = total;
                power.at_hz = f;
            }
        }
    }
    if solved == 0 {
        return Err(StressError::NothingSolved { first: unsolved[0] });
    }
    for part in &mut parts {
        part.minimum_rating = match part.quantity {
            StressQuantity::CapacitorVoltage => margins.capacitor_voltage * std::f64::consts::SQRT_2 * part.worst,
            StressQuantity::InductorCurrent => margins.inductor_current * part.worst,
            StressQuantity::ResistorPower => margins.resistor_power * part.worst,
        };
    }
    let report = StressReport {
        power_w: options.power_w,
        amplifier_volts_rms: volts,
        parts,
        drivers: Vec::new(),
        unsolved,
        cautions: STRESS_CAUTIONS,
    };
    Ok((report, driver_power))
}

fn check_options(options: &StressOptions) -> Result<(), StressError> {
    let positive = |what, value: f64| {
        if value.is_finite() && value > 0.0 {
            Ok(())
        } else {
            Err(StressError::BadValue { what, value, allowed: "a finite value > 0" })
        }
    };
    positive("amplifier power in W", options.power_w)?;
    positive("nominal impedance", options.nominal_ohm)?;
    positive("lower band edge in Hz", options.low_hz)?;
    positive("upper band edge in Hz", options.high_hz)?;
    if options.high_hz < options.low_hz {
        return Err(StressError::BadValue {
            what: "upper band edge in Hz",
            value: options.high_hz,
            allowed: "at least the lower band edge",
        });
    }
    if !(1..=1000).contains(&options.points_per_decade) {
        return Err(StressError::BadValue {
            what: "points per decade",
            value: options.points_per_decade as f64,
            allowed: "a whole number from 1 to 1000",
        });
    }
    let m = options.margins;
    for (what, value) in [
        ("capacitor voltage margin", m.capacitor_voltage),
        ("inductor current margin", m.inductor_current),
        ("resistor power margin", m.resistor_power),
    ] {
        if !(value.is_finite() && value >= 1.0) {
            return Err(StressError::BadValue { what, value, allowed: "a finite factor ≥ 1" });
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::circuit::CircuitBuilder;

    fn options(power_w: f64, low_hz: f64, high_hz: f64) -> StressOptions {
        StressOptions {
            power_w,
            nominal_ohm: 8.0,
            low_hz,
            high_hz,
            points_per_decade: 48,
            margins: RatingMargins::default(),
        }
    }

    // Hand calculation: 50 W into 8 Ω is 20 V rms; a series R–C of 8 Ω and C across the same 20 V.
    #[test]
    fn series_rc_matches_hand_calculation() {
        let c = 10e-6;
        let mut b = CircuitBuilder::new();
        b.voltage_source("amp", "in", "0", 1.0, 0.0).capacitor("C1", "in", "x", c).resistor("R1", "x", "0", 8.0);
        let circuit = b.build().unwrap();
        let f = 1000.0;
        let report = circuit_stress(&circuit, "amp", &options(50.0, f, f), &|_| true).unwrap();
        assert!((report.amplifier_volts_rms - 20.0).abs() < 1e-12);
        let xc = 1.0 / (2.0 * std::f64::consts::PI * f * c);
        let i = 20.0 / (64.0 + xc * xc).sqrt();
        let cap = &report.parts[0];
        assert!((cap.worst - i * xc).abs() < 1e-9 && cap.at_hz == f);
        assert!((cap.minimum_rating - 2.0 * 2f64.sqrt() * i * xc).abs() < 1e-9);
        assert!((report.parts[1].worst - i * i * 8.0).abs() < 1e-9);
        assert_eq!(report.cautions.len(), STRESS_CAUTIONS.len());
    }

    #[test]
    fn bad_options_are_refused_by_name() {
        let mut b = CircuitBuilder::new();
        b.voltage_source("amp", "in", "0", 1.0, 0.0).resistor("R1", "in", "0", 8.0);
        let circuit = b.build().unwrap();
        let e = circuit_stress(&circuit, "amp", &options(-1.0, 20.0, 2e4), &|_| true).unwrap_err();
        assert!(e.to_string().starts_with("amplifier power in W is -1"), "{e}");
        let e = circuit_stress(&circuit, "amp", &options(10.0, 2e4, 20.0), &|_| true).unwrap_err();
        assert!(e.to_string().contains("upper band edge"), "{e}");
        let e = circuit_stress(&circuit, "R1", &options(10.0, 20.0, 2e4), &|_| true).unwrap_err();
        assert!(e.to_string().contains("not a voltage source"), "{e}");
    }

    #[test]
    fn sweep_includes_both_edges() {
        let f = stress_frequencies(&options(1.0, 20.0, 20e3));
        assert_eq!((f[0], *f.last().unwrap()), (20.0, 20e3));
        assert_eq!(f.len(), 3 * 48 + 1);
    }
}
