//! Forbidden regions of a panel: rectangles in frequency × value that a response must stay out
//! of, such as the two sides of a spec mask (below the largest passband loss, above the smallest
//! stopband attenuation).
//!
//! A region is drawn as a translucent fill with a solid line along its limit edge, behind the
//! curves. Its rectangle is clipped to the panel's axes in axis coordinates (log10 f, and
//! log10 |Z| on a log value axis), so an open edge (0 Hz, ∞ Hz, ±∞ in value) simply runs to the
//! plot border and a region wholly outside the axes is not drawn at all.

use plotters::style::RGBColor;

use crate::theme::Theme;

/// A forbidden rectangle of a panel.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Region {
    /// The low frequency end in Hz; 0 or below (or −∞) runs to the left edge of the axis.
    pub f_lo_hz: f64,
    /// The high frequency end in Hz; `f64::INFINITY` runs to the right edge.
    pub f_hi_hz: f64,
    /// The lower value end in the panel quantity's unit; `f64::NEG_INFINITY` runs to the bottom.
    pub low: f64,
    /// The upper value end; `f64::INFINITY` runs to the top.
    pub high: f64,
    /// Which horizontal side carries the limit line.
    pub edge: RegionEdge,
}

/// The side of a region that is the limit (drawn as a line).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum RegionEdge {
    /// The limit is the lower side: values above it are forbidden (a stopband).
    Lower,
    /// The limit is the upper side: values below it are forbidden (a passband floor).
    Upper,
}

/// A region's rectangle clipped to the axes, in axis coordinates, with its limit line's height;
/// `None` when nothing of it lies inside.
///
/// `to_axis_y` maps a value to the axis (identity, or log10 on a log axis); a value it cannot map
/// (≤ 0 on a log axis) counts as −∞.
pub(crate) fn clip_region(
    region: &Region,
    x_axis: (f64, f64),
    y_axis: (f64, f64),
    log_y: bool,
) -> Option<ClippedRegion> {
    let to_x = |f: f64| if f > 0.0 { f.log10() } else { f64::NEG_INFINITY };
    let to_y = |v: f64| {
        if !log_y {
            v
        } else if v > 0.0 {
            v.log10()
        } else {
            f64::NEG_INFINITY
        }
    };
    if region.f_lo_hz.is_nan() || region.f_hi_hz.is_nan() || region.low.is_nan() || region.high.is_nan() {
        return None;
    }
    let (x0, x1) = (to_x(region.f_lo_hz).max(x_axis.0), to_x(region.f_hi_hz).min(x_axis.1));
    let (y0, y1) = (to_y(region.low).max(y_axis.0), to_y(region.high).min(y_axis.1));
    if !(x0 < x1 && y0 < y1) {
        return None;
    }
    let limit = match region.edge {
        RegionEdge::Lower => to_y(region.low),
        RegionEdge::Upper => to_y(region.high),
    };
    let line_y = (limit >= y_axis.0 && limit <= y_axis.1).then_some(limit);
    Some(ClippedRegion { x: (x0, x1), y: (y0, y1), line_y })
}

/// A region as drawn, in axis coordinates.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct ClippedRegion {
    pub(crate) x: (f64, f64),
    pub(crate) y: (f64, f64),
    /// The limit line's height, when it lies within the axis.
    pub(crate) line_y: Option<f64>,
}

/// The colour of forbidden regions in a theme: a red of our own, distinct from the curve colours.
pub fn region_colour(theme: Theme) -> RGBColor {
    match theme {
        Theme::Light => RGBColor(196, 40, 52),
        Theme::Dark => RGBColor(246, 112, 116),
    }
}

/// The fill opacity of a region (the limit line is opaque).
pub const REGION_FILL_ALPHA: f64 = 0.16;

#[cfg(test)]
mod tests {
    use super::*;

    fn region(f_lo_hz: f64, f_hi_hz: f64, low: f64, high: f64, edge: RegionEdge) -> Region {
        Region { f_lo_hz, f_hi_hz, low, high, edge }
    }

    #[test]
    fn open_edges_run_to_the_axis_border() {
        // Axis 10 Hz … 100 kHz (log10: 1 … 5), −80 … 10 dB.
        let stop = region(10e3, f64::INFINITY, -60.0, f64::INFINITY, RegionEdge::Lower);
        let clipped = clip_region(&stop, (1.0, 5.0), (-80.0, 10.0), false).unwrap();
        assert_eq!(clipped, ClippedRegion { x: (4.0, 5.0), y: (-60.0, 10.0), line_y: Some(-60.0) });
        let pass = region(0.0, 1e3, f64::NEG_INFINITY, -3.0, RegionEdge::Upper);
        let clipped = clip_region(&pass, (1.0, 5.0), (-80.0, 10.0), false).unwrap();
        assert_eq!(clipped, ClippedRegion { x: (1.0, 3.0), y: (-80.0, -3.0), line_y: Some(-3.0) });
    }

    #[test]
    fn regions_outside_the_axes_are_not_drawn() {
        let beyond = region(1e6, f64::INFINITY, -60.0, f64::INFINITY, RegionEdge::Lower);
        assert_eq!(clip_region(&beyond, (1.0, 5.0), (-80.0, 10.0), false), None);
        let above = region(10.0, 100.0, 20.0, f64::INFINITY, RegionEdge::Lower);
        assert_eq!(clip_region(&above, (1.0, 5.0), (-80.0, 10.0), false), None);
        let nan = region(f64::NAN, 100.0, 0.0, 1.0, RegionEdge::Lower);
        assert_eq!(clip_region(&nan, (1.0, 5.0), (-80.0, 10.0), false), None);
    }

    #[test]
    fn a_limit_below_the_axis_keeps_the_fill_but_has_no_line() {
        // Forbidden above −120 dB on an axis that stops at −80 dB: the whole height is forbidden.
        let deep = region(10e3, f64::INFINITY, -120.0, f64::INFINITY, RegionEdge::Lower);
        let clipped = clip_region(&deep, (1.0, 5.0), (-80.0, 10.0), false).unwrap();
        assert_eq!(clipped.y, (-80.0, 10.0));
        assert_eq!(clipped.line_y, None);
    }

    #[test]
    fn log_value_axes_clip_in_log10() {
        let high = region(10.0, 1e3, 100.0, f64::INFINITY, RegionEdge::Lower);
        let clipped = clip_region(&high, (1.0, 5.0), (0.0, 4.0), true).unwrap();
        assert_eq!(clipped.y, (2.0, 4.0));
        assert_eq!(clipped.line_y, Some(2.0));
    }
}
