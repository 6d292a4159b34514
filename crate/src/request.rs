//! A fit request as a person types it, and its validation into a [`Requirement`].
//!
//! Every adapter collects the same fields: the CLI from its `fit` flags, the browser app from its
//! requirement sentence. [`FitRequest`] holds them as text (engineering notation, see
//! [`crate::notation`]) under the flag names in snake_case, and [`FitRequest::resolve`] turns them
//! into a [`Requirement`], a [`Topology`] and [`FitOptions`], or a [`RequestError`] that names the
//! field, repeats what was typed and says what is accepted. A missing field takes the default
//! stated on [`FitRequest`]. Reading stock-list files is the adapter's job: it passes their text
//! in [`FitRequest::stock`].

use crate::active::{ActiveTopology, OpAmp};
use crate::eseries::{PartValues, Series, StockError, StockList};
use crate::fit::{Combine, FitOptions, PartSets, Requirement, RlcForm, Topology};
use crate::ladder::FirstElement;
use crate::notation::{parse_value, ParseError, Quantity};
use crate::synthesis::{Alignment, Band, BesselNormalization, ResponseType};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::fmt;

/// The requirement as typed. Defaults: response lowpass, alignment butterworth, ripple 0.5 (dB,
/// Chebyshev only), bessel_norm magnitude, order 2 (1 for an `f0`/`q` band-pass or band-stop),
/// source 0 (ideal), load open, topology ladder, first shunt for ladders (for RLC sections series,
/// or shunt for the band-stop trap, see [`RlcForm::default_for`]), resistors E96, capacitors E12,
/// inductors E12, alternatives 5, r_min 100, r_max 1M.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct FitRequest {
    /// lowpass, highpass, bandpass or bandstop.
    pub response: Option<String>,
    /// butterworth, chebyshev, bessel, linkwitz-riley or critical.
    pub alignment: Option<String>,
    /// Chebyshev passband ripple in dB.
    pub ripple: Option<String>,
    /// Bessel normalisation: magnitude, delay or phase.
    pub bessel_norm: Option<String>,
    /// The order.
    pub order: Option<String>,
    /// Cutoff frequency.
    pub cutoff: Option<String>,
    /// Natural frequency of a second-order section (with `q`).
    pub f0: Option<String>,
    /// Pole Q (with `f0`).
    pub q: Option<String>,
    /// Lower band edge.
    pub low: Option<String>,
    /// Upper band edge.
    pub high: Option<String>,
    /// Source resistance (0 = ideal source).
    pub source: Option<String>,
    /// Load resistance, or "open".
    pub load: Option<String>,
    /// Load capacitance in parallel with the load.
    pub load_capacitance: Option<String>,
    /// rc, rl, rlc, ladder, sallen-key or mfb.
    pub topology: Option<String>,
    /// Op-amp gain-bandwidth product of active sections (absent: an ideal op-amp).
    pub gbw: Option<String>,
    /// Op-amp open-loop output resistance (with `gbw`; default 0).
    pub op_amp_rout: Option<String>,
    /// Op-amp DC open-loop gain (with `gbw`; default 100k, a typical figure, common practice).
    pub op_amp_a0: Option<String>,
    /// series or shunt: the ladder element, or the RLC form, next to the source.
    pub first: Option<String>,
    /// Resistor values: an E-series name or a key of `stock`.
    pub resistors: Option<String>,
    /// Capacitor values: an E-series name or a key of `stock`.
    pub capacitors: Option<String>,
    /// Inductor values: an E-series name or a key of `stock`.
    pub inductors: Option<String>,
    /// Allow two-part series or parallel combinations.
    pub combine: bool,
    /// How many alternatives to return.
    pub alternatives: Option<String>,
    /// Smallest resistor for a free impedance level.
    pub r_min: Option<String>,
    /// Largest resistor for a free impedance level.
    pub r_max: Option<String>,
    /// Stock-list texts by name (see [`StockList::parse`]); the name's last path component
    /// without its extension names the list.
    pub stock: BTreeMap<String, String>,
}

/// A validated request.
#[derive(Debug, Clone, PartialEq)]
pub struct ResolvedFit {
    /// What the filter must do.
    pub requirement: Requirement,
    /// The realization.
    pub topology: Topology,
    /// The search options.
    pub options: FitOptions,
}

/// A field of a [`FitRequest`] that cannot be used.
#[derive(Debug, Clone, PartialEq)]
pub enum RequestError {
    /// The text is not a value.
    Value {
        /// The field (snake_case flag name).
        field: &'static str,
        /// Why it could not be read (holds the text).
        error: ParseError,
    },
    /// The word is not one of the choices.
    Choice {
        /// The field.
        field: &'static str,
        /// What was given.
        found: String,
        /// The accepted words.
        accepted: &'static str,
    },
    /// A value outside its range.
    Range {
        /// The field.
        field: &'static str,
        /// What was given.
        text: String,
        /// What is accepted.
        accepted: String,
    },
    /// A field that does not go with the others, or is missing.
    Conflict {
        /// The field.
        field: &'static str,
        /// What to do.
        why: &'static str,
    },
    /// Neither an E-series name nor a stock list given with the request.
    UnknownSeries {
        /// The field.
        field: &'static str,
        /// What was given.
        name: String,
    },
    /// A stock list that cannot be read.
    Stock {
        /// The field.
        field: &'static str,
        /// The stock list's name.
        name: String,
        /// The first bad line.
        error: StockError,
    },
}

impl RequestError {
    /// The field at fault (the flag name in snake_case, e.g. `load_capacitance`).
    pub fn field(&self) -> &'static str {
        match self {
            Self::Value { field, .. }
            | Self::Choice { field, .. }
            | Self::Range { field, .. }
            | Self::Conflict { field, .. }
            | Self::UnknownSeries { field, .. }
            | Self::Stock { field, .. } => field,
        }
    }

    /// What is wrong and what is accepted, without the field name.
    pub fn message(&self) -> String {
        match self {
            Self::Value { error, .. } => error.to_string(),
            Self::Choice { found, accepted, .. } => format!("{found:?} is not a choice: use {accepted}"),
            Self::Range { text, accepted, .. } => format!("{text:?} is not accepted: {accepted}"),
            Self::Conflict { why, .. } => why.to_string(),
            Self::UnknownSeries { name, .. } => format!(
                "{name:?} is not an E-series name (E3, E6, E12, E24, E48, E96, E192) and no stock list of that name was given"
            ),
            Self::Stock { name, error, .. } => format!("stock list {name:?}: {error}"),
        }
    }
}

impl fmt::Display for RequestError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "field {}: {}", self.field(), self.message())
    }
}

impl std::error::Error for RequestError {}

impl FitRequest {
    /// Validates the request.
    ///
    /// # Errors
    /// [`RequestError`] for the first field that cannot be used. Whether the requirement can be
    /// met at all (Q > 0.5 with RC, impossible terminations) is decided later by
    /// [`crate::fit::fit`].
    pub fn resolve(&self) -> Result<ResolvedFit, RequestError> {
        let text = |value: &Option<String>, default: &'static str| value.clone().unwrap_or_else(|| default.to_string());
        let response = match text(&self.response, "lowpass").trim() {
            "lowpass" => ResponseType::LowPass,
            "highpass" => ResponseType::HighPass,
            "bandpass" => ResponseType::BandPass,
            "bandstop" => ResponseType::BandStop,
            other => return Err(choice("response", other, "lowpass, highpass, bandpass or bandstop")),
        };
        let normalization = match text(&self.bessel_norm, "magnitude").trim() {
            "magnitude" => BesselNormalization::Magnitude,
            "delay" => BesselNormalization::Delay,
            "phase" => BesselNormalization::Phase,
            other => return Err(choice("bessel_norm", other, "magnitude, delay or phase")),
        };
        let alignment_name = text(&self.alignment, "butterworth");
        let mut alignment = match alignment_name.trim() {
            "butterworth" => Alignment::Butterworth,
            "chebyshev" => Alignment::Chebyshev {
                ripple_db: value("ripple", self.ripple.as_deref().unwrap_or("0.5"), Quantity::Ratio)?,
            },
            "bessel" => Alignment::Bessel { normalization },
            "linkwitz-riley" => Alignment::LinkwitzRiley,
            "critical" => Alignment::Critical,
            other => {
                return Err(choice("alignment", other, "butterworth, chebyshev, bessel, linkwitz-riley or critical"))
            }
        };
        if self.ripple.is_some() && !matches!(alignment, Alignment::Chebyshev { .. }) {
            return Err(RequestError::Conflict {
                field: "ripple",
                why: "ripple applies to the chebyshev alignment only",
            });
        }
        let frequency_of =
            |field: &'static str, given: &Option<String>| given.as_deref().map(|t| frequency(field, t)).transpose();
        let (cutoff, f0, low, high) = (
            frequency_of("cutoff", &self.cutoff)?,
            frequency_of("f0", &self.f0)?,
            frequency_of("low", &self.low)?,
            frequency_of("high", &self.high)?,
        );
        let band = match (cutoff, f0, low, high) {
            (Some(fc), None, None, None) => Band::Cutoff(fc),
            (None, Some(f0), None, None) => {
                let q = self.q.as_deref().ok_or(RequestError::Conflict {
                    field: "q",
                    why: "an f0 needs a q: give the pole Q of the second-order section",
                })?;
                alignment = Alignment::Quality { q: value("q", q, Quantity::Ratio)? };
                Band::Cutoff(f0)
            }
            (None, None, Some(low_hz), Some(high_hz)) => Band::Edges { low_hz, high_hz },
            (None, None, Some(_), None) => {
                return Err(RequestError::Conflict { field: "high", why: "a band needs both edges: give high too" })
            }
            (None, None, None, Some(_)) => {
                return Err(RequestError::Conflict { field: "low", why: "a band needs both edges: give low too" })
            }
            (None, None, None, None) => {
                return Err(RequestError::Conflict {
                    field: "cutoff",
                    why: "give a cutoff, or f0 with q, or low and high band edges",
                })
            }
            _ => {
                return Err(RequestError::Conflict {
                    field: "cutoff",
                    why: "give exactly one of: a cutoff, f0 with q, or low and high band edges",
                })
            }
        };
        if self.q.is_some() && f0.is_none() {
            return Err(RequestError::Conflict { field: "q", why: "q goes with f0 (a second-order section)" });
        }
        let default_order = match (alignment, response) {
            (Alignment::Quality { .. }, ResponseType::BandPass | ResponseType::BandStop) => 1,
            _ => 2,
        };
        let order = match &self.order {
            Some(given) => {
                let n = value("order", given, Quantity::Ratio)?;
                if n.fract() != 0.0 || !(0.0..=100.0).contains(&n) {
                    return Err(RequestError::Range {
                        field: "order",
                        text: given.clone(),
                        accepted: "give a whole number from 1 to 8".to_string(),
                    });
                }
                n as usize
            }
            None => default_order,
        };
        let source_resistance = value("source", self.source.as_deref().unwrap_or("0"), Quantity::Resistance)?;
        let load_text = text(&self.load, "open");
        let load_resistance =
            if load_text.trim() == "open" { None } else { Some(value("load", &load_text, Quantity::Resistance)?) };
        let load_capacitance = self
            .load_capacitance
            .as_deref()
            .filter(|t| !t.trim().is_empty())
            .map(|t| value("load_capacitance", t, Quantity::Capacitance))
            .transpose()?;
        let first = match self.first.as_deref().map(str::trim) {
            None | Some("") => None,
            Some("series") => Some(FirstElement::Series),
            Some("shunt") => Some(FirstElement::Shunt),
            Some(other) => return Err(choice("first", other, "series or shunt")),
        };
        let topology = match text(&self.topology, "ladder").trim() {
            "rc" => Topology::Rc,
            "rl" => Topology::Rl,
            "rlc" => Topology::Rlc(match first {
                Some(FirstElement::Series) => RlcForm::Series,
                Some(FirstElement::Shunt) => RlcForm::Shunt,
                None => RlcForm::default_for(response),
            }),
            "ladder" => Topology::Ladder(first.unwrap_or(FirstElement::Shunt)),
            name @ ("sallen-key" | "mfb") => {
                let kind = if name == "mfb" { ActiveTopology::MultipleFeedback } else { ActiveTopology::SallenKey };
                Topology::Active(kind, self.op_amp()?)
            }
            other => return Err(choice("topology", other, "rc, rl, rlc, ladder, sallen-key or mfb")),
        };
        if !matches!(topology, Topology::Active(..)) {
            for (field, given) in
                [("gbw", &self.gbw), ("op_amp_rout", &self.op_amp_rout), ("op_amp_a0", &self.op_amp_a0)]
            {
                if given.as_deref().is_some_and(|t| !t.trim().is_empty()) {
                    return Err(RequestError::Conflict {
                        field,
                        why: "op-amp figures apply to the sallen-key and mfb topologies only",
                    });
                }
            }
        }
        let alternatives_text = text(&self.alternatives, "5");
        let alternatives = value("alternatives", &alternatives_text, Quantity::Ratio)?;
        if alternatives.fract() != 0.0 || !(1.0..=1000.0).contains(&alternatives) {
            return Err(RequestError::Range {
                field: "alternatives",
                text: alternatives_text,
                accepted: "give a whole number from 1 to 1000".to_string(),
            });
        }
        let options = FitOptions {
            parts: PartSets {
                resistors: self.part_values("resistors", text(&self.resistors, "E96"), Quantity::Resistance)?,
                capacitors: self.part_values("capacitors", text(&self.capacitors, "E12"), Quantity::Capacitance)?,
                inductors: self.part_values("inductors", text(&self.inductors, "E12"), Quantity::Inductance)?,
            },
            combine: if self.combine { Combine::Pairs } else { Combine::Single },
            alternatives: alternatives as usize,
            resistor_range: (
                value("r_min", self.r_min.as_deref().unwrap_or("100"), Quantity::Resistance)?,
                value("r_max", self.r_max.as_deref().unwrap_or("1M"), Quantity::Resistance)?,
            ),
            name: format!("fitted {} {}", alignment_name.trim(), response.name()),
        };
        let requirement =
            Requirement { response, alignment, order, band, source_resistance, load_resistance, load_capacitance };
        Ok(ResolvedFit { requirement, topology, options })
    }

    /// The op-amp model: ideal without `gbw`, else single-pole with its output resistance.
    fn op_amp(&self) -> Result<OpAmp, RequestError> {
        let given = |t: &Option<String>| t.as_deref().map(str::trim).filter(|t| !t.is_empty()).map(str::to_string);
        let Some(gbw_text) = given(&self.gbw) else {
            if given(&self.op_amp_rout).is_some() || given(&self.op_amp_a0).is_some() {
                return Err(RequestError::Conflict {
                    field: "gbw",
                    why: "an op-amp output resistance or gain needs its gain-bandwidth product: give gbw too",
                });
            }
            return Ok(OpAmp::Ideal);
        };
        let gbw_hz = frequency("gbw", &gbw_text)?;
        let output_ohms =
            value("op_amp_rout", &given(&self.op_amp_rout).unwrap_or_else(|| "0".into()), Quantity::Resistance)?;
        let dc_gain = value("op_amp_a0", &given(&self.op_amp_a0).unwrap_or_else(|| "100k".into()), Quantity::Ratio)?;
        let op_amp = OpAmp::SinglePole { gbw_hz, dc_gain, output_ohms };
        op_amp.validate().map_err(|e| RequestError::Range {
            field: "gbw",
            text: gbw_text.clone(),
            accepted: e.to_string(),
        })?;
        Ok(op_amp)
    }

    fn part_values(&self, field: &'static str, name: String, quantity: Quantity) -> Result<PartValues, RequestError> {
        if let Some(series) = Series::from_name(name.trim()) {
            return Ok(PartValues::Series(series));
        }
        let contents =
            self.stock.get(&name).ok_or_else(|| RequestError::UnknownSeries { field, name: name.clone() })?;
        let stem = name.rsplit(['/', '\\']).next().unwrap_or(&name);
        let stem = stem.rsplit_once('.').map_or(stem, |(base, _)| if base.is_empty() { stem } else { base });
        StockList::parse(stem, contents, quantity).map(PartValues::Stock).map_err(|error| RequestError::Stock {
            field,
            name,
            error,
        })
    }
}

fn choice(field: &'static str, found: &str, accepted: &'static str) -> RequestError {
    RequestError::Choice { field, found: found.to_string(), accepted }
}

fn value(field: &'static str, text: &str, quantity: Quantity) -> Result<f64, RequestError> {
    parse_value(text, quantity).map_err(|error| RequestError::Value { field, error })
}

fn frequency(field: &'static str, text: &str) -> Result<f64, RequestError> {
    let f = value(field, text, Quantity::Frequency)?;
    if f.is_nan() || f <= 0.0 {
        return Err(RequestError::Range {
            field,
            text: text.to_string(),
            accepted: "give a frequency above 0 Hz".to_string(),
        });
    }
    Ok(f)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn request(json: &str) -> Result<ResolvedFit, RequestError> {
        serde_json::from_str::<FitRequest>(json).expect("request JSON").resolve()
    }

    #[test]
    fn defaults_and_engineering_notation() {
        let fit = request(r#"{"cutoff": "1k", "order": "3", "source": "600", "load": "4k7"}"#).unwrap();
        assert_eq!(fit.requirement.band, Band::Cutoff(1000.0));
        assert_eq!(fit.requirement.order, 3);
        assert_eq!(fit.requirement.source_resistance, 600.0);
        assert_eq!(fit.requirement.load_resistance, Some(4700.0));
        assert_eq!(fit.requirement.alignment, Alignment::Butterworth);
        assert_eq!(fit.topology, Topology::Ladder(FirstElement::Shunt));
        assert_eq!(fit.options.parts.resistors, PartValues::Series(Series::E96));
        assert_eq!(fit.options.resistor_range, (100.0, 1e6));
        assert_eq!(fit.options.alternatives, 5);
        let rlc = request(r#"{"f0": "40k", "q": "5", "response": "bandpass", "topology": "rlc", "first": "series"}"#)
            .unwrap();
        assert_eq!(rlc.requirement.alignment, Alignment::Quality { q: 5.0 });
        assert_eq!(rlc.requirement.order, 1);
        assert_eq!(rlc.topology, Topology::Rlc(RlcForm::Series));
        let active = request(r#"{"cutoff": "1k", "topology": "mfb", "gbw": "1M", "op_amp_rout": "75"}"#).unwrap();
        let op_amp = OpAmp::SinglePole { gbw_hz: 1e6, dc_gain: 1e5, output_ohms: 75.0 };
        assert_eq!(active.topology, Topology::Active(ActiveTopology::MultipleFeedback, op_amp));
        let ideal = request(r#"{"cutoff": "1k", "topology": "sallen-key"}"#).unwrap();
        assert_eq!(ideal.topology, Topology::Active(ActiveTopology::SallenKey, OpAmp::Ideal));
    }

    #[test]
    fn every_bad_field_is_named_with_its_text() {
        let cases = [
            (r#"{"cutoff": "0"}"#, "cutoff", "\"0\" is not accepted: give a frequency above 0 Hz"),
            (r#"{"cutoff": "1kk"}"#, "cutoff", "cannot read \"1kk\""),
            (r#"{"cutoff": "1k", "response": "allpass"}"#, "response", "\"allpass\" is not a choice"),
            (r#"{"cutoff": "1k", "ripple": "1"}"#, "ripple", "chebyshev alignment only"),
            (r#"{"f0": "1k"}"#, "q", "an f0 needs a q"),
            (r#"{"cutoff": "1k", "q": "2"}"#, "q", "q goes with f0"),
            (r#"{"low": "1k"}"#, "high", "both edges"),
            (r#"{}"#, "cutoff", "give a cutoff"),
            (r#"{"cutoff": "1k", "order": "2.5"}"#, "order", "whole number from 1 to 8"),
            (r#"{"cutoff": "1k", "load": "10 kF"}"#, "load", "cannot read"),
            (r#"{"cutoff": "1k", "capacitors": "E7"}"#, "capacitors", "not an E-series name"),
            (r#"{"cutoff": "1k", "alternatives": "0"}"#, "alternatives", "from 1 to 1000"),
            (r#"{"cutoff": "1k", "topology": "rcl"}"#, "topology", "use rc, rl, rlc, ladder, sallen-key or mfb"),
            (r#"{"cutoff": "1k", "topology": "rc", "gbw": "1M"}"#, "gbw", "sallen-key and mfb topologies only"),
            (r#"{"cutoff": "1k", "topology": "mfb", "op_amp_rout": "50"}"#, "gbw", "give gbw too"),
            (r#"{"cutoff": "1k", "topology": "mfb", "gbw": "-1M"}"#, "gbw", "above 0 Hz"),
            (
                r#"{"cutoff": "1k", "topology": "sallen-key", "gbw": "1M", "op_amp_a0": "0.5"}"#,
                "gbw",
                "\"1M\" is not accepted",
            ),
        ];
        for (json, field, fragment) in cases {
            let error = request(json).unwrap_err();
            assert_eq!(error.field(), field, "{json}: {error}");
            let text = error.to_string();
            assert!(text.starts_with(&format!("field {field}: ")), "{text}");
            assert!(text.contains(fragment), "{json}: {text}");
        }
    }

    #[test]
    fn stock_lists_come_with_the_request() {
        let json = r##"{"cutoff": "1k", "inductors": "lists/drawer.txt",
                       "stock": {"lists/drawer.txt": "# my drawer\n1m\n2.2m\n4.7m\n"}}"##;
        let fit = request(json).unwrap();
        match &fit.options.parts.inductors {
            PartValues::Stock(list) => {
                assert_eq!(list.name(), "drawer");
                assert_eq!(list.values(), &[1e-3, 2.2e-3, 4.7e-3]);
            }
            other => panic!("{other:?}"),
        }
        let bad = r#"{"cutoff": "1k", "inductors": "d", "stock": {"d": "1m\nfoo\n"}}"#;
        let error = request(bad).unwrap_err();
        assert_eq!(error.field(), "inductors");
        assert!(error.to_string().contains("stock list \"d\""), "{error}");
    }

    #[test]
    fn unknown_fields_are_refused() {
        assert!(serde_json::from_str::<FitRequest>(r#"{"cutof": "1k"}"#).is_err());
    }
}
