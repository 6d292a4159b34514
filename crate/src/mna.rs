//! Modified nodal analysis (MNA) at s = jω, with the exact frequency derivative of the solution.
//!
//! Formulation (Ho, Ruehli & Brennan, "The modified nodal approach to network analysis", IEEE
//! Trans. Circuits and Systems 22(6), 1975): unknowns are the voltages of the non-ground nodes plus
//! one branch current for each inductor, voltage source and controlled-source output. A Thevenin
//! source keeps its series resistance inside its branch equation V(a) − V(b) − R_s·I = EMF, so
//! the current it delivers is a solution variable, not a difference of nearly equal voltages. Inductors use a branch current, so a circuit with inductors stays solvable at
//! 0 Hz (an inductor is then a short, not an infinite admittance).
//!
//! Each frequency gives Y(ω)·x = b. The group delay needs dx/dω, which follows exactly from
//! differentiating the system: (dY/dω)·x + Y·(dx/dω) = 0, since b does not depend on ω. The
//! derivative system reuses the LU factors of Y, so the exact derivative costs one extra pair of
//! triangular solves.
//!
//! The unknowns are ordered once per circuit by reverse Cuthill–McKee (Cuthill & McKee, "Reducing
//! the bandwidth of sparse symmetric matrices", ACM 1969) on the matrix pattern, which keeps a
//! ladder banded so that the zero-skipping LU in `lu` does little more than O(n) work.
//!
//! A measured impedance is stamped like an inductor, through its branch current, with the
//! branch equation V(a) − V(b) − Z(ω)·I = 0 and Z(ω) read from its curve; outside the curve's
//! range the frequency is refused ([`SolveError::OutsideCurve`]).
//!
//! Transfer-function convention: H = (V(out+) − V(out−)) / (stimulus amplitude), with every other
//! independent source set to zero (voltage sources shorted, current sources opened). Element
//! voltages, currents and powers are computed with the stimulus at its own amplitude, as rms
//! phasors; complex power S = V·I* is the power the element absorbs (P = Re S, Q = Im S).

use crate::circuit::{Circuit, CircuitError, ElementKind, Node};
use crate::lu::Lu;
use num_complex::Complex64;
use std::fmt;

/// Which source drives the circuit and where the response is taken.
#[derive(Debug, Clone, PartialEq)]
pub struct Probe {
    /// Index of the driving independent source in [`Circuit::elements`].
    pub stimulus: usize,
    /// The output node pair (positive, negative).
    pub output: (Node, Node),
}

/// How much to compute at each frequency.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Detail {
    /// Transfer function, its derivative and the input impedance only.
    Transfer,
    /// Also every node voltage and every element's voltage, current and power.
    Full,
}

/// The solution at one frequency.
#[derive(Debug, Clone, PartialEq)]
pub struct Solution {
    /// Frequency in Hz.
    pub f_hz: f64,
    /// H(jω) = V(out) / stimulus amplitude (dimensionless for a voltage stimulus, Ω for a current
    /// stimulus).
    pub transfer: Complex64,
    /// dH/dω in 1/(rad/s) (times the unit of H), exact.
    pub transfer_derivative: Complex64,
    /// The impedance seen by the stimulus at its terminals, past its own series resistance.
    /// `None` where the network draws no current (an open circuit at this frequency).
    pub input_impedance: Option<Complex64>,
    /// Node voltages, ground first (V), when [`Detail::Full`] was asked for.
    pub node_voltages: Vec<Complex64>,
    /// Per-element state in element order, when [`Detail::Full`] was asked for.
    pub elements: Vec<ElementState>,
}

/// The voltage, current and power of one element (rms phasors, passive sign convention).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ElementState {
    /// V(a) − V(b) in V.
    pub voltage: Complex64,
    /// Current from a through the element to b, in A.
    pub current: Complex64,
    /// Complex power absorbed, V·I*, in VA: real part W, imaginary part var.
    pub power: Complex64,
}

/// Linear read-outs of the solution vector x (in the solver's unknown order).
#[derive(Debug, Clone, PartialEq)]
pub struct Functionals {
    /// H = output · x.
    pub output: Vec<f64>,
    /// V at the stimulus terminals = port_voltage · x.
    pub port_voltage: Vec<f64>,
    /// Current delivered by the stimulus = port_current · x + port_current_offset.
    pub port_current: Vec<f64>,
    /// The constant part of the delivered current, in A.
    pub port_current_offset: f64,
}

impl Functionals {
    /// The same read-outs over `n` unknowns (zeros for the internal unknowns of a [`Pencil`]).
    ///
    /// # Panics
    /// If `n` is smaller than the read-outs' length.
    pub fn padded(mut self, n: usize) -> Functionals {
        assert!(n >= self.output.len(), "cannot pad read-outs to fewer unknowns");
        for r in [&mut self.output, &mut self.port_voltage, &mut self.port_current] {
            r.resize(n, 0.0);
        }
        self
    }
}

/// Why a frequency could not be solved.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum SolveError {
    /// The frequency is negative or not finite.
    BadFrequency {
        /// The offending frequency in Hz.
        f_hz: f64,
    },
    /// The MNA matrix is singular at this frequency, e.g. a node floating at 0 Hz.
    Singular {
        /// The frequency in Hz.
        f_hz: f64,
    },
    /// The frequency lies outside the range of a measured impedance's curve.
    OutsideCurve {
        /// The frequency in Hz.
        f_hz: f64,
        /// The curve's lowest frequency in Hz.
        low_hz: f64,
        /// The curve's highest frequency in Hz.
        high_hz: f64,
    },
}

/// A circuit compiled for repeated AC solution: stamps, ordering and reusable buffers.
#[derive(Debug, Clone)]
pub struct AcSystem {
    circuit: Circuit,
    probe: Probe,
    n_unknowns: usize,
    /// Position of each node's voltage in the unknown vector (None for ground).
    node_slot: Vec<Option<usize>>,
    /// Position of each element's branch current, if it has one.
    branch_slot: Vec<Option<usize>>,
    stamps: Vec<Stamp>,
    /// The distinct stamp values, evaluated once per frequency into `values_at`.
    values: Vec<StampValue>,
    values_at: Vec<(Complex64, Complex64)>,
    /// Entries with a non-zero frequency derivative: (row, col, sign, value index).
    derivative_entries: Vec<(usize, usize, f64, usize)>,
    lower: usize,
    upper: usize,
    rhs: Vec<(usize, Complex64)>,
    x: Vec<Complex64>,
    dx: Vec<Complex64>,
    lu: Lu,
}

/// A circuit as a real matrix pencil G + s·C with right-hand side b (see [`AcSystem::pencil`]).
#[derive(Debug, Clone, PartialEq)]
pub struct Pencil {
    /// The number of unknowns, at least [`AcSystem::n_unknowns`].
    pub n: usize,
    /// The number of leading unknowns shared with the AC solution ([`AcSystem::n_unknowns`]).
    pub n_base: usize,
    /// G, n×n row-major (conductances and the constant parts of the branch equations).
    pub g: Vec<f64>,
    /// C, n×n row-major (capacitances, inductances and pole time constants).
    pub c: Vec<f64>,
    /// The right-hand side for the stimulus at its stated amplitude.
    pub b: Vec<Complex64>,
}

#[derive(Debug, Clone, Copy)]
struct Stamp {
    row: usize,
    col: usize,
    sign: f64,
    /// Index into `AcSystem::values`.
    value: usize,
}

#[derive(Debug, Clone, Copy, PartialEq)]
enum StampValue {
    /// A constant entry.
    Real(f64),
    /// Capacitor admittance jωC/(1 + jωC·ESR).
    Capacitor { capacitance: f64, esr: f64 },
    /// Inductor branch impedance −(R + jωL) on its own diagonal.
    InductorBranch { inductance: f64, dcr: f64 },
    /// −A(jω) for a controlled source's sensing column.
    Gain(crate::circuit::Gain),
    /// Measured impedance branch −Z(ω) on its own diagonal (index into the circuit's curves).
    MeasuredBranch { curve: usize },
}

impl fmt::Display for SolveError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::BadFrequency { f_hz } => {
                write!(f, "frequency {f_hz} Hz cannot be solved; use a finite frequency ≥ 0")
            }
            Self::Singular { f_hz } => write!(
                f,
                "the circuit has no unique solution at {f_hz} Hz (for example a node that floats at this frequency); skip this frequency or add a path to ground"
            ),
            Self::OutsideCurve { f_hz, low_hz, high_hz } => write!(
                f,
                "{f_hz} Hz is outside the measured impedance curve ({low_hz} Hz to {high_hz} Hz); sweep inside that range or measure a wider one"
            ),
        }
    }
}

impl std::error::Error for SolveError {}

impl Probe {
    /// A probe driven by the source `stimulus` with the output between `output_pos` and
    /// `output_neg` (use `"0"` for ground).
    ///
    /// # Errors
    /// [`CircuitError::UnknownNode`] for an output node that does not exist or an output across
    /// one node, and [`CircuitError::UnknownNode`]-style messages for a stimulus that is not a
    /// source of the circuit.
    pub fn new(circuit: &Circuit, stimulus: &str, output_pos: &str, output_neg: &str) -> Result<Self, CircuitError> {
        let index = circuit.element_index(stimulus).ok_or_else(|| CircuitError::UnknownNode {
            name: stimulus.to_string(),
            used_by: "the probe's stimulus (a source reference)".to_string(),
        })?;
        if !circuit.elements()[index].kind.is_source() {
            return Err(CircuitError::UnknownNode {
                name: stimulus.to_string(),
                used_by: "the probe's stimulus, which must be a voltage or current source,".to_string(),
            });
        }
        let node = |name: &str| {
            circuit
                .node(name)
                .ok_or_else(|| CircuitError::UnknownNode { name: name.to_string(), used_by: "the output".to_string() })
        };
        let output = (node(output_pos)?, node(output_neg)?);
        if output.0 == output.1 {
            return Err(CircuitError::UnknownNode {
                name: output_pos.to_string(),
                used_by: "the output (both of its terminals are one node)".to_string(),
            });
        }
        Ok(Self { stimulus: index, output })
    }
}

impl ElementState {
    fn new(voltage: Complex64, current: Complex64) -> Self {
        Self { voltage, current, power: voltage * current.conj() }
    }
}

impl AcSystem {
    /// Compiles `circuit` for AC solution with `probe`.
    ///
    /// # Panics
    /// If `probe` was made for another circuit (its indices are out of range).
    pub fn new(circuit: &Circuit, probe: &Probe) -> Self {
        assert!(probe.stimulus < circuit.elements().len(), "probe does not belong to this circuit");
        assert!(probe.output.0.index() < circuit.n_nodes() && probe.output.1.index() < circuit.n_nodes());
        let n_nodes = circuit.n_nodes();
        // Provisional numbering: nodes 1.. then branches in element order.
        let mut provisional_branch = vec![None; circuit.elements().len()];
        let mut next = n_nodes - 1;
        for (index, element) in circuit.elements().iter().enumerate() {
            if has_branch(&element.kind) {
                provisional_branch[index] = Some(next);
                next += 1;
            }
        }
        let n_unknowns = next;
        let node_provisional = |node: Node| if node.is_ground() { None } else { Some(node.index() - 1) };

        let mut stamps = Vec::new();
        let mut values: Vec<StampValue> = Vec::new();
        let mut rhs = Vec::new();
        let mut push = |row: Option<usize>, col: Option<usize>, sign: f64, value: StampValue| {
            if let (Some(row), Some(col)) = (row, col) {
                let index = values.iter().position(|v| *v == value).unwrap_or_else(|| {
                    values.push(value);
                    values.len() - 1
                });
                stamps.push(Stamp { row, col, sign, value: index });
            }
        };
        for (index, element) in circuit.elements().iter().enumerate() {
            let a = node_provisional(element.nodes.0);
            let b = node_provisional(element.nodes.1);
            let is_stimulus = index == probe.stimulus;
            let admittance =
                |value: StampValue, push: &mut dyn FnMut(Option<usize>, Option<usize>, f64, StampValue)| {
                    push(a, a, 1.0, value);
                    push(b, b, 1.0, value);
                    push(a, b, -1.0, value);
                    push(b, a, -1.0, value);
                };
            let incidence = |k: usize, push: &mut dyn FnMut(Option<usize>, Option<usize>, f64, StampValue)| {
                push(a, Some(k), 1.0, StampValue::Real(1.0));
                push(b, Some(k), -1.0, StampValue::Real(1.0));
                push(Some(k), a, 1.0, StampValue::Real(1.0));
                push(Some(k), b, -1.0, StampValue::Real(1.0));
            };
            match element.kind {
                ElementKind::Resistor { resistance } => admittance(StampValue::Real(1.0 / resistance), &mut push),
                ElementKind::Capacitor { capacitance, esr } => {
                    admittance(StampValue::Capacitor { capacitance, esr }, &mut push)
                }
                ElementKind::Inductor { inductance, dcr } => {
                    let k = provisional_branch[index].expect("inductor has a branch");
                    incidence(k, &mut push);
                    push(Some(k), Some(k), 1.0, StampValue::InductorBranch { inductance, dcr });
                }
                ElementKind::VoltageSource { emf, series_resistance } => {
                    // Branch equation V(a) − V(b) − R_s·I = EMF. A branch current (rather than a
                    // Norton equivalent) keeps the delivered current exact when |Z_in| ≫ R_s.
                    let k = provisional_branch[index].expect("voltage source has a branch");
                    incidence(k, &mut push);
                    if series_resistance > 0.0 {
                        push(Some(k), Some(k), 1.0, StampValue::Real(-series_resistance));
                    }
                    if is_stimulus {
                        rhs.push((k, Complex64::new(emf, 0.0)));
                    }
                }
                ElementKind::CurrentSource { current } => {
                    if is_stimulus {
                        if let Some(a) = a {
                            rhs.push((a, Complex64::new(current, 0.0)));
                        }
                        if let Some(b) = b {
                            rhs.push((b, Complex64::new(-current, 0.0)));
                        }
                    }
                }
                ElementKind::Vcvs { gain, control } => {
                    let k = provisional_branch[index].expect("controlled source has a branch");
                    incidence(k, &mut push);
                    push(Some(k), node_provisional(control.0), -1.0, StampValue::Gain(gain));
                    push(Some(k), node_provisional(control.1), 1.0, StampValue::Gain(gain));
                }
                ElementKind::MeasuredImpedance { curve } => {
                    let k = provisional_branch[index].expect("measured impedance has a branch");
                    incidence(k, &mut push);
                    push(Some(k), Some(k), 1.0, StampValue::MeasuredBranch { curve });
                }
            }
        }

        // Reverse Cuthill–McKee on the symmetric pattern, then renumber.
        let order = reverse_cuthill_mckee(n_unknowns, stamps.iter().map(|s| (s.row, s.col)));
        let mut position = vec![0; n_unknowns];
        for (new, &old) in order.iter().enumerate() {
            position[old] = new;
        }
        for stamp in &mut stamps {
            stamp.row = position[stamp.row];
            stamp.col = position[stamp.col];
        }
        for entry in &mut rhs {
            entry.0 = position[entry.0];
        }
        let node_slot = (0..n_nodes).map(|i| if i == 0 { None } else { Some(position[i - 1]) }).collect();
        let branch_slot = provisional_branch.iter().map(|slot| slot.map(|k| position[k])).collect();
        let lower = stamps.iter().map(|s| s.row.saturating_sub(s.col)).max().unwrap_or(0);
        let upper = stamps.iter().map(|s| s.col.saturating_sub(s.row)).max().unwrap_or(0);
        let derivative_entries = stamps
            .iter()
            .filter(|s| !matches!(values[s.value], StampValue::Real(_)))
            .map(|s| (s.row, s.col, s.sign, s.value))
            .collect();
        let values_at = vec![(Complex64::new(0.0, 0.0), Complex64::new(0.0, 0.0)); values.len()];

        Self {
            circuit: circuit.clone(),
            probe: probe.clone(),
            n_unknowns,
            node_slot,
            branch_slot,
            stamps,
            values,
            values_at,
            derivative_entries,
            lower,
            upper,
            rhs,
            x: vec![Complex64::new(0.0, 0.0); n_unknowns],
            dx: vec![Complex64::new(0.0, 0.0); n_unknowns],
            lu: Lu::new(),
        }
    }

    /// The circuit this system was compiled from.
    pub fn circuit(&self) -> &Circuit {
        &self.circuit
    }

    /// The probe this system was compiled with.
    pub fn probe(&self) -> &Probe {
        &self.probe
    }

    /// The number of MNA unknowns (node voltages plus branch currents).
    pub fn n_unknowns(&self) -> usize {
        self.n_unknowns
    }

    /// The (lower, upper) bandwidth of the MNA matrix in the solver's unknown order.
    pub fn bandwidth(&self) -> (usize, usize) {
        (self.lower, self.upper)
    }

    /// The MNA matrix Y(ω) (row-major), its derivative dY/dω and the right-hand side b, in the
    /// solver's unknown order. For independent checks and benchmarks. A measured impedance is
    /// read at the nearest end of its curve outside the curve's range.
    pub fn matrices_at(&self, omega: f64) -> (Vec<Complex64>, Vec<Complex64>, Vec<Complex64>) {
        let n = self.n_unknowns;
        let mut y = vec![Complex64::new(0.0, 0.0); n * n];
        let mut dy = y.clone();
        let f_hz = omega / (2.0 * std::f64::consts::PI);
        for stamp in &self.stamps {
            let (value, derivative) = match self.values[stamp.value] {
                StampValue::MeasuredBranch { curve } => {
                    let (z, dz) = self.circuit.curves()[curve].value_clamped(f_hz);
                    (-z, -dz)
                }
                value => value.at(omega),
            };
            y[stamp.row * n + stamp.col] += stamp.sign * value;
            dy[stamp.row * n + stamp.col] += stamp.sign * derivative;
        }
        let mut b = vec![Complex64::new(0.0, 0.0); n];
        for &(row, value) in &self.rhs {
            b[row] += value;
        }
        (y, dy, b)
    }

    /// The system as a real matrix pencil Y(s) = G + s·C (a descriptor system C·x′ + G·x = b·u in
    /// the time domain), when every part is rational in s; `None` otherwise (a circuit with a
    /// measured impedance).
    ///
    /// The first [`AcSystem::n_unknowns`] unknowns are those of the AC solution. Parts that are
    /// rational but not polynomial in s get internal unknowns after them, so that the pencil stays
    /// exact:
    /// - a capacitor with ESR r gets its branch current i and its plate voltage v:
    ///   V(a) − V(b) − r·i − v = 0 and C·v′ − i = 0 (a series r and ideal C; Ohm's and the
    ///   capacitor law, no approximation);
    /// - a single-pole gain A0/(1 + s/ωp) gets the state w of its pole:
    ///   w + w′/ωp − A0·(V(c+) − V(c−)) = 0, and its branch equation becomes V(a) − V(b) − w = 0.
    ///
    /// Read-outs from [`AcSystem::functionals`] apply to the leading unknowns; pad them with zeros
    /// to [`Pencil::n`].
    pub fn pencil(&self) -> Option<Pencil> {
        let n_base = self.n_unknowns;
        if self.circuit.elements().iter().any(|e| matches!(e.kind, ElementKind::MeasuredImpedance { .. })) {
            return None;
        }
        // Internal unknowns, in element order.
        let mut internal = vec![None; self.circuit.elements().len()];
        let mut n = n_base;
        for (index, element) in self.circuit.elements().iter().enumerate() {
            match element.kind {
                ElementKind::Capacitor { esr, .. } if esr > 0.0 => {
                    internal[index] = Some(n);
                    n += 2;
                }
                ElementKind::Vcvs { gain: crate::circuit::Gain::SinglePole { .. }, .. } => {
                    internal[index] = Some(n);
                    n += 1;
                }
                _ => {}
            }
        }
        let (mut g, mut c) = (vec![0.0; n * n], vec![0.0; n * n]);
        for stamp in &self.stamps {
            let at = stamp.row * n + stamp.col;
            match self.values[stamp.value] {
                StampValue::Real(value) => g[at] += stamp.sign * value,
                StampValue::Capacitor { capacitance, esr: 0.0 } => c[at] += stamp.sign * capacitance,
                StampValue::InductorBranch { inductance, dcr } => {
                    g[at] -= stamp.sign * dcr;
                    c[at] -= stamp.sign * inductance;
                }
                StampValue::Gain(crate::circuit::Gain::Constant(a)) => g[at] += stamp.sign * a,
                // Stamped below through their internal unknowns.
                StampValue::Capacitor { .. } | StampValue::Gain(crate::circuit::Gain::SinglePole { .. }) => {}
                StampValue::MeasuredBranch { .. } => unreachable!("a circuit with a measured impedance has no pencil"),
            }
        }
        let slot = |node: Node| self.node_slot[node.index()];
        for (index, element) in self.circuit.elements().iter().enumerate() {
            let Some(k) = internal[index] else { continue };
            let (a, b) = (slot(element.nodes.0), slot(element.nodes.1));
            match element.kind {
                ElementKind::Capacitor { capacitance, esr } => {
                    let (i, v) = (k, k + 1);
                    if let Some(a) = a {
                        g[a * n + i] += 1.0;
                        g[i * n + a] += 1.0;
                    }
                    if let Some(b) = b {
                        g[b * n + i] -= 1.0;
                        g[i * n + b] -= 1.0;
                    }
                    g[i * n + i] -= esr;
                    g[i * n + v] -= 1.0;
                    c[v * n + v] += capacitance;
                    g[v * n + i] -= 1.0;
                }
                ElementKind::Vcvs { gain: crate::circuit::Gain::SinglePole { dc_gain, pole_hz }, control } => {
                    let w = k;
                    let branch = self.branch_slot[index].expect("controlled source has a branch");
                    g[branch * n + w] -= 1.0;
                    g[w * n + w] += 1.0;
                    c[w * n + w] += 1.0 / (2.0 * std::f64::consts::PI * pole_hz);
                    if let Some(p) = slot(control.0) {
                        g[w * n + p] -= dc_gain;
                    }
                    if let Some(m) = slot(control.1) {
                        g[w * n + m] += dc_gain;
                    }
                }
                _ => unreachable!("only ESR capacitors and single-pole gains have internal unknowns"),
            }
        }
        let mut b = vec![Complex64::new(0.0, 0.0); n];
        for &(row, value) in &self.rhs {
            b[row] += value;
        }
        Some(Pencil { n, n_base, g, c, b })
    }

    /// The read-outs of the transfer function and the stimulus port from the solution vector.
    pub fn functionals(&self) -> Functionals {
        let n = self.n_unknowns;
        let stimulus = &self.circuit.elements()[self.probe.stimulus];
        let amplitude = stimulus.kind.primary_value();
        let mut output = vec![0.0; n];
        let (pos, neg) = self.probe.output;
        if let Some(k) = self.node_slot[pos.index()] {
            output[k] += 1.0 / amplitude;
        }
        if let Some(k) = self.node_slot[neg.index()] {
            output[k] -= 1.0 / amplitude;
        }
        let mut port_voltage = vec![0.0; n];
        let (a, b) = (self.node_slot[stimulus.nodes.0.index()], self.node_slot[stimulus.nodes.1.index()]);
        if let Some(k) = a {
            port_voltage[k] += 1.0;
        }
        if let Some(k) = b {
            port_voltage[k] -= 1.0;
        }
        let mut port_current = vec![0.0; n];
        let mut port_current_offset = 0.0;
        match stimulus.kind {
            ElementKind::VoltageSource { .. } => {
                let k = self.branch_slot[self.probe.stimulus].expect("voltage source has a branch");
                port_current[k] = -1.0;
            }
            ElementKind::CurrentSource { current } => port_current_offset = current,
            _ => unreachable!("the probe's stimulus is a source"),
        }
        Functionals { output, port_voltage, port_current, port_current_offset }
    }

    /// Where node `node`'s voltage sits in the unknown vector (None for ground).
    pub fn node_slot(&self, node: Node) -> Option<usize> {
        self.node_slot[node.index()]
    }

    /// Solves the circuit at `f_hz`.
    ///
    /// # Errors
    /// [`SolveError::BadFrequency`] for a negative or non-finite frequency and
    /// [`SolveError::Singular`] where the system has no unique solution.
    pub fn solve_at(&mut self, f_hz: f64, detail: Detail) -> Result<Solution, SolveError> {
        if !(f_hz.is_finite() && f_hz >= 0.0) {
            return Err(SolveError::BadFrequency { f_hz });
        }
        let omega = 2.0 * std::f64::consts::PI * f_hz;
        let n = self.n_unknowns;
        let zero = Complex64::new(0.0, 0.0);
        for (slot, value) in self.values_at.iter_mut().zip(&self.values) {
            *slot = match *value {
                StampValue::MeasuredBranch { curve } => {
                    let curve = &self.circuit.curves()[curve];
                    let (z, dz) = curve.value_and_derivative_at(f_hz).ok_or_else(|| {
                        let (low_hz, high_hz) = curve.range_hz();
                        SolveError::OutsideCurve { f_hz, low_hz, high_hz }
                    })?;
                    (-z, -dz)
                }
                value => value.at(omega),
            };
        }
        let matrix = self.lu.assemble(n, self.lower, self.upper);
        for stamp in &self.stamps {
            matrix[stamp.row * n + stamp.col] += stamp.sign * self.values_at[stamp.value].0;
        }
        if self.lu.factor_assembled().is_err() {
            return Err(SolveError::Singular { f_hz });
        }
        self.x.iter_mut().for_each(|z| *z = zero);
        for &(row, value) in &self.rhs {
            self.x[row] += value;
        }
        self.lu.solve_in_place(&mut self.x);
        // dx/dω = −Y⁻¹ (dY/dω) x
        self.dx.iter_mut().for_each(|z| *z = zero);
        for &(row, col, sign, value) in &self.derivative_entries {
            self.dx[row] -= sign * self.values_at[value].1 * self.x[col];
        }
        self.lu.solve_in_place(&mut self.dx);
        if self.x.iter().chain(&self.dx).any(|z| !(z.re.is_finite() && z.im.is_finite())) {
            return Err(SolveError::Singular { f_hz });
        }

        let stimulus = &self.circuit.elements()[self.probe.stimulus];
        let amplitude = stimulus.kind.primary_value();
        let voltage = |x: &[Complex64], slot: &[Option<usize>], node: Node| slot[node.index()].map_or(zero, |k| x[k]);
        let (pos, neg) = self.probe.output;
        let v_out = voltage(&self.x, &self.node_slot, pos) - voltage(&self.x, &self.node_slot, neg);
        let dv_out = voltage(&self.dx, &self.node_slot, pos) - voltage(&self.dx, &self.node_slot, neg);
        let transfer = v_out / amplitude;
        let transfer_derivative = dv_out / amplitude;

        let stimulus_state = self.element_state(self.probe.stimulus, omega);
        // The stimulus delivers −I (passive convention) at its terminals. When the network's
        // impedance is much larger than the source resistance, the branch current comes out of
        // the solve as a small difference (EMF − V)/R_s in disguise; the sum of the currents the
        // other parts draw from the source's node (KCL) keeps full relative accuracy there.
        let mut delivered = -stimulus_state.current;
        if let ElementKind::VoltageSource { series_resistance, .. } = stimulus.kind {
            if stimulus_state.voltage.norm() > series_resistance * delivered.norm() {
                if let Some(kcl) = self.current_drawn_from(stimulus.nodes.0, self.probe.stimulus, omega) {
                    delivered = kcl;
                }
            }
        }
        let input_impedance = if delivered.norm() > 0.0 {
            let z = stimulus_state.voltage / delivered;
            (z.re.is_finite() && z.im.is_finite()).then_some(z)
        } else {
            None
        };

        let (node_voltages, elements) = match detail {
            Detail::Transfer => (Vec::new(), Vec::new()),
            Detail::Full => {
                let nodes =
                    (0..self.circuit.n_nodes()).map(|i| self.node_slot[i].map_or(zero, |k| self.x[k])).collect();
                let elements = (0..self.circuit.elements().len()).map(|i| self.element_state(i, omega)).collect();
                (nodes, elements)
            }
        };
        Ok(Solution { f_hz, transfer, transfer_derivative, input_impedance, node_voltages, elements })
    }

    /// The current that the parts other than `except` draw out of `node` (KCL), or `None` for
    /// ground.
    fn current_drawn_from(&self, node: Node, except: usize, omega: f64) -> Option<Complex64> {
        if node.is_ground() {
            return None;
        }
        let mut total = Complex64::new(0.0, 0.0);
        for (index, element) in self.circuit.elements().iter().enumerate() {
            if index == except {
                continue;
            }
            if element.nodes.0 == node {
                total += self.element_state(index, omega).current;
            } else if element.nodes.1 == node {
                total -= self.element_state(index, omega).current;
            }
        }
        Some(total)
    }

    /// The state of element `index` from the current solution vector.
    fn element_state(&self, index: usize, omega: f64) -> ElementState {
        let zero = Complex64::new(0.0, 0.0);
        let element = &self.circuit.elements()[index];
        let v = |node: Node| self.node_slot[node.index()].map_or(zero, |k| self.x[k]);
        let voltage = v(element.nodes.0) - v(element.nodes.1);
        let branch = || self.branch_slot[index].map_or(zero, |k| self.x[k]);
        let is_stimulus = index == self.probe.stimulus;
        let current = match element.kind {
            ElementKind::Resistor { resistance } => voltage / resistance,
            ElementKind::Capacitor { capacitance, esr } => {
                voltage * StampValue::Capacitor { capacitance, esr }.at(omega).0
            }
            ElementKind::Inductor { .. } | ElementKind::Vcvs { .. } | ElementKind::MeasuredImpedance { .. } => branch(),
            ElementKind::VoltageSource { .. } => branch(),
            ElementKind::CurrentSource { current } => Complex64::new(if is_stimulus { -current } else { 0.0 }, 0.0),
        };
        ElementState::new(voltage, current)
    }
}

impl StampValue {
    /// The entry's value and its derivative d/dω at `omega`.
    fn at(self, omega: f64) -> (Complex64, Complex64) {
        match self {
            StampValue::Real(g) => (Complex64::new(g, 0.0), Complex64::new(0.0, 0.0)),
            StampValue::Capacitor { capacitance, esr: 0.0 } => {
                (Complex64::new(0.0, omega * capacitance), Complex64::new(0.0, capacitance))
            }
            StampValue::Capacitor { capacitance, esr } => {
                let j_c = Complex64::new(0.0, capacitance);
                let denominator = 1.0 + j_c * omega * esr;
                (j_c * omega / denominator, j_c / (denominator * denominator))
            }
            StampValue::InductorBranch { inductance, dcr } => {
                (Complex64::new(-dcr, -omega * inductance), Complex64::new(0.0, -inductance))
            }
            StampValue::Gain(gain) => gain.at(omega),
            StampValue::MeasuredBranch { .. } => unreachable!("measured branches are read from their curve"),
        }
    }
}

fn has_branch(kind: &ElementKind) -> bool {
    matches!(
        kind,
        ElementKind::Inductor { .. }
            | ElementKind::Vcvs { .. }
            | ElementKind::VoltageSource { .. }
            | ElementKind::MeasuredImpedance { .. }
    )
}

/// Reverse Cuthill–McKee ordering of `n` unknowns with the given (row, col) pattern.
fn reverse_cuthill_mckee(n: usize, pattern: impl Iterator<Item = (usize, usize)>) -> Vec<usize> {
    let mut adjacency = vec![Vec::new(); n];
    for (row, col) in pattern {
        if row != col {
            adjacency[row].push(col);
            adjacency[col].push(row);
        }
    }
    for list in &mut adjacency {
        list.sort_unstable();
        list.dedup();
    }
    let mut visited = vec![false; n];
    let mut order = Vec::with_capacity(n);
    while order.len() < n {
        // Start each component at an unvisited node of minimum degree.
        let start = (0..n).filter(|&i| !visited[i]).min_by_key(|&i| adjacency[i].len()).expect("unvisited node");
        visited[start] = true;
        let mut head = order.len();
        order.push(start);
        while head < order.len() {
            let node = order[head];
            head += 1;
            let mut next: Vec<usize> = adjacency[node].iter().copied().filter(|&j| !visited[j]).collect();
            next.sort_by_key(|&j| adjacency[j].len());
            for j in next {
                visited[j] = true;
                order.push(j);
            }
        }
    }
    order.reverse();
    order
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::circuit::{CircuitBuilder, Gain};
    use std::f64::consts::PI;

    fn c(re: f64, im: f64) -> Complex64 {
        Complex64::new(re, im)
    }

    fn solve(builder: &CircuitBuilder, f_hz: f64) -> Solution {
        let circuit = builder.build().unwrap();
        let probe = Probe::new(&circuit, "V1", "out", "0").unwrap();
        AcSystem::new(&circuit, &probe).solve_at(f_hz, Detail::Full).unwrap()
    }

    fn close(a: Complex64, b: Complex64, rtol: f64) -> bool {
        (a - b).norm() <= rtol * b.norm().max(1e-300)
    }

    // Source: voltage divider with the closed-form RC low-pass H = 1/(1 + jωRC) (any circuits text).
    #[test]
    fn rc_lowpass_matches_closed_form() {
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0).resistor("R1", "in", "out", 1e3).capacitor("C1", "out", "0", 1e-6);
        for f in [0.0, 10.0, 159.154943, 1e4] {
            let s = solve(&b, f);
            let w = 2.0 * PI * f;
            let h = 1.0 / c(1.0, w * 1e-3);
            assert!(close(s.transfer, h, 1e-12), "f={f}");
            // dH/dω = −jRC/(1 + jωRC)²
            let dh = -c(0.0, 1e-3) * h * h;
            assert!(close(s.transfer_derivative, dh, 1e-12), "f={f}");
            // Z_in = R + 1/(jωC)
            if f > 0.0 {
                assert!(close(s.input_impedance.unwrap(), c(1e3, -1.0 / (w * 1e-6)), 1e-12));
            } else {
                // Open at DC: no current, or a rounding-level current (|Z| beyond 1 TΩ).
                assert!(s.input_impedance.is_none_or(|z| z.norm() > 1e12), "open at DC");
            }
        }
    }

    #[test]
    fn thevenin_source_and_element_powers_balance() {
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 2.0, 50.0)
            .resistor("R1", "in", "out", 100.0)
            .add("L1", ElementKind::Inductor { inductance: 1e-3, dcr: 0.5 }, "out", "x")
            .add("C1", ElementKind::Capacitor { capacitance: 1e-7, esr: 0.1 }, "x", "0")
            .resistor("R2", "out", "0", 1e3);
        let s = solve(&b, 12_345.0);
        // Tellegen: the sum of absorbed complex powers is zero.
        let total: Complex64 = s.elements.iter().map(|e| e.power).sum();
        assert!(total.norm() < 1e-12 * s.elements[1].power.norm(), "total = {total}");
        // Source terminal relation V = EMF − Rs·I_delivered.
        let source = s.elements[0];
        assert!(close(source.voltage, c(2.0, 0.0) + 50.0 * source.current, 1e-12));
        // Z_in seen past Rs = V / I_delivered.
        assert!(close(s.input_impedance.unwrap(), source.voltage / -source.current, 1e-12));
        // Inductor reactive power is positive, capacitor's negative.
        assert!(s.elements[2].power.im > 0.0 && s.elements[3].power.im < 0.0);
    }

    #[test]
    fn floating_node_at_dc_is_flagged_not_fatal() {
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0)
            .capacitor("C1", "in", "mid", 1e-9)
            .capacitor("C2", "mid", "out", 1e-9)
            .resistor("R1", "out", "0", 1e3);
        let circuit = b.build().unwrap();
        let probe = Probe::new(&circuit, "V1", "out", "0").unwrap();
        let mut system = AcSystem::new(&circuit, &probe);
        assert_eq!(system.solve_at(0.0, Detail::Transfer), Err(SolveError::Singular { f_hz: 0.0 }));
        assert!(system.solve_at(1e3, Detail::Transfer).is_ok());
        assert!(matches!(system.solve_at(-1.0, Detail::Transfer), Err(SolveError::BadFrequency { .. })));
    }

    #[test]
    fn current_stimulus_gives_transimpedance() {
        let mut b = CircuitBuilder::new();
        b.current_source("I1", "out", "0", 1e-3).resistor("R1", "out", "0", 1e3).capacitor("C1", "out", "0", 1e-6);
        let circuit = b.build().unwrap();
        let probe = Probe::new(&circuit, "I1", "out", "0").unwrap();
        let s = AcSystem::new(&circuit, &probe).solve_at(100.0, Detail::Full).unwrap();
        let z = 1.0 / (c(1e-3, 0.0) + c(0.0, 2.0 * PI * 100.0 * 1e-6));
        assert!(close(s.transfer, z, 1e-12));
        assert!(close(s.input_impedance.unwrap(), z, 1e-12));
        assert!(close(s.elements[0].voltage, z * 1e-3, 1e-12));
    }

    #[test]
    fn ideal_vcvs_amplifies_and_single_pole_rolls_off() {
        let build = |gain| {
            let mut b = CircuitBuilder::new();
            b.voltage_source("V1", "in", "0", 1.0, 0.0)
                .resistor("R1", "in", "0", 1e3)
                .vcvs("E1", "out", "0", "in", "0", gain)
                .resistor("R2", "out", "0", 1e3);
            b
        };
        assert!(close(solve(&build(Gain::Constant(-3.0)), 1e3).transfer, c(-3.0, 0.0), 1e-14));
        let s = solve(&build(Gain::SinglePole { dc_gain: 1e5, pole_hz: 10.0 }), 1e6);
        let expected = 1e5 / c(1.0, 1e5);
        assert!(close(s.transfer, expected, 1e-12));
    }

    #[test]
    fn extreme_values_still_solve() {
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 1e6)
            .capacitor("C1", "in", "0", 1e-12)
            .inductor("L1", "in", "out", 1e-9)
            .resistor("R1", "out", "0", 1e6);
        for f in [1e-3, 1.0, 1e6, 1e9] {
            let s = solve(&b, f);
            let w = 2.0 * PI * f;
            // Z of the L–R branch, in parallel with C, fed from 1 MΩ.
            let z_lr = c(1e6, w * 1e-9);
            let z_c = 1.0 / c(0.0, w * 1e-12);
            let z_par = z_lr * z_c / (z_lr + z_c);
            let v_in = z_par / (1e6 + z_par);
            let h = v_in * 1e6 / z_lr;
            assert!(close(s.transfer, h, 1e-10), "f={f}: {} vs {}", s.transfer, h);
        }
    }

    #[test]
    fn rcm_keeps_a_ladder_banded() {
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "n0", "0", 1.0, 50.0);
        for k in 1..=7 {
            b.capacitor(&format!("C{k}"), &format!("n{}", k - 1), "0", 1e-9);
            b.inductor(&format!("L{k}"), &format!("n{}", k - 1), &format!("n{k}"), 1e-6);
        }
        b.resistor("RL", "n7", "0", 50.0);
        let circuit = b.build().unwrap();
        let probe = Probe::new(&circuit, "V1", "n7", "0").unwrap();
        let system = AcSystem::new(&circuit, &probe);
        let n = system.n_unknowns();
        let (y, _, _) = system.matrices_at(1.0);
        let bandwidth = (0..n * n).filter(|&k| y[k].norm() > 0.0).map(|k| (k / n).abs_diff(k % n)).max().unwrap();
        assert!(bandwidth <= 2, "bandwidth {bandwidth} for n = {n}");
    }
}
