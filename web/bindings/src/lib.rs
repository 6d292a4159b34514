//! Bandwright browser bindings: the `#[wasm_bindgen]` exports the page calls, and nothing else.
//!
//! The bindings are thin. They read JSON strings and numbers from JS, call the core
//! (`bandwright`) and the plot layer (`bandwright-plot`), and hand back JSON strings, numbers and
//! drawings. Every error becomes a thrown JS `Error` whose message is the core's text; an error
//! about a field of the fit request or of the grid starts with `field <name>: ` (see [`error`]).
//! The structs here are the bindings' own; no core type crosses to JS.
//!
//! Exports (the contract with web/app.js): `version`, `demo_design`, `demo_request`, `fit`,
//! `check_design`, `parse_value`, `format_value`, `step_value`, `share_encode`, `share_decode`,
//! `parts_csv`, `cautions`, `schematic`, `fit_by_yield` and the class `Session`; for tolerance
//! runs, `parse_tolerance` and the class `TolerancePlanner` (see [`tolerance`]); for the
//! crossover workspace (module [`crossover`]) `demo_crossover`, `check_crossover`,
//! `crossover_ways`, `read_impedance_csv` and the class `CrossoverBench`; for the time-response
//! card, the spec mask and the converter front end: `mask_from_form`, `check_mask`,
//! `mask_orders`, `front_end_plan`, `front_end_demo` and the `Session` methods
//! `set_time_options`, `time_summary`, `draw_time`, `time_readout`, `time_svg`, `set_mask` and
//! `mask_report`.
//!
//! Everything but the canvas is plain Rust and unit-tested natively (`cargo test -p
//! bandwright-web`); the `#[wasm_bindgen]` wrappers below only convert.

pub mod error;

pub mod values;

pub mod demo;

pub mod parts;

pub mod schematic;

pub mod session;

pub mod chart;

pub mod canvas;

pub mod tolerance;

pub mod yield_fit;

pub mod crossover;

// The time-response card, spec masks and the converter front end.
pub mod time;

pub mod limits;

pub mod front_end;

use error::WebError;
use plotters::prelude::IntoDrawingArea;
use wasm_bindgen::prelude::*;

/// Returns the version of this build of Bandwright.
#[wasm_bindgen]
pub fn version() -> String {
    env!("CARGO_PKG_VERSION").to_string()
}

/// Returns the demo design's file (JSON): the best fit of [`demo_request`], under the demo's
/// own name.
#[wasm_bindgen]
pub fn demo_design() -> Result<String, JsError> {
    Ok(demo::demo_design().map_err(js)?.to_json())
}

/// Returns the fit request (JSON) that produced the demo design.
#[wasm_bindgen]
pub fn demo_request() -> String {
    serde_json::to_string_pretty(&demo::demo_request()).expect("a fit request always serializes")
}

/// Fits a requirement to standard parts and returns the core's fit result as JSON.
///
/// `request_json` is the core's `FitRequest`: every field as typed (text), plus `combine` and
/// `stock`. Errors about a field start with `field <name>: `.
#[wasm_bindgen]
pub fn fit(request_json: &str) -> Result<String, JsError> {
    fit_json(request_json).map_err(js)
}

/// Fits a requirement, then ranks a widened field of candidates by their yield against a spec
/// mask over a seeded Monte Carlo run, and returns the ranked fit as JSON (the fit's fields, and
/// `yield` on each alternative and `yield_run`). `run_json` is `{trials, seed, distribution}`.
///
/// Errors about a field start with `field <name>: ` (`yield_trials`, `yield_seed`,
/// `yield_distribution`, or a field of the request).
#[wasm_bindgen]
pub fn fit_by_yield(request_json: &str, mask_json: &str, run_json: &str) -> Result<String, JsError> {
    yield_fit::fit_by_yield_json(request_json, mask_json, run_json).map_err(js)
}

/// Reads and validates a design file; returns it normalised (SI numbers, pretty JSON).
#[wasm_bindgen]
pub fn check_design(design_json: &str) -> Result<String, JsError> {
    Ok(bandwright::parse_design(design_json).map_err(WebError::from).map_err(js)?.to_json())
}

/// Reads a value in engineering notation ("4k7", "100n", "2.2 µF") as `quantity`
/// ("resistance", "capacitance", "inductance", "frequency", "ratio", "time" or "voltage").
#[wasm_bindgen]
pub fn parse_value(text: &str, quantity: &str) -> Result<f64, JsError> {
    values::parse_value(text, quantity).map_err(js)
}

/// Writes a value as the core does, with an SI prefix and the unit ("4.70 kΩ").
#[wasm_bindgen]
pub fn format_value(value: f64, quantity: &str) -> Result<String, JsError> {
    values::format_value(value, quantity).map_err(js)
}

/// Returns the next standard value above (`direction` +1) or below (−1) `value` in `series`:
/// an E-series name ("E12") or the text of a stock list.
#[wasm_bindgen]
pub fn step_value(value: f64, series: &str, direction: f64) -> Result<f64, JsError> {
    let direction = values::direction_from(direction).map_err(js)?;
    values::step_value(value, series, direction).map_err(js)
}

/// Packs a design into share text for a URL fragment.
#[wasm_bindgen]
pub fn share_encode(design_json: &str) -> Result<String, JsError> {
    let design = bandwright::parse_design(design_json).map_err(WebError::from).map_err(js)?;
    Ok(bandwright::share::encode_share(&design))
}

/// Reads share text (or a whole `#…` fragment) back into a design file (JSON).
#[wasm_bindgen]
pub fn share_decode(text: &str) -> Result<String, JsError> {
    Ok(bandwright::share::decode_share(text).map_err(WebError::from).map_err(js)?.to_json())
}

/// Returns the parts list of a design as CSV.
#[wasm_bindgen]
pub fn parts_csv(design_json: &str) -> Result<String, JsError> {
    let design = bandwright::parse_design(design_json).map_err(WebError::from).map_err(js)?;
    Ok(parts::parts_csv(&design))
}

/// Returns the safety cautions as a JSON array of `{title, text}`.
#[wasm_bindgen]
pub fn cautions() -> String {
    cautions_json()
}

/// Returns the circuit drawing of a design: `{width, height, primitives: [...]}` (see
/// [`schematic`]).
#[wasm_bindgen]
pub fn schematic(design_json: &str) -> Result<String, JsError> {
    let design = bandwright::parse_design(design_json).map_err(WebError::from).map_err(js)?;
    Ok(serde_json::to_string(&schematic::layout(&design)).expect("a drawing always serializes"))
}

/// The working state of the page: the working design, an optional ideal and kept variant, the
/// grid and their sweeps; it draws the plots and answers the pointer readout.
#[wasm_bindgen]
pub struct Session {
    bench: session::Workbench,
    /// The time-response card's options, cached responses and layout.
    time: time::TimeCard,
    /// The spec mask drawn on the plots and checked, if one is set.
    mask: Option<bandwright::mask::SpecMask>,
    /// The last mask check, for the design it was made on.
    mask_check: Option<(bandwright::Design, limits::MaskCheck)>,
}

#[wasm_bindgen]
impl Session {
    /// Starts a session on a design file (JSON).
    #[wasm_bindgen(constructor)]
    pub fn new(design_json: &str) -> Result<Session, JsError> {
        Ok(Session {
            bench: session::Workbench::new(design_json).map_err(js)?,
            time: time::TimeCard::default(),
            mask: None,
            mask_check: None,
        })
    }

    /// Replaces the working design; the ideal and the kept variant stay.
    pub fn set_design(&mut self, design_json: &str) -> Result<(), JsError> {
        self.bench.set_design(design_json).map_err(js)
    }

    /// Sets one part's value, in SI units.
    pub fn set_part(&mut self, reference: &str, value: f64) -> Result<(), JsError> {
        self.bench.set_part(reference, value).map_err(js)
    }

    /// Sets the ideal target (a design file), or clears it with `null`.
    pub fn set_ideal(&mut self, design_json: Option<String>) -> Result<(), JsError> {
        self.bench.set_ideal(design_json.as_deref()).map_err(js)
    }

    /// Keeps the working design as the variant B, drawn behind A.
    pub fn keep_variant(&mut self) {
        self.bench.keep_variant();
    }

    /// Drops the variant B.
    pub fn clear_variant(&mut self) {
        self.bench.clear_variant();
    }

    /// Sets the log grid; `null` for a field follows the design (its range, 500 points).
    pub fn set_grid(
        &mut self,
        start_hz: Option<f64>,
        stop_hz: Option<f64>,
        points: Option<f64>,
    ) -> Result<(), JsError> {
        self.bench.set_grid(start_hz, stop_hz, points).map_err(js)
    }

    /// Sweeps what changed (the verified fast path where it holds).
    pub fn sweep(&mut self) {
        self.bench.sweep();
    }

    /// Draws magnitude, phase, group delay and |Z_in| onto `canvas`, crisp at the device pixel
    /// ratio; `theme` is "light" or "dark".
    pub fn draw(&mut self, canvas: &web_sys::HtmlCanvasElement, theme: &str) -> Result<(), JsError> {
        let theme = chart::theme_named(theme).map_err(js)?;
        let area = canvas::HidpiCanvas::new(canvas).map_err(js)?.into_drawing_area();
        let regions = self.mask_regions();
        let layout = chart::draw(&area, &mut self.bench, theme, &regions).map_err(js)?;
        self.bench.set_layout(layout);
        Ok(())
    }

    /// The readout at a pointer position in CSS pixels of the last drawn canvas, as JSON
    /// (`{f_hz, panel, pointer_value, values, formatted}`), or `null` off the plots.
    pub fn readout(&mut self, x_css_px: f64, y_css_px: f64) -> String {
        match self.bench.readout(x_css_px, y_css_px) {
            Some(reading) => reading.to_string(),
            None => "null".to_string(),
        }
    }

    /// The sweep as CSV.
    pub fn sweep_csv(&mut self) -> String {
        self.bench.sweep_csv()
    }

    /// Shades a tolerance summary ([`TolerancePlanner::summarize`]) on the magnitude, phase and
    /// group-delay panels while it applies to the working design; `null` removes it.
    pub fn set_tolerance(&mut self, summary_json: Option<String>) -> Result<(), JsError> {
        self.bench.set_tolerance(summary_json.as_deref()).map_err(js)
    }

    /// "none", "shown", or "stale" (the design changed since the run; the bands are not drawn).
    pub fn tolerance_state(&self) -> String {
        self.bench.tolerance_state().name().to_string()
    }

    /// The frequencies of the grid in use, in Hz (what a tolerance run should use).
    pub fn frequencies(&self) -> Vec<f64> {
        self.bench.grid().frequencies().to_vec()
    }

    /// The plot as an SVG document.
    pub fn plot_svg(&mut self, width: u32, height: u32, theme: &str) -> Result<String, JsError> {
        let theme = chart::theme_named(theme).map_err(js)?;
        let regions = self.mask_regions();
        chart::svg(&mut self.bench, width, height, theme, &regions).map_err(js)
    }

    // ------------------------------------------------ time-response card

    /// Sets the time-response options (JSON of `time::TimeRequest`: kind, span, points, settle,
    /// settle_percent, bits); errors name the field and keep the previous options.
    pub fn set_time_options(&mut self, options_json: &str) -> Result<(), JsError> {
        self.time.set_options(options_json).map_err(js)
    }

    /// The step (or impulse) figures of the working design and the kept variant, as JSON.
    pub fn time_summary(&mut self) -> String {
        self.time.summary(self.bench.working(), self.bench.variant()).to_string()
    }

    /// Draws the time response onto `canvas` (HiDPI), "light" or "dark".
    pub fn draw_time(&mut self, canvas: &web_sys::HtmlCanvasElement, theme: &str) -> Result<(), JsError> {
        let theme = chart::theme_named(theme).map_err(js)?;
        let area = canvas::HidpiCanvas::new(canvas).map_err(js)?.into_drawing_area();
        self.time.draw(&area, self.bench.working(), self.bench.variant(), theme).map_err(js)
    }

    /// The time readout at a pointer position (CSS px of the last drawn time canvas), or `null`.
    pub fn time_readout(&self, x_css_px: f64, y_css_px: f64) -> String {
        self.time.readout(x_css_px, y_css_px).map_or_else(|| "null".to_string(), |v| v.to_string())
    }

    /// The time response as an SVG document.
    pub fn time_svg(&mut self, width: u32, height: u32, theme: &str) -> Result<String, JsError> {
        let theme = chart::theme_named(theme).map_err(js)?;
        time_svg_of(&mut self.time, &self.bench, width, height, theme).map_err(js)
    }

    // ------------------------------------------------ spec mask

    /// Sets the spec mask (the core's `SpecMask` JSON) drawn on the plots, or clears it with `null`.
    pub fn set_mask(&mut self, mask_json: Option<String>) -> Result<(), JsError> {
        self.mask = mask_json.as_deref().map(limits::read_mask).transpose().map_err(js)?;
        self.mask_check = None;
        Ok(())
    }

    /// The working design checked against the mask, as JSON (`null` without a mask).
    pub fn mask_report(&mut self) -> String {
        match self.checked() {
            Some(check) => limits::report_json(check).to_string(),
            None => "null".to_string(),
        }
    }
}

impl Session {
    /// The mask check of the working design, made again only when the design changed.
    fn checked(&mut self) -> Option<&limits::MaskCheck> {
        let mask = self.mask.as_ref()?;
        let working = self.bench.working();
        if self.mask_check.as_ref().is_none_or(|(design, _)| design != working) {
            self.mask_check = Some((working.clone(), limits::check_design(mask, working)));
        }
        self.mask_check.as_ref().map(|(_, check)| check)
    }

    fn mask_regions(&mut self) -> Vec<(bandwright_plot::Quantity, bandwright_plot::Region)> {
        self.checked().map(|check| check.regions.clone()).unwrap_or_default()
    }
}

/// The time chart as SVG (behind [`Session::time_svg`]).
///
/// # Errors
/// A size outside 1 … [`chart::MAX_SVG_SIDE`], the core's transient error or the plot layer's.
pub fn time_svg_of(
    card: &mut time::TimeCard,
    bench: &session::Workbench,
    width: u32,
    height: u32,
    theme: bandwright_plot::Theme,
) -> Result<String, WebError> {
    chart::svg_document(width, height, |area| card.draw(area, bench.working(), bench.variant(), theme).map(|_| ()))
}

/// Reads the mask editor's fields (JSON of `limits::MaskForm`) into the core's `SpecMask` JSON.
/// Errors name the field (`field passband_edge: …`).
#[wasm_bindgen]
pub fn mask_from_form(form_json: &str) -> Result<String, JsError> {
    let form: limits::MaskForm = serde_json::from_str(form_json)
        .map_err(|e| JsError::new(&format!("the mask fields are not valid JSON: {e}")))?;
    let mask = form.resolve().map_err(js)?;
    Ok(serde_json::to_string(&mask).expect("a mask always serializes"))
}

/// Validates a stored mask (the core's `SpecMask` JSON) and returns it normalised.
#[wasm_bindgen]
pub fn check_mask(mask_json: &str) -> Result<String, JsError> {
    let mask = limits::read_mask(mask_json).map_err(js)?;
    Ok(serde_json::to_string(&mask).expect("a mask always serializes"))
}

/// The minimum order per alignment for a mask, with the requirement each puts into the sentence
/// (see `limits::orders_json`).
#[wasm_bindgen]
pub fn mask_orders(mask_json: &str) -> Result<String, JsError> {
    let mask = limits::read_mask(mask_json).map_err(js)?;
    Ok(limits::orders_json(&mask).map_err(js)?.to_string())
}

/// Plans the converter front end from its inputs (JSON of `front_end::FrontEndRequest`): the
/// core's report, rows to show and the fit request for the fit flow.
#[wasm_bindgen]
pub fn front_end_plan(request_json: &str) -> Result<String, JsError> {
    Ok(front_end::plan_json(request_json).map_err(js)?.to_string())
}

/// The demo inputs of the front-end panel (JSON).
#[wasm_bindgen]
pub fn front_end_demo() -> String {
    let request = front_end::demo_request();
    serde_json::json!({
        "fs": request.fs, "band": request.band, "bits": request.bits, "rule": request.rule,
        "attenuation": request.attenuation, "alias": request.alias, "droop": request.droop,
        "source": request.source, "full_scale": request.full_scale, "cs": request.cs,
        "rsw": request.rsw, "tacq": request.tacq, "realization": request.realization,
        "resistors": request.resistors, "capacitors": request.capacitors,
    })
    .to_string()
}

// ---------------------------------------------------------------- tolerance runs

/// Reads a tolerance as typed ("1", "0.5 %") into a percentage from 0 to 100.
#[wasm_bindgen]
pub fn parse_tolerance(text: &str) -> Result<f64, JsError> {
    tolerance::parse_tolerance_pct(text).map_err(js)
}

/// A compiled tolerance run. The page makes one per worker (and one on the main thread for the
/// summary); each runs trial ranges, and the main one takes the batches and summarises them.
#[wasm_bindgen]
pub struct TolerancePlanner {
    planner: tolerance::Planner,
}

#[wasm_bindgen]
impl TolerancePlanner {
    /// Compiles a run of a design file with the page's options (JSON: `trials`, `seed`, `band`
    /// as typed, `distribution`, `corners`, `tolerances` by reference in percent, and the grid
    /// `f_hz`). Errors about an option start with `field <name>: `.
    #[wasm_bindgen(constructor)]
    pub fn new(design_json: &str, options_json: &str) -> Result<TolerancePlanner, JsError> {
        Ok(TolerancePlanner { planner: tolerance::Planner::new(design_json, options_json).map_err(js)? })
    }

    /// The run and its varied parts (JSON).
    pub fn describe(&self) -> String {
        self.planner.describe().to_string()
    }

    /// Runs trials `first..end` and returns them as one flat `Float64Array` (transferable).
    pub fn run_trials(&self, first: u32, end: u32) -> Vec<f64> {
        self.planner.run_trials(first as usize, end as usize)
    }

    /// Evaluates the worst-case corners, flat.
    pub fn run_corners(&self) -> Vec<f64> {
        self.planner.run_corners()
    }

    /// Takes a flat batch for the summary.
    pub fn add_batch(&mut self, data: &[f64]) -> Result<(), JsError> {
        self.planner.add_batch(data).map_err(js)
    }

    /// How many trials have been handed in.
    pub fn trials_done(&self) -> u32 {
        u32::try_from(self.planner.trials_done()).unwrap_or(u32::MAX)
    }

    /// The summary (JSON) with the yield against `mask_json` (a spec mask) when given.
    pub fn summarize(&self, mask_json: Option<String>) -> Result<String, JsError> {
        Ok(self.planner.summarize(mask_json.as_deref()).map_err(js)?.to_string())
    }
}

// ---------------------------------------------------------------- crossover workspace

/// Returns the demo crossover as `{"file": <crossover file>, "csv": {name: text}}` (our own
/// scenario, examples/crossover/crossover-2way-lr4.json with its invented impedance CSV).
#[wasm_bindgen]
pub fn demo_crossover() -> String {
    crossover::demo_json()
}

/// Reads, checks and designs a crossover file with the CSV texts it names (`csv_json`: a JSON
/// object of name → text); returns the file normalised. Errors about a field start with
/// `field <path>: `.
#[wasm_bindgen]
pub fn check_crossover(file_json: &str, csv_json: &str) -> Result<String, JsError> {
    crossover::check_crossover(file_json, csv_json).map_err(js)
}

/// Turns a crossover file into a 2-way or 3-way one (see [`crossover::with_ways`]).
#[wasm_bindgen]
pub fn crossover_ways(file_json: &str, ways: u32) -> Result<String, JsError> {
    crossover::with_ways(file_json, ways).map_err(js)
}

/// Reads a measured impedance CSV; returns `{points, from_hz, to_hz, text}` or throws an error
/// naming the line.
#[wasm_bindgen]
pub fn read_impedance_csv(text: &str) -> Result<String, JsError> {
    crossover::read_impedance_csv(text).map_err(js)
}

/// The crossover workspace's working state: the last crossover that analysed, which it reports
/// and draws. A crossover that fails keeps the last good one.
#[wasm_bindgen]
pub struct CrossoverBench {
    run: Option<crossover::CrossoverRun>,
}

#[wasm_bindgen]
impl CrossoverBench {
    /// Starts with nothing analysed.
    #[wasm_bindgen(constructor)]
    pub fn new() -> CrossoverBench {
        CrossoverBench { run: None }
    }

    /// Designs and analyses a crossover file with its CSV texts at `options_json` (`{power,
    /// from, to, per_decade, capacitors, inductors, resistors}`, each optional); returns the
    /// report (JSON). On an error the last good crossover stays.
    pub fn analyse(&mut self, file_json: &str, csv_json: &str, options_json: &str) -> Result<String, JsError> {
        let run = crossover::run(file_json, csv_json, options_json).map_err(js)?;
        let report = run.report().to_string();
        self.run = Some(run);
        Ok(report)
    }

    /// Draws the four panels onto `canvas`, crisp at the device pixel ratio.
    pub fn draw(&self, canvas: &web_sys::HtmlCanvasElement, theme: &str) -> Result<(), JsError> {
        let theme = chart::theme_named(theme).map_err(js)?;
        let run = self.current().map_err(js)?;
        let area = canvas::HidpiCanvas::new(canvas).map_err(js)?.into_drawing_area();
        run.draw(&area, theme).map_err(js)
    }

    /// The sweep as CSV (as built): each branch's dB and phase, the sum's, |Z| and its phase.
    pub fn sweep_csv(&self) -> Result<String, JsError> {
        Ok(self.current().map_err(js)?.sweep_csv())
    }

    /// The plot as an SVG document.
    pub fn plot_svg(&self, width: u32, height: u32, theme: &str) -> Result<String, JsError> {
        let theme = chart::theme_named(theme).map_err(js)?;
        self.current().map_err(js)?.svg(width, height, theme).map_err(js)
    }

    fn current(&self) -> Result<&crossover::CrossoverRun, WebError> {
        self.run.as_ref().ok_or_else(|| WebError::general("no crossover has been analysed yet"))
    }
}

impl Default for CrossoverBench {
    fn default() -> Self {
        Self::new()
    }
}

/// The fit behind [`fit`], as plain Rust.
///
/// # Errors
/// Bad JSON, a field error (`field <name>: …`) or the core's fit error.
pub fn fit_json(request_json: &str) -> Result<String, WebError> {
    let request: bandwright::request::FitRequest = serde_json::from_str(request_json)
        .map_err(|error| WebError::general(format!("the fit request is not valid JSON of a fit request: {error}")))?;
    let resolved = request.resolve()?;
    let result = bandwright::fit::fit(&resolved.requirement, resolved.topology, &resolved.options)?;
    Ok(result.to_json().to_string())
}

/// The cautions behind [`cautions`].
pub fn cautions_json() -> String {
    let list: Vec<serde_json::Value> = bandwright::cautions::CAUTIONS
        .iter()
        .map(|caution| serde_json::json!({"title": caution.title, "text": caution.text}))
        .collect();
    serde_json::Value::Array(list).to_string()
}

/// Turns an error into the JS `Error` that is thrown.
fn js(error: WebError) -> JsError {
    JsError::new(&error.to_string())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fit_errors_name_their_field() {
        let error = fit_json(r#"{"cutoff": "1kk"}"#).unwrap_err().to_string();
        assert!(error.starts_with("field cutoff: cannot read \"1kk\""), "{error}");
        let error = fit_json(r#"{"cutoff": "1k", "topology": "tube"}"#).unwrap_err().to_string();
        assert!(error.starts_with("field topology: "), "{error}");
        let error = fit_json("[1, 2").unwrap_err().to_string();
        assert!(error.starts_with("the fit request is not valid JSON"), "{error}");
    }

    #[test]
    fn the_demo_request_fits_to_the_demo_design() {
        let result: serde_json::Value = serde_json::from_str(&fit_json(&demo_request()).unwrap()).unwrap();
        let best = &result["alternatives"][0];
        let mut design: bandwright::Design = serde_json::from_value(best["design"].clone()).unwrap();
        let demo = demo::demo_design().unwrap();
        design.name = demo.name.clone();
        design.note = demo.note.clone();
        assert_eq!(design, demo);
        assert!(result["ideal_design"].is_object());
        assert!(best["max_response_deviation_db"].as_f64().unwrap() >= 0.0);
    }

    #[test]
    fn cautions_are_a_list_of_titles_and_texts() {
        let list: Vec<serde_json::Value> = serde_json::from_str(&cautions_json()).unwrap();
        assert_eq!(list.len(), bandwright::cautions::CAUTIONS.len());
        assert!(list.iter().all(|c| c["title"].is_string() && c["text"].is_string()));
        assert!(list.iter().any(|c| c["title"].as_str().unwrap().contains("Mains")));
    }
}
