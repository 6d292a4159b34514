//! Circuit model: named nodes, two-terminal parts, sources and a controlled source, validated on
//! construction.
//!
//! A [`Circuit`] is built through a [`CircuitBuilder`]. Nodes are created by name when a part first
//! uses them; the names `0`, `gnd` and `GND` (any case) all mean ground. [`CircuitBuilder::build`]
//! checks everything that can be checked without choosing a frequency:
//!
//! - every reference is unique and every value is finite and physically meaningful;
//! - no part has both terminals on one node;
//! - every part is connected to ground through the network (no islands);
//! - no loop is made only of ideal voltage-defined branches (ideal voltage sources and controlled
//!   source outputs), since such a loop has no unique solution at any frequency;
//! - no node set is reached only through current sources (a cutset of current sources).
//!
//! A node that is floating only at DC, such as the node between two capacitors in series, is
//! accepted: it is solvable at every ω > 0, and a sweep that includes 0 Hz flags that one point.
//!
//! A measured impedance ([`ElementKind::MeasuredImpedance`]) is a two-terminal part whose
//! impedance comes from a [`MeasuredCurve`] held by the circuit; it is not rational in s, so the
//! modal (pencil) path refuses such a circuit and the per-frequency MNA path handles it.
//!
//! Sign conventions (passive): each two-terminal part has terminals `(a, b)`; its voltage is
//! V(a) − V(b) and its current flows from `a` through the part to `b`. Sources use the same
//! convention for reporting, so a source that delivers power reports negative absorbed power.
//! A voltage source's `a` terminal is its positive terminal; a current source pushes its current
//! out of terminal `a` into the network and takes it back at `b`.

use num_complex::Complex64;
use std::collections::HashMap;
use std::fmt;

/// A node of a circuit, as an index into its node list; index 0 is ground.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct Node(pub(crate) usize);

/// The gain of a voltage-controlled voltage source.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Gain {
    /// A real gain, constant over frequency (an ideal amplifier of that gain).
    Constant(f64),
    /// A single-pole gain A(s) = A0 / (1 + s/ωp), the usual dominant-pole op-amp model.
    /// The gain-bandwidth product is A0 · f_pole.
    SinglePole {
        /// DC gain A0 (dimensionless).
        dc_gain: f64,
        /// Pole frequency in Hz.
        pole_hz: f64,
    },
}

/// What a part is, with its values in SI units.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum ElementKind {
    /// A resistor of `resistance` ohms.
    Resistor {
        /// Resistance in Ω, > 0.
        resistance: f64,
    },
    /// A capacitor of `capacitance` farads with an equivalent series resistance.
    Capacitor {
        /// Capacitance in F, > 0.
        capacitance: f64,
        /// Equivalent series resistance in Ω, ≥ 0.
        esr: f64,
    },
    /// An inductor of `inductance` henries with its winding resistance.
    Inductor {
        /// Inductance in H, > 0.
        inductance: f64,
        /// DC (winding) resistance in Ω, ≥ 0.
        dcr: f64,
    },
    /// An independent voltage source (a Thevenin source): EMF in series with a resistance.
    VoltageSource {
        /// EMF amplitude in V (rms phasor, zero phase), ≠ 0.
        emf: f64,
        /// Series source resistance in Ω, ≥ 0 (0 is an ideal source).
        series_resistance: f64,
    },
    /// An independent current source pushing `current` out of terminal `a`.
    CurrentSource {
        /// Current amplitude in A (rms phasor, zero phase), ≠ 0.
        current: f64,
    },
    /// A voltage-controlled voltage source: V(a) − V(b) = A · (V(control.0) − V(control.1)).
    Vcvs {
        /// The gain A.
        gain: Gain,
        /// The sensing node pair (positive, negative). It draws no current.
        control: (Node, Node),
    },
    /// A measured impedance: Z(f) interpolated from the circuit's curve number `curve` (see
    /// [`Circuit::curves`] and [`MeasuredCurve`]). Only defined inside the curve's frequency range.
    MeasuredImpedance {
        /// Index into [`Circuit::curves`].
        curve: usize,
    },
}

/// A measured complex curve (an impedance in Ω, or a dimensionless response) on a strictly
/// increasing frequency grid, interpolated in log frequency.
///
/// Between two points the interpolation is linear in ln f for ln |Z| (so |Z| is a straight line on
/// log–log axes) and for the phase in radians (a straight line on a log-frequency axis). This is
/// the usual way to read a measured curve between its points (common practice); it is exact at
/// the points. Outside [first, last] frequency the curve is not defined: no extrapolation is done.
#[derive(Debug, Clone, PartialEq)]
pub struct MeasuredCurve {
    f_hz: Vec<f64>,
    ln_magnitude: Vec<f64>,
    phase_rad: Vec<f64>,
}

/// Why a measured curve was refused. `point` counts from 0 in the order given.
#[derive(Debug, Clone, PartialEq)]
pub enum CurveError {
    /// Fewer than two points, or lists of different lengths.
    TooFewPoints {
        /// How many usable points there were.
        count: usize,
    },
    /// A frequency is not finite and > 0, or a magnitude is not finite and > 0, or a phase is not
    /// finite.
    BadPoint {
        /// The point's position.
        point: usize,
        /// Which value, e.g. "frequency".
        what: &'static str,
        /// The offending value.
        value: f64,
    },
    /// A frequency is not above the one before it.
    NotIncreasing {
        /// The point's position.
        point: usize,
        /// Its frequency in Hz.
        f_hz: f64,
        /// The frequency before it in Hz.
        previous_hz: f64,
    },
}

/// One part of a circuit.
#[derive(Debug, Clone, PartialEq)]
pub struct Element {
    /// The part's unique reference, such as `R1`.
    pub reference: String,
    /// What the part is and its values.
    pub kind: ElementKind,
    /// Terminals `(a, b)`; see the module doc for the sign convention.
    pub nodes: (Node, Node),
}

/// A validated circuit: nodes and parts.
#[derive(Debug, Clone, PartialEq)]
pub struct Circuit {
    node_names: Vec<String>,
    elements: Vec<Element>,
    curves: Vec<MeasuredCurve>,
}

/// Collects parts by node name and validates them into a [`Circuit`].
#[derive(Debug, Clone, Default)]
pub struct CircuitBuilder {
    node_names: Vec<String>,
    node_index: HashMap<String, usize>,
    elements: Vec<Element>,
    curves: Vec<MeasuredCurve>,
    problems: Vec<CircuitError>,
}

/// Why a circuit could not be built.
#[derive(Debug, Clone, PartialEq)]
pub enum CircuitError {
    /// The circuit has no parts.
    Empty,
    /// A reference is empty.
    EmptyReference,
    /// Two parts share a reference.
    DuplicateReference {
        /// The reference used twice.
        reference: String,
    },
    /// A node name is empty.
    EmptyNodeName {
        /// The part that uses it.
        reference: String,
    },
    /// A value is not finite, or is out of its allowed range.
    BadValue {
        /// The part.
        reference: String,
        /// Which value, e.g. "resistance".
        what: &'static str,
        /// The offending value.
        value: f64,
        /// What is allowed, e.g. "a finite value > 0".
        allowed: &'static str,
    },
    /// Both terminals of a part are on one node.
    ShortedPart {
        /// The part.
        reference: String,
        /// The node.
        node: String,
    },
    /// A group of parts is not connected to ground.
    Island {
        /// The parts of the island.
        references: Vec<String>,
        /// Its nodes.
        nodes: Vec<String>,
    },
    /// A loop made only of ideal voltage sources and controlled-source outputs.
    VoltageLoop {
        /// The part that closes the loop.
        reference: String,
    },
    /// Nodes that are reached only through current sources.
    CurrentCutset {
        /// The nodes.
        nodes: Vec<String>,
    },
    /// A measured impedance names a curve the circuit does not hold.
    UnknownCurve {
        /// The part.
        reference: String,
        /// The curve index it names.
        curve: usize,
        /// How many curves the circuit holds.
        n_curves: usize,
    },
    /// A node named where the circuit has no such node.
    UnknownNode {
        /// The name.
        name: String,
        /// Where it was named, e.g. "output" or a controlled source's reference.
        used_by: String,
    },
}

impl fmt::Display for CircuitError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Empty => write!(f, "the circuit has no parts; add at least one element"),
            Self::EmptyReference => write!(f, "a part has an empty reference; give every part a name such as R1"),
            Self::DuplicateReference { reference } => {
                write!(f, "reference {reference} is used twice; give each part its own reference")
            }
            Self::EmptyNodeName { reference } => {
                write!(f, "part {reference} has an empty node name; name its nodes, or use 0 for ground")
            }
            Self::BadValue { reference, what, value, allowed } => {
                write!(f, "part {reference} has {what} {value}; it must be {allowed}")
            }
            Self::ShortedPart { reference, node } => write!(
                f,
                "part {reference} has both terminals on node {node}; connect it between two different nodes or remove it"
            ),
            Self::Island { references, nodes } => write!(
                f,
                "parts {} (nodes {}) are not connected to ground through the rest of the circuit; connect them or remove them",
                references.join(", "),
                nodes.join(", ")
            ),
            Self::VoltageLoop { reference } => write!(
                f,
                "part {reference} closes a loop of ideal voltage sources; add a series resistance or remove one source"
            ),
            Self::CurrentCutset { nodes } => write!(
                f,
                "nodes {} are fed only through current sources, so their voltage is undefined; add a path of passive parts to them",
                nodes.join(", ")
            ),
            Self::UnknownCurve { reference, curve, n_curves } => write!(
                f,
                "part {reference} names measured curve {curve}, but the circuit holds {n_curves}; add the curve with CircuitBuilder::measured_impedance"
            ),
            Self::UnknownNode { name, used_by } => write!(
                f,
                "{used_by} names node {name}, which no part connects to; use one of the circuit's nodes"
            ),
        }
    }
}

impl std::error::Error for CircuitError {}

impl fmt::Display for CurveError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::TooFewPoints { count } => {
                write!(f, "a measured curve needs at least two points with frequency, magnitude and phase; it has {count}")
            }
            Self::BadPoint { point, what, value } => write!(
                f,
                "point {} has {what} {value}; frequency and magnitude must be finite and > 0, phase finite",
                point + 1
            ),
            Self::NotIncreasing { point, f_hz, previous_hz } => write!(
                f,
                "point {} has frequency {f_hz} Hz, not above the {previous_hz} Hz before it; list frequencies in strictly increasing order",
                point + 1
            ),
        }
    }
}

impl std::error::Error for CurveError {}

impl MeasuredCurve {
    /// A curve from frequencies (Hz, strictly increasing), magnitudes (> 0; Ω for an impedance)
    /// and phases in degrees.
    ///
    /// # Errors
    /// [`CurveError`] naming the first offending point.
    pub fn new(f_hz: &[f64], magnitude: &[f64], phase_deg: &[f64]) -> Result<MeasuredCurve, CurveError> {
        if f_hz.len() != magnitude.len() || f_hz.len() != phase_deg.len() || f_hz.len() < 2 {
            return Err(CurveError::TooFewPoints { count: f_hz.len().min(magnitude.len()).min(phase_deg.len()) });
        }
        for point in 0..f_hz.len() {
            let bad = |what, value| CurveError::BadPoint { point, what, value };
            if !(f_hz[point].is_finite() && f_hz[point] > 0.0) {
                return Err(bad("frequency", f_hz[point]));
            }
            if !(magnitude[point].is_finite() && magnitude[point] > 0.0) {
                return Err(bad("magnitude", magnitude[point]));
            }
            if !phase_deg[point].is_finite() {
                return Err(bad("phase", phase_deg[point]));
            }
            if point > 0 && f_hz[point] <= f_hz[point - 1] {
                return Err(CurveError::NotIncreasing { point, f_hz: f_hz[point], previous_hz: f_hz[point - 1] });
            }
        }
        Ok(MeasuredCurve {
            f_hz: f_hz.to_vec(),
            ln_magnitude: magnitude.iter().map(|m| m.ln()).collect(),
            phase_rad: phase_deg.iter().map(|p| p.to_radians()).collect(),
        })
    }

    /// The frequencies of the points in Hz.
    pub fn f_hz(&self) -> &[f64] {
        &self.f_hz
    }

    /// The lowest and highest frequency in Hz.
    pub fn range_hz(&self) -> (f64, f64) {
        (self.f_hz[0], self.f_hz[self.f_hz.len() - 1])
    }

    /// The interpolated value at `f_hz`, or `None` outside the curve's range (or for a frequency
    /// that is not finite).
    pub fn value_at(&self, f_hz: f64) -> Option<Complex64> {
        self.value_and_derivative_at(f_hz).map(|(value, _)| value)
    }

    /// The interpolated value at `f_hz` and its derivative d/dω (per rad/s), or `None` outside the
    /// curve's range. At a point between two segments the derivative is that of the segment above
    /// (the last segment at the top end).
    pub fn value_and_derivative_at(&self, f_hz: f64) -> Option<(Complex64, Complex64)> {
        let (low, high) = self.range_hz();
        if !(f_hz >= low && f_hz <= high) {
            return None;
        }
        let n = self.f_hz.len();
        // The segment [k, k + 1] holding f.
        let k = self.f_hz.partition_point(|&x| x <= f_hz).clamp(1, n - 1) - 1;
        let (x0, x1) = (self.f_hz[k].ln(), self.f_hz[k + 1].ln());
        let t = (f_hz.ln() - x0) / (x1 - x0);
        let slope_ln_magnitude = (self.ln_magnitude[k + 1] - self.ln_magnitude[k]) / (x1 - x0);
        let slope_phase = (self.phase_rad[k + 1] - self.phase_rad[k]) / (x1 - x0);
        let ln_magnitude = self.ln_magnitude[k] + t * (self.ln_magnitude[k + 1] - self.ln_magnitude[k]);
        let phase = self.phase_rad[k] + t * (self.phase_rad[k + 1] - self.phase_rad[k]);
        let value = Complex64::from_polar(ln_magnitude.exp(), phase);
        // Z = exp(a + b·ln f + j(c + d·ln f)), and d(ln f)/dω = 1/ω.
        let omega = 2.0 * std::f64::consts::PI * f_hz;
        let derivative = value * Complex64::new(slope_ln_magnitude, slope_phase) / omega;
        Some((value, derivative))
    }

    /// The value at `f_hz` with `f_hz` clamped into the curve's range (for checks that need a
    /// number everywhere; the analysis itself refuses frequencies outside the range).
    pub fn value_clamped(&self, f_hz: f64) -> (Complex64, Complex64) {
        let (low, high) = self.range_hz();
        let f = if f_hz.is_nan() { low } else { f_hz.clamp(low, high) };
        self.value_and_derivative_at(f).expect("a clamped frequency is inside the range")
    }
}

impl Node {
    /// The ground node.
    pub const GROUND: Node = Node(0);

    /// Whether this is the ground node.
    pub fn is_ground(self) -> bool {
        self.0 == 0
    }

    /// The node's index: 0 for ground, 1.. for the others in order of first use.
    pub fn index(self) -> usize {
        self.0
    }
}

impl Gain {
    /// The gain at angular frequency `omega` (rad/s), and its derivative d/dω.
    pub fn at(self, omega: f64) -> (Complex64, Complex64) {
        match self {
            Gain::Constant(a) => (Complex64::new(a, 0.0), Complex64::new(0.0, 0.0)),
            Gain::SinglePole { dc_gain, pole_hz } => {
                let omega_p = 2.0 * std::f64::consts::PI * pole_hz;
                let denominator = Complex64::new(1.0, omega / omega_p);
                let gain = dc_gain / denominator;
                // d/dω [A0 / (1 + jω/ωp)] = −A0 (j/ωp) / (1 + jω/ωp)²
                let derivative = -dc_gain * Complex64::new(0.0, 1.0 / omega_p) / (denominator * denominator);
                (gain, derivative)
            }
        }
    }
}

impl ElementKind {
    /// A short lower-case name of the kind, as used in messages and files.
    pub fn name(&self) -> &'static str {
        match self {
            Self::Resistor { .. } => "resistor",
            Self::Capacitor { .. } => "capacitor",
            Self::Inductor { .. } => "inductor",
            Self::VoltageSource { .. } => "voltage_source",
            Self::CurrentSource { .. } => "current_source",
            Self::Vcvs { .. } => "vcvs",
            Self::MeasuredImpedance { .. } => "measured_impedance",
        }
    }

    /// Whether the part is an independent source.
    pub fn is_source(&self) -> bool {
        matches!(self, Self::VoltageSource { .. } | Self::CurrentSource { .. })
    }

    /// The main value in SI units (resistance, capacitance, inductance, EMF, current or gain).
    /// A measured impedance has no single value; it gives 0 (its curve is in
    /// [`Circuit::curves`]).
    pub fn primary_value(&self) -> f64 {
        match *self {
            Self::Resistor { resistance } => resistance,
            Self::Capacitor { capacitance, .. } => capacitance,
            Self::Inductor { inductance, .. } => inductance,
            Self::VoltageSource { emf, .. } => emf,
            Self::CurrentSource { current } => current,
            Self::Vcvs { gain: Gain::Constant(a), .. } => a,
            Self::Vcvs { gain: Gain::SinglePole { dc_gain, .. }, .. } => dc_gain,
            Self::MeasuredImpedance { .. } => 0.0,
        }
    }

    /// Whether the part fixes the voltage across its terminals (it is a voltage-defined branch
    /// with no series impedance).
    fn is_ideal_voltage_branch(&self) -> bool {
        matches!(self, Self::VoltageSource { series_resistance, .. } if *series_resistance == 0.0)
            || matches!(self, Self::Vcvs { .. })
    }
}

impl Circuit {
    /// The node names, ground (`0`) first.
    pub fn node_names(&self) -> &[String] {
        &self.node_names
    }

    /// The number of nodes including ground.
    pub fn n_nodes(&self) -> usize {
        self.node_names.len()
    }

    /// The name of a node.
    ///
    /// # Panics
    /// If the node does not belong to this circuit.
    pub fn node_name(&self, node: Node) -> &str {
        &self.node_names[node.0]
    }

    /// Finds a node by name; `0` and `gnd` give ground.
    pub fn node(&self, name: &str) -> Option<Node> {
        if is_ground_name(name) {
            return Some(Node::GROUND);
        }
        self.node_names.iter().position(|n| n == name).map(Node)
    }

    /// The parts, in the order they were added.
    pub fn elements(&self) -> &[Element] {
        &self.elements
    }

    /// The measured curves that [`ElementKind::MeasuredImpedance`] parts refer to.
    pub fn curves(&self) -> &[MeasuredCurve] {
        &self.curves
    }

    /// Finds a part's index by reference.
    pub fn element_index(&self, reference: &str) -> Option<usize> {
        self.elements.iter().position(|e| e.reference == reference)
    }

    /// A copy of the circuit with part `index` changed to `kind` (same nodes), validated again.
    ///
    /// # Errors
    /// The new value is validated like any other, see [`CircuitError`].
    ///
    /// # Panics
    /// If `index` is out of range.
    pub fn with_kind(&self, index: usize, kind: ElementKind) -> Result<Circuit, CircuitError> {
        let element = &self.elements[index];
        validate_values(&element.reference, &kind)?;
        check_curve(&element.reference, &kind, self.curves.len())?;
        let mut circuit = self.clone();
        circuit.elements[index].kind = kind;
        Ok(circuit)
    }
}

impl CircuitBuilder {
    /// An empty builder.
    pub fn new() -> Self {
        Self::default()
    }

    /// Adds a part between nodes `a` and `b` (by name). Problems are reported by [`Self::build`].
    pub fn add(&mut self, reference: &str, kind: ElementKind, a: &str, b: &str) -> &mut Self {
        if a.is_empty() || b.is_empty() {
            self.problems.push(CircuitError::EmptyNodeName { reference: reference.to_string() });
        }
        let nodes = (self.intern(a), self.intern(b));
        self.elements.push(Element { reference: reference.to_string(), kind, nodes });
        self
    }

    /// Adds a resistor of `ohms`.
    pub fn resistor(&mut self, reference: &str, a: &str, b: &str, ohms: f64) -> &mut Self {
        self.add(reference, ElementKind::Resistor { resistance: ohms }, a, b)
    }

    /// Adds an ideal capacitor of `farads`.
    pub fn capacitor(&mut self, reference: &str, a: &str, b: &str, farads: f64) -> &mut Self {
        self.add(reference, ElementKind::Capacitor { capacitance: farads, esr: 0.0 }, a, b)
    }

    /// Adds an ideal inductor of `henries`.
    pub fn inductor(&mut self, reference: &str, a: &str, b: &str, henries: f64) -> &mut Self {
        self.add(reference, ElementKind::Inductor { inductance: henries, dcr: 0.0 }, a, b)
    }

    /// Adds a measured impedance between `a` and `b`; the builder keeps `curve` and the part
    /// refers to it (see [`ElementKind::MeasuredImpedance`]).
    pub fn measured_impedance(&mut self, reference: &str, a: &str, b: &str, curve: MeasuredCurve) -> &mut Self {
        let index = self.curves.iter().position(|c| *c == curve).unwrap_or_else(|| {
            self.curves.push(curve);
            self.curves.len() - 1
        });
        self.add(reference, ElementKind::MeasuredImpedance { curve: index }, a, b)
    }

    /// Adds a Thevenin voltage source (EMF `volts` in series with `series_ohms`), positive at `a`.
    pub fn voltage_source(&mut self, reference: &str, a: &str, b: &str, volts: f64, series_ohms: f64) -> &mut Self {
        self.add(reference, ElementKind::VoltageSource { emf: volts, series_resistance: series_ohms }, a, b)
    }

    /// Adds a current source pushing `amperes` out of `a` into the network.
    pub fn current_source(&mut self, reference: &str, a: &str, b: &str, amperes: f64) -> &mut Self {
        self.add(reference, ElementKind::CurrentSource { current: amperes }, a, b)
    }

    /// Adds a voltage-controlled voltage source: V(a) − V(b) = gain · (V(control_pos) − V(control_neg)).
    pub fn vcvs(
        &mut self,
        reference: &str,
        a: &str,
        b: &str,
        control_pos: &str,
        control_neg: &str,
        gain: Gain,
    ) -> &mut Self {
        if control_pos.is_empty() || control_neg.is_empty() {
            self.problems.push(CircuitError::EmptyNodeName { reference: reference.to_string() });
        }
        let control = (self.intern(control_pos), self.intern(control_neg));
        self.add(reference, ElementKind::Vcvs { gain, control }, a, b)
    }

    /// Validates the parts and returns the circuit.
    ///
    /// # Errors
    /// The first problem found, as a [`CircuitError`] naming the offending part or node.
    pub fn build(&self) -> Result<Circuit, CircuitError> {
        if let Some(problem) = self.problems.first() {
            return Err(problem.clone());
        }
        if self.elements.is_empty() {
            return Err(CircuitError::Empty);
        }
        let mut seen = std::collections::HashSet::new();
        for element in &self.elements {
            if element.reference.trim().is_empty() {
                return Err(CircuitError::EmptyReference);
            }
            if !seen.insert(element.reference.as_str()) {
                return Err(CircuitError::DuplicateReference { reference: element.reference.clone() });
            }
            validate_values(&element.reference, &element.kind)?;
            check_curve(&element.reference, &element.kind, self.curves.len())?;
            if element.nodes.0 == element.nodes.1 {
                return Err(CircuitError::ShortedPart {
                    reference: element.reference.clone(),
                    node: self.node_label(element.nodes.0),
                });
            }
        }
        let mut node_names = vec!["0".to_string()];
        node_names.extend(self.node_names.iter().cloned());
        let circuit = Circuit { node_names, elements: self.elements.clone(), curves: self.curves.clone() };
        check_topology(&circuit)?;
        Ok(circuit)
    }

    fn node_label(&self, node: Node) -> String {
        if node.is_ground() {
            "0".to_string()
        } else {
            self.node_names[node.0 - 1].clone()
        }
    }

    fn intern(&mut self, name: &str) -> Node {
        if is_ground_name(name) {
            return Node::GROUND;
        }
        if let Some(&index) = self.node_index.get(name) {
            return Node(index + 1);
        }
        self.node_names.push(name.to_string());
        self.node_index.insert(name.to_string(), self.node_names.len() - 1);
        Node(self.node_names.len())
    }
}

/// Whether a node name means ground: `0` or `gnd` in any case.
pub fn is_ground_name(name: &str) -> bool {
    name == "0" || name.eq_ignore_ascii_case("gnd")
}

fn check_curve(reference: &str, kind: &ElementKind, n_curves: usize) -> Result<(), CircuitError> {
    match *kind {
        ElementKind::MeasuredImpedance { curve } if curve >= n_curves => {
            Err(CircuitError::UnknownCurve { reference: reference.to_string(), curve, n_curves })
        }
        _ => Ok(()),
    }
}

fn validate_values(reference: &str, kind: &ElementKind) -> Result<(), CircuitError> {
    const POSITIVE: &str = "a finite value > 0";
    const NON_NEGATIVE: &str = "a finite value ≥ 0";
    const NON_ZERO: &str = "a finite, non-zero value";
    let bad = |what, value, allowed| CircuitError::BadValue { reference: reference.to_string(), what, value, allowed };
    let positive =
        |what, value: f64| if value.is_finite() && value > 0.0 { Ok(()) } else { Err(bad(what, value, POSITIVE)) };
    let non_negative =
        |what, value: f64| if value.is_finite() && value >= 0.0 { Ok(()) } else { Err(bad(what, value, NON_NEGATIVE)) };
    let non_zero =
        |what, value: f64| if value.is_finite() && value != 0.0 { Ok(()) } else { Err(bad(what, value, NON_ZERO)) };
    match *kind {
        ElementKind::Resistor { resistance } => positive("resistance", resistance),
        ElementKind::Capacitor { capacitance, esr } => {
            positive("capacitance", capacitance)?;
            non_negative("series resistance (ESR)", esr)
        }
        ElementKind::Inductor { inductance, dcr } => {
            positive("inductance", inductance)?;
            non_negative("series resistance (DCR)", dcr)
        }
        ElementKind::VoltageSource { emf, series_resistance } => {
            non_zero("EMF", emf)?;
            non_negative("source resistance", series_resistance)
        }
        ElementKind::CurrentSource { current } => non_zero("current", current),
        ElementKind::Vcvs { gain: Gain::Constant(a), .. } => non_zero("gain", a),
        ElementKind::Vcvs { gain: Gain::SinglePole { dc_gain, pole_hz }, .. } => {
            non_zero("DC gain", dc_gain)?;
            positive("pole frequency", pole_hz)
        }
        ElementKind::MeasuredImpedance { .. } => Ok(()),
    }
}

/// A union-find over node indices.
struct DisjointSets {
    parent: Vec<usize>,
}

impl DisjointSets {
    fn new(n: usize) -> Self {
        Self { parent: (0..n).collect() }
    }

    fn find(&mut self, mut x: usize) -> usize {
        while self.parent[x] != x {
            self.parent[x] = self.parent[self.parent[x]];
            x = self.parent[x];
        }
        x
    }

    /// Joins the sets of `a` and `b`; returns false if they were already one set.
    fn union(&mut self, a: usize, b: usize) -> bool {
        let (ra, rb) = (self.find(a), self.find(b));
        if ra == rb {
            return false;
        }
        self.parent[ra] = rb;
        true
    }
}

fn check_topology(circuit: &Circuit) -> Result<(), CircuitError> {
    let n = circuit.n_nodes();
    let elements = &circuit.elements;

    // Control pins must be nodes that some part actually connects (they always are, since
    // every non-ground node was created by a part; a pin that only a VCVS senses is unknown).
    let mut connected = vec![false; n];
    connected[0] = true;
    for e in elements {
        connected[e.nodes.0 .0] = true;
        connected[e.nodes.1 .0] = true;
    }
    for e in elements {
        if let ElementKind::Vcvs { control, .. } = e.kind {
            for pin in [control.0, control.1] {
                if !connected[pin.0] {
                    return Err(CircuitError::UnknownNode {
                        name: circuit.node_names[pin.0].clone(),
                        used_by: format!("controlled source {}", e.reference),
                    });
                }
            }
        }
    }

    // Islands: every part's terminals must reach ground (control pins of a VCVS only sense).
    let mut all = DisjointSets::new(n);
    for e in elements {
        all.union(e.nodes.0 .0, e.nodes.1 .0);
    }
    let ground_root = all.find(0);
    let island_nodes: Vec<usize> = (1..n).filter(|&i| all.find(i) != ground_root).collect();
    if !island_nodes.is_empty() {
        // Report the first island only, completely.
        let root = all.find(island_nodes[0]);
        let nodes: Vec<usize> = island_nodes.iter().copied().filter(|&i| all.find(i) == root).collect();
        let references =
            elements.iter().filter(|e| all.find(e.nodes.0 .0) == root).map(|e| e.reference.clone()).collect();
        return Err(CircuitError::Island {
            references,
            nodes: nodes.iter().map(|&i| circuit.node_names[i].clone()).collect(),
        });
    }
    // Loops of ideal voltage-defined branches.
    let mut voltage = DisjointSets::new(n);
    for e in elements.iter().filter(|e| e.kind.is_ideal_voltage_branch()) {
        if !voltage.union(e.nodes.0 .0, e.nodes.1 .0) {
            return Err(CircuitError::VoltageLoop { reference: e.reference.clone() });
        }
    }

    // Cutsets of current sources: without them, every node must still reach ground.
    let mut passive = DisjointSets::new(n);
    for e in elements.iter().filter(|e| !matches!(e.kind, ElementKind::CurrentSource { .. })) {
        passive.union(e.nodes.0 .0, e.nodes.1 .0);
    }
    let ground_root = passive.find(0);
    let cut: Vec<String> =
        (1..n).filter(|&i| passive.find(i) != ground_root).map(|i| circuit.node_names[i].clone()).collect();
    if !cut.is_empty() {
        return Err(CircuitError::CurrentCutset { nodes: cut });
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn rc() -> CircuitBuilder {
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 50.0)
            .resistor("R1", "in", "out", 1e3)
            .capacitor("C1", "out", "gnd", 1e-9);
        b
    }

    fn expect_error(builder: &CircuitBuilder, expected_text: &str) {
        let error = builder.build().expect_err("circuit should be rejected");
        let text = error.to_string();
        assert!(text.contains(expected_text), "message {text:?} lacks {expected_text:?}");
    }

    #[test]
    fn valid_rc_builds_with_named_nodes() {
        let circuit = rc().build().unwrap();
        assert_eq!(circuit.node_names(), ["0", "in", "out"]);
        assert_eq!(circuit.node("GND"), Some(Node::GROUND));
        assert_eq!(circuit.node("out"), Some(Node(2)));
        assert_eq!(circuit.node("nowhere"), None);
    }

    #[test]
    fn duplicate_reference_is_named() {
        let mut b = rc();
        b.resistor("R1", "out", "0", 10.0);
        expect_error(&b, "reference R1 is used twice");
    }

    #[test]
    fn bad_values_are_named_with_the_value() {
        for (value, shown) in [(0.0, "0"), (-5.0, "-5"), (f64::NAN, "NaN"), (f64::INFINITY, "inf")] {
            let mut b = rc();
            b.resistor("R9", "out", "0", value);
            expect_error(&b, &format!("part R9 has resistance {shown}"));
        }
        let mut b = rc();
        b.add("C9", ElementKind::Capacitor { capacitance: 1e-9, esr: -1.0 }, "out", "0");
        expect_error(&b, "ESR");
    }

    #[test]
    fn island_names_its_parts_and_nodes() {
        let mut b = rc();
        b.resistor("R7", "x", "y", 10.0).capacitor("C7", "y", "x", 1e-9);
        expect_error(&b, "parts R7, C7 (nodes x, y)");
    }

    #[test]
    fn loop_of_ideal_sources_is_rejected() {
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "a", "0", 1.0, 0.0)
            .voltage_source("V2", "a", "0", 2.0, 0.0)
            .resistor("R1", "a", "0", 1.0);
        expect_error(&b, "V2 closes a loop");
        // With a series resistance the same pair is fine.
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "a", "0", 1.0, 0.0)
            .voltage_source("V2", "a", "0", 2.0, 1.0)
            .resistor("R1", "a", "0", 1.0);
        assert!(b.build().is_ok());
    }

    #[test]
    fn current_source_cutset_is_rejected() {
        let mut b = CircuitBuilder::new();
        b.current_source("I1", "a", "0", 1e-3).capacitor("C1", "a", "b", 1e-9).current_source("I2", "b", "0", 1e-3);
        // a-b are joined by C1, but reach ground only through current sources.
        expect_error(&b, "nodes a, b are fed only through current sources");
    }

    #[test]
    fn series_capacitors_node_is_accepted() {
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0)
            .capacitor("C1", "in", "mid", 1e-9)
            .capacitor("C2", "mid", "0", 1e-9);
        assert!(b.build().is_ok());
    }

    #[test]
    fn shorted_part_is_rejected() {
        let mut b = rc();
        b.resistor("R5", "out", "out", 1.0);
        expect_error(&b, "R5 has both terminals on node out");
    }

    #[test]
    fn vcvs_sensing_an_unconnected_node_is_rejected() {
        let mut b = rc();
        b.vcvs("E1", "amp", "0", "nowhere", "0", Gain::Constant(2.0)).resistor("R2", "amp", "0", 1e3);
        expect_error(&b, "controlled source E1 names node nowhere");
    }

    #[test]
    fn measured_impedance_needs_its_curve() {
        let curve = MeasuredCurve::new(&[10.0, 100.0], &[8.0, 9.0], &[0.0, 10.0]).unwrap();
        let mut b = rc();
        b.measured_impedance("Z1", "out", "0", curve.clone()).measured_impedance("Z2", "in", "0", curve);
        let circuit = b.build().unwrap();
        assert_eq!(circuit.curves().len(), 1, "one curve shared by both parts");
        let error = circuit.with_kind(3, ElementKind::MeasuredImpedance { curve: 5 }).unwrap_err();
        assert!(error.to_string().contains("names measured curve 5, but the circuit holds 1"), "{error}");
        let bad = MeasuredCurve::new(&[10.0, 10.0], &[8.0, 9.0], &[0.0, 10.0]).unwrap_err();
        assert!(bad.to_string().contains("point 2 has frequency 10 Hz, not above"), "{bad}");
    }

    #[test]
    fn single_pole_gain_and_derivative() {
        let gain = Gain::SinglePole { dc_gain: 1e5, pole_hz: 10.0 };
        let omega = 2.0 * std::f64::consts::PI * 1e3;
        let (a, da) = gain.at(omega);
        // |A| = A0 / sqrt(1 + (f/fp)²) with f/fp = 100.
        let expected = 1e5 / (1.0f64 + 100.0 * 100.0).sqrt();
        assert!((a.norm() - expected).abs() / expected < 1e-12);
        let h = 1e-3;
        let numeric = (gain.at(omega + h).0 - gain.at(omega - h).0) / (2.0 * h);
        assert!((numeric - da).norm() / da.norm() < 1e-6);
    }
}
