//! ABCD (chain) matrix cascade of a ladder network.
//!
//! A two-port relates its input (V1, I1) to its output (V2, I2), with I2 flowing out of the
//! output port into the load:
//!
//! ```text
//! [V1]   [A B] [V2]
//! [I1] = [C D] [I2]
//! ```
//!
//! A series impedance Z has A = 1, B = Z, C = 0, D = 1; a shunt admittance Y has A = 1, B = 0,
//! C = Y, D = 1; a cascade is the matrix product in order from source to load.
//! Source: Pozar, *Microwave Engineering*, 4th ed., §4.4, Table 4.1 (section and table numbers
//! from memory); the two elementary matrices and the product rule are common practice.
//!
//! Terminated by a Thevenin source (EMF E behind Rs) and a load Z_L, V2 = Z_L·I2 and
//! E = V1 + Rs·I1 give
//!
//! - H = V_L/E = Z_L / (A·Z_L + B + Rs·(C·Z_L + D)),
//! - Z_in = V1/I1 = (A·Z_L + B) / (C·Z_L + D), the impedance seen past Rs.

use bandwright::{Circuit, CircuitBuilder, ElementKind, Probe};
use num_complex::Complex64;

/// A two-terminal part of a ladder arm, with its parasitic series resistance.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Part {
    /// A resistor of `resistance` Ω.
    Resistor {
        /// Resistance in Ω, > 0.
        resistance: f64,
    },
    /// An inductor of `inductance` H in series with its winding resistance `dcr` Ω.
    Inductor {
        /// Inductance in H, > 0.
        inductance: f64,
        /// Winding (DC) resistance in Ω, ≥ 0.
        dcr: f64,
    },
    /// A capacitor of `capacitance` F in series with its equivalent series resistance `esr` Ω.
    Capacitor {
        /// Capacitance in F, > 0.
        capacitance: f64,
        /// Equivalent series resistance in Ω, ≥ 0.
        esr: f64,
    },
}

/// One arm of a ladder: a part in series with the signal path or shunted to ground.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Section {
    /// The part sits in the signal path (a series impedance).
    Series(Part),
    /// The part goes from the signal path to ground (a shunt admittance).
    Shunt(Part),
}

/// An ABCD (chain) matrix at one frequency.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Abcd {
    /// V1/V2 with the output open.
    pub a: Complex64,
    /// V1/I2 with the output shorted, in Ω.
    pub b: Complex64,
    /// I1/V2 with the output open, in S.
    pub c: Complex64,
    /// I1/I2 with the output shorted.
    pub d: Complex64,
}

/// A ladder between a Thevenin source and a resistive load.
#[derive(Debug, Clone, PartialEq)]
pub struct Ladder {
    /// The arms, from the source to the load.
    pub sections: Vec<Section>,
    /// The source's series resistance Rs in Ω (0 for an ideal source).
    pub source_resistance: f64,
    /// The load resistance R_L in Ω, across the last node.
    pub load_resistance: f64,
}

/// The reference of the ladder's source in [`Ladder::to_circuit`].
pub const SOURCE_REF: &str = "V1";
/// The reference of the ladder's load resistor in [`Ladder::to_circuit`].
pub const LOAD_REF: &str = "RL";

impl Part {
    /// The part's impedance at angular frequency `omega` (rad/s), in Ω.
    ///
    /// Z_R = R, Z_L = DCR + jωL, Z_C = ESR + 1/(jωC) (common practice).
    pub fn impedance(&self, omega: f64) -> Complex64 {
        match *self {
            Part::Resistor { resistance } => Complex64::new(resistance, 0.0),
            Part::Inductor { inductance, dcr } => Complex64::new(dcr, omega * inductance),
            Part::Capacitor { capacitance, esr } => Complex64::new(esr, -1.0 / (omega * capacitance)),
        }
    }

    /// The same part as a core element kind.
    pub fn element_kind(&self) -> ElementKind {
        match *self {
            Part::Resistor { resistance } => ElementKind::Resistor { resistance },
            Part::Inductor { inductance, dcr } => ElementKind::Inductor { inductance, dcr },
            Part::Capacitor { capacitance, esr } => ElementKind::Capacitor { capacitance, esr },
        }
    }

    /// The letter of the usual reference designator: R, L or C.
    pub fn letter(&self) -> char {
        match self {
            Part::Resistor { .. } => 'R',
            Part::Inductor { .. } => 'L',
            Part::Capacitor { .. } => 'C',
        }
    }
}

impl Section {
    /// The section's chain matrix at `omega` (rad/s): [[1, Z], [0, 1]] for a series impedance Z,
    /// [[1, 0], [Y, 1]] for a shunt admittance Y = 1/Z (Pozar, Table 4.1, from memory).
    pub fn abcd(&self, omega: f64) -> Abcd {
        let one = Complex64::new(1.0, 0.0);
        let zero = Complex64::new(0.0, 0.0);
        match self {
            Section::Series(part) => Abcd { a: one, b: part.impedance(omega), c: zero, d: one },
            Section::Shunt(part) => Abcd { a: one, b: zero, c: 1.0 / part.impedance(omega), d: one },
        }
    }
}

impl Abcd {
    /// The identity two-port (a direct connection).
    pub fn identity() -> Self {
        let one = Complex64::new(1.0, 0.0);
        let zero = Complex64::new(0.0, 0.0);
        Abcd { a: one, b: zero, c: zero, d: one }
    }

    /// The cascade of `self` followed by `next` (source side first): the matrix product.
    pub fn then(&self, next: &Abcd) -> Abcd {
        Abcd {
            a: self.a * next.a + self.b * next.c,
            b: self.a * next.b + self.b * next.d,
            c: self.c * next.a + self.d * next.c,
            d: self.c * next.b + self.d * next.d,
        }
    }

    /// V_L/E with a Thevenin source of resistance `rs` and a load `z_load`:
    /// Z_L / (A·Z_L + B + Rs·(C·Z_L + D)).
    pub fn transfer(&self, rs: f64, z_load: Complex64) -> Complex64 {
        z_load / (self.a * z_load + self.b + rs * (self.c * z_load + self.d))
    }

    /// The input impedance with a load `z_load`: (A·Z_L + B) / (C·Z_L + D), in Ω.
    pub fn input_impedance(&self, z_load: Complex64) -> Complex64 {
        (self.a * z_load + self.b) / (self.c * z_load + self.d)
    }
}

/// The chain matrix of `sections` in order from source to load, at `omega` (rad/s).
pub fn cascade(sections: &[Section], omega: f64) -> Abcd {
    sections.iter().fold(Abcd::identity(), |total, section| total.then(&section.abcd(omega)))
}

impl Ladder {
    /// V_L/E at `omega` (rad/s), by the ABCD cascade.
    pub fn transfer(&self, omega: f64) -> Complex64 {
        cascade(&self.sections, omega).transfer(self.source_resistance, Complex64::new(self.load_resistance, 0.0))
    }

    /// The input impedance past the source resistance at `omega` (rad/s), in Ω.
    pub fn input_impedance(&self, omega: f64) -> Complex64 {
        cascade(&self.sections, omega).input_impedance(Complex64::new(self.load_resistance, 0.0))
    }

    /// The same ladder as a core circuit, with the probe from its source to the load.
    ///
    /// Nodes are `n0` (the source terminal), `n1`, … : each series arm moves one node on, each
    /// shunt arm goes from the current node to ground. Parts are named by letter and position
    /// (`L1`, `C2`, …), the source [`SOURCE_REF`] (EMF 1 V behind Rs) and the load [`LOAD_REF`].
    ///
    /// # Panics
    /// If a value is rejected by the core (a test-writing error, not an oracle result).
    pub fn to_circuit(&self) -> (Circuit, Probe) {
        let mut builder = CircuitBuilder::new();
        builder.voltage_source(SOURCE_REF, "n0", "0", 1.0, self.source_resistance);
        let mut node = 0;
        for (index, section) in self.sections.iter().enumerate() {
            match section {
                Section::Series(part) => {
                    let reference = format!("{}{}", part.letter(), index + 1);
                    builder.add(&reference, part.element_kind(), &format!("n{node}"), &format!("n{}", node + 1));
                    node += 1;
                }
                Section::Shunt(part) => {
                    let reference = format!("{}{}", part.letter(), index + 1);
                    builder.add(&reference, part.element_kind(), &format!("n{node}"), "0");
                }
            }
        }
        let output = format!("n{node}");
        builder.resistor(LOAD_REF, &output, "0", self.load_resistance);
        let circuit = builder.build().expect("the oracle's ladder is a valid circuit");
        let probe = Probe::new(&circuit, SOURCE_REF, &output, "0").expect("the ladder's output node exists");
        (circuit, probe)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Source: common practice; a series R into a load R is a voltage divider.
    #[test]
    fn divider_by_cascade() {
        let ladder = Ladder {
            sections: vec![Section::Series(Part::Resistor { resistance: 30.0 })],
            source_resistance: 20.0,
            load_resistance: 50.0,
        };
        assert!((ladder.transfer(1.0) - Complex64::new(0.5, 0.0)).norm() < 1e-15);
        assert!((ladder.input_impedance(1.0) - Complex64::new(80.0, 0.0)).norm() < 1e-12);
    }

    // Source: common practice; the product of chain matrices of a reciprocal network has
    // determinant AD − BC = 1.
    #[test]
    fn cascade_is_reciprocal() {
        let sections = [
            Section::Series(Part::Inductor { inductance: 1e-3, dcr: 0.3 }),
            Section::Shunt(Part::Capacitor { capacitance: 1e-6, esr: 0.01 }),
            Section::Series(Part::Resistor { resistance: 10.0 }),
            Section::Shunt(Part::Inductor { inductance: 2e-3, dcr: 0.0 }),
        ];
        let m = cascade(&sections, 2.0 * std::f64::consts::PI * 1e3);
        let determinant = m.a * m.d - m.b * m.c;
        assert!((determinant - Complex64::new(1.0, 0.0)).norm() < 1e-12, "{determinant}");
    }
}
