//! The parts list of a design as CSV (RFC 4180), for ordering and for spreadsheets.
//!
//! One row per element, with the value in SI units (exact, shortest round-trip digits) and as
//! the core writes it. Every text cell is quoted. A cell that a spreadsheet would run as a
//! formula (it starts with `=`, `+`, `-`, `@`, a tab or a carriage return) gets a leading `'`,
//! the usual defence against CSV formula injection (OWASP, "CSV Injection"), because references
//! and node names come from files and links.

use bandwright::notation::{format_quantity, Quantity};
use bandwright::{Design, Part};
use std::fmt::Write as _;

/// The header row.
pub const HEADER: &str = "ref,kind,value,value_si,unit,node_a,node_b,series_resistance_ohm";

/// Writes the parts list of `design`.
pub fn parts_csv(design: &Design) -> String {
    let mut out = String::from(HEADER);
    out.push_str("\r\n");
    for part in &design.elements {
        let (kind, value, quantity, series_resistance) = match part {
            Part::Resistor { value, .. } => ("resistor", *value, Quantity::Resistance, None),
            Part::Capacitor { value, series_resistance, .. } => {
                ("capacitor", *value, Quantity::Capacitance, *series_resistance)
            }
            Part::Inductor { value, series_resistance, .. } => {
                ("inductor", *value, Quantity::Inductance, *series_resistance)
            }
            Part::VoltageSource { value, series_resistance, .. } => {
                ("voltage_source", *value, Quantity::Voltage, *series_resistance)
            }
            Part::CurrentSource { value, .. } => ("current_source", *value, Quantity::Current, None),
            Part::Vcvs { gain, .. } => ("vcvs", *gain, Quantity::Ratio, None),
        };
        let [node_a, node_b] = part.nodes();
        let _ = write!(
            out,
            "{},{},{},{:e},{},{},{},{}\r\n",
            cell(part.reference()),
            cell(kind),
            cell(&format_quantity(value, quantity, 4)),
            value,
            cell(quantity.unit_symbol()),
            cell(node_a),
            cell(node_b),
            series_resistance.map(|r| format!("{r:e}")).unwrap_or_default(),
        );
    }
    out
}

/// One quoted text cell, defused against formula injection.
fn cell(text: &str) -> String {
    let defused =
        if text.starts_with(['=', '+', '-', '@', '\t', '\r']) { format!("'{text}") } else { text.to_string() };
    format!("\"{}\"", defused.replace('"', "\"\""))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn design(elements: &str) -> Design {
        let text = format!(
            r#"{{"format": "bandwright-design", "version": 1, "name": "t", "source": {{"node": "in", "resistance": 50}},
                "output": "out", "elements": [{elements}]}}"#
        );
        bandwright::parse_design(&text).unwrap()
    }

    #[test]
    fn one_row_per_part_with_exact_and_written_values() {
        let csv = parts_csv(&design(
            r#"{"ref": "R1", "kind": "resistor", "value": "4k7", "nodes": ["in", "out"]},
               {"ref": "C1", "kind": "capacitor", "value": "100n", "nodes": ["out", "0"], "series_resistance": 0.05}"#,
        ));
        let rows: Vec<&str> = csv.split("\r\n").collect();
        assert_eq!(rows[0], HEADER);
        assert_eq!(rows[1], "\"R1\",\"resistor\",\"4.700 kΩ\",4.7e3,\"Ω\",\"in\",\"out\",");
        assert_eq!(rows[2], "\"C1\",\"capacitor\",\"100.0 nF\",1e-7,\"F\",\"out\",\"0\",5e-2");
        assert_eq!(rows[3], "");
        assert_eq!(rows.len(), 4);
        // The SI column reads back exactly.
        assert_eq!("1e-7".parse::<f64>().unwrap(), 100e-9);
    }

    #[test]
    fn quotes_and_formulas_in_names_are_defused() {
        let csv = parts_csv(&design(
            r#"{"ref": "=HYPERLINK(\"x\")", "kind": "resistor", "value": 10, "nodes": ["in", "out"]},
               {"ref": "R,2", "kind": "resistor", "value": 10, "nodes": ["out", "-n"]},
               {"ref": "R3", "kind": "resistor", "value": 10, "nodes": ["-n", "0"]}"#,
        ));
        let rows: Vec<&str> = csv.split("\r\n").collect();
        assert!(rows[1].starts_with("\"'=HYPERLINK(\"\"x\"\")\",\"resistor\""), "{}", rows[1]);
        assert!(rows[2].starts_with("\"R,2\",") && rows[2].contains(",\"'-n\","), "{}", rows[2]);
    }
}
