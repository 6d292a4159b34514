//! The page's working state, without the browser: the working design (A), an optional ideal
//! target and an optional kept variant (B), the frequency grid, their sweeps, and the pointer
//! readout. The `Session` class in `lib.rs` wraps a [`Workbench`] and adds the canvas.
//!
//! Sweeps go through the core's `sweep_fast`, which uses the verified modal fast path where it
//! holds and LU otherwise. A track is swept again only when its design or the grid changed.
//! The readout solves each design exactly at the pointer's frequency (not interpolated), and
//! puts the phase on the branch of the plotted, unwrapped curve.

use crate::error::WebError;
use bandwright::notation::{format_quantity, Quantity as Unit};
use bandwright::sweep::{suggested_range, sweep_fast, FrequencyGrid, GridError, Spacing};
use bandwright::{AcSystem, Design, Detail, Part};
use bandwright_plot::{PanelLayout, Quantity, SeriesStyle};
use num_complex::Complex64;
use serde_json::{json, Value};
use std::fmt::Write as _;

/// Points of the default grid.
pub const DEFAULT_POINTS: usize = 500;
/// The most points the page may ask for (a sweep of more would stall the page).
pub const MAX_POINTS: usize = 20_000;

/// Which of the three designs a track is.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Role {
    /// The design being edited (A).
    Working,
    /// The ideal-value target.
    Ideal,
    /// The kept variant (B).
    Variant,
}

/// One design with its compiled system and, once swept, its curves.
#[derive(Debug, Clone)]
pub struct Track {
    /// The design.
    pub design: Design,
    system: AcSystem,
    curves: Option<Curves>,
}

/// A swept response as plain numbers, ready to plot.
#[derive(Debug, Clone, PartialEq)]
pub struct Curves {
    /// Frequencies in Hz.
    pub f_hz: Vec<f64>,
    /// 20·log10|H| in dB.
    pub magnitude_db: Vec<Option<f64>>,
    /// Unwrapped phase of H in degrees.
    pub phase_deg: Vec<Option<f64>>,
    /// Group delay in seconds.
    pub group_delay_s: Vec<Option<f64>>,
    /// Input impedance in Ω.
    pub input_impedance: Vec<Option<Complex64>>,
    /// |Z_in| in Ω.
    pub input_impedance_ohm: Vec<Option<f64>>,
}

/// The grid as the page set it: `None` fields follow the design.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
struct GridRequest {
    start_hz: Option<f64>,
    stop_hz: Option<f64>,
    points: Option<usize>,
}

/// The working state behind a `Session`.
#[derive(Debug, Clone)]
pub struct Workbench {
    working: Track,
    ideal: Option<Track>,
    variant: Option<Track>,
    grid_request: GridRequest,
    /// The design's own range, fixed when a design is set so that editing a part does not move
    /// the axes.
    auto_range_hz: (f64, f64),
    grid: FrequencyGrid,
    layout: Option<PanelLayout>,
    /// The last tolerance summary's bands (drawn only while they apply to the working design).
    tolerance: Option<crate::tolerance::ToleranceBands>,
}

impl Track {
    /// Reads and validates a design file.
    ///
    /// # Errors
    /// The core's design error.
    pub fn from_json(json: &str) -> Result<Self, WebError> {
        Self::new(bandwright::parse_design(json)?)
    }

    fn new(design: Design) -> Result<Self, WebError> {
        let (circuit, probe) = design.to_circuit()?;
        Ok(Self { design, system: AcSystem::new(&circuit, &probe), curves: None })
    }

    /// The curves of the last sweep, if swept since the last change.
    pub fn curves(&self) -> Option<&Curves> {
        self.curves.as_ref()
    }

    fn sweep(&mut self, grid: &FrequencyGrid) {
        let response = sweep_fast(&mut self.system, grid);
        let input_impedance = response.input_impedance();
        self.curves = Some(Curves {
            f_hz: response.frequencies().to_vec(),
            magnitude_db: response.magnitude_db(),
            phase_deg: response.phase_deg(),
            group_delay_s: response.group_delay_s(),
            input_impedance_ohm: input_impedance.iter().map(|z| z.map(|z| z.norm())).collect(),
            input_impedance,
        });
    }

    /// Solves at `f_hz` exactly; the phase goes on the branch of the swept curve nearest there.
    fn reading_at(&mut self, f_hz: f64) -> Reading {
        let Ok(solution) = self.system.solve_at(f_hz, Detail::Transfer) else {
            return Reading::default();
        };
        let principal = (solution.transfer.norm() > 0.0).then(|| solution.transfer.arg().to_degrees());
        let reference =
            self.curves.as_ref().and_then(|curves| nearest_index(&curves.f_hz, f_hz).and_then(|i| curves.phase_deg[i]));
        let phase_deg = match (principal, reference) {
            (Some(phase), Some(reference)) => Some(phase + 360.0 * ((reference - phase) / 360.0).round()),
            (phase, _) => phase,
        };
        Reading {
            magnitude_db: bandwright::response::magnitude_db(solution.transfer),
            phase_deg,
            group_delay_s: bandwright::response::group_delay_s(&solution),
            input_impedance_ohm: solution.input_impedance.map(|z| z.norm()),
            input_impedance_phase_deg: solution.input_impedance.map(|z| z.arg().to_degrees()),
        }
    }
}

/// The exact values of one design at one frequency.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Reading {
    /// dB.
    pub magnitude_db: Option<f64>,
    /// Degrees, on the plotted branch.
    pub phase_deg: Option<f64>,
    /// Seconds.
    pub group_delay_s: Option<f64>,
    /// |Z_in| in Ω.
    pub input_impedance_ohm: Option<f64>,
    /// arg Z_in in degrees.
    pub input_impedance_phase_deg: Option<f64>,
}

impl Reading {
    /// The value this reading has for a panel's quantity.
    pub fn value_for(&self, quantity: Quantity) -> Option<f64> {
        match quantity {
            Quantity::MagnitudeDb => self.magnitude_db,
            Quantity::PhaseDeg => self.phase_deg,
            Quantity::GroupDelayS => self.group_delay_s,
            Quantity::ImpedanceOhm => self.input_impedance_ohm,
            Quantity::ImpedancePhaseDeg => self.input_impedance_phase_deg,
        }
    }

    fn to_json(self) -> Value {
        json!({
            "magnitude_db": self.magnitude_db,
            "phase_deg": self.phase_deg,
            "group_delay_s": self.group_delay_s,
            "input_impedance_ohm": self.input_impedance_ohm,
            "input_impedance_phase_deg": self.input_impedance_phase_deg,
        })
    }
}

impl Role {
    /// The legend label of a track.
    pub fn legend(self) -> &'static str {
        match self {
            Role::Working => "A (working)",
            Role::Ideal => "ideal",
            Role::Variant => "B (kept)",
        }
    }

    /// The short label in the readout.
    pub fn short(self) -> &'static str {
        match self {
            Role::Working => "A",
            Role::Ideal => "ideal",
            Role::Variant => "B",
        }
    }

    /// How the plot layer draws the track.
    pub fn style(self) -> SeriesStyle {
        match self {
            Role::Working => SeriesStyle::Primary,
            Role::Ideal => SeriesStyle::Ideal,
            Role::Variant => SeriesStyle::Overlay,
        }
    }

    fn key(self) -> &'static str {
        match self {
            Role::Working => "working",
            Role::Ideal => "ideal",
            Role::Variant => "variant",
        }
    }
}

impl Workbench {
    /// Starts with `design_json` as the working design and the design's own grid.
    ///
    /// # Errors
    /// The core's design error.
    pub fn new(design_json: &str) -> Result<Self, WebError> {
        let working = Track::from_json(design_json)?;
        let auto_range_hz = design_range(&working);
        let grid_request = GridRequest::default();
        let grid = make_grid(grid_request, auto_range_hz)?;
        Ok(Self {
            working,
            ideal: None,
            variant: None,
            grid_request,
            auto_range_hz,
            grid,
            layout: None,
            tolerance: None,
        })
    }

    /// Replaces the working design; the ideal and the kept variant stay.
    ///
    /// # Errors
    /// The core's design error; the previous design stays.
    pub fn set_design(&mut self, design_json: &str) -> Result<(), WebError> {
        let working = Track::from_json(design_json)?;
        let auto_range_hz = design_range(&working);
        let grid = make_grid(self.grid_request, auto_range_hz)?;
        let grid_changed = grid != self.grid;
        self.working = working;
        self.auto_range_hz = auto_range_hz;
        self.grid = grid;
        if grid_changed {
            self.mark_all_stale();
        }
        Ok(())
    }

    /// Sets the value (SI units) of the working design's resistor, capacitor or inductor
    /// `reference`.
    ///
    /// # Errors
    /// No such part, a part without a settable value, or a value the circuit refuses (the core
    /// says which); the design stays as it was.
    pub fn set_part(&mut self, reference: &str, value: f64) -> Result<(), WebError> {
        let mut design = self.working.design.clone();
        let part = design.elements.iter_mut().find(|part| part.reference() == reference).ok_or_else(|| {
            let known: Vec<&str> = self.working.design.elements.iter().map(Part::reference).collect();
            WebError::general(format!("the design has no part {reference:?}; its parts are {}", known.join(", ")))
        })?;
        match part {
            Part::Resistor { value: slot, .. }
            | Part::Capacitor { value: slot, .. }
            | Part::Inductor { value: slot, .. } => {
                *slot = value;
            }
            _ => {
                return Err(WebError::general(format!(
                    "part {reference} is not a resistor, capacitor or inductor; only their values can be set here"
                )))
            }
        }
        self.working = Track::new(design)?;
        Ok(())
    }

    /// Sets or clears the ideal target.
    ///
    /// # Errors
    /// The core's design error; the previous ideal stays.
    pub fn set_ideal(&mut self, design_json: Option<&str>) -> Result<(), WebError> {
        self.ideal = design_json.map(Track::from_json).transpose()?;
        Ok(())
    }

    /// Keeps a copy of the working design (and its sweep) as the variant B.
    pub fn keep_variant(&mut self) {
        self.variant = Some(self.working.clone());
    }

    /// Drops the variant.
    pub fn clear_variant(&mut self) {
        self.variant = None;
    }

    /// Sets the grid; a `None` field follows the design (its suggested range, 500 points).
    ///
    /// # Errors
    /// `field start_hz`, `stop_hz` or `points`; the previous grid stays.
    pub fn set_grid(
        &mut self,
        start_hz: Option<f64>,
        stop_hz: Option<f64>,
        points: Option<f64>,
    ) -> Result<(), WebError> {
        let points = points
            .map(|n| {
                if n.fract() == 0.0 && (2.0..=MAX_POINTS as f64).contains(&n) {
                    Ok(n as usize)
                } else {
                    Err(WebError::at_field(
                        "points",
                        format!("{n} points is not accepted; give a whole number from 2 to {MAX_POINTS}"),
                    ))
                }
            })
            .transpose()?;
        let request = GridRequest { start_hz, stop_hz, points };
        let grid = make_grid(request, self.auto_range_hz)?;
        self.grid_request = request;
        if grid != self.grid {
            self.grid = grid;
            self.mark_all_stale();
        }
        Ok(())
    }

    /// The grid in use.
    pub fn grid(&self) -> &FrequencyGrid {
        &self.grid
    }

    /// Sweeps every track whose design or grid changed since its last sweep.
    pub fn sweep(&mut self) {
        let grid = &self.grid;
        let tracks = std::iter::once(&mut self.working).chain(self.ideal.as_mut()).chain(self.variant.as_mut());
        for track in tracks {
            if track.curves.is_none() {
                track.sweep(grid);
            }
        }
    }

    /// The swept tracks in legend order (working, ideal, variant), sweeping first if needed.
    pub fn swept(&mut self) -> Vec<(Role, &Curves)> {
        self.sweep();
        let mut out = Vec::new();
        for (role, track) in [
            (Role::Working, Some(&self.working)),
            (Role::Ideal, self.ideal.as_ref()),
            (Role::Variant, self.variant.as_ref()),
        ] {
            if let Some(curves) = track.and_then(Track::curves) {
                out.push((role, curves));
            }
        }
        out
    }

    /// Remembers where the panels were last drawn, for [`Workbench::readout`].
    pub fn set_layout(&mut self, layout: PanelLayout) {
        self.layout = Some(layout);
    }

    /// The readout at the pointer `(x_px, y_px)` (CSS pixels of the last drawn canvas): the
    /// frequency, the panel, each design's exact values there and their text. `None` off the
    /// plotting rectangles or before the first draw.
    pub fn readout(&mut self, x_px: f64, y_px: f64) -> Option<Value> {
        let panel = self.layout.as_ref()?.panel_at(x_px, y_px)?.clone();
        let f_hz = panel.frequency_at(x_px)?;
        self.sweep();
        let mut values = serde_json::Map::new();
        let mut formatted = vec![json!({"label": "f", "text": format_quantity(f_hz, Unit::Frequency, 4)})];
        for role in [Role::Working, Role::Ideal, Role::Variant] {
            let Some(track) = self.track_mut(role) else {
                values.insert(role.key().into(), Value::Null);
                continue;
            };
            let reading = track.reading_at(f_hz);
            values.insert(role.key().into(), reading.to_json());
            formatted.push(json!({"label": role.short(), "text": format_reading(reading.value_for(panel.quantity), panel.quantity)}));
        }
        Some(json!({
            "f_hz": f_hz,
            "panel": panel.quantity.name(),
            "pointer_value": panel.value_at(y_px),
            "values": values,
            "formatted": formatted,
        }))
    }

    /// The sweep as CSV: frequency, then magnitude, phase, group delay and Z_in (real and
    /// imaginary) of the working design, and the same for the ideal and the variant when set.
    /// Numbers in SI units with shortest round-trip digits; an unsolved point is an empty cell.
    pub fn sweep_csv(&mut self) -> String {
        let swept = self.swept();
        let mut out = String::from("frequency_hz");
        for (role, _) in &swept {
            let prefix = role.key();
            for column in ["magnitude_db", "phase_deg", "group_delay_s", "zin_re_ohm", "zin_im_ohm"] {
                let _ = write!(out, ",{prefix}_{column}");
            }
        }
        out.push_str("\r\n");
        let cell = |x: Option<f64>| x.filter(|v| v.is_finite()).map(|v| format!("{v:e}")).unwrap_or_default();
        let Some((_, first)) = swept.first() else { return out };
        for (i, f_hz) in first.f_hz.iter().enumerate() {
            let _ = write!(out, "{f_hz:e}");
            for (_, curves) in &swept {
                let z = curves.input_impedance[i];
                let _ = write!(
                    out,
                    ",{},{},{},{},{}",
                    cell(curves.magnitude_db[i]),
                    cell(curves.phase_deg[i]),
                    cell(curves.group_delay_s[i]),
                    cell(z.map(|z| z.re)),
                    cell(z.map(|z| z.im)),
                );
            }
            out.push_str("\r\n");
        }
        out
    }

    // ---- tolerance bands

    /// Keeps a tolerance summary's bands for drawing, or drops them with `None`.
    ///
    /// # Errors
    /// A summary that cannot be read; the previous bands stay.
    pub fn set_tolerance(&mut self, summary_json: Option<&str>) -> Result<(), WebError> {
        self.tolerance = summary_json.map(crate::tolerance::ToleranceBands::from_summary).transpose()?;
        Ok(())
    }

    /// The bands to draw: those of the last summary, while it is for the working design.
    pub fn tolerance_bands(&self) -> Option<&crate::tolerance::ToleranceBands> {
        self.tolerance.as_ref().filter(|bands| bands.applies_to(&self.working.design))
    }

    /// Whether bands are held, and whether they apply to the working design.
    pub fn tolerance_state(&self) -> crate::tolerance::BandState {
        use crate::tolerance::BandState;
        match &self.tolerance {
            None => BandState::None,
            Some(bands) if bands.applies_to(&self.working.design) => BandState::Shown,
            Some(_) => BandState::Stale,
        }
    }

    /// The working design.
    pub fn working(&self) -> &Design {
        &self.working.design
    }

    /// The kept variant (B), if any.
    pub fn variant(&self) -> Option<&Design> {
        self.variant.as_ref().map(|track| &track.design)
    }

    fn track_mut(&mut self, role: Role) -> Option<&mut Track> {
        match role {
            Role::Working => Some(&mut self.working),
            Role::Ideal => self.ideal.as_mut(),
            Role::Variant => self.variant.as_mut(),
        }
    }

    fn tracks_mut(&mut self) -> impl Iterator<Item = &mut Track> {
        std::iter::once(&mut self.working).chain(self.ideal.as_mut()).chain(self.variant.as_mut())
    }

    fn mark_all_stale(&mut self) {
        for track in self.tracks_mut() {
            track.curves = None;
        }
    }
}

fn design_range(track: &Track) -> (f64, f64) {
    suggested_range(track.system.circuit())
}

fn make_grid(request: GridRequest, auto_range_hz: (f64, f64)) -> Result<FrequencyGrid, WebError> {
    let start_hz = request.start_hz.unwrap_or(auto_range_hz.0);
    let stop_hz = request.stop_hz.unwrap_or(auto_range_hz.1);
    let points = request.points.unwrap_or(DEFAULT_POINTS);
    FrequencyGrid::log(start_hz, stop_hz, Spacing::Points(points)).map_err(|error| {
        let field = match &error {
            GridError::BadEdge { which: "start", .. } => "start_hz",
            GridError::BadEdge { .. } | GridError::Reversed { .. } => "stop_hz",
            _ => "points",
        };
        WebError::at_field(field, error.to_string())
    })
}

/// The index of the grid point nearest `f_hz` in ratio.
fn nearest_index(f_hz: &[f64], target: f64) -> Option<usize> {
    if f_hz.is_empty() || !(target.is_finite() && target > 0.0) {
        return None;
    }
    let above = f_hz.partition_point(|&f| f < target);
    match (above.checked_sub(1), (above < f_hz.len()).then_some(above)) {
        (Some(below), Some(above)) => Some(if f_hz[above] / target < target / f_hz[below] { above } else { below }),
        (below, above) => below.or(above),
    }
}

/// A value of a panel's quantity as the readout shows it.
pub fn format_reading(value: Option<f64>, quantity: Quantity) -> String {
    let Some(value) = value.filter(|v| v.is_finite()) else {
        return "—".to_string();
    };
    match quantity {
        Quantity::MagnitudeDb => format!("{value:.2} dB"),
        Quantity::PhaseDeg | Quantity::ImpedancePhaseDeg => format!("{value:.1}°"),
        Quantity::GroupDelayS => format_quantity(value, Unit::Time, 3),
        Quantity::ImpedanceOhm => format_quantity(value, Unit::Resistance, 3),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use bandwright_plot::PanelGeometry;
    use std::f64::consts::PI;

    /// RC low-pass, 1 kΩ and 100 nF from an ideal source, open output: fc = 1/(2πRC) = 1591.5 Hz.
    const RC: &str = r#"{"format": "bandwright-design", "version": 1, "name": "rc",
        "source": {"node": "in", "resistance": 0}, "output": "out",
        "elements": [{"ref": "R1", "kind": "resistor", "value": "1k", "nodes": ["in", "out"]},
                     {"ref": "C1", "kind": "capacitor", "value": "100n", "nodes": ["out", "0"]}]}"#;

    fn rc_with(r: f64) -> String {
        RC.replace("\"1k\"", &r.to_string())
    }

    /// H = 1/(1 + jωRC) (common practice: the first-order RC low-pass).
    fn rc_transfer(f_hz: f64, r: f64, c: f64) -> Complex64 {
        Complex64::new(1.0, 0.0) / Complex64::new(1.0, 2.0 * PI * f_hz * r * c)
    }

    fn layout_for(quantity: Quantity, f_range_hz: (f64, f64)) -> PanelLayout {
        PanelLayout {
            panels: vec![PanelGeometry {
                quantity,
                plot_px: (100, 10, 600, 210),
                f_range_hz,
                y_range: (-60.0, 0.0),
                y_log: false,
            }],
        }
    }

    #[test]
    fn the_sweep_matches_the_closed_form() {
        let mut bench = Workbench::new(RC).unwrap();
        bench.set_grid(Some(10.0), Some(1e5), Some(41.0)).unwrap();
        let swept = bench.swept();
        assert_eq!(swept.len(), 1);
        let curves = swept[0].1;
        assert_eq!(curves.f_hz.len(), 41);
        for (i, &f) in curves.f_hz.iter().enumerate() {
            let h = rc_transfer(f, 1e3, 100e-9);
            let db = 20.0 * h.norm().log10();
            assert!((curves.magnitude_db[i].unwrap() - db).abs() < 1e-9, "{f} Hz");
            // τ = RC/(1 + (ωRC)²) for the first-order low-pass (common practice).
            let omega_rc = 2.0 * PI * f * 1e-4;
            let tau = 1e-4 / (1.0 + omega_rc * omega_rc);
            assert!((curves.group_delay_s[i].unwrap() - tau).abs() < 1e-9 * tau + 1e-15, "{f} Hz");
        }
    }

    #[test]
    fn editing_a_part_resweeps_only_the_working_design() {
        let mut bench = Workbench::new(RC).unwrap();
        bench.set_ideal(Some(RC)).unwrap();
        bench.sweep();
        bench.keep_variant();
        bench.set_part("R1", 2200.0).unwrap();
        let swept = bench.swept();
        let roles: Vec<Role> = swept.iter().map(|(role, _)| *role).collect();
        assert_eq!(roles, [Role::Working, Role::Ideal, Role::Variant]);
        let last = swept[0].1.f_hz.len() - 1;
        // At the top of the grid the working design (2.2 kΩ) is lower than the kept 1 kΩ.
        assert!(swept[0].1.magnitude_db[last].unwrap() < swept[2].1.magnitude_db[last].unwrap() - 5.0);
        assert_eq!(swept[1].1, swept[2].1);
        // The axes did not move with the edit.
        assert_eq!(bench.grid().frequencies()[0], Workbench::new(RC).unwrap().grid().frequencies()[0]);
    }

    #[test]
    fn bad_edits_keep_the_design_and_say_why() {
        let mut bench = Workbench::new(RC).unwrap();
        let missing = bench.set_part("R9", 10.0).unwrap_err().to_string();
        assert!(missing.contains("no part \"R9\"") && missing.contains("R1, C1"), "{missing}");
        let negative = bench.set_part("R1", -5.0).unwrap_err().to_string();
        assert!(negative.contains("R1"), "{negative}");
        assert_eq!(bench.working(), &bandwright::parse_design(RC).unwrap());
        assert!(bench.set_design("{").is_err());
        assert_eq!(bench.working(), &bandwright::parse_design(RC).unwrap());
    }

    #[test]
    fn bad_grids_name_their_field_and_keep_the_grid() {
        let mut bench = Workbench::new(RC).unwrap();
        let before = bench.grid().clone();
        for (start, stop, points, field) in [
            (Some(0.0), None, None, "field start_hz: "),
            (Some(1e3), Some(10.0), None, "field stop_hz: "),
            (None, None, Some(1.0), "field points: "),
            (None, None, Some(2.5), "field points: "),
            (None, None, Some(1e9), "field points: "),
        ] {
            let error = bench.set_grid(start, stop, points).unwrap_err().to_string();
            assert!(error.starts_with(field), "{error}");
            assert_eq!(bench.grid(), &before);
        }
        bench.set_grid(None, None, Some(2.0)).unwrap();
        assert_eq!(bench.grid().len(), 2);
        bench.set_grid(None, None, None).unwrap();
        assert_eq!(bench.grid().len(), DEFAULT_POINTS);
    }

    #[test]
    fn the_readout_solves_exactly_at_the_pointer() {
        let mut bench = Workbench::new(RC).unwrap();
        bench.set_ideal(Some(&rc_with(1500.0))).unwrap();
        assert_eq!(bench.readout(300.0, 100.0), None, "no layout yet");
        bench.set_layout(layout_for(Quantity::MagnitudeDb, (10.0, 1e5)));
        assert_eq!(bench.readout(50.0, 100.0), None, "left of the plot");
        // The middle column of 10 Hz … 100 kHz is 1 kHz.
        let reading = bench.readout(350.0, 110.0).unwrap();
        let f_hz = reading["f_hz"].as_f64().unwrap();
        assert!((f_hz - 1000.0).abs() < 1e-9);
        assert_eq!(reading["panel"], "magnitude");
        for (key, r) in [("working", 1000.0), ("ideal", 1500.0)] {
            let expected = 20.0 * rc_transfer(f_hz, r, 100e-9).norm().log10();
            let got = reading["values"][key]["magnitude_db"].as_f64().unwrap();
            assert!((got - expected).abs() < 1e-9, "{key}: {got} vs {expected}");
        }
        assert_eq!(reading["values"]["variant"], Value::Null);
        let texts: Vec<(&str, &str)> = reading["formatted"]
            .as_array()
            .unwrap()
            .iter()
            .map(|e| (e["label"].as_str().unwrap(), e["text"].as_str().unwrap()))
            .collect();
        assert_eq!(texts[0], ("f", "1.000 kHz"));
        let working_db = reading["values"]["working"]["magnitude_db"].as_f64().unwrap();
        assert_eq!(texts[1], ("A", format!("{working_db:.2} dB").as_str()));
        assert!(texts[1].1.starts_with("-1.4"), "{texts:?}");
        assert_eq!(texts[2].0, "ideal");
        // Halfway up the 0 … −60 dB axis.
        assert!((reading["pointer_value"].as_f64().unwrap() + 30.0).abs() < 1e-9);
    }

    #[test]
    fn the_readout_phase_is_on_the_plotted_branch() {
        // Three RC sections in cascade reach −270° at high frequency; the principal value would
        // jump to +90°.
        let cascade = r#"{"format": "bandwright-design", "version": 1, "name": "rc3",
            "source": {"node": "in", "resistance": 0}, "output": "c",
            "elements": [{"ref": "R1", "kind": "resistor", "value": "1k", "nodes": ["in", "a"]},
                         {"ref": "C1", "kind": "capacitor", "value": "100n", "nodes": ["a", "0"]},
                         {"ref": "R2", "kind": "resistor", "value": "10k", "nodes": ["a", "b"]},
                         {"ref": "C2", "kind": "capacitor", "value": "10n", "nodes": ["b", "0"]},
                         {"ref": "R3", "kind": "resistor", "value": "100k", "nodes": ["b", "c"]},
                         {"ref": "C3", "kind": "capacitor", "value": "1n", "nodes": ["c", "0"]}]}"#;
        let mut bench = Workbench::new(cascade).unwrap();
        bench.set_grid(Some(10.0), Some(1e6), None).unwrap();
        bench.set_layout(layout_for(Quantity::PhaseDeg, (10.0, 1e6)));
        let reading = bench.readout(600.0, 100.0).unwrap();
        let phase = reading["values"]["working"]["phase_deg"].as_f64().unwrap();
        let curves = &bench.swept()[0].1;
        let plotted = curves.phase_deg[curves.phase_deg.len() - 1].unwrap();
        assert!(phase < -180.0, "{phase}");
        assert!((phase - plotted).abs() < 1e-6, "{phase} vs {plotted}");
    }

    #[test]
    fn sweep_csv_has_one_row_per_point_and_exact_numbers() {
        let mut bench = Workbench::new(RC).unwrap();
        bench.set_grid(Some(100.0), Some(1e4), Some(3.0)).unwrap();
        bench.keep_variant();
        let csv = bench.sweep_csv();
        let rows: Vec<&str> = csv.trim_end().split("\r\n").collect();
        assert_eq!(rows.len(), 4);
        assert!(rows[0].starts_with("frequency_hz,working_magnitude_db,working_phase_deg"));
        assert!(rows[0].ends_with(",variant_zin_im_ohm"));
        let cells: Vec<&str> = rows[2].split(',').collect();
        assert_eq!(cells.len(), 11);
        // The frequency column gives the grid's own number back exactly.
        let f_hz = bench.grid().frequencies()[1];
        assert!((f_hz - 1000.0).abs() < 1e-9);
        assert_eq!(cells[0].parse::<f64>().unwrap(), f_hz);
        let expected = 20.0 * rc_transfer(f_hz, 1e3, 100e-9).norm().log10();
        assert!((cells[1].parse::<f64>().unwrap() - expected).abs() < 1e-9);
    }

    #[test]
    fn nearest_index_is_by_ratio() {
        let f = [10.0, 100.0, 1000.0];
        assert_eq!(nearest_index(&f, 31.0), Some(0));
        assert_eq!(nearest_index(&f, 32.0), Some(1));
        assert_eq!(nearest_index(&f, 5.0), Some(0));
        assert_eq!(nearest_index(&f, 5e3), Some(2));
        assert_eq!(nearest_index(&f, f64::NAN), None);
    }
}
