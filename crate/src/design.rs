//! The design file: a versioned JSON document of our own that holds one circuit with its source,
//! load and output, and converts to a validated [`Circuit`] and [`Probe`].
//!
//! Shape (version 1):
//!
//! ```json
//! {"format": "bandwright-design", "version": 1, "name": "example", "note": "free text",
//!  "source": {"node": "in", "resistance": 50},
//!  "load": {"node": "out", "resistance": 10000, "capacitance": "100p"},
//!  "output": "out",
//!  "elements": [
//!    {"ref": "R1", "kind": "resistor",  "value": "1k",  "nodes": ["in", "mid"]},
//!    {"ref": "L1", "kind": "inductor",  "value": "10m", "nodes": ["mid", "out"], "series_resistance": 0.2},
//!    {"ref": "C1", "kind": "capacitor", "value": 1e-7,  "nodes": ["out", "0"]}
//!  ]}
//! ```
//!
//! - `source` is a voltage source from `node` to ground with EMF `amplitude` (V rms, default 1)
//!   behind `resistance` (0 = ideal). `load` (optional; omitted = open output) puts a resistance
//!   and/or a capacitance from `node` to ground.
//! - A value is a JSON number in SI units or a string in engineering notation (see
//!   [`crate::notation`]); a unit symbol in the string must fit the field.
//! - Element kinds: `resistor`, `capacitor`, `inductor` (`series_resistance` is the ESR of a
//!   capacitor or the DCR of an inductor), `voltage_source` and `current_source` (`value` is the
//!   amplitude; they are zero in the transfer function, which is taken from `source`), and `vcvs`
//!   (`gain`, `control` = [sense+, sense−], optional `pole_hz` for a single-pole gain).
//! - Unknown fields are errors. The references `source`, `load.R` and `load.C` are reserved for
//!   the parts that `source` and `load` create.
//!
//! Files are written with numbers in SI units, so reading a written file gives the same circuit
//! bit for bit.

use crate::circuit::{Circuit, CircuitBuilder, CircuitError, ElementKind, Gain};
use crate::mna::Probe;
use serde::{Deserialize, Serialize};
use std::fmt;

/// The value of the `format` field.
pub const FORMAT: &str = "bandwright-design";
/// The newest format version this build reads and writes.
pub const VERSION: u32 = 1;
/// The reference given to the design's source.
pub const SOURCE_REF: &str = "source";
/// The reference given to the load resistance.
pub const LOAD_R_REF: &str = "load.R";
/// The reference given to the load capacitance.
pub const LOAD_C_REF: &str = "load.C";

/// A design: one circuit between a source and a load.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Design {
    /// Always [`FORMAT`].
    pub format: String,
    /// The format version, [`VERSION`].
    pub version: u32,
    /// A short name.
    pub name: String,
    /// Free text.
    #[serde(default, skip_serializing_if = "String::is_empty")]
    pub note: String,
    /// The driving source.
    pub source: Source,
    /// The load, or `None` for an open output.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub load: Option<Load>,
    /// The output node (measured against ground).
    pub output: String,
    /// The parts.
    pub elements: Vec<Part>,
    /// Each part's tolerance in percent, by reference (resistors, capacitors and inductors only):
    /// what the tolerance analysis varies it by unless told otherwise. Fitting writes the usual
    /// tolerance of each part's series here.
    #[serde(default, skip_serializing_if = "std::collections::BTreeMap::is_empty")]
    pub tolerances: std::collections::BTreeMap<String, f64>,
}

/// The design's source: a Thevenin voltage source from `node` to ground.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Source {
    /// The node it drives.
    pub node: String,
    /// Source resistance in Ω (0 = ideal source).
    #[serde(deserialize_with = "resistance")]
    pub resistance: f64,
    /// EMF in V rms.
    #[serde(default = "one", deserialize_with = "voltage", skip_serializing_if = "is_one")]
    pub amplitude: f64,
}

/// The design's load from `node` to ground.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Load {
    /// The node it loads.
    pub node: String,
    /// Load resistance in Ω.
    #[serde(default, deserialize_with = "optional_resistance", skip_serializing_if = "Option::is_none")]
    pub resistance: Option<f64>,
    /// Load capacitance in F, in parallel.
    #[serde(default, deserialize_with = "optional_capacitance", skip_serializing_if = "Option::is_none")]
    pub capacitance: Option<f64>,
}

/// One part of a design, as written in the file.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case", deny_unknown_fields)]
pub enum Part {
    /// A resistor.
    Resistor {
        /// Reference.
        #[serde(rename = "ref")]
        reference: String,
        /// Resistance in Ω.
        #[serde(deserialize_with = "resistance")]
        value: f64,
        /// Terminals.
        nodes: [String; 2],
    },
    /// A capacitor, with optional ESR.
    Capacitor {
        /// Reference.
        #[serde(rename = "ref")]
        reference: String,
        /// Capacitance in F.
        #[serde(deserialize_with = "capacitance")]
        value: f64,
        /// Terminals.
        nodes: [String; 2],
        /// ESR in Ω.
        #[serde(default, deserialize_with = "optional_resistance", skip_serializing_if = "Option::is_none")]
        series_resistance: Option<f64>,
    },
    /// An inductor, with optional DCR.
    Inductor {
        /// Reference.
        #[serde(rename = "ref")]
        reference: String,
        /// Inductance in H.
        #[serde(deserialize_with = "inductance")]
        value: f64,
        /// Terminals.
        nodes: [String; 2],
        /// DCR in Ω.
        #[serde(default, deserialize_with = "optional_resistance", skip_serializing_if = "Option::is_none")]
        series_resistance: Option<f64>,
    },
    /// An extra voltage source (zero in the transfer function).
    VoltageSource {
        /// Reference.
        #[serde(rename = "ref")]
        reference: String,
        /// EMF in V rms.
        #[serde(deserialize_with = "voltage")]
        value: f64,
        /// Terminals (positive first).
        nodes: [String; 2],
        /// Series resistance in Ω.
        #[serde(default, deserialize_with = "optional_resistance", skip_serializing_if = "Option::is_none")]
        series_resistance: Option<f64>,
    },
    /// An extra current source (zero in the transfer function).
    CurrentSource {
        /// Reference.
        #[serde(rename = "ref")]
        reference: String,
        /// Current in A rms, pushed out of the first node.
        #[serde(deserialize_with = "current")]
        value: f64,
        /// Terminals.
        nodes: [String; 2],
    },
    /// A voltage-controlled voltage source.
    Vcvs {
        /// Reference.
        #[serde(rename = "ref")]
        reference: String,
        /// Gain (DC gain when `pole_hz` is given).
        #[serde(deserialize_with = "ratio")]
        gain: f64,
        /// Output terminals (positive first).
        nodes: [String; 2],
        /// Sensing terminals (positive first).
        control: [String; 2],
        /// Pole frequency in Hz of a single-pole gain.
        #[serde(default, deserialize_with = "optional_frequency", skip_serializing_if = "Option::is_none")]
        pole_hz: Option<f64>,
    },
}

/// Why a design could not be read or used.
#[derive(Debug, Clone, PartialEq)]
pub enum DesignError {
    /// The text is not valid JSON, or does not have the design file's shape.
    Json {
        /// 1-based line of the problem.
        line: usize,
        /// 1-based column.
        column: usize,
        /// What serde reported.
        message: String,
    },
    /// The `format` field is missing or names another format.
    WrongFormat {
        /// What was found, if anything.
        found: Option<String>,
    },
    /// The version is missing or not one this build reads.
    WrongVersion {
        /// What was found, as text.
        found: String,
    },
    /// A part uses a reference reserved for the source or load.
    ReservedReference {
        /// The reference.
        reference: String,
    },
    /// The source, load or output names a node no part uses.
    UnusedNode {
        /// "source", "load" or "output".
        role: &'static str,
        /// The node name.
        node: String,
    },
    /// A tolerance names no resistor, capacitor or inductor of the design, or is not a
    /// percentage from 0 to 100.
    BadTolerance {
        /// The reference it names.
        reference: String,
        /// The value in percent.
        value: f64,
    },
    /// The circuit itself is invalid.
    Circuit(CircuitError),
}

impl fmt::Display for DesignError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Json { line, column, message } => {
                write!(f, "design file, line {line} column {column}: {message}")
            }
            Self::WrongFormat { found: None } => {
                write!(f, "this is not a design file: it has no \"format\" field; design files start with {{\"format\": \"{FORMAT}\", \"version\": {VERSION}")
            }
            Self::WrongFormat { found: Some(found) } => write!(
                f,
                "this is not a design file: its format is \"{found}\"; design files have \"format\": \"{FORMAT}\""
            ),
            Self::WrongVersion { found } => write!(
                f,
                "design file version {found} cannot be read; this build reads version {VERSION} (a newer file needs a newer build)"
            ),
            Self::ReservedReference { reference } => write!(
                f,
                "reference {reference} is reserved for the design's source or load; rename that part"
            ),
            Self::UnusedNode { role, node } => {
                write!(f, "the {role} names node {node}, which no element connects to; use a node of the elements")
            }
            Self::BadTolerance { reference, value } => write!(
                f,
                "tolerance {value} % of {reference} is not usable; tolerances name a resistor, capacitor or inductor of the design and give a percentage from 0 to 100"
            ),
            Self::Circuit(error) => write!(f, "{error}"),
        }
    }
}

impl std::error::Error for DesignError {}

impl From<CircuitError> for DesignError {
    fn from(error: CircuitError) -> Self {
        Self::Circuit(error)
    }
}

impl Part {
    /// The part's reference.
    pub fn reference(&self) -> &str {
        match self {
            Part::Resistor { reference, .. }
            | Part::Capacitor { reference, .. }
            | Part::Inductor { reference, .. }
            | Part::VoltageSource { reference, .. }
            | Part::CurrentSource { reference, .. }
            | Part::Vcvs { reference, .. } => reference,
        }
    }

    /// The part's terminals.
    pub fn nodes(&self) -> &[String; 2] {
        match self {
            Part::Resistor { nodes, .. }
            | Part::Capacitor { nodes, .. }
            | Part::Inductor { nodes, .. }
            | Part::VoltageSource { nodes, .. }
            | Part::CurrentSource { nodes, .. }
            | Part::Vcvs { nodes, .. } => nodes,
        }
    }
}

impl Design {
    /// Converts the design to a validated circuit and the probe from its source to its output.
    ///
    /// # Errors
    /// [`DesignError`] naming the offending part or node.
    pub fn to_circuit(&self) -> Result<(Circuit, Probe), DesignError> {
        let mut builder = CircuitBuilder::new();
        for part in &self.elements {
            let reference = part.reference();
            if [SOURCE_REF, LOAD_R_REF, LOAD_C_REF].contains(&reference) {
                return Err(DesignError::ReservedReference { reference: reference.to_string() });
            }
            let [a, b] = part.nodes();
            match part {
                Part::Resistor { value, .. } => builder.resistor(reference, a, b, *value),
                Part::Capacitor { value, series_resistance, .. } => builder.add(
                    reference,
                    ElementKind::Capacitor { capacitance: *value, esr: series_resistance.unwrap_or(0.0) },
                    a,
                    b,
                ),
                Part::Inductor { value, series_resistance, .. } => builder.add(
                    reference,
                    ElementKind::Inductor { inductance: *value, dcr: series_resistance.unwrap_or(0.0) },
                    a,
                    b,
                ),
                Part::VoltageSource { value, series_resistance, .. } => {
                    builder.voltage_source(reference, a, b, *value, series_resistance.unwrap_or(0.0))
                }
                Part::CurrentSource { value, .. } => builder.current_source(reference, a, b, *value),
                Part::Vcvs { gain, control, pole_hz, .. } => {
                    let gain = match pole_hz {
                        Some(pole_hz) => Gain::SinglePole { dc_gain: *gain, pole_hz: *pole_hz },
                        None => Gain::Constant(*gain),
                    };
                    builder.vcvs(reference, a, b, &control[0], &control[1], gain)
                }
            };
        }
        for (reference, &value) in &self.tolerances {
            let is_part = self.elements.iter().any(|p| {
                matches!(p, Part::Resistor { .. } | Part::Capacitor { .. } | Part::Inductor { .. })
                    && p.reference() == reference
            });
            if !(is_part && value.is_finite() && (0.0..=100.0).contains(&value)) {
                return Err(DesignError::BadTolerance { reference: reference.clone(), value });
            }
        }
        let used = |node: &str| {
            crate::circuit::is_ground_name(node) || self.elements.iter().any(|p| p.nodes().iter().any(|n| n == node))
        };
        if !used(&self.source.node) {
            return Err(DesignError::UnusedNode { role: "source", node: self.source.node.clone() });
        }
        if !used(&self.output) {
            return Err(DesignError::UnusedNode { role: "output", node: self.output.clone() });
        }
        builder.voltage_source(SOURCE_REF, &self.source.node, "0", self.source.amplitude, self.source.resistance);
        if let Some(load) = &self.load {
            if !used(&load.node) {
                return Err(DesignError::UnusedNode { role: "load", node: load.node.clone() });
            }
            if let Some(r) = load.resistance {
                builder.resistor(LOAD_R_REF, &load.node, "0", r);
            }
            if let Some(c) = load.capacitance {
                builder.capacitor(LOAD_C_REF, &load.node, "0", c);
            }
        }
        let circuit = builder.build()?;
        let probe = Probe::new(&circuit, SOURCE_REF, &self.output, "0")?;
        Ok((circuit, probe))
    }

    /// Writes the design as pretty-printed JSON with SI numbers.
    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).expect("a design always serializes")
    }
}

/// Reads a design file from JSON text and validates it into a circuit.
///
/// # Errors
/// [`DesignError`]: bad JSON with its line and column, a wrong format or version, an unknown
/// field or kind, an unreadable value, or an invalid circuit.
pub fn parse_design(text: &str) -> Result<Design, DesignError> {
    let json_error =
        |e: serde_json::Error| DesignError::Json { line: e.line(), column: e.column(), message: e.to_string() };
    let value: serde_json::Value = serde_json::from_str(text).map_err(json_error)?;
    let format = value.get("format");
    match format.and_then(|f| f.as_str()) {
        Some(FORMAT) => {}
        Some(other) => return Err(DesignError::WrongFormat { found: Some(other.to_string()) }),
        None => return Err(DesignError::WrongFormat { found: format.map(|f| f.to_string()) }),
    }
    match value.get("version") {
        Some(v) if v.as_u64() == Some(VERSION as u64) => {}
        Some(v) => return Err(DesignError::WrongVersion { found: v.to_string() }),
        None => return Err(DesignError::WrongVersion { found: "(missing)".to_string() }),
    }
    let design: Design = serde_json::from_str(text).map_err(|e| {
        // serde reports "line 1 column 0" style positions; keep them, strip its own suffix.
        let mut error = json_error(e);
        if let DesignError::Json { message, .. } = &mut error {
            if let Some(cut) = message.rfind(" at line ") {
                message.truncate(cut);
            }
        }
        error
    })?;
    design.to_circuit()?;
    Ok(design)
}

fn one() -> f64 {
    1.0
}

fn is_one(x: &f64) -> bool {
    *x == 1.0
}

pub(crate) use read::*;

/// Serde readers for SI values written as a number or as a string in engineering notation
/// ("4k7", "100n"), shared by the file formats of the core (design and crossover files).
pub(crate) mod read {
    use crate::notation::{parse_value, Quantity};
    use serde::{Deserialize, Deserializer};

    /// A JSON value that is a number or a string in engineering notation.
    #[derive(Deserialize)]
    #[serde(untagged)]
    pub(crate) enum NumberOrText {
        Number(f64),
        Text(String),
    }

    impl NumberOrText {
        /// The value in SI units, parsing text as `quantity`.
        pub(crate) fn value(self, quantity: Quantity) -> Result<f64, crate::notation::ParseError> {
            match self {
                NumberOrText::Number(x) => Ok(x),
                NumberOrText::Text(text) => parse_value(&text, quantity),
            }
        }
    }

    pub(crate) fn read_quantity<'de, D: Deserializer<'de>>(
        deserializer: D,
        quantity: Quantity,
    ) -> Result<f64, D::Error> {
        NumberOrText::deserialize(deserializer)
            .map_err(|_| {
                serde::de::Error::custom(format!(
                    "expected a {} as a number in SI units or a string such as \"4k7\" or \"100n\"",
                    quantity.name()
                ))
            })?
            .value(quantity)
            .map_err(serde::de::Error::custom)
    }

    macro_rules! quantity_readers {
        ($($name:ident, $optional:ident => $quantity:expr;)*) => {$(
            #[allow(dead_code)]
            pub(crate) fn $name<'de, D: Deserializer<'de>>(deserializer: D) -> Result<f64, D::Error> {
                read_quantity(deserializer, $quantity)
            }
            #[allow(dead_code)]
            pub(crate) fn $optional<'de, D: Deserializer<'de>>(deserializer: D) -> Result<Option<f64>, D::Error> {
                read_quantity(deserializer, $quantity).map(Some)
            }
        )*};
    }

    quantity_readers! {
        resistance, optional_resistance => Quantity::Resistance;
        capacitance, optional_capacitance => Quantity::Capacitance;
        inductance, optional_inductance => Quantity::Inductance;
        voltage, optional_voltage => Quantity::Voltage;
        current, optional_current => Quantity::Current;
        ratio, optional_ratio => Quantity::Ratio;
        frequency, optional_frequency => Quantity::Frequency;
        time, optional_time => Quantity::Time;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const EXAMPLE: &str = r#"{"format": "bandwright-design", "version": 1, "name": "example",
     "source": {"node": "in", "resistance": 50},
     "load": {"node": "out", "resistance": 10000},
     "output": "out",
     "elements": [
       {"ref": "R1", "kind": "resistor",  "value": "1k",   "nodes": ["in", "mid"]},
       {"ref": "L1", "kind": "inductor",  "value": "10m",  "nodes": ["mid", "out"], "series_resistance": 0.2},
       {"ref": "C1", "kind": "capacitor", "value": 1e-7,   "nodes": ["out", "0"]}
     ]}"#;

    fn check_error(text: &str, expected: &str) {
        let error = parse_design(text).expect_err("should be rejected").to_string();
        assert!(error.contains(expected), "message {error:?} lacks {expected:?}");
    }

    #[test]
    fn reads_the_minimal_example() {
        let design = parse_design(EXAMPLE).unwrap();
        assert_eq!(design.elements.len(), 3);
        let (circuit, probe) = design.to_circuit().unwrap();
        assert_eq!(circuit.elements().len(), 5); // three parts, source, load
        assert_eq!(circuit.node_name(probe.output.0), "out");
        match design.elements[0] {
            Part::Resistor { value, .. } => assert_eq!(value, 1000.0),
            _ => panic!("R1 should be a resistor"),
        }
    }

    proptest::proptest! {
        // The same entry point as the fuzz target (tests/fuzz), as a smoke run in every test run:
        // arbitrary text, and the example with one character replaced, never panic.
        #[test]
        fn arbitrary_text_never_panics(text in ".{0,300}") {
            let _ = parse_design(&text);
        }

        #[test]
        fn mutated_example_never_panics(position in 0usize..400, replacement in proptest::char::any()) {
            let mut chars: Vec<char> = EXAMPLE.chars().collect();
            let index = position % chars.len();
            chars[index] = replacement;
            let text: String = chars.into_iter().collect();
            if let Ok(design) = parse_design(&text) {
                let (circuit, probe) = design.to_circuit().expect("a parsed design converts");
                let _ = crate::mna::AcSystem::new(&circuit, &probe).solve_at(1e3, crate::mna::Detail::Full);
            }
        }
    }

    #[test]
    fn round_trip_gives_the_same_circuit() {
        let design = parse_design(EXAMPLE).unwrap();
        let again = parse_design(&design.to_json()).unwrap();
        assert_eq!(design, again);
        assert_eq!(design.to_circuit().unwrap(), again.to_circuit().unwrap());
    }

    #[test]
    fn bad_inputs_are_named() {
        check_error("{\"format\": ", "line 1");
        check_error(r#"{"version": 1}"#, "no \"format\" field");
        check_error(r#"{"format": "other", "version": 1}"#, "its format is \"other\"");
        check_error(&EXAMPLE.replace("\"version\": 1", "\"version\": 2"), "version 2 cannot be read");
        check_error(&EXAMPLE.replace("\"resistor\"", "\"resistr\""), "unknown variant `resistr`");
        check_error(
            &EXAMPLE.replace("\"name\": \"example\"", "\"name\": \"x\", \"colour\": 1"),
            "unknown field `colour`",
        );
        check_error(&EXAMPLE.replace("\"1k\"", "\"4k7k\""), "\"4k7k\"");
        check_error(&EXAMPLE.replace("\"1k\"", "\"1nF\""), "1nF");
        check_error(&EXAMPLE.replace("1e-7", "-1e-7"), "part C1 has capacitance -0.0000001");
        check_error(&EXAMPLE.replace("\"output\": \"out\"", "\"output\": \"nowhere\""), "output names node nowhere");
        check_error(&EXAMPLE.replace("\"R1\"", "\"source\""), "reference source is reserved");
        check_error(&EXAMPLE.replace("\"ref\": \"C1\"", "\"ref\": \"R1\""), "reference R1 is used twice");
        check_error(
            &EXAMPLE.replace(
                "\n     ]}",
                ", {\"ref\": \"R9\", \"kind\": \"resistor\", \"value\": 5, \"nodes\": [\"x\", \"y\"]}]}",
            ),
            "parts R9 (nodes x, y) are not connected to ground",
        );
    }
}
