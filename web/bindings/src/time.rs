//! The time-response card: step or impulse response of the working design (and of the kept
//! variant, on the same span), its figures (overshoot, 10–90 % rise, settling to a chosen
//! tolerance, the method used), drawn through the plot layer's time chart.
//!
//! All figures are the core's `transient` module's. Here the page's options are read (every
//! field as typed; errors start with `field <name>: `), the results are cached per design, and
//! the figures are formatted for the page with the core's engineering notation.

use crate::error::WebError;
use bandwright::notation::{format_quantity, parse_value, Quantity};
use bandwright::transient::{
    impulse_response, step_response, Method, MethodChoice, SettleTolerance, SettlingReference, Span, StepMetrics,
    TransientOptions, MAX_BITS,
};
use bandwright::{AcSystem, Design};
use bandwright_plot::{draw_time_chart, SeriesStyle, Theme, TimeChartOptions, TimeLayout, TimeMarker, TimeSeries};
use plotters::coord::Shift;
use plotters::prelude::{DrawingArea, DrawingBackend};
use serde::Deserialize;
use serde_json::{json, Value};

/// The most points the page may ask for (a denser grid would stall the page).
pub const MAX_TIME_POINTS: usize = 20_000;
/// Points when the page gives none.
pub const DEFAULT_TIME_POINTS: usize = 1000;

/// The card's options as the page sends them (texts as typed; `null` or absent for the default).
#[derive(Debug, Clone, Default, PartialEq, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct TimeRequest {
    /// "step" (default) or "impulse".
    pub kind: Option<String>,
    /// The span ("5m", "200u"); empty or absent: automatic.
    pub span: Option<String>,
    /// Points on the span; default 1000.
    pub points: Option<String>,
    /// "percent" (default), "fraction", "half_lsb" or "lsb".
    pub settle: Option<String>,
    /// The percentage for "percent"; default 1.
    pub settle_percent: Option<String>,
    /// The fraction for "fraction" (0.001 is 0.1 %); default 0.01.
    pub settle_fraction: Option<String>,
    /// N for "half_lsb" and "lsb"; default 16.
    pub bits: Option<String>,
}

/// Step or impulse.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TimeKind {
    /// The response to a 1 V step of the source.
    Step,
    /// Its derivative (plus a Dirac weight at t = 0).
    Impulse,
}

/// Validated options.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TimeSettings {
    /// Step or impulse.
    pub kind: TimeKind,
    /// The core's options.
    pub options: TransientOptions,
}

/// One design's response on the card's span.
#[derive(Debug, Clone, PartialEq)]
pub struct TimeTrack {
    /// Times in s.
    pub times_s: Vec<f64>,
    /// Values (V/V for a step; 1/s for an impulse).
    pub values: Vec<f64>,
    /// The method used.
    pub method: Method,
    /// The step figures, or why they are undefined (text); `None` for an impulse.
    pub metrics: Option<Result<StepMetrics, String>>,
    /// The Dirac weight at t = 0 of an impulse response.
    pub dirac_weight: Option<f64>,
}

/// The card's state: its settings, the last computed tracks and the drawn layout.
#[derive(Debug, Clone, Default)]
pub struct TimeCard {
    settings: TimeSettings,
    cache: Option<Cached>,
    layout: Option<TimeLayout>,
}

#[derive(Debug, Clone)]
struct Cached {
    settings: TimeSettings,
    working_design: Design,
    variant_design: Option<Design>,
    working: Result<TimeTrack, String>,
    variant: Option<TimeTrack>,
}

impl TimeRequest {
    /// Validates the request.
    ///
    /// # Errors
    /// `field kind`, `span`, `points`, `settle`, `settle_percent` or `bits`, saying what is accepted.
    pub fn resolve(&self) -> Result<TimeSettings, WebError> {
        let kind = match given(&self.kind).unwrap_or("step") {
            "step" => TimeKind::Step,
            "impulse" => TimeKind::Impulse,
            other => {
                return Err(WebError::at_field("kind", format!("{other:?} is not a response; use step or impulse")))
            }
        };
        let span = match given(&self.span) {
            None | Some("auto") => Span::Automatic,
            Some(text) => {
                let value = parse_value(text, Quantity::Time).map_err(|e| WebError::at_field("span", e.to_string()))?;
                if !(value.is_finite() && value > 0.0) {
                    return Err(WebError::at_field(
                        "span",
                        format!("a span of {text} is not usable; give a time above 0 s, such as 5m or 200u, or leave it empty for automatic"),
                    ));
                }
                Span::Seconds(value)
            }
        };
        let points = match given(&self.points) {
            None => DEFAULT_TIME_POINTS,
            Some(text) => {
                let n = parse_value(text, Quantity::Ratio).map_err(|e| WebError::at_field("points", e.to_string()))?;
                if !(n.fract() == 0.0 && (2.0..=MAX_TIME_POINTS as f64).contains(&n)) {
                    return Err(WebError::at_field(
                        "points",
                        format!("{text} points is not accepted; give a whole number from 2 to {MAX_TIME_POINTS}"),
                    ));
                }
                n as usize
            }
        };
        let bits = || -> Result<u32, WebError> {
            let text = given(&self.bits).unwrap_or("16");
            let bad = || {
                WebError::at_field(
                    "bits",
                    format!(
                        "{text} bits is not a converter resolution; give a whole number of bits from 1 to {MAX_BITS}"
                    ),
                )
            };
            let n: f64 = text.parse().map_err(|_| bad())?;
            if n.fract() == 0.0 && (1.0..=f64::from(MAX_BITS)).contains(&n) {
                Ok(n as u32)
            } else {
                Err(bad())
            }
        };
        let tolerance = match given(&self.settle).unwrap_or("percent") {
            "percent" => {
                let text = given(&self.settle_percent).unwrap_or("1");
                let value = parse_value(text.trim_end_matches('%'), Quantity::Ratio)
                    .map_err(|e| WebError::at_field("settle_percent", e.to_string()))?;
                SettleTolerance::Percent(value)
            }
            "fraction" => {
                let text = given(&self.settle_fraction).unwrap_or("0.01");
                let value = parse_value(text, Quantity::Ratio)
                    .map_err(|e| WebError::at_field("settle_fraction", e.to_string()))?;
                SettleTolerance::Fraction(value)
            }
            "half_lsb" => SettleTolerance::HalfLsb { bits: bits()? },
            "lsb" => SettleTolerance::Lsb { bits: bits()? },
            other => {
                return Err(WebError::at_field(
                    "settle",
                    format!("{other:?} is not a settling tolerance; use percent, fraction, half_lsb or lsb"),
                ))
            }
        };
        tolerance.fraction().map_err(|e| {
            let field = match tolerance {
                SettleTolerance::Percent(_) => "settle_percent",
                SettleTolerance::Fraction(_) => "settle_fraction",
                _ => "bits",
            };
            WebError::at_field(field, e.to_string())
        })?;
        Ok(TimeSettings {
            kind,
            options: TransientOptions { span, points, tolerance, method: MethodChoice::Automatic },
        })
    }
}

impl Default for TimeSettings {
    fn default() -> Self {
        TimeRequest::default().resolve().expect("the defaults are valid")
    }
}

impl TimeCard {
    /// Sets the options from the page's JSON.
    ///
    /// # Errors
    /// Bad JSON, or a field error from [`TimeRequest::resolve`]; the previous options stay.
    pub fn set_options(&mut self, json: &str) -> Result<(), WebError> {
        let request: TimeRequest = serde_json::from_str(json)
            .map_err(|e| WebError::general(format!("the time-response options are not valid JSON: {e}")))?;
        self.settings = request.resolve()?;
        Ok(())
    }

    /// The settings in use.
    pub fn settings(&self) -> TimeSettings {
        self.settings
    }

    /// Computes (or reuses) the responses of `working` and `variant`.
    fn compute(&mut self, working: &Design, variant: Option<&Design>) -> &Cached {
        let fresh = self.cache.as_ref().is_some_and(|c| {
            c.settings == self.settings && &c.working_design == working && c.variant_design.as_ref() == variant
        });
        if !fresh {
            let working_track = track_of(working, self.settings.kind, &self.settings.options);
            // The variant is drawn on the working design's span, so both share the time axis.
            let variant_track = match (&working_track, variant) {
                (Ok(track), Some(design)) => {
                    let span_s = track.times_s.last().copied().unwrap_or(1.0);
                    let options = TransientOptions { span: Span::Seconds(span_s), ..self.settings.options };
                    track_of(design, self.settings.kind, &options).ok()
                }
                _ => None,
            };
            self.cache = Some(Cached {
                settings: self.settings,
                working_design: working.clone(),
                variant_design: variant.cloned(),
                working: working_track,
                variant: variant_track,
            });
        }
        self.cache.as_ref().expect("just filled")
    }

    /// The card's figures as JSON for the page (see [`summary_json`]).
    pub fn summary(&mut self, working: &Design, variant: Option<&Design>) -> Value {
        let settings = self.settings;
        let cached = self.compute(working, variant);
        summary_json(settings, &cached.working, cached.variant.as_ref())
    }

    /// Draws the responses onto `area`.
    ///
    /// # Errors
    /// The core's transient error as text (the card shows it), or the plot layer's error.
    pub fn draw<DB: DrawingBackend>(
        &mut self,
        area: &DrawingArea<DB, Shift>,
        working: &Design,
        variant: Option<&Design>,
        theme: Theme,
    ) -> Result<(), WebError> {
        let settings = self.settings;
        let cached = self.compute(working, variant);
        let track = cached.working.as_ref().map_err(|e| WebError::general(e.clone()))?;
        let mut series = vec![TimeSeries {
            label: "A (working)",
            times_s: &track.times_s,
            values: &track.values,
            style: SeriesStyle::Primary,
        }];
        if let Some(variant) = &cached.variant {
            series.push(TimeSeries {
                label: "B (kept)",
                times_s: &variant.times_s,
                values: &variant.values,
                style: SeriesStyle::Overlay,
            });
        }
        let mut options = TimeChartOptions {
            theme,
            y_description: match settings.kind {
                TimeKind::Step => "step response (V/V)".to_string(),
                TimeKind::Impulse => "impulse response (1/s)".to_string(),
            },
            ..TimeChartOptions::default()
        };
        if let Some(Ok(metrics)) = &track.metrics {
            let centre = match metrics.settling.reference {
                SettlingReference::FinalValue => metrics.final_value,
                SettlingReference::Peak => 0.0,
            };
            options.band = Some((centre - metrics.settling.band, centre + metrics.settling.band));
            if let Some(rise) = metrics.rise {
                options.markers.push(TimeMarker { time_s: rise.t10_s, label: "10 %".into() });
                options.markers.push(TimeMarker { time_s: rise.t90_s, label: "90 %".into() });
            }
            if let Some(settled) = metrics.settling.time_s {
                options.markers.push(TimeMarker { time_s: settled, label: "settled".into() });
            }
        }
        let layout = draw_time_chart(area, &series, &options)?;
        area.present().map_err(|e| WebError::general(format!("cannot finish the time plot: {e}")))?;
        self.layout = Some(layout);
        Ok(())
    }

    /// The readout at a pointer position (CSS px of the last drawn canvas): the time, and each
    /// response's value at the nearest sample, formatted; `None` off the plot.
    pub fn readout(&self, x_px: f64, y_px: f64) -> Option<Value> {
        let layout = self.layout.as_ref()?;
        let time_s = layout.time_at(x_px)?;
        layout.value_at(y_px)?;
        let cached = self.cache.as_ref()?;
        let mut formatted = vec![json!({"label": "t", "text": format_quantity(time_s, Quantity::Time, 4)})];
        let mut value_of = |label: &str, track: &TimeTrack| {
            let idx = nearest(&track.times_s, time_s)?;
            formatted.push(json!({"label": label, "text": format!("{:.5}", track.values[idx])}));
            Some(())
        };
        if let Ok(track) = &cached.working {
            value_of("A", track);
        }
        if let Some(track) = &cached.variant {
            value_of("B", track);
        }
        Some(json!({"time_s": time_s, "formatted": formatted}))
    }
}

/// The trimmed text of a field, `None` when absent or empty.
fn given(x: &Option<String>) -> Option<&str> {
    x.as_deref().map(str::trim).filter(|t| !t.is_empty())
}

fn nearest(times: &[f64], t: f64) -> Option<usize> {
    if times.is_empty() {
        return None;
    }
    let above = times.partition_point(|&x| x < t).min(times.len() - 1);
    let below = above.saturating_sub(1);
    Some(if (times[above] - t).abs() < (t - times[below]).abs() { above } else { below })
}

/// The response of one design.
///
/// # Errors
/// The core's transient or design error as text.
pub fn track_of(design: &Design, kind: TimeKind, options: &TransientOptions) -> Result<TimeTrack, String> {
    let (circuit, probe) = design.to_circuit().map_err(|e| e.to_string())?;
    let mut system = AcSystem::new(&circuit, &probe);
    match kind {
        TimeKind::Step => {
            let r = step_response(&mut system, options).map_err(|e| e.to_string())?;
            Ok(TimeTrack {
                times_s: r.times_s,
                values: r.values,
                method: r.method,
                metrics: Some(r.metrics.map_err(|e| e.to_string())),
                dirac_weight: None,
            })
        }
        TimeKind::Impulse => {
            let r = impulse_response(&mut system, options).map_err(|e| e.to_string())?;
            Ok(TimeTrack {
                times_s: r.times_s,
                values: r.values,
                method: r.method,
                metrics: None,
                dirac_weight: Some(r.dirac_weight),
            })
        }
    }
}

/// The method in words.
pub fn method_text(method: &Method) -> String {
    match method {
        Method::PoleResidue { .. } => "exact, from the poles and residues".to_string(),
        Method::Integration { refused: None } => "Radau IIA integration of the MNA system".to_string(),
        Method::Integration { refused: Some(why) } => {
            format!("Radau IIA integration of the MNA system (the pole–residue form was refused: {why})")
        }
    }
}

/// The tolerance in words.
pub fn tolerance_text(tolerance: &SettleTolerance) -> String {
    match tolerance {
        SettleTolerance::Fraction(x) => format!("{x} of the reference"),
        SettleTolerance::Percent(x) => format!("{x} %"),
        SettleTolerance::HalfLsb { bits } => format!("½ LSB of {bits} bits"),
        SettleTolerance::Lsb { bits } => format!("1 LSB of {bits} bits"),
    }
}

/// The card's JSON: `{kind, method, span_s, points, tolerance, error, metrics: {overshoot_pct,
/// rise_time_s, settling_time_s, final_value, …} | null, formatted: [{label, text}], variant:
/// {formatted} | null}`. Numbers that are undefined are `null`; every text is ready to show.
pub fn summary_json(settings: TimeSettings, working: &Result<TimeTrack, String>, variant: Option<&TimeTrack>) -> Value {
    let tolerance = tolerance_text(&settings.options.tolerance);
    let kind = match settings.kind {
        TimeKind::Step => "step",
        TimeKind::Impulse => "impulse",
    };
    let track = match working {
        Ok(track) => track,
        Err(error) => {
            return json!({"kind": kind, "tolerance": tolerance, "error": error, "metrics": null, "formatted": [], "variant": null})
        }
    };
    let (metrics, formatted, metrics_error) = figures(track, &tolerance);
    let variant_json = variant.map(|v| json!({"formatted": figures(v, &tolerance).1}));
    json!({
        "kind": kind,
        "method": method_text(&track.method),
        "span_s": track.times_s.last(),
        "points": track.times_s.len(),
        "tolerance": tolerance,
        "error": null,
        "metrics_error": metrics_error,
        "metrics": metrics,
        "formatted": formatted,
        "variant": variant_json,
    })
}

/// The figures of one track: numbers (for tests and the report), formatted rows, and why the
/// figures are undefined (if they are).
fn figures(track: &TimeTrack, tolerance: &str) -> (Value, Vec<Value>, Option<String>) {
    let time = |x: f64| format_quantity(x, Quantity::Time, 4);
    let row = |label: &str, text: String| json!({"label": label, "text": text});
    let mut rows = Vec::new();
    match &track.metrics {
        None => {
            if let Some(weight) = track.dirac_weight.filter(|w| *w != 0.0) {
                rows.push(row("Dirac weight at 0", format!("{weight:.4e}")));
            }
            rows.push(row("method", method_text(&track.method)));
            (Value::Null, rows, None)
        }
        Some(Err(error)) => {
            rows.push(row("figures", error.clone()));
            rows.push(row("method", method_text(&track.method)));
            (Value::Null, rows, Some(error.clone()))
        }
        Some(Ok(m)) => {
            rows.push(row("final value", format!("{:.4}", m.final_value)));
            rows.push(row(
                "overshoot",
                m.overshoot_pct.filter(|o| o.is_finite()).map_or("—".to_string(), |o| format!("{o:.2} %")),
            ));
            rows.push(row("rise 10–90 %", m.rise.map_or("—".to_string(), |r| time(r.rise_time_s))));
            let settled = m.settling.time_s.map_or_else(|| "not within the span".to_string(), time);
            let reference = match m.settling.reference {
                SettlingReference::FinalValue => "of the final value",
                SettlingReference::Peak => "of the peak (the final value is 0)",
            };
            rows.push(row("settling", format!("{settled} to ±{tolerance} {reference}")));
            rows.push(row("method", method_text(&track.method)));
            let numbers = json!({
                "final_value": m.final_value,
                "overshoot_pct": m.overshoot_pct,
                "rise_time_s": m.rise.map(|r| r.rise_time_s),
                "t10_s": m.rise.map(|r| r.t10_s),
                "t90_s": m.rise.map(|r| r.t90_s),
                "settling_time_s": m.settling.time_s,
                "settling_band": m.settling.band,
                "settling_fraction": m.settling.fraction,
                "dc_group_delay_s": m.dc_group_delay_s,
            });
            (numbers, rows, None)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use plotters::prelude::{IntoDrawingArea, SVGBackend};

    /// RC low-pass, 1 kΩ and 100 nF: τ = 100 µs.
    const RC: &str = r#"{"format": "bandwright-design", "version": 1, "name": "rc",
        "source": {"node": "in", "resistance": 0}, "output": "out",
        "elements": [{"ref": "R1", "kind": "resistor", "value": "1k", "nodes": ["in", "out"]},
                     {"ref": "C1", "kind": "capacitor", "value": "100n", "nodes": ["out", "0"]}]}"#;

    fn rc() -> Design {
        bandwright::parse_design(RC).unwrap()
    }

    fn request(json: &str) -> Result<TimeSettings, WebError> {
        serde_json::from_str::<TimeRequest>(json).unwrap().resolve()
    }

    #[test]
    fn the_rc_step_figures_match_the_closed_form() {
        // y = 1 − e^(−t/τ): t10 = τ·ln(10/9), t90 = τ·ln 10, rise = τ·ln 9 = 219.72 µs; settling to
        // 1 % at τ·ln 100 = 460.52 µs (common practice: the first-order step).
        let mut card = TimeCard::default();
        let summary = card.summary(&rc(), None);
        let m = &summary["metrics"];
        let tau = 1e-4;
        assert!((m["rise_time_s"].as_f64().unwrap() - tau * 9f64.ln()).abs() < 1e-9 * tau);
        assert!((m["settling_time_s"].as_f64().unwrap() - tau * 100f64.ln()).abs() < 1e-9 * tau);
        assert_eq!(m["overshoot_pct"].as_f64(), Some(0.0));
        assert_eq!(summary["method"], "exact, from the poles and residues");
        let rows: Vec<String> =
            summary["formatted"].as_array().unwrap().iter().map(|r| r["text"].to_string()).collect();
        assert!(rows.iter().any(|t| t.contains("219.7 µs")), "{rows:?}");
        assert!(!summary.to_string().contains("NaN"));
    }

    #[test]
    fn half_an_lsb_of_16_bits_settles_later_than_one_percent() {
        // To 2^−17: τ·ln 2^17 = 1.1783 ms (common practice: the first-order step).
        let mut card = TimeCard::default();
        let percent = card.summary(&rc(), None)["metrics"]["settling_time_s"].as_f64().unwrap();
        card.set_options(r#"{"settle": "half_lsb", "bits": "16"}"#).unwrap();
        let half = card.summary(&rc(), None)["metrics"]["settling_time_s"].as_f64().unwrap();
        assert!((half - 1e-4 * 17.0 * 2f64.ln()).abs() < 1e-12, "{half}");
        assert!(half > 2.0 * percent);
        card.set_options(r#"{"settle": "lsb", "bits": "16"}"#).unwrap();
        let lsb = card.summary(&rc(), None)["metrics"]["settling_time_s"].as_f64().unwrap();
        assert!((lsb - 1e-4 * 16.0 * 2f64.ln()).abs() < 1e-12 && lsb < half);
        // A fraction of 0.01 is the same tolerance as 1 %.
        card.set_options(r#"{"settle": "fraction", "settle_fraction": "0.01"}"#).unwrap();
        let fraction = card.summary(&rc(), None)["metrics"]["settling_time_s"].as_f64().unwrap();
        assert!((fraction - percent).abs() < 1e-15, "{fraction} vs {percent}");
    }

    #[test]
    fn bad_options_name_their_field_and_keep_the_previous_ones() {
        for (json, field) in [
            (r#"{"kind": "ramp"}"#, "field kind: "),
            (r#"{"span": "-1m"}"#, "field span: "),
            (r#"{"span": "5q"}"#, "field span: "),
            (r#"{"points": "1"}"#, "field points: "),
            (r#"{"points": "2.5"}"#, "field points: "),
            (r#"{"settle": "percent", "settle_percent": "150"}"#, "field settle_percent: "),
            (r#"{"settle": "half_lsb", "bits": "0"}"#, "field bits: "),
            (r#"{"settle": "lsb", "bits": "40"}"#, "field bits: "),
            (r#"{"settle": "lsb", "bits": "twelve"}"#, "field bits: "),
            (r#"{"settle": "soon"}"#, "field settle: "),
            (r#"{"settle": "fraction", "settle_fraction": "1.5"}"#, "field settle_fraction: "),
        ] {
            let error = request(json).unwrap_err().to_string();
            assert!(error.starts_with(field), "{json}: {error}");
        }
        let mut card = TimeCard::default();
        card.set_options(r#"{"settle": "lsb", "bits": "12"}"#).unwrap();
        assert!(card.set_options(r#"{"bits": "0", "settle": "lsb"}"#).is_err());
        assert_eq!(card.settings().options.tolerance, SettleTolerance::Lsb { bits: 12 });
        assert!(card.set_options("{").unwrap_err().to_string().contains("not valid JSON"));
    }

    #[test]
    fn the_variant_shares_the_span_and_the_chart_draws_both() {
        let mut card = TimeCard::default();
        let slower = bandwright::parse_design(&RC.replace("\"1k\"", "\"2k2\"")).unwrap();
        let cached = card.compute(&rc(), Some(&slower));
        let a = cached.working.as_ref().unwrap();
        let b = cached.variant.as_ref().unwrap();
        assert_eq!(a.times_s.last(), b.times_s.last());
        let mut svg = String::new();
        {
            let area = SVGBackend::with_string(&mut svg, (640, 280)).into_drawing_area();
            card.draw(&area, &rc(), Some(&slower), Theme::Light).unwrap();
        }
        for label in ["A (working)", "B (kept)", "step response (V/V)", "10 %", "90 %", "settled"] {
            assert!(svg.contains(label), "missing {label}");
        }
        let layout = card.layout.clone().unwrap();
        let (left, top, right, bottom) = layout.plot_px;
        let reading = card.readout(f64::from(left + right) / 2.0, f64::from(top + bottom) / 2.0).unwrap();
        assert_eq!(reading["formatted"].as_array().unwrap().len(), 3);
        assert!(card.readout(0.0, 0.0).is_none());
    }

    #[test]
    fn an_impulse_response_has_no_step_figures() {
        let mut card = TimeCard::default();
        card.set_options(r#"{"kind": "impulse"}"#).unwrap();
        let summary = card.summary(&rc(), None);
        assert_eq!(summary["kind"], "impulse");
        assert!(summary["metrics"].is_null());
        // h(0+) = 1/τ = 10 000 /s for the RC low-pass (common practice).
        let cached = card.compute(&rc(), None);
        let h0 = cached.working.as_ref().unwrap().values[0];
        assert!((h0 - 1e4).abs() < 1e-6, "{h0}");
    }
}
