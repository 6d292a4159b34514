//! The demo shown on first open: a scenario of our own.
//!
//! Scenario: the anti-aliasing front end of a sensor input sampled at 10 kS/s, a 3-stage RC
//! ladder, critically damped with −3 dB at 1 kHz, between a bridge amplifier's 100 Ω output and
//! a 1 MΩ converter driver. Invented for the demo. The design is the core's best fit of
//! [`demo_request`], committed as `examples/sensor-aa-rc-ladder-3rd.json` so the first plot does
//! not wait for a fit; a test checks that the fit still gives exactly these parts.

use crate::error::WebError;
use bandwright::request::FitRequest;
use bandwright::Design;

/// The name the demo design carries.
pub const DEMO_NAME: &str = "Sensor anti-aliasing front end (demo)";

/// The committed demo design.
const DEMO_JSON: &str = include_str!("../../../examples/sensor-aa-rc-ladder-3rd.json");

/// The fit request of the demo, as a person would type it.
pub fn demo_request() -> FitRequest {
    let text = |s: &str| Some(s.to_string());
    FitRequest {
        response: text("lowpass"),
        alignment: text("critical"),
        order: text("3"),
        cutoff: text("1k"),
        source: text("100"),
        load: text("1M"),
        topology: text("rc"),
        resistors: text("E24"),
        capacitors: text("E12"),
        inductors: text("E12"),
        alternatives: text("5"),
        ..FitRequest::default()
    }
}

/// The demo design (the best alternative of [`demo_request`], under [`DEMO_NAME`]).
///
/// # Errors
/// Only if the committed file no longer reads, which a test rules out.
pub fn demo_design() -> Result<Design, WebError> {
    Ok(bandwright::parse_design(DEMO_JSON)?)
}

#[cfg(test)]
mod tests {
    use super::*;
    use bandwright::{Part, Source};

    #[test]
    fn the_demo_is_the_fit_of_its_request() {
        let design = demo_design().unwrap();
        assert_eq!(design.name, DEMO_NAME);
        assert_eq!(design.source, Source { node: "in".into(), resistance: 100.0, amplitude: 1.0 });
        assert_eq!(design.load.as_ref().and_then(|load| load.resistance), Some(1e6));
        let resolved = demo_request().resolve().unwrap();
        let fitted = bandwright::fit::fit(&resolved.requirement, resolved.topology, &resolved.options).unwrap();
        let best = &fitted.alternatives[0].design;
        assert_eq!(best.elements, design.elements, "refit the demo and commit the new file");
        assert_eq!((&best.source, &best.load, &best.output), (&design.source, &design.load, &design.output));
        let kinds: Vec<&str> = design
            .elements
            .iter()
            .map(|part| match part {
                Part::Capacitor { .. } => "C",
                Part::Resistor { .. } => "R",
                _ => "other",
            })
            .collect();
        assert_eq!(kinds, ["R", "C", "R", "C", "R", "C"]);
        // It is a valid design file and reads back as itself.
        assert_eq!(bandwright::parse_design(&design.to_json()).unwrap(), design);
    }

    #[test]
    fn the_demo_request_round_trips_as_json() {
        let json = serde_json::to_string(&demo_request()).unwrap();
        let back: FitRequest = serde_json::from_str(&json).unwrap();
        assert_eq!(back, demo_request());
    }
}
