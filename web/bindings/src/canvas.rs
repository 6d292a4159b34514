//! A HiDPI wrapper around plotters-canvas's `CanvasBackend`.
//!
//! The canvas backend draws in backing-store pixels and ignores `devicePixelRatio`, so on a
//! HiDPI screen the plot is blurred. [`HidpiCanvas`] sizes the backing store to the canvas's CSS
//! size × the device pixel ratio, scales the 2D context with `setTransform` so that one drawing
//! unit is one CSS pixel, reports the CSS size to plotters, and forwards every drawing call, so
//! nothing falls back to plotters' pixel-by-pixel defaults. Pointer positions (`offsetX`,
//! `offsetY`) are in CSS pixels too, which is what the panel layout then maps.

use crate::error::WebError;
use plotters::prelude::DrawingBackend;
use plotters_backend::{BackendColor, BackendCoord, BackendStyle, BackendTextStyle, DrawingErrorKind};
use plotters_canvas::CanvasBackend;
use wasm_bindgen::JsCast;
use web_sys::{CanvasRenderingContext2d, HtmlCanvasElement};

/// The canvas backend's error type (plotters-canvas does not export it by name).
type CanvasError = <CanvasBackend as DrawingBackend>::ErrorType;

/// The canvas backend, drawing in CSS pixels on a device-resolution backing store.
pub struct HidpiCanvas {
    inner: CanvasBackend,
    context: CanvasRenderingContext2d,
    css_size: (u32, u32),
}

impl HidpiCanvas {
    /// Prepares `canvas` for a crisp drawing at its current CSS size.
    ///
    /// # Errors
    /// A canvas with no size on the page (hidden, or 0 px wide or high), or without a 2D context.
    pub fn new(canvas: &HtmlCanvasElement) -> Result<Self, WebError> {
        let (css_width, css_height) = (canvas.client_width(), canvas.client_height());
        if css_width <= 0 || css_height <= 0 {
            return Err(WebError::general(format!(
                "the plot canvas is {css_width} × {css_height} CSS px on the page (hidden or without a size); give it a width and a height"
            )));
        }
        let ratio = web_sys::window().map(|window| window.device_pixel_ratio()).filter(|r| r.is_finite() && *r > 0.0);
        let ratio = ratio.unwrap_or(1.0);
        let css = (css_width as u32, css_height as u32);
        let backing = |side: u32| ((f64::from(side) * ratio).round() as u32).max(1);
        let (backing_width, backing_height) = (backing(css.0), backing(css.1));
        // Setting a size clears the canvas and resets its context, so only when it changes.
        if canvas.width() != backing_width {
            canvas.set_width(backing_width);
        }
        if canvas.height() != backing_height {
            canvas.set_height(backing_height);
        }
        let no_context = || WebError::general("the plot canvas has no 2D drawing context");
        let context: CanvasRenderingContext2d =
            canvas.get_context("2d").ok().flatten().ok_or_else(no_context)?.dyn_into().map_err(|_| no_context())?;
        let scale_x = f64::from(backing_width) / f64::from(css.0);
        let scale_y = f64::from(backing_height) / f64::from(css.1);
        context
            .set_transform(scale_x, 0.0, 0.0, scale_y, 0.0, 0.0)
            .map_err(|_| WebError::general("the plot canvas refused its scale transform"))?;
        let inner = CanvasBackend::with_canvas_object(canvas.clone()).ok_or_else(no_context)?;
        Ok(Self { inner, context, css_size: css })
    }
}

impl DrawingBackend for HidpiCanvas {
    type ErrorType = CanvasError;

    fn get_size(&self) -> (u32, u32) {
        self.css_size
    }

    fn ensure_prepared(&mut self) -> Result<(), DrawingErrorKind<CanvasError>> {
        self.inner.ensure_prepared()
    }

    fn present(&mut self) -> Result<(), DrawingErrorKind<CanvasError>> {
        self.inner.present()
    }

    fn draw_pixel(&mut self, point: BackendCoord, color: BackendColor) -> Result<(), DrawingErrorKind<CanvasError>> {
        self.inner.draw_pixel(point, color)
    }

    fn draw_line<S: BackendStyle>(
        &mut self,
        from: BackendCoord,
        to: BackendCoord,
        style: &S,
    ) -> Result<(), DrawingErrorKind<CanvasError>> {
        self.inner.draw_line(from, to, style)
    }

    fn draw_rect<S: BackendStyle>(
        &mut self,
        upper_left: BackendCoord,
        bottom_right: BackendCoord,
        style: &S,
        fill: bool,
    ) -> Result<(), DrawingErrorKind<CanvasError>> {
        self.inner.draw_rect(upper_left, bottom_right, style, fill)
    }

    fn draw_path<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        path: I,
        style: &S,
    ) -> Result<(), DrawingErrorKind<CanvasError>> {
        self.inner.draw_path(path, style)
    }

    fn draw_circle<S: BackendStyle>(
        &mut self,
        center: BackendCoord,
        radius: u32,
        style: &S,
        fill: bool,
    ) -> Result<(), DrawingErrorKind<CanvasError>> {
        self.inner.draw_circle(center, radius, style, fill)
    }

    fn fill_polygon<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        vertices: I,
        style: &S,
    ) -> Result<(), DrawingErrorKind<CanvasError>> {
        self.inner.fill_polygon(vertices, style)
    }

    fn draw_text<S: BackendTextStyle>(
        &mut self,
        text: &str,
        style: &S,
        pos: BackendCoord,
    ) -> Result<(), DrawingErrorKind<CanvasError>> {
        self.inner.draw_text(text, style, pos)
    }

    /// Measured with the 2D context's `measureText` in the font `draw_text` sets, instead of
    /// plotters' default, which adds a styled `<span>` to the page per label and forces a layout
    /// each time (slow, and it needs inline style attributes, which the page's CSP forbids).
    /// The height is the font's ascent plus descent, as a line box of that font would be; the
    /// size is unrotated, as the default's.
    fn estimate_text_size<S: BackendTextStyle>(
        &self,
        text: &str,
        style: &S,
    ) -> Result<(u32, u32), DrawingErrorKind<CanvasError>> {
        self.context.set_font(&format!("{} {}px {}", style.style().as_str(), style.size(), style.family().as_str()));
        let metrics = self.context.measure_text(text).map_err(|_| {
            DrawingErrorKind::FontError(Box::new(std::io::Error::other("the canvas could not measure text")))
        })?;
        let width = metrics.width();
        let line = metrics.font_bounding_box_ascent() + metrics.font_bounding_box_descent();
        let height = if line.is_finite() && line > 0.0 { line } else { 1.2 * style.size() };
        Ok((width.max(0.0).ceil() as u32, height.ceil() as u32))
    }

    fn blit_bitmap(
        &mut self,
        pos: BackendCoord,
        size: (u32, u32),
        src: &[u8],
    ) -> Result<(), DrawingErrorKind<CanvasError>> {
        self.inner.blit_bitmap(pos, size, src)
    }
}
