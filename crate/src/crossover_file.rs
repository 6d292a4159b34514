//! The crossover file: a versioned JSON document of our own that holds one loudspeaker crossover
//! request and maps to a [`CrossoverSpec`].
//!
//! Shape (version 1):
//!
//! ```json
//! {"format": "bandwright-crossover", "version": 1, "name": "two-way demo", "note": "free text",
//!  "nominal_impedance": 8,
//!  "crossover_frequencies": ["2k4"],
//!  "coil_resistance_per_henry": 300,
//!  "reference_sensitivity": 87,
//!  "defaults": {"order": 4, "alignment": "linkwitz_riley", "design_load": "nominal"},
//!  "branches": [
//!    {"name": "woofer",
//!     "driver": {"model": {"re": "5R8", "le": "0.9m", "fs": 45, "qms": 3.5, "qes": 0.4}},
//!     "acoustic": {"sensitivity": 87},
//!     "zobel": "match_coil", "notch": "resonance"},
//!    {"name": "tweeter", "polarity": "normal",
//!     "driver": {"measured": "tweeter-impedance.csv"},
//!     "acoustic": {"sensitivity": 90, "delay": "50u", "response": "tweeter-response.csv"},
//!     "level": {"l_pad": 3}}
//!  ]}
//! ```
//!
//! - `nominal_impedance` in Ω; `crossover_frequencies` in Hz, lowest first (1 for a 2-way, 2 for
//!   a 3-way); `coil_resistance_per_henry` in Ω/H (default 0, ideal coils);
//!   `reference_sensitivity` in dB (default: the lowest of the drivers').
//! - A branch takes `order`, `alignment`, `polarity`, `design_load`, `zobel` and `notch` from
//!   itself, else from `defaults`, else polarity `normal`, design_load `nominal`, zobel `none`,
//!   notch `none`; `order` and `alignment` must be given in one of the two places.
//! - Names: alignment `butterworth`, `linkwitz_riley` (also `linkwitz-riley`), `bessel`;
//!   polarity `normal`, `inverted`; design_load `nominal`, `driver`; zobel `none`, `simple`,
//!   `match_coil` (also `match-coil`); notch `none`, `resonance`.
//! - `driver` is one of `{"resistor": R}`, `{"model": {re, le?, l2?, r2?, fs?, qms?, qes?}}`
//!   (l2 and r2 together and only with le; fs, qms and qes all or none) and
//!   `{"measured": "path.csv"}` (a CSV of frequency, |Z|, phase, see [`crate::driver`]).
//! - `acoustic` (optional; absent is an ideal flat driver at the reference sensitivity):
//!   `sensitivity` in dB, `delay` in s (default 0), `response` (optional) a CSV path of
//!   frequency, level in dB, phase.
//! - `level` (optional): `{"l_pad": dB}` or `{"series_resistor": dB}`, the attenuation.
//! - A value is a JSON number in SI units or a string in engineering notation (see
//!   [`crate::notation`]), as in the design file. Unknown fields are errors that name the field.
//!
//! The core reads no files: [`CrossoverFile::csv_paths`] lists the CSV paths as written, the
//! adapter reads them (relative to the crossover file) and passes their texts to
//! [`CrossoverFile::to_spec`] by the same path. Every refused value is named by its field path,
//! e.g. `branches[0].driver.model.re`, and every refused CSV row by its path and line.

use crate::crossover::{
    design_crossover, BranchSpec, Crossover, CrossoverAlignment, CrossoverError, CrossoverSpec, DesignLoad, LevelMatch,
    NotchChoice, Polarity, ZobelChoice, MAX_BRANCH_ORDER,
};
use crate::design::read::{
    optional_frequency, optional_inductance, optional_ratio, optional_resistance, optional_time, ratio, resistance,
    NumberOrText,
};
use crate::driver::{
    parse_impedance_csv, parse_response_csv, Acoustic, AcousticResponse, Coil, DriverError, DriverLoad, DriverModel,
    Resonance,
};
use crate::notation::Quantity;
use serde::{Deserialize, Deserializer, Serialize};
use std::collections::BTreeMap;
use std::fmt;

/// The value of the `format` field.
pub const FORMAT: &str = "bandwright-crossover";
/// The newest format version this build reads and writes.
pub const VERSION: u32 = 1;

/// A crossover file as read (values in SI units; names not yet resolved against defaults).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CrossoverFile {
    /// Always [`FORMAT`].
    pub format: String,
    /// Always [`VERSION`].
    pub version: u32,
    /// A name for the crossover.
    #[serde(default, skip_serializing_if = "String::is_empty")]
    pub name: String,
    /// Free text.
    #[serde(default, skip_serializing_if = "String::is_empty")]
    pub note: String,
    /// The nominal impedance in Ω.
    #[serde(deserialize_with = "resistance")]
    pub nominal_impedance: f64,
    /// The crossover frequencies in Hz, lowest first.
    #[serde(deserialize_with = "frequencies")]
    pub crossover_frequencies: Vec<f64>,
    /// Winding resistance of the crossover's coils in Ω/H (absent: 0).
    #[serde(default, deserialize_with = "optional_ratio", skip_serializing_if = "Option::is_none")]
    pub coil_resistance_per_henry: Option<f64>,
    /// The reference sensitivity in dB (absent: the lowest of the drivers').
    #[serde(default, deserialize_with = "optional_ratio", skip_serializing_if = "Option::is_none")]
    pub reference_sensitivity: Option<f64>,
    /// Settings every branch takes unless it gives its own.
    #[serde(default)]
    pub defaults: BranchDefaults,
    /// The branches, lowest band first.
    pub branches: Vec<BranchEntry>,
}

/// Branch settings shared through `defaults`.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct BranchDefaults {
    /// The order 1..=4.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub order: Option<usize>,
    /// The alignment.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub alignment: Option<AlignmentName>,
    /// The driver's polarity.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub polarity: Option<PolarityName>,
    /// What the ladder is designed into.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub design_load: Option<DesignLoadName>,
    /// The Zobel choice.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub zobel: Option<ZobelName>,
    /// The notch choice.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub notch: Option<NotchName>,
}

/// One branch as written.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct BranchEntry {
    /// The branch's name (used in part references).
    pub name: String,
    /// The order 1..=4 (absent: from `defaults`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub order: Option<usize>,
    /// The alignment (absent: from `defaults`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub alignment: Option<AlignmentName>,
    /// The polarity (absent: from `defaults`, else normal).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub polarity: Option<PolarityName>,
    /// The design load (absent: from `defaults`, else nominal).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub design_load: Option<DesignLoadName>,
    /// The Zobel choice (absent: from `defaults`, else none).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub zobel: Option<ZobelName>,
    /// The notch choice (absent: from `defaults`, else none).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub notch: Option<NotchName>,
    /// The driver's load.
    pub driver: DriverEntry,
    /// The driver's acoustic side (absent: an ideal flat driver at the reference sensitivity).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub acoustic: Option<AcousticEntry>,
    /// Level matching (absent: none).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub level: Option<LevelEntry>,
}

/// A driver load as written.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case", deny_unknown_fields)]
pub enum DriverEntry {
    /// A resistor of this many Ω.
    Resistor(#[serde(deserialize_with = "resistance")] f64),
    /// A model of parts.
    Model(ModelEntry),
    /// A measured impedance CSV, by path relative to the crossover file.
    Measured(String),
}

/// A driver model as written (values in SI units).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ModelEntry {
    /// Voice-coil DC resistance in Ω.
    #[serde(deserialize_with = "resistance")]
    pub re: f64,
    /// Voice-coil inductance in H (absent: a resistive coil).
    #[serde(default, deserialize_with = "optional_inductance", skip_serializing_if = "Option::is_none")]
    pub le: Option<f64>,
    /// The lossy coil's shunted inductance in H (with `r2`).
    #[serde(default, deserialize_with = "optional_inductance", skip_serializing_if = "Option::is_none")]
    pub l2: Option<f64>,
    /// Its shunt resistance in Ω (with `l2`).
    #[serde(default, deserialize_with = "optional_resistance", skip_serializing_if = "Option::is_none")]
    pub r2: Option<f64>,
    /// Free-air resonance in Hz (with `qms` and `qes`).
    #[serde(default, deserialize_with = "optional_frequency", skip_serializing_if = "Option::is_none")]
    pub fs: Option<f64>,
    /// Mechanical Q.
    #[serde(default, deserialize_with = "optional_ratio", skip_serializing_if = "Option::is_none")]
    pub qms: Option<f64>,
    /// Electrical Q.
    #[serde(default, deserialize_with = "optional_ratio", skip_serializing_if = "Option::is_none")]
    pub qes: Option<f64>,
}

/// A driver's acoustic side as written.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct AcousticEntry {
    /// Sensitivity in dB.
    #[serde(deserialize_with = "ratio")]
    pub sensitivity: f64,
    /// Acoustic delay in s (absent: 0).
    #[serde(default, deserialize_with = "optional_time", skip_serializing_if = "Option::is_none")]
    pub delay: Option<f64>,
    /// A measured response CSV, by path relative to the crossover file (absent: flat).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub response: Option<String>,
}

/// Level matching as written: the attenuation in dB.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case", deny_unknown_fields)]
pub enum LevelEntry {
    /// An L-pad of this attenuation.
    LPad(#[serde(deserialize_with = "ratio")] f64),
    /// A series resistor of this attenuation.
    SeriesResistor(#[serde(deserialize_with = "ratio")] f64),
}

/// An alignment name.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum AlignmentName {
    /// Butterworth.
    Butterworth,
    /// Linkwitz-Riley.
    #[serde(alias = "linkwitz-riley")]
    LinkwitzRiley,
    /// Bessel (−3 dB at the crossover frequency).
    Bessel,
}

/// A polarity name.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum PolarityName {
    /// Connected as marked.
    Normal,
    /// Connected reversed.
    Inverted,
}

/// A design-load name.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum DesignLoadName {
    /// The nominal impedance.
    Nominal,
    /// The driver's own resistance.
    Driver,
}

/// A Zobel name.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ZobelName {
    /// No Zobel.
    None,
    /// Rz = Re, Cz = Le/Re².
    Simple,
    /// The exact network for the driver's coil.
    #[serde(alias = "match-coil")]
    MatchCoil,
}

/// A notch name.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum NotchName {
    /// No notch.
    None,
    /// A resonance notch.
    Resonance,
}

/// Why a crossover file could not be read or used.
#[derive(Debug, Clone, PartialEq)]
pub enum CrossoverFileError {
    /// The text is not valid JSON or does not have the file's shape (this includes unknown
    /// fields and unreadable values, which serde names).
    Json {
        /// 1-based line.
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
    /// A field's value is refused.
    Field {
        /// The field path, e.g. `branches[0].driver.model.re`.
        field: String,
        /// The value as text.
        value: String,
        /// What is wrong and what is accepted.
        problem: String,
    },
    /// The adapter did not pass the text of a CSV the file names.
    MissingCsv {
        /// The field that names it.
        field: String,
        /// The path as written.
        path: String,
    },
    /// A CSV the file names could not be read.
    Csv {
        /// The field that names it.
        field: String,
        /// The path as written.
        path: String,
        /// The row problem (it carries the line number).
        error: DriverError,
    },
    /// The crossover could not be designed from the file's values.
    Design(CrossoverError),
}

impl fmt::Display for CrossoverFileError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Json { line, column, message } => write!(f, "crossover file, line {line} column {column}: {message}"),
            Self::WrongFormat { found: None } => write!(
                f,
                "this is not a crossover file: it has no \"format\" field; crossover files start with {{\"format\": \"{FORMAT}\", \"version\": {VERSION}"
            ),
            Self::WrongFormat { found: Some(found) } => write!(
                f,
                "this is not a crossover file: its format is {found}; crossover files have \"format\": \"{FORMAT}\""
            ),
            Self::WrongVersion { found } => write!(
                f,
                "crossover file version {found} cannot be read; this build reads version {VERSION} (a newer file needs a newer build)"
            ),
            Self::Field { field, value, problem } => write!(f, "{field} is {value}; {problem}"),
            Self::MissingCsv { field, path } => {
                write!(f, "{field} names {path:?}, whose text was not given; pass every path of csv_paths")
            }
            Self::Csv { field, path, error } => write!(f, "{path} (named by {field}), {error}"),
            Self::Design(error) => write!(f, "{error}"),
        }
    }
}

impl std::error::Error for CrossoverFileError {}

impl From<CrossoverError> for CrossoverFileError {
    fn from(error: CrossoverError) -> Self {
        Self::Design(error)
    }
}

/// Reads a crossover file from JSON text (shape only; [`CrossoverFile::to_spec`] checks values).
///
/// # Errors
/// [`CrossoverFileError::Json`] for bad JSON, an unknown field or an unreadable value (with the
/// line and column), [`CrossoverFileError::WrongFormat`] and [`CrossoverFileError::WrongVersion`].
pub fn parse_crossover_file(text: &str) -> Result<CrossoverFile, CrossoverFileError> {
    // serde_json ends its messages with " at line L column C"; the variant carries those apart.
    let json_error = |e: serde_json::Error| {
        let mut message = e.to_string();
        if let Some(cut) = message.rfind(" at line ") {
            message.truncate(cut);
        }
        CrossoverFileError::Json { line: e.line(), column: e.column(), message }
    };
    let value: serde_json::Value = serde_json::from_str(text).map_err(json_error)?;
    let format = value.get("format");
    match format.and_then(|f| f.as_str()) {
        Some(FORMAT) => {}
        _ => return Err(CrossoverFileError::WrongFormat { found: format.map(|f| f.to_string()) }),
    }
    match value.get("version") {
        Some(v) if v.as_u64() == Some(VERSION as u64) => {}
        Some(v) => return Err(CrossoverFileError::WrongVersion { found: v.to_string() }),
        None => return Err(CrossoverFileError::WrongVersion { found: "(missing)".to_string() }),
    }
    serde_json::from_str(text).map_err(json_error)
}

impl CrossoverFile {
    /// Every CSV path the file names, with the field that names it, in file order.
    pub fn csv_paths(&self) -> Vec<(String, String)> {
        let mut paths = Vec::new();
        for (index, branch) in self.branches.iter().enumerate() {
            if let DriverEntry::Measured(path) = &branch.driver {
                paths.push((format!("branches[{index}].driver.measured"), path.clone()));
            }
            if let Some(AcousticEntry { response: Some(path), .. }) = &branch.acoustic {
                paths.push((format!("branches[{index}].acoustic.response"), path.clone()));
            }
        }
        paths
    }

    /// The request as a [`CrossoverSpec`], with `csv` holding the text of every path of
    /// [`CrossoverFile::csv_paths`] (keyed by the path as written).
    ///
    /// # Errors
    /// [`CrossoverFileError::Field`] naming the field of a refused value (a non-positive
    /// impedance, Re or frequency, frequencies out of order, a count that does not fit, a missing
    /// order or alignment, an incomplete model), [`CrossoverFileError::MissingCsv`] and
    /// [`CrossoverFileError::Csv`] (with the CSV's line).
    pub fn to_spec(&self, csv: &BTreeMap<String, String>) -> Result<CrossoverSpec, CrossoverFileError> {
        positive("nominal_impedance", self.nominal_impedance, "Ω")?;
        for (k, &f_hz) in self.crossover_frequencies.iter().enumerate() {
            let field = format!("crossover_frequencies[{k}]");
            positive(&field, f_hz, "Hz")?;
            if k > 0 && f_hz <= self.crossover_frequencies[k - 1] {
                return Err(field_error(
                    &field,
                    format!("{f_hz} Hz"),
                    format!(
                        "it must be above crossover_frequencies[{}] ({} Hz); list crossover frequencies from low to high",
                        k - 1,
                        self.crossover_frequencies[k - 1]
                    ),
                ));
            }
        }
        let (n_branch, n_freq) = (self.branches.len(), self.crossover_frequencies.len());
        if !matches!((n_branch, n_freq), (2, 1) | (3, 2)) {
            return Err(field_error(
                "branches",
                format!("{n_branch} branches with {n_freq} crossover frequencies"),
                "give 2 branches and 1 frequency (2-way) or 3 branches and 2 frequencies (3-way)".to_string(),
            ));
        }
        let dcr = self.coil_resistance_per_henry.unwrap_or(0.0);
        if !(dcr.is_finite() && dcr >= 0.0) {
            return Err(field_error("coil_resistance_per_henry", format!("{dcr}"), "it must be ≥ 0 Ω/H".into()));
        }
        if let Some(reference) = self.reference_sensitivity {
            finite("reference_sensitivity", reference)?;
        }
        let branches = self
            .branches
            .iter()
            .enumerate()
            .map(|(index, branch)| self.branch_spec(index, branch, csv))
            .collect::<Result<Vec<_>, _>>()?;
        Ok(CrossoverSpec {
            nominal_ohm: self.nominal_impedance,
            crossover_hz: self.crossover_frequencies.clone(),
            branches,
            coil_dcr_ohm_per_henry: dcr,
            reference_sensitivity_db: self.reference_sensitivity,
        })
    }

    /// [`CrossoverFile::to_spec`] followed by [`design_crossover`].
    ///
    /// # Errors
    /// As [`CrossoverFile::to_spec`], and [`CrossoverFileError::Design`] for what only the
    /// design finds (e.g. a Zobel asked of a driver without inductance).
    pub fn design(&self, csv: &BTreeMap<String, String>) -> Result<Crossover, CrossoverFileError> {
        Ok(design_crossover(&self.to_spec(csv)?)?)
    }

    /// The file as pretty JSON, numbers in SI units (reading it back gives the same file).
    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).expect("a crossover file always serializes")
    }

    fn branch_spec(
        &self,
        index: usize,
        branch: &BranchEntry,
        csv: &BTreeMap<String, String>,
    ) -> Result<BranchSpec, CrossoverFileError> {
        let at = |field: &str| format!("branches[{index}].{field}");
        if branch.name.trim().is_empty() || branch.name.contains(':') || branch.name.contains('.') {
            return Err(field_error(
                &at("name"),
                format!("{:?}", branch.name),
                "give a non-empty name without ':' or '.'".into(),
            ));
        }
        let defaults = &self.defaults;
        let order = branch.order.or(defaults.order).ok_or_else(|| {
            field_error(&at("order"), "missing".into(), "give the order (1 to 4) here or in defaults.order".into())
        })?;
        let alignment = branch.alignment.or(defaults.alignment).ok_or_else(|| {
            field_error(
                &at("alignment"),
                "missing".into(),
                "give butterworth, linkwitz_riley or bessel here or in defaults.alignment".into(),
            )
        })?;
        let alignment = match alignment {
            AlignmentName::Butterworth => CrossoverAlignment::Butterworth,
            AlignmentName::LinkwitzRiley => CrossoverAlignment::LinkwitzRiley,
            AlignmentName::Bessel => CrossoverAlignment::Bessel,
        };
        let order_field = if branch.order.is_some() { at("order") } else { "defaults.order".to_string() };
        if !(1..=MAX_BRANCH_ORDER).contains(&order) {
            return Err(field_error(&order_field, order.to_string(), "crossover branches have order 1 to 4".into()));
        }
        if alignment == CrossoverAlignment::LinkwitzRiley && order % 2 == 1 {
            return Err(field_error(
                &order_field,
                order.to_string(),
                "Linkwitz-Riley needs an even order (2 or 4)".into(),
            ));
        }
        let driver = match &branch.driver {
            DriverEntry::Resistor(r) => {
                positive(&at("driver.resistor"), *r, "Ω")?;
                DriverLoad::Resistor(*r)
            }
            DriverEntry::Model(model) => DriverLoad::Model(model_of(model, &at("driver.model"))?),
            DriverEntry::Measured(path) => {
                let field = at("driver.measured");
                let text = csv_text(csv, &field, path)?;
                DriverLoad::Measured(parse_impedance_csv(text).map_err(|error| CrossoverFileError::Csv {
                    field,
                    path: path.clone(),
                    error,
                })?)
            }
        };
        let acoustic = match &branch.acoustic {
            None => None,
            Some(entry) => {
                finite(&at("acoustic.sensitivity"), entry.sensitivity)?;
                let delay_s = entry.delay.unwrap_or(0.0);
                finite(&at("acoustic.delay"), delay_s)?;
                let response = match &entry.response {
                    None => AcousticResponse::Flat,
                    Some(path) => {
                        let field = at("acoustic.response");
                        let text = csv_text(csv, &field, path)?;
                        AcousticResponse::Measured(
                            parse_response_csv(text).map_err(|error| CrossoverFileError::Csv {
                                field,
                                path: path.clone(),
                                error,
                            })?,
                        )
                    }
                };
                Some(Acoustic { response, sensitivity_db: entry.sensitivity, delay_s })
            }
        };
        let level = match branch.level {
            None => LevelMatch::None,
            Some(LevelEntry::LPad(db)) => {
                positive(&at("level.l_pad"), db, "dB")?;
                LevelMatch::LPad { attenuation_db: db }
            }
            Some(LevelEntry::SeriesResistor(db)) => {
                positive(&at("level.series_resistor"), db, "dB")?;
                LevelMatch::SeriesResistor { attenuation_db: db }
            }
        };
        Ok(BranchSpec {
            name: branch.name.clone(),
            order,
            alignment,
            polarity: match branch.polarity.or(defaults.polarity).unwrap_or(PolarityName::Normal) {
                PolarityName::Normal => Polarity::Normal,
                PolarityName::Inverted => Polarity::Inverted,
            },
            driver,
            acoustic,
            design_load: match branch.design_load.or(defaults.design_load).unwrap_or(DesignLoadName::Nominal) {
                DesignLoadName::Nominal => DesignLoad::Nominal,
                DesignLoadName::Driver => DesignLoad::Driver,
            },
            zobel: match branch.zobel.or(defaults.zobel).unwrap_or(ZobelName::None) {
                ZobelName::None => ZobelChoice::None,
                ZobelName::Simple => ZobelChoice::Simple,
                ZobelName::MatchCoil => ZobelChoice::MatchCoil,
            },
            notch: match branch.notch.or(defaults.notch).unwrap_or(NotchName::None) {
                NotchName::None => NotchChoice::None,
                NotchName::Resonance => NotchChoice::Resonance,
            },
            level,
        })
    }
}

fn model_of(model: &ModelEntry, field: &str) -> Result<DriverModel, CrossoverFileError> {
    let incomplete =
        |name: &str, problem: &str| field_error(&format!("{field}.{name}"), "missing".into(), problem.into());
    let coil = match (model.le, model.l2, model.r2) {
        (None, None, None) => Coil::Resistive,
        (Some(le), None, None) => Coil::Inductive { le },
        (Some(le), Some(l2), Some(r2)) => Coil::Lossy { le, l2, r2 },
        (None, _, _) => return Err(incomplete("le", "the lossy coil's l2 and r2 need le as well")),
        (Some(_), None, Some(_)) => return Err(incomplete("l2", "give l2 and r2 together, or neither")),
        (Some(_), Some(_), None) => return Err(incomplete("r2", "give l2 and r2 together, or neither")),
    };
    let resonance = match (model.fs, model.qms, model.qes) {
        (None, None, None) => None,
        (Some(fs_hz), Some(qms), Some(qes)) => Some(Resonance { fs_hz, qms, qes }),
        (fs, qms, _) => {
            let name = if fs.is_none() {
                "fs"
            } else if qms.is_none() {
                "qms"
            } else {
                "qes"
            };
            return Err(incomplete(name, "give fs, qms and qes together, or none of them"));
        }
    };
    DriverModel::new(model.re, coil, resonance).map_err(|error| match error {
        DriverError::BadValue { what, value, allowed } => field_error(
            &format!("{field}.{}", what.to_lowercase()),
            format!("{value}"),
            format!("it must be {allowed}"),
        ),
        other => field_error(field, "refused".into(), other.to_string()),
    })
}

fn csv_text<'a>(csv: &'a BTreeMap<String, String>, field: &str, path: &str) -> Result<&'a str, CrossoverFileError> {
    csv.get(path)
        .map(String::as_str)
        .ok_or_else(|| CrossoverFileError::MissingCsv { field: field.to_string(), path: path.to_string() })
}

fn field_error(field: &str, value: String, problem: String) -> CrossoverFileError {
    CrossoverFileError::Field { field: field.to_string(), value, problem }
}

fn positive(field: &str, value: f64, unit: &str) -> Result<(), CrossoverFileError> {
    if value.is_finite() && value > 0.0 {
        Ok(())
    } else {
        Err(field_error(field, format!("{value} {unit}"), format!("it must be a finite value > 0 {unit}")))
    }
}

fn finite(field: &str, value: f64) -> Result<(), CrossoverFileError> {
    if value.is_finite() {
        Ok(())
    } else {
        Err(field_error(field, format!("{value}"), "it must be a finite number".into()))
    }
}

fn frequencies<'de, D: Deserializer<'de>>(deserializer: D) -> Result<Vec<f64>, D::Error> {
    let items = Vec::<NumberOrText>::deserialize(deserializer).map_err(|_| {
        serde::de::Error::custom("expected a list of frequencies, numbers in Hz or strings such as \"2k5\"")
    })?;
    items.into_iter().map(|item| item.value(Quantity::Frequency).map_err(serde::de::Error::custom)).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    const TWO_WAY: &str = include_str!("../../examples/crossover/crossover-2way-lr4.json");
    const THREE_WAY: &str = include_str!("../../examples/crossover/crossover-3way.json");
    const DEMO_CSV: &str = include_str!("../../examples/crossover/demo-tweeter-impedance.csv");

    const MINIMAL: &str = r#"{"format": "bandwright-crossover", "version": 1,
     "nominal_impedance": 8, "crossover_frequencies": [3000],
     "defaults": {"order": 1, "alignment": "butterworth"},
     "branches": [{"name": "low", "driver": {"resistor": 8}},
                  {"name": "high", "driver": {"resistor": "8R"}}]}"#;

    fn csv_for(file: &CrossoverFile) -> BTreeMap<String, String> {
        file.csv_paths().into_iter().map(|(_, path)| (path, DEMO_CSV.to_string())).collect()
    }

    /// Parses and maps `text`, expecting an error whose message contains `expected`.
    fn check_error(text: &str, expected: &str) {
        let message = match parse_crossover_file(text) {
            Err(error) => error.to_string(),
            Ok(file) => file.design(&csv_for(&file)).expect_err("the file must be refused").to_string(),
        };
        assert!(message.contains(expected), "{message:?} lacks {expected:?}");
    }

    fn minimal_with(from: &str, to: &str) -> String {
        assert!(MINIMAL.contains(from), "{from}");
        MINIMAL.replacen(from, to, 1)
    }

    #[test]
    fn minimal_file_maps_to_its_spec() {
        let file = parse_crossover_file(MINIMAL).unwrap();
        let spec = file.to_spec(&BTreeMap::new()).unwrap();
        assert_eq!(spec.nominal_ohm, 8.0);
        assert_eq!(spec.crossover_hz, [3000.0]);
        assert_eq!(spec.coil_dcr_ohm_per_henry, 0.0);
        assert_eq!(spec.branches.len(), 2);
        let high = &spec.branches[1];
        assert_eq!((high.order, high.alignment), (1, CrossoverAlignment::Butterworth));
        assert_eq!(high.driver, DriverLoad::Resistor(8.0));
        assert_eq!((high.polarity, high.design_load), (Polarity::Normal, DesignLoad::Nominal));
        assert_eq!((high.zobel, high.notch, high.level), (ZobelChoice::None, NotchChoice::None, LevelMatch::None));
        assert!(high.acoustic.is_none());
    }

    #[test]
    fn examples_design_and_round_trip() {
        for text in [TWO_WAY, THREE_WAY] {
            let file = parse_crossover_file(text).unwrap();
            let csv = csv_for(&file);
            let spec = file.to_spec(&csv).unwrap();
            file.design(&csv).unwrap();
            let again = parse_crossover_file(&file.to_json()).unwrap();
            assert_eq!(again, file);
            assert_eq!(again.to_spec(&csv).unwrap(), spec);
        }
    }

    #[test]
    fn engineering_notation_and_branch_overrides() {
        let text = r#"{"format": "bandwright-crossover", "version": 1,
         "nominal_impedance": "8R", "crossover_frequencies": ["350", "3k5"],
         "coil_resistance_per_henry": "250", "reference_sensitivity": 86,
         "defaults": {"order": 2, "alignment": "linkwitz-riley", "zobel": "match-coil"},
         "branches": [
           {"name": "low", "driver": {"model": {"re": "6R2", "le": "1.2m", "l2": "0.5m", "r2": "4R7"}}},
           {"name": "mid", "order": 4, "polarity": "normal", "design_load": "driver",
            "driver": {"model": {"re": "5.6", "le": "120u", "fs": "60", "qms": 3, "qes": "0.5"}},
            "notch": "resonance", "level": {"l_pad": "2.5"}},
           {"name": "top", "alignment": "butterworth", "order": 3, "zobel": "none", "polarity": "inverted",
            "driver": {"resistor": "8"}, "acoustic": {"sensitivity": 90, "delay": "30u"},
            "level": {"series_resistor": 1.5}}]}"#;
        let spec = parse_crossover_file(text).unwrap().to_spec(&BTreeMap::new()).unwrap();
        assert_eq!(spec.crossover_hz, [350.0, 3500.0]);
        assert_eq!((spec.coil_dcr_ohm_per_henry, spec.reference_sensitivity_db), (250.0, Some(86.0)));
        let [low, mid, top] = &spec.branches[..] else { panic!("three branches") };
        assert_eq!(low.zobel, ZobelChoice::MatchCoil);
        let DriverLoad::Model(model) = low.driver else { panic!("a model") };
        assert_eq!(model.re, 6.2);
        assert_eq!(model.coil, Coil::Lossy { le: 1.2e-3, l2: 0.5e-3, r2: 4.7 });
        assert_eq!((mid.order, mid.design_load, mid.notch), (4, DesignLoad::Driver, NotchChoice::Resonance));
        let DriverLoad::Model(model) = mid.driver else { panic!("a model") };
        assert_eq!(model.resonance, Some(Resonance { fs_hz: 60.0, qms: 3.0, qes: 0.5 }));
        assert_eq!(mid.level, LevelMatch::LPad { attenuation_db: 2.5 });
        assert_eq!((top.order, top.alignment, top.zobel), (3, CrossoverAlignment::Butterworth, ZobelChoice::None));
        assert_eq!(top.polarity, Polarity::Inverted);
        assert_eq!(top.level, LevelMatch::SeriesResistor { attenuation_db: 1.5 });
        let acoustic = top.acoustic.as_ref().unwrap();
        assert_eq!(acoustic.sensitivity_db, 90.0);
        assert!((acoustic.delay_s - 30e-6).abs() < 1e-18);
        design_crossover(&spec).unwrap();
    }

    #[test]
    fn unknown_fields_are_named() {
        check_error(
            &minimal_with("\"nominal_impedance\"", "\"nominal\": 8, \"nominal_impedance\""),
            "unknown field `nominal`",
        );
        check_error(&minimal_with("\"name\": \"low\",", "\"name\": \"low\", \"slope\": 24,"), "unknown field `slope`");
        check_error(&minimal_with("{\"resistor\": 8}", "{\"model\": {\"re\": 6, \"bl\": 7}}"), "unknown field `bl`");
        check_error(&minimal_with("{\"resistor\": 8}", "{\"horn\": 8}"), "unknown variant `horn`");
        check_error(&minimal_with("\"butterworth\"", "\"chebyshev\""), "unknown variant `chebyshev`");
    }

    #[test]
    fn bad_values_name_their_field() {
        check_error(
            &minimal_with("{\"resistor\": 8}", "{\"model\": {\"re\": -2}}"),
            "branches[0].driver.model.re is -2",
        );
        check_error(
            &minimal_with("{\"resistor\": 8}", "{\"model\": {\"re\": 0, \"le\": \"1m\"}}"),
            "driver.model.re is 0",
        );
        check_error(
            &minimal_with("{\"resistor\": 8}", "{\"model\": {\"re\": 6, \"le\": \"-1m\"}}"),
            "driver.model.le is",
        );
        check_error(&minimal_with("{\"resistor\": 8}", "{\"resistor\": 0}"), "branches[0].driver.resistor is 0 Ω");
        check_error(&minimal_with("[3000]", "[300, 3000]"), "branches is 2 branches with 2 crossover frequencies");
        check_error(
            &minimal_with("\"nominal_impedance\": 8", "\"nominal_impedance\": -8"),
            "nominal_impedance is -8 Ω",
        );
        check_error(&minimal_with("[3000]", "[\"3x\"]"), "3x");
        check_error(&minimal_with("\"order\": 1", "\"order\": 5"), "defaults.order is 5");
        check_error(
            &minimal_with(
                "\"order\": 1, \"alignment\": \"butterworth\"",
                "\"order\": 3, \"alignment\": \"linkwitz_riley\"",
            ),
            "even order",
        );
        check_error(&minimal_with(", \"alignment\": \"butterworth\"", ""), "branches[0].alignment is missing");
        check_error(
            &minimal_with("{\"resistor\": 8}", "{\"model\": {\"re\": 6, \"fs\": 40, \"qes\": 0.4}}"),
            "driver.model.qms is missing",
        );
        check_error(
            &minimal_with("{\"resistor\": 8}", "{\"model\": {\"re\": 6, \"l2\": \"1m\", \"r2\": 3}}"),
            "driver.model.le is missing",
        );
        check_error(&minimal_with("\"name\": \"low\"", "\"name\": \"\""), "branches[0].name is \"\"");
        check_error(
            &minimal_with("{\"resistor\": 8}}", "{\"resistor\": 8}, \"level\": {\"l_pad\": 0}}"),
            "branches[0].level.l_pad is 0 dB",
        );
        check_error(
            &minimal_with("{\"resistor\": 8}}", "{\"resistor\": 8}, \"zobel\": \"simple\"}"),
            "branch low asks for a Zobel",
        );
    }

    #[test]
    fn frequencies_out_of_order_are_named() {
        let text = THREE_WAY.replacen(
            "\"crossover_frequencies\": [\"400\", \"3k\"]",
            "\"crossover_frequencies\": [\"3k\", \"400\"]",
            1,
        );
        assert_ne!(text, THREE_WAY, "the example lists its frequencies as expected");
        check_error(&text, "crossover_frequencies[1] is 400 Hz; it must be above crossover_frequencies[0] (3000 Hz)");
    }

    #[test]
    fn wrong_format_version_and_json_are_named() {
        check_error(
            &MINIMAL.replacen("bandwright-crossover", "bandwright-design", 1),
            "its format is \"bandwright-design\"",
        );
        check_error(&MINIMAL.replacen("\"version\": 1", "\"version\": 2", 1), "version 2 cannot be read");
        check_error("{\"format\": \"bandwright-crossover\",\n \"version\": 1,\n oops}", "line 3");
    }

    #[test]
    fn csv_problems_name_the_path_and_line() {
        let text = minimal_with("{\"resistor\": \"8R\"}", "{\"measured\": \"t.csv\"}");
        let file = parse_crossover_file(&text).unwrap();
        assert_eq!(file.csv_paths(), [("branches[1].driver.measured".to_string(), "t.csv".to_string())]);
        let error = file.to_spec(&BTreeMap::new()).unwrap_err().to_string();
        assert!(error.contains("branches[1].driver.measured names \"t.csv\""), "{error}");
        let csv = BTreeMap::from([("t.csv".to_string(), "f,z,p\n100,8,0\n1000,9,10\n900,9,10\n".to_string())]);
        let error = file.to_spec(&csv).unwrap_err().to_string();
        assert!(error.starts_with("t.csv (named by branches[1].driver.measured), line 4: frequency 900 Hz"), "{error}");
        // A measured acoustic response is read the same way, in dB.
        let text = minimal_with(
            "{\"resistor\": 8}",
            "{\"resistor\": 8}, \"acoustic\": {\"sensitivity\": 88, \"response\": \"r.csv\"}",
        );
        let file = parse_crossover_file(&text).unwrap();
        assert_eq!(file.csv_paths(), [("branches[0].acoustic.response".to_string(), "r.csv".to_string())]);
        let csv = BTreeMap::from([("r.csv".to_string(), "10,0,0\n100,-6,-20\n".to_string())]);
        let spec = file.to_spec(&csv).unwrap();
        let acoustic = spec.branches[0].acoustic.as_ref().unwrap();
        let AcousticResponse::Measured(curve) = &acoustic.response else { panic!("a measured response") };
        assert!((curve.value_at(100.0).unwrap().norm() - 10f64.powf(-6.0 / 20.0)).abs() < 1e-12);
        let csv = BTreeMap::from([("r.csv".to_string(), "10,0,0\n100,x,-20\n".to_string())]);
        let error = file.to_spec(&csv).unwrap_err().to_string();
        assert!(error.starts_with("r.csv (named by branches[0].acoustic.response), line 2"), "{error}");
    }
}
